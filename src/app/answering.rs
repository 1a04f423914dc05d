//! Answers that take seconds (a reach map) are made off the UI thread, one at a time, with progress
//! and a Cancel button; an edit of the probe meanwhile stops the run and starts it again on the new
//! question, so the window never waits for an answer.

use std::sync::Arc;

use eframe::egui;

use super::document::Document;
use super::jobs::Background;
use plumbline_core::check::{ProbeResult, answer_probe_watched};
use plumbline_core::probe::Probe;
use plumbline_core::query::{Progress, World};

/// What a background answer run hands back: the question, the world it was asked on, the answer and
/// whether it was cancelled.
type Answered = (Probe, Arc<World>, ProbeResult, bool);

/// The one background answer run, if any.
#[derive(Default)]
pub struct BackgroundAnswers {
    job: Background<Answered>,
    running: Option<(Probe, Arc<World>, Arc<Progress>)>,
}

impl BackgroundAnswers {
    /// Takes in a finished answer, stops a run whose question was edited away, and starts the next
    /// owed answer. Returns true when an answer was taken in (the list and view then change).
    pub fn poll(&mut self, document: &mut Document, ctx: &egui::Context) -> bool {
        let mut taken = false;
        if let Some((probe, world, result, cancelled)) = self.job.take() {
            self.running = None;
            taken = document.take_answer(&probe, &world, result, cancelled);
        }
        if let Some((probe, world, progress)) = &self.running
            && !document.owes(probe, world)
        {
            progress.cancel();
            self.job.cancel();
            self.running = None;
        }
        if self.running.is_none()
            && let Some((probe, world)) = document.next_owed()
        {
            let progress = Arc::new(Progress::default());
            let (asked, on, watched) = (probe.clone(), world.clone(), progress.clone());
            self.job.start(ctx, move || {
                let result = answer_probe_watched(&on, &asked, &watched);
                (asked, on, result, watched.is_cancelled())
            });
            self.running = Some((probe, world, progress));
        }
        // The progress bar moves while the run goes.
        if self.running.is_some() {
            ctx.request_repaint_after(std::time::Duration::from_millis(100));
        }
        taken
    }

    /// The probe being answered and the share done.
    pub fn progress(&self) -> Option<(&str, f32)> {
        let (probe, _, progress) = self.running.as_ref()?;
        Some((&probe.id, progress.fraction()))
    }

    /// Stops the run: its probe then says it was cancelled.
    pub fn cancel(&self) {
        if let Some((_, _, progress)) = &self.running {
            progress.cancel();
        }
    }

    /// True while a run is going.
    pub fn is_running(&self) -> bool {
        self.running.is_some()
    }
}
