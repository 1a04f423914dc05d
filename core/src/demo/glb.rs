//! Writing named, tagged meshes as one binary glTF 2.0 file (`.glb`): a node per object with
//! `extras.tags`, float positions and 32-bit indices. The same objects give the same bytes.

use serde_json::{Value, json};

use crate::level::Mesh;

/// One object to write: its node name, tags, and mesh.
pub struct GlbObject<'a> {
    /// The node name.
    pub name: &'a str,
    /// Tags, written as the node's `extras.tags`.
    pub tags: &'a [&'a str],
    /// The triangles.
    pub mesh: &'a Mesh,
}

/// The bytes of a GLB file holding the objects (glTF 2.0 §4.4: header, JSON chunk, BIN chunk).
pub fn write_glb(objects: &[GlbObject]) -> Vec<u8> {
    let mut bin: Vec<u8> = Vec::new();
    let (mut nodes, mut meshes, mut accessors, mut views) =
        (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    for (k, object) in objects.iter().enumerate() {
        let positions: Vec<[f32; 3]> = object
            .mesh
            .vertices
            .iter()
            .map(|v| v.as_vec3().to_array())
            .collect();
        let (mut lo, mut hi) = ([f32::MAX; 3], [f32::MIN; 3]);
        for p in &positions {
            for a in 0..3 {
                lo[a] = lo[a].min(p[a]);
                hi[a] = hi[a].max(p[a]);
            }
        }
        let position_offset = bin.len();
        bin.extend(positions.iter().flatten().flat_map(|f| f.to_le_bytes()));
        let index_offset = bin.len();
        bin.extend(
            object
                .mesh
                .triangles
                .iter()
                .flatten()
                .flat_map(|i| i.to_le_bytes()),
        );
        views.push(json!({"buffer": 0, "byteOffset": position_offset, "byteLength": index_offset - position_offset, "target": 34962}));
        views.push(json!({"buffer": 0, "byteOffset": index_offset, "byteLength": bin.len() - index_offset, "target": 34963}));
        accessors.push(json!({"bufferView": 2 * k, "componentType": 5126, "count": positions.len(), "type": "VEC3", "min": lo, "max": hi}));
        accessors.push(json!({"bufferView": 2 * k + 1, "componentType": 5125, "count": object.mesh.triangles.len() * 3, "type": "SCALAR"}));
        meshes.push(json!({"name": object.name, "primitives": [{"attributes": {"POSITION": 2 * k}, "indices": 2 * k + 1}]}));
        let mut node = json!({"name": object.name, "mesh": k});
        if !object.tags.is_empty() {
            node["extras"] = json!({"tags": object.tags});
        }
        nodes.push(node);
    }
    let document: Value = json!({
        "asset": {"version": "2.0", "generator": "plumbline demo generator"},
        "scene": 0,
        "scenes": [{"nodes": (0..objects.len()).collect::<Vec<_>>()}],
        "nodes": nodes,
        "meshes": meshes,
        "accessors": accessors,
        "bufferViews": views,
        "buffers": [{"byteLength": bin.len()}],
    });
    pack_glb(
        &serde_json::to_vec(&document).expect("the document serialises"),
        &bin,
    )
}

/// A GLB container (glTF 2.0 §4.4): the 12-byte header, the JSON chunk padded with spaces and the
/// BIN chunk padded with zeros, each to a multiple of 4 bytes.
pub fn pack_glb(json: &[u8], bin: &[u8]) -> Vec<u8> {
    let pad = |len: usize| (4 - len % 4) % 4;
    let (json_len, bin_len) = (json.len() + pad(json.len()), bin.len() + pad(bin.len()));
    let total = 12 + 8 + json_len + 8 + bin_len;
    let mut out = Vec::with_capacity(total);
    out.extend(b"glTF");
    out.extend(2u32.to_le_bytes());
    out.extend((total as u32).to_le_bytes());
    out.extend((json_len as u32).to_le_bytes());
    out.extend(b"JSON");
    out.extend(json);
    out.extend(std::iter::repeat_n(b' ', pad(json.len())));
    out.extend((bin_len as u32).to_le_bytes());
    out.extend(b"BIN\0");
    out.extend(bin);
    out.extend(std::iter::repeat_n(0u8, pad(bin.len())));
    out
}
