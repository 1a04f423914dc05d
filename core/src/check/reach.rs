//! The reach map in a check: which ground a character walks to and which targets it gets to, as a
//! result record; the answer from the query core; what it found in words; its own conditions
//! (`reachable`, `unreachable`).

use std::sync::Arc;

use glam::{DQuat, DVec3};
use serde::Deserialize;

use super::answer_level::spot_list;
use super::level_records::MAX_LISTED_POINTS;
use super::records::Hits;
use super::verdict::metres;
use crate::json_text::{Json, round9, round9_vec};
use crate::probe::{Conditions, MAX_STEP, MAX_WALKABLE_SLOPE, ProbeQuery, TARGET_REACH};
use crate::query::{Gait, ProbeShape, Progress, QueryError, View};

/// Half a unit square's diagonal.
const HALF_DIAGONAL: f64 = std::f64::consts::FRAC_1_SQRT_2;

/// What a character reaches of a region, and of its targets.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ReachRecord {
    /// Cells of walkable ground found.
    pub cells: usize,
    /// How many of them a start reaches.
    pub reached: usize,
    /// Square metres reached (each cell stands for a grid square).
    pub area_reached: f64,
    /// Square metres walkable but not reached.
    pub area_unreached: f64,
    /// Every target, in order (named ones first, then tagged objects in level order).
    #[serde(deserialize_with = "crate::json_object::objects")]
    pub targets: Vec<TargetRecord>,
    /// The reached cells' ground points (at most [`MAX_LISTED_POINTS`]).
    pub reached_points: Vec<[f64; 3]>,
    /// The walkable cells not reached (at most [`MAX_LISTED_POINTS`]).
    pub unreached_points: Vec<[f64; 3]>,
    /// Ground too steep to stand on (at most [`MAX_LISTED_POINTS`]).
    pub steep_points: Vec<[f64; 3]>,
}

/// Whether one target is reached, and if not, how near the reached ground comes.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TargetRecord {
    /// The target's name.
    pub name: Arc<str>,
    /// Where it is.
    pub at: [f64; 3],
    /// True when reached ground lies within [`TARGET_REACH`] of it, plus half a grid cell's diagonal
    /// (a cell stands for the square around it).
    pub reachable: bool,
    /// The nearest reached ground point.
    #[serde(default)]
    pub nearest: Option<[f64; 3]>,
    /// Its distance from the target, metres.
    #[serde(default)]
    pub gap: Option<f64>,
}

impl ReachRecord {
    /// This record as laid out in results files.
    pub fn to_json(&self) -> Json<'_> {
        let points = |list: &[[f64; 3]]| Json::Arr(list.iter().map(|p| Json::vec3(*p)).collect());
        let targets = self
            .targets
            .iter()
            .map(|t| {
                let mut f = vec![
                    ("name", Json::Str(&t.name)),
                    ("at", Json::vec3(t.at)),
                    ("reachable", Json::Bool(t.reachable)),
                ];
                if let Some(p) = t.nearest {
                    f.push(("nearest", Json::vec3(p)));
                }
                if let Some(g) = t.gap {
                    f.push(("gap", Json::float(g)));
                }
                Json::Obj(f)
            })
            .collect();
        Json::Obj(vec![
            ("cells", Json::int(self.cells as u64)),
            ("reached", Json::int(self.reached as u64)),
            ("area_reached", Json::float(self.area_reached)),
            ("area_unreached", Json::float(self.area_unreached)),
            ("targets", Json::Arr(targets)),
            ("reached_points", points(&self.reached_points)),
            ("unreached_points", points(&self.unreached_points)),
            ("steep_points", points(&self.steep_points)),
        ])
    }

    /// The targets not reached.
    pub fn unreached_targets(&self) -> impl Iterator<Item = &TargetRecord> {
        self.targets.iter().filter(|t| !t.reachable)
    }
}

