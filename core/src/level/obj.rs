//! Wavefront OBJ loading: `v` and `f` statements, each `o`/`g` group an object, negative indices,
//! `usemtl` materials. What real exporters write is tolerated with a warning: a byte-order mark, any
//! line ending (LF, CRLF or CR alone), text that is not UTF-8, lines and points, and faces of fewer
//! than three corners (edges).

use std::path::Path;
use std::sync::Arc;

use glam::{DMat4, DVec3};

use super::level_file::degenerate_warning;
use super::mesh::build_mesh;
use super::model::{FaceLayout, Geometry, LevelObject, MaterialRun, MeshOrigin, ObjFace};
use crate::error::{Diagnostic, InputError, Warning};
use crate::input::{MAX_TRIANGLES, check_name};

/// One `o`/`g` group as it is read: its faces as fans of triangles, where each face starts and is
/// in the file, and its material runs.
struct Group {
    name: String,
    triangles: Vec<[u64; 3]>,
    faces: Vec<ObjFace>,
    materials: Vec<MaterialRun>,
}

/// Loads an OBJ file: one object per `o`/`g` name (faces before any name go to an object named after
/// the file). Polygons are split into fans; lines, points and faces of fewer than three corners are
/// skipped with a warning.
pub fn load_obj(
    path: &Path,
    bytes: &[u8],
) -> Result<(Vec<LevelObject>, Vec<Diagnostic>), InputError> {
    let mut diagnostics = Vec::new();
    let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
    let text = match std::str::from_utf8(bytes) {
        Ok(text) => std::borrow::Cow::Borrowed(text),
        Err(_) => {
            diagnostics.push(Diagnostic::new(path, Warning::NotUtf8));
            String::from_utf8_lossy(bytes)
        }
    };
    let default_name = path
        .file_stem()
        .map_or("obj".into(), |s| s.to_string_lossy().into_owned());
    let file_name: Arc<str> = path
        .file_name()
        .map_or("obj".into(), |n| n.to_string_lossy().into());
    let mut vertices: Vec<DVec3> = Vec::new();
    let mut groups: Vec<Group> = Vec::new();
    let mut current: Option<usize> = None;
    let mut material: Option<Arc<str>> = None;
    let (mut skipped_elements, mut short_faces, mut file_faces, mut all_triangles) =
        (0usize, 0usize, 0u32, 0usize);
    for (n, raw_line) in lines(&text).enumerate() {
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
                        .ok_or_else(|| {
                            error(
                                word,
                                format!(
                                    "\"{}\" is not a finite number",
                                    crate::input::one_line(word)
                                ),
                            )
                        })?;
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
                check_name("the group's name", &name).map_err(|m| error(keyword, m))?;
                current = Some(group_index(&mut groups, name));
            }
            "usemtl" => {
                let name = words.collect::<Vec<_>>().join(" ");
                check_name("the material's name", &name).map_err(|m| error(keyword, m))?;
                material = (!name.is_empty()).then(|| Arc::from(name));
            }
            "f" => {
                let mut corners = Vec::new();
                for word in words {
                    let index_text = word.split('/').next().unwrap_or("");
                    let index: i64 = index_text.parse().map_err(|_| {
                        error(
                            word,
                            format!(
                                "\"{}\" is not a vertex reference",
                                crate::input::one_line(word)
                            ),
                        )
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
                let face = file_faces;
                file_faces += 1;
                if corners.len() < 3 {
                    // An edge or a point written as a face: exporters do this; it has no area.
                    short_faces += 1;
                    continue;
                }
                all_triangles += corners.len() - 2;
                if all_triangles > MAX_TRIANGLES {
                    return Err(error(
                        keyword,
                        format!("the file holds more than {MAX_TRIANGLES} triangles"),
                    ));
                }
                let g =
                    *current.get_or_insert_with(|| group_index(&mut groups, default_name.clone()));
                let group = &mut groups[g];
                let first = group.triangles.len() as u32;
                if group.materials.last().map(|m| &m.name) != material.as_ref()
                    && let Some(name) = &material
                {
                    group.materials.push(MaterialRun {
                        first,
                        name: name.clone(),
                        tags: Vec::new(),
                    });
                }
                group.faces.push(ObjFace {
                    first_triangle: first,
                    line: line_no as u32,
                    file_face: face,
                });
                group.triangles.extend(
                    (1..corners.len() - 1).map(|i| [corners[0], corners[i], corners[i + 1]]),
                );
            }
            "l" | "p" => skipped_elements += 1,
            _ => {}
        }
    }
    if skipped_elements > 0 {
        diagnostics.push(Diagnostic::new(
            path,
            Warning::SkippedElements {
                count: skipped_elements,
            },
        ));
    }
    if short_faces > 0 {
        diagnostics.push(Diagnostic::new(
            path,
            Warning::ShortFaces { count: short_faces },
        ));
    }
    let mut objects = Vec::new();
    // One remapping table for all groups, reset after each: the work stays linear in the file.
    let mut remap = vec![u32::MAX; vertices.len()];
    for group in groups {
        let origin = MeshOrigin {
            file: Some(file_name.clone()),
            numbers: Vec::new(),
            dropped: Vec::new(),
            layout: FaceLayout::Obj(group.faces),
            materials: group.materials,
        };
        let (own_vertices, own_triangles) = own_vertices(&vertices, &group.triangles, &mut remap);
        let built =
            build_mesh(&own_vertices, &own_triangles, &DMat4::IDENTITY, origin).map_err(|f| {
                InputError::at(
                    path,
                    format!("object \"{}\", {}", group.name, f.place()),
                    f.message(),
                )
            })?;
        if built.degenerate_dropped > 0 {
            diagnostics.push(degenerate_warning(
                path,
                &group.name,
                built.degenerate_dropped,
            ));
        }
        objects.push(LevelObject {
            name: group.name,
            tags: Vec::new(),
            geometry: Geometry::Mesh(built.mesh),
        });
    }
    Ok((objects, diagnostics))
}

/// The lines of a text whatever its line endings: LF, CRLF, or CR alone.
fn lines(text: &str) -> impl Iterator<Item = &str> {
    text.split('\n')
        .flat_map(|l| l.strip_suffix('\r').unwrap_or(l).split('\r'))
}

fn group_index(groups: &mut Vec<Group>, name: String) -> usize {
    groups
        .iter()
        .position(|g| g.name == name)
        .unwrap_or_else(|| {
            groups.push(Group {
                name,
                triangles: Vec::new(),
                faces: Vec::new(),
                materials: Vec::new(),
            });
            groups.len() - 1
        })
}

/// The vertices a group's triangles use (OBJ shares one vertex list among groups), and the triangles
/// renumbered to them. `remap` has one entry per shared vertex, all `u32::MAX`, and is left so.
fn own_vertices(
    shared: &[DVec3],
    triangles: &[[u64; 3]],
    remap: &mut [u32],
) -> (Vec<DVec3>, Vec<[u64; 3]>) {
    let mut vertices = Vec::new();
    let renumbered = triangles
        .iter()
        .map(|t| {
            t.map(|i| {
                let slot = &mut remap[i as usize];
                if *slot == u32::MAX {
                    *slot = vertices.len() as u32;
                    vertices.push(shared[i as usize]);
                }
                u64::from(*slot)
            })
        })
        .collect();
    for t in triangles {
        for &i in t {
            remap[i as usize] = u32::MAX;
        }
    }
    (vertices, renumbered)
}
