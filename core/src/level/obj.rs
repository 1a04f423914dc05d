//! Wavefront OBJ loading: `v` and `f` statements, each `o`/`g` group an object, negative indices.

use std::path::Path;

use glam::{DMat4, DVec3};

use super::level_file::degenerate_warning;
use super::mesh::build_mesh;
use super::model::{Geometry, LevelObject};
use crate::error::{Diagnostic, InputError, Warning};

/// Loads an OBJ file: one object per `o`/`g` name (faces before any name go to an object named after
/// the file). Polygons are split into fans; lines and points are skipped with a warning.
pub fn load_obj(
    path: &Path,
    text: &str,
) -> Result<(Vec<LevelObject>, Vec<Diagnostic>), InputError> {
    let default_name = path
        .file_stem()
        .map_or("obj".into(), |s| s.to_string_lossy().into_owned());
    let mut vertices: Vec<DVec3> = Vec::new();
    let mut groups: Vec<(String, Vec<[u64; 3]>)> = Vec::new();
    let mut current: Option<usize> = None;
    let mut skipped_elements = 0usize;
    for (n, raw_line) in text.lines().enumerate() {
        let line_no = n + 1;
        let line = raw_line.split('#').next().unwrap_or("");
        let mut words = line.split_whitespace();
        let Some(keyword) = words.next() else {
            continue;
        };
        let column_of = |word: &str| word.as_ptr() as usize - raw_line.as_ptr() as usize + 1;
        let error = |word: &str, message: String| {
            InputError::at_line(path, line_no, column_of(word), message)
        };
        match keyword {
            "v" => {
                let mut xyz = [0.0; 3];
                for slot in &mut xyz {
                    let word = words
                        .next()
                        .ok_or_else(|| error(keyword, "a vertex needs three coordinates".into()))?;
                    *slot = word
                        .parse::<f64>()
                        .ok()
                        .filter(|v| v.is_finite())
                        .ok_or_else(|| error(word, format!("\"{word}\" is not a finite number")))?;
                }
                vertices.push(DVec3::from_array(xyz));
            }
            "o" | "g" => {
                let name = words.collect::<Vec<_>>().join(" ");
                let name = if name.is_empty() {
                    default_name.clone()
                } else {
                    name
                };
                current = Some(group_index(&mut groups, name));
            }
            "f" => {
                let mut corners = Vec::new();
                for word in words {
                    let index_text = word.split('/').next().unwrap_or("");
                    let index: i64 = index_text.parse().map_err(|_| {
                        error(word, format!("\"{word}\" is not a vertex reference"))
                    })?;
                    let resolved = match index {
                        i if i > 0 && (i as u64) <= vertices.len() as u64 => (i - 1) as u64,
                        i if i < 0 && i.unsigned_abs() <= vertices.len() as u64 => {
                            vertices.len() as u64 - i.unsigned_abs()
                        }
                        _ => {
                            return Err(error(
                                word,
                                format!(
                                    "vertex {index} does not exist ({} vertices so far)",
                                    vertices.len()
                                ),
                            ));
                        }
                    };
                    corners.push(resolved);
                }
                if corners.len() < 3 {
                    return Err(error(
                        keyword,
                        "a face needs at least three vertices".into(),
                    ));
                }
                let g =
                    *current.get_or_insert_with(|| group_index(&mut groups, default_name.clone()));
                let faces = &mut groups[g].1;
                faces.extend(
                    (1..corners.len() - 1).map(|i| [corners[0], corners[i], corners[i + 1]]),
                );
            }
            "l" | "p" => skipped_elements += 1,
            _ => {}
        }
    }
    let mut diagnostics = Vec::new();
    if skipped_elements > 0 {
        diagnostics.push(Diagnostic::new(
            path,
            Warning::SkippedElements {
                count: skipped_elements,
            },
        ));
    }
    let mut objects = Vec::new();
    for (name, faces) in groups {
        let built = build_mesh(&vertices, &faces, &DMat4::IDENTITY).map_err(|f| {
            InputError::at(
                path,
                format!("object \"{name}\", {}", f.place()),
                f.message(),
            )
        })?;
        if built.degenerate_dropped > 0 {
            diagnostics.push(degenerate_warning(path, &name, built.degenerate_dropped));
        }
        objects.push(LevelObject {
            name,
            tags: Vec::new(),
            geometry: Geometry::Mesh(compact(built.mesh)),
        });
    }
    Ok((objects, diagnostics))
}

fn group_index(groups: &mut Vec<(String, Vec<[u64; 3]>)>, name: String) -> usize {
    groups
        .iter()
        .position(|(n, _)| *n == name)
        .unwrap_or_else(|| {
            groups.push((name, Vec::new()));
            groups.len() - 1
        })
}

/// Keeps only the vertices the object's triangles use (OBJ shares one vertex list among groups).
fn compact(mesh: super::model::Mesh) -> super::model::Mesh {
    let mut remap = vec![u32::MAX; mesh.vertices.len()];
    let mut vertices = Vec::new();
    let triangles = mesh
        .triangles
        .iter()
        .map(|t| {
            t.map(|i| {
                if remap[i as usize] == u32::MAX {
                    remap[i as usize] = vertices.len() as u32;
                    vertices.push(mesh.vertices[i as usize]);
                }
                remap[i as usize]
            })
        })
        .collect();
    super::model::Mesh {
        vertices,
        triangles,
    }
}
