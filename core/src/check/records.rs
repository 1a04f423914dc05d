//! The result records of SPEC §3, as written to and read from results files.

use std::sync::Arc;

use serde::{Deserialize, Serialize};

pub use super::jump::JumpRecord;
pub use super::level_records::{CoverageRecord, PairRecord, RestRecord};
pub use super::reach::ReachRecord;
pub use super::settle::SettleRecord;
pub use super::volumes::VolumeRecord;
pub use super::walk::WalkRecord;
use crate::json_text::Json;
use crate::probe::{ProbeId, ProbeKind};

/// How a probe's expectation fared.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Verdict {
    /// Every expected condition holds.
    Pass,
    /// At least one expected condition does not hold.
    Fail,
    /// The probe has no expectation.
    Unchecked,
    /// The probe could not be answered.
    Error,
}

impl Verdict {
    /// The word used in files and reports.
    pub fn word(self) -> &'static str {
        match self {
            Verdict::Pass => "pass",
            Verdict::Fail => "fail",
            Verdict::Unchecked => "unchecked",
            Verdict::Error => "error",
        }
    }
}

/// A ray crossing.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RayHitRecord {
    /// Object name.
    pub object: Arc<str>,
    /// Object tags.
    pub tags: Arc<[String]>,
    /// Metres from `from`.
    pub distance: f64,
    /// Fraction of the segment.
    pub t: f64,
    /// Crossing point.
    pub point: [f64; 3],
    /// Unit normal facing the start.
    pub normal: [f64; 3],
    /// The triangle as the object's file numbers it (meshes only).
    #[serde(default)]
    pub triangle: Option<u32>,
    /// Where that triangle is in the user's file (meshes read from files).
    #[serde(default, deserialize_with = "crate::json_object::optional_object")]
    pub source: Option<SourceRecord>,
    /// The material of the surface, when the file names one.
    #[serde(default)]
    pub material: Option<Arc<str>>,
    /// Crossed from behind.
    #[serde(default)]
    pub back_face: bool,
}

/// Where a triangle is in the user's file: an OBJ face (its line, its ordinal among the file's faces,
/// and which triangle of a polygon's fan), or a glTF primitive's triangle.
#[derive(Debug, Clone, PartialEq, Eq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SourceRecord {
    /// The mesh file, as the level names it.
    #[serde(default)]
    pub file: Option<Arc<str>>,
    /// OBJ: the face's line (1-based).
    #[serde(default)]
    pub line: Option<u32>,
    /// OBJ: the face's ordinal among the file's faces (0-based).
    #[serde(default)]
    pub face: Option<u32>,
    /// OBJ: which triangle of the polygon's fan (polygons of more than three corners).
    #[serde(default)]
    pub fan: Option<u32>,
    /// glTF: the mesh's index.
    #[serde(default)]
    pub mesh: Option<u32>,
    /// glTF: the primitive's index within the mesh.
    #[serde(default)]
    pub primitive: Option<u32>,
    /// glTF: the triangle's index within the primitive.
    #[serde(default)]
    pub triangle: Option<u32>,
}

impl SourceRecord {
    /// Where the triangle is, in words: "docks.obj line 12 (face 3, fan triangle 1)" or
    /// "quay.glb mesh 2, primitive 0, triangle 17".
    pub fn describe(&self) -> String {
        let mut parts = Vec::new();
        if let Some(file) = &self.file {
            parts.push(file.to_string());
        }
        let mut place = Vec::new();
        if let Some(line) = self.line {
            parts.push(format!("line {line}"));
        }
        if let Some(face) = self.face {
            place.push(format!("face {face}"));
        }
        if let Some(fan) = self.fan {
            place.push(format!("fan triangle {fan}"));
        }
        if !place.is_empty() {
            parts.push(format!("({})", place.join(", ")));
        }
        let gltf: Vec<String> = [
            ("mesh", self.mesh),
            ("primitive", self.primitive),
            ("triangle", self.triangle),
        ]
        .into_iter()
        .filter_map(|(word, n)| n.map(|n| format!("{word} {n}")))
        .collect();
        if !gltf.is_empty() {
            parts.push(gltf.join(", "));
        }
        parts.join(" ")
    }
}

