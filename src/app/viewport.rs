//! The 3D viewport panel: camera controls, hover picking with the query core, clicking probes, and the
//! three-d paint callback with labels and an axis marker painted over it by egui.

use std::cell::RefCell;
use std::collections::HashMap;
use std::sync::{Arc, Mutex};
use std::time::Instant;

use eframe::{egui, egui_glow};
use egui::{Align2, Color32, FontId, Pos2, Rect, Sense, Stroke, Vec2};
use glam::{DVec2, DVec3};

use super::Selection;
use super::badge::{paint_mark, verdict_color32};
use super::document::Document;
use super::tools::{Authoring, DragMode, Lift, Tool, drag_along_axis, drag_in_view_plane};
use crate::view::palette::{StateMark, okabe_ito, verdict_word};
use crate::view::probe_marks::{probe_points, start_point};
use crate::view::renderer::FrameKind;
use crate::view::{
    Emphasis, FrameInput, LevelDrawing, Mark, MarkSurfaces, OrbitCamera, Renderer, Sizing, Target,
    mark_surfaces, probe_marks,
};
use plumbline_core::check::{Aspect, Hits, Verdict};

/// At most this many probes are drawn at once (the list filter picks which).
pub const MAX_DRAWN_PROBES: usize = 600;

/// Handles of the selected probe and points being placed.
const HANDLE: [u8; 3] = [245, 245, 245];

/// Pixels within which a click picks a probe's marker.
const CLICK_REACH: f32 = 14.0;

thread_local! {
    /// The GPU scene. three-d objects are not `Send`, and the paint callback runs on the UI thread.
    static RENDERER: RefCell<Option<Renderer>> = const { RefCell::new(None) };
}

/// What is under the mouse pointer.
#[derive(Debug, Clone, PartialEq)]
pub struct Hover {
    /// Object name.
    pub object: String,
    /// Its tags.
    pub tags: Vec<String>,
    /// Triangle index in the object's mesh (meshes only).
    pub triangle: Option<u32>,
    /// The point under the pointer.
    pub point: DVec3,
    /// The surface normal there, facing the eye.
    pub normal: DVec3,
    /// Metres from the eye.
    pub distance: f64,
}

/// How the last frames were drawn, for `--bench-frames`.
#[derive(Debug, Default)]
pub struct FrameLog {
    /// (kind, seconds spent in the paint callback, finished with `glFinish`) per frame.
    pub frames: Vec<(FrameKind, f64)>,
    /// The 3D view's size in pixels.
    pub view_size: [u32; 2],
}

/// What the view shows this frame.
#[derive(Clone, Copy)]
pub struct Scene<'a> {
    /// What is open.
    pub document: &'a Document,
    /// Changes whenever any answer changed.
    pub results_revision: u64,
    /// The probes the list shows (these are drawn).
    pub shown: &'a [usize],
    /// What is selected.
    pub selection: &'a Selection,
    /// The tool in hand.
    pub authoring: &'a Authoring,
    /// What changed per probe id at the last level reload.
    pub changes: &'a HashMap<String, Vec<Aspect>>,
}

/// What the user did in the view this frame, for the workbench to act on.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ViewEvents {
    /// A click with the select tool: the probe under it, or none.
    pub clicked_probe: Option<Option<usize>>,
    /// The modifier keys held at that click (Ctrl or Shift add to the selection).
    pub modifiers: egui::Modifiers,
    /// A click while placing: the picked surface point, lifted.
    pub placed: Option<DVec3>,
    /// A double click while placing: end the path.
    pub finish: bool,
    /// A handle of the selected probe was dragged: its point index and new position.
    pub moved: Option<(usize, DVec3)>,
}

