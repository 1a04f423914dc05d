//! Pictures of probes for reports: the level shaded as in the workbench, framed on one probe, with
//! the probe's marks and hits, and a caption saying its id, verdict and reason. Drawn headless on
//! the CPU; the level's drawing is made once and reused for every picture; the same inputs give the
//! same bytes.

mod caption;
mod headless;

pub use headless::Headless;

use std::sync::Arc;

use glam::DVec3;
use plumbline_core::check::{ProbeResult, Verdict};
use plumbline_core::level::Level;
use plumbline_core::probe::Probe;

use crate::view::camera::{FRAME_MARGIN, OrbitCamera};
use crate::view::level_drawing::LevelDrawing;
use crate::view::marks::{Sizing, mark_surfaces};
use crate::view::palette::{verdict_colour, verdict_word};
use crate::view::probe_marks::{Emphasis, probe_marks, probe_points};
use crate::view::renderer::FrameInput;

/// Width of the view in a picture, pixels.
pub const WIDTH: u32 = 640;
/// Height of the view in a picture (the caption strip is below it), pixels.
pub const HEIGHT: u32 = 360;

/// Colour of the caption strip and its text.
const STRIP: [u8; 3] = [24, 27, 33];
const TEXT: [u8; 3] = [225, 228, 232];

/// An RGBA picture, rows from the top.
pub struct Picture {
    /// Width, pixels.
    pub width: u32,
    /// Height, pixels.
    pub height: u32,
    /// RGBA bytes.
    pub rgba: Vec<u8>,
}

impl Picture {
    /// The picture as PNG bytes (the same pixels always give the same bytes).
    pub fn to_png(&self) -> Vec<u8> {
        let mut bytes = Vec::new();
        let mut encoder = png::Encoder::new(&mut bytes, self.width, self.height);
        encoder.set_color(png::ColorType::Rgba);
        encoder.set_depth(png::BitDepth::Eight);
        let mut writer = encoder.write_header().expect("PNG header in memory");
        writer
            .write_image_data(&self.rgba)
            .expect("PNG data in memory");
        writer.finish().expect("PNG end in memory");
        bytes
    }
}

/// Draws pictures of probes on one level.
pub struct PictureMaker {
    gl: Headless,
    drawing: Arc<LevelDrawing>,
    /// Counts pictures: each one's marks are new to the renderer.
    drawn: u64,
}

impl PictureMaker {
    /// Makes the level's drawing and a headless renderer for it.
    pub fn new(level: &Level) -> Result<PictureMaker, String> {
        Ok(PictureMaker {
            gl: Headless::new()?,
            drawing: Arc::new(LevelDrawing::new(level)),
            drawn: 0,
        })
    }

    /// A picture of `probe` with `result`, captioned `title` over the verdict and reason.
    pub fn picture(
        &mut self,
        probe: &Probe,
        result: &ProbeResult,
        title: &str,
    ) -> Result<Picture, String> {
        let up = self.drawing.up;
        let camera = framing(&self.drawing, &probe_points(probe, Some(result), up));
        let mut marks = Vec::new();
        let emphasis = Emphasis {
            selected: true,
            ..Emphasis::default()
        };
        probe_marks(probe, result, emphasis, up, &mut marks);
        let sizing = Sizing {
            camera,
            viewport_height: HEIGHT as f64,
            origin: self.drawing.origin,
        };
        self.drawn += 1;
        let frame = FrameInput {
            camera,
            level: self.drawing.clone(),
            level_revision: 1,
            marks: Arc::new(mark_surfaces(&marks, &sizing)),
            marks_revision: self.drawn,
            moving: false,
        };
        let mut rgba = self.gl.renderer.render_image(WIDTH, HEIGHT, &frame)?;
        let verdict = format!(
            "{}  {}",
            verdict_word(result.verdict).to_uppercase(),
            result.reason
        );
        let colour = match result.verdict {
            Verdict::Pass | Verdict::Unchecked => TEXT,
            other => verdict_colour(other),
        };
        let (strip_height, strip) =
            caption::caption(WIDTH, STRIP, &[(title, TEXT), (&verdict, colour)]);
        rgba.extend(strip);
        Ok(Picture {
            width: WIDTH,
            height: HEIGHT + strip_height,
            rgba,
        })
    }
}

/// The camera of a picture: the workbench's opening view of the level, turned to frame `points`
/// with a metre and a half around them, as selecting a probe in the window does.
fn framing(drawing: &LevelDrawing, points: &[DVec3]) -> OrbitCamera {
    let mut camera = OrbitCamera::framing(drawing.min, drawing.max, drawing.up);
    let aspect = WIDTH as f64 / HEIGHT as f64;
    if let Some(first) = points.first() {
        let (lo, hi) = points
            .iter()
            .fold((*first, *first), |(lo, hi), p| (lo.min(*p), hi.max(*p)));
        let pad = DVec3::splat(1.5);
        camera.frame(lo - pad, hi + pad, FRAME_MARGIN, aspect);
    }
    camera
}
