//! The inspector: the selected probe's verdict and reason, every hit in a table whose rows pick the
//! hit in the view, for sweeps a plot of clearance along the path, and the probe's question to edit;
//! with several probes selected, edits for all of them at once.

use eframe::egui;
use egui::RichText;
use egui_plot::{Legend, Line, MarkerShape, Plot, Points, VLine};
use glam::DQuat;

use std::collections::HashMap;

use super::Selection;
use super::badge::{badge, color32, paint_shape, verdict_counts};
use super::commands::{Command, tooltip};
use super::document::Document;
use super::editor::{Edit, EditorState, probe_editor};
use crate::view::palette::{self, SELECTED, StateMark, okabe_ito};
use plumbline_core::check::{Aspect, Hits, ProbeResult, VolumeCrossing, VolumeRecord, metres};
use plumbline_core::level::ShapeSpec;
use plumbline_core::probe::{Expect, Launch, Probe, ProbeQuery};
use plumbline_core::query::{ProbeShape, World};

/// Places along the path where the clearance plot measures the distance to the level.
const PROFILE_SAMPLES: usize = 240;

/// Clearance along a sweep's path: sampled for the curve, exact for the minimum.
#[derive(Debug, Clone, PartialEq)]
pub struct ClearancePlot {
    /// Which probe it is for.
    pub probe: usize,
    /// (metres travelled, distance to the level) samples.
    pub profile: Vec<(f64, f64)>,
    /// The exact least clearance: (metres travelled, distance).
    pub minimum: Option<(f64, f64)>,
    /// Metres travelled at each impact.
    pub impacts: Vec<f64>,
}

impl ClearancePlot {
    /// The plot of `probe` (number `index`) with its answer `result`.
    pub fn of(
        world: &World,
        probe: &Probe,
        result: &ProbeResult,
        index: usize,
    ) -> Option<ClearancePlot> {
        // Clearance is measured for shapes that keep one turn.
        let ProbeQuery::Sweep {
            shape,
            rotation,
            path,
            turns: None,
            ..
        } = &probe.query
        else {
            return None;
        };
        let shape = ProbeShape::new(shape, rotation.unwrap_or(DQuat::IDENTITY)).ok()?;
        let view = world.view(&probe.filter);
        let profile = view.clearance_profile(&shape, path, PROFILE_SAMPLES).ok()?;
        let length: f64 = path.windows(2).map(|w| w[0].distance(w[1])).sum();
        // The answer's own least clearance when it has one, else measured here (exactly, too).
        let minimum = match &result.clearance {
            Some(c) => Some((c.t * length, c.distance)),
            None => view
                .sweep_clearance(&shape, path, None)
                .ok()
                .flatten()
                .map(|c| (c.t * length, c.distance)),
        };
        let impacts = match &result.hits {
            Hits::Sweep(hits) => hits.iter().map(|h| h.distance).collect(),
            _ => Vec::new(),
        };
        Some(ClearancePlot {
            probe: index,
            profile,
            minimum,
            impacts,
        })
    }
}

/// What the inspector asks the workbench to do.
#[derive(Debug, Clone, PartialEq)]
pub enum InspectorAction {
    /// Apply an edit of probe `.0`.
    Edit(usize, Box<Edit>),
    /// Run a command on the selection.
    Run(Command),
    /// Replace the probes with these (a bulk edit of the selection), named `.0`.
    Bulk(String, Vec<Probe>),
    /// Select this probe (from the overview).
    Select(usize),
    /// Highlight the objects with this tag in the view (or none).
    Highlight(Option<String>),
    /// Answer this probe again (its background answer was cancelled).
    AnswerAgain(usize),
}

