//! Rules: one probe template applied to every object a selection picks (every spawn, every prop,
//! every lookout), so that checks scale with the level. A rule is read and checked here, its
//! template parsed once as a probe; it is expanded on a level by [`crate::check::expand_rules`].
//!
//! ```json
//! { "id": "spawns-clear", "label": "No spawn point starts inside anything",
//!   "objects": { "tags": ["spawn"] },
//!   "clear": { "shape": {"type": "capsule", "radius": 0.35, "half_height": 0.55},
//!              "at": {"anchor": "bottom", "offset": [0, 0.91, 0]} } }
//! { "id": "props-rest", "objects": { "tags": ["prop"] }, "rests": { "max_gap": 0.01 } }
//! { "id": "lookouts-see-gate", "objects": { "tags": ["lookout"], "match": "tower-*" },
//!   "probe": { "kind": "ray", "from": {"anchor": "top", "offset": [0, 1.7, 0]},
//!              "to": [40, 1.5, 60], "expect": "clear" } }
//! ```

use std::path::Path;
use std::sync::Arc;

use glam::DVec3;
use serde::{Deserialize, Serialize};
use serde_json::Value;
use serde_json::value::RawValue;

use super::model::{Expect, Probe, Range};
use super::parse::{check_id, parse_probe};
use crate::error::InputError;
use crate::input::check_name;
use crate::level::{Selection, ShapeSpec};
use crate::query::Filter;

/// A rule: a selection of objects and the probe each gets.
#[derive(Debug, Clone, PartialEq)]
pub struct Rule {
    /// Unique among the set's rules and probes, `[A-Za-z0-9._-]+`.
    pub id: String,
    /// What the rule checks, in words.
    pub label: Option<String>,
    /// Which objects it applies to.
    pub objects: Selection,
    /// The probe each selected object gets.
    pub template: Template,
    /// Which objects the probes look at (each probe also looks past its own object).
    pub filter: Filter,
    /// The rule as written, so that saving writes it as it was.
    pub written: Value,
}

/// A point of an object: one of its landmarks, moved by an offset in the object's own frame (turned
/// with a primitive; along the level's axes for a mesh).
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Anchor {
    /// Which landmark.
    #[serde(default)]
    pub anchor: Landmark,
    /// Metres from it.
    #[serde(default)]
    pub offset: [f64; 3],
}

/// The landmarks of an object.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Landmark {
    /// A primitive's centre; for a mesh, the centre of its bounds.
    #[default]
    Origin,
    /// The centre of its bounds.
    Centre,
    /// The middle of the bottom of its bounds (along the level's up).
    Bottom,
    /// The middle of the top of its bounds.
    Top,
}

/// What a rule asks of each object.
#[derive(Debug, Clone, PartialEq)]
pub enum Template {
    /// A shape at an anchor overlaps nothing (spawn points).
    Clear {
        /// The shape.
        shape: ShapeSpec,
        /// Where it stands.
        at: Anchor,
    },
    /// The object rests on the level: the gap below its own shape (a primitive's; a mesh's convex
    /// hull) is at most `max_gap`, and it sinks at most `max_sink` into what is under it.
    Rests {
        /// Metres (default [`REST_TOLERANCE`]).
        max_gap: f64,
        /// Metres (default [`REST_TOLERANCE`]).
        max_sink: f64,
    },
    /// The object, let go as a rigid body where it is, comes to rest at most `max_move` metres away
    /// and turned at most `max_turn` degrees.
    Settles {
        /// Metres (default `SETTLE_MOVE`).
        max_move: f64,
        /// Degrees (default `SETTLE_TURN`).
        max_turn: f64,
    },
    /// Any probe, with anchors for points.
    Probe {
        /// The template parsed with every anchor at the origin.
        probe: Box<Probe>,
        /// Which of the probe's points are anchored (by their index in
        /// [`ProbeQuery::points`](super::model::ProbeQuery::points)), and how.
        anchors: Vec<(usize, Anchor)>,
    },
}

