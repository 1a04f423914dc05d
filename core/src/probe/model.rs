//! Probes as users write them (SPEC §2): what each asks, which objects it looks at, what it expects.

use glam::{DQuat, DVec3};
use serde::{Deserialize, Serialize};

use super::rules::{FromRule, Rule};
use crate::level::ShapeSpec;
use crate::query::Filter;

/// A probe set: the level it is about, its probes and its rules, in file order.
#[derive(Debug, Clone, PartialEq)]
pub struct ProbeSet {
    /// The JSON Schema the file names (`"$schema"`), kept when the set is saved.
    pub schema: Option<String>,
    /// The level file, as written (relative to the probe set's folder).
    pub level: String,
    /// The probes, in order.
    pub probes: Vec<Probe>,
    /// The rules, in order (their probes are made on the level: [`crate::check::expand_rules`]).
    pub rules: Vec<Rule>,
}

/// A probe's id: held inline when it is short (up to 23 bytes, as nearly every id is), so that
/// each of the probe's results takes a copy of it without reaching other memory or a shared count.
pub type ProbeId = smol_str::SmolStr;

/// One probe: a question about the level, and optionally the answer it should get.
#[derive(Debug, Clone, PartialEq)]
pub struct Probe {
    /// Unique id in the set, `[A-Za-z0-9._-]+`.
    pub id: ProbeId,
    /// What a designer is checking, in words.
    pub label: Option<String>,
    /// Which objects the probe looks at.
    pub filter: Filter,
    /// The question.
    pub query: ProbeQuery,
    /// The expected answer; `None` leaves the probe unchecked.
    pub expect: Option<Expect>,
    /// The rule that gave this probe, when a rule did (such probes are not saved: their rule is).
    pub from_rule: Option<FromRule>,
}

/// Whether a ray or sweep reports its first hit or every hit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum HitsMode {
    /// Only the first hit.
    First,
    /// Every hit (every crossing for rays, every object touched for sweeps).
    All,
}

/// The kinds of probe, as named in files (`"kind"`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum ProbeKind {
    /// A segment: its first or every crossing.
    Ray,
    /// A shape moved along a path.
    Sweep,
    /// The nearest object to a point or a shape.
    Closest,
    /// Every object a placed shape overlaps.
    Overlap,
    /// Where a placed shape rests: its gap to the support below, or how deep it sinks in.
    Rest,
    /// Which of a set of spots see which.
    Sightlines,
    /// What share of a region a set of spots sees.
    Coverage,
    /// A shape thrown along a parabola under gravity: where it lands.
    Jump,
    /// A character led over the ground along waypoints: whether it gets there.
    Walk,
    /// Which of a region's ground a character walks to from its start spots, and which targets.
    Reach,
    /// A shape let go as a rigid body: where it comes to rest.
    Settle,
}

impl ProbeKind {
    /// True for the kinds whose answers cast rays (ray probes, and sightlines, coverage, walks
    /// and reach maps, which look for ground, walls and lines of sight with them).
    pub fn casts_rays(self) -> bool {
        matches!(
            self,
            ProbeKind::Ray
                | ProbeKind::Sightlines
                | ProbeKind::Coverage
                | ProbeKind::Walk
                | ProbeKind::Reach
        )
    }

    /// Every kind, in the order the documentation lists them.
    pub const ALL: [ProbeKind; 11] = [
        ProbeKind::Ray,
        ProbeKind::Sweep,
        ProbeKind::Closest,
        ProbeKind::Overlap,
        ProbeKind::Rest,
        ProbeKind::Sightlines,
        ProbeKind::Coverage,
        ProbeKind::Jump,
        ProbeKind::Walk,
        ProbeKind::Reach,
        ProbeKind::Settle,
    ];

    /// The kind's name as written in files.
    pub fn name(self) -> &'static str {
        match self {
            ProbeKind::Ray => "ray",
            ProbeKind::Sweep => "sweep",
            ProbeKind::Closest => "closest",
            ProbeKind::Overlap => "overlap",
            ProbeKind::Rest => "rest",
            ProbeKind::Sightlines => "sightlines",
            ProbeKind::Coverage => "coverage",
            ProbeKind::Jump => "jump",
            ProbeKind::Walk => "walk",
            ProbeKind::Reach => "reach",
            ProbeKind::Settle => "settle",
        }
    }

    /// The kind with this name, if there is one.
    pub fn from_name(name: &str) -> Option<ProbeKind> {
        ProbeKind::ALL.into_iter().find(|k| k.name() == name)
    }
}