/// Shows the inspector for the selection: one probe's answer and editor, or bulk edits for several.
pub fn inspector_ui(
    ui: &mut egui::Ui,
    document: &Document,
    selection: &mut Selection,
    editor: &mut EditorState,
    plot: Option<&ClearancePlot>,
    changes: &HashMap<String, Vec<Aspect>>,
    highlighted: Option<&str>,
) -> Option<InspectorAction> {
    if !selection.others.is_empty() {
        return bulk_ui(ui, document, selection);
    }
    let Some(index) = selection.probe else {
        return super::overview::overview_ui(ui, document, highlighted);
    };
    let (Some(probe), Some(result)) = (
        document.probes.probes.get(index),
        document.results.get(index),
    ) else {
        return None;
    };
    let mut action = None;
    ui.heading(&*probe.id);
    if let Some(label) = &probe.label {
        ui.label(RichText::new(label).italics());
    }
    badge(ui, result.verdict, "");
    ui.label(&*result.reason);
    if document.was_cancelled(index) && ui.button("Answer again").clicked() {
        action = Some(InspectorAction::AnswerAgain(index));
    }
    if let Some(aspects) = changes.get(&*probe.id) {
        let words: Vec<String> = aspects.iter().map(|a| a.to_string()).collect();
        ui.label(
            RichText::new(format!("Changed at the level reload: {}", words.join("; ")))
                .color(color32(palette::CHANGED)),
        );
    }
    ui.label(
        RichText::new(format!(
            "{} · expects {}",
            question_words(probe),
            expect_words(probe.expect.as_ref())
        ))
        .weak(),
    );
    if let Some(from) = &probe.from_rule {
        ui.label(
            RichText::new(format!(
                "Made by rule {} for {}. Edit the rule (Probe > Rules…) to change it;                  Duplicate makes a copy of your own.",
                from.rule,
                from.object.as_deref().unwrap_or("no object")
            ))
            .weak(),
        );
        ui.horizontal(|ui| {
            if ui.button(Command::Duplicate.name()).clicked() {
                action = Some(InspectorAction::Run(Command::Duplicate));
            }
            if ui.button(Command::Rules.name()).clicked() {
                action = Some(InspectorAction::Run(Command::Rules));
            }
        });
    } else {
        ui.horizontal(|ui| command_buttons(ui, &mut action));
    }
    ui.separator();
    let heading = match &result.hits {
        Hits::Rest(_) => "Support".to_string(),
        Hits::Sightlines(pairs) => format!("Sightlines ({} pairs)", pairs.len()),
        Hits::Coverage(_) => "Coverage".to_string(),
        Hits::Jump(h) if h.is_empty() => "Landing (none)".to_string(),
        Hits::Jump(_) => "Landing".to_string(),
        Hits::Walk(_) => "Walk".to_string(),
        Hits::Reach(_) => "Reach".to_string(),
        Hits::Settle(_) => "Where it ends".to_string(),
        hits => format!("Hits ({})", hits.len()),
    };
    egui::CollapsingHeader::new(heading)
        .default_open(true)
        .show(ui, |ui| hits_table(ui, result, selection));
    if !result.volumes.is_empty() {
        egui::CollapsingHeader::new(format!("Volumes ({})", result.volumes.len()))
            .default_open(true)
            .show(ui, |ui| volumes_table(ui, &result.volumes));
    }
    if let Some(plot) = plot.filter(|p| p.probe == index) {
        egui::CollapsingHeader::new("Clearance along the path")
            .default_open(true)
            .show(ui, |ui| clearance_plot(ui, plot));
    }
    if probe.from_rule.is_some() {
        return action;
    }
    // Closed until first opened (then remembered): most selections are to read the answer, and the
    // editor's widgets cost a few milliseconds a frame on a CPU rasteriser.
    egui::CollapsingHeader::new("Edit the question")
        .default_open(false)
        .show(ui, |ui| {
            let taken = |id: &str| document.probes.probes.iter().any(|p| &*p.id == id);
            if let Some(edit) = probe_editor(ui, index, probe, editor, &taken) {
                action = Some(InspectorAction::Edit(index, Box::new(edit)));
            }
        });
    action
}

