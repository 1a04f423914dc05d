//! The caption strip under a picture: lines of text drawn with the workbench's own font.

use ab_glyph::{Font, FontRef, PxScale, ScaleFont, point};

/// Height of one caption line, pixels.
const LINE: u32 = 20;
/// Text size, pixels.
const SIZE: f32 = 15.0;
/// Left and top margin, pixels.
const MARGIN: u32 = 8;

/// A strip of `width` pixels holding `lines` (text and colour), RGBA rows from the top; a line too
/// long for the width ends in an ellipsis.
pub fn caption(width: u32, background: [u8; 3], lines: &[(&str, [u8; 3])]) -> (u32, Vec<u8>) {
    let height = 2 * MARGIN + LINE * lines.len() as u32;
    let mut pixels: Vec<u8> = (0..width * height)
        .flat_map(|_| [background[0], background[1], background[2], 255])
        .collect();
    let font = FontRef::try_from_slice(epaint_default_fonts::UBUNTU_LIGHT).expect("egui's font");
    let scaled = font.as_scaled(PxScale::from(SIZE));
    for (row, (text, colour)) in lines.iter().enumerate() {
        let baseline = (MARGIN + LINE * row as u32) as f32 + scaled.ascent() + 2.0;
        let mut x = MARGIN as f32;
        let limit = (width - MARGIN) as f32 - 3.0 * scaled.h_advance(font.glyph_id('.'));
        let mut chars = text.chars().peekable();
        let mut cut = false;
        while let Some(c) = chars.next() {
            let advance = scaled.h_advance(font.glyph_id(c));
            if x + advance > limit && chars.peek().is_some() {
                cut = true;
                break;
            }
            draw_glyph(&font, c, x, baseline, *colour, width, height, &mut pixels);
            x += advance;
        }
        if cut {
            for _ in 0..3 {
                draw_glyph(&font, '.', x, baseline, *colour, width, height, &mut pixels);
                x += scaled.h_advance(font.glyph_id('.'));
            }
        }
    }
    (height, pixels)
}

/// Blends one glyph's coverage into the strip.
#[allow(clippy::too_many_arguments)]
fn draw_glyph(
    font: &FontRef,
    c: char,
    x: f32,
    baseline: f32,
    colour: [u8; 3],
    width: u32,
    height: u32,
    pixels: &mut [u8],
) {
    let glyph = font
        .glyph_id(c)
        .with_scale_and_position(PxScale::from(SIZE), point(x, baseline));
    let Some(outline) = font.outline_glyph(glyph) else {
        return;
    };
    let bounds = outline.px_bounds();
    outline.draw(|gx, gy, coverage| {
        let (px, py) = (
            bounds.min.x as i64 + gx as i64,
            bounds.min.y as i64 + gy as i64,
        );
        if px < 0 || py < 0 || px >= width as i64 || py >= height as i64 {
            return;
        }
        let i = (py as usize * width as usize + px as usize) * 4;
        for k in 0..3 {
            let under = pixels[i + k] as f32;
            pixels[i + k] = (under + (colour[k] as f32 - under) * coverage.min(1.0)).round() as u8;
        }
    });
}
