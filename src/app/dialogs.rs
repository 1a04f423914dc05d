//! The window's dialogs, each a method of its own: a typed path to open or save to (with the system's
//! file dialog one button away), the unsaved-changes question, and the offer of recovered changes.
//! Each returns true when it is to close.

use std::path::{Path, PathBuf};

use eframe::egui;
use egui::RichText;

use super::Workbench;
use super::badge::color32;
use crate::view::palette;

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
    /// Shows the open dialog, if any.
    pub fn dialog_ui(&mut self, ctx: &egui::Context) {
        let Some(dialog) = self.dialog.clone() else {
            return;
        };
        let close = match dialog {
            Dialog::Path {
                saving,
                text,
                error,
            } => self.path_dialog(ctx, saving, text, error),
            Dialog::Unsaved { then } => self.unsaved_dialog(ctx, then),
            Dialog::Recovery { probes } => self.recovery_dialog(ctx, probes),
        };
        if close {
            self.dialog = None;
        }
    }

    fn path_dialog(
        &mut self,
        ctx: &egui::Context,
        saving: bool,
        mut text: String,
        error: Option<String>,
    ) -> bool {
        let mut close = false;
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
            let entered = field.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter));
            if let Some(e) = &error {
                ui.label(RichText::new(e).color(color32(palette::WARNING)));
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
                return false;
            }
            None => {
                if let Some(Dialog::Path { text: t, .. }) = &mut self.dialog {
                    *t = text;
                }
            }
        }
        close
    }

    fn unsaved_dialog(&mut self, ctx: &egui::Context, then: AfterUnsaved) -> bool {
        let name = self.document_name();
        let mut close = false;
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
        let Some(save) = choice else {
            return close;
        };
        self.dialog = None;
        if save {
            self.save();
            if self.document.is_dirty() {
                // Saving asked for a path or failed: stay.
                return false;
            }
        } else {
            self.document.forget_recovery();
            self.document.discard_changes();
        }
        self.after_unsaved(ctx, then);
        false
    }

    fn recovery_dialog(&mut self, ctx: &egui::Context, probes: usize) -> bool {
        let name = self.document_name();
        let mut close = false;
        egui::Modal::new(egui::Id::unique("recovery-dialog")).show(ctx, |ui| {
            ui.heading("Recover unsaved changes?");
            ui.label(format!(
                "{name} was being edited when the program stopped. A copy of the unsaved \
                 probe set ({probes} probes) was kept."
            ));
            ui.horizontal(|ui| {
                if ui.button("Restore").clicked() {
                    if let Some(recovered) = self.document.recovered() {
                        self.history.record(
                            "restore",
                            "restore recovered changes",
                            &self.document.written(),
                        );
                        self.history.seal();
                        self.restore(recovered);
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
        close
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
