//! The level file (`*.level.json`, SPEC §1): objects composed from mesh files and primitives.

use std::collections::HashSet;
use std::path::{Path, PathBuf};

use glam::{DQuat, DVec3};
use serde::Deserialize;

use super::glob::glob_matches;
use super::load_mesh_file;
use super::mesh::build_mesh;
use super::model::{Geometry, Level, LevelObject};
use super::shape::ShapeSpec;
use super::transform::Transform;
use crate::error::{Diagnostic, InputError, Warning, check_header};
use crate::input::read_input;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct LevelFile {
    plumbline: String,
    version: u32,
    up: Option<[f64; 3]>,
    #[serde(default)]
    tag_rules: Vec<TagRule>,
    objects: Vec<ObjectSpec>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct TagRule {
    #[serde(rename = "match")]
    pattern: String,
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
    shape: Option<ShapeSpec>,
}

#[derive(Deserialize)]
#[serde(untagged)]
enum Scale {
    Uniform(f64),
    PerAxis([f64; 3]),
}

/// Loads a level file and every mesh file it refers to.
pub fn load_level_file(
    path: &Path,
    files: &mut Vec<PathBuf>,
) -> Result<(Level, Vec<Diagnostic>), InputError> {
    let text = read_input(path)?;
    files.push(path.to_path_buf());
    let text = std::str::from_utf8(&text)
        .map_err(|e| InputError::file(path, format!("not UTF-8 text: {e}")))?;
    let file: LevelFile = serde_json::from_str(text).map_err(|e| InputError::json(path, &e))?;
    check_header(path, &file.plumbline, file.version, "level", "a level")?;
    let up = parse_up(path, file.up)?;
    let folder = path.parent().unwrap_or(Path::new(""));
    let mut diagnostics = Vec::new();
    let mut objects = Vec::new();
    let mut names = HashSet::new();
    for (k, spec) in file.objects.iter().enumerate() {
        let place = format!("objects[{k}] \"{}\"", spec.name);
        let fail = |message: String| InputError::at(path, place.clone(), message);
        if spec.name.is_empty() {
            return Err(fail("an object needs a non-empty name".into()));
        }
        if !names.insert(spec.name.clone()) {
            return Err(fail("another object already has this name".into()));
        }
        let transform = parse_transform(spec).map_err(fail)?;
        match (&spec.mesh, &spec.shape) {
            (Some(mesh), None) => {
                let mesh_path = folder.join(mesh);
                if !mesh_path.is_file() {
                    return Err(fail(format!(
                        "mesh file \"{mesh}\" cannot be read: no such file"
                    )));
                }
                let (inner, inner_diagnostics) = load_mesh_file(&mesh_path, files)?;
                diagnostics.extend(inner_diagnostics);
                let matrix = transform.matrix();
                for object in inner {
                    let Geometry::Mesh(m) = &object.geometry else {
                        continue;
                    };
                    let triangles: Vec<[u64; 3]> =
                        m.triangles.iter().map(|t| t.map(u64::from)).collect();
                    let built = build_mesh(&m.vertices, &triangles, &matrix)
                        .map_err(|f| fail(format!("{}: {}", f.place(), f.message())))?;
                    let name = format!("{}/{}", spec.name, object.name);
                    if built.degenerate_dropped > 0 {
                        diagnostics.push(degenerate_warning(path, &name, built.degenerate_dropped));
                    }
                    objects.push(LevelObject {
                        name,
                        tags: merged_tags(&spec.tags, &object.tags),
                        geometry: Geometry::Mesh(built.mesh),
                    });
                }
            }
            (None, Some(shape)) => {
                let (geometry, dropped) = shape
                    .level_geometry(&transform)
                    .map_err(|m| fail(format!("shape: {m}")))?;
                if dropped > 0 {
                    diagnostics.push(degenerate_warning(path, &spec.name, dropped));
                }
                objects.push(LevelObject {
                    name: spec.name.clone(),
                    tags: merged_tags(&spec.tags, &[]),
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
    apply_tag_rules(&file.tag_rules, &mut objects);
    drop_empty_objects(path, &mut objects, &mut diagnostics);
    Ok((Level { up, objects }, diagnostics))
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

fn apply_tag_rules(rules: &[TagRule], objects: &mut [LevelObject]) {
    for object in objects {
        for rule in rules
            .iter()
            .filter(|r| glob_matches(&r.pattern, &object.name))
        {
            object.tags = merged_tags(&object.tags, &rule.tags);
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
