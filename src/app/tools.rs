//! Placing new probes and dragging their points: the tools, the new probes' defaults, and the
//! geometry that turns a pointer position into a point in the level.

use eframe::egui;
use glam::{DVec2, DVec3};

use crate::view::camera::OrbitCamera;
use plumbline_core::level::ShapeSpec;
use plumbline_core::probe::{Launch, Probe, ProbeQuery};
use plumbline_core::query::Filter;

/// What a click in the view does.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum Tool {
    /// Clicks select probes; drags move handles or the camera.
    #[default]
    Select,
    /// Two clicks: where the ray starts and ends.
    Ray,
    /// Clicks add path points; Enter or a double click ends the path.
    Sweep,
    /// One click: where the closest-point probe sits.
    Closest,
    /// One click: where the overlap probe's shape sits.
    Overlap,
    /// Two clicks: where the character stands, then where it should come down.
    Jump,
    /// Clicks add waypoints; Enter or a double click ends the route.
    Walk,
}

impl Tool {
    /// Every placing tool, in toolbar order.
    pub const PLACING: [Tool; 6] = [
        Tool::Ray,
        Tool::Sweep,
        Tool::Closest,
        Tool::Overlap,
        Tool::Jump,
        Tool::Walk,
    ];

    /// The button's words.
    pub fn name(self) -> &'static str {
        match self {
            Tool::Select => "Select",
            Tool::Ray => "Ray",
            Tool::Sweep => "Sweep",
            Tool::Closest => "Closest",
            Tool::Overlap => "Overlap",
            Tool::Jump => "Jump",
            Tool::Walk => "Walk",
        }
    }

    /// The key that picks the tool.
    pub fn key(self) -> egui::Key {
        match self {
            Tool::Select => egui::Key::Escape,
            Tool::Ray => egui::Key::R,
            Tool::Sweep => egui::Key::P,
            Tool::Closest => egui::Key::C,
            Tool::Overlap => egui::Key::O,
            Tool::Jump => egui::Key::J,
            Tool::Walk => egui::Key::W,
        }
    }

    /// What the tool does, for its tooltip.
    pub fn help(self) -> &'static str {
        match self {
            Tool::Select => "Select probes and drag their handles (Esc)",
            Tool::Ray => "New ray: click where it starts, then where it ends (R)",
            Tool::Sweep => {
                "New sweep: click each point of the path; Enter or a double click ends it (P)"
            }
            Tool::Closest => "New closest-point probe: click where it sits (C)",
            Tool::Overlap => "New overlap probe: click where the shape stands (O)",
            Tool::Jump => {
                "New jump: click where the character stands, then where it should come down (J)"
            }
            Tool::Walk => {
                "New walk: click each waypoint on the ground; Enter or a double click ends it (W)"
            }
        }
    }

    /// How many clicks make the probe (`None`: the user ends it).
    pub fn clicks(self) -> Option<usize> {
        match self {
            Tool::Select => Some(0),
            Tool::Ray | Tool::Jump => Some(2),
            Tool::Sweep | Tool::Walk => None,
            Tool::Closest | Tool::Overlap => Some(1),
        }
    }

    /// How high above the picked surface a placed point goes, by default: eye height for sight
    /// lines, a standing character capsule's centre for sweeps and overlaps (common practice: about
    /// 1.7 m eyes, a 1.8 m capsule resting 1 cm above the floor), the surface itself for closest.
    pub fn default_lift(self) -> f64 {
        match self {
            Tool::Ray => 1.7,
            Tool::Sweep | Tool::Overlap | Tool::Jump | Tool::Walk => 0.91,
            Tool::Select | Tool::Closest => 0.0,
        }
    }
}

/// What the view needs to know of the authoring tools.
#[derive(Debug, Clone, PartialEq)]
pub struct Authoring {
    /// The tool in hand.
    pub tool: Tool,
    /// Points placed so far with a placing tool.
    pub placed: Vec<DVec3>,
    /// How picked points are raised.
    pub lift: Lift,
    /// How dragged handles move.
    pub drag_mode: DragMode,
}

/// Rounds a placed or dragged point to the millimetre, so probe files stay readable (levels are built
/// to a far coarser grid; common practice).
pub fn to_millimetre(p: DVec3) -> DVec3 {
    (p * 1000.0).round() / 1000.0
}

/// How a picked surface point is raised before it becomes a probe point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Lift {
    /// Metres.
    pub height: f64,
    /// Along the surface normal (true) or the level's up axis (false).
    pub along_normal: bool,
}

