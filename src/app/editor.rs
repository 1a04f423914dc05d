//! Editing one probe in the inspector: its id and label, every number of its question (with units),
//! its shape, which objects it looks at, and what it expects. The editor works on a copy and hands
//! back the edited probe with the name of the field that changed; the workbench validates it,
//! records it for undo and answers it again.

use eframe::egui;
use egui::{DragValue, RichText};
use glam::DVec3;

use super::badge::color32;
use crate::view::palette;

use plumbline_core::check::trajectory;
use plumbline_core::level::ShapeSpec;
use plumbline_core::probe::{
    Expect, ExpectWord, HitsMode, JUMP_TIME, Launch, MAX_STEP, MAX_WALKABLE_SLOPE, Probe,
    ProbeQuery, Range, Region, STANDARD_GRAVITY, Spots, Turns,
};

/// An edit made in the inspector.
#[derive(Debug, Clone, PartialEq)]
pub struct Edit {
    /// The field that changed (edits of one field in a row make one undo step).
    pub field: String,
    /// The probe after the edit.
    pub probe: Probe,
}

/// Text boxes whose words are applied only when valid (the id), kept between frames.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct EditorState {
    /// Which probe the id box belongs to.
    pub probe: Option<usize>,
    /// The id being typed.
    pub id_text: String,
}

/// Shows the editor for probe `index`; returns the edit, if any.
pub fn probe_editor(
    ui: &mut egui::Ui,
    index: usize,
    probe: &Probe,
    state: &mut EditorState,
    id_taken: &dyn Fn(&str) -> bool,
) -> Option<Edit> {
    if state.probe != Some(index) {
        *state = EditorState {
            probe: Some(index),
            id_text: probe.id.to_string(),
        };
    }
    let mut draft = probe.clone();
    let mut field = None;
    egui::Grid::new("probe-editor")
        .num_columns(2)
        .striped(true)
        .show(ui, |ui| {
            let label = ui.label("id");
            let response = ui
                .add(egui::TextEdit::singleline(&mut state.id_text).desired_width(180.0))
                .labelled_by(label.id);
            if response.changed() {
                let text = state.id_text.trim();
                if text != &*probe.id && !text.is_empty() && !id_taken(text) {
                    draft.id = text.into();
                    field = Some("id".to_string());
                }
            }
            ui.end_row();
            let label = ui.label("label");
            let mut text = probe.label.clone().unwrap_or_default();
            if ui
                .add(egui::TextEdit::singleline(&mut text).desired_width(f32::INFINITY))
                .labelled_by(label.id)
                .changed()
            {
                draft.label = (!text.trim().is_empty()).then_some(text);
                field = Some("label".into());
            }
            ui.end_row();
            if let Some(f) = query_fields(ui, &mut draft.query) {
                field = Some(f);
            }
            if let Some(f) = filter_fields(ui, &mut draft) {
                field = Some(f);
            }
        });
    if state.id_text.trim() != &*probe.id && field.as_deref() != Some("id") {
        let text = state.id_text.trim();
        let why = if text.is_empty() {
            "An id cannot be empty.".to_string()
        } else if id_taken(text) {
            format!("Another probe is called \"{text}\".")
        } else {
            String::new()
        };
        if !why.is_empty() {
            ui.label(RichText::new(why).color(color32(palette::WARNING)));
        }
    }
    ui.add_space(4.0);
    ui.label(RichText::new("Expects").strong());
    if let Some(expect) = expect_editor(ui, &probe.query, probe.expect.as_ref()) {
        draft.expect = expect;
        field = Some("expect".into());
    }
    field.map(|field| Edit {
        field,
        probe: draft,
    })
}

/// A labelled number in metres (or seconds), editable by dragging or typing.
fn number(ui: &mut egui::Ui, name: &str, value: &mut f64, unit: &str, min: f64) -> bool {
    let label = ui.label(name);
    let changed = ui
        .add(
            DragValue::new(value)
                .speed(0.01)
                .range(min..=1.0e6)
                .max_decimals(3)
                .suffix(unit),
        )
        .labelled_by(label.id)
        .changed();
    ui.end_row();
    changed
}

