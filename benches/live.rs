//! Live answers while a probe is edited in the window: the work done on the UI thread for every change
//! of a probe (a dragged point, a typed number) on the 1M-triangle level: answering it, for a ray, or
//! for a 10 m capsule sweep with its exact least clearance. Target: ≤ 16 ms per change. The sweep's
//! clearance plot (240 distance samples along the path) is measured too; the window draws it from a
//! background thread.

#[path = "../core/benches/common/mod.rs"]
mod common;

use std::hint::black_box;

use criterion::{BenchmarkId, Criterion, criterion_group, criterion_main};
use glam::DVec3;
use plumbline::app::inspector::ClearancePlot;
use plumbline_core::check::answer_probe;
use plumbline_core::demo::quay::Random;
use plumbline_core::level::ShapeSpec;
use plumbline_core::probe::{HitsMode, Probe, ProbeQuery};
use plumbline_core::query::{Filter, World};

fn probe(id: usize, query: ProbeQuery) -> Probe {
    Probe {
        id: format!("p{id}").into(),
        label: None,
        filter: Filter::default(),
        query,
        expect: None,
        from_rule: None,
    }
}

fn live(c: &mut Criterion) {
    let (level, _) = common::levels();
    let world = World::from_level(level).expect("the benchmark level builds");
    let mut random = Random::new(11);
    let rays: Vec<Probe> = common::short_segments(200)
        .into_iter()
        .enumerate()
        .map(|(i, (from, to))| {
            let hits = Some(if i % 2 == 0 {
                HitsMode::First
            } else {
                HitsMode::All
            });
            probe(i, ProbeQuery::Ray { from, to, hits })
        })
        .collect();
    let sweeps: Vec<Probe> = (0..200)
        .map(|i| {
            let from = common::spot(&mut random, 0.91);
            let heading = random.range(0.0, std::f64::consts::TAU);
            let to = from + DVec3::new(heading.cos(), 0.0, heading.sin()) * 10.0;
            probe(
                i,
                ProbeQuery::Sweep {
                    shape: ShapeSpec::Capsule {
                        radius: 0.35,
                        half_height: 0.55,
                    },
                    rotation: None,
                    path: vec![from, to],
                    hits: None,
                    duration: None,
                    clearance: Some(true),
                    turns: None,
                },
            )
        })
        .collect();

    let mut group = c.benchmark_group("live re-answer (1M triangles)");
    let mut k = 0;
    group.bench_function(BenchmarkId::new("ray", "answer"), |b| {
        b.iter(|| {
            k = (k + 1) % rays.len();
            black_box(answer_probe(&world, &rays[k]))
        })
    });
    let mut k = 0;
    group.bench_function(BenchmarkId::new("10 m capsule sweep", "answer"), |b| {
        b.iter(|| {
            k = (k + 1) % sweeps.len();
            black_box(answer_probe(&world, &sweeps[k]))
        })
    });
    let answers: Vec<_> = sweeps.iter().map(|p| answer_probe(&world, p)).collect();
    let mut k = 0;
    group.bench_function(
        BenchmarkId::new("10 m capsule sweep", "clearance plot"),
        |b| {
            b.iter(|| {
                k = (k + 1) % sweeps.len();
                black_box(ClearancePlot::of(&world, &sweeps[k], &answers[k], k))
            })
        },
    );
    group.finish();
}

criterion_group!(benches, live);
criterion_main!(benches);