/// How far a prop may float above or sink into its support under a `rests` rule when the rule does
/// not say: a centimetre, common practice for placement checks (from memory).
pub const REST_TOLERANCE: f64 = 0.01;

/// How far a prop may move when let go under a `settles` rule that does not say, metres: 5 cm, a
/// small nudge nobody would notice in play. Ours.
pub const SETTLE_MOVE: f64 = 0.05;

/// How far a prop may turn when let go under a `settles` rule that does not say, degrees. Ours.
pub const SETTLE_TURN: f64 = 5.0;

/// Which probe a rule gave: the rule, and the object (`None`: the rule selected no object, an error
/// of its own).
#[derive(Debug, Clone, PartialEq)]
pub struct FromRule {
    /// The rule's id.
    pub rule: Arc<str>,
    /// The object the probe is about.
    pub object: Option<Arc<str>>,
    /// The rule's selection in words (`objects tagged spawn`), for the error when it selects none.
    pub selection: Arc<str>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRule<'a> {
    id: String,
    label: Option<String>,
    #[serde(deserialize_with = "crate::json_object::object")]
    objects: Selection,
    #[serde(default, deserialize_with = "crate::json_object::optional_object")]
    clear: Option<RawClear>,
    #[serde(default, deserialize_with = "crate::json_object::optional_object")]
    rests: Option<RawRests>,
    #[serde(default, deserialize_with = "crate::json_object::optional_object")]
    settles: Option<RawSettles>,
    #[serde(borrow)]
    probe: Option<&'a RawValue>,
    ignore_tags: Option<Vec<String>>,
    only_tags: Option<Vec<String>>,
    ignore_objects: Option<Vec<String>>,
    #[serde(borrow)]
    expect: Option<&'a RawValue>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawClear {
    #[serde(deserialize_with = "crate::json_object::object")]
    shape: ShapeSpec,
    #[serde(default, deserialize_with = "crate::json_object::object")]
    at: Anchor,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRests {
    max_gap: Option<f64>,
    max_sink: Option<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSettles {
    max_move: Option<f64>,
    max_turn: Option<f64>,
}

/// Parses rule `fragment`, a slice of the probe-set file's `text`.
pub(super) fn parse_rule(path: &Path, text: &str, fragment: &str) -> Result<Rule, InputError> {
    let raw: RawRule = crate::json_object::from_object_str(fragment)
        .map_err(|e| InputError::json_in(path, text, fragment, &e))?;
    let here = |message: String| InputError::at_fragment(path, text, fragment, message);
    check_id("rule", &raw.id).map_err(here)?;
    let fail = |message: String| here(format!("rule \"{}\": {message}", raw.id));
    if raw.objects.tags.is_empty() && raw.objects.pattern.is_none() {
        return Err(fail(
            "\"objects\" needs \"tags\", \"match\" or both (which objects the rule is for)".into(),
        ));
    }
    let written: Value = serde_json::from_str(fragment)
        .map_err(|e| InputError::json_in(path, text, fragment, &e))?;
    let filter = Filter {
        ignore_tags: raw.ignore_tags.clone().unwrap_or_default(),
        only_tags: raw.only_tags.clone(),
        ignore_objects: raw.ignore_objects.clone().unwrap_or_default(),
    };
    for name in filter
        .ignore_tags
        .iter()
        .chain(filter.only_tags.iter().flatten())
        .chain(&filter.ignore_objects)
    {
        check_name("a tag or object name", name).map_err(fail)?;
    }
    let filters = filter_fields(&written);
    let template = match (&raw.clear, &raw.rests, &raw.settles, raw.probe) {
        (Some(clear), None, None, None) => {
            // Checked as the overlap probe it stands for.
            let mut probe = json_object(&[
                ("kind", Value::from("overlap")),
                (
                    "shape",
                    serde_json::to_value(&clear.shape).expect("shapes serialise"),
                ),
                ("at", Value::from(vec![0.0; 3])),
                ("expect", Value::from("clear")),
            ]);
            merge(&mut probe, &filters);
            check_template(path, &probe, &raw.id).map_err(fail)?;
            Template::Clear {
                shape: clear.shape.clone(),
                at: clear.at,
            }
        }
        (None, Some(rests), None, None) => {
            let tolerance = |field: &str, v: Option<f64>| -> Result<f64, String> {
                let v = v.unwrap_or(REST_TOLERANCE);
                if v.is_finite() && v >= 0.0 {
                    Ok(v)
                } else {
                    Err(format!("rests.{field} must be zero or more metres"))
                }
            };
            Template::Rests {
                max_gap: tolerance("max_gap", rests.max_gap).map_err(fail)?,
                max_sink: tolerance("max_sink", rests.max_sink).map_err(fail)?,
            }
        }
        (None, None, Some(settles), None) => {
            let max_move = settles.max_move.unwrap_or(SETTLE_MOVE);
            let max_turn = settles.max_turn.unwrap_or(SETTLE_TURN);
            if !(max_move.is_finite() && max_move >= 0.0) {
                return Err(fail("settles.max_move must be zero or more metres".into()));
            }
            if !(max_turn.is_finite() && (0.0..=180.0).contains(&max_turn)) {
                return Err(fail("settles.max_turn is degrees from 0 to 180".into()));
            }
            Template::Settles { max_move, max_turn }
        }
        (None, None, None, Some(probe)) => {
            let mut value: Value = serde_json::from_str(probe.get())
                .map_err(|e| InputError::json_in(path, text, probe.get(), &e))?;
            if value.get("id").is_some() {
                return Err(fail(
                    "a rule's probe takes no \"id\" (each is named <rule>/<object>)".into(),
                ));
            }
            merge(&mut value, &filters);
            let anchors = take_anchors(&mut value).map_err(fail)?;
            let parsed = check_template(path, &value, &raw.id).map_err(fail)?;
            let points = parsed.query.points().len();
            if let Some((k, _)) = anchors.iter().find(|(k, _)| *k >= points) {
                return Err(fail(format!("anchor {k} is not a point of the probe")));
            }
            Template::Probe {
                probe: Box::new(parsed),
                anchors,
            }
        }
        _ => {
            return Err(fail(
                "a rule needs exactly one of \"clear\", \"rests\", \"settles\" and \"probe\""
                    .into(),
            ));
        }
    };
    if raw.expect.is_some() && !matches!(template, Template::Rests { .. }) {
        return Err(fail(
            "\"expect\" goes inside the rule's \"probe\" (clear and rests rules expect theirs)"
                .into(),
        ));
    }
    Ok(Rule {
        id: raw.id,
        label: raw.label,
        objects: raw.objects,
        template,
        filter,
        written,
    })
}

/// Parses `text`, a JSON array of rules as the probe-set file's `rules` holds them (rule ids
/// unique); `path` is named in errors. The window's rule editor reads what is typed with it.
pub fn parse_rules(path: &Path, text: &str) -> Result<Vec<Rule>, InputError> {
    let raw: Vec<&RawValue> = serde_json::from_str(text).map_err(|e| InputError::json(path, &e))?;
    let mut rules: Vec<Rule> = Vec::with_capacity(raw.len());
    for fragment in raw {
        let rule = parse_rule(path, text, fragment.get())?;
        if rules.iter().any(|r| r.id == rule.id) {
            return Err(InputError::at_fragment(
                path,
                text,
                fragment.get(),
                format!("rule id \"{}\" is used twice", rule.id),
            ));
        }
        rules.push(rule);
    }
    Ok(rules)
}

/// The filter fields of a rule, to pass on to the probes it gives.
fn filter_fields(rule: &Value) -> Vec<(String, Value)> {
    ["ignore_tags", "only_tags", "ignore_objects"]
        .into_iter()
        .filter_map(|k| rule.get(k).map(|v| (k.to_string(), v.clone())))
        .collect()
}

fn json_object(fields: &[(&str, Value)]) -> Value {
    Value::Object(
        fields
            .iter()
            .map(|(k, v)| (k.to_string(), v.clone()))
            .collect(),
    )
}

/// Adds the rule's filters to a template probe (a probe's own filters come first).
fn merge(probe: &mut Value, filters: &[(String, Value)]) {
    if let Value::Object(map) = probe {
        for (k, v) in filters {
            match (map.get_mut(k), v) {
                (Some(Value::Array(own)), Value::Array(more)) => own.extend(more.iter().cloned()),
                (None, _) => {
                    map.insert(k.clone(), v.clone());
                }
                _ => {}
            }
        }
    }
}

/// Replaces every anchor in the template's point fields (`from`, `to`, `at`, `path` items) by the
/// origin, and says which of the probe's points they were.
fn take_anchors(probe: &mut Value) -> Result<Vec<(usize, Anchor)>, String> {
    let Value::Object(map) = probe else {
        return Err("\"probe\" must be an object".into());
    };
    let mut anchors = Vec::new();
    let mut take = |slot: usize, value: &mut Value| -> Result<(), String> {
        if value.is_object() {
            let anchor: Anchor =
                serde_json::from_value(value.clone()).map_err(|e| format!("an anchor: {e}"))?;
            *value = Value::from(vec![0.0; 3]);
            anchors.push((slot, anchor));
        }
        Ok(())
    };
    for (field, slot) in [("from", 0), ("to", 1), ("at", 0)] {
        if let Some(value) = map.get_mut(field) {
            take(slot, value)?;
        }
    }
    if let Some(Value::Array(path)) = map.get_mut("path") {
        for (k, point) in path.iter_mut().enumerate() {
            take(k, point)?;
        }
    }
    Ok(anchors)
}

/// Parses a template probe with a placeholder id, holding it to the probe format.
fn check_template(path: &Path, probe: &Value, rule: &str) -> Result<Probe, String> {
    let mut probe = probe.clone();
    if let Value::Object(map) = &mut probe {
        map.insert("id".into(), Value::from(rule));
    }
    let text = probe.to_string();
    parse_probe(path, &text, &text).map_err(|e| {
        e.message
            .strip_prefix(&format!("probe \"{rule}\": "))
            .map_or(e.message.clone(), str::to_string)
    })
}

impl Rule {
    /// The probe a `rests` rule gives an object: its own shape at its own pose, expecting a gap
    /// between `-max_sink` and `max_gap`.
    pub fn rests_expectation(max_gap: f64, max_sink: f64) -> Expect {
        Expect::Conditions(Box::new(super::model::Conditions {
            distance: Some(Range {
                min: Some(-max_sink),
                max: Some(max_gap),
            }),
            ..Default::default()
        }))
    }
}

impl Anchor {
    /// The anchored point for an object with bounds `lo`–`hi`, turned by `rotation` and centred on
    /// `origin` (a primitive's pose; a mesh's bounds centre), in a level whose up axis is `up`.
    pub fn point(
        &self,
        (lo, hi): (DVec3, DVec3),
        origin: DVec3,
        rotation: glam::DQuat,
        up: DVec3,
    ) -> DVec3 {
        let centre = (lo + hi) / 2.0;
        let half_up = ((hi - lo) / 2.0).dot(up.abs());
        let base = match self.anchor {
            Landmark::Origin => origin,
            Landmark::Centre => centre,
            Landmark::Bottom => centre - up * half_up,
            Landmark::Top => centre + up * half_up,
        };
        base + rotation * DVec3::from_array(self.offset)
    }
}