/// Three labelled coordinates, `name x`, `name y`, `name z`.
fn point(ui: &mut egui::Ui, name: &str, p: &mut DVec3) -> bool {
    let label = ui.label(name);
    let mut changed = false;
    ui.horizontal(|ui| {
        for (axis, value) in ["x", "y", "z"]
            .into_iter()
            .zip([&mut p.x, &mut p.y, &mut p.z])
        {
            let response = ui
                .add(
                    DragValue::new(value)
                        .speed(0.01)
                        .range(-1.0e7..=1.0e7)
                        .max_decimals(3)
                        .suffix(" m"),
                )
                .on_hover_text(format!("{name} {axis}, metres"));
            response.widget_info(|| {
                egui::WidgetInfo::labeled(egui::Role::SpinButton, true, format!("{name} {axis}"))
            });
            changed |= response.changed();
        }
    })
    .response
    .labelled_by(label.id);
    ui.end_row();
    changed
}

fn query_fields(ui: &mut egui::Ui, query: &mut ProbeQuery) -> Option<String> {
    let mut field = None;
    let mut mark = |changed: bool, name: &str| {
        if changed {
            field = Some(name.to_string());
        }
    };
    match query {
        ProbeQuery::Ray { from, to, hits } => {
            mark(point(ui, "from", from), "from");
            mark(point(ui, "to", to), "to");
            mark(hits_mode(ui, hits), "hits");
        }
        ProbeQuery::Sweep {
            shape,
            path,
            hits,
            duration,
            clearance,
            turns,
            rotation,
        } => {
            mark(shape_editor(ui, shape, false), "shape");
            for (i, p) in path.iter_mut().enumerate() {
                mark(point(ui, &format!("point {i}"), p), &format!("point {i}"));
                if let Some(Turns::Yaw(yaw)) = turns {
                    mark(
                        number(ui, &format!("yaw {i}"), &mut yaw[i], "°", -36_000.0),
                        &format!("yaw {i}"),
                    );
                }
            }
            match points_buttons(ui, path) {
                Some(PathChange::Added) => {
                    let n = path.len();
                    match turns {
                        Some(Turns::Yaw(yaw)) => yaw.push(yaw[n - 2]),
                        Some(Turns::Quaternions(q)) => q.push(q[n - 2]),
                        None => {}
                    }
                    mark(true, "path");
                }
                Some(PathChange::Removed) => {
                    match turns {
                        Some(Turns::Yaw(yaw)) => yaw.truncate(path.len()),
                        Some(Turns::Quaternions(q)) => q.truncate(path.len()),
                        None => {}
                    }
                    mark(true, "path");
                }
                None => {}
            }
            mark(
                turns_editor(ui, turns, rotation, clearance, path.len()),
                "turns",
            );
            mark(hits_mode(ui, hits), "hits");
            let label = ui.label("duration");
            ui.horizontal(|ui| {
                let mut timed = duration.is_some();
                if ui.checkbox(&mut timed, "").labelled_by(label.id).changed() {
                    *duration = timed.then_some(1.0);
                    mark(true, "duration");
                }
                if let Some(d) = duration {
                    let changed = ui
                        .add(
                            DragValue::new(d)
                                .speed(0.05)
                                .range(0.001..=1.0e6)
                                .suffix(" s"),
                        )
                        .changed();
                    mark(changed, "duration");
                }
            });
            ui.end_row();
            let label = ui.label("clearance");
            let mut wanted = clearance.unwrap_or(false);
            if ui
                .add_enabled(
                    turns.is_none(),
                    egui::Checkbox::new(&mut wanted, "report the least clearance"),
                )
                .on_disabled_hover_text("Measured for shapes that keep one turn")
                .labelled_by(label.id)
                .changed()
            {
                *clearance = Some(wanted);
                mark(true, "clearance");
            }
            ui.end_row();
        }
        ProbeQuery::Closest {
            shape,
            at,
            max_distance,
            ..
        } => {
            mark(shape_editor(ui, shape, true), "shape");
            mark(point(ui, "at", at), "at");
            mark(number(ui, "reach", max_distance, " m", 0.0), "reach");
        }
        ProbeQuery::Overlap { shape, at, .. } => {
            mark(shape_editor(ui, shape, false), "shape");
            mark(point(ui, "at", at), "at");
        }
        ProbeQuery::Rest {
            shape, at, search, ..
        } => {
            mark(shape_editor(ui, shape, false), "shape");
            mark(point(ui, "at", at), "at");
            let mut reach = search.unwrap_or(plumbline_core::probe::REST_SEARCH);
            if number(ui, "look below", &mut reach, " m", 0.01) {
                *search = Some(reach);
                mark(true, "search");
            }
        }
        ProbeQuery::Settle {
            shape,
            at,
            friction,
            ..
        } => {
            mark(shape_editor(ui, shape, false), "shape");
            mark(point(ui, "at", at), "at");
            let mut grip = friction.unwrap_or(plumbline_core::probe::SETTLE_FRICTION);
            if number(ui, "friction", &mut grip, "", 0.01) {
                *friction = Some(grip);
                mark(true, "friction");
            }
        }
        ProbeQuery::Sightlines { spots } => spots_editor(ui, spots, &mut mark),
        ProbeQuery::Coverage {
            spots,
            region,
            spacing,
        } => {
            spots_editor(ui, spots, &mut mark);
            mark(region_editor(ui, region), "region");
            mark(number(ui, "spacing", spacing, " m", 0.05), "spacing");
        }
        ProbeQuery::Reach {
            shape,
            spots,
            region,
            spacing,
            targets,
            max_step,
            max_slope,
            ..
        } => {
            mark(shape_editor(ui, shape, false), "shape");
            spots_editor(ui, spots, &mut mark);
            mark(region_editor(ui, region), "region");
            mark(number(ui, "spacing", spacing, " m", 0.1), "spacing");
            for (k, target) in targets.iter_mut().enumerate() {
                let mut at = DVec3::from_array(target.at);
                if point(ui, &target.name.clone(), &mut at) {
                    target.at = at.to_array();
                    mark(true, &format!("target {k}"));
                }
            }
            mark(gait_editor(ui, max_step, max_slope), "gait");
        }
        ProbeQuery::Walk {
            shape,
            path,
            max_step,
            max_slope,
        } => {
            mark(shape_editor(ui, shape, false), "shape");
            for (i, p) in path.iter_mut().enumerate() {
                mark(
                    point(ui, &format!("waypoint {i}"), p),
                    &format!("waypoint {i}"),
                );
            }
            mark(points_buttons(ui, path).is_some(), "path");
            mark(gait_editor(ui, max_step, max_slope), "gait");
        }
        ProbeQuery::Jump {
            shape,
            from,
            launch,
            gravity,
            max_slope,
            max_time,
            ..
        } => {
            mark(shape_editor(ui, shape, false), "shape");
            mark(point(ui, "from", from), "from");
            mark(launch_editor(ui, *from, launch), "launch");
            let defaults = [
                ("gravity", gravity, STANDARD_GRAVITY, " m/s²", 0.01),
                ("steepest ground", max_slope, MAX_WALKABLE_SLOPE, "°", 0.0),
                ("follow for", max_time, JUMP_TIME, " s", 0.01),
            ];
            for (name, value, default, unit, least) in defaults {
                let mut v = value.unwrap_or(default);
                if number(ui, name, &mut v, unit, least) {
                    *value = Some(v);
                    mark(true, name);
                }
            }
            // A slope is at most a wall.
            if let Some(slope) = max_slope {
                *slope = slope.min(90.0);
            }
        }
    }
    field
}