/// Where the probe is in, enters and leaves volumes, in order along its way; the markers as the view
/// draws them.
fn volumes_table(ui: &mut egui::Ui, events: &[VolumeRecord]) {
    egui::Grid::new("volumes")
        .num_columns(3)
        .striped(true)
        .show(ui, |ui| {
            for head in ["volume", "", "where"] {
                ui.label(RichText::new(head).strong());
            }
            ui.end_row();
            for e in events {
                ui.label(&*e.volume)
                    .on_hover_text(format!("tags: {}", e.tags.join(", ")));
                let (mark, word) = match e.event {
                    VolumeCrossing::Inside => (StateMark::Round, "in"),
                    VolumeCrossing::Enter => (StateMark::Diamond, "enters"),
                    VolumeCrossing::Exit => (StateMark::Square, "leaves"),
                };
                ui.horizontal(|ui| {
                    let (rect, _) =
                        ui.allocate_exact_size(egui::vec2(12.0, 12.0), egui::Sense::hover());
                    paint_shape(
                        ui.painter(),
                        rect.center(),
                        4.5,
                        mark,
                        color32(palette::VOLUME),
                    );
                    ui.label(word);
                });
                let place = match (e.distance, e.time) {
                    (Some(d), Some(t)) => format!("{} · {t:.2} s", metres(d)),
                    (Some(d), None) => metres(d),
                    (None, Some(t)) => format!("{t:.3} s"),
                    (None, None) => String::new(),
                };
                ui.label(place);
                ui.end_row();
            }
        });
}

/// Buttons for the commands that act on the selection.
fn command_buttons(ui: &mut egui::Ui, action: &mut Option<InspectorAction>) {
    for command in [Command::ExpectAnswer, Command::Duplicate, Command::Delete] {
        if ui
            .button(command.name())
            .on_hover_text(tooltip(ui.ctx(), command))
            .clicked()
        {
            *action = Some(InspectorAction::Run(command));
        }
    }
}

/// Edits for several selected probes at once.
fn bulk_ui(
    ui: &mut egui::Ui,
    document: &Document,
    selection: &Selection,
) -> Option<InspectorAction> {
    let chosen = selection.all();
    let mut action = None;
    ui.heading(format!("{} probes selected", chosen.len()));
    let summary = plumbline_core::check::Summary::of(
        &chosen
            .iter()
            .filter_map(|&i| document.results.get(i).cloned())
            .collect::<Vec<_>>(),
    );
    ui.horizontal(|ui| verdict_counts(ui, &summary));
    ui.label("Ctrl+click adds or removes a probe; Shift+click selects a run.");
    ui.separator();
    ui.horizontal_wrapped(|ui| {
        command_buttons(ui, &mut action);
        if ui
            .button("Expect nothing")
            .on_hover_text("Remove their expectations")
            .clicked()
        {
            let mut probes = document.probes.probes.clone();
            for &i in &chosen {
                probes[i].expect = None;
            }
            action = Some(InspectorAction::Bulk("expect nothing".into(), probes));
        }
    });
    ui.separator();
    ui.label(RichText::new("Which objects they look at").strong());
    let id = ui.scope_id().with("bulk-tags");
    let mut text: String = ui.data_mut(|d| d.get_temp(id).unwrap_or_default());
    let label = ui.label("tags (comma-separated)");
    ui.add(egui::TextEdit::singleline(&mut text).desired_width(f32::INFINITY))
        .labelled_by(label.id);
    ui.data_mut(|d| d.insert_temp(id, text.clone()));
    let tags: Vec<String> = text
        .split(',')
        .map(|t| t.trim().to_string())
        .filter(|t| !t.is_empty())
        .collect();
    ui.horizontal(|ui| {
        let mut apply = |what: &str, change: &dyn Fn(&mut Probe)| {
            let mut probes = document.probes.probes.clone();
            for &i in &chosen {
                change(&mut probes[i]);
            }
            action = Some(InspectorAction::Bulk(what.into(), probes));
        };
        if ui.button("Only these tags").clicked() {
            let only = (!tags.is_empty()).then(|| tags.clone());
            apply("set only tags", &|p| p.filter.only_tags = only.clone());
        }
        if ui.button("Ignore these tags").clicked() {
            apply("set ignored tags", &|p| p.filter.ignore_tags = tags.clone());
        }
        if ui
            .button("Every object")
            .on_hover_text("Clear their tag and name filters")
            .clicked()
        {
            apply("clear filters", &|p| p.filter = Default::default());
        }
    });
    action
}

