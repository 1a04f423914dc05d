//! Unattended runs of the window: `--screenshot` writes a PNG of the whole window after the first
//! complete frame and exits; `--bench-frames N` draws N frames of each kind (overlay change, camera
//! motion, full redraw), prints their times and exits.

use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex};

use eframe::egui;

use super::Workbench;
use super::viewport::paint::{self, FrameLog};
use crate::view::renderer::FrameKind;

/// Frames drawn at least before the screenshot is asked for or the benchmark starts: the first lays
/// the panels out, the second draws the level into its cache and the overlays on top (a big level
/// then takes a few more, a part each, until [`paint::drawing_in_parts`] says it is whole).
const SETTLE_FRAMES: usize = 3;

/// Frames after which an unattended run goes on even if the view still says it is drawing in
/// parts (a driver that fails mid-way must not keep the run waiting for ever).
const MAX_SETTLE_FRAMES: usize = 120;

/// What an unattended run reports back once the window has closed.
#[derive(Clone, Default)]
pub struct Outcome(Arc<Mutex<Option<Result<(), String>>>>);

impl Outcome {
    fn set(&self, result: Result<(), String>) {
        if let Ok(mut slot) = self.0.lock() {
            *slot = Some(result);
        }
    }

    /// The run's result (success when nothing was asked of it).
    pub fn result(&self) -> Result<(), String> {
        self.0
            .lock()
            .ok()
            .and_then(|mut s| s.take())
            .unwrap_or(Ok(()))
    }
}

/// The benchmark's phases, in order.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Phase {
    Idle,
    Marks,
    Motion,
    Redraw,
}

/// Drives a screenshot or a frame benchmark, one frame at a time.
pub struct Capture {
    screenshot: Option<PathBuf>,
    bench_frames: Option<usize>,
    frame: usize,
    image: Arc<Mutex<Option<Arc<egui::ColorImage>>>>,
    requested: bool,
    done: bool,
    /// Start of the previous frame and its phase, for whole-frame times.
    previous: Option<(std::time::Instant, Phase)>,
    whole_frames: Vec<(Phase, f64)>,
    /// The frame after which the benchmark's phases start (the level drawn whole).
    settled: Option<usize>,
    /// When the camera last moved in the redraw phase, and the times from then until the full
    /// level was on screen.
    redraw_started: Option<std::time::Instant>,
    full_level_after: Vec<f64>,
    log: Arc<Mutex<FrameLog>>,
    outcome: Outcome,
}

impl Capture {
    /// A capture for the command-line options (idle when neither option is given).
    pub fn new(options: &super::WindowOptions) -> Capture {
        Capture {
            screenshot: options.screenshot.clone(),
            bench_frames: options.bench_frames,
            frame: 0,
            image: Arc::default(),
            requested: false,
            done: false,
            previous: None,
            whole_frames: Vec::new(),
            settled: None,
            redraw_started: None,
            full_level_after: Vec::new(),
            log: Arc::default(),
            outcome: Outcome::default(),
        }
    }

    /// Where the result lands.
    pub fn outcome(&self) -> Outcome {
        self.outcome.clone()
    }

    /// Called at the start of every frame.
    pub fn before_frame(&mut self, ctx: &egui::Context, workbench: &mut Workbench) {
        if self.done || (self.screenshot.is_none() && self.bench_frames.is_none()) {
            return;
        }
        self.frame += 1;
        ctx.request_repaint();
        if let Some(n) = self.bench_frames {
            self.bench_step(ctx, workbench, n);
        } else {
            self.screenshot_step(ctx, workbench);
        }
    }

    fn screenshot_step(&mut self, ctx: &egui::Context, workbench: &Workbench) {
        let Some(path) = self.screenshot.clone() else {
            return;
        };
        if self.frame >= SETTLE_FRAMES
            && !self.requested
            && !workbench.is_busy()
            && self.view_whole()
        {
            self.requested = true;
            let slot = self.image.clone();
            let wake = ctx.clone();
            ctx.request_screenshot(move |image| {
                if let Ok(mut s) = slot.lock() {
                    *s = Some(image);
                }
                wake.request_repaint();
            });
        }
        let taken = self.image.lock().ok().and_then(|mut s| s.take());
        if let Some(image) = taken {
            let result = write_png(&path, &image)
                .and_then(|()| write_marks(&path, workbench, ctx.pixels_per_point()));
            if result.is_ok() {
                println!(
                    "wrote {} ({}×{})",
                    path.display(),
                    image.size[0],
                    image.size[1]
                );
            }
            self.outcome.set(result);
            self.done = true;
            ctx.send_viewport_cmd(egui::ViewportCommand::Close);
        }
    }

