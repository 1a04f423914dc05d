//! The clearance of a sweep: the smallest distance between the moving shape and the level over the
//! whole path, and where along the path it occurs.
//!
//! Exact, not sampled: the distance between a convex shape translating along a segment and a fixed
//! convex piece (a triangle or a convex primitive) is a convex function of the distance travelled
//! (it is the distance from a point moving on a line to the fixed convex Minkowski difference;
//! Boyd & Vandenberghe, Convex Optimization, 2004, §3.2.5), so its minimum on each segment is found by
//! golden-section search to a fixed tolerance, and the level's minimum is the least over all pieces.

use glam::DVec3;
use parry3d_f64::bounding_volume::{Aabb, BoundingVolume};
use parry3d_f64::math::Pose;
use parry3d_f64::query::{ClosestPoints, closest_points, distance};
use parry3d_f64::shape::{Segment, Shape};

use super::closest::ClosestProbe;
use super::shapes::ProbeShape;
use super::sweep::SweepHit;
use super::world::{ObjectId, View};
use super::{PathGeometry, QueryError};

/// Where along a sweep's path the shape comes closest to the level.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Clearance {
    /// The smallest distance in metres (0 where the shape touches).
    pub distance: f64,
    /// Fraction of the path length where it occurs.
    pub t: f64,
    /// The shape's centre there.
    pub position: DVec3,
    /// The nearest object.
    pub object: ObjectId,
    /// The nearest point on that object.
    pub point: DVec3,
}

/// Golden-section search stops when the bracket is this short, in metres along the path; since the
/// distance changes by at most the distance moved, the clearance is then exact to the same amount.
const POSITION_TOLERANCE: f64 = 1e-8;

impl View<'_> {
    /// The clearance of `shape` along `path`; `first_hit` is the sweep's first impact when known (the
    /// clearance is then 0 there). `None` when the view has no objects.
    pub fn sweep_clearance(
        &self,
        shape: &ProbeShape,
        path: &[DVec3],
        first_hit: Option<&SweepHit>,
    ) -> Result<Option<Clearance>, QueryError> {
        let geometry = PathGeometry::new(path)?;
        if let Some(hit) = first_hit {
            return Ok(Some(Clearance {
                distance: 0.0,
                t: hit.t,
                position: hit.position,
                object: hit.object,
                point: hit.point,
            }));
        }
        let Some(start) = self.closest(ClosestProbe::Shape(shape), path[0], f64::INFINITY)? else {
            return Ok(None);
        };
        let mut best = Clearance {
            distance: start.distance,
            t: 0.0,
            position: path[0],
            object: start.object,
            point: start.point,
        };
        for (s, (a, b)) in geometry.segments().enumerate() {
            let len = a.distance(b);
            if len == 0.0 {
                continue;
            }
            let dir = (b - a) / len;
            let axis = Segment::new(a, b);
            let region = Aabb::from_points([a, b]).loosened(best.distance + shape.bounding_radius);
            let mut pieces: Vec<(f64, ObjectId, Piece)> = Vec::new();
            for leaf in self.world.bvh.intersect_aabb(&region) {
                let Some(body) = self.body(leaf) else {
                    continue;
                };
                let id = body.object;
                match body.mesh() {
                    Some(mesh) => {
                        for tri in mesh.bvh().intersect_aabb(&region) {
                            let piece = Piece::Triangle(mesh.triangle(tri));
                            let lower = self.piece_distance(&piece, &Pose::IDENTITY, &axis)
                                - shape.bounding_radius;
                            if lower < best.distance {
                                pieces.push((lower, id, piece));
                            }
                        }
                    }
                    None => {
                        let piece = Piece::Body(leaf as usize);
                        let lower = self.piece_distance(&piece, &Pose::IDENTITY, &axis)
                            - shape.bounding_radius;
                        if lower < best.distance {
                            pieces.push((lower, id, piece));
                        }
                    }
                }
            }
            pieces.sort_by(|x, y| x.0.total_cmp(&y.0).then(x.1.cmp(&y.1)));
            for (lower, id, piece) in pieces {
                if lower >= best.distance {
                    break;
                }
                let at = |u: f64| shape.pose_at(a + dir * u);
                let gap = |u: f64| self.piece_distance(&piece, &at(u), &*shape.shape);
                let (u, d) = minimize_convex(&gap, 0.0, len);
                if d < best.distance || (d == best.distance && id < best.object) {
                    let position = a + dir * u;
                    let point = self.piece_point(&piece, &at(u), shape).unwrap_or(position);
                    let travelled = geometry.distance_at(s, u);
                    best = Clearance {
                        distance: d,
                        t: geometry.fraction(travelled),
                        position,
                        object: id,
                        point,
                    };
                }
            }
        }
        Ok(Some(best))
    }

    /// The shape's distance to the level at `samples` evenly spaced places along `path` (at least
    /// two: the ends), as (metres travelled, distance) pairs, for plotting. Sampled, so it can miss a
    /// narrow dip between samples: the exact least clearance is [`View::sweep_clearance`].
    pub fn clearance_profile(
        &self,
        shape: &ProbeShape,
        path: &[DVec3],
        samples: usize,
    ) -> Result<Vec<(f64, f64)>, QueryError> {
        let geometry = PathGeometry::new(path)?;
        let total = geometry.length();
        let samples = samples.max(2);
        let mut profile = Vec::with_capacity(samples);
        for i in 0..samples {
            let travelled = total * i as f64 / (samples - 1) as f64;
            let at = geometry.point_at(travelled);
            let found = self.closest(ClosestProbe::Shape(shape), at, f64::INFINITY)?;
            if let Some(hit) = found {
                profile.push((travelled, hit.distance));
            }
        }
        Ok(profile)
    }

    fn piece_distance(&self, piece: &Piece, pose: &Pose, shape: &dyn Shape) -> f64 {
        let (piece_pose, piece_shape) = piece.placed(self);
        distance(&piece_pose, piece_shape, pose, shape).map_or(f64::INFINITY, |d| d.distance)
    }

    fn piece_point(&self, piece: &Piece, pose: &Pose, shape: &ProbeShape) -> Option<DVec3> {
        let (piece_pose, piece_shape) = piece.placed(self);
        match closest_points(&piece_pose, piece_shape, pose, &*shape.shape, f64::INFINITY).ok()? {
            ClosestPoints::WithinMargin(p, _) => Some(p),
            _ => None,
        }
    }
}

