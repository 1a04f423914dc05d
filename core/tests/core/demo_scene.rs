//! The committed demo scene (scenes/): it regenerates to the same bytes, loads without warnings, and
//! its probe set gives the reviewed baseline; the probe that fails on purpose says why.

use std::path::Path;

use plumbline_core::check::{ResultsFile, Verdict, probes_digest, run_probes};
use plumbline_core::demo::{files, write_demo_scene};
use plumbline_core::input::PathPolicy;
use plumbline_core::level::{LoadedLevel, level_digest, load_level};
use plumbline_core::probe::load_probe_set;
use plumbline_core::query::World;

fn scenes() -> &'static Path {
    Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/../scenes"))
}

#[test]
fn regenerating_gives_the_same_bytes() {
    let dir = tempfile::tempdir().unwrap();
    write_demo_scene(dir.path()).unwrap();
    for name in [
        files::GLB,
        files::LEVEL,
        files::EDITED_LEVEL,
        files::PROBES,
        files::BASELINE,
    ] {
        let fresh = std::fs::read(dir.path().join(name)).unwrap();
        let committed = std::fs::read(scenes().join(name)).unwrap();
        assert!(
            fresh == committed,
            "{name} differs from the generator's output: run `cargo run --release --example make_scenes`"
        );
    }
}

#[test]
fn demo_levels_load_without_warnings_and_are_in_the_promised_size() {
    for name in [files::LEVEL, files::EDITED_LEVEL] {
        let LoadedLevel {
            level,
            diagnostics: warnings,
            ..
        } = load_level(&scenes().join(name), PathPolicy::default()).unwrap();
        assert!(warnings.is_empty(), "{name}: {warnings:?}");
        let triangles = level.triangle_count();
        assert!(
            (100_000..=300_000).contains(&triangles),
            "{triangles} triangles"
        );
        let tags: std::collections::BTreeSet<&str> = level
            .objects
            .iter()
            .flat_map(|o| o.tags.iter().map(String::as_str))
            .collect();
        for tag in [
            "glass",
            "foliage",
            "fence",
            "vent",
            "container",
            "building",
            "pickup",
            "rock",
        ] {
            assert!(tags.contains(tag), "{name} has objects tagged {tag}");
        }
    }
}

#[test]
fn the_probe_set_gives_the_reviewed_baseline() {
    let set = load_probe_set(&scenes().join(files::PROBES)).unwrap();
    assert!((35..=50).contains(&set.probes.len()));
    assert!(
        set.probes.iter().all(|p| p.label.is_some()),
        "every probe says what it checks"
    );
    let LoadedLevel { level, .. } =
        load_level(&scenes().join(files::LEVEL), PathPolicy::default()).unwrap();
    let world = World::new(&level).unwrap();
    let results = run_probes(&world, &set.probes, Some(2), &|_| {}).unwrap();
    let failing: Vec<_> = results
        .iter()
        .filter(|r| r.verdict == Verdict::Fail)
        .collect();
    assert_eq!(failing.len(), 1);
    assert_eq!(failing[0].id, "spawn-by-drums");
    assert_eq!(
        failing[0].reason,
        "Expected clear; overlaps drum-2 by 0.289 m (and 1 more)"
    );
    let file = ResultsFile::new(
        files::PROBES.into(),
        files::LEVEL.into(),
        level_digest(&level),
        probes_digest(&set),
        results,
    );
    let golden = std::fs::read_to_string(scenes().join(files::BASELINE)).unwrap();
    assert_eq!(file.to_json(), golden);
}