/// The question in a few words.
fn question_words(probe: &Probe) -> String {
    match &probe.query {
        ProbeQuery::Ray { from, to, .. } => format!("ray, {}", metres(from.distance(*to))),
        ProbeQuery::Sweep {
            shape, path, turns, ..
        } => {
            let length: f64 = path.windows(2).map(|w| w[0].distance(w[1])).sum();
            let turning = if turns.is_some() { ", turning" } else { "" };
            format!("{} swept {}{turning}", shape_words(shape), metres(length))
        }
        ProbeQuery::Closest { shape, .. } => format!("closest to a {}", shape_words(shape)),
        ProbeQuery::Overlap { shape, .. } => format!("overlap of a {}", shape_words(shape)),
        ProbeQuery::Rest { shape, .. } => format!("rest of a {}", shape_words(shape)),
        ProbeQuery::Settle { shape, .. } => format!("a {} let go", shape_words(shape)),
        ProbeQuery::Sightlines { spots } => format!("sightlines among {}", spots_words(spots)),
        ProbeQuery::Coverage { spots, spacing, .. } => format!(
            "coverage from {}, every {}",
            spots_words(spots),
            metres(*spacing)
        ),
        ProbeQuery::Reach { shape, spacing, .. } => format!(
            "reach of a {}, every {}",
            shape_words(shape),
            metres(*spacing)
        ),
        ProbeQuery::Walk { shape, path, .. } => {
            let length: f64 = path.windows(2).map(|w| w[0].distance(w[1])).sum();
            format!(
                "walk of a {} over {} waypoints, route {}",
                shape_words(shape),
                path.len(),
                metres(length)
            )
        }
        ProbeQuery::Jump { shape, launch, .. } => match launch {
            Launch::Velocity(v) => {
                format!("jump of a {} at {:.2} m/s", shape_words(shape), v.length())
            }
            Launch::Target { apex, .. } => {
                format!("jump of a {}, rising {}", shape_words(shape), metres(*apex))
            }
        },
    }
}

/// A set of spots in a few words.
fn spots_words(spots: &plumbline_core::probe::Spots) -> String {
    let mut parts = Vec::new();
    if !spots.points.is_empty() {
        parts.push(format!("{} spots", spots.points.len()));
    }
    if !spots.tags.is_empty() {
        parts.push(format!("objects tagged {}", spots.tags.join(" or ")));
    }
    parts.join(" and ")
}

/// A unit direction, compactly (two decimals are enough to read which way it points).
fn shape_words(shape: &ShapeSpec) -> String {
    match shape {
        ShapeSpec::Sphere { radius } => format!("sphere, radius {}", metres(*radius)),
        ShapeSpec::Box {
            half_extents: [x, y, z],
        } => {
            format!(
                "box, {} × {} × {}",
                metres(2.0 * x),
                metres(2.0 * y),
                metres(2.0 * z)
            )
        }
        ShapeSpec::Capsule {
            radius,
            half_height,
        } => format!(
            "capsule, radius {}, {} tall",
            metres(*radius),
            metres(2.0 * (half_height + radius))
        ),
        ShapeSpec::Cylinder {
            radius,
            half_height,
        } => format!(
            "cylinder, radius {}, {} tall",
            metres(*radius),
            metres(2.0 * half_height)
        ),
        ShapeSpec::Convex { points } => format!("convex hull of {} points", points.len()),
        other => other.type_name().to_string(),
    }
}