/// Answers a reach map.
pub(super) fn answer(
    view: &View,
    query: &ProbeQuery,
    progress: &Progress,
) -> Result<Hits, QueryError> {
    let ProbeQuery::Reach {
        shape,
        spots,
        region,
        spacing,
        targets,
        target_tags,
        max_step,
        max_slope,
    } = query
    else {
        return Ok(Hits::Reach(Vec::new()));
    };
    let world = view.world();
    let shape = ProbeShape::new(shape, DQuat::IDENTITY)?;
    let gait = Gait {
        max_step: max_step.unwrap_or(MAX_STEP),
        max_slope: max_slope.unwrap_or(MAX_WALKABLE_SLOPE),
    };
    let starts: Vec<DVec3> = spot_list(world, spots).iter().map(|s| s.at).collect();
    let bounds = (DVec3::from_array(region.min), DVec3::from_array(region.max));
    let map = view.reach(&shape, &starts, bounds, *spacing, gait, progress)?;
    let mut aims: Vec<(Arc<str>, DVec3)> = targets
        .iter()
        .map(|t| (Arc::from(t.name.as_str()), DVec3::from_array(t.at)))
        .collect();
    if !target_tags.is_empty() {
        for id in world.tagged(target_tags) {
            let (lo, hi) = world.object_bounds(id);
            aims.push((world.shared_name(id), (lo + hi) / 2.0));
        }
    }
    let targets = aims
        .into_iter()
        .map(|(name, at)| {
            let nearest = map
                .cells
                .iter()
                .zip(&map.reached)
                .filter(|(_, r)| **r)
                .map(|(c, _)| c.ground)
                .min_by(|a, b| a.distance(at).total_cmp(&b.distance(at)));
            let gap = nearest.map(|p| p.distance(at));
            TargetRecord {
                name,
                at: round9_vec(at),
                reachable: gap.is_some_and(|g| g <= TARGET_REACH + spacing * HALF_DIAGONAL),
                nearest: nearest.map(round9_vec),
                gap: gap.map(round9),
            }
        })
        .collect();
    let listed = |points: Vec<DVec3>| -> Vec<[f64; 3]> {
        points
            .into_iter()
            .take(MAX_LISTED_POINTS)
            .map(round9_vec)
            .collect()
    };
    let pick = |want: bool| {
        map.cells
            .iter()
            .zip(&map.reached)
            .filter(|(_, r)| **r == want)
            .map(|(c, _)| c.ground)
            .collect::<Vec<_>>()
    };
    let reached = map.reached.iter().filter(|r| **r).count();
    let square = spacing * spacing;
    Ok(Hits::Reach(vec![ReachRecord {
        cells: map.cells.len(),
        reached,
        area_reached: round9(reached as f64 * square),
        area_unreached: round9((map.cells.len() - reached) as f64 * square),
        targets,
        reached_points: listed(pick(true)),
        unreached_points: listed(pick(false)),
        steep_points: listed(map.steep.clone()),
    }]))
}

/// What a reach map found, in a few words.
pub(super) fn describe(hits: &[ReachRecord]) -> String {
    let Some(r) = hits.first() else {
        return "no map".into();
    };
    let mut text = format!(
        "reaches {} of {} walkable cells ({:.0} m² of {:.0} m²)",
        r.reached,
        r.cells,
        r.area_reached,
        r.area_reached + r.area_unreached
    );
    if !r.targets.is_empty() {
        let got = r.targets.iter().filter(|t| t.reachable).count();
        text.push_str(&format!("; {got} of {} targets", r.targets.len()));
    }
    if let Some(t) = r.unreached_targets().next() {
        match t.gap {
            Some(gap) => text.push_str(&format!(
                "; {} is {} from the nearest reached ground",
                t.name,
                metres(gap)
            )),
            None => text.push_str(&format!("; {} is not reached", t.name)),
        }
    }
    text
}

/// The first of a reach map's own conditions that does not hold, worded as what was expected.
pub(super) fn first_unmet(c: &Conditions, hits: &[ReachRecord]) -> Option<String> {
    let r = hits.first()?;
    let reachable = |name: &str| r.targets.iter().any(|t| &*t.name == name && t.reachable);
    if let Some(name) = c.reachable.iter().flatten().find(|n| !reachable(n)) {
        return Some(format!("{name} to be reached"));
    }
    if let Some(name) = c.unreachable.iter().flatten().find(|n| reachable(n)) {
        return Some(format!("{name} not to be reached"));
    }
    None
}