/// A sweep's first impact with one object.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SweepHitRecord {
    /// Object name.
    pub object: Arc<str>,
    /// Object tags.
    pub tags: Arc<[String]>,
    /// Path length travelled before impact.
    pub distance: f64,
    /// Fraction of the path length.
    pub t: f64,
    /// Path segment index.
    pub segment: usize,
    /// Seconds into the path (when the probe has a duration).
    #[serde(default)]
    pub time: Option<f64>,
    /// Shape centre at impact.
    pub position: [f64; 3],
    /// The shape's turn at impact `[x, y, z, w]`, for sweeps that turn along their path.
    #[serde(default)]
    pub rotation: Option<[f64; 4]>,
    /// Contact point on the object.
    pub point: [f64; 3],
    /// Unit normal from the object towards the shape.
    pub normal: [f64; 3],
    /// Overlapping at the start of the path.
    #[serde(default)]
    pub started_inside: bool,
    /// The triangle touched, as the object's file numbers it (meshes, when known).
    #[serde(default)]
    pub triangle: Option<u32>,
    /// Where that triangle is in the user's file.
    #[serde(default, deserialize_with = "crate::json_object::optional_object")]
    pub source: Option<SourceRecord>,
    /// The material of the surface, when the file names one.
    #[serde(default)]
    pub material: Option<Arc<str>>,
}

/// The nearest object to a closest-point probe.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ClosestRecord {
    /// Object name.
    pub object: Arc<str>,
    /// Object tags.
    pub tags: Arc<[String]>,
    /// Metres between probe and object (0 when overlapping).
    pub distance: f64,
    /// Nearest point on the object.
    pub point: [f64; 3],
    /// Nearest point on the probe shape.
    pub shape_point: [f64; 3],
    /// Unit normal from the object towards the probe.
    pub normal: [f64; 3],
    /// The probe overlaps the object.
    #[serde(default)]
    pub overlapping: bool,
    /// The material of the surface, when the file names one.
    #[serde(default)]
    pub material: Option<Arc<str>>,
}

/// One object an overlap probe overlaps.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OverlapRecord {
    /// Object name.
    pub object: Arc<str>,
    /// Object tags.
    pub tags: Arc<[String]>,
    /// Penetration depth.
    pub depth: f64,
    /// Unit direction that separates the shape by `depth`.
    pub direction: [f64; 3],
    /// Deepest point on the object.
    pub point: [f64; 3],
    /// The shape is entirely inside a closed mesh.
    #[serde(default)]
    pub enclosed: bool,
    /// The material of the surface, when the file names one.
    #[serde(default)]
    pub material: Option<Arc<str>>,
}

/// The least clearance of a sweep over its whole path.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ClearanceRecord {
    /// Smallest distance to the level (0 where it touches).
    pub distance: f64,
    /// Fraction of the path where it occurs.
    pub t: f64,
    /// Shape centre there.
    pub position: [f64; 3],
    /// Nearest object.
    pub object: Arc<str>,
    /// Nearest point on it.
    pub point: [f64; 3],
}

/// A probe's hits, by kind.
#[derive(Debug, Clone, PartialEq)]
pub enum Hits {
    /// Ray crossings.
    Ray(Vec<RayHitRecord>),
    /// Sweep impacts.
    Sweep(Vec<SweepHitRecord>),
    /// At most one nearest object.
    Closest(Vec<ClosestRecord>),
    /// Overlapped objects, deepest first.
    Overlap(Vec<OverlapRecord>),
    /// At most one support.
    Rest(Vec<RestRecord>),
    /// Every pair of spots, in order.
    Sightlines(Vec<PairRecord>),
    /// One record of the region's coverage.
    Coverage(Vec<CoverageRecord>),
    /// At most one landing.
    Jump(Vec<JumpRecord>),
    /// One record of where the walk went.
    Walk(Vec<WalkRecord>),
    /// One record of what the character reaches.
    Reach(Vec<ReachRecord>),
    /// One record of where the let-go body ends up.
    Settle(Vec<SettleRecord>),
}

