//! Times a probe set's bare queries: its level loaded and built, the ray index, and each probe's
//! query call with nothing recorded — what `plumbline check` cannot do without, as opposed to its
//! own reading, checking, judging and writing. The set is read before the clock starts; the level
//! is freed before it stops (as the check frees it before exiting). README ("Speed and memory",
//! goal 2) compares this with the whole `check` on the same set, timed from outside the process.
//!
//! cargo run --release --example bare_queries -- bench-levels/1m/rays200k.probes.json 1

#[path = "../benches/common/bare.rs"]
mod bare;

use std::path::Path;
use std::time::Instant;

use plumbline_core::input::PathPolicy;
use plumbline_core::level::load_level;
use plumbline_core::probe::load_probe_set;
use plumbline_core::query::World;
use rayon::prelude::*;

/// Probes answered a chunk at a time, as `check` answers them.
const CHUNK: usize = 8192;

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let (Some(set_path), threads) = (args.first(), args.get(1)) else {
        eprintln!("usage: bare_queries PROBE_SET [THREADS]");
        std::process::exit(2);
    };
    let threads: usize = threads.map_or(1, |t| t.parse().expect("THREADS is a number"));
    let set_path = Path::new(set_path);
    let set = load_probe_set(set_path).unwrap_or_else(|e| {
        eprintln!("{e}");
        std::process::exit(2);
    });
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .expect("a thread pool");
    let level_path = set_path.parent().unwrap_or(Path::new(".")).join(&set.level);
    pool.install(|| {
        let start = Instant::now();
        let level = load_level(&level_path, PathPolicy::default())
            .unwrap_or_else(|e| {
                eprintln!("{e}");
                std::process::exit(2);
            })
            .level;
        let world = World::from_level(level).expect("the level builds");
        let loaded = start.elapsed();
        world.prepare_rays();
        let indexed = start.elapsed();
        let found: usize = set
            .probes
            .par_chunks(CHUNK)
            .map(|chunk| bare::bare_queries(&world, chunk))
            .sum();
        let answered = start.elapsed();
        // The check frees its level too before it exits.
        drop(world);
        let total = start.elapsed();
        println!(
            "{} probes, {found} hits, {threads} thread(s): level {:.3} s, index {:.3} s, \
             queries {:.3} s, freeing {:.3} s, bare total {:.3} s",
            set.probes.len(),
            loaded.as_secs_f64(),
            (indexed - loaded).as_secs_f64(),
            (answered - indexed).as_secs_f64(),
            (total - answered).as_secs_f64(),
            total.as_secs_f64()
        );
    });
}
