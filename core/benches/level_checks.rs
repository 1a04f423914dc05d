//! Whole-level checks on the generated levels: lint of the 1M-triangle level and how its broad
//! phase grows with objects (1k to 50k), a 200-spot sightline matrix, coverage of 250,000 points,
//! and expanding a rule over 10,000 tagged objects. Figures are in the README.

mod common;

use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};
use glam::{DQuat, DVec3};
use plumbline_core::check::expand_rules;
use plumbline_core::demo::quay::Random;
use plumbline_core::level::{Geometry, Level, LevelObject, LintSettings, Primitive};
use plumbline_core::lint::{LintOptions, lint};
use plumbline_core::probe::parse_rules;
use plumbline_core::query::{SpotAt, World};

/// `n` crates (0.6 m boxes) on a grid 1.5 m apart with a little jitter, every tenth one nudged into
/// its neighbour: the broad phase sees a realistic few near pairs per object.
fn crates(n: usize) -> Level {
    let mut random = Random::new(3);
    let side = (n as f64).sqrt().ceil() as usize;
    let objects = (0..n)
        .map(|k| {
            let (i, j) = ((k % side) as f64, (k / side) as f64);
            let nudge = if k % 10 == 0 { 0.85 } else { 0.0 };
            let at = DVec3::new(
                i * 1.5 + random.range(-0.05, 0.05) + nudge,
                0.3,
                j * 1.5 + random.range(-0.05, 0.05),
            );
            LevelObject {
                name: format!("crate-{k}"),
                tags: vec!["prop".into()],
                geometry: Geometry::Primitive {
                    shape: Primitive::Box {
                        half_extents: DVec3::splat(0.3),
                    },
                    translation: at,
                    rotation: DQuat::IDENTITY,
                },
            }
        })
        .collect();
    Level {
        up: DVec3::Y,
        objects,
    }
}

fn bench(c: &mut Criterion) {
    let (level, _) = common::levels();
    let world = World::new(&level).unwrap();
    let settings = LintSettings::default();
    let options = LintOptions::default();

    let mut group = c.benchmark_group("lint");
    group
        .sample_size(10)
        .measurement_time(std::time::Duration::from_secs(20));
    group.bench_function(BenchmarkId::new("whole level", "1M triangles"), |b| {
        b.iter(|| {
            lint(&level, &world, &settings, &options, &|_| {})
                .findings
                .len()
        })
    });
    for n in [1_000, 10_000, 50_000] {
        let crates = crates(n);
        let crate_world = World::new(&crates).unwrap();
        // Objects only: no prop selection, so the time is the pairs' broad and narrow phase.
        let no_props = LintSettings {
            props: Some(plumbline_core::level::Selection {
                tags: vec!["none".into()],
                pattern: None,
            }),
            ..LintSettings::default()
        };
        group.throughput(Throughput::Elements(n as u64));
        group.bench_function(BenchmarkId::new("pairs of objects", n), |b| {
            b.iter(|| {
                lint(&crates, &crate_world, &no_props, &options, &|_| {})
                    .findings
                    .len()
            })
        });
    }
    group.finish();

    let mut group = c.benchmark_group("visibility");
    group
        .sample_size(10)
        .measurement_time(std::time::Duration::from_secs(10));
    let mut random = Random::new(5);
    let spots: Vec<SpotAt> = (0..200)
        .map(|k| SpotAt {
            name: format!("spot-{k}").into(),
            at: common::spot(&mut random, 1.7),
            object: None,
        })
        .collect();
    let view = world.everything();
    group.throughput(Throughput::Elements(200 * 199 / 2));
    group.bench_function(BenchmarkId::new("sightline matrix", "200 spots"), |b| {
        b.iter(|| view.sightlines(&spots).unwrap().len())
    });
    // 500 x 500 columns at 0.2 m over the yard: 250,000 surface points, five spots.
    let (min, max) = (DVec3::new(-50.0, -5.0, -38.0), DVec3::new(49.9, 5.0, 61.9));
    let five = &spots[..5];
    group.throughput(Throughput::Elements(250_000));
    group.bench_function(BenchmarkId::new("coverage", "250k points, 5 spots"), |b| {
        b.iter(|| view.coverage(five, (min, max), None, 0.2).unwrap().len())
    });
    group.finish();

    let mut group = c.benchmark_group("rules");
    group.sample_size(20);
    let tagged = crates(10_000);
    let tagged_world = World::new(&tagged).unwrap();
    let rules = parse_rules(
        std::path::Path::new("bench"),
        r#"[{"id": "clear", "objects": {"tags": ["prop"]},
             "clear": {"shape": {"type": "capsule", "radius": 0.35, "half_height": 0.55},
                       "at": {"anchor": "top", "offset": [0, 0.91, 0]}}}]"#,
    )
    .unwrap();
    group.throughput(Throughput::Elements(10_000));
    group.bench_function(BenchmarkId::new("expand", "10k objects"), |b| {
        b.iter(|| expand_rules(&rules, &tagged_world).len())
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
