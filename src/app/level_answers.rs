//! The inspector's view of the whole-level kinds' answers: a rest's support and gap, the sightline
//! matrix (click a cell: that sightline is marked in the view), a coverage's share and areas, and a
//! reach map's areas and targets.

use eframe::egui;
use egui::RichText;

use super::Selection;
use super::badge::{color32, paint_shape};
use crate::view::palette::okabe_ito;
use crate::view::palette::{STEEP, StateMark};
use plumbline_core::check::{Hits, ProbeResult, metres};

/// The answer of a rest, sightlines or coverage probe.
pub fn answer_ui(ui: &mut egui::Ui, result: &ProbeResult, selection: &mut Selection) {
    match &result.hits {
        Hits::Rest(hits) => match hits.first() {
            Some(h) => {
                egui::Grid::new("rest").num_columns(2).show(ui, |ui| {
                    ui.label("support");
                    ui.label(
                        h.material
                            .as_ref()
                            .map_or(h.object.to_string(), |m| format!("{} · {m}", h.object)),
                    );
                    ui.end_row();
                    ui.label(if h.gap < 0.0 { "sinks in by" } else { "gap" });
                    ui.label(metres(h.gap.abs()));
                    ui.end_row();
                });
            }
            None => {
                ui.label("Nothing below within reach: it would fall.");
            }
        },
        Hits::Sightlines(pairs) => matrix(ui, pairs, selection),
        Hits::Coverage(records) => {
            for c in records {
                egui::Grid::new("coverage").num_columns(2).show(ui, |ui| {
                    ui.label("seen");
                    ui.label(
                        RichText::new(format!("{:.1}%", c.share * 100.0))
                            .strong()
                            .color(color32(okabe_ito::BLUISH_GREEN)),
                    );
                    ui.end_row();
                    ui.label("points");
                    ui.label(format!("{} of {} seen", c.seen, c.points));
                    ui.end_row();
                    ui.label("area seen");
                    ui.label(format!("{:.1} m²", c.area_seen));
                    ui.end_row();
                    ui.label("area unseen");
                    ui.label(format!("{:.1} m²", c.area_unseen));
                    ui.end_row();
                    ui.label("spots");
                    ui.add(egui::Label::new(c.spots.join(", ")).wrap());
                    ui.end_row();
                });
                ui.horizontal(|ui| {
                    ui.label(RichText::new("In the view:").weak());
                    swatch(ui, StateMark::Round, okabe_ito::BLUISH_GREEN);
                    ui.label(RichText::new("seen").weak());
                    swatch(ui, StateMark::Square, okabe_ito::VERMILLION);
                    ui.label(RichText::new("not seen").weak());
                });
            }
        }
        Hits::Reach(records) => {
            for r in records {
                reach_ui(ui, r);
            }
        }
        _ => {}
    }
}

/// A reach map: how much ground is reached, and each target with its gap.
fn reach_ui(ui: &mut egui::Ui, r: &plumbline_core::check::ReachRecord) {
    egui::Grid::new("reach").num_columns(2).show(ui, |ui| {
        ui.label("reached");
        ui.label(
            RichText::new(format!("{:.0} m²", r.area_reached))
                .strong()
                .color(color32(okabe_ito::BLUISH_GREEN)),
        );
        ui.end_row();
        ui.label("walkable, not reached");
        ui.label(format!("{:.0} m²", r.area_unreached));
        ui.end_row();
        ui.label("cells");
        ui.label(format!("{} of {} reached", r.reached, r.cells));
        ui.end_row();
    });
    if !r.targets.is_empty() {
        egui::Grid::new("targets")
            .num_columns(3)
            .striped(true)
            .show(ui, |ui| {
                for head in ["target", "reached", "gap"] {
                    ui.label(RichText::new(head).strong());
                }
                ui.end_row();
                for t in &r.targets {
                    ui.label(&*t.name);
                    let (mark, colour, word) = if t.reachable {
                        (StateMark::Round, okabe_ito::BLUISH_GREEN, "yes")
                    } else {
                        (StateMark::Square, okabe_ito::VERMILLION, "no")
                    };
                    ui.horizontal(|ui| {
                        swatch(ui, mark, colour);
                        ui.label(word);
                    });
                    ui.label(t.gap.filter(|_| !t.reachable).map_or(String::new(), metres));
                    ui.end_row();
                }
            });
    }
    ui.horizontal(|ui| {
        ui.label(RichText::new("In the view:").weak());
        swatch(ui, StateMark::Round, okabe_ito::BLUISH_GREEN);
        ui.label(RichText::new("reached").weak());
        swatch(ui, StateMark::Square, okabe_ito::VERMILLION);
        ui.label(RichText::new("not reached").weak());
        swatch(ui, StateMark::Cross, STEEP);
        ui.label(RichText::new("too steep").weak());
    });
}

/// A small painted marker, as the view draws it.
fn swatch(ui: &mut egui::Ui, mark: StateMark, colour: [u8; 3]) {
    let (rect, _) = ui.allocate_exact_size(egui::vec2(12.0, 12.0), egui::Sense::hover());
    paint_shape(ui.painter(), rect.center(), 4.5, mark, color32(colour));
}

/// Which spots see which, as a table: a round mark sees, a cross is blocked; a click marks that
/// sightline.
fn matrix(
    ui: &mut egui::Ui,
    pairs: &[plumbline_core::check::PairRecord],
    selection: &mut Selection,
) {
    let mut names: Vec<&str> = Vec::new();
    for p in pairs {
        for n in [&*p.a, &*p.b] {
            if !names.contains(&n) {
                names.push(n);
            }
        }
    }
    let pair_of = |a: &str, b: &str| {
        pairs
            .iter()
            .position(|p| (&*p.a, &*p.b) == (a, b) || (&*p.a, &*p.b) == (b, a))
    };
    egui::ScrollArea::horizontal().show(ui, |ui| {
        egui::Grid::new("sightlines").striped(true).show(ui, |ui| {
            ui.label("");
            for (k, _) in names.iter().enumerate() {
                ui.label(RichText::new(format!("{}", k + 1)).strong());
            }
            ui.end_row();
            for (row, a) in names.iter().enumerate() {
                ui.label(format!("{} {a}", row + 1));
                for b in &names {
                    let Some(k) = (a != b).then(|| pair_of(a, b)).flatten() else {
                        ui.label("·");
                        continue;
                    };
                    let (mark, colour) = if pairs[k].sees {
                        (StateMark::Round, okabe_ito::BLUISH_GREEN)
                    } else {
                        (StateMark::Cross, okabe_ito::VERMILLION)
                    };
                    let picked = selection.hit == Some(k);
                    let blocker = pairs[k]
                        .object
                        .as_deref()
                        .map_or("sees".to_string(), |o| format!("blocked by {o}"));
                    let (rect, response) =
                        ui.allocate_exact_size(egui::vec2(22.0, 18.0), egui::Sense::click());
                    let visuals = ui.style().interact_selectable(&response, picked);
                    if picked || response.hovered() {
                        ui.painter().rect_filled(rect, 3.0, visuals.weak_bg_fill);
                    }
                    paint_shape(ui.painter(), rect.center(), 5.0, mark, color32(colour));
                    response.widget_info(|| {
                        egui::WidgetInfo::selected(
                            egui::Role::Button,
                            true,
                            picked,
                            format!("{a} – {b}: {blocker}"),
                        )
                    });
                    if response
                        .on_hover_text(format!("{a} – {b}: {blocker}"))
                        .clicked()
                    {
                        selection.hit = if picked { None } else { Some(k) };
                    }
                }
                ui.end_row();
            }
        });
    });
}
