//! Settle probes: a shape let go at a pose as a rigid body under gravity against the static level,
//! simulated with rapier3d-f64 (the same parry3d-f64 shapes as the query core: the level's bodies are
//! handed to it as they are) until it comes to rest, falls out of the world, or time runs out.
//!
//! This is a physics step, not an exact query: the answer is where the engine puts the body, stepped
//! at a fixed rate on one thread, so it is the same on every run of the same program whatever the
//! thread count. The rest thresholds are documented constants of common practice (ours).

use glam::{DQuat, DVec3};
use rapier3d_f64::prelude::{ColliderBuilder, PhysicsWorld, RigidBodyBuilder};

use super::QueryError;
use super::shapes::ProbeShape;
use super::world::{ObjectId, View};

/// Below this speed, metres per second, a body counts as still (common practice; ours).
pub const REST_SPEED: f64 = 0.01;
/// Below this turning rate, radians per second, a body counts as still (common practice; ours).
pub const REST_SPIN: f64 = 0.05;
/// How long a body must stay still to be at rest, seconds (ours).
pub const REST_HOLD: f64 = 0.5;
/// The simulation's time step, seconds (rapier's default, 60 steps a second).
pub const SETTLE_STEP: f64 = 1.0 / 60.0;
/// How often the body's way is recorded for drawing, seconds.
const TRACE_EVERY: f64 = 0.1;
/// How far below the level's lowest point a body has fallen out of the world, metres (ours).
const FALL_MARGIN: f64 = 10.0;

/// The material of the simulated body (and of the level where it touches it).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Material {
    /// Mass per cubic metre, kg/m³.
    pub density: f64,
    /// Coulomb friction coefficient, used for the level's surfaces too.
    pub friction: f64,
    /// Bounciness, 0 (none) to 1.
    pub restitution: f64,
}

/// How a settle ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SettleEnd {
    /// Came to rest.
    Rests,
    /// Still moving when time ran out.
    StillMoving,
    /// Fell below the level.
    FellOut,
}

/// Where a let-go body ended up.
#[derive(Debug, Clone, PartialEq)]
pub struct Settled {
    /// How it ended.
    pub end: SettleEnd,
    /// Its centre at the end.
    pub position: DVec3,
    /// Its turn at the end.
    pub rotation: DQuat,
    /// Seconds until it came to rest (or until it stopped being followed).
    pub time: f64,
    /// Its centre every tenth of a second, from the start to the end.
    pub path: Vec<DVec3>,
    /// The object it rests on (the first it touches at the end), if any.
    pub support: Option<ObjectId>,
}

impl View<'_> {
    /// Lets `shape` go at `at` (with its own turn) and simulates it for at most `max_time` seconds.
    pub fn settle(
        &self,
        shape: &ProbeShape,
        at: DVec3,
        material: Material,
        max_time: f64,
    ) -> Result<Settled, QueryError> {
        if !at.is_finite() {
            return Err(QueryError::PositionNotFinite);
        }
        let up = self.world.up();
        let mut physics = PhysicsWorld::new();
        physics.gravity = -up * crate::probe::STANDARD_GRAVITY;
        physics.integration_parameters.dt = SETTLE_STEP;
        let level = physics.insert_body(RigidBodyBuilder::fixed());
        for leaf in 0..self.world.bodies.len() as u32 {
            let Some(body) = self.body(leaf) else {
                continue;
            };
            let collider = ColliderBuilder::new(body.shape().clone())
                .position(body.pose)
                .friction(material.friction)
                .restitution(material.restitution)
                .user_data(body.object as u128);
            physics.insert_collider(collider, Some(level));
        }
        let (handle, own) = physics.insert(
            RigidBodyBuilder::dynamic()
                .pose(shape.pose_at(at))
                .ccd_enabled(true)
                .can_sleep(false),
            ColliderBuilder::new(shape.shape.clone())
                .density(material.density)
                .friction(material.friction)
                .restitution(material.restitution),
        );
        let lowest = self
            .world
            .bounds()
            .map_or(at.dot(up), |(lo, hi)| lo.dot(up).min(hi.dot(up)))
            - FALL_MARGIN;
        let steps = (max_time / SETTLE_STEP).ceil() as usize;
        let trace_every = (TRACE_EVERY / SETTLE_STEP).round() as usize;
        let mut path = vec![at];
        let mut still_since: Option<usize> = None;
        let mut end = SettleEnd::StillMoving;
        let mut stopped = steps;
        for step in 1..=steps {
            physics.step();
            let body = &physics.bodies[handle];
            let centre = body.translation();
            if step % trace_every == 0 {
                path.push(centre);
            }
            if centre.dot(up) < lowest {
                (end, stopped) = (SettleEnd::FellOut, step);
                break;
            }
            let still = body.linvel().length() < REST_SPEED && body.angvel().length() < REST_SPIN;
            match (still, still_since) {
                (false, _) => still_since = None,
                (true, None) => still_since = Some(step),
                (true, Some(since)) if (step - since) as f64 * SETTLE_STEP >= REST_HOLD => {
                    (end, stopped) = (SettleEnd::Rests, since);
                    break;
                }
                (true, Some(_)) => {}
            }
        }
        let body = &physics.bodies[handle];
        let pose = *body.position();
        if path.last() != Some(&pose.translation) {
            path.push(pose.translation);
        }
        let support = physics
            .contact_pairs_with(own)
            .filter(|pair| pair.has_any_active_contact())
            .filter_map(|pair| {
                let other = if pair.collider1 == own {
                    pair.collider2
                } else {
                    pair.collider1
                };
                physics
                    .colliders
                    .get(other)
                    .map(|c| c.user_data as ObjectId)
            })
            .min();
        Ok(Settled {
            end,
            position: pose.translation,
            rotation: pose.rotation,
            time: stopped as f64 * SETTLE_STEP,
            path,
            support,
        })
    }
}
