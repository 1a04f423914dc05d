//! Measures loading a level file and building its World: wall time and peak memory (VmHWM).
//!
//! cargo run --release --example make_scenes -- --large 1000000 bench-levels/1m
//! cargo run --release --example measure_load -- bench-levels/1m/saltfen-quay.level.json

use std::time::Instant;

fn peak_rss_bytes() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kib: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kib * 1024)
}

fn main() {
    let Some(path) = std::env::args().nth(1) else {
        eprintln!("usage: measure_load LEVEL");
        std::process::exit(2);
    };
    let before = peak_rss_bytes().unwrap_or(0);
    let start = Instant::now();
    let level = plumbline_core::level::load_level(
        std::path::Path::new(&path),
        plumbline_core::input::PathPolicy::default(),
    )
    .unwrap_or_else(|e| {
        eprintln!("{e}");
        std::process::exit(2);
    })
    .level;
    let loaded = start.elapsed();
    let triangles = level.triangle_count();
    // As `plumbline check` does: the World takes the level over.
    let world = plumbline_core::query::World::from_level(level).expect("the level builds");
    let built = start.elapsed();
    let peak = peak_rss_bytes().unwrap_or(0);
    println!("triangles            {triangles}");
    println!("load                 {:.3} s", loaded.as_secs_f64());
    println!("load + build         {:.3} s", built.as_secs_f64());
    println!(
        "peak RSS             {:.1} MiB ({:.1} MiB before loading)",
        peak as f64 / 1048576.0,
        before as f64 / 1048576.0
    );
    println!("bytes per triangle   {:.0}", peak as f64 / triangles as f64);
    drop(world);
}
