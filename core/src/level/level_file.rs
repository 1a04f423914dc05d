//! The level file (`*.level.json`, SPEC §1): objects composed from mesh files and primitives.

use std::collections::{HashMap, HashSet};
use std::path::{Path, PathBuf};

use glam::{DQuat, DVec3};
use serde::Deserialize;

use super::glob::glob_matches;
use super::lint_settings::LintSettings;
use super::load_mesh_file;
use super::mesh::build_mesh;
use super::model::{Geometry, Level, LevelObject, MeshOrigin};
use super::shape::ShapeSpec;
use super::transform::Transform;
use crate::error::{Diagnostic, InputError, Warning, check_header};
use crate::input::{MAX_TRIANGLES, PathPolicy, check_name, one_line, resolve_named};

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct LevelFile {
    /// The JSON Schema the file names; not used.
    #[serde(rename = "$schema")]
    _schema: Option<String>,
    plumbline: String,
    version: u32,
    up: Option<[f64; 3]>,
    #[serde(default, deserialize_with = "crate::json_object::objects")]
    tag_rules: Vec<TagRule>,
    #[serde(deserialize_with = "crate::json_object::objects")]
    objects: Vec<ObjectSpec>,
    #[serde(default, deserialize_with = "crate::json_object::object")]
    lint: LintSettings,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct TagRule {
    /// A glob over object names.
    #[serde(rename = "match")]
    pattern: Option<String>,
    /// A glob over material names: the tags go to those faces.
    material: Option<String>,
    tags: Vec<String>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ObjectSpec {
    name: String,
    #[serde(default)]
    tags: Vec<String>,
    translation: Option<[f64; 3]>,
    rotation: Option<[f64; 4]>,
    scale: Option<Scale>,
    mesh: Option<String>,
    #[serde(default, deserialize_with = "crate::json_object::optional_object")]
    shape: Option<ShapeSpec>,
    /// The object is a volume (see [`super::VOLUME_TAG`]).
    #[serde(default)]
    volume: bool,
}

impl ObjectSpec {
    /// The object's own tags, with the volume tag when it is marked as one.
    fn own_tags(&self) -> Vec<String> {
        let mut tags = self.tags.clone();
        if self.volume {
            tags.push(super::VOLUME_TAG.to_string());
        }
        tags
    }
}

#[derive(Deserialize)]
#[serde(untagged)]
enum Scale {
    Uniform(f64),
    PerAxis([f64; 3]),
}

/// Loads a level file from its bytes and every mesh file it refers to (each mesh file read once
/// however many objects use it), adding every file read to `files`.
pub fn load_level_file(
    path: &Path,
    bytes: &[u8],
    policy: PathPolicy,
    files: &mut Vec<PathBuf>,
) -> Result<(Level, Vec<Diagnostic>, LintSettings), InputError> {
    let text = std::str::from_utf8(bytes)
        .map_err(|e| InputError::file(path, format!("not UTF-8 text: {e}")))?;
    let file: LevelFile =
        crate::json_object::from_object_str(text).map_err(|e| InputError::json(path, &e))?;
    check_header(path, &file.plumbline, file.version, "level", "a level")?;
    let up = parse_up(path, file.up)?;
    check_tag_rules(path, &file.tag_rules)?;
    file.lint.check(path)?;
    let mut diagnostics = Vec::new();
    let mut objects = Vec::new();
    let mut mesh_files: HashMap<PathBuf, Vec<LevelObject>> = HashMap::new();
    let mut triangles = 0usize;
    let mut names = HashSet::new();
    for (k, spec) in file.objects.iter().enumerate() {
        let place = format!("objects[{k}] \"{}\"", one_line(&spec.name));
        let fail = |message: String| InputError::at(path, place.clone(), message);
        if spec.name.is_empty() {
            return Err(fail("an object needs a non-empty name".into()));
        }
        check_name("the object's name", &spec.name).map_err(fail)?;
        if !names.insert(spec.name.as_str()) {
            return Err(fail("another object already has this name".into()));
        }
        for tag in &spec.tags {
            check_name("a tag", tag).map_err(fail)?;
        }
        let transform = parse_transform(spec).map_err(fail)?;
        match (&spec.mesh, &spec.shape) {
            (Some(mesh), None) => {
                let mesh_path = resolve_named(path, mesh, policy)
                    .map_err(|m| fail(format!("mesh file: {m}")))?;
                if std::fs::metadata(&mesh_path).is_err() {
                    return Err(fail(format!(
                        "mesh file \"{}\" cannot be read: no such file",
                        one_line(mesh)
                    )));
                }
                if !mesh_files.contains_key(&mesh_path) {
                    let (inner, inner_diagnostics) = load_mesh_file(&mesh_path, policy, files)?;
                    diagnostics.extend(inner_diagnostics);
                    mesh_files.insert(mesh_path.clone(), inner);
                }
                let matrix = transform.matrix();
                for object in &mesh_files[&mesh_path] {
                    let Geometry::Mesh(m) = &object.geometry else {
                        continue;
                    };
                    triangles += m.triangles.len();
                    if triangles > MAX_TRIANGLES {
                        return Err(fail(format!(
                            "the level holds more than {MAX_TRIANGLES} triangles"
                        )));
                    }
                    let corners: Vec<[u64; 3]> =
                        m.triangles.iter().map(|t| t.map(u64::from)).collect();
                    let origin = MeshOrigin {
                        file: Some(mesh.as_str().into()),
                        ..m.origin.clone()
                    };
                    let built = build_mesh(&m.vertices, &corners, &matrix, origin)
                        .map_err(|f| fail(format!("{}: {}", f.place(), f.message())))?;
                    let name = format!("{}/{}", spec.name, object.name);
                    if built.degenerate_dropped > 0 {
                        diagnostics.push(degenerate_warning(path, &name, built.degenerate_dropped));
                    }
                    objects.push(LevelObject {
                        name,
                        tags: merged_tags(&spec.own_tags(), &object.tags),
                        geometry: Geometry::Mesh(built.mesh),
                    });
                }
            }
            (None, Some(shape)) => {
                let (geometry, dropped) = shape
                    .level_geometry(&transform)
                    .map_err(|m| fail(format!("shape: {m}")))?;
                if let Geometry::Mesh(m) = &geometry {
                    triangles += m.triangles.len();
                    if triangles > MAX_TRIANGLES {
                        return Err(fail(format!(
                            "the level holds more than {MAX_TRIANGLES} triangles"
                        )));
                    }
                }
                if dropped > 0 {
                    diagnostics.push(degenerate_warning(path, &spec.name, dropped));
                }
                objects.push(LevelObject {
                    name: spec.name.clone(),
                    tags: merged_tags(&spec.own_tags(), &[]),
                    geometry,
                });
            }
            _ => {
                return Err(fail(
                    "an object needs exactly one of \"mesh\" and \"shape\"".into(),
                ));
            }
        }
    }
    check_unique_names(path, &objects)?;
    apply_tag_rules(&file.tag_rules, &mut objects);
    drop_empty_objects(path, &mut objects, &mut diagnostics);
    Ok((Level { up, objects }, diagnostics, file.lint))
}

/// Every object name must be unique, including the `<object>/<inner>` names of objects inside mesh
/// files (an object `shed/a` beside a mesh object `shed` holding `a` would give two).
fn check_unique_names(path: &Path, objects: &[LevelObject]) -> Result<(), InputError> {
    let mut seen = HashSet::new();
    for object in objects {
        if !seen.insert(object.name.as_str()) {
            return Err(InputError::at(
                path,
                format!("object \"{}\"", one_line(&object.name)),
                "two objects have this name (object names, including those of objects inside \
                 mesh files, must be unique)",
            ));
        }
    }
    Ok(())
}

/// A tag rule names objects (`match`), materials (`material`), or both.
fn check_tag_rules(path: &Path, rules: &[TagRule]) -> Result<(), InputError> {
    for (k, rule) in rules.iter().enumerate() {
        let place = format!("tag_rules[{k}]");
        if rule.pattern.is_none() && rule.material.is_none() {
            return Err(InputError::at(
                path,
                place,
                "a tag rule needs \"match\" (object names), \"material\" (material names) or both",
            ));
        }
        for tag in &rule.tags {
            check_name("a tag", tag).map_err(|m| InputError::at(path, place.clone(), m))?;
        }
    }
    Ok(())
}

fn parse_up(path: &Path, up: Option<[f64; 3]>) -> Result<DVec3, InputError> {
    let up = DVec3::from_array(up.unwrap_or([0.0, 1.0, 0.0]));
    if !up.is_finite() || up.length() == 0.0 {
        return Err(InputError::at(
            path,
            "field \"up\"",
            "the up axis must be a finite, non-zero vector",
        ));
    }
    Ok(up.normalize())
}

fn parse_transform(spec: &ObjectSpec) -> Result<Transform, String> {
    let translation = DVec3::from_array(spec.translation.unwrap_or([0.0; 3]));
    if !super::within_range(translation) {
        return Err(format!(
            "translation must be three finite numbers within ±{:e} m",
            super::MAX_COORDINATE
        ));
    }
    let rotation = match spec.rotation {
        None => DQuat::IDENTITY,
        Some(q) => {
            let q = DQuat::from_array(q);
            if !q.is_finite() || (q.length() - 1.0).abs() > 1e-6 {
                return Err("rotation must be a unit quaternion [x, y, z, w]".into());
            }
            q.normalize()
        }
    };
    let scale = match spec.scale {
        None => DVec3::ONE,
        Some(Scale::Uniform(s)) => DVec3::splat(s),
        Some(Scale::PerAxis(s)) => DVec3::from_array(s),
    };
    if !scale.is_finite() || scale.min_element().abs() == 0.0 || scale.abs().min_element() == 0.0 {
        return Err("scale must be finite and non-zero along every axis".into());
    }
    Ok(Transform {
        translation,
        rotation,
        scale,
    })
}

fn merged_tags(own: &[String], inner: &[String]) -> Vec<String> {
    let mut tags: Vec<String> = own.iter().chain(inner).cloned().collect();
    tags.sort();
    tags.dedup();
    tags
}

/// Adds each rule's tags to the objects whose names match it, or, for a rule with `material`, to the
/// matching materials of those objects (every object when the rule has no `match`).
fn apply_tag_rules(rules: &[TagRule], objects: &mut [LevelObject]) {
    for object in objects {
        for rule in rules.iter().filter(|r| {
            r.pattern
                .as_ref()
                .is_none_or(|p| glob_matches(p, &object.name))
        }) {
            match (&rule.material, &mut object.geometry) {
                (None, _) => object.tags = merged_tags(&object.tags, &rule.tags),
                (Some(pattern), Geometry::Mesh(mesh)) => {
                    for run in &mut mesh.origin.materials {
                        if glob_matches(pattern, &run.name) {
                            run.tags = merged_tags(&run.tags, &rule.tags);
                        }
                    }
                }
                (Some(_), Geometry::Primitive { .. }) => {}
            }
        }
    }
}

/// The warning for triangles dropped because they had no area.
pub(crate) fn degenerate_warning(path: &Path, object: &str, count: usize) -> Diagnostic {
    Diagnostic::new(
        path,
        Warning::DegenerateDropped {
            object: object.to_string(),
            count,
        },
    )
}

/// Removes meshes with no triangles left, with a warning for each.
pub(crate) fn drop_empty_objects(
    path: &Path,
    objects: &mut Vec<LevelObject>,
    diagnostics: &mut Vec<Diagnostic>,
) {
    objects.retain(|o| {
        let empty = matches!(&o.geometry, Geometry::Mesh(m) if m.triangles.is_empty());
        if empty {
            diagnostics.push(Diagnostic::new(
                path,
                Warning::EmptyObject {
                    object: o.name.clone(),
                },
            ));
        }
        !empty
    });
}