impl Lift {
    /// The point `height` above `point` on a surface with unit `normal`, to the millimetre.
    pub fn apply(&self, point: DVec3, normal: DVec3, up: DVec3) -> DVec3 {
        let direction = if self.along_normal { normal } else { up };
        to_millimetre(point + direction * self.height)
    }
}

/// How a dragged handle moves.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum DragMode {
    /// In the plane through the point facing the camera.
    #[default]
    ViewPlane,
    /// Along one world axis (0 = X, 1 = Y, 2 = Z).
    Axis(usize),
    /// Over the level's surfaces, keeping the point's height above them.
    Surface,
}

impl DragMode {
    /// Every mode, in menu order.
    pub const ALL: [DragMode; 5] = [
        DragMode::ViewPlane,
        DragMode::Axis(0),
        DragMode::Axis(1),
        DragMode::Axis(2),
        DragMode::Surface,
    ];

    /// The mode's words.
    pub fn name(self) -> &'static str {
        match self {
            DragMode::ViewPlane => "in the view plane",
            DragMode::Axis(0) => "along X",
            DragMode::Axis(1) => "along Y",
            DragMode::Axis(_) => "along Z",
            DragMode::Surface => "on surfaces",
        }
    }
}

/// How high a new jump rises above the higher of its two ends, metres: about what a game character
/// clears (common practice, from memory: 1 to 1.5 m).
pub const JUMP_RISE: f64 = 1.2;

/// A new probe from placed points, with defaults a designer then adjusts in the inspector: a
/// character-sized capsule (radius 0.35 m, 1.8 m tall; common practice) for sweeps, overlaps and
/// jumps (rising [`JUMP_RISE`] above the higher end, along the level's `up`), a point with 5 m reach
/// for closest-point probes, no expectation.
pub fn new_probe(tool: Tool, id: String, points: &[DVec3], up: DVec3) -> Option<Probe> {
    let capsule = ShapeSpec::Capsule {
        radius: 0.35,
        half_height: 0.55,
    };
    let query = match (tool, points) {
        (Tool::Ray, [from, to, ..]) => ProbeQuery::Ray {
            from: *from,
            to: *to,
            hits: None,
        },
        (Tool::Sweep, path) if path.len() >= 2 => ProbeQuery::Sweep {
            shape: capsule,
            rotation: None,
            path: path.to_vec(),
            hits: None,
            duration: None,
            clearance: Some(true),
            turns: None,
        },
        (Tool::Closest, [at, ..]) => ProbeQuery::Closest {
            shape: ShapeSpec::Point {},
            at: *at,
            rotation: None,
            max_distance: 5.0,
        },
        (Tool::Overlap, [at, ..]) => ProbeQuery::Overlap {
            shape: capsule,
            at: *at,
            rotation: None,
        },
        (Tool::Walk, path) if path.len() >= 2 => ProbeQuery::Walk {
            shape: capsule,
            path: path.to_vec(),
            max_step: None,
            max_slope: None,
        },
        (Tool::Jump, [from, to, ..]) => ProbeQuery::Jump {
            shape: capsule,
            rotation: None,
            from: *from,
            launch: Launch::Target {
                to: *to,
                apex: (((*to - *from).dot(up).max(0.0) + JUMP_RISE) * 1000.0).round() / 1000.0,
            },
            gravity: None,
            max_slope: None,
            max_time: None,
        },
        _ => return None,
    };
    Some(Probe {
        id: id.into(),
        label: None,
        filter: Filter::default(),
        query,
        expect: None,
        from_rule: None,
    })
}

/// Where the pointer puts a point dragged in the plane through `anchor` facing the camera.
pub fn drag_in_view_plane(
    camera: &OrbitCamera,
    pixel: DVec2,
    size: DVec2,
    anchor: DVec3,
) -> Option<DVec3> {
    let (eye, direction) = camera.pixel_ray(pixel, size);
    let normal = camera.backward();
    let denominator = direction.dot(normal);
    if denominator.abs() < 1e-9 {
        return None;
    }
    let t = (anchor - eye).dot(normal) / denominator;
    (t > 0.0).then(|| to_millimetre(eye + direction * t))
}

