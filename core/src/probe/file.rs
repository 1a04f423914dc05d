//! Reading and writing probe-set files (`*.probes.json`, SPEC §2). Unknown fields, wrong types and
//! bad values are errors with the line and column of the probe or field at fault.

use std::collections::HashSet;
use std::path::Path;

use glam::{DQuat, DVec3};
use serde::Deserialize;
use serde_json::value::RawValue;
use serde_json::{Map, Value, json};

use super::model::{
    Conditions, Expect, ExpectWord, HitsMode, Probe, ProbeKind, ProbeQuery, ProbeSet,
};
use crate::error::{InputError, check_header};
use crate::level::ShapeSpec;
use crate::query::{Filter, ProbeShape};

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSet<'a> {
    plumbline: String,
    version: u32,
    level: String,
    #[serde(borrow)]
    probes: Vec<&'a RawValue>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawProbe<'a> {
    id: String,
    label: Option<String>,
    kind: String,
    from: Option<[f64; 3]>,
    to: Option<[f64; 3]>,
    hits: Option<HitsMode>,
    shape: Option<ShapeSpec>,
    rotation: Option<[f64; 4]>,
    path: Option<Vec<[f64; 3]>>,
    duration: Option<f64>,
    clearance: Option<bool>,
    at: Option<[f64; 3]>,
    max_distance: Option<f64>,
    ignore_tags: Option<Vec<String>>,
    only_tags: Option<Vec<String>>,
    ignore_objects: Option<Vec<String>>,
    #[serde(borrow)]
    expect: Option<&'a RawValue>,
}

/// Reads and validates a probe-set file.
pub fn load_probe_set(path: &Path) -> Result<ProbeSet, InputError> {
    let bytes = crate::input::read_input(path)?;
    let text = std::str::from_utf8(&bytes)
        .map_err(|e| InputError::file(path, format!("not UTF-8 text: {e}")))?;
    parse_probe_set(path, text)
}

/// Parses and validates probe-set text; `path` is used in error messages.
pub fn parse_probe_set(path: &Path, text: &str) -> Result<ProbeSet, InputError> {
    let raw: RawSet = serde_json::from_str(text).map_err(|e| InputError::json(path, &e))?;
    check_header(path, &raw.plumbline, raw.version, "probes", "a probe set")?;
    let mut ids = HashSet::new();
    let mut probes = Vec::with_capacity(raw.probes.len());
    for item in &raw.probes {
        let probe = parse_probe(path, text, item.get())?;
        if !ids.insert(probe.id.clone()) {
            return Err(InputError::at_fragment(
                path,
                text,
                item.get(),
                format!("probe id \"{}\" is used twice", probe.id),
            ));
        }
        probes.push(probe);
    }
    Ok(ProbeSet {
        level: raw.level,
        probes,
    })
}

/// Checks one probe against every rule of the file format (by writing it as a file and reading it
/// back, so editing in the window and loading from disk can never disagree). The error's message
/// names the probe and what is wrong.
pub fn validate_probe(probe: &Probe) -> Result<(), InputError> {
    let set = ProbeSet {
        level: "level".into(),
        probes: vec![probe.clone()],
    };
    parse_probe_set(Path::new("probe"), &probe_set_to_json(&set)).map(|_| ())
}

/// Serialises a probe set in the file format, stable and ready to save.
pub fn probe_set_to_json(set: &ProbeSet) -> String {
    let probes: Vec<Value> = set.probes.iter().map(probe_to_value).collect();
    let value =
        json!({ "plumbline": "probes", "version": 1, "level": set.level, "probes": probes });
    crate::json_text::to_pretty(&value)
}

fn parse_probe(path: &Path, text: &str, fragment: &str) -> Result<Probe, InputError> {
    let raw: RawProbe = serde_json::from_str(fragment)
        .map_err(|e| InputError::json_in(path, text, fragment, &e))?;
    let fail = |message: String| {
        InputError::at_fragment(
            path,
            text,
            fragment,
            format!("probe \"{}\": {message}", raw.id),
        )
    };
    if raw.id.is_empty()
        || !raw
            .id
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || matches!(c, '.' | '_' | '-'))
    {
        return Err(InputError::at_fragment(
            path,
            text,
            fragment,
            format!(
                "probe id \"{}\" must be letters, digits, '.', '_' or '-'",
                raw.id
            ),
        ));
    }
    let query = parse_query(&raw).map_err(fail)?;
    let expect = match raw.expect {
        None => None,
        Some(e) => Some(
            parse_expect(path, text, e.get(), &query).map_err(|err| match err {
                ExpectError::Json(e) => e,
                ExpectError::Value(m) => fail(m),
            })?,
        ),
    };
    let filter = Filter {
        ignore_tags: raw.ignore_tags.clone().unwrap_or_default(),
        only_tags: raw.only_tags.clone(),
        ignore_objects: raw.ignore_objects.clone().unwrap_or_default(),
    };
    Ok(Probe {
        id: raw.id.clone(),
        label: raw.label.clone(),
        filter,
        query,
        expect,
    })
}

