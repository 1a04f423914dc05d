//! The bare query calls for probes, with nothing recorded: what `plumbline check` answers, without
//! its records, verdicts, reading or writing. Shared by the check benchmark and the
//! `bare_queries` example.

use glam::DQuat;
use plumbline_core::probe::{HitsMode, Probe, ProbeQuery};
use plumbline_core::query::{ClosestProbe, ProbeShape, World};

/// Answers each probe by its bare query call, as `check` makes it (first or every hit, the shape
/// turned by the probe's rotation); returns how many hits were found (so that nothing is optimised
/// away). Filters are not applied (every object is queried), and probes of the kinds that are more
/// than one query, or sweeps that turn along their path, are not measured here.
pub fn bare_queries(world: &World, probes: &[Probe]) -> usize {
    let view = world.everything();
    let shape_of =
        |shape, rotation: &Option<DQuat>| ProbeShape::turned_by(shape, *rotation).unwrap();
    let mut found = 0;
    for probe in probes {
        found += match &probe.query {
            ProbeQuery::Ray { from, to, hits } if *hits == Some(HitsMode::All) => {
                view.ray_all(*from, *to).unwrap().len()
            }
            ProbeQuery::Ray { from, to, .. } => {
                view.ray_first(*from, *to).unwrap().is_some() as usize
            }
            ProbeQuery::Sweep {
                shape,
                rotation,
                path,
                hits,
                turns: None,
                ..
            } => {
                let shape = shape_of(shape, rotation);
                if *hits == Some(HitsMode::All) {
                    view.sweep_all(&shape, path).unwrap().len()
                } else {
                    view.sweep_first(&shape, path).unwrap().is_some() as usize
                }
            }
            ProbeQuery::Closest {
                shape,
                at,
                rotation,
                max_distance,
            } => {
                let placed = ProbeShape::unless_point(shape, *rotation).unwrap();
                let target = placed
                    .as_ref()
                    .map_or(ClosestProbe::Point, ClosestProbe::Shape);
                view.closest(target, *at, *max_distance).unwrap().is_some() as usize
            }
            ProbeQuery::Overlap {
                shape,
                at,
                rotation,
            } => view.overlap(&shape_of(shape, rotation), *at).unwrap().len(),
            ProbeQuery::Sweep { .. }
            | ProbeQuery::Rest { .. }
            | ProbeQuery::Sightlines { .. }
            | ProbeQuery::Coverage { .. }
            | ProbeQuery::Jump { .. }
            | ProbeQuery::Walk { .. }
            | ProbeQuery::Settle { .. }
            | ProbeQuery::Reach { .. } => {
                panic!("probe {}: only single queries are measured bare", probe.id)
            }
        };
    }
    found
}
