//! Level loading: glTF 2.0 (embedded, external and binary buffers; node hierarchy; strips and fans;
//! mirrored transforms; extras tags), OBJ (groups, negative indices, polygons) and the level file.

use crate::common;

use std::path::{Path, PathBuf};

use base64::Engine;
use glam::DVec3;
use plumbline_core::input::PathPolicy;
use plumbline_core::level::{Geometry, Level, LoadedLevel, Primitive, level_digest, load_level};
use plumbline_core::query::World;

fn write(dir: &Path, name: &str, bytes: &[u8]) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, bytes).unwrap();
    path
}

fn mesh(level: &Level, name: &str) -> plumbline_core::level::Mesh {
    let object = level
        .objects
        .iter()
        .find(|o| o.name == name)
        .unwrap_or_else(|| panic!("no object {name}"));
    match &object.geometry {
        Geometry::Mesh(m) => m.clone(),
        other => panic!("{name} is not a mesh: {other:?}"),
    }
}

/// Positions of a unit right triangle and a square, and indices, as little-endian bytes.
fn buffer() -> Vec<u8> {
    let positions: [[f32; 3]; 7] = [
        [0.0, 0.0, 0.0],
        [1.0, 0.0, 0.0],
        [0.0, 1.0, 0.0], // triangle
        [0.0, 0.0, 0.0],
        [0.0, 0.0, 1.0],
        [1.0, 0.0, 0.0],
        [1.0, 0.0, 1.0], // strip of two (a square in XZ)
    ];
    let mut bytes: Vec<u8> = positions
        .iter()
        .flatten()
        .flat_map(|f| f.to_le_bytes())
        .collect();
    for i in [0u16, 1, 2, 0] {
        bytes.extend(i.to_le_bytes()); // indices (3 used, 1 of padding)
    }
    bytes
}

/// glTF JSON with one buffer of `buffer()`; `uri` is the buffer's URI or None for the GLB chunk.
fn gltf_json(uri: Option<&str>, extra_root: &str) -> String {
    let length = buffer().len();
    let uri = uri.map_or(String::new(), |u| format!(r#""uri": "{u}", "#));
    format!(
        r#"{{
  "asset": {{"version": "2.0"}}, {extra_root}
  "scene": 0,
  "scenes": [{{"nodes": [0, 3]}}],
  "nodes": [
    {{"name": "shed", "translation": [10, 0, 0], "children": [1, 2], "extras": {{"tags": ["building", "wood"]}}}},
    {{"name": "roof", "mesh": 0, "scale": [-1, 1, 1]}},
    {{"mesh": 1, "translation": [0, 5, 0]}},
    {{"name": "roof", "mesh": 2}}
  ],
  "meshes": [
    {{"primitives": [{{"attributes": {{"POSITION": 0}}, "indices": 2}}]}},
    {{"primitives": [{{"attributes": {{"POSITION": 1}}, "mode": 5}}, {{"attributes": {{"POSITION": 1}}, "mode": 0}}]}},
    {{"primitives": [{{"attributes": {{"POSITION": 1}}, "mode": 6}}]}}
  ],
  "accessors": [
    {{"bufferView": 0, "componentType": 5126, "count": 3, "type": "VEC3", "min": [0,0,0], "max": [1,1,0]}},
    {{"bufferView": 0, "byteOffset": 36, "componentType": 5126, "count": 4, "type": "VEC3", "min": [0,0,0], "max": [1,0,1]}},
    {{"bufferView": 1, "componentType": 5123, "count": 3, "type": "SCALAR"}}
  ],
  "bufferViews": [
    {{"buffer": 0, "byteOffset": 0, "byteLength": 84}},
    {{"buffer": 0, "byteOffset": 84, "byteLength": 6}}
  ],
  "buffers": [{{{uri}"byteLength": {length}}}]
}}"#
    )
}

/// A GLB container of the JSON and the binary buffer (the library's packer, glTF 2.0 §4.4).
fn glb(json: &str, bin: &[u8]) -> Vec<u8> {
    plumbline_core::demo::pack_glb(json.as_bytes(), bin)
}

fn check_gltf_level(level: &Level) {
    let names: Vec<&str> = level.objects.iter().map(|o| o.name.as_str()).collect();
    assert_eq!(names, ["roof", "node#2", "roof~2"]);
    // Tags are on the "shed" node only; its children do not inherit them (glTF extras are per node).
    assert!(level.objects.iter().all(|o| o.tags.is_empty()));
    // roof: mirrored by scale -1 on X under a +10 X parent; winding flipped so the normal stays +Z.
    let roof = mesh(level, "roof");
    assert_eq!(roof.vertices[1], DVec3::new(9.0, 0.0, 0.0));
    let [a, b, c] = roof.triangles[0].map(|i| roof.vertices[i as usize]);
    assert!(
        (b - a)
            .cross(c - a)
            .normalize()
            .abs_diff_eq(DVec3::Z, 1e-12),
        "winding kept facing +Z"
    );
    // node#2: a strip of 4 vertices = 2 triangles (the points primitive is skipped), both facing +Y
    // as glTF 2.0 §3.7.2.1 orders strip triangles.
    let strip = mesh(level, "node#2");
    assert_eq!(strip.triangles.len(), 2);
    for t in &strip.triangles {
        let [a, b, c] = t.map(|i| strip.vertices[i as usize]);
        assert!(
            (b - a)
                .cross(c - a)
                .normalize()
                .abs_diff_eq(DVec3::Y, 1e-12)
        );
        assert_eq!(a.y, 5.0);
    }
    // roof~2: a fan of 4 vertices = 2 triangles.
    assert_eq!(mesh(level, "roof~2").triangles.len(), 2);
}

