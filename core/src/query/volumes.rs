//! Volumes along the way: when a moving probe enters and leaves each volume of the level (kill zones,
//! camera-exclusion zones, checkpoints, water), and which volumes a placed shape is in.
//!
//! Volumes are convex (a primitive, or a mesh's convex hull) and so is every probe shape, so along a
//! straight segment the times a shape overlaps a volume form one interval (the segment meets the
//! convex Minkowski difference of the two in one piece). Its ends are exact: the entry is the time of
//! impact of the shape cast forward from the segment's start, the exit that of the shape cast back
//! from the segment's end (a ray: the ray cast both ways). A path is taken a segment at a time. Along
//! a jump's parabola, and along a path whose shape turns, the intervals are found by conservative
//! advancement, as jumps and turning sweeps find their contacts: outside, the shape moves no farther than its distance to the volume; inside, no farther
//! than its penetration depth (the least move that separates the two), so no entry or exit between
//! steps is missed (Mirtich, B., "Impulse-based Dynamic Simulation of Rigid Body Systems", PhD
//! thesis, University of California, Berkeley, 1996, ch. 2; from memory). Touching counts as inside:
//! a path that grazes a volume enters and leaves it at the same place.

use glam::{DQuat, DVec3};
use parry3d_f64::bounding_volume::{Aabb, BoundingVolume};
use parry3d_f64::math::Pose;
use parry3d_f64::query::{
    Ray, ShapeCastOptions, cast_shapes, contact, distance, intersection_test,
};

use super::QueryError;
use super::jump::{CONTACT_TOLERANCE, Trajectory, arc_step};
use super::shapes::ProbeShape;
use super::turning::TurningPath;
use super::world::{ObjectId, View, Volume};

/// What the culling of volumes far from a path adds to the boxes compared, in metres.
const CULL_MARGIN: f64 = 0.01;

/// Most advancement steps along one motion before giving up (a shape grazing a volume's face).
const MAX_ARC_STEPS: usize = 100_000;

/// How a probe meets a volume.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum Crossing {
    /// In it at the start (a placed shape: in it).
    Inside,
    /// Goes in.
    Enter,
    /// Comes out.
    Exit,
}

/// One meeting of a probe with a volume.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct VolumeEvent {
    /// The volume.
    pub volume: ObjectId,
    /// In, entering or leaving.
    pub crossing: Crossing,
    /// Where along the way: metres along a path (or ray), seconds along a jump.
    pub at: f64,
    /// The shape's centre (a ray's point) then.
    pub point: DVec3,
}

/// What is tested against a volume: a point (rays, points) or a shape.
#[derive(Clone, Copy)]
pub enum Mover<'a> {
    /// A point.
    Point,
    /// A convex shape.
    Shape(&'a ProbeShape),
}

impl Mover<'_> {
    /// How far from its centre the mover reaches.
    fn reach(self) -> f64 {
        match self {
            Mover::Point => 0.0,
            Mover::Shape(s) => s.bounding_radius,
        }
    }

    /// False when the mover, anywhere on the straight segments between the points of `path`,
    /// cannot touch the volume: the box around the path, grown by the mover's reach and a margin,
    /// misses the volume's box (the mover's ball around each segment lies inside that box).
    /// Broad-phase culling, common practice; the margin (a centimetre, far above the tolerances of
    /// the exact tests it spares) keeps it conservative.
    pub(crate) fn may_touch(self, volume: &Volume, path: &[DVec3]) -> bool {
        self.cull_box(path)
            .is_some_and(|reach| reach.intersects(&volume.aabb))
    }

    /// The box [`Mover::may_touch`] tests volumes' boxes against: around `path`, grown by the
    /// mover's reach and the margin (`None` for an empty path). Made once for a path and every
    /// volume.
    fn cull_box(self, path: &[DVec3]) -> Option<Aabb> {
        (!path.is_empty()).then(|| Aabb::from_points_ref(path).loosened(self.reach() + CULL_MARGIN))
    }

    /// True when the mover placed at `at` touches or overlaps the volume.
    fn touches(self, volume: &Volume, at: DVec3) -> bool {
        match self {
            Mover::Point => volume.shape.contains_point(&volume.pose, at),
            Mover::Shape(s) => {
                intersection_test(&volume.pose, &*volume.shape, &s.pose_at(at), &*s.shape)
                    .is_ok_and(|i| i.intersecting)
            }
        }
    }

    /// The fraction of the way from `from` to `to` at which the mover first touches the volume.
    fn first_touch(self, volume: &Volume, from: DVec3, to: DVec3) -> Option<f64> {
        match self {
            Mover::Point => {
                volume
                    .shape
                    .cast_ray(&volume.pose, &Ray::new(from, to - from), 1.0, true)
            }
            Mover::Shape(s) => {
                let options = ShapeCastOptions {
                    max_time_of_impact: 1.0,
                    target_distance: 0.0,
                    stop_at_penetration: true,
                    compute_impact_geometry_on_penetration: false,
                };
                cast_shapes(
                    &volume.pose,
                    DVec3::ZERO,
                    &*volume.shape,
                    &s.pose_at(from),
                    to - from,
                    &*s.shape,
                    options,
                )
                .ok()
                .flatten()
                .map(|cast| cast.time_of_impact)
            }
        }
    }
}