fn expect_words(expect: Option<&Expect>) -> String {
    let Some(expect) = expect else {
        return "nothing (unchecked)".into();
    };
    let c = expect.conditions();
    let mut words = Vec::new();
    match c.blocked {
        Some(true) => words.push("blocked".to_string()),
        Some(false) => words.push("clear".to_string()),
        None => {}
    }
    if let Some(name) = &c.first_object {
        words.push(format!("first object {name}"));
    }
    if let Some(tag) = &c.first_tag {
        words.push(format!("first object tagged {tag}"));
    }
    if let Some(range) = c.distance {
        match (range.min, range.max) {
            (Some(lo), Some(hi)) => {
                words.push(format!("distance {} to {}", metres(lo), metres(hi)))
            }
            (Some(lo), None) => words.push(format!("distance at least {}", metres(lo))),
            (None, Some(hi)) => words.push(format!("distance at most {}", metres(hi))),
            (None, None) => {}
        }
    }
    if let Some(m) = c.min_clearance {
        words.push(format!("clearance at least {}", metres(m)));
    }
    if let Some(m) = c.max_depth {
        words.push(format!("depth at most {}", metres(m)));
    }
    let pairs = |list: &Vec<[String; 2]>| {
        list.iter()
            .map(|[a, b]| format!("{a}–{b}"))
            .collect::<Vec<_>>()
            .join(", ")
    };
    if let Some(list) = &c.see {
        words.push(format!("see: {}", pairs(list)));
    }
    if let Some(list) = &c.blind {
        words.push(format!("do not see: {}", pairs(list)));
    }
    if let Some(n) = c.min_seen {
        words.push(format!("each sees at least {n}"));
    }
    if let Some(range) = c.seen {
        let percent = |v: f64| format!("{:.1}%", v * 100.0);
        match (range.min, range.max) {
            (Some(lo), Some(hi)) => words.push(format!("{} to {} seen", percent(lo), percent(hi))),
            (Some(lo), None) => words.push(format!("at least {} seen", percent(lo))),
            (None, Some(hi)) => words.push(format!("at most {} seen", percent(hi))),
            (None, None) => {}
        }
    }
    if let Some(m) = c.max_move {
        words.push(format!("moves at most {}", metres(m)));
    }
    if let Some(t) = c.max_turn {
        words.push(format!("turns at most {t:.1}°"));
    }
    let volumes = [
        ("enters", &c.enters),
        ("never enters", &c.never_enters),
        ("ends inside", &c.ends_inside),
    ];
    for (how, list) in volumes {
        if let Some(list) = list {
            words.push(format!("{how} {}", list.join(", ")));
        }
    }
    words.join("; ")
}

/// The hits as a table; clicking a row marks that hit in the view.
fn hits_table(ui: &mut egui::Ui, result: &ProbeResult, selection: &mut Selection) {
    if matches!(
        result.hits,
        Hits::Rest(_) | Hits::Sightlines(_) | Hits::Coverage(_) | Hits::Reach(_)
    ) {
        super::level_answers::answer_ui(ui, result, selection);
        return;
    }
    // A walk always has its record: how far it went, and how.
    if result.hits.is_empty() && !matches!(result.hits, Hits::Walk(_)) {
        ui.label("No hits: the probe is clear.");
        return;
    }
    super::hit_table::hits_table(ui, &result.hits, selection);
}

fn clearance_plot(ui: &mut egui::Ui, plot: &ClearancePlot) {
    let points: Vec<[f64; 2]> = plot.profile.iter().map(|&(x, y)| [x, y]).collect();
    Plot::new("clearance")
        .height(170.0)
        .legend(Legend::default())
        .x_axis_label("metres travelled")
        .y_axis_label("clearance, m")
        .include_y(0.0)
        .allow_scroll(false)
        .show(ui, |p| {
            p.line(
                Line::new("clearance", points)
                    .color(color32(okabe_ito::BLUE))
                    .width(2.0),
            );
            if let Some((x, y)) = plot.minimum {
                p.points(
                    Points::new(format!("least {}", metres(y)), vec![[x, y]])
                        .shape(MarkerShape::Diamond)
                        .radius(6.0)
                        .color(color32(SELECTED)),
                );
            }
            for (i, x) in plot.impacts.iter().enumerate() {
                let name = if i == 0 {
                    "impact".to_string()
                } else {
                    format!("impact {}", i + 1)
                };
                p.vline(
                    VLine::new(name, *x)
                        .color(color32(okabe_ito::VERMILLION))
                        .style(egui_plot::LineStyle::dashed_loose())
                        .width(1.5),
                );
            }
        });
}
