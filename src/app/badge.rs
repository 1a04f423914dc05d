//! Verdict badges: the state's marker shape drawn in its colour, beside its word, so a verdict reads
//! without colour and without relying on a font having the symbol.

use eframe::egui;
use egui::{Color32, Pos2, Rect, Sense, Shape, Stroke, Vec2};

use crate::view::palette::{Rgb, StateMark, verdict_colour, verdict_mark, verdict_word};
use plumbline_core::check::{Summary, Verdict};

/// A palette colour, for egui.
pub fn color32([r, g, b]: Rgb) -> Color32 {
    Color32::from_rgb(r, g, b)
}

/// A palette colour with an opacity (0 see-through, 255 opaque), for egui.
pub fn color32_alpha([r, g, b]: Rgb, alpha: u8) -> Color32 {
    Color32::from_rgba_unmultiplied(r, g, b, alpha)
}

/// The colour of a verdict, for egui.
pub fn verdict_color32(verdict: Verdict) -> Color32 {
    color32(verdict_colour(verdict))
}

/// Paints a verdict's marker shape centred on `centre`, `radius` points across half its width.
pub fn paint_mark(painter: &egui::Painter, centre: Pos2, radius: f32, verdict: Verdict) {
    paint_shape(
        painter,
        centre,
        radius,
        verdict_mark(verdict),
        verdict_color32(verdict),
    );
}

/// Paints a marker shape centred on `centre`, `radius` points across half its width.
pub fn paint_shape(
    painter: &egui::Painter,
    centre: Pos2,
    radius: f32,
    mark: StateMark,
    colour: Color32,
) {
    match mark {
        StateMark::Round => {
            painter.circle_filled(centre, radius, colour);
        }
        StateMark::Square => {
            let r = radius * 0.85;
            painter.rect_filled(
                Rect::from_center_size(centre, Vec2::splat(2.0 * r)),
                1.0,
                colour,
            );
        }
        StateMark::Diamond => {
            let points = vec![
                centre + Vec2::new(0.0, -radius),
                centre + Vec2::new(radius, 0.0),
                centre + Vec2::new(0.0, radius),
                centre + Vec2::new(-radius, 0.0),
            ];
            painter.add(Shape::convex_polygon(points, colour, Stroke::NONE));
        }
        StateMark::Cross => {
            let r = radius * 0.8;
            let stroke = Stroke::new(radius * 0.6, colour);
            painter.line_segment(
                [centre + Vec2::new(-r, -r), centre + Vec2::new(r, r)],
                stroke,
            );
            painter.line_segment(
                [centre + Vec2::new(-r, r), centre + Vec2::new(r, -r)],
                stroke,
            );
        }
    }
}

/// A badge and count for each verdict, in one row: pass, FAIL, error, unchecked.
pub fn verdict_counts(ui: &mut egui::Ui, summary: &Summary) {
    for (verdict, count) in [
        (Verdict::Pass, summary.pass),
        (Verdict::Fail, summary.fail),
        (Verdict::Error, summary.error),
        (Verdict::Unchecked, summary.unchecked),
    ] {
        badge(ui, verdict, &format!(" {count}"));
        ui.add_space(6.0);
    }
}

/// A verdict's marker and word, in its colour.
pub fn badge(ui: &mut egui::Ui, verdict: Verdict, extra: &str) -> egui::Response {
    ui.horizontal(|ui| {
        ui.spacing_mut().item_spacing.x = 4.0;
        let (rect, _) = ui.allocate_exact_size(Vec2::splat(14.0), Sense::hover());
        paint_mark(ui.painter(), rect.center(), 5.5, verdict);
        ui.label(
            egui::RichText::new(format!("{}{extra}", verdict_word(verdict)))
                .color(verdict_color32(verdict))
                .strong(),
        );
    })
    .response
}