    /// True once the view's level is drawn whole (or the run has waited long enough).
    fn view_whole(&self) -> bool {
        !paint::drawing_in_parts() || self.frame > MAX_SETTLE_FRAMES
    }

    fn bench_step(&mut self, ctx: &egui::Context, workbench: &mut Workbench, n: usize) {
        if self.frame == 1 {
            workbench.viewport.frame_log = Some(self.log.clone());
        }
        // Frame 1 lays out, frame 2 draws the level once (a big one over a few more frames);
        // timing starts after.
        if self.settled.is_none() && self.frame > SETTLE_FRAMES && self.view_whole() {
            self.settled = Some(self.frame);
        }
        let Some(settled) = self.settled else {
            return;
        };
        let step = self.frame - settled;
        let now = std::time::Instant::now();
        if let Some((started, phase)) = self.previous.take() {
            self.whole_frames
                .push((phase, (now - started).as_secs_f64()));
        }
        let phase = match step / n.max(1) {
            0 => Some(Phase::Idle),
            1 => Some(Phase::Marks),
            2 => Some(Phase::Motion),
            3 => Some(Phase::Redraw),
            _ => {
                self.outcome.set(Ok(()));
                self.done = true;
                println!("{}", self.report(workbench));
                ctx.send_viewport_cmd(egui::ViewportCommand::Close);
                return;
            }
        };
        let Some(phase) = phase else {
            return;
        };
        self.previous = Some((now, phase));
        let probes = workbench.document.probes.probes.len();
        match phase {
            Phase::Idle => workbench.viewport.force_moving = Some(false),
            Phase::Marks => {
                // Only the selection changes: the level must come from its cache.
                workbench.viewport.force_moving = Some(false);
                let next = if probes == 0 {
                    None
                } else {
                    Some(step % probes)
                };
                workbench.selection.probe = next;
            }
            Phase::Motion => {
                workbench.viewport.force_moving = Some(true);
                workbench.viewport.camera.orbit(0.02, 0.0);
            }
            Phase::Redraw => {
                // The camera moves once the full level of the last view is on screen; the frames
                // between draw its proxy, then its parts.
                workbench.viewport.force_moving = Some(false);
                if !paint::drawing_in_parts() {
                    if let Some(started) = self.redraw_started.take() {
                        self.full_level_after.push((now - started).as_secs_f64());
                    }
                    workbench.viewport.camera.orbit(0.02, 0.0);
                    self.redraw_started = Some(now);
                }
            }
        }
    }

    fn report(&self, workbench: &Workbench) -> String {
        let (log, [width, height]) = self
            .log
            .lock()
            .map(|l| (l.frames.clone(), l.view_size))
            .unwrap_or_default();
        let document = &workbench.document;
        let mut out = format!(
            "frame times of the {width}×{height} 3D view (paint callback to glFinish), level {} with {} triangles (proxy: {}):\n",
            document.level_path.display(),
            document.level.triangle_count(),
            workbench
                .viewport
                .drawing()
                .proxy
                .as_ref()
                .map_or("none".to_string(), |p| format!(
                    "{} triangles",
                    p.triangle_count()
                ))
        );
        for (kind, words) in [
            (
                FrameKind::MarksOnly,
                "overlay or selection change (level from its cache)",
            ),
            (
                FrameKind::Proxy,
                "level proxy drawn (camera moving or just moved)",
            ),
            (
                FrameKind::LevelPart,
                "a part of the full level drawn (the proxy on screen)",
            ),
            (
                FrameKind::Level,
                "full level drawn (whole, or its last part)",
            ),
        ] {
            let times: Vec<f64> = log
                .iter()
                .filter(|(k, _)| *k == kind)
                .map(|(_, t)| *t)
                .collect();
            out.push_str(&figures(words, "frames", times));
        }
        out.push_str("whole frames (egui, marks and the 3D view, start to start):\n");
        for (phase, words) in [
            (
                Phase::Idle,
                "nothing changes (the floor: egui and the buffer swap)",
            ),
            (Phase::Marks, "selection changes every frame"),
            (Phase::Motion, "camera orbits every frame, drawn as moving"),
            (
                Phase::Redraw,
                "camera moves, then rests until the full level is on screen",
            ),
        ] {
            let times: Vec<f64> = self
                .whole_frames
                .iter()
                .filter(|(p, _)| *p == phase)
                .map(|(_, t)| *t)
                .collect();
            out.push_str(&figures(words, "frames", times));
        }
        out.push_str(&figures(
            "from a camera move to the full level on screen",
            "moves",
            self.full_level_after.clone(),
        ));
        out
    }
}