/// The viewport's state.
pub struct Viewport {
    /// The camera.
    pub camera: OrbitCamera,
    /// Fly mode: drag turns the view about the eye and W/A/S/D/Q/E move.
    pub fly: bool,
    drawing: Arc<LevelDrawing>,
    level_revision: u64,
    marks: Arc<MarkSurfaces>,
    marks_revision: u64,
    marks_key: Option<MarksKey>,
    /// What is under the pointer.
    pub hover: Option<Hover>,
    last_camera: OrbitCamera,
    /// When set, every frame's draw time is recorded (with a `glFinish`).
    pub frame_log: Option<Arc<Mutex<FrameLog>>>,
    /// The handle being dragged: index into the selected probe's points.
    dragging: Option<usize>,
    /// How high the dragged handle was above the level when the drag began (kept when it slides over
    /// surfaces).
    drag_height: f64,
    /// The opening view, framed before the view's shape was known; framed again on the first frame
    /// unless something moved the camera meanwhile.
    opening: Option<OrbitCamera>,
    /// Where the view was on screen in the last frame, in points.
    pub last_rect: Rect,
    /// Draw as if the camera were moving (`Some(true)`) or resting (`Some(false)`) whatever it does
    /// (for the frame benchmark).
    pub force_moving: Option<bool>,
}

#[derive(Clone, PartialEq)]
struct MarksKey {
    camera: OrbitCamera,
    height: u32,
    selection: Selection,
    hover_triangle: Option<[DVec3; 3]>,
    preview: Vec<DVec3>,
    results_revision: u64,
    shown: Vec<usize>,
}

impl Viewport {
    /// A viewport framing the document's level.
    pub fn new(document: &Document) -> Viewport {
        let drawing = Arc::new(LevelDrawing::new(&document.level));
        let camera = OrbitCamera::framing(drawing.min, drawing.max, drawing.up);
        Viewport {
            camera,
            fly: false,
            drawing,
            level_revision: 1,
            marks: Arc::new(MarkSurfaces::default()),
            marks_revision: 0,
            marks_key: None,
            hover: None,
            last_camera: camera,
            frame_log: None,
            force_moving: None,
            last_rect: Rect::NOTHING,
            dragging: None,
            drag_height: 0.0,
            opening: Some(camera),
        }
    }

    /// Draws the document's level anew (after a reload), keeping the camera.
    pub fn set_level(&mut self, document: &Document) {
        self.drawing = Arc::new(LevelDrawing::new(&document.level));
        self.level_revision += 1;
        self.marks_key = None;
    }

    /// The level as drawn.
    pub fn drawing(&self) -> &LevelDrawing {
        &self.drawing
    }

    /// Width over height of the view as last drawn (1 before the first frame).
    fn aspect(&self) -> f64 {
        let size = self.last_rect.size();
        if size.x > 0.0 && size.y > 0.0 {
            (size.x / size.y) as f64
        } else {
            1.0
        }
    }

    /// Frames the whole level.
    pub fn frame_level(&mut self) {
        let aspect = self.aspect();
        self.camera
            .frame(self.drawing.min, self.drawing.max, 0.8, aspect);
    }

    /// Frames a set of points (a probe and its answer), keeping the heading.
    pub fn frame_points(&mut self, points: &[DVec3]) {
        let Some(first) = points.first() else {
            return;
        };
        let (lo, hi) = points
            .iter()
            .fold((*first, *first), |(lo, hi), p| (lo.min(*p), hi.max(*p)));
        let pad = DVec3::splat(1.5);
        let aspect = self.aspect();
        self.camera.frame(lo - pad, hi + pad, 1.15, aspect);
    }