#[test]
fn gltf_with_embedded_buffer() {
    let dir = tempfile::tempdir().unwrap();
    let uri = format!(
        "data:application/octet-stream;base64,{}",
        base64::engine::general_purpose::STANDARD.encode(buffer())
    );
    let path = write(
        dir.path(),
        "yard.gltf",
        gltf_json(Some(&uri), "").as_bytes(),
    );
    let LoadedLevel {
        level,
        diagnostics: warnings,
        ..
    } = load_level(&path, PathPolicy::default()).unwrap();
    check_gltf_level(&level);
    assert_eq!(warnings.len(), 1, "{warnings:?}");
    assert!(
        warnings[0].to_string().contains("Points primitive skipped"),
        "{}",
        warnings[0]
    );
}

#[test]
fn gltf_with_external_buffer_and_glb() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "yard data.bin", &buffer());
    let path = write(
        dir.path(),
        "yard.gltf",
        gltf_json(Some("yard%20data.bin"), "").as_bytes(),
    );
    check_gltf_level(&load_level(&path, PathPolicy::default()).unwrap().level);
    let glb_path = write(
        dir.path(),
        "yard.glb",
        &glb(&gltf_json(None, ""), &buffer()),
    );
    let LoadedLevel { level, .. } = load_level(&glb_path, PathPolicy::default()).unwrap();
    check_gltf_level(&level);
    assert_eq!(
        level_digest(&level),
        level_digest(&load_level(&path, PathPolicy::default()).unwrap().level)
    );
}

#[test]
fn gltf_extras_tags_reach_objects() {
    let dir = tempfile::tempdir().unwrap();
    let json = gltf_json(None, "").replace(
        r#"{"name": "roof", "mesh": 2}"#,
        r#"{"name": "roof", "mesh": 2, "extras": {"tags": ["glass", "glass", "prop"]}}"#,
    );
    let path = write(dir.path(), "t.glb", &glb(&json, &buffer()));
    let LoadedLevel { level, .. } = load_level(&path, PathPolicy::default()).unwrap();
    assert_eq!(level.objects[2].tags, ["glass", "prop"]);
}

#[test]
fn volumes_are_marked_by_gltf_extras_and_by_the_level_files_field() {
    let dir = tempfile::tempdir().unwrap();
    let json = gltf_json(None, "").replace(
        r#"{"name": "roof", "mesh": 2}"#,
        r#"{"name": "roof", "mesh": 2, "extras": {"volume": true, "tags": ["water"]}}"#,
    );
    let path = write(dir.path(), "t.glb", &glb(&json, &buffer()));
    let LoadedLevel { level, .. } = load_level(&path, PathPolicy::default()).unwrap();
    assert_eq!(level.objects[2].tags, ["volume", "water"]);
    let text = r#"{"plumbline": "level", "version": 1, "objects": [
        {"name": "zone", "volume": true, "shape": {"type": "box", "half_extents": [1, 1, 1]}},
        {"name": "crate", "shape": {"type": "box", "half_extents": [1, 1, 1]}}]}"#;
    let path = write(dir.path(), "t.level.json", text.as_bytes());
    let LoadedLevel { level, .. } = load_level(&path, PathPolicy::default()).unwrap();
    assert_eq!(level.objects[0].tags, ["volume"]);
    assert!(level.objects[1].tags.is_empty());
    let world = World::new(&level).unwrap();
    assert!(world.is_volume(0) && !world.is_volume(1));
}

#[test]
fn obj_groups_negative_indices_and_polygons() {
    let dir = tempfile::tempdir().unwrap();
    let text = "# a crate and a ramp\nv 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\no crate\nf 1 2 3 4\ng ramp\nv 0 0 1\nv 1 0 1\nv 1 1 1\nf -3/1 -2/2/2 -1//3\nl 1 2\ng crate\nf 1 3 4\n";
    let path = write(dir.path(), "props.obj", text.as_bytes());
    let LoadedLevel {
        level,
        diagnostics: warnings,
        ..
    } = load_level(&path, PathPolicy::default()).unwrap();
    let names: Vec<&str> = level.objects.iter().map(|o| o.name.as_str()).collect();
    assert_eq!(names, ["crate", "ramp"]);
    assert_eq!(mesh(&level, "crate").triangles.len(), 3);
    let ramp = mesh(&level, "ramp");
    assert_eq!(
        ramp.vertices,
        [
            DVec3::new(0.0, 0.0, 1.0),
            DVec3::new(1.0, 0.0, 1.0),
            DVec3::new(1.0, 1.0, 1.0)
        ]
    );
    assert_eq!(warnings.len(), 1);
}

