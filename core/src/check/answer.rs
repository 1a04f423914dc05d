//! Answering one probe with the query core and turning the answer into result records.

use super::records::{
    ClearanceRecord, ClosestRecord, Hits, OverlapRecord, ProbeResult, RayHitRecord, SourceRecord,
    SweepHitRecord, Verdict,
};
use super::verdict::judge;
use super::{answer_level, jump, reach, settle, volumes, walk};
use crate::json_text::{round9, round9_vec};
use crate::level::FacePlace;
use crate::probe::{HitsMode, Probe, ProbeQuery};
use crate::query::{
    ClosestProbe, MaterialId, ObjectId, ProbeShape, Progress, QueryError, TurningPath, View, World,
};

/// Answers one probe and judges it against its expectation.
pub fn answer_probe(world: &World, probe: &Probe) -> ProbeResult {
    answer_probe_watched(world, probe, &Progress::default())
}

/// [`answer_probe`] for a long answer watched from elsewhere: a reach map counts its steps in
/// `progress` and stops when it is cancelled (the probe's result is then an error that says so).
pub fn answer_probe_watched(world: &World, probe: &Probe, progress: &Progress) -> ProbeResult {
    let kind = probe.query.kind();
    if let Some(rule) = probe.from_rule.as_ref().filter(|r| r.object.is_none()) {
        return ProbeResult {
            id: probe.id.clone(),
            hits: Hits::empty(kind),
            kind,
            verdict: Verdict::Error,
            reason: format!(
                "The rule selects no object: the level has no {} (a tag or name changed?)",
                rule.selection
            )
            .into(),
            clearance: None,
            volumes: Vec::new(),
        };
    }
    let answered = answer(world, probe, progress).and_then(|(hits, clearance)| {
        let volumes = if world.has_volumes() {
            volumes::records(&world.view(&probe.filter), probe, &hits)?
        } else {
            Vec::new()
        };
        Ok((hits, clearance, volumes))
    });
    match answered {
        Ok((hits, clearance, volumes)) => {
            let (verdict, reason) = judge(probe, &hits, clearance.as_ref(), &volumes, world.up());
            ProbeResult {
                id: probe.id.clone(),
                kind,
                verdict,
                reason,
                hits,
                clearance,
                volumes,
            }
        }
        Err(error) => ProbeResult {
            id: probe.id.clone(),
            hits: Hits::empty(kind),
            kind,
            verdict: Verdict::Error,
            reason: format!("could not be answered: {error}").into(),
            clearance: None,
            volumes: Vec::new(),
        },
    }
}

type Answer = (Hits, Option<ClearanceRecord>);

