//! One probe of a probe-set file, parsed from its own slice of the text so that every error carries
//! the line and column of the probe or field at fault: unknown fields, wrong types, fields that do
//! not apply to the kind, and bad values.

use std::path::Path;

use glam::{DQuat, DVec3};

use super::model::{
    Conditions, Expect, ExpectWord, Launch, MAX_SETTLE_TIME, Probe, ProbeKind, ProbeQuery, Region,
    Spot, Spots, Turns,
};
use super::plain_read::{ProbeFields, plain_ray, plain_string};
use crate::error::InputError;
use crate::input::{MAX_NAME_CHARS, check_name, number, one_line};
use crate::level::ShapeSpec;
use crate::query::{Filter, ProbeShape};

/// The longest label, in characters (a sentence or two). Ours.
const MAX_LABEL_CHARS: usize = 4 * MAX_NAME_CHARS;

/// Labels, tags and object names within their limits.
fn check_names(raw: &ProbeFields) -> Result<(), String> {
    if let Some(label) = &raw.label
        && label.chars().count() > MAX_LABEL_CHARS
    {
        return Err(format!(
            "the label is longer than {MAX_LABEL_CHARS} characters"
        ));
    }
    let names = [&raw.ignore_tags, &raw.only_tags, &raw.ignore_objects];
    for name in names.into_iter().flatten().flatten() {
        check_name("a tag or object name", name)?;
    }
    Ok(())
}

/// Parses probe `fragment`, a slice of the file's `text`: a plain ray straight from its text (see
/// [`plain_ray`]), any other probe field by field.
pub(super) fn parse_probe(path: &Path, text: &str, fragment: &str) -> Result<Probe, InputError> {
    match plain_ray(fragment) {
        Some(probe) => Ok(probe),
        None => parse_fields(path, text, fragment),
    }
}

/// Parses probe `fragment` field by field, naming any error's place in `text`.
fn parse_fields(path: &Path, text: &str, fragment: &str) -> Result<Probe, InputError> {
    let mut raw = ProbeFields::default();
    ProbeFields::read_into(fragment, &mut raw)
        .map_err(|e| InputError::json_in(path, text, fragment, &e))?;
    let here = |message: String| InputError::at_fragment(path, text, fragment, message);
    check_id("probe", &raw.id).map_err(here)?;
    let fail = |message: String| here(format!("probe \"{}\": {message}", raw.id));
    check_names(&raw).map_err(fail)?;
    let query = parse_query(&raw).map_err(fail)?;
    let expect = match raw.expect {
        None => None,
        Some(e) => Some(
            parse_expect(path, text, e, &query).map_err(|err| match err {
                ExpectError::Json(e) => e,
                ExpectError::Value(m) => fail(m),
            })?,
        ),
    };
    let filter = Filter {
        ignore_tags: raw.ignore_tags.unwrap_or_default(),
        only_tags: raw.only_tags,
        ignore_objects: raw.ignore_objects.unwrap_or_default(),
    };
    Ok(Probe {
        id: raw.id,
        label: raw.label,
        filter,
        query,
        expect,
        from_rule: None,
    })
}

