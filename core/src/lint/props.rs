//! Props that float or sink: each object the level's props selection picks is set down exactly
//! from its own shape (a primitive's, a mesh's convex hull) as a rest probe is
//! ([`crate::query::View::rest`]).

use std::collections::HashSet;

use glam::DVec3;

use super::{Finding, FindingKind, LintOptions};
use crate::check::metres;
use crate::level::Selection;
use crate::probe::REST_SEARCH;
use crate::query::{ObjectId, ProbeShape, World};

/// The findings about props, and each floating or sunk prop with its support (their gap or
/// overlap is told once, as the floating or sinking).
pub(super) struct Resting {
    pub findings: Vec<Finding>,
    pub supports: HashSet<(ObjectId, ObjectId)>,
}

/// Sets down every prop `props` picks.
pub(super) fn rests(world: &World, props: &Selection, options: &LintOptions) -> Resting {
    let mut resting = Resting {
        findings: Vec::new(),
        supports: HashSet::new(),
    };
    for id in (0..world.len()).filter(|&id| props.picks(world.name(id), world.tags(id))) {
        let (at, turn) = world.object_frame(id);
        let Ok(shape) = ProbeShape::new(&world.object_shape(id), turn) else {
            continue;
        };
        let view = world.everything();
        let Ok(found) = view.without(&[id]).rest(&shape, at, REST_SEARCH) else {
            continue;
        };
        let name = world.shared_name(id);
        // About the prop alone (its support is named in the message).
        let finding = |kind, measure: Option<f64>, point: DVec3, message| Finding {
            kind,
            objects: vec![name.clone()],
            triangles: Vec::new(),
            count: 1,
            measure,
            point,
            edges: Vec::new(),
            message,
        };
        match found {
            None => resting.findings.push(finding(
                FindingKind::Floats,
                None,
                at,
                format!("{name} has nothing under it within {}", metres(REST_SEARCH)),
            )),
            Some(hit) if hit.gap > options.max_float => {
                resting.supports.insert(ordered(id, hit.object));
                resting.findings.push(finding(
                    FindingKind::Floats,
                    Some(hit.gap),
                    hit.point,
                    format!(
                        "{name} floats {} above {}",
                        metres(hit.gap),
                        world.name(hit.object)
                    ),
                ));
            }
            Some(hit) if -hit.gap > options.max_sink => {
                resting.supports.insert(ordered(id, hit.object));
                resting.findings.push(finding(
                    FindingKind::Sinks,
                    Some(-hit.gap),
                    hit.point,
                    format!(
                        "{name} sinks {} into {}",
                        metres(-hit.gap),
                        world.name(hit.object)
                    ),
                ));
            }
            Some(_) => {}
        }
    }
    resting
}

/// A pair of objects, the lower id first.
pub(super) fn ordered(a: ObjectId, b: ObjectId) -> (ObjectId, ObjectId) {
    (a.min(b), a.max(b))
}