    /// Shows the viewport in `ui`.
    pub fn ui(&mut self, ui: &mut egui::Ui, scene: &Scene) -> ViewEvents {
        let Scene {
            document,
            results_revision,
            shown,
            selection,
            authoring,
            changes,
        } = *scene;
        let (rect, response) = ui.allocate_exact_size(ui.available_size(), Sense::click_and_drag());
        self.last_rect = rect;
        if self.opening.take() == Some(self.camera) {
            self.frame_level();
            self.last_camera = self.camera;
        }
        let size = DVec2::new(rect.width() as f64, rect.height() as f64);
        let mut events = ViewEvents::default();
        let handles = match (authoring.tool, selection.single()) {
            (Tool::Select, Some(i)) => document.probes.probes.get(i).map(|p| p.query.points()),
            _ => None,
        }
        .unwrap_or_default();
        self.drag_handle(
            ui,
            document,
            &response,
            rect,
            &handles,
            authoring,
            &mut events,
        );
        if self.dragging.is_none() {
            self.handle_camera_input(ui, &response, size);
        }
        let moving = self.force_moving.unwrap_or_else(|| {
            self.camera != self.last_camera
                || (response.dragged() && self.dragging.is_none())
                || ui.input(|i| i.smooth_scroll_delta != Vec2::ZERO)
        });
        if self.camera != self.last_camera {
            // One more frame once the camera rests, to replace the proxy with the full level.
            ui.ctx().request_repaint();
        }
        self.last_camera = self.camera;

        let pointer = response.hover_pos().filter(|_| !response.dragged());
        self.hover = pointer.and_then(|p| self.pick(document, rect, p));
        let lifted = |hover: &Hover| {
            authoring
                .lift
                .apply(hover.point, hover.normal, document.world.up())
        };
        if response.double_clicked() && authoring.tool != Tool::Select {
            events.finish = true;
        } else if response.clicked()
            && let Some(p) = response.interact_pointer_pos()
        {
            events.modifiers = ui.input(|i| i.modifiers);
            if authoring.tool == Tool::Select {
                events.clicked_probe = Some(self.probe_at(document, shown, rect, p));
            } else if let Some(hover) = self.pick(document, rect, p) {
                events.placed = Some(lifted(&hover));
            }
        }
        let mut preview = authoring.placed.clone();
        if authoring.tool != Tool::Select
            && let Some(hover) = &self.hover
        {
            preview.push(lifted(hover));
        }
        if authoring.tool != Tool::Select {
            ui.ctx().set_cursor_icon(egui::CursorIcon::Crosshair);
        }

        self.update_marks(
            document,
            results_revision,
            shown,
            selection,
            &handles,
            preview,
            rect,
        );
        let frame = FrameInput {
            camera: self.camera,
            level: self.drawing.clone(),
            level_revision: self.level_revision,
            marks: self.marks.clone(),
            marks_revision: self.marks_revision,
            moving,
        };
        let log = self.frame_log.clone();
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
                    let kind = match renderer.render(target, viewport, &frame) {
                        Ok(kind) => kind,
                        Err(e) => {
                            eprintln!("plumbline: cannot draw the 3D view: {e}");
                            return;
                        }
                    };
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
        ui.painter().add(egui::PaintCallback {
            rect,
            callback: Arc::new(callback),
        });
        self.paint_labels(ui, document, shown, selection, changes, rect);
        self.paint_axes(ui, rect);
        if let Some(hover) = &self.hover {
            paint_hover(ui, rect, pointer, hover);
        }
        events
    }

    /// Starts, continues and ends dragging a handle of the selected probe.
    #[allow(clippy::too_many_arguments)]
    fn drag_handle(
        &mut self,
        ui: &egui::Ui,
        document: &Document,
        response: &egui::Response,
        rect: Rect,
        handles: &[DVec3],
        authoring: &Authoring,
        events: &mut ViewEvents,
    ) {
        if response.drag_started_by(egui::PointerButton::Primary)
            && let Some(p) = response.interact_pointer_pos()
        {
            self.dragging = handles
                .iter()
                .enumerate()
                .filter_map(|(k, h)| Some((k, self.to_screen(rect, *h)?.distance(p))))
                .filter(|(_, d)| *d <= CLICK_REACH)
                .min_by(|a, b| a.1.total_cmp(&b.1))
                .map(|(k, _)| k);
            let up = document.world.up();
            self.drag_height = self
                .dragging
                .and_then(|k| handles.get(k))
                .and_then(|h| {
                    document
                        .world
                        .everything()
                        .ray_first(*h, *h - up * 1.0e4)
                        .ok()?
                })
                .map_or(0.0, |hit| hit.distance);
        }
        if !response.dragged_by(egui::PointerButton::Primary) {
            self.dragging = None;
            return;
        }
        let (Some(k), Some(p)) = (self.dragging, ui.input(|i| i.pointer.latest_pos())) else {
            return;
        };
        let Some(anchor) = handles.get(k).copied() else {
            return;
        };
        let size = DVec2::new(rect.width() as f64, rect.height() as f64);
        let pixel = DVec2::new((p.x - rect.left()) as f64, (p.y - rect.top()) as f64);
        let moved = match authoring.drag_mode {
            DragMode::ViewPlane => drag_in_view_plane(&self.camera, pixel, size, anchor),
            DragMode::Axis(a) => {
                let axis = [DVec3::X, DVec3::Y, DVec3::Z][a.min(2)];
                drag_along_axis(&self.camera, pixel, size, anchor, axis)
            }
            DragMode::Surface => {
                let keep = Lift {
                    height: self.drag_height,
                    along_normal: false,
                };
                self.pick(document, rect, p)
                    .map(|h| keep.apply(h.point, h.normal, document.world.up()))
            }
        };
        if let Some(to) = moved.filter(|to| to.is_finite() && *to != anchor) {
            events.moved = Some((k, to));
        }
    }

