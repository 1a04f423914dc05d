//! Jump probes: a shape thrown along a parabola under gravity, swept continuously to its first contact
//! with the level by conservative advancement — each step moves the shape no farther than its exact
//! distance to the level, so no contact between steps can be missed, and the steps shrink as the shape
//! closes in (Mirtich, B., "Impulse-based Dynamic Simulation of Rigid Body Systems", PhD thesis,
//! University of California, Berkeley, 1996, ch. 2, "conservative advancement"; from memory).

use glam::DVec3;

use super::QueryError;
use super::closest::{ClosestHit, ClosestProbe};
use super::shapes::ProbeShape;
use super::world::{MaterialId, ObjectId, View};

/// A launch: where the shape's centre starts, its velocity, and gravity.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Trajectory {
    /// The centre at time 0.
    pub from: DVec3,
    /// The velocity at time 0, metres per second.
    pub velocity: DVec3,
    /// Gravity's acceleration (pointing down), metres per second squared.
    pub gravity: DVec3,
}

impl Trajectory {
    /// The centre at time `t`.
    pub fn at(&self, t: f64) -> DVec3 {
        self.from + self.velocity * t + self.gravity * (0.5 * t * t)
    }

    /// The velocity at time `t`.
    pub fn velocity_at(&self, t: f64) -> DVec3 {
        self.velocity + self.gravity * t
    }

    /// The launch that starts at `from`, rises `apex` metres above it (along `up`, against gravity
    /// `g`) and comes down through `to`. `None` when `to` is not below the apex or `g` is not
    /// positive.
    pub fn through(from: DVec3, to: DVec3, apex: f64, g: f64, up: DVec3) -> Option<Trajectory> {
        let rise = (to - from).dot(up);
        if !(g > 0.0 && apex > 0.0 && apex >= rise) {
            return None;
        }
        // Up to the apex in v/g, down from it to the target's height in sqrt(2 (apex - rise) / g).
        let upward = (2.0 * g * apex).sqrt();
        let flight = upward / g + (2.0 * (apex - rise) / g).sqrt();
        let across = (to - from) - up * rise;
        Some(Trajectory {
            from,
            velocity: across / flight + up * upward,
            gravity: -up * g,
        })
    }
}

/// Where a thrown shape first touches the level.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct JumpHit {
    /// The object touched.
    pub object: ObjectId,
    /// Seconds from the launch.
    pub time: f64,
    /// The shape's centre at the contact.
    pub position: DVec3,
    /// The contact point on the object.
    pub point: DVec3,
    /// Unit normal from the object towards the shape.
    pub normal: DVec3,
    /// True when the shape overlaps the object at the launch, or touches it moving into it.
    pub started_inside: bool,
    /// The material of the surface touched, when the file names one.
    pub material: Option<MaterialId>,
}

/// The shape counts as touching when closer than this, metres: the accuracy of a jump's contact.
/// Ours: a micrometre, a thousandth of the millimetre users read.
pub const CONTACT_TOLERANCE: f64 = 1e-6;

/// Surfaces the shape touches at the launch and leaves are not counted until it is this far from
/// them, metres (a character jumping off the ground is not landing on it). Ours.
pub const LAUNCH_SKIN: f64 = 1e-3;

/// The most advancement steps one jump takes; a contact approached at a grazing angle needs the most.
/// Past it, the jump is an error (the search did not settle). Ours.
const MAX_STEPS: usize = 20_000;

impl View<'_> {
    /// The first contact of `shape` thrown along `arc`, within `max_time` seconds; `None` when it
    /// touches nothing before then or before it falls below `floor` (a height along `up`).
    pub fn jump(
        &self,
        shape: &ProbeShape,
        arc: &Trajectory,
        max_time: f64,
        floor: f64,
    ) -> Result<Option<JumpHit>, QueryError> {
        if !(arc.from.is_finite() && arc.velocity.is_finite() && arc.gravity.is_finite()) {
            return Err(QueryError::PositionNotFinite);
        }
        let up = -arc.gravity.normalize_or_zero();
        let probe = ClosestProbe::Shape(shape);
        // Objects touched at the launch (or overlapped by less than the skin) that the shape moves
        // away from; anything overlapped deeper, or moved into, is where it starts inside.
        let overlaps = self.overlap(shape, arc.from)?;
        let depth = |object: ObjectId| {
            overlaps
                .iter()
                .find(|o| o.object == object)
                .map_or(0.0, |o| o.depth)
        };
        let mut left: Vec<ObjectId> = Vec::new();
        while let Some(hit) = self
            .without(&left)
            .closest(probe.clone(), arc.from, LAUNCH_SKIN)?
        {
            if depth(hit.object) > LAUNCH_SKIN || hit.normal.dot(arc.velocity) <= 0.0 {
                return Ok(Some(contact(hit, 0.0, arc.from, true)));
            }
            left.push(hit.object);
        }
        // How far ahead the distance is measured; beyond it the shape steps this far at once.
        let horizon = shape.bounding_radius.max(1.0) * 4.0;
        let mut t = 0.0;
        for _ in 0..MAX_STEPS {
            let at = arc.at(t);
            if t > max_time || at.dot(up) < floor {
                return Ok(None);
            }
            let moving = arc.velocity_at(t);
            if !left.is_empty() {
                match self.closest(probe.clone(), at, LAUNCH_SKIN)? {
                    None => left.clear(),
                    // Coming back towards a surface it left: count it again.
                    Some(h) if left.contains(&h.object) && h.normal.dot(moving) <= 0.0 => {
                        left.retain(|o| *o != h.object)
                    }
                    Some(_) => {}
                }
            }
            let near = self.without(&left).closest(probe.clone(), at, horizon)?;
            let distance = near.map_or(horizon, |h| h.distance);
            if let Some(hit) = near.filter(|h| h.distance <= CONTACT_TOLERANCE) {
                return Ok(Some(contact(hit, t, at, false)));
            }
            // While near a surface it left, at most a skin at a time, so it is seen coming back.
            let reach = if left.is_empty() {
                distance
            } else {
                distance.min(LAUNCH_SKIN)
            };
            t += arc_step(arc, t, reach);
        }
        // Still short of a contact after every step (grazing all the way): say so rather than
        // report a landing that is not one.
        Err(QueryError::NotConverged)
    }
}

/// The longest time step over which no point of the shape moves farther than `reach`: the path
/// travelled in a time `s` is at most `|v| s + g s² / 2` (speed now plus what gravity adds), solved
/// for `s` in the form that stays exact when the speed is zero (at the top of a straight-up jump).
pub(crate) fn arc_step(arc: &Trajectory, t: f64, reach: f64) -> f64 {
    let speed = arc.velocity_at(t).length();
    let g = arc.gravity.length();
    2.0 * reach / (speed + (speed * speed + 2.0 * g * reach).sqrt())
}

fn contact(hit: ClosestHit, time: f64, position: DVec3, started_inside: bool) -> JumpHit {
    JumpHit {
        object: hit.object,
        time,
        position,
        point: hit.point,
        normal: hit.normal,
        started_inside,
        material: hit.material,
    }
}
