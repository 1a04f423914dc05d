//! glTF 2.0 loading (`.gltf` with external or embedded buffers, `.glb`): one object per mesh instance
//! of the default scene, with the node hierarchy's transforms composed.
//!
//! Read with our own small reader of the parts of glTF that collision geometry needs (nodes, meshes,
//! accessors, buffer views, buffers, materials; Khronos, glTF 2.0 Specification, 2021), so that every
//! declared size is checked against the bytes the file really holds before anything is allocated:
//! no accessor, stride, count or node graph can make it read out of bounds, allocate more than the
//! file justifies, or work for long. Unknown fields are ignored, as glTF allows (extensions, extras);
//! extensions the file requires and this reader does not know are refused.

use std::collections::{BTreeMap, HashMap, HashSet};
use std::path::{Path, PathBuf};
use std::sync::Arc;

use base64::Engine;
use glam::{DMat4, DQuat, DVec3};
use serde::Deserialize;

use super::level_file::degenerate_warning;
use super::mesh::build_mesh;
use super::model::{FaceLayout, Geometry, LevelObject, MaterialRun, MeshOrigin};
use crate::error::{Diagnostic, InputError, Warning};
use crate::input::{
    MAX_NAME_CHARS, MAX_TRIANGLES, PathPolicy, check_name, one_line, read_input, resolve_named,
};

/// Accessors with no buffer view hold zeros (glTF 2.0 §3.6.2.3); such an accessor may declare at most
/// this many elements, since the file holds none of them. Ours.
const MAX_ELEMENTS_WITHOUT_DATA: u64 = 1 << 20;

#[derive(Deserialize)]
#[serde(rename_all = "camelCase")]
struct Root {
    asset: Asset,
    #[serde(default)]
    extensions_required: Vec<String>,
    scene: Option<usize>,
    #[serde(default)]
    scenes: Vec<SceneDef>,
    #[serde(default)]
    nodes: Vec<NodeDef>,
    #[serde(default)]
    meshes: Vec<MeshDef>,
    #[serde(default)]
    accessors: Vec<AccessorDef>,
    #[serde(default)]
    buffer_views: Vec<BufferViewDef>,
    #[serde(default)]
    buffers: Vec<BufferDef>,
    #[serde(default)]
    materials: Vec<MaterialDef>,
}

#[derive(Deserialize)]
struct Asset {
    version: String,
}

#[derive(Deserialize)]
struct SceneDef {
    #[serde(default)]
    nodes: Vec<usize>,
}

#[derive(Deserialize)]
struct NodeDef {
    name: Option<String>,
    mesh: Option<usize>,
    #[serde(default)]
    children: Vec<usize>,
    matrix: Option<[f64; 16]>,
    translation: Option<[f64; 3]>,
    rotation: Option<[f64; 4]>,
    scale: Option<[f64; 3]>,
    extras: Option<serde_json::Value>,
}

#[derive(Deserialize)]
struct MeshDef {
    #[serde(default)]
    primitives: Vec<PrimitiveDef>,
}

#[derive(Deserialize)]
struct PrimitiveDef {
    attributes: BTreeMap<String, usize>,
    indices: Option<usize>,
    mode: Option<u32>,
    material: Option<usize>,
}

#[derive(Deserialize)]
#[serde(rename_all = "camelCase")]
struct AccessorDef {
    buffer_view: Option<usize>,
    #[serde(default)]
    byte_offset: u64,
    component_type: u32,
    count: u64,
    #[serde(rename = "type")]
    kind: String,
    sparse: Option<SparseDef>,
}

#[derive(Deserialize)]
struct SparseDef {
    count: u64,
    indices: SparseIndices,
    values: SparseValues,
}

#[derive(Deserialize)]
#[serde(rename_all = "camelCase")]
struct SparseIndices {
    buffer_view: usize,
    #[serde(default)]
    byte_offset: u64,
    component_type: u32,
}

#[derive(Deserialize)]
#[serde(rename_all = "camelCase")]
struct SparseValues {
    buffer_view: usize,
    #[serde(default)]
    byte_offset: u64,
}

#[derive(Deserialize)]
#[serde(rename_all = "camelCase")]
struct BufferViewDef {
    buffer: usize,
    #[serde(default)]
    byte_offset: u64,
    byte_length: u64,
    byte_stride: Option<u64>,
}

#[derive(Deserialize)]
#[serde(rename_all = "camelCase")]
struct BufferDef {
    uri: Option<String>,
    byte_length: u64,
}

