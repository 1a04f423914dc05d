//! The query core: a [`World`] of parry3d-f64 shapes with one BVH over objects, and one file per
//! probe kind, each adding methods to [`View`] — rays ([`View::ray_first`], [`View::ray_all`]), sweeps
//! ([`View::sweep_first`], [`View::sweep_all`], with [`View::sweep_clearance`]), closest points
//! ([`View::closest`]), overlaps ([`View::overlap`]) and thrown shapes ([`View::jump`]).
//!
//! Architecture invariant: the core computes in f64 and never samples; every answer is either a
//! closed-form or converged query of parry3d-f64 or our own exact test (watertight ray–triangle).
//! Results are deterministic: the same level and probe give the same answer. Exact ties between
//! objects go to the one met first in the BVH's fixed traversal order (first-hit rays, closest
//! points) or to the lower object index (sweeps, overlaps, all-hit lists).

pub(crate) mod body;
mod clearance;
mod closest;
mod coverage;
mod jump;
mod overlap;
mod progress;
mod ray;
mod ray_index;
mod ray_tree;
mod reach;
mod rest;
mod rounded;
mod settle;
mod shapes;
mod sightlines;
mod sweep;
mod turning;
mod volumes;
mod walk;
mod watertight;
mod world;

use glam::DVec3;

pub use body::PART_TRIANGLES;
pub use clearance::Clearance;
pub use closest::{ClosestHit, ClosestProbe};
pub use coverage::{SURFACE_LIFT, Sample};
pub(crate) use coverage::{inside as inside_outline, level_axes};
pub use jump::{CONTACT_TOLERANCE, JumpHit, LAUNCH_SKIN, Trajectory};
pub use overlap::{OverlapHit, TOUCH_TOLERANCE};
pub use progress::Progress;
pub use ray::RayHit;
pub use reach::{Cell, Reach};
pub use rest::RestHit;
pub use settle::{Material, REST_HOLD, REST_SPEED, REST_SPIN, SETTLE_STEP, SettleEnd, Settled};
pub use shapes::{
    ProbeShape, ROUND_SEGMENTS, placed_primitive_surface, primitive_shape, shape_surface,
};
pub use sightlines::{END_GAP, Sightline, SpotAt};
pub use sweep::SweepHit;
pub use turning::TurningPath;
pub use volumes::{Crossing, Mover, VolumeEvent};
pub use walk::{Gait, MAX_WALK_STEPS, SKIN, Stop, Walked};
pub use watertight::ShearedRay;
pub use world::{BuildCause, BuildError, Filter, MATERIAL_TAG, MaterialId, ObjectId, View, World};

/// Why the core cannot answer a probe as asked; shown to users as one sentence.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum QueryError {
    /// A ray's end points are not finite numbers.
    #[error("the ray's end points must be finite")]
    RayNotFinite,
    /// A ray starts and ends at the same point.
    #[error("the ray starts and ends at the same point")]
    RayHasNoLength,
    /// A probe's position is not finite.
    #[error("the probe position must be finite")]
    PositionNotFinite,
    /// A negative or NaN search distance.
    #[error("max_distance must be zero or more")]
    BadMaxDistance,
    /// A path of fewer than two points.
    #[error("a path needs at least two points")]
    PathTooShort,
    /// A path point that is not finite.
    #[error("path point {0} is not finite")]
    PathPointNotFinite(usize),
    /// A path whose points all coincide.
    #[error("the path has no length")]
    PathHasNoLength,
    /// A jump's target lies above the apex it is to rise to.
    #[error("the jump's apex must be higher than its target (\"to\")")]
    ApexBelowTarget,
    /// A walk whose route needs more steps than are taken.
    #[error("the route is too long to walk: more than {0} steps")]
    RouteTooLong(usize),
    /// A continuous search that took too many steps (a contact approached at a grazing angle).
    #[error(
        "the search for the first contact did not settle (a grazing contact); try a coarser path"
    )]
    NotConverged,
    /// The watcher of a long answer asked it to stop ([`Progress::cancel`]).
    #[error("cancelled before the answer was done")]
    Cancelled,
    /// The probe's shape is unusable.
    #[error("{0}")]
    Shape(#[from] crate::level::ShapeError),
}

/// Two ray crossings closer than this along one segment are the same crossing (a segment through a
/// shared edge or vertex): a billionth of a metre, plus the rounding of long segments.
pub(crate) fn merge_tolerance(length: f64) -> f64 {
    1e-9 * (1.0 + length * 1e-3)
}

/// A validated polyline path with its cumulative lengths.
pub(crate) struct PathGeometry<'a> {
    points: &'a [DVec3],
    cumulative: Vec<f64>,
}

impl<'a> PathGeometry<'a> {
    pub fn new(points: &'a [DVec3]) -> Result<PathGeometry<'a>, QueryError> {
        if points.len() < 2 {
            return Err(QueryError::PathTooShort);
        }
        if let Some(bad) = points.iter().position(|p| !p.is_finite()) {
            return Err(QueryError::PathPointNotFinite(bad));
        }
        let mut cumulative = vec![0.0];
        for w in points.windows(2) {
            cumulative.push(cumulative.last().copied().unwrap_or(0.0) + w[0].distance(w[1]));
        }
        if cumulative.last().copied().unwrap_or(0.0) == 0.0 {
            return Err(QueryError::PathHasNoLength);
        }
        Ok(PathGeometry { points, cumulative })
    }

    /// The segments `(start, end)` in order.
    pub fn segments(&self) -> impl Iterator<Item = (DVec3, DVec3)> + '_ {
        self.points.windows(2).map(|w| (w[0], w[1]))
    }

    /// Path length travelled at `along` metres into segment `s`.
    pub fn distance_at(&self, s: usize, along: f64) -> f64 {
        self.cumulative[s] + along
    }

    /// The whole path's length.
    pub fn length(&self) -> f64 {
        self.cumulative[self.cumulative.len() - 1]
    }

    /// The point `travelled` metres along the path (clamped to its ends).
    pub fn point_at(&self, travelled: f64) -> DVec3 {
        let s = self
            .cumulative
            .partition_point(|c| *c <= travelled)
            .clamp(1, self.points.len() - 1)
            - 1;
        let len = self.cumulative[s + 1] - self.cumulative[s];
        let u = if len > 0.0 {
            ((travelled - self.cumulative[s]) / len).clamp(0.0, 1.0)
        } else {
            0.0
        };
        self.points[s].lerp(self.points[s + 1], u)
    }

    /// Fraction of the whole path for a distance travelled.
    pub fn fraction(&self, travelled: f64) -> f64 {
        travelled / self.length()
    }
}