impl std::fmt::Display for ProbeKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

/// The question a probe asks, by kind.
#[derive(Debug, Clone, PartialEq)]
pub enum ProbeQuery {
    /// The segment `from → to`.
    Ray {
        /// Start.
        from: DVec3,
        /// End.
        to: DVec3,
        /// First or all hits; `None` when the file leaves it out (first).
        hits: Option<HitsMode>,
    },
    /// A shape moved along a polyline.
    Sweep {
        /// The moving shape (not a point).
        shape: ShapeSpec,
        /// Its constant turn; `None` when the file leaves it out.
        rotation: Option<DQuat>,
        /// The centre's path, two or more points.
        path: Vec<DVec3>,
        /// First or all hits.
        hits: Option<HitsMode>,
        /// Seconds for the whole path, for `time` on hits.
        duration: Option<f64>,
        /// Whether to report the least clearance over the path.
        clearance: Option<bool>,
        /// How the shape turns along the path (instead of one constant turn).
        turns: Option<Turns>,
    },
    /// The nearest object to a point or shape.
    Closest {
        /// A shape, or `point`.
        shape: ShapeSpec,
        /// Where it is placed.
        at: DVec3,
        /// Its turn.
        rotation: Option<DQuat>,
        /// How far to look, metres.
        max_distance: f64,
    },
    /// Every object a placed shape overlaps.
    Overlap {
        /// The shape (not a point).
        shape: ShapeSpec,
        /// Where it is placed.
        at: DVec3,
        /// Its turn.
        rotation: Option<DQuat>,
    },
    /// Where a placed shape rests on the level below it (along the level's down).
    Rest {
        /// The shape (not a point).
        shape: ShapeSpec,
        /// Where it is placed.
        at: DVec3,
        /// Its turn.
        rotation: Option<DQuat>,
        /// How far below to look for a support, metres (default [`REST_SEARCH`]).
        search: Option<f64>,
    },
    /// Which spots see which: a sightline between every pair.
    Sightlines {
        /// The spots.
        spots: Spots,
    },
    /// What share of a region's surfaces the spots see.
    Coverage {
        /// The spots seeing.
        spots: Spots,
        /// The region: surfaces inside this box, sampled on a grid.
        region: Region,
        /// The grid's spacing, metres.
        spacing: f64,
    },
    /// A shape thrown from a spot under gravity, to where it first touches the level.
    Jump {
        /// The thrown shape (not a point).
        shape: ShapeSpec,
        /// Its constant turn.
        rotation: Option<DQuat>,
        /// Where its centre starts.
        from: DVec3,
        /// How it is thrown.
        launch: Launch,
        /// Gravity, metres per second squared (default [`STANDARD_GRAVITY`]).
        gravity: Option<f64>,
        /// The steepest ground a character stands on, degrees (default [`MAX_WALKABLE_SLOPE`]).
        max_slope: Option<f64>,
        /// How long to follow it, seconds (default [`JUMP_TIME`]).
        max_time: Option<f64>,
    },
    /// A shape let go at a pose as a rigid body under gravity: where it comes to rest.
    Settle {
        /// The body's shape (not a point).
        shape: ShapeSpec,
        /// Where its centre starts.
        at: DVec3,
        /// Its turn at the start.
        rotation: Option<DQuat>,
        /// Mass per cubic metre, kg/m³ (default [`SETTLE_DENSITY`]).
        density: Option<f64>,
        /// Friction coefficient, the level's surfaces' too (default [`SETTLE_FRICTION`]).
        friction: Option<f64>,
        /// Bounciness from 0 to 1 (default 0).
        restitution: Option<f64>,
        /// How long to follow it, seconds (default [`SETTLE_TIME`]).
        max_time: Option<f64>,
    },
    /// A character led over the ground from waypoint to waypoint.
    Walk {
        /// The character's shape (not a point).
        shape: ShapeSpec,
        /// The waypoints: where the character's centre stands at each, two or more.
        path: Vec<DVec3>,
        /// The highest step it takes, metres (default [`MAX_STEP`]).
        max_step: Option<f64>,
        /// The steepest ground it stands on, degrees (default [`MAX_WALKABLE_SLOPE`]).
        max_slope: Option<f64>,
    },
    /// Which of a region's walkable ground a character reaches from its start spots.
    Reach {
        /// The character's shape (not a point).
        shape: ShapeSpec,
        /// Where its centre starts (named points; tagged objects, `eye` above their tops).
        spots: Spots,
        /// The region whose ground is mapped (a box; no outline).
        region: Region,
        /// The grid's spacing, metres.
        spacing: f64,
        /// Places to get to: named points, and objects with these tags (their centres).
        targets: Vec<Spot>,
        /// Objects with any of these tags are targets too.
        target_tags: Vec<String>,
        /// The highest step it takes, metres (default [`MAX_STEP`]).
        max_step: Option<f64>,
        /// The steepest ground it stands on, degrees (default [`MAX_WALKABLE_SLOPE`]).
        max_slope: Option<f64>,
    },
}