#[derive(Deserialize)]
struct MaterialDef {
    name: Option<String>,
}

/// glTF component types (§3.6.2.2).
const FLOAT: u32 = 5126;
const UNSIGNED_BYTE: u32 = 5121;
const UNSIGNED_SHORT: u32 = 5123;
const UNSIGNED_INT: u32 = 5125;

/// Loads every mesh instance of the default (or first) scene as an object in file coordinates,
/// adding the buffer files read to `files`.
pub fn load_gltf(
    path: &Path,
    bytes: &[u8],
    policy: PathPolicy,
    files: &mut Vec<PathBuf>,
) -> Result<(Vec<LevelObject>, Vec<Diagnostic>), InputError> {
    let (json, blob) = split_container(path, bytes)?;
    let root: Root = serde_json::from_slice(json).map_err(|e| InputError::json(path, &e))?;
    if !root.asset.version.starts_with("2.") {
        return Err(InputError::at(
            path,
            "field \"asset.version\"",
            format!(
                "glTF version \"{}\" is not read (only 2.x)",
                one_line(&root.asset.version)
            ),
        ));
    }
    if let Some(unknown) = root.extensions_required.first() {
        return Err(InputError::at(
            path,
            "field \"extensionsRequired\"",
            format!(
                "the file requires the extension \"{}\", which this program does not read",
                one_line(unknown)
            ),
        ));
    }
    let buffers = load_buffers(path, &root, blob, policy, files)?;
    let mut loader = Loader {
        path,
        root: &root,
        buffers: &buffers,
        file: path
            .file_name()
            .map_or("gltf".into(), |n| n.to_string_lossy().into()),
        objects: Vec::new(),
        diagnostics: Vec::new(),
        used: HashSet::new(),
        next_suffix: HashMap::new(),
        triangles: 0,
        vertices: 0,
    };
    let scene = match root.scene {
        Some(s) => Some(root.scenes.get(s).ok_or_else(|| {
            InputError::at(path, "field \"scene\"", format!("scene {s} does not exist"))
        })?),
        None => root.scenes.first(),
    };
    if let Some(scene) = scene {
        loader.visit_scene(&scene.nodes)?;
    }
    Ok((loader.objects, loader.diagnostics))
}

/// The JSON text and the binary chunk of a GLB container (glTF 2.0 §4.4), or the whole file as JSON.
fn split_container<'a>(
    path: &Path,
    bytes: &'a [u8],
) -> Result<(&'a [u8], Option<&'a [u8]>), InputError> {
    if !bytes.starts_with(b"glTF") {
        return Ok((bytes, None));
    }
    let bad = |m: &str| InputError::file(path, format!("not a readable GLB file: {m}"));
    let word = |at: usize| -> Option<u32> {
        let b = bytes.get(at..at + 4)?;
        Some(u32::from_le_bytes([b[0], b[1], b[2], b[3]]))
    };
    if word(4) != Some(2) {
        return Err(bad("only GLB version 2 is read"));
    }
    let total = (word(8).ok_or_else(|| bad("the header is cut short"))? as usize).min(bytes.len());
    let mut at = 12;
    let mut json = None;
    let mut blob = None;
    while at + 8 <= total {
        let length = word(at).unwrap_or(0) as usize;
        let kind = word(at + 4).unwrap_or(0);
        let start = at + 8;
        let end = start
            .checked_add(length)
            .filter(|e| *e <= total)
            .ok_or_else(|| bad("a chunk runs past the end of the file"))?;
        match kind {
            0x4E4F_534A if json.is_none() => json = Some(&bytes[start..end]),
            0x004E_4942 if blob.is_none() => blob = Some(&bytes[start..end]),
            _ => {}
        }
        at = end + (4 - end % 4) % 4;
    }
    Ok((json.ok_or_else(|| bad("it has no JSON chunk"))?, blob))
}

