//! The probe list: every probe with its verdict (icon, word and colour), narrowed by text, kind and
//! verdict; a click selects a probe.

use eframe::egui;
use egui::{Color32, RichText};

use std::collections::HashMap;

use super::Selection;
use super::badge::{color32, paint_mark, verdict_color32};
use super::document::Document;
use crate::view::palette::{self, verdict_word};
use plumbline_core::check::Aspect;
use plumbline_core::check::{Hits, Verdict};
use plumbline_core::probe::ProbeKind;

/// The verdicts offered by the verdict filter.
const VERDICTS: [Verdict; 4] = [
    Verdict::Fail,
    Verdict::Error,
    Verdict::Pass,
    Verdict::Unchecked,
];

/// The list's filters.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ListFilter {
    /// Text that the id, label or first object must contain (any case).
    pub text: String,
    /// Only this kind.
    pub kind: Option<ProbeKind>,
    /// Only this verdict.
    pub verdict: Option<Verdict>,
    /// Only the written probes, or only one rule's.
    pub origin: Option<Origin>,
}

/// Where probes come from.
#[derive(Debug, Clone, PartialEq, Eq, Hash)]
pub enum Origin {
    /// Written in the probe set.
    Written,
    /// Made by the rule with this id.
    Rule(String),
}

impl Origin {
    /// True when `probe` comes from here.
    fn holds(&self, probe: &plumbline_core::probe::Probe) -> bool {
        match (self, &probe.from_rule) {
            (Origin::Written, None) => true,
            (Origin::Rule(id), Some(from)) => *from.rule == **id,
            _ => false,
        }
    }

    /// The filter's words.
    fn name(&self) -> String {
        match self {
            Origin::Written => "written".into(),
            Origin::Rule(id) => format!("rule {id}"),
        }
    }
}

impl ListFilter {
    /// The indices of the probes the filter lets through, in probe order.
    pub fn shown(&self, document: &Document) -> Vec<usize> {
        let count = document.probes.probes.len().min(document.results.len());
        if *self == ListFilter::default() {
            return (0..count).collect();
        }
        let needle = self.text.to_lowercase();
        (0..document.probes.probes.len())
            .filter(|&i| {
                let probe = &document.probes.probes[i];
                let Some(result) = document.results.get(i) else {
                    return false;
                };
                let kind_ok = self.kind.is_none_or(|k| probe.query.kind() == k)
                    && self.origin.as_ref().is_none_or(|o| o.holds(probe));
                let verdict_ok = self.verdict.is_none_or(|v| result.verdict == v);
                let text_ok = needle.is_empty()
                    || probe.id.to_lowercase().contains(&needle)
                    || probe
                        .label
                        .as_deref()
                        .is_some_and(|l| l.to_lowercase().contains(&needle))
                    || result
                        .hits
                        .first()
                        .is_some_and(|(object, _, _)| object.to_lowercase().contains(&needle));
                kind_ok && verdict_ok && text_ok
            })
            .collect()
    }
}

/// Shows the filters and the list. Returns true when the user picked a probe here. Ctrl+click adds
/// or removes a probe, Shift+click selects a run of them. Probes whose answer changed when the level
/// was reloaded say so.
pub fn probe_list_ui(
    ui: &mut egui::Ui,
    filter: &mut ListFilter,
    document: &Document,
    shown: &[usize],
    selection: &mut Selection,
    changes: &HashMap<String, Vec<Aspect>>,
    scroll_to_selection: bool,
) -> bool {
    ui.add(
        egui::TextEdit::singleline(&mut filter.text)
            .hint_text("Filter: id, label or object")
            .desired_width(f32::INFINITY),
    );
    ui.horizontal(|ui| {
        egui::ComboBox::from_label("Kind")
            .selected_text(filter.kind.map_or("all kinds", ProbeKind::name))
            .width(78.0)
            .show_ui(ui, |ui| {
                ui.selectable_value(&mut filter.kind, None, "all kinds");
                for kind in ProbeKind::ALL {
                    ui.selectable_value(&mut filter.kind, Some(kind), kind.name());
                }
            });
        egui::ComboBox::from_label("Verdict")
            .selected_text(filter.verdict.map_or("all verdicts", verdict_word))
            .width(78.0)
            .show_ui(ui, |ui| {
                ui.selectable_value(&mut filter.verdict, None, "all verdicts");
                for verdict in VERDICTS {
                    ui.selectable_value(&mut filter.verdict, Some(verdict), verdict_word(verdict));
                }
            });
    });
    if !document.probes.rules.is_empty() {
        egui::ComboBox::from_label("From")
            .selected_text(
                filter
                    .origin
                    .as_ref()
                    .map_or("written and rules".into(), Origin::name),
            )
            .width(170.0)
            .show_ui(ui, |ui| {
                ui.selectable_value(&mut filter.origin, None, "written and rules");
                ui.selectable_value(&mut filter.origin, Some(Origin::Written), "written");
                for rule in &document.probes.rules {
                    let origin = Origin::Rule(rule.id.clone());
                    let name = origin.name();
                    ui.selectable_value(&mut filter.origin, Some(origin), name);
                }
            });
    }
    ui.label(
        RichText::new(format!(
            "{} of {} probes",
            shown.len(),
            document.probes.probes.len()
        ))
        .weak(),
    );
    ui.separator();
    let mut picked = false;
    let row_height = ui.text_style_height(&egui::TextStyle::Body) * 2.0 + 8.0;
    let mut area = egui::ScrollArea::vertical().auto_shrink([false, false]);
    // Rows off screen are never built, so bring the selected one into view by offset.
    if scroll_to_selection
        && let Some(position) = selection
            .probe
            .and_then(|p| shown.iter().position(|&i| i == p))
    {
        let pitch = row_height + ui.spacing().item_spacing.y;
        area = area.vertical_scroll_offset((position as f32 - 3.0).max(0.0) * pitch);
    }
    area.show_rows(ui, row_height, shown.len(), |ui, rows| {
        for &i in &shown[rows] {
            let probe = &document.probes.probes[i];
            let result = &document.results[i];
            let selected = selection.contains(i);
            let changed = changes.get(&*probe.id);
            let mut response = probe_row(
                ui,
                row_height - 2.0,
                probe,
                result,
                selected,
                changed.is_some(),
            );
            if let Some(aspects) = changed {
                let words: Vec<String> = aspects.iter().map(|a| a.to_string()).collect();
                response =
                    response.on_hover_text(format!("Changed at the reload: {}", words.join("; ")));
            }
            if response.clicked() {
                let modifiers = ui.input(|i| i.modifiers);
                if modifiers.command {
                    selection.toggle(i);
                } else if modifiers.shift {
                    selection.extend_to(i, shown);
                } else {
                    *selection = Selection::one(i);
                }
                picked = true;
            }
        }
    });
    picked
}

