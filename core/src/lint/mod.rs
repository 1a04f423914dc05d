//! Level lint: what is wrong with a level's own geometry, before any probe is asked — objects that
//! interpenetrate or leave gaps a character can wedge in, props that float or sink, meshes that
//! should be closed but are not, duplicate coplanar faces, slivers and degenerate triangles.
//!
//! Every finding names its objects, the triangles (numbered as the file numbers them) and a point.
//! Thresholds are [`LintOptions`]; the level file's `lint` section ([`LintSettings`]) says which
//! objects must be closed or must rest, and which findings are accepted.
//!
//! Architecture invariant: lint is deterministic — findings come in a fixed order (kind, then
//! objects in level order), whatever the thread count.

mod pairs;
mod props;
mod surfaces;

use std::sync::Arc;

use glam::DVec3;

use crate::level::{Level, LintSettings, Selection};
use crate::query::World;

pub use surfaces::smallest_angle;

/// The kinds of finding.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum FindingKind {
    /// Two objects interpenetrate deeper than [`LintOptions::max_overlap`].
    Overlap,
    /// Two objects come closer than [`LintOptions::narrow_gap`] without touching.
    NarrowGap,
    /// A prop has nothing under it within the tolerance.
    Floats,
    /// A prop sinks into what is under it.
    Sinks,
    /// A mesh that must be closed has edges used by one triangle only.
    OpenEdges,
    /// A mesh that must be closed has edges used by more than two triangles.
    NonManifoldEdges,
    /// Coplanar faces facing the same way overlap (the surface is there twice).
    DuplicateFaces,
    /// Triangles with an angle below [`LintOptions::sliver_angle`].
    Slivers,
    /// Triangles with no area, dropped when the level was loaded.
    Degenerate,
}

impl FindingKind {
    /// Every kind, in report order.
    pub const ALL: [FindingKind; 9] = [
        FindingKind::Overlap,
        FindingKind::NarrowGap,
        FindingKind::Floats,
        FindingKind::Sinks,
        FindingKind::OpenEdges,
        FindingKind::NonManifoldEdges,
        FindingKind::DuplicateFaces,
        FindingKind::Slivers,
        FindingKind::Degenerate,
    ];

    /// The kind's word in files and on the command line.
    pub fn word(self) -> &'static str {
        match self {
            FindingKind::Overlap => "overlap",
            FindingKind::NarrowGap => "narrow-gap",
            FindingKind::Floats => "floats",
            FindingKind::Sinks => "sinks",
            FindingKind::OpenEdges => "open-edges",
            FindingKind::NonManifoldEdges => "non-manifold-edges",
            FindingKind::DuplicateFaces => "duplicate-faces",
            FindingKind::Slivers => "slivers",
            FindingKind::Degenerate => "degenerate",
        }
    }

    /// The kind for a word.
    pub fn from_word(word: &str) -> Option<FindingKind> {
        FindingKind::ALL.into_iter().find(|k| k.word() == word)
    }
}

/// A triangle of an object, numbered as the file numbers it.
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord)]
pub struct TriangleRef {
    /// The object.
    pub object: Arc<str>,
    /// The triangle's number in the object's file.
    pub number: u32,
}

/// One thing lint found.
#[derive(Debug, Clone, PartialEq)]
pub struct Finding {
    /// What kind.
    pub kind: FindingKind,
    /// The objects (one, or two for pairs), in level order.
    pub objects: Vec<Arc<str>>,
    /// The triangles concerned (at most [`MAX_LISTED`]).
    pub triangles: Vec<TriangleRef>,
    /// How many edges, triangles or faces the finding covers (1 for pairs and props).
    pub count: usize,
    /// Depth or distance in metres, or an angle in degrees for slivers.
    pub measure: Option<f64>,
    /// Where to look.
    pub point: DVec3,
    /// Edges to draw (open and non-manifold edges; at most [`MAX_LISTED`]).
    pub edges: Vec<[DVec3; 2]>,
    /// One line for a person.
    pub message: String,
}

/// The most triangles or edges a finding lists (its count covers all). Ours.
pub const MAX_LISTED: usize = 200;

/// Thresholds.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LintOptions {
    /// Interpenetration deeper than this is a finding, metres (default 1 cm).
    pub max_overlap: f64,
    /// Objects closer than this without touching leave a gap a character can wedge in, metres
    /// (default 0.3 m; 0 turns the check off).
    pub narrow_gap: f64,
    /// A prop floating higher than this above its support is a finding, metres (default 1 cm).
    pub max_float: f64,
    /// A prop sunk deeper than this into its support is a finding, metres (default 1 cm).
    pub max_sink: f64,
    /// Triangles with an angle below this are slivers, degrees (default 0.1°).
    pub sliver_angle: f64,
}

impl Default for LintOptions {
    fn default() -> Self {
        LintOptions {
            max_overlap: 0.01,
            narrow_gap: 0.3,
            max_float: crate::probe::REST_TOLERANCE,
            max_sink: crate::probe::REST_TOLERANCE,
            sliver_angle: 0.1,
        }
    }
}

/// Objects closer than this count as touching (no gap), metres: a millimetre. Ours.
pub const TOUCHING: f64 = 1e-3;

/// What lint found.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct LintReport {
    /// The findings, in report order.
    pub findings: Vec<Finding>,
    /// Findings the level file accepts, with the reason it gives.
    pub allowed: Vec<(Finding, String)>,
    /// Objects looked at.
    pub objects: usize,
    /// Mesh triangles looked at.
    pub triangles: usize,
}

/// The props of a level when its file does not say: objects tagged `prop`.
pub fn default_props() -> Selection {
    Selection {
        tags: vec!["prop".into()],
        pattern: None,
    }
}

/// Lints `level` (whose query world is `world`) with `options`, applying the level file's
/// `settings`. `progress` is told each stage as it starts.
pub fn lint(
    level: &Level,
    world: &World,
    settings: &LintSettings,
    options: &LintOptions,
    progress: &dyn Fn(&str),
) -> LintReport {
    let mut findings = Vec::new();
    progress("props");
    let props = settings.props.clone().unwrap_or_else(default_props);
    let resting = props::rests(world, &props, options);
    progress("pairs of objects");
    findings.extend(pairs::pairs(world, options, &resting.supports));
    findings.extend(resting.findings);
    progress("surfaces");
    findings.extend(surfaces::surfaces(level, settings.closed.as_ref(), options));
    let order: std::collections::HashMap<&str, usize> = level
        .objects
        .iter()
        .enumerate()
        .map(|(k, o)| (o.name.as_str(), k))
        .collect();
    let key = |f: &Finding| {
        (
            f.kind,
            f.objects
                .iter()
                .map(|o| order.get(&**o).copied().unwrap_or(usize::MAX))
                .collect::<Vec<_>>(),
        )
    };
    findings.sort_by_key(key);
    let mut report = LintReport {
        objects: level.objects.len(),
        triangles: level.triangle_count(),
        ..LintReport::default()
    };
    for finding in findings {
        let names: Vec<&str> = finding.objects.iter().map(|o| &**o).collect();
        match settings.allowance(finding.kind, &names) {
            Some(allow) => {
                let why = allow.why.clone().unwrap_or_default();
                report.allowed.push((finding, why));
            }
            None => report.findings.push(finding),
        }
    }
    report
}
