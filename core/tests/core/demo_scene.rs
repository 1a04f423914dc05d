//! The committed demo scene (scenes/): it regenerates to the same bytes, loads without warnings, its
//! probe set gives the reviewed baseline (the probes that fail on purpose say why), and lint finds
//! exactly the faults planted in it.

use std::path::Path;

use plumbline_core::check::{ResultsFile, Verdict, expand_rules, probes_digest, run_probes};
use plumbline_core::demo::{files, write_demo_scene};
use plumbline_core::input::PathPolicy;
use plumbline_core::level::{LevelDigest, LoadedLevel, level_digest, load_level};
use plumbline_core::lint::{LintOptions, lint};
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
    let mut probes = set.probes.clone();
    probes.extend(expand_rules(&set.rules, &world));
    let told = std::sync::Mutex::new(Vec::new());
    let watcher = |done| told.lock().unwrap().push(done);
    let results = run_probes(&world, &probes, Some(2), Some(&watcher)).unwrap();
    // The watcher is told of each probe as it is done, from either thread.
    let mut told = told.into_inner().unwrap();
    told.sort_unstable();
    assert_eq!(told, (1..=probes.len()).collect::<Vec<_>>());
    let failing: Vec<(&str, &str)> = results
        .iter()
        .filter(|r| r.verdict == Verdict::Fail)
        .map(|r| (&*r.id, &*r.reason))
        .collect();
    assert_eq!(
        failing,
        [
            (
                "spawn-by-drums",
                "Expected clear; overlaps drum-2 by 0.289 m (and 1 more)"
            ),
            (
                "barrel-on-the-spoil-bank",
                "Expected it to come to rest; is still moving after 10.00 s, 12.595 m from where \
                 it was put, turned 22.6°"
            ),
            (
                "pickups-reachable",
                "Expected clear; reaches 6251 of 7215 walkable cells (6251 m² of 7215 m²); 7 of 8 \
                 targets; pickup-on-containers is 8.434 m from the nearest reached ground"
            ),
            (
                "spawns-clear/spawn-pad-hedge",
                "Expected clear; overlaps yard/bush-05 by 1.017 m"
            ),
            (
                "props-rest/crate-7",
                "Expected a distance between -0.010 m and 0.010 m; rests on yard/terrain with a gap of 0.250 m"
            ),
            (
                "lookouts-see-gate/lookout-catwalk",
                "Expected clear; blocked by yard/warehouse at 1.250 m"
            ),
        ]
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

#[test]
fn the_digest_taken_while_the_world_is_built_is_the_levels() {
    // The demo has meshes, primitives and volumes; on one thread and two (where each mesh is
    // hashed while it is welded).
    let level = load_level(&scenes().join(files::LEVEL), PathPolicy::default())
        .unwrap()
        .level;
    let whole = level_digest(&level);
    for jobs in [1, 2] {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(jobs)
            .build()
            .unwrap();
        let mut digest = LevelDigest::new(&level);
        let world = pool
            .install(|| World::from_level_seen(level.clone(), |object| digest.object(object)))
            .unwrap();
        assert_eq!(world.len(), level.objects.len());
        assert_eq!(digest.finish(), whole, "{jobs} thread(s)");
    }
}

#[test]
fn lint_finds_exactly_the_planted_faults() {
    let loaded = load_level(&scenes().join(files::LEVEL), PathPolicy::default()).unwrap();
    let world = World::new(&loaded.level).unwrap();
    let report = lint(
        &loaded.level,
        &world,
        &loaded.lint,
        &LintOptions::default(),
        &|_| {},
    );
    let found: Vec<(&str, Vec<&str>)> = report
        .findings
        .iter()
        .map(|f| (f.kind.word(), f.objects.iter().map(|o| &**o).collect()))
        .collect();
    assert_eq!(
        found,
        [
            ("overlap", vec!["yard/crane", "container-02"]),
            ("overlap", vec!["yard/crane", "container-03"]),
            ("overlap", vec!["yard/crane", "container-04"]),
            ("overlap", vec!["yard/bush-05", "spawn-pad-hedge"]),
            ("narrow-gap", vec!["drum-1", "drum-2"]),
            ("floats", vec!["crate-7"]),
            ("open-edges", vec!["yard/stone-cairn"]),
            ("duplicate-faces", vec!["yard/loading-plate"]),
        ]
    );
    // The planted sizes, from the layout: the crane's legs reach 12 cm into the first row; the
    // drums' centres are 0.806 m apart with radii 0.3; the crate was set 25 cm up; the cairn lost
    // one triangle (three edges); the plate's top (two triangles) was written twice.
    let measure = |k: usize| report.findings[k].measure.unwrap();
    // (The crane comes from the .glb, whose positions are f32: a few micrometres at 32 m.)
    assert!((measure(0) - 0.12).abs() < 1e-5);
    assert!((measure(4) - (0.7f64.hypot(0.4) - 0.6)).abs() < 1e-6);
    assert!((measure(5) - 0.25).abs() < 1e-9);
    assert_eq!(report.findings[6].count, 3);
    assert_eq!(report.findings[7].count, 2);
    // Everything else the level file accepts, each with its reason.
    assert!(report.allowed.iter().all(|(_, why)| !why.is_empty()));
}
