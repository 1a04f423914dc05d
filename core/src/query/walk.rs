//! Walk probes: a character's shape led over the ground from waypoint to waypoint the way game
//! character controllers move (common practice, from memory): each step lifts it by the step height,
//! moves it across with collide-and-slide (on a contact it goes as far as it can and slides along the
//! surface with what is left of the move), and puts it down again on the ground below, refusing ground
//! steeper than the slope limit and falling where there is no ground within a step. Every movement is
//! an exact sweep of the core; only the route is divided into steps.

use glam::DVec3;

use super::QueryError;
use super::shapes::ProbeShape;
use super::sweep::SweepHit;
use super::world::{ObjectId, View};

/// How a character walks: the most it steps up or down without falling, and the steepest ground it
/// stands on.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Gait {
    /// Metres.
    pub max_step: f64,
    /// Degrees from level.
    pub max_slope: f64,
}

/// Where a walk went and why it stopped, if it did.
#[derive(Debug, Clone, PartialEq)]
pub struct Walked {
    /// The character's centre after every step, from the start.
    pub path: Vec<DVec3>,
    /// How many waypoints after the start it reached.
    pub reached: usize,
    /// Why it stopped before the last waypoint; `None` when it got there.
    pub stop: Option<Stop>,
    /// The most the ground under it rose from one step to the next, metres.
    pub highest_step: f64,
    /// The steepest ground it stood on, degrees.
    pub steepest_slope: f64,
    /// The longest fall it took, metres.
    pub longest_fall: f64,
}

/// Why a walk stopped.
#[derive(Debug, Clone, PartialEq)]
pub enum Stop {
    /// No ground under the start within reach.
    NoGroundAtStart,
    /// Something in the way: the object it pressed against.
    Blocked(ObjectId),
    /// A step higher than the limit (its height, metres) on this object.
    StepTooHigh(ObjectId, f64),
    /// Ground steeper than the limit (its slope, degrees) on this object.
    TooSteep(ObjectId, f64),
    /// Walked off the level with nothing below.
    FellOff,
    /// Went round in place without getting nearer to the next waypoint.
    NoHeadway,
}

/// How far apart the character keeps from surfaces it touches, metres (so every next sweep starts
/// clear of them). Common practice; the value is ours.
pub const SKIN: f64 = 0.01;

/// How far below a step it looks before it counts as a fall, and how far a fall is followed, metres.
/// Ours.
const FALL_REACH: f64 = 200.0;

/// The shortest step tried before a step too high or too steep stops the walk, metres. Ours.
const SHORTEST_STRIDE: f64 = 0.04;

/// The most steps one walk takes (a 35 km route at the demo character's stride); a longer route is
/// refused rather than walked for minutes. Ours.
pub const MAX_WALK_STEPS: usize = 100_000;

/// Collide-and-slide passes per step (each a sweep). Common practice: three or four.
const SLIDES: usize = 4;