/// A character's gait: the highest step and the steepest ground (at most a wall).
fn gait_editor(ui: &mut egui::Ui, max_step: &mut Option<f64>, max_slope: &mut Option<f64>) -> bool {
    let mut changed = false;
    let mut step = max_step.unwrap_or(MAX_STEP);
    if number(ui, "highest step", &mut step, " m", 0.01) {
        *max_step = Some(step);
        changed = true;
    }
    let mut slope = max_slope.unwrap_or(MAX_WALKABLE_SLOPE);
    if number(ui, "steepest ground", &mut slope, "°", 0.0) {
        *max_slope = Some(slope.min(90.0));
        changed = true;
    }
    changed
}

/// A region's two corners, each three numbers.
fn region_editor(ui: &mut egui::Ui, region: &mut Region) -> bool {
    let mut changed = false;
    let mut lo = DVec3::from_array(region.min);
    let mut hi = DVec3::from_array(region.max);
    if point(ui, "region from", &mut lo) {
        region.min = lo.to_array();
        changed = true;
    }
    if point(ui, "region to", &mut hi) {
        region.max = hi.to_array();
        changed = true;
    }
    changed
}

/// A change to a list of path points made with [`points_buttons`].
enum PathChange {
    Added,
    Removed,
}

/// Buttons that add a last point (1 m on from the last, in the last segment's direction) or remove
/// the last one (while more than two are left).
fn points_buttons(ui: &mut egui::Ui, path: &mut Vec<DVec3>) -> Option<PathChange> {
    let mut change = None;
    ui.label("");
    ui.horizontal(|ui| {
        if ui
            .button("Add point")
            .on_hover_text("A new last point, 1 m further on")
            .clicked()
        {
            let n = path.len();
            let step = (path[n - 1] - path[n - 2]).normalize_or(DVec3::X);
            path.push(path[n - 1] + step);
            change = Some(PathChange::Added);
        }
        if ui
            .add_enabled(path.len() > 2, egui::Button::new("Remove last point"))
            .clicked()
        {
            path.pop();
            change = Some(PathChange::Removed);
        }
    });
    ui.end_row();
    change
}

