//! Volumes in a check: the records of where a probe is in, enters and leaves the level's volumes;
//! the answer from the query core for each kind that moves or is placed; what it found in words; and
//! its own conditions (`enters`, `never_enters`, `ends_inside`, each naming volumes or their tags).

use std::sync::Arc;

use glam::{DQuat, DVec3};
use serde::Deserialize;

use super::jump::trajectory;
use super::records::{Hits, tags_json};
use crate::json_text::{Json, round9, round9_vec};
use crate::probe::{Conditions, HitsMode, JUMP_TIME, Probe, ProbeQuery};
use crate::query::{Crossing, Mover, ProbeShape, QueryError, TurningPath, View, VolumeEvent};

/// One meeting of a probe with a volume.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct VolumeRecord {
    /// The volume's name.
    pub volume: Arc<str>,
    /// Its tags.
    pub tags: Arc<[String]>,
    /// `inside` (at the start, or a placed shape), `enter` or `exit`.
    pub event: VolumeCrossing,
    /// Metres along the way (rays, sweeps, walks).
    #[serde(default)]
    pub distance: Option<f64>,
    /// Seconds: along a jump, or along a sweep given a duration.
    #[serde(default)]
    pub time: Option<f64>,
    /// The shape's centre (a ray's point) then.
    pub point: [f64; 3],
}

/// How a probe meets a volume, as results files name it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum VolumeCrossing {
    /// In it at the start (a placed shape: in it).
    Inside,
    /// Goes in.
    Enter,
    /// Comes out.
    Exit,
}

impl VolumeCrossing {
    /// The word results files use.
    pub fn word(self) -> &'static str {
        match self {
            VolumeCrossing::Inside => "inside",
            VolumeCrossing::Enter => "enter",
            VolumeCrossing::Exit => "exit",
        }
    }
}

impl VolumeRecord {
    /// This record as laid out in results files.
    pub fn to_json(&self) -> Json<'_> {
        let mut f = vec![
            ("volume", Json::Str(&self.volume)),
            ("tags", tags_json(&self.tags)),
            ("event", Json::Str(self.event.word())),
        ];
        if let Some(d) = self.distance {
            f.push(("distance", Json::float(d)));
        }
        if let Some(t) = self.time {
            f.push(("time", Json::float(t)));
        }
        f.push(("point", Json::vec3(self.point)));
        Json::Obj(f)
    }

    /// True when `name` is the volume's name or one of its tags.
    fn is(&self, name: &str) -> bool {
        &*self.volume == name || self.tags.iter().any(|t| t == name)
    }
}

/// Where the probe is in, enters and leaves the volumes its filter lets through: rays and sweeps up
/// to where they stop (the whole way when they list every hit), walks along the way taken, jumps
/// along the arc to the landing, placed shapes where they are. Nothing for the whole-level kinds,
/// rests and settles.
pub(super) fn records(
    view: &View,
    probe: &Probe,
    hits: &Hits,
) -> Result<Vec<VolumeRecord>, QueryError> {
    let along = |events: Vec<VolumeEvent>, seconds_per_metre: Option<f64>| {
        events
            .into_iter()
            .map(|e| record(view, e, Some(e.at), seconds_per_metre.map(|s| e.at * s)))
            .collect()
    };
    Ok(match (&probe.query, hits) {
        (
            ProbeQuery::Ray {
                from,
                to,
                hits: mode,
            },
            Hits::Ray(found),
        ) => {
            let end = match found.first() {
                Some(h) if *mode != Some(HitsMode::All) => DVec3::from_array(h.point),
                _ => *to,
            };
            along(view.volume_events(Mover::Point, &[*from, end])?, None)
        }
        (
            ProbeQuery::Sweep {
                shape,
                rotation,
                path,
                hits: mode,
                duration,
                turns,
                ..
            },
            Hits::Sweep(found),
        ) => {
            let shape = ProbeShape::turned_by(shape, *rotation)?;
            let mut way = path.clone();
            let mut orientations = turns.as_ref().map(|t| t.orientations(view.world().up()));
            if let Some(h) = found.first().filter(|_| *mode != Some(HitsMode::All)) {
                way.truncate(h.segment + 1);
                way.push(DVec3::from_array(h.position));
                if let Some(o) = orientations.as_mut() {
                    o.truncate(h.segment + 1);
                    o.push(h.rotation.map_or(o[h.segment], DQuat::from_array));
                }
            }
            let length: f64 = path.windows(2).map(|p| p[0].distance(p[1])).sum();
            let per_metre = duration.filter(|_| length > 0.0).map(|d| d / length);
            let events = match &orientations {
                Some(turns) => view.volume_events_turning(
                    &shape,
                    TurningPath {
                        points: &way,
                        turns,
                    },
                )?,
                None => view.volume_events(Mover::Shape(&shape), &way)?,
            };
            along(events, per_metre)
        }
        (ProbeQuery::Walk { shape, .. }, Hits::Walk(walked)) => {
            let shape = ProbeShape::turned_by(shape, None)?;
            let way: Vec<DVec3> = walked
                .first()
                .map(|w| w.path.iter().map(|p| DVec3::from_array(*p)).collect())
                .unwrap_or_default();
            along(view.volume_events(Mover::Shape(&shape), &way)?, None)
        }
        (
            ProbeQuery::Jump {
                shape,
                rotation,
                max_time,
                ..
            },
            Hits::Jump(landed),
        ) => {
            let arc = trajectory(&probe.query, view.world().up())?.expect("a jump probe");
            let shape = ProbeShape::turned_by(shape, *rotation)?;
            let end = landed
                .first()
                .map_or(max_time.unwrap_or(JUMP_TIME), |l| l.time);
            view.volume_events_on_arc(&shape, &arc, end)?
                .into_iter()
                .map(|e| record(view, e, None, Some(e.at)))
                .collect()
        }
        (
            ProbeQuery::Closest {
                shape,
                at,
                rotation,
                ..
            }
            | ProbeQuery::Overlap {
                shape,
                at,
                rotation,
                ..
            },
            _,
        ) => {
            let placed = ProbeShape::unless_point(shape, *rotation)?;
            let mover = placed.as_ref().map_or(Mover::Point, Mover::Shape);
            view.volumes_at(mover, *at)?
                .into_iter()
                .map(|volume| {
                    let e = VolumeEvent {
                        volume,
                        crossing: Crossing::Inside,
                        at: 0.0,
                        point: *at,
                    };
                    record(view, e, None, None)
                })
                .collect()
        }
        _ => Vec::new(),
    })
}

