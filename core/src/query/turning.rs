//! Turning sweeps: a convex shape moved along a polyline while it turns from each path point's
//! orientation to the next one's (spherical linear interpolation, the shorter way round), swept
//! continuously to each first contact by conservative advancement. Over a step of a segment no point
//! of the shape moves farther than the segment's length times the step plus, for the turn, the shape's
//! bounding radius times the angle turned (a chord is never longer than its arc), so a step as long as
//! the exact distance to the level cannot pass through anything (Mirtich 1996, as for jumps).

use glam::{DQuat, DVec3};

use super::QueryError;
use super::closest::{ClosestHit, ClosestProbe};
use super::jump::CONTACT_TOLERANCE;
use super::shapes::ProbeShape;
use super::sweep::SweepHit;
use super::world::{ObjectId, View};

/// The most advancement steps one turning sweep takes before giving up (a contact approached at a
/// grazing angle needs the most). Ours.
const MAX_STEPS: usize = 200_000;

/// A path whose shape turns: a point and an orientation for each path point.
#[derive(Debug, Clone, Copy)]
pub struct TurningPath<'a> {
    /// The shape's centre at each path point.
    pub points: &'a [DVec3],
    /// The shape's turn at each path point (unit quaternions).
    pub turns: &'a [DQuat],
}

impl TurningPath<'_> {
    /// The centre and turn `s` (0 to 1) of the way along segment `k`.
    pub fn pose(&self, k: usize, s: f64) -> (DVec3, DQuat) {
        (
            self.points[k].lerp(self.points[k + 1], s),
            self.turns[k].slerp(self.turns[k + 1], s),
        )
    }

    fn check(&self) -> Result<(), QueryError> {
        if self.points.len() < 2 || self.turns.len() != self.points.len() {
            return Err(QueryError::PathTooShort);
        }
        if let Some(bad) = self.points.iter().position(|p| !p.is_finite()) {
            return Err(QueryError::PathPointNotFinite(bad));
        }
        let moves = self
            .points
            .windows(2)
            .zip(self.turns.windows(2))
            .any(|(p, q)| p[0] != p[1] || q[0].angle_between(q[1]) > 0.0);
        if moves {
            Ok(())
        } else {
            Err(QueryError::PathHasNoLength)
        }
    }
}

impl View<'_> {
    /// The first contact of `shape` (its own turn replaced by the path's) along a turning path.
    pub fn sweep_turning_first(
        &self,
        shape: &ProbeShape,
        path: TurningPath,
    ) -> Result<Option<SweepHit>, QueryError> {
        path.check()?;
        self.first_turning_contact(shape, path)
    }

    /// Every object's first contact along a turning path, sorted by distance travelled (then by
    /// object).
    pub fn sweep_turning_all(
        &self,
        shape: &ProbeShape,
        path: TurningPath,
    ) -> Result<Vec<SweepHit>, QueryError> {
        path.check()?;
        let mut found: Vec<SweepHit> = Vec::new();
        // Each pass finds the next object met, looking past those already found.
        loop {
            let seen: Vec<ObjectId> = found.iter().map(|h| h.object).collect();
            match self.without(&seen).first_turning_contact(shape, path)? {
                Some(hit) => found.push(hit),
                None => break,
            }
        }
        found.sort_by(|a, b| a.t.total_cmp(&b.t).then(a.object.cmp(&b.object)));
        Ok(found)
    }

    fn first_turning_contact(
        &self,
        shape: &ProbeShape,
        path: TurningPath,
    ) -> Result<Option<SweepHit>, QueryError> {
        let lengths: Vec<f64> = path
            .points
            .windows(2)
            .map(|w| w[0].distance(w[1]))
            .collect();
        let total: f64 = lengths.iter().sum();
        let segments = lengths.len();
        // How far ahead the distance is measured; beyond it the shape steps this far at once.
        let horizon = shape.bounding_radius.max(1.0) * 4.0;
        let mut steps = 0;
        let mut travelled = 0.0;
        for (k, &length) in lengths.iter().enumerate() {
            let angle = path.turns[k].angle_between(path.turns[k + 1]);
            // The farthest any point of the shape moves per unit of the segment's parameter.
            let reach_per_unit = length + shape.bounding_radius * angle;
            let mut s = 0.0;
            loop {
                let (at, turn) = path.pose(k, s);
                let posed = shape.turned(turn);
                let near = self.closest(ClosestProbe::Shape(&posed), at, horizon)?;
                if let Some(hit) = near.filter(|h| h.distance <= CONTACT_TOLERANCE) {
                    // The fraction of the path: by length, or by segments for turns in place.
                    let t = if total > 0.0 {
                        (travelled + s * length) / total
                    } else {
                        (k as f64 + s) / segments as f64
                    };
                    let started = k == 0 && s == 0.0;
                    return Ok(Some(turning_hit(
                        hit,
                        (k, travelled + s * length, t),
                        (at, turn),
                        started,
                    )));
                }
                if s >= 1.0 || reach_per_unit == 0.0 {
                    break;
                }
                steps += 1;
                if steps > MAX_STEPS {
                    return Err(QueryError::NotConverged);
                }
                let distance = near.map_or(horizon, |h| h.distance);
                s = (s + distance / reach_per_unit).min(1.0);
            }
            travelled += length;
        }
        Ok(None)
    }
}

/// A turning sweep's contact as a sweep hit: `(segment, metres travelled, fraction)` and the pose.
fn turning_hit(
    hit: ClosestHit,
    (segment, distance, t): (usize, f64, f64),
    (position, rotation): (DVec3, DQuat),
    started_inside: bool,
) -> SweepHit {
    SweepHit {
        object: hit.object,
        distance,
        t,
        segment,
        position,
        rotation,
        point: hit.point,
        normal: hit.normal,
        started_inside: started_inside && hit.overlapping,
        triangle: None,
        material: hit.material,
    }
}
