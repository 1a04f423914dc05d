//! The 3D viewport panel. [`Viewport`] keeps the camera and what is drawn; [`input`] turns the pointer
//! and keys into camera moves, handle drags and picks; the marks come from
//! [`crate::view::scene_marks`] (pure geometry); [`paint`] is the GL paint callback; [`overlays`] are
//! the labels, the axis marker and the hover note egui paints over the view.

pub mod input;
mod label_places;
mod legend;
pub mod overlays;
pub mod paint;

use std::collections::HashMap;
use std::sync::{Arc, Mutex};

use eframe::egui;
use egui::{Rect, Sense, Vec2};
use glam::{DVec2, DVec3};

use super::Selection;
use super::document::Document;
use super::tools::{Authoring, Tool};
use crate::view::camera::{FRAME_MARGIN, OrbitCamera};
use crate::view::level_drawing::LevelDrawing;
use crate::view::marks::{MarkSurfaces, Sizing, mark_surfaces};
use crate::view::renderer::FrameInput;
use crate::view::scene_marks::{SceneMarks, scene_marks};
use overlays::paint_hover;
use paint::FrameLog;
use plumbline_core::check::Aspect;
use plumbline_core::lint::Finding;

/// At most this many probes are drawn at once (the list filter picks which).
pub const MAX_DRAWN_PROBES: usize = 600;

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
    /// The lint finding picked in the lint window, drawn over everything.
    pub finding: Option<&'a Finding>,
    /// The tag whose objects are highlighted.
    pub highlight_tag: Option<&'a str>,
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
    /// While a probe is selected, the others fade and thin out; off shows every probe at full
    /// strength.
    pub dim_others: bool,
    /// The legend of the view's marks is shown.
    pub legend: bool,
    /// Take no notice of where the pointer rests (an unattended screenshot: the virtual display's
    /// pointer sits mid-screen and would put a hover note in every picture).
    pub ignore_hover: bool,
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
    finding: Option<Finding>,
    highlight_tag: Option<String>,
    dim_others: bool,
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
            ignore_hover: false,
            dim_others: true,
            legend: false,
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
            .frame(self.drawing.min, self.drawing.max, FRAME_MARGIN, aspect);
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
        self.camera.frame(lo - pad, hi + pad, FRAME_MARGIN, aspect);
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
            finding,
            highlight_tag,
        } = *scene;
        let (rect, response) = ui.allocate_exact_size(ui.available_size(), Sense::click_and_drag());
        self.last_rect = rect;
        if self.opening.take() == Some(self.camera) {
            self.frame_level();
            self.last_camera = self.camera;
        }
        let size = DVec2::new(rect.width() as f64, rect.height() as f64);
        let mut events = ViewEvents::default();
        // A rule's probes move with their objects, not by hand.
        let handles = match (authoring.tool, selection.single()) {
            (Tool::Select, Some(i)) => document
                .probes
                .probes
                .get(i)
                .filter(|p| p.from_rule.is_none())
                .map(|p| p.query.points()),
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

        let pointer = response
            .hover_pos()
            .filter(|_| !response.dragged() && !self.ignore_hover);
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
            (results_revision, finding, highlight_tag),
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
        ui.painter().add(paint::level_and_marks(
            ui.ctx().clone(),
            rect,
            frame,
            self.frame_log.clone(),
        ));
        self.paint_labels(ui, document, shown, selection, changes, rect);
        self.paint_hit_numbers(ui, document, selection, rect);
        if self.legend {
            legend::paint_legend(ui, rect);
        }
        self.paint_axes(ui, rect);
        if let Some(hover) = &self.hover {
            paint_hover(ui, rect, pointer, hover);
        }
        events
    }

    #[allow(clippy::too_many_arguments)]
    fn update_marks(
        &mut self,
        document: &Document,
        (results_revision, finding, highlight_tag): (u64, Option<&Finding>, Option<&str>),
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
            finding: finding.cloned(),
            highlight_tag: highlight_tag.map(str::to_string),
            dim_others: self.dim_others,
        };
        if self.marks_key.as_ref() == Some(&key) {
            return;
        }
        let selected_all = selection.all();
        let marks = scene_marks(&SceneMarks {
            level: &document.level,
            probes: &document.probes.probes,
            results: &document.results,
            shown: &key.shown,
            selected: selection.probe,
            selected_all: &selected_all,
            hit: selection.hit,
            handles,
            preview: &key.preview,
            hover_triangle,
            finding,
            highlight_tag,
            dim_others: self.dim_others,
        });
        let sizing = Sizing {
            camera: self.camera,
            viewport_height: rect.height().max(1.0) as f64,
            origin: self.drawing.origin,
        };
        self.marks = Arc::new(mark_surfaces(&marks, &sizing));
        self.marks_revision += 1;
        self.marks_key = Some(key);
    }
}
