//! The legend: every kind of mark the view draws, each beside a sample of itself, in the top-right
//! corner of the view (View > Legend, K).

use eframe::egui;
use egui::{Align2, FontId, Pos2, Rect, Stroke, Vec2};

use super::super::badge::{color32, color32_alpha, paint_mark, paint_shape};
use super::overlays::paint_number;
use crate::view::palette::{
    BACKING, HANDLE, HIT, NORMAL, SELECTED, StateMark, VOLUME, okabe_ito, tag_tone, verdict_colour,
    verdict_word,
};
use plumbline_core::check::Verdict;

/// Height of one line of the legend, points.
const ROW: f32 = 20.0;
/// Width of the column of samples, points.
const SAMPLE: f32 = 34.0;
/// Width of the legend, points.
const WIDTH: f32 = 262.0;
/// Space around the legend's contents and from the view's edge, points.
const MARGIN: f32 = 10.0;

/// One sample of a mark.
#[derive(Clone, Copy)]
enum Sample {
    /// The four verdict markers side by side.
    Verdicts,
    /// A line, solid or dashed, in a colour.
    Line { colour: [u8; 3], dashed: bool },
    /// A line with a dark halo under it.
    Halo,
    /// A marker shape in a colour.
    Shape(StateMark, [u8; 3]),
    /// An arrow.
    Arrow,
    /// A see-through shape.
    Ghost,
    /// A see-through volume.
    Volume,
    /// A number in a disc.
    Number,
}

/// The legend's rows: a sample and what it means.
const ROWS: [(Sample, &str); 15] = [
    (Sample::Verdicts, ""),
    (
        Sample::Line {
            colour: okabe_ito::BLUISH_GREEN,
            dashed: false,
        },
        "probe, up to its first hit",
    ),
    (
        Sample::Line {
            colour: okabe_ito::BLUISH_GREEN,
            dashed: true,
        },
        "the rest, beyond the first hit",
    ),
    (Sample::Halo, "the selected probe"),
    (Sample::Shape(StateMark::Round, HIT), "hit"),
    (Sample::Number, "hit number, as in the table"),
    (Sample::Arrow, "surface normal at a hit"),
    (Sample::Ghost, "swept shape where it meets"),
    (
        Sample::Shape(StateMark::Diamond, SELECTED),
        "least clearance; coverage spot",
    ),
    (
        Sample::Shape(StateMark::Square, HANDLE),
        "handle: drag to move",
    ),
    (
        Sample::Shape(StateMark::Round, okabe_ito::BLUISH_GREEN),
        "coverage: seen from a spot",
    ),
    (
        Sample::Shape(StateMark::Square, okabe_ito::VERMILLION),
        "coverage: seen from no spot",
    ),
    (Sample::Volume, "volume: blocks nothing"),
    (Sample::Shape(StateMark::Diamond, VOLUME), "enters a volume"),
    (Sample::Shape(StateMark::Square, VOLUME), "leaves a volume"),
];

/// Where the legend is drawn: the top-right corner of the view `rect`.
pub(super) fn legend_frame(rect: Rect) -> Rect {
    let height = ROWS.len() as f32 * ROW + 2.0 * MARGIN;
    Rect::from_min_size(
        Pos2::new(rect.right() - WIDTH - MARGIN, rect.top() + MARGIN),
        Vec2::new(WIDTH, height),
    )
}

/// Paints the legend in the top-right corner of `rect`.
pub(super) fn paint_legend(ui: &egui::Ui, rect: Rect) {
    let painter = ui.painter().with_clip_rect(rect);
    let frame = legend_frame(rect);
    painter.rect_filled(frame, 4.0, color32_alpha(BACKING, 230));
    let font = FontId::proportional(12.5);
    for (k, (sample, words)) in ROWS.iter().enumerate() {
        let top = frame.top() + MARGIN + k as f32 * ROW;
        let centre = Pos2::new(frame.left() + MARGIN + SAMPLE * 0.5, top + ROW * 0.5);
        paint_sample(&painter, *sample, centre);
        if let Sample::Verdicts = sample {
            // The four verdicts name themselves beside their markers.
            for (i, verdict) in VERDICTS.iter().enumerate() {
                let at = verdict_place(frame, top, i);
                paint_mark(&painter, at, 5.5, *verdict);
                painter.text(
                    at + Vec2::new(9.0, 0.0),
                    Align2::LEFT_CENTER,
                    verdict_word(*verdict),
                    font.clone(),
                    color32(verdict_colour(*verdict)),
                );
            }
            continue;
        }
        painter.text(
            Pos2::new(frame.left() + MARGIN + SAMPLE + 8.0, top + ROW * 0.5),
            Align2::LEFT_CENTER,
            *words,
            font.clone(),
            egui::Color32::WHITE,
        );
    }
}

const VERDICTS: [Verdict; 4] = [
    Verdict::Pass,
    Verdict::Fail,
    Verdict::Unchecked,
    Verdict::Error,
];

/// Where the `i`th verdict's marker goes on the first row.
fn verdict_place(frame: Rect, top: f32, i: usize) -> Pos2 {
    let widths = [0.0, 48.0, 100.0, 186.0];
    Pos2::new(frame.left() + MARGIN + 6.0 + widths[i], top + ROW * 0.5)
}

fn paint_sample(painter: &egui::Painter, sample: Sample, centre: Pos2) {
    let half = SAMPLE * 0.45;
    let (left, right) = (centre - Vec2::new(half, 0.0), centre + Vec2::new(half, 0.0));
    match sample {
        Sample::Verdicts => {}
        Sample::Line { colour, dashed } => {
            if dashed {
                painter.extend(egui::Shape::dashed_line(
                    &[left, right],
                    Stroke::new(2.0, color32(colour)),
                    5.0,
                    4.0,
                ));
            } else {
                painter.line_segment([left, right], Stroke::new(3.0, color32(colour)));
            }
        }
        Sample::Halo => {
            // On a patch of ground tone, as the halo shows against the level.
            painter.rect_filled(
                Rect::from_center_size(centre, Vec2::new(SAMPLE, ROW - 4.0)),
                2.0,
                color32(tag_tone(&["ground".to_string()])),
            );
            painter.line_segment([left, right], Stroke::new(9.0, color32(BACKING)));
            painter.line_segment(
                [left, right],
                Stroke::new(5.0, color32(okabe_ito::BLUISH_GREEN)),
            );
        }
        Sample::Shape(mark, colour) => paint_shape(painter, centre, 5.5, mark, color32(colour)),
        Sample::Arrow => {
            let tip = right;
            painter.line_segment([left, tip], Stroke::new(2.5, color32(NORMAL)));
            painter.add(egui::Shape::convex_polygon(
                vec![
                    tip + Vec2::new(2.0, 0.0),
                    tip - Vec2::new(7.0, 5.0),
                    tip - Vec2::new(7.0, -5.0),
                ],
                color32(NORMAL),
                Stroke::NONE,
            ));
        }
        Sample::Ghost => {
            painter.circle_filled(centre, 8.0, color32_alpha(HIT, 110));
        }
        Sample::Volume => {
            let patch = Rect::from_center_size(centre, Vec2::new(SAMPLE * 0.8, ROW - 6.0));
            painter.rect_filled(patch, 2.0, color32_alpha(VOLUME, 110));
        }
        Sample::Number => paint_number(painter, centre, 1, color32(HIT)),
    }
}