fn parse_query(raw: &ProbeFields) -> Result<ProbeQuery, String> {
    let kind = ProbeKind::from_name(&raw.kind).ok_or_else(|| {
        let known: Vec<&str> = ProbeKind::ALL.iter().map(|k| k.name()).collect();
        format!(
            "unknown kind \"{}\" (expected one of {})",
            one_line(&raw.kind),
            known.join(", ")
        )
    })?;
    let allowed: &[&str] = match kind {
        ProbeKind::Ray => &["from", "to", "hits"],
        ProbeKind::Sweep => &[
            "shape",
            "rotation",
            "path",
            "hits",
            "duration",
            "clearance",
            "turns",
            "yaw",
        ],
        ProbeKind::Closest => &["shape", "at", "rotation", "max_distance"],
        ProbeKind::Overlap => &["shape", "at", "rotation"],
        ProbeKind::Rest => &["shape", "at", "rotation", "search"],
        ProbeKind::Settle => &[
            "shape",
            "at",
            "rotation",
            "density",
            "friction",
            "restitution",
            "max_time",
        ],
        ProbeKind::Sightlines => &["spots", "spot_tags", "eye"],
        ProbeKind::Coverage => &["spots", "spot_tags", "eye", "region", "spacing"],
        ProbeKind::Walk => &["shape", "path", "max_step", "max_slope"],
        ProbeKind::Reach => &[
            "shape",
            "spots",
            "spot_tags",
            "eye",
            "region",
            "spacing",
            "targets",
            "target_tags",
            "max_step",
            "max_slope",
        ],
        ProbeKind::Jump => &[
            "shape",
            "rotation",
            "from",
            "velocity",
            "to",
            "apex",
            "gravity",
            "max_slope",
            "max_time",
        ],
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
        ("search", raw.search.is_some()),
        ("spots", raw.spots.is_some()),
        ("spot_tags", raw.spot_tags.is_some()),
        ("eye", raw.eye.is_some()),
        ("region", raw.region.is_some()),
        ("spacing", raw.spacing.is_some()),
        ("velocity", raw.velocity.is_some()),
        ("turns", raw.turns.is_some()),
        ("yaw", raw.yaw.is_some()),
        ("apex", raw.apex.is_some()),
        ("gravity", raw.gravity.is_some()),
        ("max_slope", raw.max_slope.is_some()),
        ("max_step", raw.max_step.is_some()),
        ("targets", raw.targets.is_some()),
        ("target_tags", raw.target_tags.is_some()),
        ("max_time", raw.max_time.is_some()),
    ];
    if let Some((field, _)) = present.iter().find(|(f, p)| *p && !allowed.contains(f)) {
        return Err(format!(
            "field \"{field}\" does not apply to a {} probe",
            raw.kind
        ));
    }
    let need = |field: &str| format!("a {} probe needs \"{field}\"", raw.kind);
    let rotation = raw.rotation.map(unit_quaternion).transpose()?;
    // The shape a sweep, closest, overlap or rest probe carries (a point only for closest).
    let shape = |point_allowed: bool| {
        probe_shape(
            raw.shape.as_ref().ok_or_else(|| need("shape"))?,
            rotation,
            point_allowed,
        )
    };
    let at = || finite_point("at", raw.at.ok_or_else(|| need("at"))?);
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
            let shape = shape(false)?;
            let path = path_points(raw, &need)?;
            let turns = parse_turns(raw, path.len())?;
            // A turning shape may turn in place; otherwise the path must go somewhere.
            let turns_somewhere = turns.as_ref().is_some_and(|t| match t {
                Turns::Quaternions(q) => q.windows(2).any(|w| w[0].angle_between(w[1]) > 0.0),
                Turns::Yaw(d) => d.windows(2).any(|w| w[0] != w[1]),
            });
            if path.windows(2).all(|w| w[0] == w[1]) && !turns_somewhere {
                return Err("the sweep path has no length".into());
            }
            if turns.is_some() && raw.clearance == Some(true) {
                return Err(
                    "clearance is measured for sweeps that keep one turn, not with turns or yaw"
                        .into(),
                );
            }
            if let Some(d) = raw.duration
                && !(d.is_finite() && d > 0.0)
            {
                return Err(format!(
                    "duration must be a positive number of seconds, not {}",
                    number(d)
                ));
            }
            ProbeQuery::Sweep {
                shape,
                rotation,
                path,
                hits: raw.hits,
                duration: raw.duration,
                clearance: raw.clearance,
                turns,
            }
        }
        ProbeKind::Closest => {
            let shape = shape(true)?;
            let at = at()?;
            let max_distance = raw.max_distance.ok_or_else(|| need("max_distance"))?;
            if !(max_distance.is_finite()
                && (0.0..=crate::level::MAX_COORDINATE).contains(&max_distance))
            {
                return Err(format!(
                    "max_distance must be zero or a positive number of metres, not {}",
                    number(max_distance)
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
            let shape = shape(false)?;
            let at = at()?;
            ProbeQuery::Overlap {
                shape,
                at,
                rotation,
            }
        }
        ProbeKind::Rest => {
            let shape = shape(false)?;
            let at = at()?;
            if let Some(d) = raw.search {
                positive_metres("search", d)?;
            }
            ProbeQuery::Rest {
                shape,
                at,
                rotation,
                search: raw.search,
            }
        }
        ProbeKind::Sightlines => ProbeQuery::Sightlines {
            spots: parse_spots(raw)?,
        },
        ProbeKind::Coverage => {
            let region = raw.region.clone().ok_or_else(|| need("region"))?;
            let (lo, hi) = check_region("region", &region)?;
            let spacing = raw.spacing.ok_or_else(|| need("spacing"))?;
            positive_metres("spacing", spacing)?;
            // The grid runs across the level's up axis: at most the two widest sides' cells.
            let mut sides = (hi - lo).to_array();
            sides.sort_by(f64::total_cmp);
            let cells = (sides[2] / spacing + 1.0) * (sides[1] / spacing + 1.0);
            if cells > MAX_COVERAGE_POINTS as f64 {
                return Err(format!(
                    "the region holds about {} grid points at this spacing; at most \
                     {MAX_COVERAGE_POINTS} are sampled (use a larger spacing)",
                    cells.round()
                ));
            }
            ProbeQuery::Coverage {
                spots: parse_spots(raw)?,
                region,
                spacing,
            }
        }
        ProbeKind::Reach => {
            let region = raw.region.clone().ok_or_else(|| need("region"))?;
            let (lo, hi) = check_region("region", &region)?;
            if region.outline.is_some() {
                return Err("region.outline applies to coverage, not to a reach map".into());
            }
            let spacing = raw.spacing.ok_or_else(|| need("spacing"))?;
            positive_metres("spacing", spacing)?;
            let mut sides = (hi - lo).to_array();
            sides.sort_by(f64::total_cmp);
            let cells = (sides[2] / spacing + 1.0) * (sides[1] / spacing + 1.0);
            if cells > MAX_REACH_CELLS as f64 {
                return Err(format!(
                    "the region holds about {} grid points at this spacing; a reach map takes at \
                     most {MAX_REACH_CELLS} (use a larger spacing)",
                    cells.round()
                ));
            }
            let targets = raw.targets.clone().unwrap_or_default();
            check_named_points("targets", "a target's name", &targets)?;
            let target_tags = raw.target_tags.clone().unwrap_or_default();
            for tag in &target_tags {
                check_name("a target tag", tag)?;
            }
            ProbeQuery::Reach {
                shape: shape(false)?,
                spots: parse_spots(raw)?,
                region,
                spacing,
                targets,
                target_tags,
                max_step: raw
                    .max_step
                    .map(|h| positive("max_step", h, "metres"))
                    .transpose()?,
                max_slope: raw.max_slope.map(slope_limit).transpose()?,
            }
        }
        ProbeKind::Walk => ProbeQuery::Walk {
            shape: shape(false)?,
            path: waypoints(raw, &need)?,
            max_step: raw
                .max_step
                .map(|h| positive("max_step", h, "metres"))
                .transpose()?,
            max_slope: raw.max_slope.map(slope_limit).transpose()?,
        },
        ProbeKind::Settle => ProbeQuery::Settle {
            shape: shape(false)?,
            at: at()?,
            rotation,
            density: raw
                .density
                .map(|d| positive("density", d, "kg per cubic metre"))
                .transpose()?,
            friction: raw
                .friction
                .map(|f| {
                    (f.is_finite() && f >= 0.0)
                        .then_some(f)
                        .ok_or_else(|| format!("friction must be zero or more, not {}", number(f)))
                })
                .transpose()?,
            restitution: raw
                .restitution
                .map(|r| {
                    (0.0..=1.0).contains(&r).then_some(r).ok_or_else(|| {
                        format!("restitution must be from 0 to 1, not {}", number(r))
                    })
                })
                .transpose()?,
            max_time: raw
                .max_time
                .map(|t| match positive("max_time", t, "seconds")? {
                    t if t <= MAX_SETTLE_TIME => Ok(t),
                    t => Err(format!(
                        "max_time of a settle is at most {MAX_SETTLE_TIME} seconds, not {}",
                        number(t)
                    )),
                })
                .transpose()?,
        },
        ProbeKind::Jump => ProbeQuery::Jump {
            shape: shape(false)?,
            rotation,
            from: finite_point("from", raw.from.ok_or_else(|| need("from"))?)?,
            launch: parse_launch(raw)?,
            gravity: raw
                .gravity
                .map(|g| positive("gravity", g, "metres per second squared"))
                .transpose()?,
            max_slope: raw.max_slope.map(slope_limit).transpose()?,
            max_time: raw
                .max_time
                .map(|t| positive("max_time", t, "seconds"))
                .transpose()?,
        },
    })
}

