//! The summary bar along the bottom: counts by verdict, the level, whether the answers match the level
//! on disk (or what changed when it was reloaded), load warnings and the latest status message.

use std::time::Duration;

use eframe::egui;
use egui::RichText;

use super::Workbench;
use super::badge;
use crate::view::palette;

/// How long a status message stays.
const MESSAGE_FOR: Duration = Duration::from_secs(8);

impl Workbench {
    /// Shows the summary bar.
    pub(super) fn summary_bar(&mut self, ui: &mut egui::Ui) {
        let summary = self.document.summary();
        ui.horizontal(|ui| {
            badge::verdict_counts(ui, &summary);
            ui.separator();
            let level = self
                .document
                .level_path
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default();
            ui.label(format!(
                "level {level} · {} objects · {} mesh triangles",
                self.document.level.objects.len(),
                self.document.level.triangle_count()
            ));
            ui.separator();
            let warn = badge::color32(palette::CHANGED);
            if let Some(e) = &self.reload_error {
                ui.label(
                    RichText::new("The level on disk cannot be read")
                        .color(warn)
                        .strong(),
                )
                .on_hover_text(format!(
                    "{e}\nThe answers shown are for the level as it was."
                ));
            } else if !self.changes.is_empty() {
                ui.label(
                    RichText::new(format!(
                        "Level reloaded: {} probe(s) changed",
                        self.changes.len()
                    ))
                    .color(warn)
                    .strong(),
                );
                if ui.button("Dismiss").clicked() {
                    self.changes.clear();
                    self.results_revision += 1;
                }
            } else {
                ui.label("Answers match the level on disk")
                    .on_hover_text(format!("level digest {}", self.document.level_digest));
            }
            if let Some((id, done)) = self.answers.progress() {
                ui.separator();
                ui.label(format!("Answering {id}"));
                ui.add(
                    egui::ProgressBar::new(done)
                        .desired_width(120.0)
                        .show_percentage(),
                );
                if ui
                    .button("Cancel")
                    .on_hover_text("Stop this answer; the probe can be answered again later")
                    .clicked()
                {
                    self.answers.cancel();
                }
            }
            let diagnostics = &self.document.diagnostics;
            if !diagnostics.is_empty() {
                ui.separator();
                let lines: Vec<String> = diagnostics.iter().map(|d| d.to_string()).collect();
                ui.label(format!("{} load warnings", diagnostics.len()))
                    .on_hover_text(lines.join("\n"));
            }
            if let Some((message, since)) = &self.message {
                if since.elapsed() < MESSAGE_FOR {
                    ui.separator();
                    ui.label(RichText::new(message).italics());
                } else {
                    self.message = None;
                }
            }
        });
    }
}
