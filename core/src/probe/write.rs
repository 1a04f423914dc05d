//! Writing probe sets in the file format: stable (the same set gives the same bytes) and laid out
//! for people to read and review; loading what is written gives the same set.

use glam::{DQuat, DVec3};
use serde_json::{Map, Value, json};

use super::model::{Launch, Probe, ProbeQuery, ProbeSet, Spots, Turns};
use crate::level::ShapeSpec;

/// Serialises a probe set in the file format, stable and ready to save.
pub fn probe_set_to_json(set: &ProbeSet) -> String {
    let probes: Vec<Value> = set
        .probes
        .iter()
        .filter(|p| p.from_rule.is_none())
        .map(probe_to_value)
        .collect();
    let mut value = json!({});
    if let Some(schema) = &set.schema {
        value["$schema"] = json!(schema);
    }
    value["plumbline"] = json!("probes");
    value["version"] = json!(1);
    value["level"] = json!(set.level);
    value["probes"] = Value::Array(probes);
    if !set.rules.is_empty() {
        let rules: Vec<Value> = set.rules.iter().map(|r| r.written.clone()).collect();
        value["rules"] = Value::Array(rules);
    }
    crate::json_text::to_pretty(&value)
}

/// Rules as the probe-set file's `rules` array holds them, laid out for reading (what the window's
/// rule editor shows).
pub fn rules_to_json(rules: &[super::rules::Rule]) -> String {
    let list: Vec<Value> = rules.iter().map(|r| r.written.clone()).collect();
    crate::json_text::to_pretty(&Value::Array(list))
}

/// A set of spots as the file writes it: `spots`, `spot_tags`, `eye`.
fn spots_fields(spots: &Spots, m: &mut Map<String, Value>) {
    if !spots.points.is_empty() {
        m.insert("spots".into(), json!(spots.points));
    }
    if !spots.tags.is_empty() {
        m.insert("spot_tags".into(), json!(spots.tags));
    }
    if let Some(eye) = spots.eye {
        m.insert("eye".into(), json!(eye));
    }
}

