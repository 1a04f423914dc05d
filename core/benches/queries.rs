//! Query throughput on a generated 1M-triangle level: the World beside raw parry3d-f64 calls on the
//! same inputs (one TriMesh of all triangles with parry's own BVH). Figures are in the README.

mod common;

use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};
use glam::{DQuat, DVec3};
use parry3d_f64::math::Pose;
use parry3d_f64::query::{PointQuery, Ray, RayCast, ShapeCastOptions, cast_shapes, contact};
use parry3d_f64::shape::{Ball, Capsule};
use plumbline_core::level::ShapeSpec;
use plumbline_core::query::{ClosestProbe, ProbeShape, World};

const N: usize = 2000;

fn bench(c: &mut Criterion) {
    let (level, raw) = common::levels();
    let world = World::new(&level).unwrap();
    let view = world.everything();
    let segments = common::short_segments(N);
    let mut group = c.benchmark_group("queries");
    group
        .sample_size(20)
        .measurement_time(std::time::Duration::from_secs(4));
    group.throughput(Throughput::Elements(N as u64));

    group.bench_function(BenchmarkId::new("first-hit ray", "world"), |b| {
        b.iter(|| {
            segments
                .iter()
                .filter(|(f, t)| view.ray_first(*f, *t).unwrap().is_some())
                .count()
        })
    });
    group.bench_function(BenchmarkId::new("first-hit ray", "raw parry"), |b| {
        b.iter(|| {
            segments
                .iter()
                .filter(|(f, t)| {
                    let len = f.distance(*t);
                    raw.cast_ray_and_get_normal(
                        &Pose::IDENTITY,
                        &Ray::new(*f, (*t - *f) / len),
                        len,
                        true,
                    )
                    .is_some()
                })
                .count()
        })
    });
    group.bench_function(BenchmarkId::new("all-hit ray", "world"), |b| {
        b.iter(|| {
            segments
                .iter()
                .map(|(f, t)| view.ray_all(*f, *t).unwrap().len())
                .sum::<usize>()
        })
    });
    group.bench_function(BenchmarkId::new("all-hit ray", "raw parry"), |b| {
        b.iter(|| {
            segments
                .iter()
                .map(|(f, t)| {
                    let len = f.distance(*t);
                    let ray = Ray::new(*f, (*t - *f) / len);
                    raw.bvh()
                        .leaves(|node| node.cast_ray(&ray, len) <= len)
                        .filter(|&tri| {
                            let tri = raw.triangle(tri);
                            parry3d_f64::query::details::local_ray_intersection_with_triangle(
                                tri.a, tri.b, tri.c, &ray,
                            )
                            .is_some_and(|(hit, _)| hit.time_of_impact <= len)
                        })
                        .count()
                })
                .sum::<usize>()
        })
    });

    for (name, spec, raw_shape) in [
        (
            "sphere sweep",
            ShapeSpec::Sphere { radius: 0.3 },
            RawShape::Ball(Ball::new(0.3)),
        ),
        (
            "capsule sweep",
            ShapeSpec::Capsule {
                radius: 0.35,
                half_height: 0.55,
            },
            RawShape::Capsule(Capsule::new_y(0.55, 0.35)),
        ),
    ] {
        let shape = ProbeShape::new(&spec, DQuat::IDENTITY).unwrap();
        group.bench_function(BenchmarkId::new(name, "world"), |b| {
            b.iter(|| {
                segments
                    .iter()
                    .filter(|(f, t)| view.sweep_first(&shape, &[*f, *t]).unwrap().is_some())
                    .count()
            })
        });
        group.bench_function(BenchmarkId::new(name, "raw parry"), |b| {
            b.iter(|| {
                segments
                    .iter()
                    .filter(|(f, t)| {
                        let len = f.distance(*t);
                        let options = ShapeCastOptions::with_max_time_of_impact(len);
                        cast_shapes(
                            &Pose::IDENTITY,
                            DVec3::ZERO,
                            &raw,
                            &Pose::from_translation(*f),
                            (*t - *f) / len,
                            raw_shape.get(),
                            options,
                        )
                        .unwrap()
                        .is_some()
                    })
                    .count()
            })
        });
    }

    group.bench_function(BenchmarkId::new("closest point", "world"), |b| {
        b.iter(|| {
            segments
                .iter()
                .filter(|(f, _)| {
                    view.closest(ClosestProbe::Point, *f, 5.0)
                        .unwrap()
                        .is_some()
                })
                .count()
        })
    });
    group.bench_function(BenchmarkId::new("closest point", "raw parry"), |b| {
        b.iter(|| {
            segments
                .iter()
                .filter(|(f, _)| {
                    raw.project_point_with_max_dist(&Pose::IDENTITY, *f, false, 5.0)
                        .is_some()
                })
                .count()
        })
    });
    let capsule = ProbeShape::new(
        &ShapeSpec::Capsule {
            radius: 0.35,
            half_height: 0.55,
        },
        DQuat::IDENTITY,
    )
    .unwrap();
    let raw_capsule = Capsule::new_y(0.55, 0.35);
    group.bench_function(BenchmarkId::new("capsule overlap", "world"), |b| {
        b.iter(|| {
            segments
                .iter()
                .map(|(f, _)| view.overlap(&capsule, *f).unwrap().len())
                .sum::<usize>()
        })
    });
    group.bench_function(BenchmarkId::new("capsule overlap", "raw parry"), |b| {
        b.iter(|| {
            segments
                .iter()
                .filter(|(f, _)| {
                    contact(
                        &Pose::IDENTITY,
                        &raw,
                        &Pose::from_translation(*f),
                        &raw_capsule,
                        0.0,
                    )
                    .unwrap()
                    .is_some_and(|c| c.dist < 0.0)
                })
                .count()
        })
    });
    group.finish();
}

/// A parry shape held by value, for the raw side of the sweeps.
enum RawShape {
    Ball(Ball),
    Capsule(Capsule),
}

impl RawShape {
    fn get(&self) -> &dyn parry3d_f64::shape::Shape {
        match self {
            RawShape::Ball(b) => b,
            RawShape::Capsule(c) => c,
        }
    }
}

criterion_group!(benches, bench);
criterion_main!(benches);