/// Where the pointer puts a point dragged along the line through `anchor` in direction `axis`: the
/// point of that line closest to the pointer's ray (Ericson, "Real-Time Collision Detection", 2005,
/// §5.1.8, closest points of two lines).
pub fn drag_along_axis(
    camera: &OrbitCamera,
    pixel: DVec2,
    size: DVec2,
    anchor: DVec3,
    axis: DVec3,
) -> Option<DVec3> {
    let (eye, direction) = camera.pixel_ray(pixel, size);
    let r = anchor - eye;
    let (a, b, c) = (
        axis.dot(axis),
        axis.dot(direction),
        direction.dot(direction),
    );
    let (d, e) = (axis.dot(r), direction.dot(r));
    let denominator = a * c - b * b;
    if denominator.abs() < 1e-9 {
        return None;
    }
    let s = (b * e - c * d) / denominator;
    Some(to_millimetre(anchor + axis * s))
}

#[cfg(test)]
mod tests {
    use super::*;
    use plumbline_core::probe::ProbeKind;

    fn camera() -> OrbitCamera {
        OrbitCamera::framing(DVec3::splat(-10.0), DVec3::splat(10.0), DVec3::Y)
    }

    #[test]
    fn a_point_dragged_in_the_view_plane_stays_under_the_pointer_at_its_depth() {
        let camera = camera();
        let size = DVec2::new(800.0, 600.0);
        let anchor = DVec3::new(1.0, 2.0, -3.0);
        let pixel = DVec2::new(500.0, 200.0);
        let moved = drag_in_view_plane(&camera, pixel, size, anchor).unwrap();
        assert!((moved - anchor).dot(camera.backward()).abs() < 1e-3);
        // To the millimetre: within a small fraction of a pixel of the pointer at this distance.
        let back = camera.project(moved, size, 10.0).unwrap();
        assert!(back.distance(pixel) < 0.1, "{back} vs {pixel}");
    }

    #[test]
    fn a_point_dragged_along_an_axis_moves_only_along_it() {
        let camera = camera();
        let size = DVec2::new(800.0, 600.0);
        let anchor = DVec3::new(1.0, 2.0, -3.0);
        // Aim at a point further along the axis: the drag lands exactly there.
        let target = anchor + DVec3::Y * 2.5;
        let pixel = camera.project(target, size, 10.0).unwrap();
        let moved = drag_along_axis(&camera, pixel, size, anchor, DVec3::Y).unwrap();
        assert!((moved - target).length() < 1e-3, "{moved}");
        assert_eq!((moved.x, moved.z), (anchor.x, anchor.z));
    }

    #[test]
    fn placed_points_make_probes_of_each_kind() {
        let p = [DVec3::ZERO, DVec3::X, DVec3::new(2.0, 0.0, 1.0)];
        assert!(new_probe(Tool::Ray, "r".into(), &p[..1], DVec3::Y).is_none());
        assert_eq!(
            new_probe(Tool::Ray, "r".into(), &p, DVec3::Y)
                .unwrap()
                .query
                .kind(),
            ProbeKind::Ray
        );
        let sweep = new_probe(Tool::Sweep, "s".into(), &p, DVec3::Y).unwrap();
        assert_eq!(sweep.query.points(), p.to_vec());
        assert_eq!(
            new_probe(Tool::Closest, "c".into(), &p[..1], DVec3::Y)
                .unwrap()
                .query
                .kind(),
            ProbeKind::Closest
        );
        assert_eq!(
            new_probe(Tool::Overlap, "o".into(), &p[..1], DVec3::Y)
                .unwrap()
                .query
                .kind(),
            ProbeKind::Overlap
        );
        // A jump up onto a ledge 2 m higher rises the default 1.2 m above the ledge.
        let ledge = [DVec3::ZERO, DVec3::new(3.0, 2.0, 0.0)];
        let jump = new_probe(Tool::Jump, "j".into(), &ledge, DVec3::Y).unwrap();
        assert_eq!(jump.query.points(), ledge.to_vec());
        let ProbeQuery::Jump {
            launch: Launch::Target { apex, .. },
            ..
        } = jump.query
        else {
            panic!("a jump aimed at the ledge")
        };
        assert_eq!(apex, 2.0 + JUMP_RISE);
    }

    #[test]
    fn lift_goes_along_the_chosen_direction() {
        let lift = Lift {
            height: 1.5,
            along_normal: false,
        };
        let up = DVec3::Z;
        assert_eq!(
            lift.apply(DVec3::ZERO, DVec3::X, up),
            DVec3::new(0.0, 0.0, 1.5)
        );
        let lift = Lift {
            along_normal: true,
            ..lift
        };
        assert_eq!(
            lift.apply(DVec3::ZERO, DVec3::X, up),
            DVec3::new(1.5, 0.0, 0.0)
        );
    }
}
