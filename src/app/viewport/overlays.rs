//! What egui paints over the 3D view: labels beside failing, changed and selected probes (stepping
//! aside so none covers another, left out in a crowd with a note of how many; faint while another
//! probe is selected), the selected probe's hit numbers, the axis marker, and the note under the
//! pointer.

use std::collections::HashMap;

use eframe::egui;
use egui::{Align2, FontId, Pos2, Rect, Stroke, Vec2};
use glam::DVec3;

use super::super::Selection;
use super::super::badge::{color32, color32_alpha, paint_mark, verdict_color32};
use super::super::document::Document;
use super::label_places::{LabelPlaces, frame_at};
use super::legend::legend_frame;
use super::{Hover, MAX_DRAWN_PROBES, Viewport};
use crate::view::palette::{BACKING, HIT, SELECTED, okabe_ito, verdict_word};
use crate::view::probe_marks::{hit_points, start_point};
use plumbline_core::check::{Aspect, Verdict};

/// How far up and right of its hit a hit's number sits, points.
const HIT_NUMBER_OFFSET: f32 = 14.0;
/// Radius of the disc behind a hit's number, points.
const HIT_NUMBER_RADIUS: f32 = 8.5;
/// How far the note of labels left out sits from the view's top left corner, points.
const NOTE_MARGIN: f32 = 10.0;
/// The margin inside the note's box, points.
const NOTE_PAD: f32 = 5.0;

impl Viewport {
    /// Names beside failing probes and the selected one, so the answer is readable at a glance.
    pub(super) fn paint_labels(
        &self,
        ui: &egui::Ui,
        document: &Document,
        shown: &[usize],
        selection: &Selection,
        changes: &HashMap<String, Vec<Aspect>>,
        rect: Rect,
    ) {
        let painter = ui.painter().with_clip_rect(rect);
        let font = FontId::proportional(13.0);
        let dimmed = self.dim_others && selection.probe.is_some();
        // Every drawn marker (a label goes where it covers none, when there is such a place), and
        // the labels wanted: each marker placed on screen once.
        let mut markers = Vec::new();
        let mut wanted = Vec::new();
        for &i in shown.iter().take(MAX_DRAWN_PROBES) {
            let Some(probe) = document.probes.probes.get(i) else {
                continue;
            };
            let result = document.results.get(i);
            let Some(at) = self.to_screen(rect, start_point(&probe.query, result)) else {
                continue;
            };
            markers.push(at);
            let Some(result) = result else {
                continue;
            };
            let selected = selection.probe == Some(i);
            let changed = changes.contains_key(&*probe.id);
            let labelled =
                selected || changed || matches!(result.verdict, Verdict::Fail | Verdict::Error);
            // A probe whose marker is out of the view has no label there.
            if !labelled || !rect.contains(at) {
                continue;
            }
            let text = if changed {
                format!("{}  {}  · changed", verdict_word(result.verdict), probe.id)
            } else {
                format!("{}  {}", verdict_word(result.verdict), probe.id)
            };
            wanted.push((at, text, result.verdict, selected));
        }
        if wanted.is_empty() {
            return;
        }
        // The top left corner is kept for saying how many labels a crowd left out.
        let note = |count: usize| {
            let labels = if count == 1 { "label" } else { "labels" };
            let text = format!(
                "{count} {labels} left out in the crowd: zoom in, or pick a probe from the list"
            );
            painter.layout_no_wrap(text, FontId::proportional(12.0), egui::Color32::WHITE)
        };
        let note_at = rect.left_top() + Vec2::new(NOTE_MARGIN, NOTE_MARGIN);
        let mut reserved =
            vec![Rect::from_min_size(note_at, note(wanted.len()).size()).expand(NOTE_PAD)];
        if self.legend {
            reserved.push(legend_frame(rect));
        }
        let mut places = LabelPlaces::new(rect, markers, &reserved);
        let mut left_out = 0;
        for (at, text, verdict, selected) in wanted {
            let galley = painter.layout_no_wrap(text, font.clone(), egui::Color32::WHITE);
            let Some(pos) = places.place(at, galley.size(), selected) else {
                left_out += 1;
                continue;
            };
            let frame = frame_at(pos, galley.size());
            // While another probe is selected, this label steps back with its probe.
            let alpha = if dimmed && !selected { 0.45 } else { 1.0 };
            let mut painter = painter.clone();
            painter.multiply_opacity(alpha);
            if !frame.expand(24.0).contains(at) {
                let end = Pos2::new(
                    at.x.clamp(frame.left(), frame.right()),
                    at.y.clamp(frame.top(), frame.bottom()),
                );
                painter.line_segment([at, end], Stroke::new(1.0, verdict_color32(verdict)));
            }
            painter.rect_filled(frame, 3.0, color32_alpha(BACKING, 225));
            painter.rect_stroke(
                frame,
                3.0,
                Stroke::new(if selected { 2.0 } else { 1.0 }, verdict_color32(verdict)),
                egui::StrokeKind::Outside,
            );
            paint_mark(
                &painter,
                pos + Vec2::new(-8.0, galley.size().y * 0.5),
                5.0,
                verdict,
            );
            painter.galley(pos, galley, egui::Color32::WHITE);
        }
        if left_out > 0 {
            let galley = note(left_out);
            let frame = Rect::from_min_size(note_at, galley.size()).expand(NOTE_PAD);
            painter.rect_filled(frame, 3.0, color32_alpha(BACKING, 225));
            painter.galley(note_at, galley, egui::Color32::WHITE);
        }
    }

