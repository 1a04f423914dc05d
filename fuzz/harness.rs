//! What each fuzz target does with its input, shared by the fuzz targets (`fuzz/fuzz_targets`) and
//! by the ordinary test that replays the corpus (`core/tests/core/fuzz_corpus.rs`). Each function
//! must return for any input: an error is fine, a panic, an abort or a hang is a finding.

use std::path::{Path, PathBuf};

use plumbline_core::check::{answer_probe, expand_rules, parse_results};
use plumbline_core::input::PathPolicy;
use plumbline_core::level::{
    Geometry, Level, LevelObject, LintSettings, Primitive, load_level_from,
};
use plumbline_core::lint::{LintOptions, lint};
use plumbline_core::probe::{ProbeQuery, ProbeText};
use plumbline_core::query::World;

/// Runs the target named `target` on `bytes`.
pub fn run(target: &str, bytes: &[u8]) {
    match target {
        "level_file" => {
            if let Some((level, world, settings)) = level(bytes, "fuzz.level.json") {
                // Level files carry lint settings and every kind of object: lint is fuzzed here.
                let _ = lint(&level, &world, &settings, &LintOptions::default(), &|_| {});
            }
        }
        "obj" => {
            level(bytes, "fuzz.obj");
        }
        "gltf" => {
            // A GLB container when the input starts like one, else glTF JSON.
            let name = if bytes.starts_with(b"glTF") {
                "fuzz.glb"
            } else {
                "fuzz.gltf"
            };
            level(bytes, name);
        }
        "probe_set" => probe_set(bytes),
        "answer" => answer(bytes),
        other => panic!("no fuzz target {other}"),
    }
}

/// An empty folder of this process's own: files a fuzzed level names are looked for there.
fn scratch(name: &str) -> PathBuf {
    let folder = std::env::temp_dir().join(format!("plumbline-fuzz-{}", std::process::id()));
    let _ = std::fs::create_dir_all(&folder);
    folder.join(name)
}

/// Loads the bytes as a level and, when they load, builds its query world.
fn level(bytes: &[u8], name: &str) -> Option<(Level, World, LintSettings)> {
    let loaded = load_level_from(&scratch(name), bytes, PathPolicy::default()).ok()?;
    let world = World::new(&loaded.level).ok()?;
    Some((loaded.level, world, loaded.lint))
}

/// Coverage grids larger than this are left out of the answer target: their work grows with the
/// grid by design (up to the file format's limit), which a fuzzer would only time out on.
const FUZZ_COVERAGE_COLUMNS: f64 = 20_000.0;

/// Reads the bytes as a probe set, then as a results file.
fn probe_set(bytes: &[u8]) {
    if let Ok(text) = std::str::from_utf8(bytes) {
        let _ = ProbeText::parse(Path::new("fuzz.probes.json"), text.to_string());
        let _ = parse_results(Path::new("fuzz.results.json"), text);
    }
}

/// Reads the bytes as a probe set and answers every probe (the first 64, its rules' included) on a
/// small level of every kind of shape.
fn answer(bytes: &[u8]) {
    let Ok(text) = std::str::from_utf8(bytes) else {
        return;
    };
    let Ok(set) = ProbeText::parse(Path::new("fuzz.probes.json"), text.to_string()) else {
        return;
    };
    let world = World::from_level(small_level()).expect("the small level builds");
    let Ok(mut probes) = set.probes(0..set.len().min(64)) else {
        return;
    };
    probes.extend(expand_rules(set.rules(), &world));
    for probe in probes.iter().take(64) {
        if let ProbeQuery::Coverage {
            region, spacing, ..
        } = &probe.query
        {
            let span = |k: usize| (region.max[k] - region.min[k]).abs() / spacing + 1.0;
            if span(0) * span(2) > FUZZ_COVERAGE_COLUMNS {
                continue;
            }
        }
        let _ = answer_probe(&world, probe);
    }
}

/// A floor, a wall mesh, and one of each primitive.
fn small_level() -> Level {
    use glam::{DQuat, DVec3};
    let primitive = |name: &str, shape: Primitive, at: [f64; 3]| LevelObject {
        name: name.into(),
        tags: vec![name.into()],
        geometry: Geometry::Primitive {
            shape,
            translation: DVec3::from_array(at),
            rotation: DQuat::from_rotation_y(0.3),
        },
    };
    let wall = plumbline_core::level::Mesh {
        vertices: vec![
            DVec3::new(-5.0, 0.0, 3.0),
            DVec3::new(5.0, 0.0, 3.0),
            DVec3::new(5.0, 3.0, 3.0),
            DVec3::new(-5.0, 3.0, 3.0),
        ],
        triangles: vec![[0, 1, 2], [0, 2, 3]],
        ..Default::default()
    };
    Level {
        up: DVec3::Y,
        objects: vec![
            primitive(
                "floor",
                Primitive::Box {
                    half_extents: DVec3::new(20.0, 0.5, 20.0),
                },
                [0.0, -0.5, 0.0],
            ),
            LevelObject {
                name: "wall".into(),
                tags: vec!["glass".into()],
                geometry: Geometry::Mesh(wall),
            },
            primitive("ball", Primitive::Sphere { radius: 1.0 }, [2.0, 1.0, -2.0]),
            primitive(
                "post",
                Primitive::Capsule {
                    radius: 0.2,
                    half_height: 1.0,
                },
                [-2.0, 1.2, -2.0],
            ),
            primitive(
                "drum",
                Primitive::Cylinder {
                    radius: 0.5,
                    half_height: 0.6,
                },
                [0.0, 0.6, -4.0],
            ),
            primitive(
                "rock",
                Primitive::Convex {
                    points: vec![
                        DVec3::new(0.0, 0.0, 0.0),
                        DVec3::new(1.0, 0.0, 0.0),
                        DVec3::new(0.0, 1.0, 0.0),
                        DVec3::new(0.0, 0.0, 1.0),
                    ],
                },
                [4.0, 0.0, 4.0],
            ),
        ],
    }
}