/// Whether the shape turns along the path, as a yaw per path point about the level's up axis
/// (switching it on starts every point at 0°, and drops the one constant turn and the clearance,
/// which are for shapes that keep one turn); quaternion turns written in the file are shown, not
/// edited.
fn turns_editor(
    ui: &mut egui::Ui,
    turns: &mut Option<Turns>,
    rotation: &mut Option<glam::DQuat>,
    clearance: &mut Option<bool>,
    points: usize,
) -> bool {
    let label = ui.label("turns");
    let mut changed = false;
    if let Some(Turns::Quaternions(_)) = turns {
        ui.label("a quaternion per point, as the file gives them")
            .labelled_by(label.id);
    } else {
        let mut turning = turns.is_some();
        if ui
            .checkbox(&mut turning, "a yaw per point (about up)")
            .labelled_by(label.id)
            .changed()
        {
            *turns = turning.then(|| Turns::Yaw(vec![0.0; points]));
            if turning {
                *rotation = None;
                *clearance = None;
            }
            changed = true;
        }
    }
    ui.end_row();
    changed
}

/// How a jump is thrown: aimed at a point with an apex, or with a velocity; switching keeps the same
/// arc where it can (taking the level's up as +Y for the conversion).
fn launch_editor(ui: &mut egui::Ui, from: DVec3, launch: &mut Launch) -> bool {
    let mut changed = false;
    let label = ui.label("thrown");
    let aimed = matches!(launch, Launch::Target { .. });
    ui.horizontal(|ui| {
        let to_target = ui
            .selectable_label(aimed, "at a point")
            .labelled_by(label.id);
        let to_velocity = ui.selectable_label(!aimed, "with a velocity");
        if to_target.clicked() && !aimed {
            if let Launch::Velocity(v) = *launch {
                // Where it comes back to its start height, rising as this velocity does.
                let (across, climb) = (DVec3::new(v.x, 0.0, v.z), v.y.max(0.5));
                let flight = 2.0 * climb / STANDARD_GRAVITY;
                *launch = Launch::Target {
                    to: from + across * flight,
                    apex: climb * climb / (2.0 * STANDARD_GRAVITY),
                };
            }
            changed = true;
        }
        if to_velocity.clicked() && aimed {
            let velocity = trajectory(
                &ProbeQuery::Jump {
                    shape: ShapeSpec::Sphere { radius: 1.0 },
                    rotation: None,
                    from,
                    launch: *launch,
                    gravity: None,
                    max_slope: None,
                    max_time: None,
                },
                DVec3::Y,
            )
            .ok()
            .flatten()
            .map_or(DVec3::new(3.0, 4.0, 0.0), |arc| arc.velocity);
            *launch = Launch::Velocity(velocity);
            changed = true;
        }
    });
    ui.end_row();
    match launch {
        Launch::Velocity(v) => changed |= point(ui, "velocity", v),
        Launch::Target { to, apex } => {
            changed |= point(ui, "to", to);
            changed |= number(ui, "apex above start", apex, " m", 0.01);
        }
    }
    changed
}