fn record(view: &View, e: VolumeEvent, distance: Option<f64>, time: Option<f64>) -> VolumeRecord {
    let world = view.world();
    VolumeRecord {
        volume: world.shared_name(e.volume),
        tags: world.shared_tags(e.volume),
        event: match e.crossing {
            Crossing::Inside => VolumeCrossing::Inside,
            Crossing::Enter => VolumeCrossing::Enter,
            Crossing::Exit => VolumeCrossing::Exit,
        },
        distance: distance.map(round9),
        time: time.map(round9),
        point: round9_vec(e.point),
    }
}

/// The volumes (by name) the probe is in at some point, in order of first meeting.
pub(super) fn met(records: &[VolumeRecord]) -> Vec<&VolumeRecord> {
    let mut seen: Vec<&VolumeRecord> = Vec::new();
    for r in records {
        if r.event != VolumeCrossing::Exit && !seen.iter().any(|s| s.volume == r.volume) {
            seen.push(r);
        }
    }
    seen
}

/// The volumes the probe is in at its end: met and not left after.
fn ends_in(records: &[VolumeRecord]) -> Vec<&VolumeRecord> {
    met(records)
        .into_iter()
        .filter(|v| {
            records
                .iter()
                .rev()
                .find(|r| r.volume == v.volume)
                .is_some_and(|r| r.event != VolumeCrossing::Exit)
        })
        .collect()
}

/// The first volume condition that does not hold, worded as what was expected.
pub(super) fn first_unmet(c: &Conditions, records: &[VolumeRecord]) -> Option<String> {
    let met = met(records);
    if let Some(name) = c
        .enters
        .iter()
        .flatten()
        .find(|n| !met.iter().any(|r| r.is(n)))
    {
        return Some(format!("to enter {name}"));
    }
    if let Some(name) = c
        .never_enters
        .iter()
        .flatten()
        .find(|n| met.iter().any(|r| r.is(n)))
    {
        return Some(format!("never to enter {name}"));
    }
    let end = ends_in(records);
    if let Some(name) = c
        .ends_inside
        .iter()
        .flatten()
        .find(|n| !end.iter().any(|r| r.is(n)))
    {
        return Some(format!("to end inside {name}"));
    }
    None
}

/// The volumes met, in a few words ("in water; enters checkpoint at 3.200 m, leaves at 5.100 m"), or
/// nothing when none.
pub(super) fn describe(records: &[VolumeRecord]) -> Option<String> {
    let mut parts = Vec::new();
    for v in met(records) {
        let mut words = if v.event == VolumeCrossing::Inside {
            format!("in {}", v.volume)
        } else {
            format!("enters {} at {}", v.volume, place(v))
        };
        if let Some(exit) = records
            .iter()
            .find(|r| r.volume == v.volume && r.event == VolumeCrossing::Exit)
        {
            words.push_str(&format!(", leaves at {}", place(exit)));
        }
        parts.push(words);
    }
    (!parts.is_empty()).then(|| parts.join("; "))
}

/// Where along the way an event is: metres, or seconds along a jump.
fn place(r: &VolumeRecord) -> String {
    match (r.distance, r.time) {
        (Some(d), _) => super::verdict::metres(d),
        (None, Some(t)) => format!("{t:.3} s"),
        (None, None) => String::new(),
    }
}