/// A sweep's turns along its path: `turns` (quaternions) or `yaw` (degrees), one per path point, and
/// never with a constant `rotation`.
fn parse_turns(raw: &ProbeFields, points: usize) -> Result<Option<Turns>, String> {
    let turns = match (&raw.turns, &raw.yaw) {
        (None, None) => return Ok(None),
        (Some(_), Some(_)) => return Err("a sweep takes \"turns\" or \"yaw\", not both".into()),
        (Some(q), None) => Turns::Quaternions(
            q.iter()
                .map(|q| {
                    unit_quaternion(*q)
                        .map_err(|_| "turns must be unit quaternions [x, y, z, w]".to_string())
                })
                .collect::<Result<_, _>>()?,
        ),
        (None, Some(d)) => {
            if let Some(bad) = d.iter().find(|d| !(d.is_finite() && d.abs() <= 36_000.0)) {
                return Err(format!(
                    "yaw must be finite degrees (within ±36000), not {}",
                    number(*bad)
                ));
            }
            Turns::Yaw(d.clone())
        }
    };
    if raw.rotation.is_some() {
        return Err("a sweep with turns or yaw takes no \"rotation\"".into());
    }
    if turns.len() != points {
        return Err(format!(
            "turns or yaw give one orientation per path point ({points} points, {} given)",
            turns.len()
        ));
    }
    Ok(Some(turns))
}

