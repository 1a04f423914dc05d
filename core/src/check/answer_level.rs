//! Answering the whole-level kinds — rest, sightlines, coverage — and turning their answers into
//! records.

use std::sync::Arc;

use glam::{DQuat, DVec3};

use super::level_records::{CoverageRecord, MAX_LISTED_POINTS, PairRecord, RestRecord};
use super::records::Hits;
use crate::json_text::{round9, round9_vec};
use crate::level::ShapeSpec;
use crate::probe::{EYE_HEIGHT, REST_SEARCH, Region, Spots};
use crate::query::{ProbeShape, QueryError, SpotAt, View, World};

/// Where a shape rests.
pub(super) fn rest(
    view: &View,
    shape: &ShapeSpec,
    rotation: Option<DQuat>,
    at: DVec3,
    search: Option<f64>,
) -> Result<Hits, QueryError> {
    let world = view.world();
    let shape = ProbeShape::new(shape, rotation.unwrap_or(DQuat::IDENTITY))?;
    let found = view.rest(&shape, at, search.unwrap_or(REST_SEARCH))?;
    Ok(Hits::Rest(
        found
            .map(|h| RestRecord {
                object: world.shared_name(h.object),
                tags: world.hit_tags(h.object, h.material),
                gap: round9(h.gap),
                point: round9_vec(h.point),
                normal: round9_vec(h.normal),
                material: h.material.map(|m| world.shared_material(m)),
            })
            .into_iter()
            .collect(),
    ))
}

/// Which spots see which.
pub(super) fn sightlines(view: &View, spots: &Spots) -> Result<Hits, QueryError> {
    let world = view.world();
    let list = spot_list(world, spots);
    let pairs = view.sightlines(&list)?;
    Ok(Hits::Sightlines(
        pairs
            .iter()
            .map(|p| {
                let blocker = p.blocker;
                PairRecord {
                    a: list[p.a].name.clone(),
                    b: list[p.b].name.clone(),
                    from: round9_vec(list[p.a].at),
                    to: round9_vec(list[p.b].at),
                    sees: blocker.is_none(),
                    object: blocker.map(|h| world.shared_name(h.object)),
                    tags: blocker.map(|h| world.hit_tags(h.object, h.material)),
                    distance: blocker.map(|h| round9(h.distance)),
                    point: blocker.map(|h| round9_vec(h.point)),
                }
            })
            .collect(),
    ))
}

/// What share of the region the spots see.
pub(super) fn coverage(
    view: &View,
    spots: &Spots,
    region: &Region,
    spacing: f64,
) -> Result<Hits, QueryError> {
    let world = view.world();
    let list = spot_list(world, spots);
    let outline: Option<Vec<DVec3>> = region
        .outline
        .as_ref()
        .map(|o| o.iter().map(|p| DVec3::from_array(*p)).collect());
    let samples = view.coverage(
        &list,
        (DVec3::from_array(region.min), DVec3::from_array(region.max)),
        outline.as_deref(),
        spacing,
    )?;
    let seen = samples.iter().filter(|s| s.seen).count();
    let cell = spacing * spacing;
    let listed = |want: bool| -> Vec<[f64; 3]> {
        samples
            .iter()
            .filter(|s| s.seen == want)
            .take(MAX_LISTED_POINTS)
            .map(|s| round9_vec(s.at))
            .collect()
    };
    Ok(Hits::Coverage(vec![CoverageRecord {
        spots: list.iter().map(|s| s.name.to_string()).collect(),
        spot_points: list.iter().map(|s| round9_vec(s.at)).collect(),
        points: samples.len(),
        seen,
        share: if samples.is_empty() {
            0.0
        } else {
            round9(seen as f64 / samples.len() as f64)
        },
        area_seen: round9(seen as f64 * cell),
        area_unseen: round9((samples.len() - seen) as f64 * cell),
        seen_points: if samples.len() <= MAX_LISTED_POINTS {
            listed(true)
        } else {
            Vec::new()
        },
        unseen_points: listed(false),
    }]))
}

/// The spots: the named points, then every tagged object (in level order) with its spot an eye
/// height above the top of its bounds.
pub fn spot_list(world: &World, spots: &Spots) -> Vec<SpotAt> {
    let up = world.up();
    let eye = spots.eye.unwrap_or(EYE_HEIGHT);
    let mut list: Vec<SpotAt> = spots
        .points
        .iter()
        .map(|s| SpotAt {
            name: Arc::from(s.name.as_str()),
            at: DVec3::from_array(s.at),
            object: None,
        })
        .collect();
    if !spots.tags.is_empty() {
        for id in world.tagged(&spots.tags) {
            let (lo, hi) = world.object_bounds(id);
            let centre = (lo + hi) / 2.0;
            let half_up = ((hi - lo) / 2.0).dot(up.abs());
            list.push(SpotAt {
                name: world.shared_name(id),
                at: centre + up * (half_up + eye),
                object: Some(id),
            });
        }
    }
    list
}