fn probe_to_value(p: &Probe) -> Value {
    let mut m = Map::new();
    m.insert("id".into(), json!(p.id));
    if let Some(label) = &p.label {
        m.insert("label".into(), json!(label));
    }
    m.insert("kind".into(), json!(p.query.kind().name()));
    let vec3 = |v: DVec3| json!(v.to_array());
    let quat = |q: &Option<DQuat>, m: &mut Map<String, Value>| {
        if let Some(q) = q {
            m.insert("rotation".into(), json!(q.to_array()));
        }
    };
    let shape = |s: &ShapeSpec| serde_json::to_value(s).expect("shapes serialise");
    match &p.query {
        ProbeQuery::Ray { from, to, hits } => {
            m.insert("from".into(), vec3(*from));
            m.insert("to".into(), vec3(*to));
            if let Some(h) = hits {
                m.insert("hits".into(), json!(h));
            }
        }
        ProbeQuery::Sweep {
            shape: s,
            rotation,
            path,
            hits,
            duration,
            clearance,
            turns,
        } => {
            m.insert("shape".into(), shape(s));
            quat(rotation, &mut m);
            m.insert(
                "path".into(),
                json!(path.iter().map(|p| p.to_array()).collect::<Vec<_>>()),
            );
            if let Some(h) = hits {
                m.insert("hits".into(), json!(h));
            }
            if let Some(d) = duration {
                m.insert("duration".into(), json!(d));
            }
            if let Some(c) = clearance {
                m.insert("clearance".into(), json!(c));
            }
            match turns {
                Some(Turns::Quaternions(q)) => {
                    m.insert(
                        "turns".into(),
                        json!(q.iter().map(|q| q.to_array()).collect::<Vec<_>>()),
                    );
                }
                Some(Turns::Yaw(d)) => {
                    m.insert("yaw".into(), json!(d));
                }
                None => {}
            }
        }
        ProbeQuery::Closest {
            shape: s,
            at,
            rotation,
            max_distance,
        } => {
            m.insert("shape".into(), shape(s));
            m.insert("at".into(), vec3(*at));
            quat(rotation, &mut m);
            m.insert("max_distance".into(), json!(max_distance));
        }
        ProbeQuery::Overlap {
            shape: s,
            at,
            rotation,
        } => {
            m.insert("shape".into(), shape(s));
            m.insert("at".into(), vec3(*at));
            quat(rotation, &mut m);
        }
        ProbeQuery::Rest {
            shape: s,
            at,
            rotation,
            search,
        } => {
            m.insert("shape".into(), shape(s));
            m.insert("at".into(), vec3(*at));
            quat(rotation, &mut m);
            if let Some(d) = search {
                m.insert("search".into(), json!(d));
            }
        }
        ProbeQuery::Sightlines { spots } => spots_fields(spots, &mut m),
        ProbeQuery::Coverage {
            spots,
            region,
            spacing,
        } => {
            spots_fields(spots, &mut m);
            m.insert("region".into(), json!(region));
            m.insert("spacing".into(), json!(spacing));
        }
        ProbeQuery::Reach {
            shape: s,
            spots,
            region,
            spacing,
            targets,
            target_tags,
            max_step,
            max_slope,
        } => {
            m.insert("shape".into(), shape(s));
            spots_fields(spots, &mut m);
            m.insert("region".into(), json!(region));
            m.insert("spacing".into(), json!(spacing));
            if !targets.is_empty() {
                m.insert("targets".into(), json!(targets));
            }
            if !target_tags.is_empty() {
                m.insert("target_tags".into(), json!(target_tags));
            }
            for (field, value) in [("max_step", max_step), ("max_slope", max_slope)] {
                if let Some(v) = value {
                    m.insert(field.into(), json!(v));
                }
            }
        }
        ProbeQuery::Walk {
            shape: s,
            path,
            max_step,
            max_slope,
        } => {
            m.insert("shape".into(), shape(s));
            m.insert(
                "path".into(),
                json!(path.iter().map(|p| p.to_array()).collect::<Vec<_>>()),
            );
            for (field, value) in [("max_step", max_step), ("max_slope", max_slope)] {
                if let Some(v) = value {
                    m.insert(field.into(), json!(v));
                }
            }
        }
        ProbeQuery::Settle {
            shape: s,
            at,
            rotation,
            density,
            friction,
            restitution,
            max_time,
        } => {
            m.insert("shape".into(), shape(s));
            m.insert("at".into(), vec3(*at));
            quat(rotation, &mut m);
            for (field, value) in [
                ("density", density),
                ("friction", friction),
                ("restitution", restitution),
                ("max_time", max_time),
            ] {
                if let Some(v) = value {
                    m.insert(field.into(), json!(v));
                }
            }
        }
        ProbeQuery::Jump {
            shape: s,
            rotation,
            from,
            launch,
            gravity,
            max_slope,
            max_time,
        } => {
            m.insert("shape".into(), shape(s));
            quat(rotation, &mut m);
            m.insert("from".into(), vec3(*from));
            match launch {
                Launch::Velocity(v) => {
                    m.insert("velocity".into(), vec3(*v));
                }
                Launch::Target { to, apex } => {
                    m.insert("to".into(), vec3(*to));
                    m.insert("apex".into(), json!(apex));
                }
            }
            for (field, value) in [
                ("gravity", gravity),
                ("max_slope", max_slope),
                ("max_time", max_time),
            ] {
                if let Some(v) = value {
                    m.insert(field.into(), json!(v));
                }
            }
        }
    }
    if !p.filter.ignore_tags.is_empty() {
        m.insert("ignore_tags".into(), json!(p.filter.ignore_tags));
    }
    if let Some(only) = &p.filter.only_tags {
        m.insert("only_tags".into(), json!(only));
    }
    if !p.filter.ignore_objects.is_empty() {
        m.insert("ignore_objects".into(), json!(p.filter.ignore_objects));
    }
    if let Some(e) = &p.expect {
        m.insert(
            "expect".into(),
            serde_json::to_value(e).expect("expectations serialise"),
        );
    }
    Value::Object(m)
}
