//! The 3D view's paint callback: egui hands it the GL context, and the three-d renderer (kept on the UI
//! thread: three-d objects are not `Send`) draws the level and the marks into the view's rectangle.

use std::cell::RefCell;
use std::sync::{Arc, Mutex};
use std::time::Instant;

use eframe::{egui, egui_glow};

use crate::view::renderer::{FrameInput, FrameKind, Pace, Renderer, Target};

thread_local! {
    /// The GPU scene. three-d objects are not `Send`, and the paint callback runs on the UI thread.
    static RENDERER: RefCell<Option<Renderer>> = const { RefCell::new(None) };
}

/// How the last frames were drawn, for `--bench-frames`.
#[derive(Debug, Default)]
pub struct FrameLog {
    /// (kind, seconds spent in the paint callback, finished with `glFinish`) per frame.
    pub frames: Vec<(FrameKind, f64)>,
    /// The 3D view's size in pixels.
    pub view_size: [u32; 2],
}

/// True while the 3D view is drawing the full level a part per frame (its image is not final yet).
pub fn drawing_in_parts() -> bool {
    RENDERER.with(|cell| {
        cell.borrow()
            .as_ref()
            .is_some_and(Renderer::drawing_in_parts)
    })
}

/// The paint callback that draws `frame` into `rect`, asking `ctx` for the next frame while the
/// level is drawn in parts; with a `log`, every frame's draw time is recorded (the drawing is then
/// finished with `glFinish` to be timed).
pub fn level_and_marks(
    ctx: egui::Context,
    rect: egui::Rect,
    frame: FrameInput,
    log: Option<Arc<Mutex<FrameLog>>>,
) -> egui::PaintCallback {
    let callback = egui_glow::CallbackFn::new(move |info, painter| {
        let pixels = info.viewport_in_pixels();
        let viewport = three_d::Viewport {
            x: pixels.left_px,
            y: pixels.from_bottom_px,
            width: pixels.width_px.max(1) as u32,
            height: pixels.height_px.max(1) as u32,
        };
        let mut started = Instant::now();
        RENDERER.with(|cell| {
            let mut slot = cell.borrow_mut();
            if slot.is_none() {
                match three_d::Context::from_gl_context(painter.gl().clone()) {
                    Ok(context) => *slot = Some(Renderer::new(context)),
                    Err(e) => eprintln!("plumbline: cannot draw the 3D view: {e}"),
                }
            }
            if let Some(renderer) = slot.as_mut() {
                if log.is_some() {
                    // Time the view alone: let the window's earlier drawing finish first.
                    renderer.finish();
                    started = Instant::now();
                }
                let [w, h] = info.screen_size_px;
                let target = Target::Window {
                    width: w,
                    height: h,
                };
                let kind = match renderer.render(target, viewport, &frame, Pace::PartPerFrame) {
                    Ok(kind) => kind,
                    Err(e) => {
                        eprintln!("plumbline: cannot draw the 3D view: {e}");
                        return;
                    }
                };
                if renderer.drawing_in_parts() {
                    ctx.request_repaint();
                }
                if let Some(log) = &log {
                    renderer.finish();
                    if let Ok(mut log) = log.lock() {
                        log.frames.push((kind, started.elapsed().as_secs_f64()));
                        log.view_size = [viewport.width, viewport.height];
                    }
                }
            }
        });
    });
    egui::PaintCallback {
        rect,
        callback: Arc::new(callback),
    }
}