impl Hits {
    /// Number of hits: for sightlines the pairs that are blocked, for coverage the points not seen.
    pub fn len(&self) -> usize {
        match self {
            Hits::Ray(h) => h.len(),
            Hits::Sweep(h) => h.len(),
            Hits::Closest(h) => h.len(),
            Hits::Overlap(h) => h.len(),
            Hits::Rest(h) => h.len(),
            Hits::Sightlines(h) => h.iter().filter(|p| !p.sees).count(),
            Hits::Coverage(h) => h.iter().map(|c| c.points - c.seen).sum(),
            Hits::Jump(h) => h.len(),
            Hits::Walk(h) => h.iter().filter(|w| !w.reached).count(),
            Hits::Reach(h) => h.iter().map(|r| r.unreached_targets().count()).sum(),
            Hits::Settle(h) => h.iter().filter(|x| !x.rests()).count(),
        }
    }

    /// True when there are no hits (the probe is clear).
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The first hit's object name and tags, and its measure: distance for rays, sweeps and closest,
    /// depth for overlaps, the gap for rests, the distance to the first blocked pair's blocker for
    /// sightlines; none for coverage.
    pub fn first(&self) -> Option<(&str, &[String], f64)> {
        match self {
            Hits::Ray(h) => h.first().map(|x| (&*x.object, &x.tags[..], x.distance)),
            Hits::Sweep(h) => h.first().map(|x| (&*x.object, &x.tags[..], x.distance)),
            Hits::Closest(h) => h.first().map(|x| (&*x.object, &x.tags[..], x.distance)),
            Hits::Overlap(h) => h.first().map(|x| (&*x.object, &x.tags[..], x.depth)),
            Hits::Rest(h) => h.first().map(|x| (&*x.object, &x.tags[..], x.gap)),
            Hits::Sightlines(h) => h.iter().find(|p| !p.sees).map(|p| {
                (
                    p.object.as_deref().unwrap_or(""),
                    p.tags.as_deref().unwrap_or(&[]),
                    p.distance.unwrap_or(0.0),
                )
            }),
            Hits::Coverage(_) => None,
            Hits::Jump(h) => h.first().map(|x| (&*x.object, &x.tags[..], x.distance)),
            Hits::Reach(h) => h
                .iter()
                .flat_map(|r| r.unreached_targets())
                .next()
                .map(|t| (&*t.name, &[][..], t.gap.unwrap_or(f64::INFINITY))),
            Hits::Walk(h) => h.first().filter(|w| !w.reached).map(|w| {
                (
                    w.object.as_deref().unwrap_or(""),
                    w.tags.as_deref().unwrap_or(&[]),
                    w.length,
                )
            }),
            Hits::Settle(h) => h.first().map(|x| {
                (
                    x.object.as_deref().unwrap_or(""),
                    x.tags.as_deref().unwrap_or(&[]),
                    x.moved,
                )
            }),
        }
    }

    /// No hits, of the given probe kind.
    pub fn empty(kind: ProbeKind) -> Hits {
        match kind {
            ProbeKind::Ray => Hits::Ray(Vec::new()),
            ProbeKind::Sweep => Hits::Sweep(Vec::new()),
            ProbeKind::Closest => Hits::Closest(Vec::new()),
            ProbeKind::Overlap => Hits::Overlap(Vec::new()),
            ProbeKind::Rest => Hits::Rest(Vec::new()),
            ProbeKind::Sightlines => Hits::Sightlines(Vec::new()),
            ProbeKind::Coverage => Hits::Coverage(Vec::new()),
            ProbeKind::Jump => Hits::Jump(Vec::new()),
            ProbeKind::Walk => Hits::Walk(Vec::new()),
            ProbeKind::Reach => Hits::Reach(Vec::new()),
            ProbeKind::Settle => Hits::Settle(Vec::new()),
        }
    }
}

/// One probe's answer and verdict.
#[derive(Debug, Clone, PartialEq)]
pub struct ProbeResult {
    /// The probe's id.
    pub id: ProbeId,
    /// The probe's kind.
    pub kind: ProbeKind,
    /// How the expectation fared.
    pub verdict: Verdict,
    /// One sentence a designer can read.
    pub reason: std::borrow::Cow<'static, str>,
    /// The hits.
    pub hits: Hits,
    /// A sweep's least clearance, when asked for.
    pub clearance: Option<ClearanceRecord>,
    /// Where it is in, enters and leaves the level's volumes, in order along its way.
    pub volumes: Vec<VolumeRecord>,
}