fn parse_query(raw: &RawProbe) -> Result<ProbeQuery, String> {
    let kind = ProbeKind::from_name(&raw.kind).ok_or_else(|| {
        format!(
            "unknown kind \"{}\" (expected ray, sweep, closest or overlap)",
            raw.kind
        )
    })?;
    let allowed: &[&str] = match kind {
        ProbeKind::Ray => &["from", "to", "hits"],
        ProbeKind::Sweep => &["shape", "rotation", "path", "hits", "duration", "clearance"],
        ProbeKind::Closest => &["shape", "at", "rotation", "max_distance"],
        ProbeKind::Overlap => &["shape", "at", "rotation"],
    };
    let present = [
        ("from", raw.from.is_some()),
        ("to", raw.to.is_some()),
        ("hits", raw.hits.is_some()),
        ("shape", raw.shape.is_some()),
        ("rotation", raw.rotation.is_some()),
        ("path", raw.path.is_some()),
        ("duration", raw.duration.is_some()),
        ("clearance", raw.clearance.is_some()),
        ("at", raw.at.is_some()),
        ("max_distance", raw.max_distance.is_some()),
    ];
    if let Some((field, _)) = present.iter().find(|(f, p)| *p && !allowed.contains(f)) {
        return Err(format!(
            "field \"{field}\" does not apply to a {} probe",
            raw.kind
        ));
    }
    let need = |field: &str| format!("a {} probe needs \"{field}\"", raw.kind);
    let rotation = raw.rotation.map(unit_quaternion).transpose()?;
    Ok(match kind {
        ProbeKind::Ray => {
            let from = finite_point("from", raw.from.ok_or_else(|| need("from"))?)?;
            let to = finite_point("to", raw.to.ok_or_else(|| need("to"))?)?;
            if from == to {
                return Err("\"from\" and \"to\" are the same point".into());
            }
            ProbeQuery::Ray {
                from,
                to,
                hits: raw.hits,
            }
        }
        ProbeKind::Sweep => {
            let shape = probe_shape(
                raw.shape.as_ref().ok_or_else(|| need("shape"))?,
                rotation,
                false,
            )?;
            let path: Vec<DVec3> = raw
                .path
                .as_ref()
                .ok_or_else(|| need("path"))?
                .iter()
                .enumerate()
                .map(|(k, p)| finite_point(&format!("path[{k}]"), *p))
                .collect::<Result<_, _>>()?;
            if path.len() < 2 {
                return Err("a sweep path needs at least two points".into());
            }
            if path.windows(2).all(|w| w[0] == w[1]) {
                return Err("the sweep path has no length".into());
            }
            if let Some(d) = raw.duration
                && !(d.is_finite() && d > 0.0)
            {
                return Err(format!(
                    "duration must be a positive number of seconds, not {d}"
                ));
            }
            ProbeQuery::Sweep {
                shape,
                rotation,
                path,
                hits: raw.hits,
                duration: raw.duration,
                clearance: raw.clearance,
            }
        }
        ProbeKind::Closest => {
            let shape = probe_shape(
                raw.shape.as_ref().ok_or_else(|| need("shape"))?,
                rotation,
                true,
            )?;
            let at = finite_point("at", raw.at.ok_or_else(|| need("at"))?)?;
            let max_distance = raw.max_distance.ok_or_else(|| need("max_distance"))?;
            if !(max_distance.is_finite()
                && (0.0..=crate::level::MAX_COORDINATE).contains(&max_distance))
            {
                return Err(format!(
                    "max_distance must be zero or a positive number of metres, not {max_distance}"
                ));
            }
            ProbeQuery::Closest {
                shape,
                at,
                rotation,
                max_distance,
            }
        }
        ProbeKind::Overlap => {
            let shape = probe_shape(
                raw.shape.as_ref().ok_or_else(|| need("shape"))?,
                rotation,
                false,
            )?;
            let at = finite_point("at", raw.at.ok_or_else(|| need("at"))?)?;
            ProbeQuery::Overlap {
                shape,
                at,
                rotation,
            }
        }
    })
}