impl View<'_> {
    /// Leads the character (`shape`, its centre at each of `route`'s points in turn) along the route.
    pub fn walk(
        &self,
        shape: &ProbeShape,
        route: &[DVec3],
        gait: Gait,
    ) -> Result<Walked, QueryError> {
        if route.len() < 2 {
            return Err(QueryError::PathTooShort);
        }
        if let Some(bad) = route.iter().position(|p| !p.is_finite()) {
            return Err(QueryError::PathPointNotFinite(bad));
        }
        let up = self.world.up();
        let height = shape.extent_along(up) + shape.extent_along(-up);
        // A step is at most the shape's width across (shorter where a step would rise too high or
        // onto too steep ground: see below), so nothing it could stand on is stepped over.
        let stride = (2.0 * shape.extent_along(horizontal(DVec3::X, up).normalize_or(DVec3::Z)))
            .clamp(0.05, 1.0);
        let mut walked = Walked {
            path: Vec::new(),
            reached: 0,
            stop: None,
            highest_step: 0.0,
            steepest_slope: 0.0,
            longest_fall: 0.0,
        };
        let Some((start, ground)) = self.ground_below(shape, route[0], height + gait.max_step)?
        else {
            walked.stop = Some(Stop::NoGroundAtStart);
            return Ok(walked);
        };
        let planned: f64 = route
            .windows(2)
            .map(|w| horizontal(w[1] - w[0], up).length())
            .sum();
        if planned / stride > MAX_WALK_STEPS as f64 {
            return Err(QueryError::RouteTooLong(MAX_WALK_STEPS));
        }
        let mut at = start;
        let mut ground_at = ground.point;
        walked.path.push(at);
        for target in &route[1..] {
            let leg = horizontal(*target - at, up).length();
            let most_steps = (leg / stride * 4.0) as usize + 40;
            let mut steps = 0;
            loop {
                let ahead = horizontal(*target - at, up);
                if ahead.length() <= stride * 0.25 && (*target - at).dot(up).abs() <= height * 0.5 {
                    break;
                }
                steps += 1;
                if steps > most_steps {
                    walked.stop = Some(Stop::NoHeadway);
                    return Ok(walked);
                }
                // A step that would rise too high or onto too steep ground is tried again shorter
                // (a stride can span two stair treads, or reach past a slope's foot) before the
                // walk stops there.
                let mut move_by = ahead.clamp_length_max(stride);
                let stepped = loop {
                    match self.step(shape, (at, &mut ground_at), move_by, gait, &mut walked)? {
                        Err(Stop::StepTooHigh(..) | Stop::TooSteep(..))
                            if move_by.length() > SHORTEST_STRIDE =>
                        {
                            move_by *= 0.5;
                        }
                        other => break other,
                    }
                };
                match stepped {
                    Ok(next) => {
                        at = next;
                        walked.path.push(at);
                    }
                    Err(stop) => {
                        walked.stop = Some(stop);
                        return Ok(walked);
                    }
                }
            }
            walked.reached += 1;
        }
        Ok(walked)
    }

    /// One step from `at` (standing on ground touched at `ground_at`, updated) by the horizontal
    /// `move_by`: up, across with slides, down. The new centre, or why it cannot go on.
    fn step(
        &self,
        shape: &ProbeShape,
        (at, ground_at): (DVec3, &mut DVec3),
        move_by: DVec3,
        gait: Gait,
        walked: &mut Walked,
    ) -> Result<Result<DVec3, Stop>, QueryError> {
        let up = self.world.up();
        // Up by the step height, or as far as the headroom allows.
        let lift = match self.sweep_first(shape, &[at, at + up * gait.max_step])? {
            Some(hit) => (hit.distance - SKIN).max(0.0),
            None => gait.max_step,
        };
        let lifted = at + up * lift;
        let (across, blocker) = self.slide(shape, lifted, move_by, up)?;
        // Down to the ground: a step down as high as a step up is walked, deeper is a fall.
        let (landed, ground) = match self.ground_below(shape, across, lift + gait.max_step)? {
            Some(found) => found,
            None => match self.ground_below(shape, across, FALL_REACH)? {
                Some((landed, ground)) => {
                    walked.longest_fall = walked.longest_fall.max((at - landed).dot(up));
                    (landed, ground)
                }
                None => return Ok(Err(Stop::FellOff)),
            },
        };
        let slope = self.ground_slope(&ground, landed)?;
        if slope > gait.max_slope {
            return Ok(Err(Stop::TooSteep(ground.object, slope)));
        }
        // The step is how far the ground it stands on rose (a round-bottomed shape can rest on a
        // step's edge a little higher than it lifts, so the contacts are compared, not the shape).
        let rise = (ground.point - *ground_at).dot(up);
        if rise > gait.max_step + 1e-9 {
            return Ok(Err(Stop::StepTooHigh(ground.object, rise)));
        }
        let wanted = move_by.length();
        let made = horizontal(landed - at, up).dot(move_by / wanted);
        if made < wanted * 0.02 {
            return Ok(Err(self.why_blocked(shape, at, move_by, gait, blocker)?));
        }
        walked.highest_step = walked.highest_step.max(rise);
        walked.steepest_slope = walked.steepest_slope.max(slope);
        *ground_at = ground.point;
        Ok(Ok(landed))
    }

    /// Moves the shape by `move_by` from `from`, sliding along what it meets; where it ends and the
    /// last object it met.
    fn slide(
        &self,
        shape: &ProbeShape,
        from: DVec3,
        move_by: DVec3,
        up: DVec3,
    ) -> Result<(DVec3, Option<ObjectId>), QueryError> {
        let (mut at, mut left, mut blocker) = (from, move_by, None);
        for _ in 0..SLIDES {
            let length = left.length();
            if length < 1e-9 {
                break;
            }
            let Some(hit) = self.sweep_first(shape, &[at, at + left])? else {
                at += left;
                break;
            };
            blocker = Some(hit.object);
            if hit.started_inside {
                break;
            }
            // Up to the contact, then a skin back out along the surface's normal.
            at += left / length * hit.distance + hit.normal * SKIN;
            // What is left of the move, along the surface and across the level.
            let rest = left / length * (length - hit.distance);
            let along = rest - hit.normal * rest.dot(hit.normal);
            left = horizontal(along, up);
        }
        Ok((at, blocker))
    }

    /// The shape's centre resting on the ground below `at` (a skin above it) within `reach`, and the
    /// contact.
    pub(crate) fn ground_below(
        &self,
        shape: &ProbeShape,
        at: DVec3,
        reach: f64,
    ) -> Result<Option<(DVec3, SweepHit)>, QueryError> {
        let up = self.world.up();
        let down = at - up * (reach + SKIN);
        Ok(self.sweep_first(shape, &[at, down])?.map(|hit| {
            let rest = (hit.distance - SKIN).max(0.0);
            (at - up * rest, hit)
        }))
    }

    /// The slope of the ground under a contact, degrees. A shape resting on an edge (a stair's
    /// nosing) touches it with a normal that is neither face's, so the faces on either side of the
    /// contact are found with short rays straight down just beside it, and the flatter one counts;
    /// on an even slope both are the slope itself.
    fn ground_slope(&self, ground: &SweepHit, centre: DVec3) -> Result<f64, QueryError> {
        let up = self.world.up();
        let slope = |n: DVec3| n.dot(up).clamp(-1.0, 1.0).acos().to_degrees();
        let beside = horizontal(centre - ground.point, up).normalize_or_zero() * 0.01;
        let mut flattest: Option<f64> = None;
        for probe in [ground.point + beside, ground.point - beside] {
            if let Some(face) = self.ray_first(probe + up * 0.05, probe - up * 0.05)? {
                let s = slope(face.normal);
                flattest = Some(flattest.map_or(s, |f| f.min(s)));
            }
        }
        Ok(flattest.unwrap_or_else(|| slope(ground.normal)))
    }

    /// Why the step from `at` by `move_by` made no headway: a step higher than the limit when the
    /// obstacle's top is not far above the feet, else the object in the way.
    fn why_blocked(
        &self,
        shape: &ProbeShape,
        at: DVec3,
        move_by: DVec3,
        gait: Gait,
        blocker: Option<ObjectId>,
    ) -> Result<Stop, QueryError> {
        let up = self.world.up();
        let feet = at - up * (shape.extent_along(-up) + SKIN);
        // Straight down just past where the shape's front meets the obstacle.
        let reach = shape.extent_along(move_by.normalize()) + 0.05;
        let over = feet + move_by.normalize() * reach;
        let top = over + up * (gait.max_step * 4.0);
        if let Some(hit) = self.ray_first(top, over - up * 0.001)? {
            let rise = (hit.point - feet).dot(up);
            if rise > gait.max_step {
                return Ok(Stop::StepTooHigh(hit.object, rise));
            }
        }
        Ok(blocker.map_or(Stop::NoHeadway, Stop::Blocked))
    }
}

/// `v` without its component along `up`.
fn horizontal(v: DVec3, up: DVec3) -> DVec3 {
    v - up * v.dot(up)
}
