//! The inspector's view of the whole-level kinds' answers: a rest's support and gap, the sightline
//! matrix (click a cell: that sightline is marked in the view), and a coverage's share and areas.

use eframe::egui;
use egui::RichText;

use super::Selection;
use super::badge::color32;
use crate::view::palette::okabe_ito;
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
                    ui.label(c.spots.join(", "));
                    ui.end_row();
                });
                ui.label(
                    RichText::new("In the view: ● seen (bluish green), ■ not seen (vermillion).")
                        .weak(),
                );
            }
        }
        _ => {}
    }
}

/// Which spots see which, as a table: ● sees, ✕ blocked; a click marks that sightline.
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
                    let sees = pairs[k].sees;
                    let (mark, colour) = if sees {
                        ("●", okabe_ito::BLUISH_GREEN)
                    } else {
                        ("✕", okabe_ito::VERMILLION)
                    };
                    let picked = selection.hit == Some(k);
                    let text = RichText::new(mark).color(color32(colour));
                    let blocker = pairs[k]
                        .object
                        .as_deref()
                        .map_or("clear".to_string(), |o| format!("blocked by {o}"));
                    if ui
                        .selectable_label(picked, text)
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
