//! Hostile and odd input found by fuzzing the program and by trying real exported files: each case
//! is a regression test with its input written here. None may panic, hang, allocate more than the
//! file justifies, or load wrong geometry silently.

use std::path::{Path, PathBuf};
use std::time::Instant;

use base64::Engine;
use plumbline_core::error::Warning;
use plumbline_core::input::PathPolicy;
use plumbline_core::level::{Geometry, LoadedLevel, load_level};

fn write(dir: &Path, name: &str, bytes: &[u8]) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, bytes).unwrap();
    path
}

fn error_of(path: &Path) -> String {
    let text = load_level(path, PathPolicy::default())
        .expect_err("the input is refused")
        .to_string();
    assert_eq!(text.lines().count(), 1, "one line: {text}");
    text
}

/// A glTF file with one node and mesh whose accessors are the given JSON, over a buffer of `bytes`.
fn gltf(accessors: &str, views: &str, primitive: &str, bytes: &[u8]) -> String {
    let data = base64::engine::general_purpose::STANDARD.encode(bytes);
    format!(
        r#"{{"asset": {{"version": "2.0"}}, "scene": 0, "scenes": [{{"nodes": [0]}}],
        "nodes": [{{"mesh": 0}}], "meshes": [{{"primitives": [{primitive}]}}],
        "accessors": [{accessors}], "bufferViews": [{views}],
        "buffers": [{{"uri": "data:application/octet-stream;base64,{data}", "byteLength": {}}}]}}"#,
        bytes.len()
    )
}

/// Three positions of a triangle and its indices.
fn triangle_bytes() -> Vec<u8> {
    let mut bytes: Vec<u8> = [[0f32, 0.0, 0.0], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0]]
        .iter()
        .flatten()
        .flat_map(|f| f.to_le_bytes())
        .collect();
    bytes.extend([0u16, 1, 2, 0].iter().flat_map(|i| i.to_le_bytes()));
    bytes
}

#[test]
fn gltf_index_accessors_of_floats_and_strides_shorter_than_an_element_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let views =
        r#"{"buffer": 0, "byteLength": 36}, {"buffer": 0, "byteOffset": 36, "byteLength": 8}"#;
    let positions = r#"{"bufferView": 0, "componentType": 5126, "count": 3, "type": "VEC3"}"#;
    let float_indices = format!(
        r#"{positions}, {{"bufferView": 1, "componentType": 5126, "count": 2, "type": "SCALAR"}}"#
    );
    let p = write(
        dir.path(),
        "a.gltf",
        gltf(
            &float_indices,
            views,
            r#"{"attributes": {"POSITION": 0}, "indices": 1}"#,
            &triangle_bytes(),
        )
        .as_bytes(),
    );
    assert!(error_of(&p).contains("unsigned integer indices"));
    let short_stride = r#"{"buffer": 0, "byteLength": 36, "byteStride": 4}, {"buffer": 0, "byteOffset": 36, "byteLength": 8}"#;
    let p = write(
        dir.path(),
        "b.gltf",
        gltf(
            positions,
            short_stride,
            r#"{"attributes": {"POSITION": 0}}"#,
            &triangle_bytes(),
        )
        .as_bytes(),
    );
    assert!(error_of(&p).contains("shorter than an element"));
}

#[test]
fn declared_counts_are_believed_only_as_far_as_the_bytes_go() {
    let dir = tempfile::tempdir().unwrap();
    for count in ["100000000", "1000000000000", "4611686018427387904"] {
        // A sparse POSITION accessor with no buffer view: the file holds none of its elements.
        let accessors = format!(
            r#"{{"componentType": 5126, "count": {count}, "type": "VEC3",
               "sparse": {{"count": 1, "indices": {{"bufferView": 1, "componentType": 5123}},
                          "values": {{"bufferView": 0}}}}}}"#
        );
        let views =
            r#"{"buffer": 0, "byteLength": 12}, {"buffer": 0, "byteOffset": 36, "byteLength": 2}"#;
        let p = write(
            dir.path(),
            &format!("{count}.gltf"),
            gltf(
                &accessors,
                views,
                r#"{"attributes": {"POSITION": 0}}"#,
                &triangle_bytes(),
            )
            .as_bytes(),
        );
        let started = Instant::now();
        let e = error_of(&p);
        assert!(e.contains("holds no data"), "{e}");
        // A guard against work, not a speed target: the refusal comes before any allocation.
        assert!(started.elapsed().as_secs() < 5);
        // The same count with a buffer view is refused because the bytes are not there.
        let backed = format!(
            r#"{{"bufferView": 0, "componentType": 5126, "count": {count}, "type": "VEC3"}}"#
        );
        let p = write(
            dir.path(),
            &format!("{count}-backed.gltf"),
            gltf(
                &backed,
                views,
                r#"{"attributes": {"POSITION": 0}}"#,
                &triangle_bytes(),
            )
            .as_bytes(),
        );
        assert!(error_of(&p).contains("do not fit"));
    }
}

