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
                let (u, d) = minimize_convex(&gap, 0.0, len, best.distance);
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
        let mut profile: Vec<(f64, f64)> = Vec::with_capacity(samples);
        let step = total / (samples - 1) as f64;
        for i in 0..samples {
            let travelled = total * i as f64 / (samples - 1) as f64;
            let at = geometry.point_at(travelled);
            // Moving `step` changes the distance by at most `step`, which bounds the search.
            let reach = profile
                .last()
                .map_or(f64::INFINITY, |(_, d)| d + step + 1e-9);
            let mut found = self.closest(ClosestProbe::Shape(shape), at, reach)?;
            if found.is_none() && reach.is_finite() {
                found = self.closest(ClosestProbe::Shape(shape), at, f64::INFINITY)?;
            }
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
                (body.pose, &**body.shape())
            }
        }
    }
}

/// The minimum of a convex function on `[lo, hi]` by golden-section search (Kiefer 1953; Press et
/// al., Numerical Recipes, 3rd ed., 2007, §10.2), with the end points checked too. It stops early,
/// returning a value above `give_up_above`, once convexity shows the minimum cannot be below it.
pub(crate) fn minimize_convex(
    f: &dyn Fn(f64) -> f64,
    lo: f64,
    hi: f64,
    give_up_above: f64,
) -> (f64, f64) {
    const INV_PHI: f64 = 0.618_033_988_749_894_9;
    let (mut a, mut b) = (lo, hi);
    let (f_lo, f_hi) = (f(lo), f(hi));
    let (mut fa, mut fb) = (f_lo, f_hi);
    let mut c = b - INV_PHI * (b - a);
    let mut d = a + INV_PHI * (b - a);
    let (mut fc, mut fd) = (f(c), f(d));
    while b - a > POSITION_TOLERANCE && fc.min(fd) > 0.0 {
        if convex_lower_bound([a, c, d, b], [fa, fc, fd, fb]) > give_up_above + GIVE_UP_MARGIN {
            break;
        }
        if fc <= fd {
            (b, fb) = (d, fd);
            (d, fd) = (c, fc);
            c = b - INV_PHI * (b - a);
            fc = f(c);
        } else {
            (a, fa) = (c, fc);
            (c, fc) = (d, fd);
            d = a + INV_PHI * (b - a);
            fd = f(d);
        }
    }
    [(lo, f_lo), (hi, f_hi), (c, fc), (d, fd), (a, fa), (b, fb)]
        .into_iter()
        .min_by(|x, y| x.1.total_cmp(&y.1).then(x.0.total_cmp(&y.0)))
        .expect("six candidates")
}

/// The search stops early only when the bound clears the value to beat by this much, so that
/// rounding in the distances (about 1e-12 m) can never drop a true minimum or a tie.
const GIVE_UP_MARGIN: f64 = 1e-7;

/// A lower bound of a convex function on `[x0, x3]` from its values at `x0 < x1 < x2 < x3`: outside
/// `[x1, x2]` the function lies above the line through its values at `x1` and `x2`; inside, above both
/// the line through `x0, x1` and the line through `x2, x3` (convexity: a chord's extension lies below
/// the graph; Boyd & Vandenberghe, "Convex Optimization", 2004, §3.1.3). `-inf` when a value is not
/// finite, so the caller never stops on it.
fn convex_lower_bound(x: [f64; 4], y: [f64; 4]) -> f64 {
    if y.iter().any(|v| !v.is_finite()) || x[1] <= x[0] || x[2] <= x[1] || x[3] <= x[2] {
        return f64::NEG_INFINITY;
    }
    let slope = |i: usize, j: usize| (y[j] - y[i]) / (x[j] - x[i]);
    let line = |i: usize, j: usize, at: f64| y[i] + slope(i, j) * (at - x[i]);
    // Outside [x1, x2]: the middle chord extended, lowest at an end of each outer interval.
    let outer = line(1, 2, x[0]).min(line(1, 2, x[3])).min(y[1]).min(y[2]);
    // Inside [x1, x2]: the higher of the two outer chords extended; its lowest point is where they
    // cross, or an end of the interval.
    let left = |at: f64| line(0, 1, at);
    let right = |at: f64| line(2, 3, at);
    let upper = |at: f64| left(at).max(right(at));
    let mut inner = upper(x[1]).min(upper(x[2]));
    let (s_left, s_right) = (slope(0, 1), slope(2, 3));
    if s_left != s_right {
        let cross = (y[2] - s_right * x[2] - y[0] + s_left * x[0]) / (s_left - s_right);
        if cross > x[1] && cross < x[2] {
            inner = inner.min(left(cross));
        }
    }
    outer.min(inner)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Convex test functions: |x − m| + h, (x − m)² + h, and a hinge max(0, x − m) + h.
    fn functions() -> Vec<Box<dyn Fn(f64) -> f64>> {
        let mut out: Vec<Box<dyn Fn(f64) -> f64>> = Vec::new();
        for m in [-0.7, 0.0, 0.13, 0.5, 0.99, 1.4] {
            for h in [0.0, 0.02, 1.0] {
                out.push(Box::new(move |x: f64| (x - m).abs() + h));
                out.push(Box::new(move |x: f64| (x - m) * (x - m) + h));
                out.push(Box::new(move |x: f64| (x - m).max(0.0) + h));
            }
        }
        out
    }

    #[test]
    fn the_convex_lower_bound_never_exceeds_the_minimum() {
        for f in functions() {
            for x in [
                [0.0, 0.2, 0.5, 1.0],
                [0.0, 0.38, 0.62, 1.0],
                [0.1, 0.11, 0.9, 0.95],
            ] {
                let bound = convex_lower_bound(x, x.map(&f));
                let minimum = (0..=10_000)
                    .map(|i| f(x[0] + (x[3] - x[0]) * i as f64 / 10_000.0))
                    .fold(f64::INFINITY, f64::min);
                assert!(bound <= minimum + 1e-12, "{x:?}: {bound} > {minimum}");
            }
        }
    }

    #[test]
    fn giving_up_early_never_loses_a_minimum_below_the_bound() {
        for f in functions() {
            let (_, exact) = minimize_convex(&*f, 0.0, 1.0, f64::INFINITY);
            // Asked to beat a value above the minimum: the same minimum comes back.
            let (_, found) = minimize_convex(&*f, 0.0, 1.0, exact + 1e-3);
            assert!((found - exact).abs() < 1e-7, "{found} vs {exact}");
            // Asked to beat a value below it: whatever comes back is not below the minimum.
            let (_, quick) = minimize_convex(&*f, 0.0, 1.0, exact - 0.01);
            assert!(quick >= exact - 1e-12);
        }
    }
}