fn probe_shape(
    shape: &ShapeSpec,
    rotation: Option<DQuat>,
    point_allowed: bool,
) -> Result<ShapeSpec, String> {
    if matches!(shape, ShapeSpec::Point) {
        return if point_allowed {
            Ok(shape.clone())
        } else {
            Err("this probe's shape cannot be a point".into())
        };
    }
    ProbeShape::new(shape, rotation.unwrap_or(DQuat::IDENTITY))
        .map_err(|m| format!("shape: {m}"))?;
    Ok(shape.clone())
}

fn finite_point(field: &str, p: [f64; 3]) -> Result<DVec3, String> {
    let v = DVec3::from_array(p);
    if crate::level::within_range(v) {
        Ok(v)
    } else {
        Err(format!(
            "\"{field}\" must be three finite numbers within ±{:e} m",
            crate::level::MAX_COORDINATE
        ))
    }
}

fn unit_quaternion(q: [f64; 4]) -> Result<DQuat, String> {
    let q = DQuat::from_array(q);
    if q.is_finite() && (q.length() - 1.0).abs() <= 1e-6 {
        Ok(q.normalize())
    } else {
        Err("rotation must be a unit quaternion [x, y, z, w]".into())
    }
}

enum ExpectError {
    Json(InputError),
    Value(String),
}

fn parse_expect(
    path: &Path,
    text: &str,
    fragment: &str,
    query: &ProbeQuery,
) -> Result<Expect, ExpectError> {
    let expect = if fragment.trim_start().starts_with('"') {
        let word: String = serde_json::from_str(fragment)
            .map_err(|e| ExpectError::Json(InputError::json_in(path, text, fragment, &e)))?;
        match word.as_str() {
            "clear" => Expect::Word(ExpectWord::Clear),
            "blocked" => Expect::Word(ExpectWord::Blocked),
            other => {
                return Err(ExpectError::Value(format!(
                    "expect \"{other}\" is not known (use \"clear\", \"blocked\" or an object of conditions)"
                )));
            }
        }
    } else {
        let c: Conditions = serde_json::from_str(fragment)
            .map_err(|e| ExpectError::Json(InputError::json_in(path, text, fragment, &e)))?;
        check_conditions(&c, query).map_err(ExpectError::Value)?;
        Expect::Conditions(c)
    };
    Ok(expect)
}

fn check_conditions(c: &Conditions, query: &ProbeQuery) -> Result<(), String> {
    let kind = query.kind();
    let metres = |field: &str, v: f64| {
        if v.is_finite() && v >= 0.0 {
            Ok(())
        } else {
            Err(format!(
                "expect.{field} must be zero or more metres, not {v}"
            ))
        }
    };
    if let Some(r) = c.distance {
        if kind == ProbeKind::Overlap {
            return Err(
                "expect.distance does not apply to an overlap probe (use max_depth)".into(),
            );
        }
        for v in [r.min, r.max].into_iter().flatten() {
            metres("distance", v)?;
        }
        if let (Some(lo), Some(hi)) = (r.min, r.max)
            && lo > hi
        {
            return Err(format!("expect.distance has min {lo} above max {hi}"));
        }
    }
    if let Some(v) = c.min_clearance {
        if kind != ProbeKind::Sweep {
            return Err(format!(
                "expect.min_clearance applies to sweeps, not to a {kind} probe"
            ));
        }
        metres("min_clearance", v)?;
    }
    if let Some(v) = c.max_depth {
        if kind != ProbeKind::Overlap {
            return Err(format!(
                "expect.max_depth applies to overlaps, not to a {kind} probe"
            ));
        }
        metres("max_depth", v)?;
    }
    Ok(())
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::probe::ProbeQuery;
    use glam::DVec3;

    #[test]
    fn an_edited_probe_is_held_to_the_file_format() {
        let mut probe = Probe {
            id: "gate".into(),
            label: None,
            filter: Filter::default(),
            query: ProbeQuery::Ray {
                from: DVec3::ZERO,
                to: DVec3::X,
                hits: None,
            },
            expect: None,
        };
        assert_eq!(validate_probe(&probe), Ok(()));
        probe.id = "gate view".into();
        assert!(
            validate_probe(&probe)
                .unwrap_err()
                .message
                .contains("letters, digits")
        );
        probe.id = "gate".into();
        probe.query = ProbeQuery::Sweep {
            shape: crate::level::ShapeSpec::Sphere { radius: 0.5 },
            rotation: None,
            path: vec![DVec3::ZERO],
            hits: None,
            duration: None,
            clearance: None,
        };
        assert!(validate_probe(&probe).is_err(), "a path needs two points");
    }
}