/// The steepest walkable ground: an angle from 0 to 90 degrees.
fn slope_limit(degrees: f64) -> Result<f64, String> {
    if degrees.is_finite() && (0.0..=90.0).contains(&degrees) {
        Ok(degrees)
    } else {
        Err(format!(
            "max_slope must be an angle from 0 to 90 degrees, not {}",
            number(degrees)
        ))
    }
}

/// A sweep's or walk's `path`: two or more finite points.
fn path_points(raw: &ProbeFields, need: &dyn Fn(&str) -> String) -> Result<Vec<DVec3>, String> {
    let path: Vec<DVec3> = raw
        .path
        .as_ref()
        .ok_or_else(|| need("path"))?
        .iter()
        .enumerate()
        .map(|(k, p)| finite_point(&format!("path[{k}]"), *p))
        .collect::<Result<_, _>>()?;
    if path.len() < 2 {
        return Err(format!("a {} path needs at least two points", raw.kind));
    }
    Ok(path)
}

/// A walk's waypoints: a path whose points are not all one.
fn waypoints(raw: &ProbeFields, need: &dyn Fn(&str) -> String) -> Result<Vec<DVec3>, String> {
    let path = path_points(raw, need)?;
    if path.windows(2).all(|w| w[0] == w[1]) {
        return Err("the walk's waypoints are all one point".into());
    }
    Ok(path)
}

