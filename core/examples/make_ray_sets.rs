//! Writes the ray probe sets the check's speed is measured on (README, "Speed and memory", goal 2)
//! beside a large level written by `make_scenes --large`: the side-by-side benchmark's short rays
//! (coordinates to 0.1 mm, each expected clear) in sets of 1,000, 20,000 and 200,000, and a million
//! probes that are the 200,000 five times over with their ids made unique.
//!
//! cargo run --release --example make_scenes -- --large 1000000 bench-levels/1m
//! cargo run --release --example make_ray_sets -- bench-levels/1m

#[path = "../benches/common/mod.rs"]
mod common;

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use glam::DVec3;
use plumbline_core::atomic::write_atomic;
use plumbline_core::probe::{Expect, ExpectWord, Probe, ProbeQuery, ProbeSet, probe_set_to_json};
use plumbline_core::query::Filter;

/// The level file `make_scenes --large` writes, which every set names.
const LEVEL: &str = "saltfen-quay.level.json";
/// Distinct rays; the largest set repeats them.
const RAYS: usize = 200_000;

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let [folder] = args.as_slice() else {
        eprintln!("usage: make_ray_sets FOLDER");
        return ExitCode::from(2);
    };
    let folder = PathBuf::from(folder);
    let rays: Vec<(DVec3, DVec3)> = common::short_segments(RAYS)
        .into_iter()
        .map(|(from, to)| (to_tenth_mm(from), to_tenth_mm(to)))
        .collect();
    for (name, count) in [
        ("rays1k", 1_000),
        ("rays20k", 20_000),
        ("rays200k", RAYS),
        ("rays1m", 5 * RAYS),
    ] {
        let probes = (0..count).map(|k| ray_probe(k, rays[k % RAYS])).collect();
        if let Err(e) = write_set(&folder, name, probes) {
            eprintln!("make_ray_sets: {e}");
            return ExitCode::from(2);
        }
    }
    ExitCode::SUCCESS
}

/// A point rounded to 0.1 mm, as a person's probe set would give it.
fn to_tenth_mm(p: DVec3) -> DVec3 {
    (p * 1e4).round() / 1e4
}

/// A first-hit ray numbered `k`, expected clear.
fn ray_probe(k: usize, (from, to): (DVec3, DVec3)) -> Probe {
    Probe {
        id: format!("ray-{k:07}").into(),
        label: None,
        filter: Filter::default(),
        query: ProbeQuery::Ray {
            from,
            to,
            hits: None,
        },
        expect: Some(Expect::Word(ExpectWord::Clear)),
        from_rule: None,
    }
}

fn write_set(folder: &Path, name: &str, probes: Vec<Probe>) -> Result<(), String> {
    let set = ProbeSet {
        schema: None,
        level: LEVEL.into(),
        probes,
        rules: Vec::new(),
    };
    let path = folder.join(format!("{name}.probes.json"));
    write_atomic(&path, probe_set_to_json(&set).as_bytes())
        .map_err(|e| format!("{}: {e}", path.display()))
}
