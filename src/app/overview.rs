//! The inspector with nothing selected: the level and the run at a glance — counts by verdict, the
//! failing probes (a click selects one), the level's tags (a click highlights their objects in the
//! view) and the load warnings.

use std::collections::BTreeMap;

use eframe::egui;
use egui::RichText;

use super::badge::{verdict_color32, verdict_counts};
use super::document::Document;
use super::inspector::InspectorAction;
use plumbline_core::check::Verdict;

/// Failing probes listed at most (the list filter shows them all). Ours.
const MAX_LISTED_FAILING: usize = 12;

/// The overview; `highlighted` is the tag whose objects the view highlights.
pub fn overview_ui(
    ui: &mut egui::Ui,
    document: &Document,
    highlighted: Option<&str>,
) -> Option<InspectorAction> {
    let mut action = None;
    let name = document
        .level_path
        .file_name()
        .map_or_else(String::new, |n| n.to_string_lossy().into_owned());
    ui.heading(name);
    ui.label(
        RichText::new(format!(
            "{} objects · {} mesh triangles · {} probes",
            document.level.objects.len(),
            document.level.triangle_count(),
            document.probes.probes.len()
        ))
        .weak(),
    );
    ui.horizontal_wrapped(|ui| verdict_counts(ui, &document.summary()));
    let failing: Vec<usize> = (0..document.results.len())
        .filter(|&i| matches!(document.results[i].verdict, Verdict::Fail | Verdict::Error))
        .collect();
    if !failing.is_empty() {
        ui.add_space(6.0);
        ui.label(RichText::new("Not as expected").strong());
        for &i in failing.iter().take(MAX_LISTED_FAILING) {
            let result = &document.results[i];
            let link = ui
                .link(
                    RichText::new(&*document.probes.probes[i].id)
                        .color(verdict_color32(result.verdict)),
                )
                .on_hover_text(&*result.reason);
            if link.clicked() {
                action = Some(InspectorAction::Select(i));
            }
        }
        if failing.len() > MAX_LISTED_FAILING {
            ui.label(
                RichText::new(format!(
                    "and {} more (Verdict: FAIL in the list)",
                    failing.len() - MAX_LISTED_FAILING
                ))
                .weak(),
            );
        }
    }
    ui.add_space(6.0);
    ui.label(RichText::new("Tags").strong())
        .on_hover_text("A click highlights the objects with that tag in the view");
    let mut tags: BTreeMap<&str, usize> = BTreeMap::new();
    for object in &document.level.objects {
        for tag in &object.tags {
            *tags.entry(tag.as_str()).or_default() += 1;
        }
    }
    ui.horizontal_wrapped(|ui| {
        for (tag, count) in &tags {
            let on = highlighted == Some(*tag);
            if ui
                .selectable_label(on, format!("{tag} ({count})"))
                .clicked()
            {
                action = Some(InspectorAction::Highlight((!on).then(|| tag.to_string())));
            }
        }
    });
    if !document.diagnostics.is_empty() {
        ui.add_space(6.0);
        ui.label(RichText::new(format!("Load warnings ({})", document.diagnostics.len())).strong());
        for d in &document.diagnostics {
            ui.label(RichText::new(d.to_string()).weak());
        }
    }
    ui.add_space(10.0);
    ui.label(
        RichText::new(
            "Pick a probe in the list or click its marker in the view. To add one, pick a tool \
             above (Ray, Sweep, Closest, Overlap, Jump, Walk) and click in the view.",
        )
        .weak(),
    );
    action
}