/// One line of figures: how many `things`, median, 90th percentile and maximum, in milliseconds.
fn figures(words: &str, things: &str, mut seconds: Vec<f64>) -> String {
    if seconds.is_empty() {
        return String::new();
    }
    seconds.sort_by(f64::total_cmp);
    let at = |q: f64| seconds[((seconds.len() - 1) as f64 * q).round() as usize] * 1e3;
    format!(
        "  {words}: {} {things}, median {:.1} ms, 90th percentile {:.1} ms, max {:.1} ms\n",
        seconds.len(),
        at(0.5),
        at(0.9),
        at(1.0)
    )
}

/// The file beside a screenshot that says where each probe's marker landed in it.
pub fn marks_path(screenshot: &Path) -> PathBuf {
    screenshot.with_extension("marks.json")
}

/// Writes where the view is in the screenshot and where each drawn probe's verdict marker landed (in
/// image pixels), so a screenshot can be annotated or checked.
fn write_marks(
    screenshot: &Path,
    workbench: &Workbench,
    pixels_per_point: f32,
) -> Result<(), String> {
    use crate::view::probe_marks::start_point;
    let viewport = &workbench.viewport;
    let rect = viewport.last_rect;
    let px = |v: f32| f64::from((v * pixels_per_point).round());
    let document = &workbench.document;
    let shown = workbench.filter.shown(document);
    let probes: Vec<serde_json::Value> = shown
        .iter()
        .take(super::viewport::MAX_DRAWN_PROBES)
        .filter_map(|&i| {
            let probe = &document.probes.probes[i];
            let result = document.results.get(i);
            let at = viewport.to_screen(rect, start_point(&probe.query, result))?;
            rect.contains(at).then(|| {
                serde_json::json!({
                    "id": probe.id,
                    "verdict": document.results[i].verdict.word(),
                    "x": px(at.x),
                    "y": px(at.y),
                })
            })
        })
        .collect();
    let marks = serde_json::json!({
        "view": [px(rect.left()), px(rect.top()), px(rect.right()), px(rect.bottom())],
        "probes": probes,
    });
    let path = marks_path(screenshot);
    let text = plumbline_core::json_text::to_pretty(&marks);
    plumbline_core::atomic::write_atomic(&path, text.as_bytes())
        .map_err(|e| format!("{}: {e}", path.display()))
}

/// Writes an egui image as an 8-bit RGBA PNG, atomically.
pub fn write_png(path: &Path, image: &egui::ColorImage) -> Result<(), String> {
    let mut bytes = Vec::new();
    {
        let mut encoder = png::Encoder::new(&mut bytes, image.size[0] as u32, image.size[1] as u32);
        encoder.set_color(png::ColorType::Rgba);
        encoder.set_depth(png::BitDepth::Eight);
        let mut writer = encoder
            .write_header()
            .map_err(|e| format!("{}: cannot encode PNG: {e}", path.display()))?;
        let rgba: Vec<u8> = image
            .pixels
            .iter()
            .flat_map(|p| p.to_srgba_unmultiplied())
            .collect();
        writer
            .write_image_data(&rgba)
            .map_err(|e| format!("{}: cannot encode PNG: {e}", path.display()))?;
    }
    plumbline_core::atomic::write_atomic(path, &bytes)
        .map_err(|e| format!("{}: {e}", path.display()))
}