/// The bytes of every buffer: the GLB binary chunk, a base64 `data:` URI, or a file beside the glTF
/// (under the path policy).
fn load_buffers(
    path: &Path,
    root: &Root,
    blob: Option<&[u8]>,
    policy: PathPolicy,
    files: &mut Vec<PathBuf>,
) -> Result<Vec<Vec<u8>>, InputError> {
    let mut buffers = Vec::with_capacity(root.buffers.len());
    for (b, buffer) in root.buffers.iter().enumerate() {
        let place = format!("buffers[{b}]");
        let data = match &buffer.uri {
            None => blob
                .ok_or_else(|| {
                    InputError::at(
                        path,
                        &place,
                        "the binary chunk this buffer refers to is missing",
                    )
                })?
                .to_vec(),
            Some(uri) => {
                load_uri(path, uri, policy, files).map_err(|m| InputError::at(path, &place, m))?
            }
        };
        if (data.len() as u64) < buffer.byte_length {
            return Err(InputError::at(
                path,
                place,
                format!(
                    "the buffer holds {} bytes but declares {}",
                    data.len(),
                    buffer.byte_length
                ),
            ));
        }
        buffers.push(data);
    }
    Ok(buffers)
}

fn load_uri(
    gltf_path: &Path,
    uri: &str,
    policy: PathPolicy,
    files: &mut Vec<PathBuf>,
) -> Result<Vec<u8>, String> {
    if let Some(rest) = uri.strip_prefix("data:") {
        let (_, payload) = rest
            .split_once(";base64,")
            .ok_or("only base64 data URIs are supported")?;
        return base64::engine::general_purpose::STANDARD
            .decode(payload)
            .map_err(|e| format!("bad base64 data: {e}"));
    }
    if uri.contains("://") {
        return Err(format!(
            "buffer URI \"{}\" is not a local file",
            one_line(uri)
        ));
    }
    let file = resolve_named(gltf_path, &percent_decode(uri), policy)?;
    let bytes = read_input(&file).map_err(|e| format!("buffer file {e}"))?;
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

struct Loader<'a> {
    path: &'a Path,
    root: &'a Root,
    buffers: &'a [Vec<u8>],
    file: Arc<str>,
    objects: Vec<LevelObject>,
    diagnostics: Vec<Diagnostic>,
    /// Object names given so far.
    used: HashSet<String>,
    /// For a name given more than once, the next `~n` to try.
    next_suffix: HashMap<String, usize>,
    /// Triangles and vertices so far, against [`MAX_TRIANGLES`] (a mesh instanced by many nodes
    /// counts each time).
    triangles: usize,
    vertices: usize,
}

