//! The inspector: the selected probe's question, its verdict and reason, every hit in a table whose rows
//! pick the hit in the view, and for sweeps a plot of clearance along the path.

use eframe::egui;
use egui::{Color32, RichText};
use egui_plot::{Legend, Line, MarkerShape, Plot, Points, VLine};
use glam::{DQuat, DVec3};

use super::Selection;
use super::badge::badge;
use super::document::Document;
use crate::check::{Hits, ProbeResult, metres};
use crate::level::ShapeSpec;
use crate::probe::{Expect, Probe, ProbeQuery};
use crate::query::ProbeShape;
use crate::view::palette::{SELECTED, okabe_ito};

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
    /// Measures the clearance of a sweep probe; `None` for other kinds or when it cannot be answered.
    pub fn measure(document: &Document, index: usize) -> Option<ClearancePlot> {
        let probe = document.probes.probes.get(index)?;
        let result = document.results.get(index)?;
        let ProbeQuery::Sweep {
            shape,
            rotation,
            path,
            ..
        } = &probe.query
        else {
            return None;
        };
        let shape = ProbeShape::new(shape, rotation.unwrap_or(DQuat::IDENTITY)).ok()?;
        let view = document.world.view(&probe.filter);
        let profile = view.clearance_profile(&shape, path, PROFILE_SAMPLES).ok()?;
        let length: f64 = path.windows(2).map(|w| w[0].distance(w[1])).sum();
        let minimum = view
            .sweep_clearance(&shape, path, None)
            .ok()
            .flatten()
            .map(|c| (c.t * length, c.distance));
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

/// Shows the inspector for the selection. Returns true when a hit row was picked.
pub fn inspector_ui(
    ui: &mut egui::Ui,
    document: &Document,
    selection: &mut Selection,
    plot: Option<&ClearancePlot>,
) -> bool {
    let Some(index) = selection.probe else {
        ui.add_space(8.0);
        ui.label(RichText::new("No probe selected").strong());
        ui.label("Pick one in the list, or click its marker in the view.");
        return false;
    };
    let (Some(probe), Some(result)) = (
        document.probes.probes.get(index),
        document.results.get(index),
    ) else {
        return false;
    };
    ui.heading(&probe.id);
    if let Some(label) = &probe.label {
        ui.label(RichText::new(label).italics());
    }
    badge(ui, result.verdict, "");
    ui.label(&result.reason);
    ui.separator();
    egui::CollapsingHeader::new("Question")
        .default_open(true)
        .show(ui, |ui| question_grid(ui, probe));
    let mut picked = false;
    egui::CollapsingHeader::new(format!("Hits ({})", result.hits.len()))
        .default_open(true)
        .show(ui, |ui| picked = hits_table(ui, result, selection));
    if let Some(plot) = plot.filter(|p| p.probe == index) {
        egui::CollapsingHeader::new("Clearance along the path")
            .default_open(true)
            .show(ui, |ui| clearance_plot(ui, plot));
    }
    picked
}

fn v3(v: DVec3) -> String {
    format!("{:.3}, {:.3}, {:.3}", v.x, v.y, v.z)
}

/// A unit direction, compactly (two decimals are enough to read which way it points).
fn direction(v: DVec3) -> String {
    format!("{:.2}, {:.2}, {:.2}", v.x, v.y, v.z)
}

fn question_grid(ui: &mut egui::Ui, probe: &Probe) {
    egui::Grid::new("question")
        .num_columns(2)
        .striped(true)
        .show(ui, |ui| {
            let mut row = |name: &str, value: String| {
                ui.label(RichText::new(name).weak());
                ui.label(value);
                ui.end_row();
            };
            row("kind", probe.query.kind().to_string());
            match &probe.query {
                ProbeQuery::Ray { from, to, hits } => {
                    row("from", v3(*from));
                    row("to", v3(*to));
                    row("length", metres(from.distance(*to)));
                    row(
                        "hits",
                        format!("{:?}", hits.unwrap_or(crate::probe::HitsMode::First))
                            .to_lowercase(),
                    );
                }
                ProbeQuery::Sweep {
                    shape,
                    path,
                    duration,
                    ..
                } => {
                    row("shape", shape_words(shape));
                    row("path", format!("{} points", path.len()));
                    for (i, p) in path.iter().enumerate() {
                        row(&format!("  point {i}"), v3(*p));
                    }
                    if let Some(d) = duration {
                        row("duration", format!("{d} s"));
                    }
                }
                ProbeQuery::Closest {
                    shape,
                    at,
                    max_distance,
                    ..
                } => {
                    row("shape", shape_words(shape));
                    row("at", v3(*at));
                    row("reach", metres(*max_distance));
                }
                ProbeQuery::Overlap { shape, at, .. } => {
                    row("shape", shape_words(shape));
                    row("at", v3(*at));
                }
            }
            let filter = &probe.filter;
            if let Some(only) = &filter.only_tags {
                row("only tags", only.join(", "));
            }
            if !filter.ignore_tags.is_empty() {
                row("ignores tags", filter.ignore_tags.join(", "));
            }
            if !filter.ignore_objects.is_empty() {
                row("ignores objects", filter.ignore_objects.join(", "));
            }
            row("expects", expect_words(probe.expect.as_ref()));
        });
}

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
    words.join("; ")
}

