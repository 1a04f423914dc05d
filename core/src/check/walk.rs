//! The walk probe in a check: where the character got as a result record, the answer from the query
//! core, what it found in words, and its own conditions (`reaches`, `max_detour`).

use std::sync::Arc;

use glam::{DQuat, DVec3};
use serde::Deserialize;

use super::records::{Hits, push_object_and_way};
use super::verdict::metres;
use crate::json_text::{Json, round9, round9_vec};
use crate::probe::{Conditions, MAX_STEP, MAX_WALKABLE_SLOPE, ProbeQuery};
use crate::query::{Gait, ProbeShape, QueryError, Stop, View, World};

/// Where a walk went.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct WalkRecord {
    /// True when it reached the last waypoint.
    pub reached: bool,
    /// How many waypoints after the start it reached.
    pub waypoints: usize,
    /// How many waypoints there are after the start.
    pub of: usize,
    /// Metres walked (along the way it took).
    pub length: f64,
    /// Metres of the route as drawn, waypoint to waypoint.
    pub route_length: f64,
    /// The most the ground rose from one step to the next, metres.
    pub highest_step: f64,
    /// The steepest ground it stood on, degrees.
    pub steepest_slope: f64,
    /// The longest fall it took, metres.
    pub longest_fall: f64,
    /// Why it stopped, in words, when it did not reach the end.
    #[serde(default)]
    pub stop: Option<String>,
    /// The object that stopped it.
    #[serde(default)]
    pub object: Option<Arc<str>>,
    /// That object's tags.
    #[serde(default)]
    pub tags: Option<Arc<[String]>>,
    /// The centre after every step, from the start.
    pub path: Vec<[f64; 3]>,
}

impl WalkRecord {
    /// This record as laid out in results files.
    pub fn to_json(&self) -> Json<'_> {
        let mut f = vec![
            ("reached", Json::Bool(self.reached)),
            ("waypoints", Json::int(self.waypoints as u64)),
            ("of", Json::int(self.of as u64)),
            ("length", Json::float(self.length)),
            ("route_length", Json::float(self.route_length)),
            ("highest_step", Json::float(self.highest_step)),
            ("steepest_slope", Json::float(self.steepest_slope)),
            ("longest_fall", Json::float(self.longest_fall)),
        ];
        if let Some(s) = &self.stop {
            f.push(("stop", Json::Str(s)));
        }
        push_object_and_way(&mut f, &self.object, &self.tags, &self.path);
        Json::Obj(f)
    }

    /// The stopping place: the last point of the way taken.
    pub fn end(&self) -> Option<DVec3> {
        self.path.last().map(|p| DVec3::from_array(*p))
    }
}

/// Answers a walk probe: the way the character took and whether it got to the end.
pub(super) fn answer(view: &View, query: &ProbeQuery) -> Result<Hits, QueryError> {
    let ProbeQuery::Walk {
        shape,
        path,
        max_step,
        max_slope,
    } = query
    else {
        return Ok(Hits::Walk(Vec::new()));
    };
    let world = view.world();
    let shape = ProbeShape::new(shape, DQuat::IDENTITY)?;
    let gait = Gait {
        max_step: max_step.unwrap_or(MAX_STEP),
        max_slope: max_slope.unwrap_or(MAX_WALKABLE_SLOPE),
    };
    let walked = view.walk(&shape, path, gait)?;
    let length = |points: &[DVec3]| points.windows(2).map(|w| w[0].distance(w[1])).sum::<f64>();
    let object = walked.stop.as_ref().and_then(|s| match s {
        Stop::Blocked(o) | Stop::StepTooHigh(o, _) | Stop::TooSteep(o, _) => Some(*o),
        Stop::NoGroundAtStart | Stop::FellOff | Stop::NoHeadway => None,
    });
    Ok(Hits::Walk(vec![WalkRecord {
        reached: walked.stop.is_none(),
        waypoints: walked.reached,
        of: path.len() - 1,
        length: round9(length(&walked.path)),
        route_length: round9(length(path)),
        highest_step: round9(walked.highest_step),
        steepest_slope: round9(walked.steepest_slope),
        longest_fall: round9(walked.longest_fall),
        stop: walked.stop.as_ref().map(|s| stop_words(world, s, gait)),
        object: object.map(|o| world.shared_name(o)),
        tags: object.map(|o| world.shared_tags(o)),
        path: walked.path.iter().map(|p| round9_vec(*p)).collect(),
    }]))
}

/// Why a walk stopped, in a few words.
fn stop_words(world: &World, stop: &Stop, gait: Gait) -> String {
    match stop {
        Stop::NoGroundAtStart => "no ground under the start".into(),
        Stop::Blocked(o) => format!("blocked by {}", world.name(*o)),
        Stop::StepTooHigh(o, rise) => format!(
            "a step of {} onto {} is over the {} limit",
            metres(*rise),
            world.name(*o),
            metres(gait.max_step)
        ),
        Stop::TooSteep(o, slope) => format!(
            "the slope of {slope:.0}° on {} is over the {:.0}° limit",
            world.name(*o),
            gait.max_slope
        ),
        Stop::FellOff => "walked off the level".into(),
        Stop::NoHeadway => "got no nearer to the next waypoint".into(),
    }
}

/// What a walk found, in a few words.
pub(super) fn describe(hits: &[WalkRecord]) -> String {
    let Some(x) = hits.first() else {
        return "no walk".into();
    };
    let fall = if x.longest_fall > 0.0 {
        format!(", a fall of {}", metres(x.longest_fall))
    } else {
        String::new()
    };
    if x.reached {
        format!(
            "reaches the end after {} (route {}); highest step {}, steepest slope {:.0}°{fall}",
            metres(x.length),
            metres(x.route_length),
            metres(x.highest_step),
            x.steepest_slope
        )
    } else {
        format!(
            "stops after {}, {} of {} waypoints reached: {}",
            metres(x.length),
            x.waypoints,
            x.of,
            x.stop.as_deref().unwrap_or("stopped")
        )
    }
}

/// The first of a walk's own conditions that does not hold, worded as what was expected.
pub(super) fn first_unmet(c: &Conditions, hits: &[WalkRecord]) -> Option<String> {
    let walked = hits.first()?;
    if let Some(reaches) = c.reaches
        && walked.reached != reaches
    {
        return Some(if reaches {
            "it to reach the end".into()
        } else {
            "it not to reach the end".into()
        });
    }
    if let Some(most) = c.max_detour
        && walked.length - walked.route_length > most
    {
        return Some(format!("a detour of at most {}", metres(most)));
    }
    None
}