/// A convex piece of the level: one mesh triangle, or a whole convex primitive (by body index).
enum Piece {
    Triangle(parry3d_f64::shape::Triangle),
    Body(usize),
}

impl Piece {
    fn placed<'a>(&'a self, view: &'a View) -> (Pose, &'a dyn Shape) {
        match self {
            Piece::Triangle(t) => (Pose::IDENTITY, t),
            Piece::Body(index) => {
                let body = &view.world.bodies[*index];
                (body.pose, &*body.shape)
            }
        }
    }
}

/// The minimum of a convex function on `[lo, hi]` by golden-section search (Kiefer 1953; Press et
/// al., Numerical Recipes, 3rd ed., 2007, §10.2), with the end points checked too.
pub(crate) fn minimize_convex(f: &dyn Fn(f64) -> f64, lo: f64, hi: f64) -> (f64, f64) {
    const INV_PHI: f64 = 0.618_033_988_749_894_9;
    let (mut a, mut b) = (lo, hi);
    let mut c = b - INV_PHI * (b - a);
    let mut d = a + INV_PHI * (b - a);
    let (mut fc, mut fd) = (f(c), f(d));
    while b - a > POSITION_TOLERANCE && fc.min(fd) > 0.0 {
        if fc <= fd {
            b = d;
            d = c;
            fd = fc;
            c = b - INV_PHI * (b - a);
            fc = f(c);
        } else {
            a = c;
            c = d;
            fc = fd;
            d = a + INV_PHI * (b - a);
            fd = f(d);
        }
    }
    [(lo, f(lo)), (hi, f(hi)), (c, fc), (d, fd)]
        .into_iter()
        .min_by(|x, y| x.1.total_cmp(&y.1).then(x.0.total_cmp(&y.0)))
        .expect("four candidates")
}