impl View<'_> {
    /// The volumes the mover placed at `at` is in (touching counts), in level order.
    pub fn volumes_at(&self, mover: Mover, at: DVec3) -> Result<Vec<ObjectId>, QueryError> {
        if !at.is_finite() {
            return Err(QueryError::PositionNotFinite);
        }
        Ok(self
            .volumes()
            .filter(|v| mover.may_touch(v, &[at]) && mover.touches(v, at))
            .map(|v| v.object)
            .collect())
    }

    /// Every volume the mover is in at the start of `path` and every entry and exit along it, in
    /// order of metres along the path (at one place: in, then out, then in; then by volume).
    pub fn volume_events(
        &self,
        mover: Mover,
        path: &[DVec3],
    ) -> Result<Vec<VolumeEvent>, QueryError> {
        if let Some(k) = path.iter().position(|p| !p.is_finite()) {
            return Err(QueryError::PathPointNotFinite(k));
        }
        let (Some(&start), Some(reach)) = (path.first(), mover.cull_box(path)) else {
            return Ok(Vec::new());
        };
        let mut events = Vec::new();
        for volume in self.volumes().filter(|v| reach.intersects(&v.aabb)) {
            let mut inside = mover.touches(volume, start);
            if inside {
                events.push(event(volume, Crossing::Inside, 0.0, start));
            }
            let mut along = 0.0;
            for pair in path.windows(2) {
                let (a, b) = (pair[0], pair[1]);
                let length = a.distance(b);
                if length == 0.0 {
                    continue;
                }
                let at = |f: f64| (along + f * length, a.lerp(b, f));
                let inside_at_b = mover.touches(volume, b);
                if !inside && let Some(f) = mover.first_touch(volume, a, b) {
                    let (m, p) = at(f);
                    events.push(event(volume, Crossing::Enter, m, p));
                    inside = true;
                }
                if inside && !inside_at_b {
                    let f = 1.0 - mover.first_touch(volume, b, a).unwrap_or(1.0);
                    let (m, p) = at(f);
                    events.push(event(volume, Crossing::Exit, m, p));
                }
                inside = inside_at_b;
                along += length;
            }
        }
        sort_events(&mut events);
        Ok(events)
    }

    /// Every volume the shape is in at launch and every entry and exit along `arc` up to `end`
    /// seconds, in order of time.
    pub fn volume_events_on_arc(
        &self,
        shape: &ProbeShape,
        arc: &Trajectory,
        end: f64,
    ) -> Result<Vec<VolumeEvent>, QueryError> {
        let mut events = Vec::new();
        for volume in self.volumes() {
            let mut advance =
                Advance::start(volume, shape, (arc.from, shape.rotation), &mut events);
            advance.run(
                |t| (arc.at(t), shape.rotation),
                |t, reach| arc_step(arc, t, reach),
                end,
                |t| t,
                &mut events,
            )?;
        }
        sort_events(&mut events);
        Ok(events)
    }

    /// Every volume the shape is in at the start and every entry and exit while it moves along a
    /// path turning from each point's orientation to the next one's (as turning sweeps move), in
    /// order of metres along the path.
    pub fn volume_events_turning(
        &self,
        shape: &ProbeShape,
        path: TurningPath,
    ) -> Result<Vec<VolumeEvent>, QueryError> {
        if let Some(k) = path.points.iter().position(|p| !p.is_finite()) {
            return Err(QueryError::PathPointNotFinite(k));
        }
        if path.points.len() < 2 || path.turns.len() != path.points.len() {
            return Err(QueryError::PathTooShort);
        }
        let mut events = Vec::new();
        for volume in self.volumes() {
            let first = (path.points[0], path.turns[0]);
            let mut advance = Advance::start(volume, shape, first, &mut events);
            let mut travelled = 0.0;
            for k in 0..path.points.len() - 1 {
                let length = path.points[k].distance(path.points[k + 1]);
                let angle = path.turns[k].angle_between(path.turns[k + 1]);
                // The farthest any point of the shape moves per unit of the segment's parameter.
                let reach_per_unit = length + shape.bounding_radius * angle;
                if reach_per_unit > 0.0 {
                    advance.run(
                        |s| path.pose(k, s),
                        |_, reach| reach / reach_per_unit,
                        1.0,
                        |s| travelled + s * length,
                        &mut events,
                    )?;
                }
                travelled += length;
            }
        }
        sort_events(&mut events);
        Ok(events)
    }
}