    fn handle_camera_input(&mut self, ui: &egui::Ui, response: &egui::Response, size: DVec2) {
        let turn = 0.008;
        if response.dragged_by(egui::PointerButton::Primary) {
            let d = response.drag_delta();
            if self.fly {
                self.camera.look(-d.x as f64 * turn, d.y as f64 * turn);
            } else {
                self.camera.orbit(-d.x as f64 * turn, d.y as f64 * turn);
            }
        }
        if response.dragged_by(egui::PointerButton::Secondary)
            || response.dragged_by(egui::PointerButton::Middle)
        {
            let d = response.drag_delta();
            self.camera.pan(DVec2::new(d.x as f64, d.y as f64), size.y);
        }
        if response.hovered() {
            let scroll = ui.input(|i| i.smooth_scroll_delta.y);
            if scroll != 0.0 {
                self.camera.zoom((-scroll as f64 * 0.0025).exp());
            }
        }
        if self.fly && response.hovered() {
            let (dt, keys) = ui.input(|i| {
                let held = |k| i.key_down(k) as i32 as f64;
                (
                    i.stable_dt.min(0.1) as f64,
                    [
                        held(egui::Key::W) - held(egui::Key::S),
                        held(egui::Key::D) - held(egui::Key::A),
                        held(egui::Key::E) - held(egui::Key::Q),
                    ],
                )
            });
            if keys != [0.0; 3] {
                let speed = self.camera.distance.clamp(2.0, 200.0) * dt;
                self.camera
                    .fly(keys[0] * speed, keys[1] * speed, keys[2] * speed);
                ui.ctx().request_repaint();
            }
        }
    }

    /// The object and triangle under a pixel, found with the query core.
    fn pick(&self, document: &Document, rect: Rect, pointer: Pos2) -> Option<Hover> {
        let size = DVec2::new(rect.width() as f64, rect.height() as f64);
        let pixel = DVec2::new(
            (pointer.x - rect.left()) as f64,
            (pointer.y - rect.top()) as f64,
        );
        let (eye, direction) = self.camera.pixel_ray(pixel, size);
        let reach = self.camera.distance + self.drawing.radius() * 4.0;
        let hit = document
            .world
            .everything()
            .ray_first(eye, eye + direction * reach)
            .ok()??;
        Some(Hover {
            object: document.world.name(hit.object).to_string(),
            tags: document.world.tags(hit.object).to_vec(),
            triangle: hit.triangle,
            point: hit.point,
            normal: hit.normal,
            distance: hit.distance,
        })
    }

    /// The probe whose marker or line is nearest a click, within reach.
    fn probe_at(
        &self,
        document: &Document,
        shown: &[usize],
        rect: Rect,
        click: Pos2,
    ) -> Option<usize> {
        let project = |p: DVec3| self.to_screen(rect, p);
        let mut best: Option<(f32, usize)> = None;
        for &i in shown.iter().take(MAX_DRAWN_PROBES) {
            let points = probe_points(&document.probes.probes[i], document.results.get(i));
            let screen: Vec<Pos2> = points.iter().filter_map(|p| project(*p)).collect();
            let mut nearest = screen
                .iter()
                .map(|s| s.distance(click))
                .fold(f32::INFINITY, f32::min);
            for pair in screen.windows(2) {
                nearest = nearest.min(distance_to_segment(click, pair[0], pair[1]) + 2.0);
            }
            if nearest <= CLICK_REACH && best.is_none_or(|(d, _)| nearest < d) {
                best = Some((nearest, i));
            }
        }
        best.map(|(_, i)| i)
    }

    /// Where a world point shows in the viewport rectangle.
    pub fn to_screen(&self, rect: Rect, point: DVec3) -> Option<Pos2> {
        let size = DVec2::new(rect.width() as f64, rect.height() as f64);
        let behind = (point - self.camera.eye()).dot(-self.camera.backward()) <= 0.0;
        if behind {
            return None;
        }
        let p = self.camera.project(point, size, self.drawing.radius())?;
        Some(Pos2::new(rect.left() + p.x as f32, rect.top() + p.y as f32))
    }