/// How near a reached cell's ground must be to a target for the target to count as reached,
/// metres: about an arm's reach (common practice, from memory).
pub const TARGET_REACH: f64 = 1.0;

/// The highest step a character takes when the probe does not say, metres: common practice in
/// character controllers (from memory: 0.3 to 0.45 m).
pub const MAX_STEP: f64 = 0.35;

/// How a sweep's shape turns along its path: an orientation at each path point, reached from the
/// previous one by spherical linear interpolation.
#[derive(Debug, Clone, PartialEq)]
pub enum Turns {
    /// Unit quaternions `[x, y, z, w]`, one per path point (`"turns"` in files).
    Quaternions(Vec<DQuat>),
    /// Degrees about the level's up axis, one per path point (`"yaw"` in files).
    Yaw(Vec<f64>),
}

impl Turns {
    /// The orientation at each path point, on a level whose up axis is `up`.
    pub fn orientations(&self, up: DVec3) -> Vec<DQuat> {
        match self {
            Turns::Quaternions(q) => q.clone(),
            Turns::Yaw(degrees) => degrees
                .iter()
                .map(|d| DQuat::from_axis_angle(up, d.to_radians()))
                .collect(),
        }
    }

    /// How many path points it gives an orientation for.
    pub fn len(&self) -> usize {
        match self {
            Turns::Quaternions(q) => q.len(),
            Turns::Yaw(d) => d.len(),
        }
    }

    /// True when it gives none.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
}

/// How a jump is thrown: a velocity, or a target to come down through after rising to an apex.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Launch {
    /// The velocity at the launch, metres per second.
    Velocity(DVec3),
    /// Rise `apex` metres above the start, then come down through `to`.
    Target {
        /// A point the centre passes through on the way down.
        to: DVec3,
        /// The highest point's height above the start, metres.
        apex: f64,
    },
}

/// Standard gravity, m/s²: the conventional value fixed by the 3rd General Conference on Weights and
/// Measures (CGPM, 1901), as in ISO 80000-3.
pub const STANDARD_GRAVITY: f64 = 9.80665;

/// The steepest slope a character stands on when a probe does not say, degrees: 45° is common
/// practice in character controllers (from memory).
pub const MAX_WALKABLE_SLOPE: f64 = 45.0;

/// How long a jump is followed when the probe does not say, seconds. Ours: a fall of about 490 m.
pub const JUMP_TIME: f64 = 10.0;

/// Density of a settled body when the probe does not say, kg/m³: about that of wood (from memory).
pub const SETTLE_DENSITY: f64 = 500.0;

/// Friction of a settled body and of the level when the probe does not say: 0.5, a common default of
/// physics engines for dry surfaces (from memory).
pub const SETTLE_FRICTION: f64 = 0.5;

/// How long a settle probe is followed when it does not say, seconds. Ours.
pub const SETTLE_TIME: f64 = 10.0;

/// The longest a settle probe may ask to be followed, seconds: ten minutes of simulated time, 36,000
/// steps (a bound on the work one probe from a file can ask for). Ours.
pub const MAX_SETTLE_TIME: f64 = 600.0;

/// How far below a rest probe looks for a support when the file does not say, metres. Ours.
pub const REST_SEARCH: f64 = 2.0;

/// A set of spots: named points, and the objects with some tags (each an eye height above its top).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Spots {
    /// Named points.
    pub points: Vec<Spot>,
    /// Objects with any of these tags are spots too.
    pub tags: Vec<String>,
    /// How far above the top of a tagged object its spot is, metres (default [`EYE_HEIGHT`]).
    pub eye: Option<f64>,
}