/// A set of spots: each named point, and how far above tagged objects their eyes are.
fn spots_editor(ui: &mut egui::Ui, spots: &mut Spots, mark: &mut dyn FnMut(bool, &str)) {
    for (k, spot) in spots.points.iter_mut().enumerate() {
        let mut at = DVec3::from_array(spot.at);
        if point(ui, &spot.name.clone(), &mut at) {
            spot.at = at.to_array();
            mark(true, &format!("spot {k}"));
        }
    }
    if !spots.tags.is_empty() {
        ui.label("tagged spots");
        ui.label(spots.tags.join(", "));
        ui.end_row();
        let mut eye = spots.eye.unwrap_or(plumbline_core::probe::EYE_HEIGHT);
        if number(ui, "eye height", &mut eye, " m", -1.0e6) {
            spots.eye = Some(eye);
            mark(true, "eye");
        }
    }
}

fn hits_mode(ui: &mut egui::Ui, hits: &mut Option<HitsMode>) -> bool {
    let label = ui.label("hits");
    let mut mode = hits.unwrap_or(HitsMode::First);
    let before = mode;
    ui.horizontal(|ui| {
        ui.selectable_value(&mut mode, HitsMode::First, "first");
        ui.selectable_value(&mut mode, HitsMode::All, "all");
    })
    .response
    .labelled_by(label.id);
    ui.end_row();
    if mode != before {
        *hits = Some(mode);
        true
    } else {
        false
    }
}

/// The shape's kind and sizes. `point_allowed` for closest-point probes.
fn shape_editor(ui: &mut egui::Ui, shape: &mut ShapeSpec, point_allowed: bool) -> bool {
    let label = ui.label("shape");
    let mut kind = shape.type_name();
    let mut kinds = vec!["sphere", "box", "capsule", "cylinder"];
    if point_allowed {
        kinds.insert(0, "point");
    }
    egui::ComboBox::from_id_salt("shape-kind")
        .selected_text(kind)
        .show_ui(ui, |ui| {
            for k in &kinds {
                ui.selectable_value(&mut kind, k, *k);
            }
        })
        .response
        .labelled_by(label.id);
    ui.end_row();
    let mut changed = false;
    if kind != shape.type_name() {
        *shape = match kind {
            "point" => ShapeSpec::Point {},
            "sphere" => ShapeSpec::Sphere { radius: 0.35 },
            "box" => ShapeSpec::Box {
                half_extents: [0.5, 0.5, 0.5],
            },
            "cylinder" => ShapeSpec::Cylinder {
                radius: 0.35,
                half_height: 0.9,
            },
            _ => ShapeSpec::Capsule {
                radius: 0.35,
                half_height: 0.55,
            },
        };
        changed = true;
    }
    match shape {
        ShapeSpec::Sphere { radius } => changed |= number(ui, "radius", radius, " m", 0.001),
        ShapeSpec::Box { half_extents } => {
            for (name, h) in ["half x", "half y", "half z"]
                .into_iter()
                .zip(half_extents.iter_mut())
            {
                changed |= number(ui, name, h, " m", 0.001);
            }
        }
        ShapeSpec::Capsule {
            radius,
            half_height,
        }
        | ShapeSpec::Cylinder {
            radius,
            half_height,
        } => {
            changed |= number(ui, "radius", radius, " m", 0.001);
            changed |= number(ui, "half height", half_height, " m", 0.0);
        }
        _ => {}
    }
    changed
}

/// A comma-separated list of tags or names; returns the new list when it was edited.
fn name_list(ui: &mut egui::Ui, name: &str, hint: &str, values: &[String]) -> Option<Vec<String>> {
    let label = ui.label(name);
    let mut text = values.join(", ");
    let changed = ui
        .add(
            egui::TextEdit::singleline(&mut text)
                .hint_text(hint)
                .desired_width(f32::INFINITY),
        )
        .labelled_by(label.id)
        .changed();
    ui.end_row();
    changed.then(|| {
        text.split(',')
            .map(|t| t.trim().to_string())
            .filter(|t| !t.is_empty())
            .collect()
    })
}