#[test]
fn level_file_composes_meshes_primitives_transforms_and_tag_rules() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "props.obj", b"o crate\nv 0 0 0\nv 1 0 0\nv 0 0 1\nf 1 3 2\no window-glass\nv 0 1 0\nv 1 1 0\nv 0 1 1\nf 4 6 5\n");
    let text = r#"{
      "plumbline": "level", "version": 1, "up": [0, 0, 2],
      "tag_rules": [ { "match": "*glass*", "tags": ["glass"] } ],
      "objects": [
        { "name": "shed", "mesh": "props.obj", "tags": ["building"], "translation": [12, 0, -4],
          "rotation": [0, 0.7071067811865476, 0, 0.7071067811865476], "scale": 2.0 },
        { "name": "bollard", "tags": ["prop"], "translation": [3, 0.5, 2],
          "shape": { "type": "capsule", "radius": 0.15, "half_height": 0.35 } },
        { "name": "ball", "shape": { "type": "sphere", "radius": 1 }, "scale": [2, 2, 2] },
        { "name": "crate", "shape": { "type": "box", "half_extents": [1, 2, 3] }, "scale": [1, 0.5, 2] },
        { "name": "drum", "shape": { "type": "cylinder", "radius": 0.3, "half_height": 0.4 } },
        { "name": "rock", "shape": { "type": "convex", "points": [[0,0,0],[1,0,0],[0,1,0],[0,0,1]] } },
        { "name": "ground", "shape": { "type": "heightfield", "heights": [[0,0,0],[0,1,0],[0,0,0]], "size": [10, 20] } }
      ] }"#;
    let path = write(dir.path(), "yard.level.json", text.as_bytes());
    let LoadedLevel {
        level,
        diagnostics: warnings,
        ..
    } = load_level(&path, PathPolicy::default()).unwrap();
    assert!(warnings.is_empty(), "{warnings:?}");
    assert_eq!(level.up, DVec3::Z);
    let names: Vec<&str> = level.objects.iter().map(|o| o.name.as_str()).collect();
    assert_eq!(
        names,
        [
            "shed/crate",
            "shed/window-glass",
            "bollard",
            "ball",
            "crate",
            "drum",
            "rock",
            "ground"
        ]
    );
    assert_eq!(level.objects[1].tags, ["building", "glass"]);
    assert_eq!(level.objects[0].tags, ["building"]);
    // (1,0,0) (third in the face "f 1 3 2") scaled by 2, turned 90° about Y to (0,0,-2), moved by (12,0,-4).
    let shed = mesh(&level, "shed/crate");
    assert!(
        shed.vertices[2].abs_diff_eq(DVec3::new(12.0, 0.0, -6.0), 1e-12),
        "{:?}",
        shed.vertices
    );
    match &level.objects[3].geometry {
        Geometry::Primitive {
            shape: Primitive::Sphere { radius },
            ..
        } => assert_eq!(*radius, 2.0),
        other => panic!("{other:?}"),
    }
    match &level.objects[4].geometry {
        Geometry::Primitive {
            shape: Primitive::Box { half_extents },
            ..
        } => {
            assert_eq!(*half_extents, DVec3::new(1.0, 1.0, 6.0))
        }
        other => panic!("{other:?}"),
    }
    let ground = mesh(&level, "ground");
    assert_eq!(ground.triangles.len(), 8);
    assert_eq!(ground.vertices[4], DVec3::new(0.0, 1.0, 0.0));
    assert_eq!(ground.vertices[0], DVec3::new(-5.0, 0.0, -10.0));
    // The whole level builds a world, and the heightfield peak is where the level file puts it.
    let world = World::new(&level).unwrap();
    let hit = world
        .everything()
        .ray_first(DVec3::new(0.0, 5.0, 0.0), DVec3::new(0.0, -5.0, 0.0))
        .unwrap();
    assert!(hit.is_some());
}

#[test]
fn digest_follows_the_geometry() {
    let level = common::LevelBuilder::new()
        .mesh("a", vec![DVec3::ZERO, DVec3::X, DVec3::Y], vec![[0, 1, 2]])
        .level();
    let same = common::LevelBuilder::new()
        .mesh("a", vec![DVec3::ZERO, DVec3::X, DVec3::Y], vec![[0, 1, 2]])
        .level();
    let moved = common::LevelBuilder::new()
        .mesh(
            "a",
            vec![DVec3::ZERO, DVec3::X, DVec3::Y * 1.001],
            vec![[0, 1, 2]],
        )
        .level();
    let renamed = common::LevelBuilder::new()
        .mesh("b", vec![DVec3::ZERO, DVec3::X, DVec3::Y], vec![[0, 1, 2]])
        .level();
    assert_eq!(level_digest(&level), level_digest(&same));
    assert_ne!(level_digest(&level), level_digest(&moved));
    assert_ne!(level_digest(&level), level_digest(&renamed));
    assert!(level_digest(&level).starts_with("sha256:"));
}
