//! Work off the UI thread: a [`Background`] job runs on a thread of its own and wakes the window when
//! its answer is ready, so loading a level or measuring a plot never freezes the window. Starting a
//! job forgets the one still running (its answer is dropped).

use std::sync::mpsc;

use eframe::egui;

/// At most one job of a kind, running in the background.
pub struct Background<T> {
    pending: Option<mpsc::Receiver<T>>,
}

impl<T> Default for Background<T> {
    fn default() -> Self {
        Background { pending: None }
    }
}

impl<T: Send + 'static> Background<T> {
    /// Starts `work` on its own thread; the window is asked to repaint when it is done.
    pub fn start(&mut self, ctx: &egui::Context, work: impl FnOnce() -> T + Send + 'static) {
        let (send, receive) = mpsc::channel();
        let wake = ctx.clone();
        std::thread::spawn(move || {
            let _ = send.send(work());
            wake.request_repaint();
        });
        self.pending = Some(receive);
    }

    /// Forgets the running job, if any.
    pub fn cancel(&mut self) {
        self.pending = None;
    }

    /// The job's answer, once it is ready (a job whose thread died is forgotten).
    pub fn take(&mut self) -> Option<T> {
        let receive = self.pending.as_ref()?;
        match receive.try_recv() {
            Ok(answer) => {
                self.pending = None;
                Some(answer)
            }
            Err(mpsc::TryRecvError::Empty) => None,
            Err(mpsc::TryRecvError::Disconnected) => {
                self.pending = None;
                None
            }
        }
    }

    /// True while a job is running.
    pub fn is_running(&self) -> bool {
        self.pending.is_some()
    }
}