/// Which objects the probe looks at.
fn filter_fields(ui: &mut egui::Ui, probe: &mut Probe) -> Option<String> {
    let filter = &mut probe.filter;
    let mut field = None;
    let only = filter.only_tags.clone().unwrap_or_default();
    if let Some(only) = name_list(ui, "only tags", "every object", &only) {
        filter.only_tags = (!only.is_empty()).then_some(only);
        field = Some("only tags".to_string());
    }
    if let Some(tags) = name_list(ui, "ignores tags", "none", &filter.ignore_tags) {
        filter.ignore_tags = tags;
        field = Some("ignores tags".to_string());
    }
    if let Some(names) = name_list(ui, "ignores objects", "none", &filter.ignore_objects) {
        filter.ignore_objects = names;
        field = Some("ignores objects".to_string());
    }
    field
}

/// The expectation: none, clear, blocked, or conditions. Returns the new one when it changed.
fn expect_editor(
    ui: &mut egui::Ui,
    query: &ProbeQuery,
    expect: Option<&Expect>,
) -> Option<Option<Expect>> {
    let choice = match expect {
        None => "nothing",
        Some(Expect::Word(ExpectWord::Clear)) => "clear",
        Some(Expect::Word(ExpectWord::Blocked)) => "blocked",
        Some(Expect::Conditions(_)) => "conditions",
    };
    let mut picked = choice;
    ui.horizontal(|ui| {
        for option in ["nothing", "clear", "blocked", "conditions"] {
            ui.selectable_value(&mut picked, option, option);
        }
    });
    if picked != choice {
        return Some(match picked {
            "nothing" => None,
            "clear" => Some(Expect::Word(ExpectWord::Clear)),
            "blocked" => Some(Expect::Word(ExpectWord::Blocked)),
            _ => Some(Expect::Conditions(Box::new(
                expect.map(Expect::conditions).unwrap_or_default(),
            ))),
        });
    }
    let Some(Expect::Conditions(conditions)) = expect else {
        return None;
    };
    let mut c = conditions.clone();
    egui::Grid::new("conditions").num_columns(2).show(ui, |ui| {
        optional_text(ui, "first object", &mut c.first_object);
        optional_text(ui, "first tag", &mut c.first_tag);
        let mut range = c.distance.unwrap_or_default();
        let changed_min = optional_number(ui, "distance at least", &mut range.min);
        let changed_max = optional_number(ui, "distance at most", &mut range.max);
        if changed_min || changed_max {
            c.distance = (range != Range::default()).then_some(range);
        }
        if matches!(query, ProbeQuery::Sweep { .. }) {
            optional_number(ui, "clearance at least", &mut c.min_clearance);
        }
        if matches!(query, ProbeQuery::Overlap { .. }) {
            optional_number(ui, "depth at most", &mut c.max_depth);
        }
    });
    (c != *conditions).then_some(Some(Expect::Conditions(c)))
}

fn optional_text(ui: &mut egui::Ui, name: &str, value: &mut Option<String>) {
    let label = ui.label(name);
    let mut text = value.clone().unwrap_or_default();
    if ui
        .add(egui::TextEdit::singleline(&mut text).hint_text("any"))
        .labelled_by(label.id)
        .changed()
    {
        *value = (!text.trim().is_empty()).then(|| text.trim().to_string());
    }
    ui.end_row();
}

fn optional_number(ui: &mut egui::Ui, name: &str, value: &mut Option<f64>) -> bool {
    let label = ui.label(name);
    let mut changed = false;
    ui.horizontal(|ui| {
        let mut on = value.is_some();
        if ui.checkbox(&mut on, "").labelled_by(label.id).changed() {
            *value = on.then_some(0.0);
            changed = true;
        }
        if let Some(v) = value {
            changed |= ui
                .add(
                    DragValue::new(v)
                        .speed(0.01)
                        .range(0.0..=1.0e6)
                        .max_decimals(3)
                        .suffix(" m"),
                )
                .changed();
        }
    });
    ui.end_row();
    changed
}