impl Loader<'_> {
    /// Visits the scene's node trees. glTF nodes form disjoint strict trees (§3.5.3): a node reached a
    /// second time is an error, so the work is bounded by the number of nodes.
    fn visit_scene(&mut self, roots: &[usize]) -> Result<(), InputError> {
        let mut visited = vec![false; self.root.nodes.len()];
        let mut stack: Vec<(usize, DMat4)> =
            roots.iter().rev().map(|&n| (n, DMat4::IDENTITY)).collect();
        while let Some((index, parent)) = stack.pop() {
            let place = || format!("nodes[{index}]");
            let node = self
                .root
                .nodes
                .get(index)
                .ok_or_else(|| InputError::at(self.path, place(), "the node does not exist"))?;
            if std::mem::replace(&mut visited[index], true) {
                return Err(InputError::at(
                    self.path,
                    place(),
                    "the node is reached twice (glTF nodes form trees: one parent each, no cycles)",
                ));
            }
            let matrix =
                parent * node_matrix(node).map_err(|m| InputError::at(self.path, place(), m))?;
            if let Some(mesh) = node.mesh {
                self.add_mesh_instance(index, node, mesh, &matrix)?;
            }
            stack.extend(node.children.iter().rev().map(|&c| (c, matrix)));
        }
        Ok(())
    }

    fn add_mesh_instance(
        &mut self,
        node_index: usize,
        node: &NodeDef,
        mesh_index: usize,
        matrix: &DMat4,
    ) -> Result<(), InputError> {
        let written = node
            .name
            .clone()
            .unwrap_or_else(|| format!("node#{node_index}"));
        check_name("the node's name", &written)
            .map_err(|m| InputError::at(self.path, format!("nodes[{node_index}]"), m))?;
        let name = self.unique_name(written);
        let place = |what: String| {
            format!(
                "node {node_index} \"{}\", mesh {mesh_index}{what}",
                one_line(&name)
            )
        };
        let mesh = self.root.meshes.get(mesh_index).ok_or_else(|| {
            InputError::at(self.path, place(String::new()), "the mesh does not exist")
        })?;
        let mut vertices: Vec<DVec3> = Vec::new();
        let mut triangles: Vec<[u64; 3]> = Vec::new();
        let mut primitives = Vec::new();
        let mut materials: Vec<MaterialRun> = Vec::new();
        for (p, primitive) in mesh.primitives.iter().enumerate() {
            let pplace = || place(format!(", primitive {p}"));
            let fail = |m: String| InputError::at(self.path, pplace(), m);
            let mode = primitive.mode.unwrap_or(4);
            match mode {
                4..=6 => {}
                0..=3 => {
                    self.diagnostics.push(Diagnostic::new(
                        self.path,
                        Warning::SkippedPrimitive {
                            part: pplace(),
                            mode: ["Points", "Lines", "LineLoop", "LineStrip"][mode as usize]
                                .to_string(),
                        },
                    ));
                    continue;
                }
                other => {
                    return Err(fail(format!(
                        "primitive mode {other} is not defined by glTF"
                    )));
                }
            }
            let position = *primitive
                .attributes
                .get("POSITION")
                .ok_or_else(|| fail("the primitive has no POSITION attribute".into()))?;
            let positions = self
                .read_positions(position)
                .map_err(|m| fail(format!("POSITION: {m}")))?;
            let base = vertices.len() as u64;
            let count = positions.len() as u64;
            self.vertices += positions.len();
            if self.vertices > 3 * MAX_TRIANGLES {
                return Err(fail(format!(
                    "the file holds more than {} vertices",
                    3 * MAX_TRIANGLES
                )));
            }
            vertices.extend(positions);
            let indices: Vec<u64> = match primitive.indices {
                Some(a) => self
                    .read_indices(a)
                    .map_err(|m| fail(format!("indices: {m}")))?,
                None => (0..count).collect(),
            };
            let first = triangles.len();
            expand_triangles(mode, &indices, &mut triangles);
            let added = triangles.len() - first;
            self.triangles += added;
            if self.triangles > MAX_TRIANGLES {
                return Err(fail(format!(
                    "the file holds more than {MAX_TRIANGLES} triangles"
                )));
            }
            for tri in &mut triangles[first..] {
                *tri = tri.map(|i| i + base);
            }
            if added > 0 {
                primitives.push((first as u32, p as u32));
                let material = primitive.material.map(|m| self.material_name(m));
                if materials.last().map(|m| &m.name) != material.as_ref()
                    && let Some(name) = material
                {
                    materials.push(MaterialRun {
                        first: first as u32,
                        name,
                        tags: Vec::new(),
                    });
                }
            }
        }
        let origin = MeshOrigin {
            file: Some(self.file.clone()),
            numbers: Vec::new(),
            dropped: Vec::new(),
            layout: FaceLayout::Gltf {
                mesh: mesh_index as u32,
                primitives,
            },
            materials,
        };
        let built = build_mesh(&vertices, &triangles, matrix, origin).map_err(|f| {
            InputError::at(self.path, place(format!(", {}", f.place())), f.message())
        })?;
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

    /// A material's name, or `material#i` when it has none.
    fn material_name(&self, index: usize) -> Arc<str> {
        match self
            .root
            .materials
            .get(index)
            .and_then(|m| m.name.as_deref())
        {
            Some(name) if !name.is_empty() && name.chars().count() <= MAX_NAME_CHARS => name.into(),
            _ => format!("material#{index}").into(),
        }
    }

    /// `name`, or `name~2`, `name~3`… — the first that no earlier object has.
    fn unique_name(&mut self, name: String) -> String {
        if self.used.insert(name.clone()) {
            return name;
        }
        let mut n = self.next_suffix.get(&name).copied().unwrap_or(2);
        loop {
            let candidate = format!("{name}~{n}");
            n += 1;
            if self.used.insert(candidate.clone()) {
                self.next_suffix.insert(name, n);
                return candidate;
            }
        }
    }

    /// The positions of accessor `index`: 32-bit float VEC3 (§3.7.2.1), each finite.
    fn read_positions(&self, index: usize) -> Result<Vec<DVec3>, String> {
        let accessor = self.accessor(index)?;
        if accessor.kind != "VEC3" || accessor.component_type != FLOAT {
            return Err(format!(
                "accessor {index} must hold 32-bit float VEC3 positions (KHR_mesh_quantization \
                 is not read)"
            ));
        }
        let values = self.read_elements(accessor, 3, 4)?;
        Ok(values
            .chunks_exact(3)
            .map(|c| DVec3::new(c[0], c[1], c[2]))
            .collect())
    }

    /// The indices of accessor `index`: unsigned 8-, 16- or 32-bit scalars (§3.7.2.1).
    fn read_indices(&self, index: usize) -> Result<Vec<u64>, String> {
        let accessor = self.accessor(index)?;
        let size = match accessor.component_type {
            UNSIGNED_BYTE => 1,
            UNSIGNED_SHORT => 2,
            UNSIGNED_INT => 4,
            _ => {
                return Err(format!(
                    "accessor {index} must hold unsigned integer indices, not component type {}",
                    accessor.component_type
                ));
            }
        };
        if accessor.kind != "SCALAR" {
            return Err(format!("accessor {index} must hold SCALAR indices"));
        }
        Ok(self
            .read_elements(accessor, 1, size)?
            .into_iter()
            .map(|v| v as u64)
            .collect())
    }

    fn accessor(&self, index: usize) -> Result<&AccessorDef, String> {
        self.root
            .accessors
            .get(index)
            .ok_or_else(|| format!("accessor {index} does not exist"))
    }

    /// Every component of an accessor's elements, `components` per element of `size` bytes each
    /// (4: float or u32; 2: u16; 1: u8), with sparse substitution (§3.6.2.3). Every size is checked
    /// against the bytes present before anything is allocated.
    fn read_elements(
        &self,
        accessor: &AccessorDef,
        components: u64,
        size: u64,
    ) -> Result<Vec<f64>, String> {
        let count = accessor.count;
        if count == 0 {
            return Err("the accessor has no elements".into());
        }
        let element = components * size;
        let mut values = match accessor.buffer_view {
            Some(view) => {
                let bytes = self.view_bytes(view, accessor.byte_offset, count, element)?;
                decode(
                    bytes,
                    count,
                    components,
                    size,
                    float_component(size, accessor),
                )
            }
            None => {
                let limit =
                    MAX_ELEMENTS_WITHOUT_DATA + accessor.sparse.as_ref().map_or(0, |s| s.count);
                if count > limit {
                    return Err(format!(
                        "the accessor declares {count} elements but holds no data (at most \
                         {limit} are read so)"
                    ));
                }
                vec![0.0; (count * components) as usize]
            }
        };
        if let Some(sparse) = &accessor.sparse {
            if sparse.count == 0 || sparse.count > count {
                return Err(format!(
                    "the sparse part has {} elements for an accessor of {count}",
                    sparse.count
                ));
            }
            let index_size = match sparse.indices.component_type {
                UNSIGNED_BYTE => 1,
                UNSIGNED_SHORT => 2,
                UNSIGNED_INT => 4,
                other => return Err(format!("sparse indices of component type {other}")),
            };
            let at = self.view_bytes(
                sparse.indices.buffer_view,
                sparse.indices.byte_offset,
                sparse.count,
                index_size,
            )?;
            let at = decode(at, sparse.count, 1, index_size, false);
            let new = self.view_bytes(
                sparse.values.buffer_view,
                sparse.values.byte_offset,
                sparse.count,
                element,
            )?;
            let new = decode(
                new,
                sparse.count,
                components,
                size,
                float_component(size, accessor),
            );
            for (k, &i) in at.iter().enumerate() {
                let i = i as u64;
                if i >= count {
                    return Err(format!("a sparse index {i} is past the accessor's {count}"));
                }
                let (to, from) = ((i * components) as usize, k * components as usize);
                values[to..to + components as usize]
                    .copy_from_slice(&new[from..from + components as usize]);
            }
        }
        if values.iter().any(|v| !v.is_finite()) {
            return Err("a value is not a finite number".into());
        }
        Ok(values)
    }

    /// The bytes of `count` elements of `element` bytes in buffer view `view` from `offset`, with the
    /// view's stride, as one slice starting at the first element (checked to lie inside the view and
    /// its buffer). Returns the slice and leaves striding to [`decode`] through the view's stride.
    fn view_bytes(
        &self,
        view: usize,
        offset: u64,
        count: u64,
        element: u64,
    ) -> Result<Strided<'_>, String> {
        let def = self
            .root
            .buffer_views
            .get(view)
            .ok_or_else(|| format!("buffer view {view} does not exist"))?;
        let buffer = self
            .buffers
            .get(def.buffer)
            .ok_or_else(|| format!("buffer {} does not exist", def.buffer))?;
        let stride = def.byte_stride.unwrap_or(element);
        if stride < element {
            return Err(format!(
                "buffer view {view}'s stride of {stride} bytes is shorter than an element of \
                 {element}"
            ));
        }
        let outside = || {
            format!(
                "{count} elements of {element} bytes from byte {offset} do not fit in buffer view \
                 {view} ({} bytes)",
                def.byte_length
            )
        };
        let span = (count - 1)
            .checked_mul(stride)
            .and_then(|s| s.checked_add(element))
            .and_then(|s| s.checked_add(offset))
            .ok_or_else(outside)?;
        if span > def.byte_length {
            return Err(outside());
        }
        let start = def.byte_offset.checked_add(offset).ok_or_else(outside)?;
        let end = def
            .byte_offset
            .checked_add(def.byte_length)
            .filter(|e| *e <= buffer.len() as u64)
            .ok_or_else(|| {
                format!(
                    "buffer view {view} runs past the end of buffer {} ({} bytes)",
                    def.buffer,
                    buffer.len()
                )
            })?;
        Ok(Strided {
            bytes: &buffer[start as usize..end as usize],
            stride: stride as usize,
        })
    }
}