#[test]
fn node_graphs_that_are_not_trees_are_refused_at_once() {
    let dir = tempfile::tempdir().unwrap();
    // Every node lists the next one twice: 2^40 paths through 41 nodes.
    let nodes: Vec<String> = (0..41)
        .map(|k| {
            if k == 40 {
                r#"{"mesh": 0}"#.to_string()
            } else {
                format!(r#"{{"children": [{0}, {0}]}}"#, k + 1)
            }
        })
        .collect();
    let text = gltf(
        r#"{"bufferView": 0, "componentType": 5126, "count": 3, "type": "VEC3"}"#,
        r#"{"buffer": 0, "byteLength": 36}"#,
        r#"{"attributes": {"POSITION": 0}}"#,
        &triangle_bytes(),
    )
    .replace(
        r#""nodes": [{"mesh": 0}]"#,
        &format!(r#""nodes": [{}]"#, nodes.join(", ")),
    );
    let p = write(dir.path(), "dag.gltf", text.as_bytes());
    let started = Instant::now();
    assert!(error_of(&p).contains("reached twice"));
    assert!(started.elapsed().as_secs() < 5);
    // A cycle below the root.
    let cycle = text.replace(
        &format!(r#""nodes": [{}]"#, nodes.join(", ")),
        r#""nodes": [{"children": [1]}, {"children": [0], "mesh": 0}]"#,
    );
    let p = write(dir.path(), "cycle.gltf", cycle.as_bytes());
    assert!(error_of(&p).contains("reached twice"));
}

#[test]
fn scale_cannot_take_a_size_past_the_limits() {
    let dir = tempfile::tempdir().unwrap();
    for (shape, scale) in [
        (r#"{"type": "sphere", "radius": 1}"#, "1e300"),
        (
            r#"{"type": "box", "half_extents": [1, 1, 1]}"#,
            "[1, 1e154, 1]",
        ),
        (
            r#"{"type": "capsule", "radius": 1, "half_height": 1}"#,
            "[1, 1e7, 1]",
        ),
    ] {
        let level = format!(
            r#"{{"plumbline": "level", "version": 1, "objects": [{{"name": "big", "shape": {shape}, "scale": {scale}}}]}}"#
        );
        let p = write(dir.path(), "big.level.json", level.as_bytes());
        let e = error_of(&p);
        assert!(e.contains("once scaled"), "{e}");
        assert!(!e.contains("000000000000"), "no 300-digit numbers: {e}");
    }
}

#[test]
fn names_beyond_the_limit_are_refused_with_a_short_message() {
    let dir = tempfile::tempdir().unwrap();
    let long = "x".repeat(70_000);
    let level = format!(
        r#"{{"plumbline": "level", "version": 1, "objects": [{{"name": "{long}", "shape": {{"type": "sphere", "radius": 1}}}}]}}"#
    );
    let p = write(dir.path(), "long.level.json", level.as_bytes());
    let e = error_of(&p);
    assert!(e.contains("70000 characters long") && e.len() < 400, "{e}");
}

#[test]
fn special_files_and_paths_outside_the_folder_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let with_buffer = |uri: &str| {
        format!(
            r#"{{"asset": {{"version": "2.0"}}, "buffers": [{{"uri": "{uri}", "byteLength": 12}}]}}"#
        )
    };
    let p = write(dir.path(), "a.gltf", with_buffer("/dev/zero").as_bytes());
    assert!(error_of(&p).contains("outside the folder of a.gltf"));
    let p = write(dir.path(), "b.gltf", with_buffer("../b.bin").as_bytes());
    assert!(error_of(&p).contains("--allow-outside-paths"));
    // Allowed outside, a device is still never read.
    let e = load_level(&dir.path().join("a.gltf"), PathPolicy { anywhere: true })
        .unwrap_err()
        .to_string();
    assert!(e.contains("not a regular file"), "{e}");
    // A link inside the folder to a device, and a FIFO: refused, without blocking.
    std::os::unix::fs::symlink("/dev/urandom", dir.path().join("noise.bin")).unwrap();
    let p = write(dir.path(), "c.gltf", with_buffer("noise.bin").as_bytes());
    assert!(error_of(&p).contains("not a regular file"));
    let fifo = dir.path().join("pipe.obj");
    let made = std::process::Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .unwrap();
    assert!(made.success());
    assert!(error_of(&fifo).contains("not a regular file"));
    let level =
        r#"{"plumbline": "level", "version": 1, "objects": [{"name": "m", "mesh": "pipe.obj"}]}"#;
    let p = write(dir.path(), "d.level.json", level.as_bytes());
    assert!(error_of(&p).contains("not a regular file"));
}

#[test]
fn obj_byte_order_marks_and_line_endings_keep_the_geometry() {
    let dir = tempfile::tempdir().unwrap();
    let body = "o tile\nv 0 0 0\nv 2 0 0\nv 0 0 2\nf 1 3 2\n";
    let plain = load_level(
        &write(dir.path(), "plain.obj", body.as_bytes()),
        PathPolicy::default(),
    )
    .unwrap()
    .level;
    let variants = [
        ("bom.obj", format!("\u{feff}{body}")),
        ("crlf.obj", body.replace('\n', "\r\n")),
        ("cr.obj", body.replace('\n', "\r")),
    ];
    for (name, text) in variants {
        let mut loaded = load_level(
            &write(dir.path(), name, text.as_bytes()),
            PathPolicy::default(),
        )
        .unwrap();
        // The same geometry, faces and lines; only the file's name differs.
        for object in &mut loaded.level.objects {
            if let Geometry::Mesh(mesh) = &mut object.geometry {
                mesh.origin.file = Some("plain.obj".into());
            }
        }
        assert_eq!(loaded.level.objects, plain.objects, "{name}");
        assert!(loaded.diagnostics.is_empty(), "{name}");
    }
}

#[test]
fn obj_edges_written_as_faces_and_latin1_names_load_with_warnings() {
    let dir = tempfile::tempdir().unwrap();
    let mut text = b"o caf\xe9\nv 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2\nf 1 2 3\nf 3\n".to_vec();
    text.extend(b"l 1 2\n");
    let LoadedLevel {
        level, diagnostics, ..
    } = load_level(
        &write(dir.path(), "edges.obj", &text),
        PathPolicy::default(),
    )
    .unwrap();
    assert_eq!(level.objects.len(), 1);
    assert!(level.objects[0].name.starts_with("caf"));
    let warnings: Vec<&Warning> = diagnostics.iter().map(|d| &d.warning).collect();
    assert!(
        warnings.contains(&&Warning::ShortFaces { count: 2 }),
        "{warnings:?}"
    );
    assert!(warnings.contains(&&Warning::NotUtf8));
    assert!(warnings.contains(&&Warning::SkippedElements { count: 1 }));
}

#[test]
fn object_names_stay_unique_after_mesh_files_are_expanded() {
    let dir = tempfile::tempdir().unwrap();
    write(
        dir.path(),
        "shed.obj",
        b"o a\nv 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n",
    );
    let level = r#"{"plumbline": "level", "version": 1, "objects": [
        {"name": "shed", "mesh": "shed.obj"},
        {"name": "shed/a", "shape": {"type": "sphere", "radius": 1}}]}"#;
    let p = write(dir.path(), "twice.level.json", level.as_bytes());
    assert!(error_of(&p).contains("two objects have this name"));
    // glTF: a node named like an earlier duplicate's suffix still gets a name of its own.
    let nodes = r#""nodes": [{"name": "roof", "mesh": 0}, {"name": "roof", "mesh": 0}, {"name": "roof~2", "mesh": 0}]"#;
    let text = gltf(
        r#"{"bufferView": 0, "componentType": 5126, "count": 3, "type": "VEC3"}"#,
        r#"{"buffer": 0, "byteLength": 36}"#,
        r#"{"attributes": {"POSITION": 0}}"#,
        &triangle_bytes(),
    )
    .replace(r#""nodes": [{"mesh": 0}]"#, nodes)
    .replace(
        r#""scenes": [{"nodes": [0]}]"#,
        r#""scenes": [{"nodes": [0, 1, 2]}]"#,
    );
    let level = load_level(
        &write(dir.path(), "roofs.gltf", text.as_bytes()),
        PathPolicy::default(),
    )
    .unwrap()
    .level;
    let names: Vec<&str> = level.objects.iter().map(|o| o.name.as_str()).collect();
    assert_eq!(names, ["roof", "roof~2", "roof~2~2"]);
    assert!(
        level
            .objects
            .iter()
            .all(|o| matches!(o.geometry, Geometry::Mesh(_)))
    );
}