/// A jump's launch: `velocity`, or `to` with `apex` (one or the other).
fn parse_launch(raw: &ProbeFields) -> Result<Launch, String> {
    match (raw.velocity, raw.to, raw.apex) {
        (Some(v), None, None) => {
            let v = finite_point("velocity", v)?;
            Ok(Launch::Velocity(v))
        }
        (None, Some(to), Some(apex)) => Ok(Launch::Target {
            to: finite_point("to", to)?,
            apex: positive("apex", apex, "metres")?,
        }),
        (None, Some(_), None) => Err("a jump with \"to\" needs \"apex\" too".into()),
        (None, None, Some(_)) => Err("a jump with \"apex\" needs \"to\" too".into()),
        (None, None, None) => Err("a jump probe needs \"velocity\", or \"to\" and \"apex\"".into()),
        (Some(_), _, _) => Err("a jump takes \"velocity\" or \"to\" and \"apex\", not both".into()),
    }
}

/// A region's corners, checked: finite, the lower below the higher, an outline of three points or
/// more. `field` names it in messages.
fn check_region(field: &str, region: &Region) -> Result<(DVec3, DVec3), String> {
    let (lo, hi) = (
        finite_point(&format!("{field}.min"), region.min)?,
        finite_point(&format!("{field}.max"), region.max)?,
    );
    if lo.cmpgt(hi).any() {
        return Err(format!(
            "{field}.min must lie below {field}.max on every axis"
        ));
    }
    if let Some(outline) = &region.outline {
        if outline.len() < 3 {
            return Err(format!("{field}.outline needs at least three points"));
        }
        for p in outline {
            finite_point(&format!("{field}.outline"), *p)?;
        }
    }
    Ok((lo, hi))
}

/// A positive finite number of some unit, within the size limit.
fn positive(field: &str, value: f64, unit: &str) -> Result<f64, String> {
    if value.is_finite() && value > 0.0 && value <= crate::level::MAX_COORDINATE {
        Ok(value)
    } else {
        Err(format!(
            "{field} must be a positive number of {unit}, not {}",
            number(value)
        ))
    }
}

/// Checks an id of a probe or rule (`what`): a name of `[A-Za-z0-9._-]+`.
pub(super) fn check_id(what: &str, id: &str) -> Result<(), String> {
    check_name(format_args!("the {what}'s id"), id)?;
    if id.is_empty()
        || !id
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || matches!(c, '.' | '_' | '-'))
    {
        return Err(format!(
            "{what} id \"{}\" must be letters, digits, '.', '_' or '-'",
            one_line(id)
        ));
    }
    Ok(())
}

/// The most grid points a reach map takes. Ours: each is linked to its neighbours by walks, so a
/// map costs far more per point than coverage; 250,000 is a 500 m square at 1 m.
pub const MAX_REACH_CELLS: usize = 250_000;

/// The most grid points a coverage probe samples. Ours: a 2 km square at 1 m spacing is 4 million.
pub const MAX_COVERAGE_POINTS: usize = 4_000_000;

/// A coverage or sightlines probe's spots: named points (names unique) and tagged objects.
fn parse_spots(raw: &ProbeFields) -> Result<Spots, String> {
    let points = raw.spots.clone().unwrap_or_default();
    let tags = raw.spot_tags.clone().unwrap_or_default();
    if points.is_empty() && tags.is_empty() {
        return Err(format!(
            "a {} probe needs \"spots\" or \"spot_tags\"",
            raw.kind
        ));
    }
    check_named_points("spots", "a spot's name", &points)?;
    for tag in &tags {
        check_name("a spot tag", tag)?;
    }
    if let Some(eye) = raw.eye
        && !(eye.is_finite() && eye.abs() <= crate::level::MAX_SIZE)
    {
        return Err(format!(
            "eye must be a number of metres, not {}",
            number(eye)
        ));
    }
    Ok(Spots {
        points,
        tags,
        eye: raw.eye,
    })
}