/// Conservative advancement of a shape against one volume along a motion, carrying whether it is in
/// the volume from one piece of the motion to the next.
struct Advance<'a> {
    volume: &'a Volume,
    shape: &'a ProbeShape,
    /// In the volume (within the tolerance) at the last place looked at.
    inside: bool,
    /// Where along the way (as reported) and where in space it was last in.
    last_in: (f64, DVec3),
    steps: usize,
}

impl<'a> Advance<'a> {
    /// Starts at `(centre, turn)`, noting the volume when the shape starts in it.
    fn start(
        volume: &'a Volume,
        shape: &'a ProbeShape,
        (centre, turn): (DVec3, DQuat),
        events: &mut Vec<VolumeEvent>,
    ) -> Advance<'a> {
        let inside = Mover::Shape(&shape.turned(turn)).touches(volume, centre);
        if inside {
            events.push(event(volume, Crossing::Inside, 0.0, centre));
        }
        Advance {
            volume,
            shape,
            inside,
            last_in: (0.0, centre),
            steps: 0,
        }
    }

    /// Follows the motion `place(u)` (centre and turn) for `u` from 0 to `end`, where `step(u,
    /// reach)` is the longest step over which no point of the shape moves farther than `reach`, and
    /// `at(u)` says where along the way `u` is, for the events.
    fn run(
        &mut self,
        place: impl Fn(f64) -> (DVec3, DQuat),
        step: impl Fn(f64, f64) -> f64,
        end: f64,
        at: impl Fn(f64) -> f64,
        events: &mut Vec<VolumeEvent>,
    ) -> Result<(), QueryError> {
        let (volume, body) = (self.volume, &*self.shape.shape);
        let mut u = 0.0;
        loop {
            self.steps += 1;
            if self.steps > MAX_ARC_STEPS {
                return Err(QueryError::NotConverged);
            }
            let (centre, turn) = place(u);
            let pose = Pose::from_parts(centre, turn);
            // Signed distance: apart (> 0) or penetrating (< 0, minus the depth).
            let signed = match contact(&volume.pose, &*volume.shape, &pose, body, 0.0) {
                Ok(Some(c)) => c.dist.min(0.0),
                _ => {
                    distance(&volume.pose, &*volume.shape, &pose, body).map_or(0.0, |d| d.distance)
                }
            };
            // In within the tolerance: entered at the first place within it, left after the last.
            let close = signed <= CONTACT_TOLERANCE;
            if close && !self.inside {
                events.push(event(volume, Crossing::Enter, at(u), centre));
            } else if !close && self.inside {
                let (was, point) = self.last_in;
                events.push(event(volume, Crossing::Exit, was, point));
            }
            self.inside = close;
            if close {
                self.last_in = (at(u), centre);
            }
            if u >= end {
                return Ok(());
            }
            // Apart, it moves no farther than the gap; in, no farther than the depth.
            u = (u + step(u, signed.abs().max(CONTACT_TOLERANCE))).min(end);
        }
    }
}

