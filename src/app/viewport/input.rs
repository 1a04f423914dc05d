//! Input in the 3D view: the camera (orbit, pan, zoom, fly), dragging the selected probe's handles,
//! and picking — the surface under the pointer with the query core, or the probe nearest a click.

use eframe::egui;
use egui::{Pos2, Rect};
use glam::{DVec2, DVec3};

use super::super::document::Document;
use super::super::tools::{Authoring, DragMode, Lift, drag_along_axis, drag_in_view_plane};
use super::{Hover, MAX_DRAWN_PROBES, ViewEvents, Viewport};
use crate::view::probe_marks::probe_points;

/// Pixels within which a click picks a probe's marker or a handle.
const CLICK_REACH: f32 = 14.0;

/// Radians the view turns per pixel dragged (orbit and fly). Ours.
const TURN_PER_PIXEL: f64 = 0.008;

/// Zoom per point of wheel scroll: the distance is multiplied by `exp(-scroll × this)`. Ours.
const ZOOM_PER_SCROLL: f64 = 0.0025;

impl Viewport {
    /// Starts, continues and ends dragging a handle of the selected probe.
    #[allow(clippy::too_many_arguments)]
    pub(super) fn drag_handle(
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

    pub(super) fn handle_camera_input(
        &mut self,
        ui: &egui::Ui,
        response: &egui::Response,
        size: DVec2,
    ) {
        let turn = TURN_PER_PIXEL;
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
                self.camera.zoom((-scroll as f64 * ZOOM_PER_SCROLL).exp());
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
    pub(super) fn pick(&self, document: &Document, rect: Rect, pointer: Pos2) -> Option<Hover> {
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
    pub(super) fn probe_at(
        &self,
        document: &Document,
        shown: &[usize],
        rect: Rect,
        click: Pos2,
    ) -> Option<usize> {
        let project = |p: DVec3| self.to_screen(rect, p);
        let mut best: Option<(f32, usize)> = None;
        for &i in shown.iter().take(MAX_DRAWN_PROBES) {
            let points = probe_points(
                &document.probes.probes[i],
                document.results.get(i),
                document.world.up(),
            );
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
}

fn distance_to_segment(p: Pos2, a: Pos2, b: Pos2) -> f32 {
    let ab = b - a;
    let t = ((p - a).dot(ab) / ab.length_sq().max(1e-6)).clamp(0.0, 1.0);
    p.distance(a + ab * t)
}