/// Named points (spots, targets) in the list `field`: each name within limits and its own, each
/// point finite.
fn check_named_points(field: &str, what: &str, points: &[Spot]) -> Result<(), String> {
    let mut names = std::collections::HashSet::new();
    for (k, spot) in points.iter().enumerate() {
        check_name(what, &spot.name)?;
        if spot.name.is_empty() || !names.insert(spot.name.as_str()) {
            return Err(format!(
                "{field}[{k}] needs a name of its own (\"{}\" is empty or used twice)",
                one_line(&spot.name)
            ));
        }
        finite_point(&format!("{field}[{k}].at"), spot.at)?;
    }
    Ok(())
}

/// A positive number of metres within the size limit.
fn positive_metres(field: &str, value: f64) -> Result<(), String> {
    positive(field, value, "metres").map(|_| ())
}

fn probe_shape(
    shape: &ShapeSpec,
    rotation: Option<DQuat>,
    point_allowed: bool,
) -> Result<ShapeSpec, String> {
    if matches!(shape, ShapeSpec::Point {}) {
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
    // Unit to the last bits is kept as written, so that saving what was loaded writes it again.
    if q.is_finite() && (q.length_squared() - 1.0).abs() <= 4.0 * f64::EPSILON {
        Ok(q)
    } else if q.is_finite() && (q.length() - 1.0).abs() <= 1e-6 {
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
        let word: std::borrow::Cow<str> = match plain_string(fragment) {
            Some(word) => word.into(),
            None => serde_json::from_str::<String>(fragment)
                .map_err(|e| ExpectError::Json(InputError::json_in(path, text, fragment, &e)))?
                .into(),
        };
        match &*word {
            "clear" => Expect::Word(ExpectWord::Clear),
            "blocked" => Expect::Word(ExpectWord::Blocked),
            other => {
                return Err(ExpectError::Value(format!(
                    "expect \"{other}\" is not known (use \"clear\", \"blocked\" or an object of conditions)"
                )));
            }
        }
    } else {
        let c: Conditions = crate::json_object::from_object_str(fragment)
            .map_err(|e| ExpectError::Json(InputError::json_in(path, text, fragment, &e)))?;
        check_conditions(&c, query).map_err(ExpectError::Value)?;
        Expect::Conditions(Box::new(c))
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
                "expect.{field} must be zero or more metres, not {}",
                number(v)
            ))
        }
    };
    if let Some(r) = c.distance {
        if matches!(
            kind,
            ProbeKind::Overlap | ProbeKind::Sightlines | ProbeKind::Coverage
        ) {
            return Err(format!(
                "expect.distance does not apply to a {kind} probe{}",
                if kind == ProbeKind::Overlap {
                    " (use max_depth)"
                } else {
                    ""
                }
            ));
        }
        for v in [r.min, r.max].into_iter().flatten() {
            // A rest probe's gap is negative when the shape sinks in.
            if kind == ProbeKind::Rest {
                if !v.is_finite() {
                    return Err("expect.distance must be finite numbers of metres".into());
                }
            } else {
                metres("distance", v)?;
            }
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
        if matches!(query, ProbeQuery::Sweep { turns: Some(_), .. }) {
            return Err(
                "expect.min_clearance applies to sweeps that keep one turn, not with turns or yaw"
                    .into(),
            );
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
    let pairs = c.see.iter().chain(&c.blind).flatten();
    if (c.see.is_some() || c.blind.is_some() || c.min_seen.is_some())
        && kind != ProbeKind::Sightlines
    {
        return Err(format!(
            "expect.see, blind and min_seen apply to sightlines, not to a {kind} probe"
        ));
    }
    if let ProbeQuery::Sightlines { spots } = query
        && spots.tags.is_empty()
        && let Some(pair) = pairs.clone().find(|pair| {
            pair.iter()
                .any(|n| !spots.points.iter().any(|s| s.name == *n))
        })
    {
        return Err(format!(
            "expect names a spot that is not in \"spots\": [\"{}\", \"{}\"]",
            one_line(&pair[0]),
            one_line(&pair[1])
        ));
    }
    if (c.walkable.is_some() || c.lands_within.is_some()) && kind != ProbeKind::Jump {
        return Err(format!(
            "expect.walkable and lands_within apply to jumps, not to a {kind} probe"
        ));
    }
    if (c.reaches.is_some() || c.max_detour.is_some()) && kind != ProbeKind::Walk {
        return Err(format!(
            "expect.reaches and max_detour apply to walks, not to a {kind} probe"
        ));
    }
    if (c.max_move.is_some() || c.max_turn.is_some()) && kind != ProbeKind::Settle {
        return Err(format!(
            "expect.max_move and max_turn apply to settle probes, not to a {kind} probe"
        ));
    }
    if let Some(m) = c.max_move {
        metres("max_move", m)?;
    }
    if let Some(t) = c.max_turn
        && !(t.is_finite() && (0.0..=180.0).contains(&t))
    {
        return Err(format!(
            "expect.max_turn is degrees from 0 to 180, not {}",
            number(t)
        ));
    }
    if (c.reachable.is_some() || c.unreachable.is_some()) && kind != ProbeKind::Reach {
        return Err(format!(
            "expect.reachable and unreachable apply to reach maps, not to a {kind} probe"
        ));
    }
    if let ProbeQuery::Reach {
        targets,
        target_tags,
        ..
    } = query
        && target_tags.is_empty()
        && let Some(name) = c
            .reachable
            .iter()
            .chain(&c.unreachable)
            .flatten()
            .find(|n| !targets.iter().any(|t| &t.name == *n))
    {
        return Err(format!(
            "expect names a target that is not in \"targets\": \"{}\"",
            one_line(name)
        ));
    }
    if let Some(d) = c.max_detour {
        metres("max_detour", d)?;
    }
    let volumes = [&c.enters, &c.never_enters, &c.ends_inside];
    if volumes.iter().any(|v| v.is_some()) {
        let moves = matches!(
            query,
            ProbeQuery::Ray { .. }
                | ProbeQuery::Sweep { .. }
                | ProbeQuery::Walk { .. }
                | ProbeQuery::Jump { .. }
                | ProbeQuery::Closest { .. }
                | ProbeQuery::Overlap { .. }
        );
        if !moves {
            return Err(format!(
                "expect.enters, never_enters and ends_inside apply to rays, sweeps, walks, jumps, \
                 closest points and overlaps, not to a {kind} probe"
            ));
        }
        if let Some(name) = volumes
            .iter()
            .copied()
            .flatten()
            .flatten()
            .find(|n| n.is_empty())
        {
            return Err(format!("expect names an empty volume \"{name}\""));
        }
    }
    if let Some(region) = &c.lands_within {
        check_region("expect.lands_within", region)?;
    }
    if let Some(r) = c.seen {
        if kind != ProbeKind::Coverage {
            return Err(format!(
                "expect.seen applies to coverage, not to a {kind} probe"
            ));
        }
        if [r.min, r.max]
            .into_iter()
            .flatten()
            .any(|v| !(0.0..=1.0).contains(&v))
        {
            return Err("expect.seen is a share of the region, from 0 to 1".into());
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    //! The plain ray reader against the general one (itself held to serde_json, the reference
    //! reader from crates.io, in plain_read.rs): wherever the plain reader reads a probe, it reads
    //! the probe the general one does; and it does read the plain rays it exists for.

    use proptest::prelude::*;

    use super::*;

    /// A number's text: ordinary decimals, integers, exponents, and values out of range.
    fn number() -> impl Strategy<Value = String> {
        prop_oneof![
            4 => (-200.0..200.0f64).prop_map(|x| format!("{:.4}", x)),
            1 => (-9i64..9).prop_map(|x| x.to_string()),
            1 => Just("1.5e3".to_string()),
            1 => Just("2e7".to_string()),
            1 => Just("1e400".to_string()),
            1 => Just("-0.0".to_string()),
        ]
    }

    fn point() -> impl Strategy<Value = [String; 3]> {
        [number(), number(), number()]
    }

    /// A ray probe's members (some not plain, some not a ray, some wrong), in a random order and
    /// spacing; `true` with them when they make a plain ray the plain reader must read.
    fn ray_probe() -> impl Strategy<Value = (String, bool)> {
        (
            prop_oneof![3 => "[a-z][a-z0-9._-]{0,8}", 1 => "[a-z ]{0,3}", 1 => Just("r\\u0031".to_string())],
            prop_oneof![4 => Just("ray"), 1 => Just("sweep"), 1 => Just("Ray")],
            point(),
            prop_oneof![3 => point().prop_map(Some), 1 => Just(None)],
            prop_oneof![3 => Just(None), 1 => Just(Some("\"first\"")), 1 => Just(Some("\"all\"")), 1 => Just(Some("\"both\""))],
            prop_oneof![4 => Just(None), 1 => Just(Some(r#""label": "gate""#)), 1 => Just(Some(r#""id": "again""#))],
            prop_oneof![
                3 => Just(None),
                1 => Just(Some(r#""clear""#)),
                1 => Just(Some(r#""blocked""#)),
                1 => Just(Some(r#""Clear""#)),
                1 => Just(Some(r#""cl\u0065ar""#)),
                1 => Just(Some(r#"{"first_tag": "glass"}"#)),
            ],
            any::<prop::sample::Index>(),
            prop_oneof![Just(" "), Just(""), Just("\n  ")],
        )
            .prop_map(|(id, kind, from, to, hits, extra, expect, order, space)| {
                let to = to.unwrap_or_else(|| from.clone());
                let mut members = vec![
                    format!(r#""id":{space}"{id}""#),
                    format!(r#""kind":{space}"{kind}""#),
                    format!(r#""from": [{}]"#, from.join(&format!(",{space}"))),
                    format!(r#""to": [{}]"#, to.join(", ")),
                ];
                members.extend(hits.map(|h| format!(r#""hits": {h}"#)));
                members.extend(expect.map(|e| format!(r#""expect":{space}{e}"#)));
                members.extend(extra.map(str::to_string));
                let turn = order.index(members.len());
                members.rotate_left(turn);
                let text = format!("{{{space}{}}}", members.join(&format!(",{space}")));
                let values = |p: &[String; 3]| p.iter().map(|x| x.parse::<f64>().unwrap()).collect::<Vec<_>>();
                let (a, b) = (values(&from), values(&to));
                let plain = check_id("probe", &id).is_ok()
                    && !id.contains('\\')
                    && kind == "ray"
                    && a.iter().chain(&b).all(|x| x.abs() <= crate::level::MAX_COORDINATE)
                    && a != b
                    && hits != Some("\"both\"")
                    && matches!(expect, None | Some(r#""clear""#) | Some(r#""blocked""#))
                    && extra.is_none();
                (text, plain)
            })
    }

    proptest! {
        #[test]
        fn plain_rays_are_read_as_the_general_reader_reads_them((text, plain) in ray_probe()) {
            let general = parse_fields(Path::new("set"), &text, &text);
            match plain_ray(&text) {
                Some(probe) => {
                    let general = general.map_err(|e| e.to_string());
                    prop_assert!(general.is_ok(), "{} read plainly, refused: {:?}", text, general);
                    prop_assert_eq!(format!("{probe:?}"), format!("{:?}", general.unwrap()), "{}", text);
                }
                None => prop_assert!(!plain, "{} is a plain ray, not read plainly", text),
            }
        }
    }
}
