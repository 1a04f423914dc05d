//! Probes as users write them (SPEC §2): what each asks, which objects it looks at, what it expects.

use glam::{DQuat, DVec3};
use serde::{Deserialize, Serialize};

use crate::level::ShapeSpec;
use crate::query::Filter;

/// A probe set: the level it is about and its probes, in file order.
#[derive(Debug, Clone, PartialEq)]
pub struct ProbeSet {
    /// The level file, as written (relative to the probe set's folder).
    pub level: String,
    /// The probes, in order.
    pub probes: Vec<Probe>,
}

/// One probe: a question about the level, and optionally the answer it should get.
#[derive(Debug, Clone, PartialEq)]
pub struct Probe {
    /// Unique id in the set, `[A-Za-z0-9._-]+`.
    pub id: String,
    /// What a designer is checking, in words.
    pub label: Option<String>,
    /// Which objects the probe looks at.
    pub filter: Filter,
    /// The question.
    pub query: ProbeQuery,
    /// The expected answer; `None` leaves the probe unchecked.
    pub expect: Option<Expect>,
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
}

impl ProbeKind {
    /// Every kind, in the order the documentation lists them.
    pub const ALL: [ProbeKind; 4] = [
        ProbeKind::Ray,
        ProbeKind::Sweep,
        ProbeKind::Closest,
        ProbeKind::Overlap,
    ];

    /// The kind's name as written in files.
    pub fn name(self) -> &'static str {
        match self {
            ProbeKind::Ray => "ray",
            ProbeKind::Sweep => "sweep",
            ProbeKind::Closest => "closest",
            ProbeKind::Overlap => "overlap",
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
}

impl ProbeQuery {
    /// The probe's kind.
    pub fn kind(&self) -> ProbeKind {
        match self {
            ProbeQuery::Ray { .. } => ProbeKind::Ray,
            ProbeQuery::Sweep { .. } => ProbeKind::Sweep,
            ProbeQuery::Closest { .. } => ProbeKind::Closest,
            ProbeQuery::Overlap { .. } => ProbeKind::Overlap,
        }
    }

    /// The points a user places and drags: the ray's ends, the path's points, or where the shape is.
    pub fn points(&self) -> Vec<DVec3> {
        match self {
            ProbeQuery::Ray { from, to, .. } => vec![*from, *to],
            ProbeQuery::Sweep { path, .. } => path.clone(),
            ProbeQuery::Closest { at, .. } | ProbeQuery::Overlap { at, .. } => vec![*at],
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
            ProbeQuery::Sweep { path, .. } => path.get_mut(k),
            ProbeQuery::Closest { at, .. } | ProbeQuery::Overlap { at, .. } => {
                (k == 0).then_some(at)
            }
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

/// What a probe expects: `"clear"`, `"blocked"`, or a set of conditions that must all hold.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(untagged)]
pub enum Expect {
    /// `"clear"` or `"blocked"`.
    Word(ExpectWord),
    /// Conditions that must all hold.
    Conditions(Conditions),
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
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub distance: Option<Range>,
    /// A sweep stays at least this far from everything.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub min_clearance: Option<f64>,
    /// An overlap's deepest penetration is at most this.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_depth: Option<f64>,
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
            Expect::Conditions(c) => c.clone(),
        }
    }
}