/// The eye height above a tagged object when the file does not say: a standing person's eyes,
/// common practice (from memory: about 1.6–1.7 m).
pub const EYE_HEIGHT: f64 = 1.7;

/// A named point.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Spot {
    /// Its name, unique in its set.
    pub name: String,
    /// Where it is.
    pub at: [f64; 3],
}

/// A box of level space, optionally cut to an outline.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Region {
    /// Lowest corner.
    pub min: [f64; 3],
    /// Highest corner.
    pub max: [f64; 3],
    /// A polygon, seen along the level's up axis: only what lies inside it (by the even–odd rule)
    /// and inside the box is sampled. Its points' height does not matter.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outline: Option<Vec<[f64; 3]>>,
}

impl Region {
    /// True when `p` lies in the box and, seen along `up`, inside the outline (when there is one).
    pub fn contains(&self, p: DVec3, up: DVec3) -> bool {
        let (lo, hi) = (DVec3::from_array(self.min), DVec3::from_array(self.max));
        if p.cmplt(lo).any() || p.cmpgt(hi).any() {
            return false;
        }
        let Some(outline) = &self.outline else {
            return true;
        };
        let (_, i, j) = crate::query::level_axes(up);
        let corners: Vec<DVec3> = outline.iter().map(|c| DVec3::from_array(*c)).collect();
        crate::query::inside_outline(&corners, (p[i], p[j]), (i, j))
    }
}

impl ProbeQuery {
    /// The probe's kind.
    pub fn kind(&self) -> ProbeKind {
        match self {
            ProbeQuery::Ray { .. } => ProbeKind::Ray,
            ProbeQuery::Sweep { .. } => ProbeKind::Sweep,
            ProbeQuery::Closest { .. } => ProbeKind::Closest,
            ProbeQuery::Overlap { .. } => ProbeKind::Overlap,
            ProbeQuery::Rest { .. } => ProbeKind::Rest,
            ProbeQuery::Sightlines { .. } => ProbeKind::Sightlines,
            ProbeQuery::Coverage { .. } => ProbeKind::Coverage,
            ProbeQuery::Jump { .. } => ProbeKind::Jump,
            ProbeQuery::Walk { .. } => ProbeKind::Walk,
            ProbeQuery::Reach { .. } => ProbeKind::Reach,
            ProbeQuery::Settle { .. } => ProbeKind::Settle,
        }
    }

    /// The points a user places and drags: the ray's ends, the path's points, or where the shape is.
    pub fn points(&self) -> Vec<DVec3> {
        match self {
            ProbeQuery::Ray { from, to, .. } => vec![*from, *to],
            ProbeQuery::Sweep { path, .. } | ProbeQuery::Walk { path, .. } => path.clone(),
            ProbeQuery::Closest { at, .. }
            | ProbeQuery::Overlap { at, .. }
            | ProbeQuery::Rest { at, .. }
            | ProbeQuery::Settle { at, .. } => vec![*at],
            ProbeQuery::Sightlines { spots } => spot_points(spots),
            ProbeQuery::Coverage { spots, region, .. } => {
                let mut points = spot_points(spots);
                points.push(DVec3::from_array(region.min));
                points.push(DVec3::from_array(region.max));
                points
            }
            ProbeQuery::Jump { from, launch, .. } => match launch {
                Launch::Velocity(_) => vec![*from],
                Launch::Target { to, .. } => vec![*from, *to],
            },
            ProbeQuery::Reach {
                spots,
                region,
                targets,
                ..
            } => {
                let mut points = spot_points(spots);
                points.extend(targets.iter().map(|t| DVec3::from_array(t.at)));
                points.push(DVec3::from_array(region.min));
                points.push(DVec3::from_array(region.max));
                points
            }
        }
    }

    /// The `k`th of [`Self::points`], to move it; `None` past the end.
    pub fn point_mut(&mut self, k: usize) -> Option<&mut DVec3> {
        match self {
            ProbeQuery::Ray { from, to, .. } => match k {
                0 => Some(from),
                1 => Some(to),
                _ => None,
            },
            ProbeQuery::Sweep { path, .. } | ProbeQuery::Walk { path, .. } => path.get_mut(k),
            ProbeQuery::Closest { at, .. }
            | ProbeQuery::Overlap { at, .. }
            | ProbeQuery::Rest { at, .. }
            | ProbeQuery::Settle { at, .. } => (k == 0).then_some(at),
            ProbeQuery::Jump { from, launch, .. } => match (k, launch) {
                (0, _) => Some(from),
                (1, Launch::Target { to, .. }) => Some(to),
                _ => None,
            },
            // Spots and region corners are edited as numbers, not dragged.
            ProbeQuery::Sightlines { .. }
            | ProbeQuery::Coverage { .. }
            | ProbeQuery::Reach { .. } => None,
        }
    }

