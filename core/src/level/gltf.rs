//! glTF 2.0 loading (`.gltf` with external or embedded buffers, `.glb`): one object per mesh instance
//! of the default scene, with the node hierarchy's transforms composed.

use std::collections::HashMap;
use std::path::{Path, PathBuf};

use base64::Engine;
use glam::{DMat4, DVec3};
use gltf::mesh::Mode;

use super::level_file::degenerate_warning;
use super::mesh::build_mesh;
use super::model::{Geometry, LevelObject};
use crate::error::{Diagnostic, InputError, Warning};

/// Loads every mesh instance of the default (or first) scene as an object in file coordinates.
pub fn load_gltf(
    path: &Path,
    bytes: &[u8],
    files: &mut Vec<PathBuf>,
) -> Result<(Vec<LevelObject>, Vec<Diagnostic>), InputError> {
    let unchecked =
        gltf::Gltf::from_slice_without_validation(bytes).map_err(|e| gltf_error(path, e))?;
    check_attribute_accessors(path, unchecked.document.as_json())?;
    drop(unchecked);
    let gltf = gltf::Gltf::from_slice(bytes).map_err(|e| gltf_error(path, e))?;
    let buffers = load_buffers(path, &gltf, files)?;
    let mut loader = Loader {
        path,
        buffers: &buffers,
        objects: Vec::new(),
        diagnostics: Vec::new(),
        seen: HashMap::new(),
    };
    let scene = gltf.default_scene().or_else(|| gltf.scenes().next());
    if let Some(scene) = scene {
        for node in scene.nodes() {
            loader.visit(&node, &DMat4::IDENTITY, 0)?;
        }
    }
    Ok((loader.objects, loader.diagnostics))
}

/// Checks that every primitive attribute names an accessor that exists: gltf-json 1.4's own validation
/// indexes the accessor list with it unchecked (a malformed file would panic there).
fn check_attribute_accessors(path: &Path, root: &gltf::json::Root) -> Result<(), InputError> {
    for (m, mesh) in root.meshes.iter().enumerate() {
        for (p, primitive) in mesh.primitives.iter().enumerate() {
            let missing = primitive
                .attributes
                .values()
                .any(|a| a.value() >= root.accessors.len())
                || primitive
                    .indices
                    .as_ref()
                    .is_some_and(|a| a.value() >= root.accessors.len());
            if missing {
                return Err(InputError::at(
                    path,
                    format!("meshes[{m}].primitives[{p}]"),
                    "refers to an accessor that does not exist",
                ));
            }
        }
    }
    Ok(())
}

/// Nodes nested deeper than this are refused (a cycle in a broken file would otherwise recurse forever).
const MAX_NODE_DEPTH: usize = 256;

struct Loader<'a> {
    path: &'a Path,
    buffers: &'a [Vec<u8>],
    objects: Vec<LevelObject>,
    diagnostics: Vec<Diagnostic>,
    seen: HashMap<String, usize>,
}

impl Loader<'_> {
    fn visit(&mut self, node: &gltf::Node, parent: &DMat4, depth: usize) -> Result<(), InputError> {
        let place = || format!("node {}", node.index());
        if depth > MAX_NODE_DEPTH {
            return Err(InputError::at(
                self.path,
                place(),
                "the node hierarchy is too deep or has a cycle",
            ));
        }
        let local = glam::Mat4::from_cols_array_2d(&node.transform().matrix()).as_dmat4();
        let matrix = *parent * local;
        if let Some(mesh) = node.mesh() {
            self.add_mesh_instance(node, &mesh, &matrix)?;
        }
        for child in node.children() {
            self.visit(&child, &matrix, depth + 1)?;
        }
        Ok(())
    }

    fn add_mesh_instance(
        &mut self,
        node: &gltf::Node,
        mesh: &gltf::Mesh,
        matrix: &DMat4,
    ) -> Result<(), InputError> {
        let name = self.unique_name(
            node.name()
                .map_or_else(|| format!("node#{}", node.index()), str::to_string),
        );
        let place = |what: String| {
            format!(
                "node {} \"{name}\", mesh {}, {what}",
                node.index(),
                mesh.index()
            )
        };
        let mut vertices: Vec<DVec3> = Vec::new();
        let mut triangles: Vec<[u64; 3]> = Vec::new();
        for primitive in mesh.primitives() {
            let pplace = || place(format!("primitive {}", primitive.index()));
            let mode = primitive.mode();
            if !matches!(
                mode,
                Mode::Triangles | Mode::TriangleStrip | Mode::TriangleFan
            ) {
                self.diagnostics.push(Diagnostic::new(
                    self.path,
                    Warning::SkippedPrimitive {
                        part: pplace(),
                        mode: format!("{mode:?}"),
                    },
                ));
                continue;
            }
            let reader = primitive.reader(|b| self.buffers.get(b.index()).map(Vec::as_slice));
            let Some(positions) = reader.read_positions() else {
                return Err(InputError::at(
                    self.path,
                    pplace(),
                    "positions are missing or lie outside their buffer",
                ));
            };
            let base = vertices.len() as u64;
            vertices.extend(positions.map(|p| DVec3::new(p[0] as f64, p[1] as f64, p[2] as f64)));
            let count = vertices.len() as u64 - base;
            let indices: Vec<u64> = match primitive.indices() {
                Some(_) => match reader.read_indices() {
                    Some(ix) => ix.into_u32().map(u64::from).collect(),
                    None => {
                        return Err(InputError::at(
                            self.path,
                            pplace(),
                            "indices lie outside their buffer",
                        ));
                    }
                },
                None => (0..count).collect(),
            };
            let first = triangles.len();
            expand_triangles(mode, &indices, &mut triangles);
            for tri in &mut triangles[first..] {
                *tri = tri.map(|i| i + base);
            }
        }
        let built = build_mesh(&vertices, &triangles, matrix)
            .map_err(|f| InputError::at(self.path, place(f.place()), f.message()))?;
        if built.degenerate_dropped > 0 {
            self.diagnostics.push(degenerate_warning(
                self.path,
                &name,
                built.degenerate_dropped,
            ));
        }
        self.objects.push(LevelObject {
            name,
            tags: node_tags(node),
            geometry: Geometry::Mesh(built.mesh),
        });
        Ok(())
    }

    /// `name`, or `name~2`, `name~3`… when the name was already used.
    fn unique_name(&mut self, name: String) -> String {
        let count = self.seen.entry(name.clone()).or_insert(0);
        *count += 1;
        if *count == 1 {
            name
        } else {
            format!("{name}~{count}")
        }
    }
}

