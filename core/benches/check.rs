//! `check` over 100,000 mixed probes on a generated 1M-triangle level: the whole run (answers,
//! verdicts, results file written) beside the sum of the bare query calls for the same probes, on one
//! thread; and the same run on two threads. Then the merge of that run split into four shards'
//! partial results files. Figures are in the README.

#[path = "common/bare.rs"]
mod bare;
mod common;

use bare::bare_queries;

use criterion::{BenchmarkId, Criterion, criterion_group, criterion_main};
use plumbline_core::check::{
    PartHead, ProbeResult, ResultsFile, ResultsHead, ResultsWriter, Shard, Summary, assign,
    entries_text, expected_cost, merge, run_probes, text_digest,
};
use plumbline_core::demo::quay::Random;
use plumbline_core::level::{ShapeSpec, level_digest};
use plumbline_core::probe::{
    Expect, ExpectWord, HitsMode, Probe, ProbeQuery, ProbeSet, probe_set_to_json,
};
use plumbline_core::query::{Filter, World};

const PROBES: usize = 100_000;

fn probes() -> Vec<Probe> {
    let segments = common::short_segments(PROBES);
    let mut random = Random::new(11);
    segments
        .into_iter()
        .enumerate()
        .map(|(k, (from, to))| {
            let pick = random.unit();
            let sphere = ShapeSpec::Sphere { radius: 0.3 };
            let capsule = ShapeSpec::Capsule {
                radius: 0.35,
                half_height: 0.55,
            };
            let query = if pick < 0.4 {
                ProbeQuery::Ray {
                    from,
                    to,
                    hits: None,
                }
            } else if pick < 0.6 {
                ProbeQuery::Ray {
                    from,
                    to,
                    hits: Some(HitsMode::All),
                }
            } else if pick < 0.75 {
                ProbeQuery::Sweep {
                    shape: sphere,
                    rotation: None,
                    path: vec![from, to],
                    hits: None,
                    duration: None,
                    clearance: None,
                    turns: None,
                }
            } else if pick < 0.8 {
                ProbeQuery::Sweep {
                    shape: capsule,
                    rotation: None,
                    path: vec![from, to],
                    hits: None,
                    duration: None,
                    clearance: None,
                    turns: None,
                }
            } else if pick < 0.9 {
                ProbeQuery::Closest {
                    shape: ShapeSpec::Point {},
                    at: from,
                    rotation: None,
                    max_distance: 5.0,
                }
            } else {
                ProbeQuery::Overlap {
                    shape: capsule,
                    at: from,
                    rotation: None,
                }
            };
            Probe {
                id: format!("p{k}").into(),
                label: None,
                filter: Filter::default(),
                query,
                expect: Some(Expect::Word(ExpectWord::Clear)),
                from_rule: None,
            }
        })
        .collect()
}

fn bench(c: &mut Criterion) {
    let (level, _) = common::levels();
    let world = World::new(&level).unwrap();
    let digest = level_digest(&level);
    let set = ProbeSet {
        schema: None,
        level: "bench.level.json".into(),
        probes: probes(),
        rules: Vec::new(),
    };
    let out = tempfile::tempdir().unwrap();
    // check digests the probe-set file as read; keep its text as the file would hold it.
    let probes_text = probe_set_to_json(&set);
    let mut group = c.benchmark_group("check 100k probes");
    group
        .sample_size(10)
        .measurement_time(std::time::Duration::from_secs(20));
    group.bench_function(BenchmarkId::new("bare queries", "1 thread"), |b| {
        b.iter(|| bare_queries(&world, &set.probes))
    });
    for jobs in [1usize, 2] {
        group.bench_function(
            BenchmarkId::new("check with results file", format!("{jobs} thread(s)")),
            |b| {
                b.iter(|| {
                    let results = run_probes(&world, &set.probes, Some(jobs), None).unwrap();
                    let file = ResultsFile::new(
                        "bench.probes.json".into(),
                        "bench.level.json".into(),
                        digest.clone(),
                        text_digest(probes_text.as_bytes()),
                        results,
                    );
                    plumbline_core::atomic::write_atomic(
                        &out.path().join("bench.results.json"),
                        file.to_json().as_bytes(),
                    )
                    .unwrap();
                })
            },
        );
    }
    group.finish();
    bench_merge(c, &world, &set.probes, &digest, out.path());
}

/// `merge` of four partial files that split the 100,000 probes as `check --shard K/4` would.
fn bench_merge(
    c: &mut Criterion,
    world: &World,
    probes: &[Probe],
    digest: &str,
    dir: &std::path::Path,
) {
    let results = run_probes(world, probes, None, None).unwrap();
    let costs: Vec<u64> = probes.iter().map(|p| expected_cost(p, world)).collect();
    let shard_of = assign(&costs, 4);
    let head = ResultsHead {
        probes: "bench.probes.json".into(),
        level: "bench.level.json".into(),
        level_digest: digest.into(),
        probes_digest: "sha256:bench".into(),
    };
    let parts: Vec<std::path::PathBuf> = (0..4u32)
        .map(|shard| {
            let positions: Vec<usize> = (0..probes.len())
                .filter(|&p| shard_of[p] == shard)
                .collect();
            let path = dir.join(format!("part-{}.json", shard + 1));
            let part = PartHead {
                shard: Shard {
                    index: shard as usize + 1,
                    count: 4,
                },
                of_probes: probes.len(),
                positions,
            };
            let mut writer =
                ResultsWriter::create(&path, part.positions.len(), &head, Some(&part)).unwrap();
            let mut summary = Summary::default();
            let mine: Vec<&ProbeResult> = part.positions.iter().map(|&p| &results[p]).collect();
            mine.iter().for_each(|r| summary.count(r.verdict));
            let text = entries_text(mine.iter().copied(), 0);
            writer.push_laid_out(&text, mine.len()).unwrap();
            writer.finish(&summary).unwrap();
            path
        })
        .collect();
    let mut group = c.benchmark_group("merge");
    group.sample_size(10);
    group.bench_function("4 parts of 100k probes", |b| {
        b.iter(|| merge(&parts, &dir.join("merged.results.json"), None).unwrap())
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
