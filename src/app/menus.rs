//! The menu bar: File, Edit, Probe and View, each item a [`Command`] with its shortcut shown.

use eframe::egui;

use super::Workbench;
use super::commands::{Command, menu_item, toggle_item};
use super::tools::Tool;

impl Workbench {
    /// Shows the menu bar and does what is chosen.
    pub(super) fn menu_bar(&mut self, ui: &mut egui::Ui) {
        let ctx = ui.ctx().clone();
        let mut chosen = None;
        egui::MenuBar::new().ui(ui, |ui| {
            ui.menu_button("File", |ui| {
                for command in [Command::Open, Command::Save, Command::SaveAs] {
                    if menu_item(ui, command, true) {
                        chosen = Some(command);
                    }
                }
                ui.menu_button("Open recent", |ui| {
                    if self.recent.is_empty() {
                        ui.label("Nothing yet");
                    }
                    for path in self.recent.clone() {
                        if ui.button(path.display().to_string()).clicked()
                            && let Err(e) = self.open(&path)
                        {
                            self.say(e);
                        }
                    }
                });
                ui.separator();
                if menu_item(ui, Command::Quit, true) {
                    chosen = Some(Command::Quit);
                }
            });
            ui.menu_button("Edit", |ui| {
                let undo = self.history.undo_name().map(|w| format!("Undo {w}"));
                let redo = self.history.redo_name().map(|w| format!("Redo {w}"));
                for (command, name) in [(Command::Undo, undo), (Command::Redo, redo)] {
                    let shortcut = command
                        .shortcut()
                        .map(|s| ctx.format_shortcut(&s))
                        .unwrap_or_default();
                    let text = name.clone().unwrap_or_else(|| command.name().to_string());
                    if ui
                        .add_enabled(
                            name.is_some(),
                            egui::Button::new(text).shortcut_text(shortcut),
                        )
                        .clicked()
                    {
                        chosen = Some(command);
                    }
                }
                ui.separator();
                let any = !self.selection.is_empty();
                for command in [
                    Command::Duplicate,
                    Command::Delete,
                    Command::ExpectAnswer,
                    Command::SelectAll,
                ] {
                    if menu_item(ui, command, any || command == Command::SelectAll) {
                        chosen = Some(command);
                    }
                }
            });
            ui.menu_button("Probe", |ui| {
                for tool in Tool::PLACING {
                    if menu_item(ui, Command::Tool(tool), true) {
                        chosen = Some(Command::Tool(tool));
                    }
                }
                if menu_item(ui, Command::FinishPath, self.tool.clicks().is_none()) {
                    chosen = Some(Command::FinishPath);
                }
                ui.separator();
                if menu_item(ui, Command::Rules, true) {
                    chosen = Some(Command::Rules);
                }
            });
            ui.menu_button("View", |ui| {
                for command in [Command::FrameLevel, Command::FrameProbe] {
                    if menu_item(ui, command, true) {
                        chosen = Some(command);
                    }
                }
                ui.separator();
                for (command, on) in [
                    (Command::ToggleFly, self.viewport.fly),
                    (Command::ToggleDimming, self.viewport.dim_others),
                    (Command::ToggleLegend, self.viewport.legend),
                ] {
                    if toggle_item(ui, command, on) {
                        chosen = Some(command);
                    }
                }
                ui.separator();
                if menu_item(ui, Command::Lint, true) {
                    chosen = Some(Command::Lint);
                }
            });
        });
        if let Some(command) = chosen {
            self.perform(command, &ctx);
        }
    }
}
