//! The settle probe in a check: where a let-go body comes to rest as a result record, the answer from
//! the simulation, what it found in words, and its own conditions (`max_move`, `max_turn`).

use std::sync::Arc;

use glam::{DQuat, DVec3};
use serde::Deserialize;

use super::records::{Hits, push_object_and_way};
use super::verdict::metres;
use crate::json_text::{Json, round9, round9_vec};
use crate::probe::{Conditions, ProbeQuery, SETTLE_DENSITY, SETTLE_FRICTION, SETTLE_TIME};
use crate::query::{Material, ProbeShape, QueryError, SettleEnd, View};

/// Where a let-go body ended up.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SettleRecord {
    /// `rests`, `still-moving` (when time ran out) or `fell-out` (below the level).
    pub end: String,
    /// Seconds until it came to rest (or until it stopped being followed).
    pub time: f64,
    /// How far its centre ended from where it was put, metres.
    pub moved: f64,
    /// How far it ended turned from how it was put, degrees.
    pub turned: f64,
    /// Its centre at the end.
    pub position: [f64; 3],
    /// Its turn at the end, `[x, y, z, w]`.
    pub rotation: [f64; 4],
    /// What it rests on at the end (the first object it touches), if anything.
    #[serde(default)]
    pub object: Option<Arc<str>>,
    /// That object's tags.
    #[serde(default)]
    pub tags: Option<Arc<[String]>>,
    /// Its centre every tenth of a second, from the start.
    pub path: Vec<[f64; 3]>,
}

impl SettleRecord {
    /// This record as laid out in results files.
    pub fn to_json(&self) -> Json<'_> {
        let mut f = vec![
            ("end", Json::Str(&self.end)),
            ("time", Json::float(self.time)),
            ("moved", Json::float(self.moved)),
            ("turned", Json::float(self.turned)),
            ("position", Json::vec3(self.position)),
            (
                "rotation",
                Json::Arr(self.rotation.iter().map(|x| Json::float(*x)).collect()),
            ),
        ];
        push_object_and_way(&mut f, &self.object, &self.tags, &self.path);
        Json::Obj(f)
    }

    /// True when the body came to rest.
    pub fn rests(&self) -> bool {
        self.end == "rests"
    }
}

/// Answers a settle probe: the body let go and followed until it rests.
pub(super) fn answer(view: &View, query: &ProbeQuery) -> Result<Hits, QueryError> {
    let ProbeQuery::Settle {
        shape,
        at,
        rotation,
        density,
        friction,
        restitution,
        max_time,
    } = query
    else {
        return Ok(Hits::Settle(Vec::new()));
    };
    let world = view.world();
    let start = rotation.unwrap_or(DQuat::IDENTITY);
    let body = ProbeShape::turned_by(shape, Some(start))?;
    let material = Material {
        density: density.unwrap_or(SETTLE_DENSITY),
        friction: friction.unwrap_or(SETTLE_FRICTION),
        restitution: restitution.unwrap_or(0.0),
    };
    let settled = view.settle(&body, *at, material, max_time.unwrap_or(SETTLE_TIME))?;
    let turn = (settled.rotation * start.inverse()).normalize();
    let turned = 2.0 * turn.w.abs().clamp(0.0, 1.0).acos();
    Ok(Hits::Settle(vec![SettleRecord {
        end: match settled.end {
            SettleEnd::Rests => "rests",
            SettleEnd::StillMoving => "still-moving",
            SettleEnd::FellOut => "fell-out",
        }
        .to_string(),
        time: round9(settled.time),
        moved: round9(settled.position.distance(*at)),
        turned: round9(turned.to_degrees()),
        position: round9_vec(settled.position),
        rotation: settled.rotation.to_array().map(round9),
        object: settled.support.map(|o| world.shared_name(o)),
        tags: settled.support.map(|o| world.shared_tags(o)),
        path: settled.path.iter().map(|p| round9_vec(*p)).collect(),
    }]))
}

/// What the settle found, in a few words.
pub(super) fn describe(hits: &[SettleRecord]) -> String {
    let Some(x) = hits.first() else {
        return "not let go".into();
    };
    let on = x
        .object
        .as_ref()
        .map_or(String::new(), |o| format!(" on {o}"));
    let how = format!(
        "{} from where it was put, turned {:.1}°",
        metres(x.moved),
        x.turned
    );
    match x.end.as_str() {
        "rests" => format!("comes to rest{on} after {:.2} s, {how}", x.time),
        "fell-out" => format!("falls out of the level after {:.2} s", x.time),
        _ => format!("is still moving after {:.2} s, {how}", x.time),
    }
}

/// The first settle condition that does not hold, worded as what was expected.
pub(super) fn first_unmet(c: &Conditions, hits: &[SettleRecord]) -> Option<String> {
    let x = hits.first()?;
    let wants_rest = c.max_move.is_some() || c.max_turn.is_some();
    if wants_rest && !x.rests() {
        return Some("it to come to rest".into());
    }
    if let Some(most) = c.max_move
        && x.moved > most
    {
        return Some(format!("it to move at most {}", metres(most)));
    }
    if let Some(most) = c.max_turn
        && x.turned > most
    {
        return Some(format!("it to turn at most {most:.1}°"));
    }
    None
}

/// The start and the end of the body's way.
pub fn settle_ends(record: &SettleRecord) -> Option<(DVec3, DVec3)> {
    let first = record.path.first()?;
    Some((
        DVec3::from_array(*first),
        DVec3::from_array(record.position),
    ))
}