fn answer(world: &World, probe: &Probe, progress: &Progress) -> Result<Answer, QueryError> {
    let view = world.view(&probe.filter);
    let tags = |id, material| world.hit_tags(id, material);
    let name = |id| world.shared_name(id);
    let material = |m: Option<MaterialId>| m.map(|m| world.shared_material(m));
    let source = |id, triangle: Option<u32>| source_record(world, id, triangle?);
    Ok(match &probe.query {
        ProbeQuery::Ray { from, to, hits } => {
            let all;
            let first;
            let found: &[_] = if *hits == Some(HitsMode::All) {
                all = view.ray_all(*from, *to)?;
                &all
            } else {
                first = view.ray_first(*from, *to)?;
                first.as_slice()
            };
            let records = found
                .iter()
                .map(|h| RayHitRecord {
                    object: name(h.object),
                    tags: tags(h.object, h.material),
                    distance: round9(h.distance),
                    t: round9(h.t),
                    point: round9_vec(h.point),
                    normal: round9_vec(h.normal),
                    triangle: h.triangle,
                    source: source(h.object, h.triangle),
                    material: material(h.material),
                    back_face: h.back_face,
                })
                .collect();
            (Hits::Ray(records), None)
        }
        ProbeQuery::Sweep {
            shape,
            rotation,
            path,
            hits,
            duration,
            turns,
            ..
        } => {
            let shape = ProbeShape::turned_by(shape, *rotation)?;
            let all = *hits == Some(HitsMode::All);
            let found = match turns {
                Some(turns) => {
                    let orientations = turns.orientations(world.up());
                    let turning = TurningPath {
                        points: path,
                        turns: &orientations,
                    };
                    if all {
                        view.sweep_turning_all(&shape, turning)?
                    } else {
                        view.sweep_turning_first(&shape, turning)?
                            .into_iter()
                            .collect()
                    }
                }
                None if all => view.sweep_all(&shape, path)?,
                None => view.sweep_first(&shape, path)?.into_iter().collect(),
            };
            let records = found
                .iter()
                .map(|h| SweepHitRecord {
                    object: name(h.object),
                    tags: tags(h.object, h.material),
                    distance: round9(h.distance),
                    t: round9(h.t),
                    segment: h.segment,
                    time: duration.map(|d| round9(h.t * d)),
                    position: round9_vec(h.position),
                    rotation: turns.is_some().then(|| h.rotation.to_array().map(round9)),
                    point: round9_vec(h.point),
                    normal: round9_vec(h.normal),
                    started_inside: h.started_inside,
                    triangle: h.triangle,
                    source: source(h.object, h.triangle),
                    material: material(h.material),
                })
                .collect();
            let clearance = if probe.query.wants_clearance(probe.expect.as_ref()) {
                view.sweep_clearance(&shape, path, found.first())?
                    .map(|c| ClearanceRecord {
                        distance: round9(c.distance),
                        t: round9(c.t),
                        position: round9_vec(c.position),
                        object: name(c.object),
                        point: round9_vec(c.point),
                    })
            } else {
                None
            };
            (Hits::Sweep(records), clearance)
        }
        ProbeQuery::Closest {
            shape,
            at,
            rotation,
            max_distance,
        } => {
            let placed = ProbeShape::unless_point(shape, *rotation)?;
            let target = placed
                .as_ref()
                .map_or(ClosestProbe::Point, ClosestProbe::Shape);
            let records = view
                .closest(target, *at, *max_distance)?
                .map(|h| ClosestRecord {
                    object: name(h.object),
                    tags: tags(h.object, h.material),
                    distance: round9(h.distance),
                    point: round9_vec(h.point),
                    shape_point: round9_vec(h.shape_point),
                    normal: round9_vec(h.normal),
                    overlapping: h.overlapping,
                    material: material(h.material),
                })
                .into_iter()
                .collect();
            (Hits::Closest(records), None)
        }
        ProbeQuery::Overlap {
            shape,
            at,
            rotation,
        } => {
            let shape = ProbeShape::turned_by(shape, *rotation)?;
            let records = overlap_records(&view, &shape, *at)?;
            (Hits::Overlap(records), None)
        }
        ProbeQuery::Rest {
            shape,
            at,
            rotation,
            search,
        } => (
            answer_level::rest(&view, shape, *rotation, *at, *search)?,
            None,
        ),
        ProbeQuery::Sightlines { spots } => (answer_level::sightlines(&view, spots)?, None),
        ProbeQuery::Coverage {
            spots,
            region,
            spacing,
        } => (
            answer_level::coverage(&view, spots, region, *spacing)?,
            None,
        ),
        ProbeQuery::Jump { .. } => (jump::answer(&view, &probe.query)?, None),
        ProbeQuery::Walk { .. } => (walk::answer(&view, &probe.query)?, None),
        ProbeQuery::Reach { .. } => (reach::answer(&view, &probe.query, progress)?, None),
        ProbeQuery::Settle { .. } => (settle::answer(&view, &probe.query)?, None),
    })
}

fn overlap_records(
    view: &View,
    shape: &ProbeShape,
    at: glam::DVec3,
) -> Result<Vec<OverlapRecord>, QueryError> {
    let world = view.world();
    Ok(view
        .overlap(shape, at)?
        .iter()
        .map(|h| OverlapRecord {
            object: world.shared_name(h.object),
            tags: world.hit_tags(h.object, h.material),
            depth: round9(h.depth),
            direction: round9_vec(h.direction),
            point: round9_vec(h.point),
            enclosed: h.enclosed,
            material: h.material.map(|m| world.shared_material(m)),
        })
        .collect())
}

/// Where triangle `number` of a mesh object is in the user's file (nothing for a list of triangles
/// written in the level file, whose number is the place).
fn source_record(world: &World, object: ObjectId, number: u32) -> Option<SourceRecord> {
    let file = world.source_file(object).cloned();
    match world.face_place(object, number)? {
        FacePlace::Listed => None,
        FacePlace::Obj {
            line, face, fan, ..
        } => Some(SourceRecord {
            file,
            line: Some(line),
            face: Some(face),
            fan: Some(fan),
            mesh: None,
            primitive: None,
            triangle: None,
        }),
        FacePlace::Gltf {
            mesh,
            primitive,
            triangle,
        } => Some(SourceRecord {
            file,
            line: None,
            face: None,
            fan: None,
            mesh: Some(mesh),
            primitive: Some(primitive),
            triangle: Some(triangle),
        }),
    }
}