/// Elements laid out `stride` bytes apart from the start of `bytes`.
struct Strided<'a> {
    bytes: &'a [u8],
    stride: usize,
}

/// True when components of `size` bytes are floats (positions), false for unsigned integers.
fn float_component(size: u64, accessor: &AccessorDef) -> bool {
    size == 4 && accessor.component_type == FLOAT
}

/// Decodes `count` elements of `components` little-endian components of `size` bytes each.
fn decode(data: Strided, count: u64, components: u64, size: u64, float: bool) -> Vec<f64> {
    let (components, size) = (components as usize, size as usize);
    let mut out = Vec::with_capacity(count as usize * components);
    for e in 0..count as usize {
        let at = e * data.stride;
        for c in 0..components {
            let b = &data.bytes[at + c * size..at + (c + 1) * size];
            out.push(match (size, float) {
                (4, true) => f64::from(f32::from_le_bytes([b[0], b[1], b[2], b[3]])),
                (4, false) => f64::from(u32::from_le_bytes([b[0], b[1], b[2], b[3]])),
                (2, _) => f64::from(u16::from_le_bytes([b[0], b[1]])),
                _ => f64::from(b[0]),
            });
        }
    }
    out
}

/// A node's local matrix: its `matrix`, or its translation, rotation and scale (§3.5.2).
fn node_matrix(node: &NodeDef) -> Result<DMat4, String> {
    let matrix = match node.matrix {
        Some(m) => DMat4::from_cols_array(&m),
        None => {
            let t = DVec3::from_array(node.translation.unwrap_or([0.0; 3]));
            let r = DQuat::from_array(node.rotation.unwrap_or([0.0, 0.0, 0.0, 1.0]));
            let s = DVec3::from_array(node.scale.unwrap_or([1.0; 3]));
            if !r.is_finite() || r.length() < 1e-6 {
                return Err("the rotation is not a quaternion".into());
            }
            DMat4::from_scale_rotation_translation(s, r.normalize(), t)
        }
    };
    if matrix.is_finite() {
        Ok(matrix)
    } else {
        Err("the node's transform is not finite".into())
    }
}

