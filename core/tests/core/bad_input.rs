//! Every kind of bad level input gives a clear error naming the file and the place — never a panic —
//! and no input panics a loader.

use std::path::{Path, PathBuf};

use plumbline_core::input::PathPolicy;
use plumbline_core::level::{LoadedLevel, load_level};

fn write(dir: &Path, name: &str, bytes: &[u8]) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, bytes).unwrap();
    path
}

/// Loads the file, expects an error, and returns its text.
fn error_of(path: &Path) -> String {
    let err = load_level(path, PathPolicy::default()).expect_err("the input is bad");
    let text = err.to_string();
    assert!(
        text.starts_with(&path.display().to_string()),
        "error names the file: {text}"
    );
    text
}

fn level_with(objects: &str) -> String {
    format!(r#"{{"plumbline": "level", "version": 1, "objects": [{objects}]}}"#)
}

#[test]
fn out_of_range_indices() {
    let dir = tempfile::tempdir().unwrap();
    let p = write(dir.path(), "a.level.json", level_with(r#"{"name": "wall", "shape": {"type": "triangles", "vertices": [[0,0,0],[1,0,0],[0,1,0]], "indices": [[0,1,2],[0,1,7]]}}"#).as_bytes());
    let e = error_of(&p);
    assert!(
        e.contains("objects[0] \"wall\"")
            && e.contains("triangle 1")
            && e.contains("index 7 is out of range"),
        "{e}"
    );
    let p = write(dir.path(), "b.obj", b"v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 9\n");
    let e = error_of(&p);
    assert!(
        e.contains("line 4, column 7") && e.contains("vertex 9 does not exist"),
        "{e}"
    );
    let p = write(dir.path(), "c.obj", b"v 0 0 0\nf 1 -2 1\n");
    assert!(error_of(&p).contains("vertex -2 does not exist"));
}

#[test]
fn non_finite_numbers() {
    let dir = tempfile::tempdir().unwrap();
    let p = write(dir.path(), "a.obj", b"v 0 0 0\nv nan 0 0\n");
    let e = error_of(&p);
    assert!(
        e.contains("line 2, column 3") && e.contains("not a finite number"),
        "{e}"
    );
    let p = write(dir.path(), "b.obj", b"v 0 0 inf\n");
    assert!(error_of(&p).contains("line 1, column 7"));
    // JSON has no NaN; a number too large for f64 is refused by the parser with its position.
    let p = write(
        dir.path(),
        "c.level.json",
        level_with(r#"{"name": "ball", "shape": {"type": "sphere", "radius": 1e999}}"#).as_bytes(),
    );
    assert!(error_of(&p).contains("line 1"));
    let p = write(
        dir.path(),
        "d.level.json",
        level_with(r#"{"name": "ball", "shape": {"type": "sphere", "radius": -1}}"#).as_bytes(),
    );
    let e = error_of(&p);
    assert!(
        e.contains("objects[0] \"ball\"") && e.contains("radius must be a positive number"),
        "{e}"
    );
}

#[test]
fn empty_and_truncated_files() {
    let dir = tempfile::tempdir().unwrap();
    for name in ["a.level.json", "b.obj", "c.glb", "d.gltf"] {
        let p = write(dir.path(), name, b"");
        assert!(error_of(&p).ends_with("the file is empty"));
    }
    let p = write(
        dir.path(),
        "e.glb",
        b"glTF\x02\x00\x00\x00\xff\x00\x00\x00JSON",
    );
    let e = error_of(&p);
    assert!(e.contains("not a readable GLB file"), "{e}");
}

#[test]
fn json_of_the_wrong_type_and_unknown_fields() {
    let dir = tempfile::tempdir().unwrap();
    let p = write(
        dir.path(),
        "a.level.json",
        br#"{"plumbline": "level", "version": 1, "objects": {"name": "x"}}"#,
    );
    let e = error_of(&p);
    assert!(
        e.contains("line 1, column") && e.contains("expected a sequence"),
        "{e}"
    );
    let p = write(
        dir.path(),
        "b.level.json",
        b"{\"plumbline\": \"level\", \"version\": 1,\n  \"objcts\": []}",
    );
    let e = error_of(&p);
    assert!(
        e.contains("line 2, column 10") && e.contains("unknown field `objcts`"),
        "{e}"
    );
    let p = write(dir.path(), "c.level.json", b"[1, 2, 3]");
    assert!(error_of(&p).contains("line 1"));
    let p = write(
        dir.path(),
        "d.level.json",
        br#"{"plumbline": "probes", "version": 1, "objects": []}"#,
    );
    assert!(error_of(&p).contains("not a level"));
    let p = write(
        dir.path(),
        "e.level.json",
        level_with(r#"{"name": "x", "shape": {"type": "sphere", "radius": 1, "colour": "red"}}"#)
            .as_bytes(),
    );
    assert!(error_of(&p).contains("unknown field `colour`"));
}

#[test]
fn missing_referenced_files() {
    let dir = tempfile::tempdir().unwrap();
    let p = write(
        dir.path(),
        "a.level.json",
        level_with(r#"{"name": "shed", "mesh": "sheds/shed.glb"}"#).as_bytes(),
    );
    let e = error_of(&p);
    assert!(
        e.contains("objects[0] \"shed\"")
            && e.contains("sheds/shed.glb")
            && e.contains("cannot be read"),
        "{e}"
    );
    let gltf =
        r#"{"asset": {"version": "2.0"}, "buffers": [{"uri": "gone.bin", "byteLength": 12}]}"#;
    let p = write(dir.path(), "b.gltf", gltf.as_bytes());
    let e = error_of(&p);
    assert!(e.contains("buffers[0]") && e.contains("gone.bin"), "{e}");
    assert!(
        load_level(&dir.path().join("nowhere.obj"), PathPolicy::default())
            .unwrap_err()
            .message
            .contains("cannot read the file")
    );
}

#[test]
fn gltf_requiring_an_unsupported_extension() {
    let dir = tempfile::tempdir().unwrap();
    let gltf = r#"{"asset": {"version": "2.0"}, "extensionsUsed": ["EXT_meshopt_compression"], "extensionsRequired": ["EXT_meshopt_compression"]}"#;
    let p = write(dir.path(), "a.gltf", gltf.as_bytes());
    let e = error_of(&p);
    assert!(e.contains("extensionsRequired"), "{e}");
}

#[test]
fn gltf_accessor_outside_its_buffer() {
    let dir = tempfile::tempdir().unwrap();
    let gltf = r#"{"asset": {"version": "2.0"}, "scene": 0, "scenes": [{"nodes": [0]}], "nodes": [{"mesh": 0}],
      "meshes": [{"primitives": [{"attributes": {"POSITION": 0}}]}],
      "accessors": [{"bufferView": 0, "componentType": 5126, "count": 30, "type": "VEC3", "min": [0,0,0], "max": [1,1,1]}],
      "bufferViews": [{"buffer": 0, "byteLength": 360}],
      "buffers": [{"uri": "data:application/octet-stream;base64,AAAAAAAAAAAAAAAA", "byteLength": 12}]}"#;
    let p = write(dir.path(), "a.gltf", gltf.as_bytes());
    let e = error_of(&p);
    assert!(
        e.contains("primitive 0: POSITION") && e.contains("runs past the end of buffer 0"),
        "{e}"
    );
}

#[test]
fn object_mistakes_in_level_files() {
    let dir = tempfile::tempdir().unwrap();
    let cases = [
        (
            r#"{"name": "a", "shape": {"type": "sphere", "radius": 1}}, {"name": "a", "shape": {"type": "sphere", "radius": 1}}"#,
            "another object already has this name",
        ),
        (r#"{"name": "a"}"#, "exactly one of"),
        (
            r#"{"name": "a", "shape": {"type": "sphere", "radius": 1}, "rotation": [0, 0, 0, 2]}"#,
            "unit quaternion",
        ),
        (
            r#"{"name": "a", "shape": {"type": "sphere", "radius": 1}, "scale": [1, 2, 1]}"#,
            "uniform scale",
        ),
        (
            r#"{"name": "a", "shape": {"type": "convex", "points": [[0,0,0],[1,0,0],[0,1,0],[1,1,0]]}}"#,
            "not all in one plane",
        ),
        (
            r#"{"name": "a", "shape": {"type": "heightfield", "heights": [[0, 0], [0]], "size": [1, 1]}}"#,
            "heights[1]",
        ),
        (
            r#"{"name": "a", "shape": {"type": "point"}}"#,
            "cannot be a point",
        ),
    ];
    for (k, (objects, expected)) in cases.iter().enumerate() {
        let p = write(
            dir.path(),
            &format!("{k}.level.json"),
            level_with(objects).as_bytes(),
        );
        let e = error_of(&p);
        assert!(e.contains(expected), "case {k}: {e}");
    }
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig { cases: 300, ..Default::default() })]

    /// Arbitrary bytes, and valid files cut short or with bytes flipped, never panic a loader: each
    /// gives a level or an error.
    #[test]
    fn no_input_panics_a_loader(
        bytes in proptest::collection::vec(proptest::prelude::any::<u8>(), 0..400),
        cut in 0usize..4000,
        flips in proptest::collection::vec((0usize..4000, proptest::prelude::any::<u8>()), 0..6),
    ) {
        let dir = tempfile::tempdir().unwrap();
        for name in ["a.glb", "a.gltf", "a.obj", "a.level.json"] {
            let _ = load_level(&write(dir.path(), name, &bytes), PathPolicy::default());
        }
        let obj = b"o crate\nv 0 0 0\nv 1 0 0\nv 0 1 0\nv 0 0 1\nf 1 2 3\nf 1 3 4\nf -1 -2 -3/1/1\n".to_vec();
        let level = br#"{"plumbline": "level", "version": 1, "objects": [{"name": "a", "shape": {"type": "heightfield", "heights": [[0, 1], [2, 3]], "size": [1, 1]}}, {"name": "b", "translation": [1, 2, 3], "shape": {"type": "convex", "points": [[0,0,0],[1,0,0],[0,1,0],[0,0,1]]}}]}"#.to_vec();
        let glb = plumbline_core::demo::pack_glb(
            br#"{"asset": {"version": "2.0"}, "scene": 0, "scenes": [{"nodes": [0]}], "nodes": [{"mesh": 0}], "meshes": [{"primitives": [{"attributes": {"POSITION": 0}, "indices": 1}]}], "accessors": [{"bufferView": 0, "componentType": 5126, "count": 3, "type": "VEC3", "min": [0,0,0], "max": [1,1,0]}, {"bufferView": 1, "componentType": 5123, "count": 3, "type": "SCALAR"}], "bufferViews": [{"buffer": 0, "byteLength": 36}, {"buffer": 0, "byteOffset": 36, "byteLength": 6}], "buffers": [{"byteLength": 44}]}"#,
            &[0u8; 44],
        );
        for (name, mut good) in [("b.obj", obj), ("b.level.json", level), ("b.glb", glb)] {
            for &(at, value) in &flips {
                if !good.is_empty() {
                    let k = at % good.len();
                    good[k] = value;
                }
            }
            good.truncate(cut.min(good.len()));
            let path = write(dir.path(), name, &good);
            if let Ok(LoadedLevel { level, .. }) = load_level(&path, PathPolicy::default()) {
                // Whatever loads also builds a world and answers a probe.
                let world = plumbline_core::query::World::new(&level).unwrap();
                let _ = world.everything().ray_first(glam::DVec3::splat(-5.0), glam::DVec3::splat(5.0));
            }
        }
    }
}