/// One row: the verdict's marker and word, the id and kind, and the label underneath.
fn probe_row(
    ui: &mut egui::Ui,
    height: f32,
    probe: &plumbline_core::probe::Probe,
    result: &plumbline_core::check::ProbeResult,
    selected: bool,
    changed: bool,
) -> egui::Response {
    let verdict = result.verdict;
    let width = ui.available_width();
    let (rect, response) = ui.allocate_exact_size(egui::vec2(width, height), egui::Sense::click());
    let changed_word = if changed { " changed" } else { "" };
    let title = format!("{}  {}{changed_word}", verdict_word(verdict), probe.id);
    let label = probe.label.as_deref().unwrap_or("(no label)");
    response.widget_info(|| {
        egui::WidgetInfo::selected(
            egui::Role::Button,
            true,
            selected,
            format!("{title} {label}"),
        )
    });
    if !ui.is_rect_visible(rect) {
        return response;
    }
    let visuals = ui.style().interact_selectable(&response, selected);
    if selected || response.hovered() {
        ui.painter().rect_filled(rect, 3.0, visuals.weak_bg_fill);
    }
    let painter = ui.painter().with_clip_rect(rect);
    let top = rect.top() + 4.0;
    paint_mark(
        &painter,
        egui::pos2(rect.left() + 10.0, top + 8.0),
        5.0,
        verdict,
    );
    let word = painter.text(
        egui::pos2(rect.left() + 20.0, top),
        egui::Align2::LEFT_TOP,
        verdict_word(verdict),
        egui::FontId::proportional(13.0),
        verdict_color32(verdict),
    );
    let id = painter.text(
        egui::pos2(word.right() + 8.0, top),
        egui::Align2::LEFT_TOP,
        &probe.id,
        egui::FontId::proportional(13.0),
        ui.visuals().strong_text_color(),
    );
    let mut kind_words = match &probe.from_rule {
        Some(_) => format!("{} by rule", probe.query.kind().name()),
        None => probe.query.kind().name().to_string(),
    };
    // The whole-level answers in a word: how much is seen, how many pairs see each other.
    match &result.hits {
        Hits::Coverage(c) if !c.is_empty() => {
            kind_words = format!("{kind_words} {:.1}%", c[0].share * 100.0)
        }
        Hits::Sightlines(pairs) => {
            let seeing = pairs.iter().filter(|p| p.sees).count();
            kind_words = format!("{kind_words} {seeing}/{}", pairs.len());
        }
        _ => {}
    }
    let kind = painter.text(
        egui::pos2(id.right() + 8.0, top),
        egui::Align2::LEFT_TOP,
        kind_words,
        egui::FontId::proportional(11.5),
        ui.visuals().weak_text_color(),
    );
    if changed {
        painter.text(
            egui::pos2(kind.right() + 8.0, top),
            egui::Align2::LEFT_TOP,
            "changed",
            egui::FontId::proportional(11.5),
            color32(palette::CHANGED),
        );
    }
    let mut job = egui::text::LayoutJob::simple(
        label.to_string(),
        egui::FontId::proportional(12.0),
        ui.visuals().weak_text_color(),
        rect.width() - 26.0,
    );
    job.wrap.max_rows = 1;
    job.wrap.break_anywhere = false;
    job.wrap.overflow_character = Some('…');
    let galley = painter.layout_job(job);
    painter.galley(
        egui::pos2(rect.left() + 20.0, top + 18.0),
        galley,
        Color32::PLACEHOLDER,
    );
    response
}
