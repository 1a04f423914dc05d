//! The bare query calls for probes, with nothing recorded: what `plumbline check` answers, without
//! its records, verdicts, reading or writing. Shared by the check benchmark and the
//! `bare_queries` example.

use glam::DQuat;
use plumbline_core::probe::{Probe, ProbeQuery};
use plumbline_core::query::{ClosestProbe, ProbeShape, World};

/// Answers each probe by its bare query call; returns how many hits were found (so that nothing
/// is optimised away). Probes of the kinds that are more than one query are not measured here.
pub fn bare_queries(world: &World, probes: &[Probe]) -> usize {
    let view = world.everything();
    let mut found = 0;
    for probe in probes {
        found += match &probe.query {
            ProbeQuery::Ray {
                from,
                to,
                hits: None,
            } => view.ray_first(*from, *to).unwrap().is_some() as usize,
            ProbeQuery::Ray { from, to, .. } => view.ray_all(*from, *to).unwrap().len(),
            ProbeQuery::Sweep { shape, path, .. } => {
                let shape = ProbeShape::new(shape, DQuat::IDENTITY).unwrap();
                view.sweep_first(&shape, path).unwrap().is_some() as usize
            }
            ProbeQuery::Closest {
                at, max_distance, ..
            } => view
                .closest(ClosestProbe::Point, *at, *max_distance)
                .unwrap()
                .is_some() as usize,
            ProbeQuery::Overlap { shape, at, .. } => {
                let shape = ProbeShape::new(shape, DQuat::IDENTITY).unwrap();
                view.overlap(&shape, *at).unwrap().len()
            }
            ProbeQuery::Rest { .. }
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