/// Appends the triangles of a primitive, expanding strips and fans as glTF 2.0 §3.7.2.1 defines them.
fn expand_triangles(mode: u32, indices: &[u64], out: &mut Vec<[u64; 3]>) {
    match mode {
        4 => out.extend(indices.chunks_exact(3).map(|c| [c[0], c[1], c[2]])),
        5 => out.extend(
            (0..indices.len().saturating_sub(2))
                .map(|i| [indices[i], indices[i + 1 + i % 2], indices[i + 2 - i % 2]]),
        ),
        6 => out.extend(
            (0..indices.len().saturating_sub(2))
                .map(|i| [indices[i + 1], indices[i + 2], indices[0]]),
        ),
        _ => {}
    }
}

/// Tags from the node's `extras.tags` (an array of strings), and the volume tag when
/// `extras.volume` is `true`; anything else in extras is ignored.
fn node_tags(node: &NodeDef) -> Vec<String> {
    let extras = node.extras.as_ref();
    let volume = extras.and_then(|e| e.get("volume")) == Some(&serde_json::Value::Bool(true));
    let mut tags: Vec<String> = extras
        .and_then(|e| e.get("tags"))
        .and_then(|t| t.as_array())
        .map(|a| {
            a.iter()
                .filter_map(|t| t.as_str())
                .filter(|t| t.chars().count() <= MAX_NAME_CHARS)
                .map(str::to_string)
                .collect()
        })
        .unwrap_or_default();
    if volume {
        tags.push(super::VOLUME_TAG.to_string());
    }
    tags.sort();
    tags.dedup();
    tags
}
