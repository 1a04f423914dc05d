//! The toolbar: the open file's name, the tools, how handles drag or how placed points are lifted,
//! and the view's buttons.

use eframe::egui;
use egui::RichText;

use super::Workbench;
use super::commands::{Command, tooltip};
use super::tools::{DragMode, Tool};

impl Workbench {
    /// Shows the toolbar.
    pub(super) fn toolbar(&mut self, ui: &mut egui::Ui) {
        let ctx = ui.ctx().clone();
        ui.horizontal(|ui| {
            let dirty = if self.document.is_dirty() { " •" } else { "" };
            ui.label(RichText::new(format!("{}{dirty}", self.document_name())).strong())
                .on_hover_text(if dirty.is_empty() {
                    "Saved"
                } else {
                    "Unsaved changes (a recovery copy is kept every 10 s)"
                });
            ui.separator();
            for tool in std::iter::once(Tool::Select).chain(Tool::PLACING) {
                let selected = self.tool == tool;
                if ui
                    .selectable_label(selected, tool.name())
                    .on_hover_text(format!(
                        "{}\n{}",
                        tool.help(),
                        tooltip(&ctx, Command::Tool(tool))
                    ))
                    .clicked()
                {
                    self.perform(Command::Tool(tool), &ctx);
                }
            }
            ui.separator();
            if self.tool == Tool::Select {
                let label = ui.label("Drag handles");
                egui::ComboBox::from_id_salt("drag-mode")
                    .selected_text(self.drag_mode.name())
                    .show_ui(ui, |ui| {
                        for mode in DragMode::ALL {
                            ui.selectable_value(&mut self.drag_mode, mode, mode.name());
                        }
                    })
                    .response
                    .labelled_by(label.id)
                    .on_hover_text(
                        "How the white handles of the selected probe move; over surfaces, a \
                         point keeps its height above the level",
                    );
            }
            if self.tool != Tool::Select {
                let tool = self.tool;
                let mut height = self.lift().height;
                let label = ui.label("Lift");
                if ui
                    .add(
                        egui::DragValue::new(&mut height)
                            .speed(0.01)
                            .range(-100.0..=100.0)
                            .suffix(" m"),
                    )
                    .labelled_by(label.id)
                    .on_hover_text("How far above the picked surface points are placed")
                    .changed()
                {
                    self.lifts.insert(tool, height);
                }
                egui::ComboBox::from_id_salt("lift-along")
                    .selected_text(if self.lift_along_normal {
                        "along the normal"
                    } else {
                        "along up"
                    })
                    .show_ui(ui, |ui| {
                        ui.selectable_value(&mut self.lift_along_normal, false, "along up");
                        ui.selectable_value(&mut self.lift_along_normal, true, "along the normal");
                    })
                    .response
                    .labelled_by(label.id);
            }
            if self.tool.clicks().is_none() && !self.placed.is_empty() {
                ui.label(format!("{} points", self.placed.len()));
                if ui
                    .add_enabled(self.placed.len() >= 2, egui::Button::new("End path"))
                    .on_hover_text(tooltip(&ctx, Command::FinishPath))
                    .clicked()
                {
                    self.finish_path();
                }
            }
            ui.separator();
            if ui
                .button("Frame level")
                .on_hover_text(tooltip(&ctx, Command::FrameLevel))
                .clicked()
            {
                self.viewport.frame_level();
            }
            ui.toggle_value(&mut self.viewport.fly, "Fly")
                .on_hover_text(
                    "Fly mode (G): drag to look around, W/A/S/D to move, Q/E down and up.\n\
                 Otherwise drag orbits, right or middle drag pans, the wheel zooms.",
                );
            ui.toggle_value(&mut self.viewport.legend, "Legend")
                .on_hover_text(tooltip(&ctx, Command::ToggleLegend));
        });
    }
}