impl ProbeResult {
    /// The names of the volumes the probe is in at some point of its way, in order of first meeting.
    pub fn volumes_met(&self) -> Vec<String> {
        super::volumes::met(&self.volumes)
            .iter()
            .map(|v| v.volume.to_string())
            .collect()
    }
}

/// Counts by verdict.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Summary {
    /// All probes.
    pub probes: usize,
    /// Passed.
    pub pass: usize,
    /// Failed.
    pub fail: usize,
    /// Without expectation.
    pub unchecked: usize,
    /// Could not be answered.
    pub error: usize,
}

impl Summary {
    /// Counts the verdicts of a list of results.
    pub fn of(results: &[ProbeResult]) -> Summary {
        let mut s = Summary::default();
        for r in results {
            s.count(r.verdict);
        }
        s
    }

    /// Counts one more probe with this verdict.
    pub fn count(&mut self, verdict: Verdict) {
        self.probes += 1;
        match verdict {
            Verdict::Pass => self.pass += 1,
            Verdict::Fail => self.fail += 1,
            Verdict::Unchecked => self.unchecked += 1,
            Verdict::Error => self.error += 1,
        }
    }

    /// Adds another run's counts (a shard's, when merging).
    pub fn add(&mut self, other: &Summary) {
        self.probes += other.probes;
        self.pass += other.pass;
        self.fail += other.fail;
        self.unchecked += other.unchecked;
        self.error += other.error;
    }

    /// True when every expectation holds and no probe erred.
    pub fn all_hold(&self) -> bool {
        self.fail == 0 && self.error == 0
    }
}

/// A list of tags as results files lay it out.
pub(super) fn tags_json(tags: &[String]) -> Json<'_> {
    Json::Strs(tags)
}

/// The tail walks and settles share in results files: the object met (and its tags), when there is
/// one, then the centre's way.
pub(super) fn push_object_and_way<'a>(
    f: &mut Vec<(&'static str, Json<'a>)>,
    object: &'a Option<Arc<str>>,
    tags: &'a Option<Arc<[String]>>,
    way: &[[f64; 3]],
) {
    if let Some(o) = object {
        f.push(("object", Json::Str(o)));
    }
    if let Some(t) = tags {
        f.push(("tags", tags_json(t)));
    }
    f.push((
        "path",
        Json::Arr(way.iter().map(|p| Json::vec3(*p)).collect()),
    ));
}

/// The records as the results file lays them out (the one writer of results; reading is serde's):
/// each offers its fields in order to the layout's passes, without a tree.
mod layout {
    use super::*;
    use crate::json_text::{Brackets, Layout, Members, Trees, key};

    /// The object met and its tags, as every hit record begins.
    fn object_members<M: Members>(m: &mut M, object: &str, tags: &[String]) {
        m.str(key!("object"), object);
        m.strs(key!("tags"), tags);
    }

    /// The triangle, where it is in the file, and the material, each when known.
    fn face_members<M: Members>(
        m: &mut M,
        triangle: Option<u32>,
        source: &Option<SourceRecord>,
        material: &Option<Arc<str>>,
    ) {
        if let Some(t) = triangle {
            m.uint(key!("triangle"), u64::from(t));
        }
        if let Some(s) = source {
            m.nested(key!("source"), s);
        }
        if let Some(material) = material {
            m.str(key!("material"), material);
        }
    }

    impl Layout for SourceRecord {
        const BRACKETS: Brackets = Brackets::Object;

        fn members<M: Members>(&self, m: &mut M) {
            if let Some(file) = &self.file {
                m.str(key!("file"), file);
            }
            for (key, value) in [
                (key!("line"), self.line),
                (key!("face"), self.face),
                (key!("fan"), self.fan),
                (key!("mesh"), self.mesh),
                (key!("primitive"), self.primitive),
                (key!("triangle"), self.triangle),
            ] {
                if let Some(v) = value {
                    m.uint(key, u64::from(v));
                }
            }
        }
    }

    impl Layout for RayHitRecord {
        const BRACKETS: Brackets = Brackets::Object;