/// The hits as a table; clicking a row marks that hit in the view.
fn hits_table(ui: &mut egui::Ui, result: &ProbeResult, selection: &mut Selection) -> bool {
    if result.hits.is_empty() {
        ui.label("No hits: the probe is clear.");
        return false;
    }
    let mut picked = false;
    let header = match &result.hits {
        Hits::Ray(_) => ["#", "object", "distance", "normal", "t · triangle"],
        Hits::Sweep(_) => ["#", "object", "distance", "normal", "time of impact"],
        Hits::Closest(_) => ["#", "object", "distance", "normal", "overlapping"],
        Hits::Overlap(_) => ["#", "object", "depth", "direction", "enclosed"],
    };
    let rows: Vec<[String; 5]> = match &result.hits {
        Hits::Ray(h) => h
            .iter()
            .enumerate()
            .map(|(i, x)| {
                let triangle = x.triangle.map_or("—".into(), |t| t.to_string());
                let back = if x.back_face { " back" } else { "" };
                [
                    (i + 1).to_string(),
                    x.object.to_string(),
                    metres(x.distance),
                    direction(x.normal.into()),
                    format!("{:.4} · {triangle}{back}", x.t),
                ]
            })
            .collect(),
        Hits::Sweep(h) => h
            .iter()
            .enumerate()
            .map(|(i, x)| {
                // Seconds when the probe has a duration, else the fraction of the path.
                let time = x
                    .time
                    .map_or(format!("t {:.4}", x.t), |s| format!("{s:.3} s"));
                let inside = if x.started_inside {
                    ", started inside"
                } else {
                    ""
                };
                [
                    (i + 1).to_string(),
                    x.object.to_string(),
                    metres(x.distance),
                    direction(x.normal.into()),
                    format!("{time}{inside}"),
                ]
            })
            .collect(),
        Hits::Closest(h) => h
            .iter()
            .enumerate()
            .map(|(i, x)| {
                [
                    (i + 1).to_string(),
                    x.object.to_string(),
                    metres(x.distance),
                    direction(x.normal.into()),
                    if x.overlapping { "yes" } else { "no" }.into(),
                ]
            })
            .collect(),
        Hits::Overlap(h) => h
            .iter()
            .enumerate()
            .map(|(i, x)| {
                [
                    (i + 1).to_string(),
                    x.object.to_string(),
                    metres(x.depth),
                    direction(x.direction.into()),
                    if x.enclosed { "yes" } else { "no" }.into(),
                ]
            })
            .collect(),
    };
    egui::Grid::new("hits")
        .num_columns(5)
        .striped(true)
        .min_col_width(24.0)
        .show(ui, |ui| {
            for h in header {
                ui.label(RichText::new(h).strong());
            }
            ui.end_row();
            for (i, row) in rows.iter().enumerate() {
                let selected = selection.hit == Some(i);
                if ui.selectable_label(selected, &row[0]).clicked() {
                    selection.hit = if selected { None } else { Some(i) };
                    picked = true;
                }
                for cell in &row[1..] {
                    ui.label(cell);
                }
                ui.end_row();
            }
        });
    picked
}

fn clearance_plot(ui: &mut egui::Ui, plot: &ClearancePlot) {
    let points: Vec<[f64; 2]> = plot.profile.iter().map(|&(x, y)| [x, y]).collect();
    let [r, g, b] = okabe_ito::BLUE;
    let [sr, sg, sb] = SELECTED;
    let [vr, vg, vb] = okabe_ito::VERMILLION;
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
                    .color(Color32::from_rgb(r, g, b))
                    .width(2.0),
            );
            if let Some((x, y)) = plot.minimum {
                p.points(
                    Points::new(format!("least {}", metres(y)), vec![[x, y]])
                        .shape(MarkerShape::Diamond)
                        .radius(6.0)
                        .color(Color32::from_rgb(sr, sg, sb)),
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
                        .color(Color32::from_rgb(vr, vg, vb))
                        .style(egui_plot::LineStyle::dashed_loose())
                        .width(1.5),
                );
            }
        });
}
