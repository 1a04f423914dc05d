//! The jump probe in a check: its landing as a result record, the answer from the query core, what it
//! found in words, and its own conditions (`walkable`, `lands_within`).

use std::sync::Arc;

use glam::DVec3;
use serde::Deserialize;

use super::records::{Hits, tags_json};
use super::verdict::{metres, named};
use crate::json_text::{Json, round9, round9_vec};
use crate::probe::{
    Conditions, JUMP_TIME, Launch, MAX_WALKABLE_SLOPE, ProbeQuery, STANDARD_GRAVITY,
};
use crate::query::{ProbeShape, QueryError, Trajectory, View};

/// Where a jump lands.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct JumpRecord {
    /// The object landed on.
    pub object: Arc<str>,
    /// Its tags.
    pub tags: Arc<[String]>,
    /// Seconds in the air.
    pub time: f64,
    /// Metres from the start to the landing across the level (along the ground, not up or down).
    pub distance: f64,
    /// How far the landing is above the start, metres (negative below).
    pub rise: f64,
    /// The highest the centre got above the start before landing, metres.
    pub apex: f64,
    /// The shape's centre at the landing.
    pub position: [f64; 3],
    /// The contact point.
    pub point: [f64; 3],
    /// The surface's unit normal there, towards the shape.
    pub normal: [f64; 3],
    /// The surface's slope, degrees from level.
    pub slope: f64,
    /// True when a character stands on that slope (at most the probe's `max_slope`).
    pub walkable: bool,
    /// True when the shape starts inside an object or pushes into it at the launch.
    #[serde(default)]
    pub started_inside: bool,
    /// The material of the surface, when the file names one.
    #[serde(default)]
    pub material: Option<Arc<str>>,
}

impl JumpRecord {
    /// This record as laid out in results files.
    pub fn to_json(&self) -> Json<'_> {
        let mut f = vec![
            ("object", Json::Str(&self.object)),
            ("tags", tags_json(&self.tags)),
            ("time", Json::float(self.time)),
            ("distance", Json::float(self.distance)),
            ("rise", Json::float(self.rise)),
            ("apex", Json::float(self.apex)),
            ("position", Json::vec3(self.position)),
            ("point", Json::vec3(self.point)),
            ("normal", Json::vec3(self.normal)),
            ("slope", Json::float(self.slope)),
            ("walkable", Json::Bool(self.walkable)),
        ];
        if self.started_inside {
            f.push(("started_inside", Json::Bool(true)));
        }
        if let Some(m) = &self.material {
            f.push(("material", Json::Str(m)));
        }
        Json::Obj(f)
    }
}

/// The trajectory of a jump probe on a level whose up axis is `up`.
pub fn trajectory(query: &ProbeQuery, up: DVec3) -> Result<Option<Trajectory>, QueryError> {
    let ProbeQuery::Jump {
        from,
        launch,
        gravity,
        ..
    } = query
    else {
        return Ok(None);
    };
    let g = gravity.unwrap_or(STANDARD_GRAVITY);
    Ok(Some(match launch {
        Launch::Velocity(velocity) => Trajectory {
            from: *from,
            velocity: *velocity,
            gravity: -up * g,
        },
        Launch::Target { to, apex } => {
            Trajectory::through(*from, *to, *apex, g, up).ok_or(QueryError::ApexBelowTarget)?
        }
    }))
}

/// Answers a jump probe: where it lands, if anywhere within its time.
pub(super) fn answer(view: &View, query: &ProbeQuery) -> Result<Hits, QueryError> {
    let ProbeQuery::Jump {
        shape,
        rotation,
        max_slope,
        max_time,
        ..
    } = query
    else {
        return Ok(Hits::Jump(Vec::new()));
    };
    let world = view.world();
    let up = world.up();
    let arc = trajectory(query, up)?.expect("a jump probe");
    let shape = ProbeShape::turned_by(shape, *rotation)?;
    // Below the level's lowest point (and the shape's reach) it can only fall on.
    let floor = world.bounds().map_or(f64::NEG_INFINITY, |(lo, hi)| {
        corners(lo, hi)
            .map(|c| c.dot(up))
            .fold(f64::INFINITY, f64::min)
            - 2.0 * shape_reach(&shape)
    });
    let Some(hit) = view.jump(&shape, &arc, max_time.unwrap_or(JUMP_TIME), floor)? else {
        return Ok(Hits::Jump(Vec::new()));
    };
    let offset = hit.position - arc.from;
    let rise = offset.dot(up);
    // The top of the arc, when it is passed before the landing.
    let climb = arc.velocity.dot(up);
    let g = -arc.gravity.dot(up);
    let apex = if climb > 0.0 && g > 0.0 && climb / g < hit.time {
        climb * climb / (2.0 * g)
    } else {
        rise.max(0.0)
    };
    let slope = hit.normal.dot(up).clamp(-1.0, 1.0).acos().to_degrees();
    Ok(Hits::Jump(vec![JumpRecord {
        object: world.shared_name(hit.object),
        tags: world.hit_tags(hit.object, hit.material),
        time: round9(hit.time),
        distance: round9((offset - up * rise).length()),
        rise: round9(rise),
        apex: round9(apex),
        position: round9_vec(hit.position),
        point: round9_vec(hit.point),
        normal: round9_vec(hit.normal),
        slope: round9(slope),
        walkable: slope <= max_slope.unwrap_or(MAX_WALKABLE_SLOPE),
        started_inside: hit.started_inside,
        material: hit.material.map(|m| world.shared_material(m)),
    }]))
}

/// How far the shape reaches from its centre in any direction.
fn shape_reach(shape: &ProbeShape) -> f64 {
    [DVec3::X, DVec3::Y, DVec3::Z]
        .into_iter()
        .flat_map(|d| [d, -d])
        .map(|d| shape.extent_along(d))
        .fold(0.0, f64::max)
        .max(1.0)
}

fn corners(lo: DVec3, hi: DVec3) -> impl Iterator<Item = DVec3> {
    (0..8).map(move |k| {
        DVec3::new(
            if k & 1 == 0 { lo.x } else { hi.x },
            if k & 2 == 0 { lo.y } else { hi.y },
            if k & 4 == 0 { lo.z } else { hi.z },
        )
    })
}

/// What a jump found, in a few words.
pub(super) fn describe(hits: &[JumpRecord]) -> String {
    match hits.first() {
        None => "lands nowhere within its time".into(),
        Some(x) if x.started_inside => {
            format!("starts inside {}", named(&x.object, &x.material))
        }
        Some(x) => {
            let ground = if x.walkable {
                format!("walkable, {:.0}° slope", x.slope)
            } else {
                format!("too steep to stand on, {:.0}° slope", x.slope)
            };
            format!(
                "lands on {} after {:.3} s, {} away ({ground})",
                named(&x.object, &x.material),
                x.time,
                metres(x.distance)
            )
        }
    }
}

/// The first of a jump's own conditions that does not hold, worded as what was expected.
pub(super) fn first_unmet(c: &Conditions, hits: &[JumpRecord], up: DVec3) -> Option<String> {
    let landing = hits.first().filter(|x| !x.started_inside);
    if let Some(walkable) = c.walkable
        && landing.is_none_or(|x| x.walkable != walkable)
    {
        return Some(if walkable {
            "a landing on walkable ground".into()
        } else {
            "a landing too steep to stand on".into()
        });
    }
    if let Some(region) = &c.lands_within
        && landing.is_none_or(|x| !region.contains(DVec3::from_array(x.position), up))
    {
        return Some("a landing within the region".into());
    }
    None
}
