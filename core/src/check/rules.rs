//! Rules expanded on a level: every object a rule selects gets the rule's probe, anchored on the
//! object, named `<rule>/<object>`; the probes flow through checks, results, baselines and reports
//! like any other. A rule that selects nothing gives one probe, named after the rule, that answers
//! with an error (a renamed tag must not pass silently).

use std::sync::Arc;

use crate::probe::{Expect, ExpectWord, FromRule, Probe, ProbeQuery, REST_SEARCH, Rule, Template};
use crate::query::{ObjectId, World};

/// The probes the rules give on `world`: rule by rule, each selected object in level order.
pub fn expand_rules(rules: &[Rule], world: &World) -> Vec<Probe> {
    let mut probes = Vec::new();
    for rule in rules {
        let rule_id: Arc<str> = Arc::from(rule.id.as_str());
        let selection: Arc<str> = Arc::from(rule.objects.describe());
        let picked: Vec<ObjectId> = (0..world.len())
            .filter(|&id| rule.objects.picks(world.name(id), world.tags(id)))
            .collect();
        if picked.is_empty() {
            let mut probe = template_probe(rule, world, None);
            probe.id = rule.id.as_str().into();
            probe.from_rule = Some(FromRule {
                rule: rule_id.clone(),
                object: None,
                selection: selection.clone(),
            });
            probes.push(probe);
            continue;
        }
        for id in picked {
            let mut probe = template_probe(rule, world, Some(id));
            let name = world.shared_name(id);
            probe.id = format!("{}/{}", rule.id, name).into();
            probe.label = rule.label.as_ref().map(|l| format!("{l}: {name}"));
            // A probe about an object looks past that object.
            probe.filter.ignore_objects.push(name.to_string());
            probe.from_rule = Some(FromRule {
                rule: rule_id.clone(),
                object: Some(name),
                selection: selection.clone(),
            });
            probes.push(probe);
        }
    }
    probes
}

/// The rule's probe for one object (anchored on it), or with every anchor at the origin.
fn template_probe(rule: &Rule, world: &World, object: Option<ObjectId>) -> Probe {
    let up = world.up();
    let frame = |id: ObjectId| (world.object_bounds(id), world.object_frame(id));
    let blank = |query: ProbeQuery, expect: Option<Expect>| Probe {
        id: "".into(),
        label: None,
        filter: rule.filter.clone(),
        query,
        expect,
        from_rule: None,
    };
    match &rule.template {
        Template::Clear { shape, at } => {
            let at = object.map_or(glam::DVec3::ZERO, |id| {
                let (bounds, (origin, turn)) = frame(id);
                at.point(bounds, origin, turn, up)
            });
            blank(
                ProbeQuery::Overlap {
                    shape: shape.clone(),
                    at,
                    rotation: None,
                },
                Some(Expect::Word(ExpectWord::Clear)),
            )
        }
        Template::Rests { max_gap, max_sink } => {
            let (shape, at, rotation) = own_pose(world, object);
            blank(
                ProbeQuery::Rest {
                    shape,
                    at,
                    rotation,
                    search: Some(REST_SEARCH),
                },
                Some(Rule::rests_expectation(*max_gap, *max_sink)),
            )
        }
        Template::Settles { max_move, max_turn } => {
            let (shape, at, rotation) = own_pose(world, object);
            blank(
                ProbeQuery::Settle {
                    shape,
                    at,
                    rotation,
                    density: None,
                    friction: None,
                    restitution: None,
                    max_time: None,
                },
                Some(Expect::Conditions(Box::new(crate::probe::Conditions {
                    max_move: Some(*max_move),
                    max_turn: Some(*max_turn),
                    ..Default::default()
                }))),
            )
        }
        Template::Probe { probe, anchors } => {
            let mut probe = (**probe).clone();
            if let Some(id) = object {
                let (bounds, (origin, turn)) = frame(id);
                for (k, anchor) in anchors {
                    if let Some(p) = probe.query.point_mut(*k) {
                        *p = anchor.point(bounds, origin, turn, up);
                    }
                }
            }
            probe
        }
    }
}

/// An object's own shape at its own pose (a stand-in when the rule selected no object: its probe
/// errs before it is answered).
fn own_pose(
    world: &World,
    object: Option<ObjectId>,
) -> (crate::level::ShapeSpec, glam::DVec3, Option<glam::DQuat>) {
    match object {
        Some(id) => {
            let (at, turn) = world.object_frame(id);
            (world.object_shape(id), at, Some(turn))
        }
        None => (
            crate::level::ShapeSpec::Sphere { radius: 1.0 },
            glam::DVec3::ZERO,
            None,
        ),
    }
}
