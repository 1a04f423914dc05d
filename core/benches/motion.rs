//! Characters and loads in motion on the 1M-triangle generated level: walks of about 30 m over ten
//! waypoints, jumps, and sweeps that turn a box through 90° over 10 m. Figures are in the README.

mod common;

use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};
use glam::{DQuat, DVec3};
use plumbline_core::demo::quay::Random;
use plumbline_core::level::ShapeSpec;
use plumbline_core::query::{Gait, ProbeShape, Trajectory, TurningPath, World};

/// A character: capsule of radius 0.35 m, 1.8 m tall.
fn character() -> ProbeShape {
    let spec = ShapeSpec::Capsule {
        radius: 0.35,
        half_height: 0.55,
    };
    ProbeShape::new(&spec, DQuat::IDENTITY).unwrap()
}

/// `n` routes of ten legs of 3 m each, wandering over the yard at a character's standing height.
fn routes(n: usize) -> Vec<Vec<DVec3>> {
    let mut random = Random::new(11);
    (0..n)
        .map(|_| {
            let mut at = common::spot(&mut random, 0.91);
            let mut heading = random.range(0.0, std::f64::consts::TAU);
            let mut route = vec![at];
            for _ in 0..10 {
                heading += random.range(-0.6, 0.6);
                let x = at.x + 3.0 * heading.cos();
                let z = at.z + 3.0 * heading.sin();
                at = DVec3::new(x, plumbline_core::demo::quay::ground_height(x, z) + 0.91, z);
                route.push(at);
            }
            route
        })
        .collect()
}

fn bench(c: &mut Criterion) {
    let (level, _) = common::levels();
    let world = World::new(&level).unwrap();
    let view = world.everything();
    let character = character();

    let walks = routes(20);
    let gait = Gait {
        max_step: 0.35,
        max_slope: 45.0,
    };
    let mut group = c.benchmark_group("walk");
    group.sample_size(10);
    group.throughput(Throughput::Elements(walks.len() as u64));
    group.bench_function(
        BenchmarkId::new("30 m, 10 waypoints", "1M triangles"),
        |b| {
            b.iter(|| {
                walks
                    .iter()
                    .map(|r| view.walk(&character, r, gait).unwrap().path.len())
                    .sum::<usize>()
            })
        },
    );
    group.finish();

    let mut random = Random::new(5);
    let jumps: Vec<Trajectory> = (0..200)
        .map(|_| Trajectory {
            from: common::spot(&mut random, 0.95),
            velocity: DVec3::new(
                random.range(-5.0, 5.0),
                random.range(2.0, 6.0),
                random.range(-5.0, 5.0),
            ),
            gravity: DVec3::new(0.0, -9.80665, 0.0),
        })
        .collect();
    let mut group = c.benchmark_group("jump");
    group.throughput(Throughput::Elements(jumps.len() as u64));
    group.bench_function(BenchmarkId::new("capsule", "1M triangles"), |b| {
        b.iter(|| {
            jumps
                .iter()
                .filter(|arc| view.jump(&character, arc, 10.0, -50.0).unwrap().is_some())
                .count()
        })
    });
    group.finish();

    let plank = ProbeShape::new(
        &ShapeSpec::Box {
            half_extents: [1.5, 0.3, 0.3],
        },
        DQuat::IDENTITY,
    )
    .unwrap();
    let turns = [
        DQuat::IDENTITY,
        DQuat::from_rotation_y(std::f64::consts::FRAC_PI_2),
    ];
    let sweeps: Vec<[DVec3; 2]> = common::short_segments(200)
        .into_iter()
        .map(|(from, to)| [from, from + (to - from).normalize() * 10.0])
        .collect();
    let mut group = c.benchmark_group("turning sweep");
    group.throughput(Throughput::Elements(sweeps.len() as u64));
    group.bench_function(BenchmarkId::new("box, 10 m, 90°", "1M triangles"), |b| {
        b.iter(|| {
            sweeps
                .iter()
                .filter(|points| {
                    let path = TurningPath {
                        points: &points[..],
                        turns: &turns,
                    };
                    view.sweep_turning_first(&plank, path).unwrap().is_some()
                })
                .count()
        })
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