        fn members<M: Members>(&self, m: &mut M) {
            object_members(m, &self.object, &self.tags);
            m.float(key!("distance"), self.distance);
            m.float(key!("t"), self.t);
            m.vec3(key!("point"), self.point);
            m.vec3(key!("normal"), self.normal);
            face_members(m, self.triangle, &self.source, &self.material);
            if self.back_face {
                m.boolean(key!("back_face"), true);
            }
        }
    }

    impl Layout for SweepHitRecord {
        const BRACKETS: Brackets = Brackets::Object;

        fn members<M: Members>(&self, m: &mut M) {
            object_members(m, &self.object, &self.tags);
            m.float(key!("distance"), self.distance);
            m.float(key!("t"), self.t);
            m.uint(key!("segment"), self.segment as u64);
            if let Some(time) = self.time {
                m.float(key!("time"), time);
            }
            m.vec3(key!("position"), self.position);
            if let Some(q) = &self.rotation {
                m.nested(key!("rotation"), &q[..]);
            }
            m.vec3(key!("point"), self.point);
            m.vec3(key!("normal"), self.normal);
            if self.started_inside {
                m.boolean(key!("started_inside"), true);
            }
            face_members(m, self.triangle, &self.source, &self.material);
        }
    }

    impl Layout for ClosestRecord {
        const BRACKETS: Brackets = Brackets::Object;

        fn members<M: Members>(&self, m: &mut M) {
            object_members(m, &self.object, &self.tags);
            m.float(key!("distance"), self.distance);
            m.vec3(key!("point"), self.point);
            m.vec3(key!("shape_point"), self.shape_point);
            m.vec3(key!("normal"), self.normal);
            if self.overlapping {
                m.boolean(key!("overlapping"), true);
            }
            face_members(m, None, &None, &self.material);
        }
    }

    impl Layout for OverlapRecord {
        const BRACKETS: Brackets = Brackets::Object;

        fn members<M: Members>(&self, m: &mut M) {
            object_members(m, &self.object, &self.tags);
            m.float(key!("depth"), self.depth);
            m.vec3(key!("direction"), self.direction);
            m.vec3(key!("point"), self.point);
            if self.enclosed {
                m.boolean(key!("enclosed"), true);
            }
            face_members(m, None, &None, &self.material);
        }
    }

    impl Layout for ClearanceRecord {
        const BRACKETS: Brackets = Brackets::Object;

        fn members<M: Members>(&self, m: &mut M) {
            m.float(key!("distance"), self.distance);
            m.float(key!("t"), self.t);
            m.vec3(key!("position"), self.position);
            m.str(key!("object"), &self.object);
            m.vec3(key!("point"), self.point);
        }
    }

    impl Layout for ProbeResult {
        const BRACKETS: Brackets = Brackets::Object;

        fn members<M: Members>(&self, m: &mut M) {
            m.str(key!("id"), &self.id);
            m.str(key!("kind"), self.kind.name());
            m.str(key!("verdict"), self.verdict.word());
            m.str(key!("reason"), &self.reason);
            let hits = key!("hits");
            match &self.hits {
                Hits::Ray(h) => m.nested(hits, h.as_slice()),
                Hits::Sweep(h) => m.nested(hits, h.as_slice()),
                Hits::Closest(h) => m.nested(hits, h.as_slice()),
                Hits::Overlap(h) => m.nested(hits, h.as_slice()),
                Hits::Rest(h) => m.nested(hits, &Trees(h, RestRecord::to_json)),
                Hits::Sightlines(h) => m.nested(hits, &Trees(h, PairRecord::to_json)),
                Hits::Coverage(h) => m.nested(hits, &Trees(h, CoverageRecord::to_json)),
                Hits::Jump(h) => m.nested(hits, &Trees(h, JumpRecord::to_json)),
                Hits::Walk(h) => m.nested(hits, &Trees(h, WalkRecord::to_json)),
                Hits::Reach(h) => m.nested(hits, &Trees(h, ReachRecord::to_json)),
                Hits::Settle(h) => m.nested(hits, &Trees(h, SettleRecord::to_json)),
            }
            if let Some(c) = &self.clearance {
                m.nested(key!("clearance"), c);
            }
            if !self.volumes.is_empty() {
                m.nested(
                    key!("volumes"),
                    &Trees(&self.volumes, VolumeRecord::to_json),
                );
            }
        }
    }
}