    #[allow(clippy::too_many_arguments)]
    fn update_marks(
        &mut self,
        document: &Document,
        results_revision: u64,
        shown: &[usize],
        selection: &Selection,
        handles: &[DVec3],
        preview: Vec<DVec3>,
        rect: Rect,
    ) {
        let hover_triangle = self
            .hover
            .as_ref()
            .and_then(|h| document.triangle(&h.object, h.triangle?));
        let key = MarksKey {
            camera: self.camera,
            height: rect.height() as u32,
            selection: selection.clone(),
            hover_triangle,
            preview,
            results_revision,
            shown: shown.iter().take(MAX_DRAWN_PROBES).copied().collect(),
        };
        if self.marks_key.as_ref() == Some(&key) {
            return;
        }
        let mut marks = Vec::new();
        for &i in &key.shown {
            let (Some(probe), Some(result)) =
                (document.probes.probes.get(i), document.results.get(i))
            else {
                continue;
            };
            let emphasis = Emphasis {
                selected: selection.probe == Some(i),
                muted: !selection.is_empty() && !selection.contains(i),
                hit: selection.hit,
            };
            probe_marks(probe, result, emphasis, &mut marks);
            if emphasis.selected {
                overlapped_objects(document, result, &mut marks);
            }
        }
        for h in handles {
            marks.push(Mark::Point {
                at: *h,
                colour: HANDLE,
                size: 11.0,
                mark: StateMark::Square,
            });
        }
        for (k, p) in key.preview.iter().enumerate() {
            marks.push(Mark::Point {
                at: *p,
                colour: HANDLE,
                size: 9.0,
                mark: StateMark::Round,
            });
            if k > 0 {
                marks.push(Mark::Line {
                    from: key.preview[k - 1],
                    to: *p,
                    colour: HANDLE,
                    width: 2.5,
                    dashed: k + 1 == key.preview.len(),
                });
            }
        }
        if let Some(t) = hover_triangle {
            for k in 0..3 {
                marks.push(Mark::Line {
                    from: t[k],
                    to: t[(k + 1) % 3],
                    colour: [250, 250, 250],
                    width: 2.0,
                    dashed: false,
                });
            }
        }
        let sizing = Sizing {
            camera: self.camera,
            viewport_height: rect.height().max(1.0) as f64,
            origin: self.drawing.origin,
        };
        self.marks = Arc::new(mark_surfaces(&marks, &sizing));
        self.marks_revision += 1;
        self.marks_key = Some(key);
    }

    /// Names beside failing probes and the selected one, so the answer is readable at a glance.
    fn paint_labels(
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
        // Labels already placed; a label that would cover one moves down below it.
        let mut taken: Vec<Rect> = Vec::new();
        for &i in shown.iter().take(MAX_DRAWN_PROBES) {
            let (Some(probe), Some(result)) =
                (document.probes.probes.get(i), document.results.get(i))
            else {
                continue;
            };
            let selected = selection.probe == Some(i);
            let changed = changes.contains_key(&probe.id);
            if !selected && !changed && !matches!(result.verdict, Verdict::Fail | Verdict::Error) {
                continue;
            }
            let Some(at) = self.to_screen(rect, start_point(&probe.query)) else {
                continue;
            };
            let text = if changed {
                format!("{}  {}  · changed", verdict_word(result.verdict), probe.id)
            } else {
                format!("{}  {}", verdict_word(result.verdict), probe.id)
            };
            let galley = painter.layout_no_wrap(text, font.clone(), Color32::WHITE);
            let mut pos = at + Vec2::new(26.0, -galley.size().y - 6.0);
            let frame_at = |pos: Pos2| {
                Rect::from_min_size(
                    pos - Vec2::new(16.0, 0.0),
                    galley.size() + Vec2::new(16.0, 0.0),
                )
                .expand2(Vec2::new(5.0, 2.0))
            };
            while let Some(below) = taken.iter().find(|r| r.intersects(frame_at(pos))) {
                pos.y = below.bottom() + 3.0;
            }
            let frame = frame_at(pos);
            taken.push(frame);
            painter.rect_filled(frame, 3.0, Color32::from_rgba_unmultiplied(20, 22, 28, 225));
            painter.rect_stroke(
                frame,
                3.0,
                Stroke::new(
                    if selected { 2.0 } else { 1.0 },
                    verdict_color32(result.verdict),
                ),
                egui::StrokeKind::Outside,
            );
            paint_mark(
                &painter,
                pos + Vec2::new(-8.0, galley.size().y * 0.5),
                5.0,
                result.verdict,
            );
            painter.galley(pos, galley, Color32::WHITE);
        }
    }

