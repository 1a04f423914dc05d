//! The rules window: each rule with what it selects and how its probes fare (a click lists them),
//! and the rules as JSON to edit; Apply checks the text as the file format does and gives every
//! selected object its probe anew (one undoable step).

use std::path::Path;

use eframe::egui;
use egui::RichText;

use super::Workbench;
use super::badge::{verdict_color32, verdict_counts};
use super::probe_list::Origin;
use plumbline_core::check::{Summary, Verdict};
use plumbline_core::probe::{Rule, parse_rules, rules_to_json};

/// The rules as being edited.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct RulesDraft {
    /// The JSON text in the box.
    pub text: String,
    /// Why the text was not applied, when it was not.
    pub error: Option<String>,
}

impl Workbench {
    /// Opens (or closes) the rules window, its text taken from the rules as they are.
    pub fn toggle_rules(&mut self) {
        self.rules_draft = match self.rules_draft {
            Some(_) => None,
            None => Some(RulesDraft {
                text: rules_to_json(&self.document.probes.rules),
                error: None,
            }),
        };
    }

    /// Shows the rules window while it is open.
    pub(super) fn rules_window(&mut self, ctx: &egui::Context) {
        let Some(mut draft) = self.rules_draft.take() else {
            return;
        };
        let mut open = true;
        let mut apply = false;
        let mut list = None;
        egui::Window::new("Rules")
            .open(&mut open)
            .default_width(560.0)
            .default_pos(ctx.content_rect().left_top() + egui::vec2(330.0, 80.0))
            .show(ctx, |ui| {
                ui.label(
                    RichText::new(
                        "A rule gives every object it selects a probe, named rule/object; \
                         the probes are made again whenever the level or the rules change.",
                    )
                    .weak(),
                );
                ui.add_space(4.0);
                list = self.rule_rows(ui);
                ui.separator();
                // The buttons above the text, so that a long text never pushes them away.
                ui.horizontal(|ui| {
                    ui.label("The rules as they are saved:");
                    let current = rules_to_json(&self.document.probes.rules);
                    let edited = draft.text != current;
                    apply = ui.add_enabled(edited, egui::Button::new("Apply")).clicked();
                    if ui
                        .add_enabled(edited, egui::Button::new("Revert"))
                        .clicked()
                    {
                        draft = RulesDraft {
                            text: current,
                            error: None,
                        };
                    }
                });
                if let Some(error) = &draft.error {
                    ui.colored_label(verdict_color32(Verdict::Error), error);
                }
                egui::ScrollArea::vertical()
                    .max_height(300.0)
                    .show(ui, |ui| {
                        ui.add(
                            egui::TextEdit::multiline(&mut draft.text)
                                .code_editor()
                                .desired_rows(12)
                                .desired_width(f32::INFINITY),
                        );
                    });
            });
        if apply {
            match self.checked_rules(&draft.text) {
                Ok(rules) => {
                    let count = rules.len();
                    self.replace_rules(rules);
                    draft = RulesDraft {
                        text: rules_to_json(&self.document.probes.rules),
                        error: None,
                    };
                    self.say(format!("{count} rule(s) applied; Ctrl+Z undoes."));
                }
                Err(why) => draft.error = Some(why),
            }
        }
        if let Some(origin) = list {
            self.filter.origin = Some(origin);
        }
        if open {
            self.rules_draft = Some(draft);
        }
    }

    /// One row per rule: id, what it selects, and its probes' verdicts; returns the rule whose
    /// probes the user asked to list.
    fn rule_rows(&self, ui: &mut egui::Ui) -> Option<Origin> {
        let document = &self.document;
        if document.probes.rules.is_empty() {
            ui.label("No rules yet: write one below, for example");
            ui.label(
                RichText::new(
                    "[{\"id\": \"props-rest\", \"objects\": {\"tags\": [\"prop\"]}, \
                     \"rests\": {}}]",
                )
                .monospace(),
            );
            return None;
        }
        let mut picked = None;
        egui::Grid::new("rules-grid")
            .num_columns(3)
            .spacing([12.0, 4.0])
            .striped(true)
            .show(ui, |ui| {
                for rule in &document.probes.rules {
                    let results: Vec<_> = document
                        .probes
                        .probes
                        .iter()
                        .zip(&document.results)
                        .filter(|(p, _)| p.from_rule.as_ref().is_some_and(|f| *f.rule == rule.id))
                        .map(|(_, r)| r.clone())
                        .collect();
                    ui.vertical(|ui| {
                        ui.label(RichText::new(&rule.id).strong());
                        if let Some(label) = &rule.label {
                            ui.label(RichText::new(label).weak());
                        }
                    });
                    ui.label(rule.objects.describe());
                    ui.horizontal(|ui| {
                        verdict_counts(ui, &Summary::of(&results));
                        if ui.small_button("List").clicked() {
                            picked = Some(Origin::Rule(rule.id.clone()));
                        }
                    });
                    ui.end_row();
                }
            });
        picked
    }

    /// The typed rules, checked as the file format checks them and against the written probes'
    /// ids.
    fn checked_rules(&self, text: &str) -> Result<Vec<Rule>, String> {
        let rules = parse_rules(Path::new("rules"), text).map_err(|e| e.to_string())?;
        if let Some(rule) = rules.iter().find(|r| {
            self.document
                .probes
                .probes
                .iter()
                .any(|p| p.from_rule.is_none() && *p.id == *r.id)
        }) {
            return Err(format!(
                "rule id \"{}\" is already a probe's id; ids are unique in a set",
                rule.id
            ));
        }
        Ok(rules)
    }
}