    /// The selected probe's hits numbered as in the inspector's table, each number in a small dark
    /// disc up and to the right of its hit.
    pub(super) fn paint_hit_numbers(
        &self,
        ui: &egui::Ui,
        document: &Document,
        selection: &Selection,
        rect: Rect,
    ) {
        let Some(result) = selection.probe.and_then(|i| document.results.get(i)) else {
            return;
        };
        let painter = ui.painter().with_clip_rect(rect);
        let mut placed = Vec::new();
        for (i, point) in hit_points(&result.hits).into_iter().enumerate() {
            let Some(at) = self.to_screen(rect, point) else {
                continue;
            };
            let picked = selection.hit == Some(i);
            // Hits close together on screen get their numbers stacked upwards, none covering another.
            let mut centre = at + Vec2::new(HIT_NUMBER_OFFSET, -HIT_NUMBER_OFFSET);
            while placed
                .iter()
                .any(|p: &Pos2| p.distance(centre) < 2.0 * HIT_NUMBER_RADIUS + 2.0)
            {
                centre.y -= 2.0 * HIT_NUMBER_RADIUS + 3.0;
            }
            placed.push(centre);
            let colour = if picked {
                color32(SELECTED)
            } else {
                color32(HIT)
            };
            painter.line_segment([at, centre], Stroke::new(1.0, colour));
            paint_number(&painter, centre, i + 1, colour);
        }
    }

    /// A small axis marker in the bottom-left corner; the level's up axis is drawn thicker.
    pub(super) fn paint_axes(&self, ui: &egui::Ui, rect: Rect) {
        let painter = ui.painter().with_clip_rect(rect);
        let centre = Pos2::new(rect.left() + 42.0, rect.bottom() - 42.0);
        let right = self.camera.right();
        let screen_up = self.camera.screen_up();
        let axes = [
            ("X", DVec3::X, okabe_ito::VERMILLION),
            ("Y", DVec3::Y, okabe_ito::BLUISH_GREEN),
            ("Z", DVec3::Z, okabe_ito::SKY_BLUE),
        ];
        painter.circle_filled(centre, 36.0, color32_alpha(BACKING, 170));
        for (name, axis, rgb) in axes {
            let d = Vec2::new(axis.dot(right) as f32, -axis.dot(screen_up) as f32) * 26.0;
            let is_up = axis.dot(self.camera.up).abs() > 0.99;
            let colour = color32(rgb);
            painter.line_segment(
                [centre, centre + d],
                Stroke::new(if is_up { 3.5 } else { 2.0 }, colour),
            );
            let label = if is_up {
                format!("{name} up")
            } else {
                name.to_string()
            };
            painter.text(
                centre + d * 1.25,
                Align2::CENTER_CENTER,
                label,
                FontId::proportional(11.0),
                colour,
            );
        }
    }
}

/// A hit's number in a small dark disc ringed in `ring`.
pub(super) fn paint_number(
    painter: &egui::Painter,
    centre: Pos2,
    number: usize,
    ring: egui::Color32,
) {
    painter.circle(
        centre,
        HIT_NUMBER_RADIUS,
        color32_alpha(BACKING, 235),
        Stroke::new(1.5, ring),
    );
    painter.text(
        centre,
        Align2::CENTER_CENTER,
        number.to_string(),
        FontId::proportional(12.0),
        egui::Color32::WHITE,
    );
}

pub(super) fn paint_hover(ui: &egui::Ui, rect: Rect, pointer: Option<Pos2>, hover: &Hover) {
    let Some(pointer) = pointer else {
        return;
    };
    let tags = if hover.tags.is_empty() {
        "no tags".to_string()
    } else {
        hover.tags.join(", ")
    };
    let triangle = hover
        .triangle
        .map_or(String::new(), |t| format!("\ntriangle {t}"));
    let text = format!(
        "{}\n{tags}{triangle}\n{:.2} m from the eye",
        hover.object, hover.distance
    );
    let painter = ui.painter().with_clip_rect(rect);
    let galley = painter.layout_no_wrap(text, FontId::proportional(12.5), egui::Color32::WHITE);
    let mut pos = pointer + Vec2::new(16.0, 16.0);
    if pos.x + galley.size().x > rect.right() - 8.0 {
        pos.x = pointer.x - galley.size().x - 16.0;
    }
    if pos.y + galley.size().y > rect.bottom() - 8.0 {
        pos.y = pointer.y - galley.size().y - 16.0;
    }
    let frame = Rect::from_min_size(pos, galley.size()).expand(6.0);
    painter.rect_filled(frame, 4.0, color32_alpha(BACKING, 235));
    painter.galley(pos, galley, egui::Color32::WHITE);
}
