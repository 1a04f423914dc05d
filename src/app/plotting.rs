//! The clearance plot is measured off the UI thread (a long path takes tens of milliseconds on a big
//! level), so dragging a sweep's points stays smooth; the newest request wins.

use eframe::egui;

use super::document::Document;
use super::inspector::ClearancePlot;
use super::jobs::Background;
use plumbline_core::probe::ProbeKind;

/// Measures clearance plots in the background.
#[derive(Default)]
pub struct PlotWorker {
    current: Option<ClearancePlot>,
    job: Background<Option<ClearancePlot>>,
}

impl PlotWorker {
    /// Starts measuring the plot of probe `index` (or clears it); an earlier request still running
    /// is forgotten.
    pub fn request(&mut self, document: &Document, index: Option<usize>, ctx: &egui::Context) {
        let job = index.and_then(|i| {
            let probe = document.probes.probes.get(i)?;
            let result = document.results.get(i)?;
            (probe.query.kind() == ProbeKind::Sweep).then(|| (i, probe.clone(), result.clone()))
        });
        let Some((index, probe, result)) = job else {
            self.current = None;
            self.job.cancel();
            return;
        };
        if self.current.as_ref().is_some_and(|p| p.probe != index) {
            self.current = None;
        }
        let world = document.world.clone();
        self.job.start(ctx, move || {
            ClearancePlot::of(&world, &probe, &result, index)
        });
    }

    /// Takes a finished measurement, if one arrived.
    pub fn poll(&mut self) {
        if let Some(plot) = self.job.take() {
            self.current = plot;
        }
    }

    /// The latest plot.
    pub fn plot(&self) -> Option<&ClearancePlot> {
        self.current.as_ref()
    }

    /// True while a measurement is running.
    pub fn is_busy(&self) -> bool {
        self.job.is_running()
    }
}