/// Appends the triangles of a primitive, expanding strips and fans as glTF 2.0 §3.7.2.1 defines them.
fn expand_triangles(mode: Mode, indices: &[u64], out: &mut Vec<[u64; 3]>) {
    match mode {
        Mode::Triangles => out.extend(indices.chunks_exact(3).map(|c| [c[0], c[1], c[2]])),
        Mode::TriangleStrip => out.extend(
            (0..indices.len().saturating_sub(2))
                .map(|i| [indices[i], indices[i + 1 + i % 2], indices[i + 2 - i % 2]]),
        ),
        Mode::TriangleFan => out.extend(
            (0..indices.len().saturating_sub(2))
                .map(|i| [indices[i + 1], indices[i + 2], indices[0]]),
        ),
        _ => {}
    }
}

/// Tags from the node's `extras.tags` (an array of strings); anything else in extras is ignored.
fn node_tags(node: &gltf::Node) -> Vec<String> {
    let Some(raw) = node.extras() else {
        return Vec::new();
    };
    let value: serde_json::Value = serde_json::from_str(raw.get()).unwrap_or_default();
    let mut tags: Vec<String> = value
        .get("tags")
        .and_then(|t| t.as_array())
        .map(|a| {
            a.iter()
                .filter_map(|t| t.as_str().map(str::to_string))
                .collect()
        })
        .unwrap_or_default();
    tags.sort();
    tags.dedup();
    tags
}

/// The bytes of every buffer: the GLB binary chunk, a base64 `data:` URI, or a file beside the glTF.
fn load_buffers(
    path: &Path,
    gltf: &gltf::Gltf,
    files: &mut Vec<PathBuf>,
) -> Result<Vec<Vec<u8>>, InputError> {
    let folder = path.parent().unwrap_or(Path::new(""));
    let mut buffers = Vec::new();
    for buffer in gltf.buffers() {
        let place = format!("buffer {}", buffer.index());
        let data = match buffer.source() {
            gltf::buffer::Source::Bin => gltf.blob.clone().ok_or_else(|| {
                InputError::at(
                    path,
                    &place,
                    "the binary chunk this buffer refers to is missing",
                )
            })?,
            gltf::buffer::Source::Uri(uri) => {
                load_uri(folder, uri, files).map_err(|m| InputError::at(path, &place, m))?
            }
        };
        if data.len() < buffer.length() {
            return Err(InputError::at(
                path,
                place,
                format!(
                    "the buffer holds {} bytes but declares {}",
                    data.len(),
                    buffer.length()
                ),
            ));
        }
        buffers.push(data);
    }
    Ok(buffers)
}

fn load_uri(folder: &Path, uri: &str, files: &mut Vec<PathBuf>) -> Result<Vec<u8>, String> {
    if let Some(rest) = uri.strip_prefix("data:") {
        let (_, payload) = rest
            .split_once(";base64,")
            .ok_or("only base64 data URIs are supported")?;
        return base64::engine::general_purpose::STANDARD
            .decode(payload)
            .map_err(|e| format!("bad base64 data: {e}"));
    }
    if uri.contains("://") {
        return Err(format!("buffer URI \"{uri}\" is not a local file"));
    }
    let file = folder.join(percent_decode(uri));
    let bytes = std::fs::read(&file)
        .map_err(|e| format!("cannot read buffer file {}: {e}", file.display()))?;
    files.push(file);
    Ok(bytes)
}

/// Decodes `%XX` escapes in a relative URI.
fn percent_decode(uri: &str) -> String {
    let bytes = uri.as_bytes();
    let mut out = Vec::with_capacity(bytes.len());
    let mut i = 0;
    while i < bytes.len() {
        if bytes[i] == b'%'
            && i + 2 < bytes.len()
            && let Some(v) = std::str::from_utf8(&bytes[i + 1..i + 3])
                .ok()
                .and_then(|h| u8::from_str_radix(h, 16).ok())
        {
            out.push(v);
            i += 3;
            continue;
        }
        out.push(bytes[i]);
        i += 1;
    }
    String::from_utf8_lossy(&out).into_owned()
}

fn gltf_error(path: &Path, err: gltf::Error) -> InputError {
    match err {
        gltf::Error::Deserialize(e) => InputError::json(path, &e),
        gltf::Error::Validation(list) => {
            let (at, what) = &list[0];
            InputError::at(path, at.to_string(), what.to_string())
        }
        other => InputError::file(path, format!("not a readable glTF 2.0 file: {other}")),
    }
}