    /// A small axis marker in the bottom-left corner; the level's up axis is drawn thicker.
    fn paint_axes(&self, ui: &egui::Ui, rect: Rect) {
        let painter = ui.painter().with_clip_rect(rect);
        let centre = Pos2::new(rect.left() + 42.0, rect.bottom() - 42.0);
        let right = self.camera.right();
        let screen_up = self.camera.screen_up();
        let axes = [
            ("X", DVec3::X, okabe_ito::VERMILLION),
            ("Y", DVec3::Y, okabe_ito::BLUISH_GREEN),
            ("Z", DVec3::Z, okabe_ito::SKY_BLUE),
        ];
        painter.circle_filled(
            centre,
            36.0,
            Color32::from_rgba_unmultiplied(20, 22, 28, 170),
        );
        for (name, axis, [r, g, b]) in axes {
            let d = Vec2::new(axis.dot(right) as f32, -axis.dot(screen_up) as f32) * 26.0;
            let is_up = axis.dot(self.camera.up).abs() > 0.99;
            let colour = Color32::from_rgb(r, g, b);
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

/// Highlights the objects an overlap probe overlaps (see-through copies of their surfaces).
fn overlapped_objects(
    document: &Document,
    result: &plumbline_core::check::ProbeResult,
    marks: &mut Vec<Mark>,
) {
    let Hits::Overlap(hits) = &result.hits else {
        return;
    };
    for hit in hits {
        let Some(object) = document
            .level
            .objects
            .iter()
            .find(|o| *o.name == *hit.object)
        else {
            continue;
        };
        let (vertices, triangles) = match &object.geometry {
            plumbline_core::level::Geometry::Mesh(mesh) if mesh.triangles.len() <= 20_000 => {
                (mesh.vertices.clone(), mesh.triangles.clone())
            }
            plumbline_core::level::Geometry::Mesh(_) => continue,
            plumbline_core::level::Geometry::Primitive {
                shape,
                translation,
                rotation,
            } => {
                let Ok(parry) = plumbline_core::query::primitive_shape(shape) else {
                    continue;
                };
                let (vertices, triangles) = plumbline_core::query::shape_surface(&parry);
                let placed = vertices
                    .iter()
                    .map(|v| *translation + *rotation * *v)
                    .collect();
                (placed, triangles)
            }
        };
        // Pushed out by 2 cm so the highlight does not fight the object's own surface for depth.
        let centre = vertices.iter().copied().sum::<DVec3>() / vertices.len().max(1) as f64;
        let vertices = vertices
            .iter()
            .map(|v| *v + (*v - centre).normalize_or_zero() * 0.02)
            .collect();
        marks.push(Mark::Ghost {
            vertices,
            triangles,
            colour: okabe_ito::ORANGE,
            alpha: 130,
        });
    }
}

fn paint_hover(ui: &egui::Ui, rect: Rect, pointer: Option<Pos2>, hover: &Hover) {
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
    let galley = painter.layout_no_wrap(text, FontId::proportional(12.5), Color32::WHITE);
    let mut pos = pointer + Vec2::new(16.0, 16.0);
    if pos.x + galley.size().x > rect.right() - 8.0 {
        pos.x = pointer.x - galley.size().x - 16.0;
    }
    if pos.y + galley.size().y > rect.bottom() - 8.0 {
        pos.y = pointer.y - galley.size().y - 16.0;
    }
    let frame = Rect::from_min_size(pos, galley.size()).expand(6.0);
    painter.rect_filled(frame, 4.0, Color32::from_rgba_unmultiplied(12, 14, 18, 235));
    painter.galley(pos, galley, Color32::WHITE);
}

fn distance_to_segment(p: Pos2, a: Pos2, b: Pos2) -> f32 {
    let ab = b - a;
    let t = ((p - a).dot(ab) / ab.length_sq().max(1e-6)).clamp(0.0, 1.0);
    p.distance(a + ab * t)
}
