//! The level changing on disk: when a file the level was read from is touched (see
//! [`super::disk_watch`]), its stamp is compared; when it changed, the level is loaded and every
//! probe answered again on a background thread, and what changed is kept to show until dismissed.

use eframe::egui;

use super::Workbench;
use super::document::Reloaded;
use plumbline_core::check::Aspect;

impl Workbench {
    /// Reloads the level when its files change on disk, answers every probe again and keeps what
    /// changed to show until dismissed.
    pub(super) fn check_disk(&mut self, ctx: &egui::Context) {
        if let Some(loaded) = self.reload.take() {
            match loaded {
                Ok(reloaded) => {
                    let changed = self.document.apply_reload(reloaded);
                    self.after_reload(changed);
                }
                Err(e) => self.reload_error = Some(e),
            }
        } else if !self.reload.is_running()
            && self.disk.due(ctx, self.document.level_files())
            && self.document.level_changed_on_disk()
        {
            // Loading a big level takes seconds: in the background, saying so meanwhile.
            self.say("The level changed on disk: reloading it and answering every probe…".into());
            let path = self.document.level_path.clone();
            let set = self.document.probes.clone();
            let paths = self.document.paths;
            self.reload
                .start(ctx, move || Reloaded::load(path, &set, paths));
        }
    }

    pub(super) fn after_reload(&mut self, changed: Vec<(usize, Vec<Aspect>)>) {
        self.reload_error = None;
        self.message = None;
        self.changes = changed
            .into_iter()
            .map(|(i, aspects)| (self.document.probes.probes[i].id.to_string(), aspects))
            .collect();
        self.viewport.set_level(&self.document);
        self.results_revision += 1;
        self.plot_wanted = true;
    }
}