fn event(volume: &Volume, crossing: Crossing, at: f64, point: DVec3) -> VolumeEvent {
    VolumeEvent {
        volume: volume.object,
        crossing,
        at,
        point,
    }
}

fn sort_events(events: &mut [VolumeEvent]) {
    events.sort_by(|a, b| {
        a.at.total_cmp(&b.at)
            .then(a.crossing.cmp(&b.crossing))
            .then(a.volume.cmp(&b.volume))
    });
}

#[cfg(test)]
mod tests {
    //! The culling of far volumes must be conservative: wherever it says a mover cannot touch a
    //! volume, parry3d-f64's exact tests (the reference library the queries use) find no touch at
    //! either end and no entry along the way.

    use proptest::prelude::*;

    use super::*;
    use crate::level::{Primitive, ShapeSpec};
    use crate::query::shapes::solid_shape;

    fn primitive(kind: usize, size: [f64; 3]) -> Primitive {
        let [a, b, c] = size;
        match kind {
            0 => Primitive::Box {
                half_extents: DVec3::new(a, b, c),
            },
            1 => Primitive::Sphere { radius: a },
            2 => Primitive::Capsule {
                radius: a,
                half_height: b,
            },
            _ => Primitive::Cylinder {
                radius: a,
                half_height: b,
            },
        }
    }

    fn mover_shape(kind: usize, size: f64, turn: DQuat) -> Option<ProbeShape> {
        let spec = match kind {
            0 => return None,
            1 => ShapeSpec::Sphere { radius: size },
            2 => ShapeSpec::Capsule {
                radius: size,
                half_height: size * 2.0,
            },
            _ => ShapeSpec::Box {
                half_extents: [size, size * 0.5, size * 3.0],
            },
        };
        Some(ProbeShape::new(&spec, turn).expect("a valid shape"))
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(2000))]

        #[test]
        fn a_culled_volume_is_one_the_exact_tests_never_touch(
            kind in 0usize..4,
            size in prop::array::uniform3(0.05f64..3.0),
            axis in prop::array::uniform3(-1.0f64..1.0),
            angle in 0.0f64..6.3,
            centre in prop::array::uniform3(-1e3f64..1e3),
            mover in 0usize..4,
            mover_size in 0.01f64..1.5,
            // Segment ends around the volume's box, some just beyond the culling's reach.
            ends in prop::array::uniform2(prop::array::uniform3(-1.0f64..1.0)),
            spread in 0.5f64..3.0,
        ) {
            let axis = DVec3::from_array(axis).try_normalize().unwrap_or(DVec3::Y);
            let turn = DQuat::from_axis_angle(axis, angle);
            let shape = solid_shape(&primitive(kind, size)).expect("a valid primitive");
            let pose = Pose::from_parts(DVec3::from_array(centre), turn);
            let volume = Volume { object: 0, aabb: shape.compute_aabb(&pose), shape, pose };
            let moving = mover_shape(mover, mover_size, turn.inverse());
            let mover = moving.as_ref().map_or(Mover::Point, Mover::Shape);
            let (mid, half) = (volume.aabb.center(), volume.aabb.half_extents());
            let reach = half + DVec3::splat(mover.reach() + CULL_MARGIN);
            let [a, b] = ends.map(|e| mid + DVec3::from_array(e) * reach * spread);
            if !mover.may_touch(&volume, &[a, b]) {
                prop_assert!(!mover.touches(&volume, a), "touches at the start");
                prop_assert!(!mover.touches(&volume, b), "touches at the end");
                prop_assert!(mover.first_touch(&volume, a, b).is_none(), "enters on the way");
            }
        }
    }
}
