//! Files in the window: open, save, save as (a typed path, with the system's file dialog one button
//! away), recent files, the guard against closing or opening over unsaved changes, the recovery file
//! written while there are unsaved changes and offered back after a crash.

use std::path::Path;
use std::time::{Duration, Instant};

use eframe::egui;

use super::Workbench;
use super::dialogs::{AfterUnsaved, Dialog};
use super::document::Document;

/// How often unsaved changes are written to the recovery file.
pub const AUTOSAVE_EVERY: Duration = Duration::from_secs(10);

/// Recent files kept in the menu.
const RECENT: usize = 8;

impl Workbench {
    /// Starts opening a file: asks for a path (after the unsaved-changes question if needed).
    pub fn ask_open(&mut self) {
        self.dialog = Some(Dialog::Path {
            saving: false,
            text: String::new(),
            error: None,
        });
    }

    /// Saves to the probe set's own file, or asks where when it has none yet.
    pub fn save(&mut self) {
        match self.document.probes_path.clone() {
            Some(path) => {
                if let Err(e) = self.save_to(&path) {
                    self.say(e);
                }
            }
            None => self.ask_save_as(),
        }
    }

    /// Asks where to save.
    pub fn ask_save_as(&mut self) {
        let text = self
            .document
            .probes_path
            .as_ref()
            .map(|p| p.display().to_string())
            .unwrap_or_else(|| {
                self.document
                    .level_path
                    .with_extension("probes.json")
                    .display()
                    .to_string()
            });
        self.dialog = Some(Dialog::Path {
            saving: true,
            text,
            error: None,
        });
    }

    /// Saves to `path` (atomically, the old file kept as `.bak`).
    pub fn save_to(&mut self, path: &Path) -> Result<(), String> {
        self.document.save(path)?;
        self.remember_recent(path);
        self.say(format!("Saved {}", path.display()));
        Ok(())
    }

    /// Opens `path` in place of the current document, unless there are unsaved changes to ask about.
    pub fn open(&mut self, path: &Path) -> Result<(), String> {
        if self.document.is_dirty() {
            self.dialog = Some(Dialog::Unsaved {
                then: AfterUnsaved::Open(path.to_path_buf()),
            });
            return Ok(());
        }
        let document = Document::open(path, self.document.paths).map_err(|e| e.to_string())?;
        self.document.forget_recovery();
        self.replace_document(document);
        self.remember_recent(path);
        self.offer_recovery();
        Ok(())
    }

    /// Offers back the recovery file of the open document, when there is one.
    pub fn offer_recovery(&mut self) {
        if let Some(kept) = self.document.recovered() {
            self.dialog = Some(Dialog::Recovery {
                probes: kept.probes.len(),
            });
        }
    }

    fn remember_recent(&mut self, path: &Path) {
        let path = std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf());
        self.recent.retain(|p| *p != path);
        self.recent.insert(0, path);
        self.recent.truncate(RECENT);
    }

    /// Writes the recovery file when there are unsaved changes not yet written there; until then,
    /// asks `ctx` for a frame when it is due (an idle window paints nothing otherwise).
    pub fn autosave(&mut self, ctx: &egui::Context) {
        if !self.document.is_dirty() || self.autosaved == Some(self.document.edit_count()) {
            return;
        }
        let since = self.last_autosave.elapsed();
        if since < AUTOSAVE_EVERY {
            ctx.request_repaint_after(AUTOSAVE_EVERY - since);
            return;
        }
        self.last_autosave = Instant::now();
        match self.document.write_recovery() {
            Ok(()) => self.autosaved = Some(self.document.edit_count()),
            Err(e) => self.say(format!("Cannot keep a recovery copy: {e}")),
        }
    }

    /// Handles a request to close the window: asks about unsaved changes first.
    pub fn close_requested(&mut self, ctx: &egui::Context) {
        if self.document.is_dirty() && !self.closing {
            ctx.send_viewport_cmd(egui::ViewportCommand::CancelClose);
            self.dialog = Some(Dialog::Unsaved {
                then: AfterUnsaved::Quit,
            });
        }
    }

    pub(super) fn after_unsaved(&mut self, ctx: &egui::Context, then: AfterUnsaved) {
        match then {
            AfterUnsaved::Quit => {
                self.closing = true;
                ctx.send_viewport_cmd(egui::ViewportCommand::Close);
            }
            AfterUnsaved::Open(path) => {
                if let Err(e) = self.open(&path) {
                    self.say(e);
                }
            }
        }
    }

    /// Saves to a path the user typed or picked, which must name a probe set.
    pub(super) fn save_to_checked(&mut self, path: &Path) -> Result<(), String> {
        let name = path.file_name().and_then(|n| n.to_str()).unwrap_or("");
        if !name.ends_with(".probes.json") {
            return Err("A probe set's file name ends in .probes.json.".into());
        }
        self.save_to(path)
    }

    /// The open file's name, for messages.
    pub fn document_name(&self) -> String {
        let path = self
            .document
            .probes_path
            .as_ref()
            .unwrap_or(&self.document.level_path);
        path.file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_else(|| "The probe set".into())
    }
}
