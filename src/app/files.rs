//! Files in the window: open, save, save as (a typed path, with the system's file dialog one button
//! away), recent files, the guard against closing or opening over unsaved changes, the recovery file
//! written while there are unsaved changes and offered back after a crash.

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use eframe::egui;
use egui::RichText;

use super::Workbench;
use super::document::Document;

/// How often unsaved changes are written to the recovery file.
pub const AUTOSAVE_EVERY: Duration = Duration::from_secs(10);

/// Recent files kept in the menu.
const RECENT: usize = 8;

/// A question the window is asking, shown as a modal dialog.
#[derive(Debug, Clone, PartialEq)]
pub enum Dialog {
    /// A typed path to open or to save to.
    Path {
        /// Opening (false) or saving (true).
        saving: bool,
        /// The path as typed.
        text: String,
        /// Why the last try failed.
        error: Option<String>,
    },
    /// Unsaved changes: save, discard or cancel, then do `then`.
    Unsaved {
        /// What to do once the changes are dealt with.
        then: AfterUnsaved,
    },
    /// Changes recovered from a session that ended without saving.
    Recovery {
        /// How many probes the recovered set has.
        probes: usize,
    },
}

/// What waits on the unsaved-changes question.
#[derive(Debug, Clone, PartialEq)]
pub enum AfterUnsaved {
    /// Close the window.
    Quit,
    /// Open this file.
    Open(PathBuf),
}

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
        let document = Document::open(path).map_err(|e| e.to_string())?;
        self.document.forget_recovery();
        self.replace_document(document);
        self.remember_recent(path);
        self.offer_recovery();
        Ok(())
    }

    /// Offers back the recovery file of the open document, when there is one.
    pub fn offer_recovery(&mut self) {
        if let Some(probes) = self.document.recovered() {
            self.dialog = Some(Dialog::Recovery {
                probes: probes.len(),
            });
        }
    }

    fn remember_recent(&mut self, path: &Path) {
        let path = std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf());
        self.recent.retain(|p| *p != path);
        self.recent.insert(0, path);
        self.recent.truncate(RECENT);
    }

    /// Writes the recovery file when there are unsaved changes not yet written there.
    pub fn autosave(&mut self) {
        let due = self.last_autosave.elapsed() >= AUTOSAVE_EVERY;
        if due && self.document.is_dirty() && self.autosaved != Some(self.document.edit_count()) {
            self.last_autosave = Instant::now();
            match self.document.write_recovery() {
                Ok(()) => self.autosaved = Some(self.document.edit_count()),
                Err(e) => self.say(format!("Cannot keep a recovery copy: {e}")),
            }
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

    fn after_unsaved(&mut self, ctx: &egui::Context, then: AfterUnsaved) {
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

    /// Shows the open dialog, if any.
    pub fn dialog_ui(&mut self, ctx: &egui::Context) {
        let Some(dialog) = self.dialog.clone() else {
            return;
        };
        let mut close = false;
        match dialog {
            Dialog::Path {
                saving,
                mut text,
                error,
            } => {
                let mut chosen = None;
                egui::Modal::new(egui::Id::unique("path-dialog")).show(ctx, |ui| {
                    ui.heading(if saving {
                        "Save the probe set as"
                    } else {
                        "Open"
                    });
                    ui.label(if saving {
                        "A *.probes.json file; the level is named relative to it."
                    } else {
                        "A probe set (*.probes.json) or a level (.level.json, .gltf, .glb, .obj)."
                    });
                    let label = ui.label("Path");
                    let field = ui
                        .add(egui::TextEdit::singleline(&mut text).desired_width(460.0))
                        .labelled_by(label.id);
                    let entered =
                        field.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter));
                    if let Some(e) = &error {
                        ui.label(RichText::new(e).color(egui::Color32::from_rgb(230, 159, 0)));
                    }
                    ui.horizontal(|ui| {
                        let go = if saving { "Save" } else { "Open" };
                        if ui.button(go).clicked() || entered {
                            chosen = Some(PathBuf::from(text.trim()));
                        }
                        if ui
                            .button("Browse…")
                            .on_hover_text("The system's file dialog")
                            .clicked()
                        {
                            chosen = system_dialog(saving, &text);
                        }
                        if ui.button("Cancel").clicked() {
                            close = true;
                        }
                    });
                    if !saving && !self.recent.is_empty() {
                        ui.separator();
                        ui.label(RichText::new("Recent").weak());
                        for path in self.recent.clone() {
                            if ui.link(path.display().to_string()).clicked() {
                                chosen = Some(path);
                            }
                        }
                    }
                });
                match chosen {
                    Some(path) if path.as_os_str().is_empty() => {}
                    Some(path) => {
                        self.dialog = None;
                        let result = if saving {
                            self.save_to_checked(&path)
                        } else {
                            self.open(&path)
                        };
                        if let Err(e) = result {
                            self.dialog = Some(Dialog::Path {
                                saving,
                                text: path.display().to_string(),
                                error: Some(e),
                            });
                        }
                        return;
                    }
                    None => {
                        if let Some(Dialog::Path { text: t, .. }) = &mut self.dialog {
                            *t = text;
                        }
                    }
                }
            }
            Dialog::Unsaved { then } => {
                let name = self.document_name();
                let mut choice = None;
                egui::Modal::new(egui::Id::unique("unsaved-dialog")).show(ctx, |ui| {
                    ui.heading("Unsaved changes");
                    ui.label(format!("{name} has changes that are not saved."));
                    ui.horizontal(|ui| {
                        if ui.button("Save").clicked() {
                            choice = Some(true);
                        }
                        if ui.button("Discard changes").clicked() {
                            choice = Some(false);
                        }
                        if ui.button("Cancel").clicked() {
                            close = true;
                        }
                    });
                });
                if let Some(save) = choice {
                    self.dialog = None;
                    if save {
                        self.save();
                        if self.document.is_dirty() {
                            // Saving asked for a path or failed: stay.
                            return;
                        }
                    } else {
                        self.document.forget_recovery();
                        self.document.discard_changes();
                    }
                    self.after_unsaved(ctx, then);
                    return;
                }
            }
            Dialog::Recovery { probes } => {
                let name = self.document_name();
                egui::Modal::new(egui::Id::unique("recovery-dialog")).show(ctx, |ui| {
                    ui.heading("Recover unsaved changes?");
                    ui.label(format!(
                        "{name} was being edited when the program stopped. A copy of the unsaved \
                         probe set ({probes} probes) was kept."
                    ));
                    ui.horizontal(|ui| {
                        if ui.button("Restore").clicked() {
                            if let Some(recovered) = self.document.recovered() {
                                self.replace_probes(
                                    "restore",
                                    "restore recovered changes",
                                    recovered,
                                );
                                self.say("Recovered changes restored; save to keep them.".into());
                            }
                            close = true;
                        }
                        if ui.button("Discard").clicked() {
                            self.document.forget_recovery();
                            close = true;
                        }
                    });
                });
            }
        }
        if close {
            self.dialog = None;
        }
    }

    /// Saves to a path the user typed or picked, which must name a probe set.
    fn save_to_checked(&mut self, path: &Path) -> Result<(), String> {
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

/// The system's file dialog, when there is one (it returns at once with nothing otherwise).
fn system_dialog(saving: bool, current: &str) -> Option<PathBuf> {
    let start = Path::new(current)
        .parent()
        .filter(|p| p.is_dir())
        .map(Path::to_path_buf)
        .unwrap_or_else(|| PathBuf::from("."));
    let dialog = rfd::FileDialog::new().set_directory(start);
    if saving {
        dialog
            .add_filter("probe set", &["json"])
            .set_file_name("level.probes.json")
            .save_file()
    } else {
        dialog
            .add_filter("probe sets and levels", &["json", "gltf", "glb", "obj"])
            .pick_file()
    }
}