    /// True when a sweep asks for its clearance (directly or through `min_clearance`).
    pub fn wants_clearance(&self, expect: Option<&Expect>) -> bool {
        match self {
            ProbeQuery::Sweep { clearance, .. } => {
                clearance.unwrap_or(false)
                    || expect.is_some_and(|e| e.conditions().min_clearance.is_some())
            }
            _ => false,
        }
    }
}

/// The named points of a set of spots.
fn spot_points(spots: &Spots) -> Vec<DVec3> {
    spots
        .points
        .iter()
        .map(|s| DVec3::from_array(s.at))
        .collect()
}

/// What a probe expects: `"clear"`, `"blocked"`, or a set of conditions that must all hold.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(untagged)]
pub enum Expect {
    /// `"clear"` or `"blocked"`.
    Word(ExpectWord),
    /// Conditions that must all hold.
    Conditions(Box<Conditions>),
}

/// The one-word expectations.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum ExpectWord {
    /// No hit, no overlap, nothing within reach.
    Clear,
    /// The opposite of clear.
    Blocked,
}

/// Conditions on a probe's answer; every given one must hold.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Conditions {
    /// Blocked (true) or clear (false).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub blocked: Option<bool>,
    /// The first object hit (or nearest, or deepest overlapped) has this name.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub first_object: Option<String>,
    /// The first object hit has this tag.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub first_tag: Option<String>,
    /// The first hit's distance lies in this range.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        deserialize_with = "crate::json_object::optional_object"
    )]
    pub distance: Option<Range>,
    /// A sweep stays at least this far from everything.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub min_clearance: Option<f64>,
    /// An overlap's deepest penetration is at most this.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_depth: Option<f64>,
    /// Sightlines: these pairs of spots see each other.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub see: Option<Vec<[String; 2]>>,
    /// Sightlines: these pairs of spots do not see each other.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub blind: Option<Vec<[String; 2]>>,
    /// Sightlines: every spot sees at least this many others.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub min_seen: Option<usize>,
    /// Coverage: the share of the region seen (0 to 1) lies in this range.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        deserialize_with = "crate::json_object::optional_object"
    )]
    pub seen: Option<Range>,
    /// Jump: it lands on ground a character can stand on (true) or too steep to (false).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub walkable: Option<bool>,
    /// Jump: the centre where it lands lies inside this region.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        deserialize_with = "crate::json_object::optional_object"
    )]
    pub lands_within: Option<Region>,
    /// Walk: it reaches the last waypoint (true) or does not (false).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reaches: Option<bool>,
    /// Walk: the way it takes is at most this many metres longer than the route.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_detour: Option<f64>,
    /// Reach: these targets are reached.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reachable: Option<Vec<String>>,
    /// Reach: these targets are not reached.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub unreachable: Option<Vec<String>>,
    /// Settle: the body comes to rest at most this far from where it was put, metres.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_move: Option<f64>,
    /// Settle: the body comes to rest turned at most this much from how it was put, degrees.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_turn: Option<f64>,
    /// Volumes (by name or tag) the probe is in at some point of its way.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub enters: Option<Vec<String>>,
    /// Volumes (by name or tag) the probe is never in.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub never_enters: Option<Vec<String>>,
    /// Volumes (by name or tag) the probe is in at the end of its way.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ends_inside: Option<Vec<String>>,
}

/// A closed range of metres; either end may be left open.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Range {
    /// Lower bound.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub min: Option<f64>,
    /// Upper bound.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max: Option<f64>,
}

impl Expect {
    /// The expectation as conditions (`"clear"` is `blocked: false`, `"blocked"` is `blocked: true`).
    pub fn conditions(&self) -> Conditions {
        match self {
            Expect::Word(ExpectWord::Clear) => Conditions {
                blocked: Some(false),
                ..Conditions::default()
            },
            Expect::Word(ExpectWord::Blocked) => Conditions {
                blocked: Some(true),
                ..Conditions::default()
            },
            Expect::Conditions(c) => (**c).clone(),
        }
    }
}
