//! The result records of the whole-level kinds — rest, sightlines, coverage — as written to and read
//! from results files.

use std::sync::Arc;

use serde::Deserialize;

use crate::json_text::Json;

/// What a rest probe's shape rests on.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RestRecord {
    /// The support.
    pub object: Arc<str>,
    /// Its tags.
    pub tags: Arc<[String]>,
    /// The gap to it, metres; negative when the shape sinks into it.
    pub gap: f64,
    /// The contact point on it.
    pub point: [f64; 3],
    /// Its unit normal there.
    pub normal: [f64; 3],
    /// Its material, when the file names one.
    #[serde(default)]
    pub material: Option<Arc<str>>,
}

/// Whether two spots see each other.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PairRecord {
    /// The first spot's name.
    pub a: Arc<str>,
    /// The second spot's name.
    pub b: Arc<str>,
    /// The first spot's eye.
    pub from: [f64; 3],
    /// The second spot's eye.
    pub to: [f64; 3],
    /// True when the sightline between them is clear.
    pub sees: bool,
    /// What blocks it, seen from `a`.
    #[serde(default)]
    pub object: Option<Arc<str>>,
    /// The blocker's tags.
    #[serde(default)]
    pub tags: Option<Arc<[String]>>,
    /// Metres from `a` to the blocker.
    #[serde(default)]
    pub distance: Option<f64>,
    /// Where the sightline is blocked.
    #[serde(default)]
    pub point: Option<[f64; 3]>,
}

/// What share of a region the spots see.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CoverageRecord {
    /// The spots, by name.
    pub spots: Vec<String>,
    /// Where each spot's eye is.
    pub spot_points: Vec<[f64; 3]>,
    /// Sample points of the region's surfaces.
    pub points: usize,
    /// How many a spot sees.
    pub seen: usize,
    /// The share seen, 0 to 1.
    pub share: f64,
    /// Square metres seen (each point stands for a grid cell).
    pub area_seen: f64,
    /// Square metres not seen.
    pub area_unseen: f64,
    /// The points seen, when there are at most [`MAX_LISTED_POINTS`] points in all.
    #[serde(default)]
    pub seen_points: Vec<[f64; 3]>,
    /// The points not seen (at most [`MAX_LISTED_POINTS`]).
    pub unseen_points: Vec<[f64; 3]>,
}

/// The most coverage sample points a results file lists (the counts and areas always cover all of
/// them). Ours: enough to draw a yard at half-metre spacing.
pub const MAX_LISTED_POINTS: usize = 20_000;

impl RestRecord {
    /// This record as laid out in results files.
    pub fn to_json(&self) -> Json<'_> {
        let mut f = vec![
            ("object", Json::Str(&self.object)),
            ("tags", super::records::tags_json(&self.tags)),
            ("gap", Json::float(self.gap)),
            ("point", Json::vec3(self.point)),
            ("normal", Json::vec3(self.normal)),
        ];
        if let Some(m) = &self.material {
            f.push(("material", Json::Str(m)));
        }
        Json::Obj(f)
    }
}

impl PairRecord {
    /// This record as laid out in results files.
    pub fn to_json(&self) -> Json<'_> {
        let mut f = vec![
            ("a", Json::Str(&self.a)),
            ("b", Json::Str(&self.b)),
            ("from", Json::vec3(self.from)),
            ("to", Json::vec3(self.to)),
            ("sees", Json::Bool(self.sees)),
        ];
        if let Some(o) = &self.object {
            f.push(("object", Json::Str(o)));
        }
        if let Some(t) = &self.tags {
            f.push(("tags", super::records::tags_json(t)));
        }
        if let Some(d) = self.distance {
            f.push(("distance", Json::float(d)));
        }
        if let Some(p) = self.point {
            f.push(("point", Json::vec3(p)));
        }
        Json::Obj(f)
    }
}

impl CoverageRecord {
    /// This record as laid out in results files.
    pub fn to_json(&self) -> Json<'_> {
        let points = |list: &[[f64; 3]]| Json::Arr(list.iter().map(|p| Json::vec3(*p)).collect());
        let mut f = vec![
            ("spots", Json::Strs(&self.spots)),
            ("spot_points", points(&self.spot_points)),
            ("points", Json::int(self.points as u64)),
            ("seen", Json::int(self.seen as u64)),
            ("share", Json::float(self.share)),
            ("area_seen", Json::float(self.area_seen)),
            ("area_unseen", Json::float(self.area_unseen)),
        ];
        if !self.seen_points.is_empty() {
            f.push(("seen_points", points(&self.seen_points)));
        }
        f.push(("unseen_points", points(&self.unseen_points)));
        Json::Obj(f)
    }
}
