//! The rays of the side-by-side benchmark (`benches/side-by-side`): writes a level's triangles and
//! 200,000 rays for the anchor (Embree, through `benches/anchor_rays.py`), answers the same rays
//! with Plumbline, first hits then every hit, on one and two threads (fastest of five runs each,
//! after building the ray index, as the anchor's first call builds its BVH), and writes its
//! answers so the script can compare them ray by ray.
//!
//! `cargo run --release -p plumbline-core --example rays_side_by_side -- OUT_DIR [demo|1m]`

#[path = "../benches/common/mod.rs"]
mod common;

use std::io::Write;
use std::path::{Path, PathBuf};
use std::time::Instant;

use plumbline_core::demo::large_level;
use plumbline_core::input::PathPolicy;
use plumbline_core::level::{Geometry, Level, load_level};
use plumbline_core::query::World;
use rayon::prelude::*;

/// Rays per run, as in the speed issue's measurement.
const RAYS: usize = 200_000;

fn main() {
    let mut args = std::env::args().skip(1);
    let out = PathBuf::from(args.next().expect("an output folder"));
    let which = args.next().unwrap_or_else(|| "1m".into());
    let mut level = match which.as_str() {
        "demo" => {
            let path =
                Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenes/saltfen-quay.level.json");
            load_level(&path, PathPolicy::default())
                .expect("the demo level")
                .level
        }
        _ => large_level(common::TRIANGLES),
    };
    // Both answer the same question: the level's meshes, without primitives (which the anchor
    // would see only as tessellations).
    level
        .objects
        .retain(|o| matches!(o.geometry, Geometry::Mesh(_)));
    std::fs::create_dir_all(&out).expect("the output folder");
    let triangles = write_triangles(&level, &out.join("triangles.f32"));
    let rays = common::short_segments(RAYS);
    let mut file = std::fs::File::create(out.join("rays.f32")).unwrap();
    for (from, to) in &rays {
        let len = from.distance(*to);
        let dir = (*to - *from) / len;
        for x in [from.x, from.y, from.z, dir.x, dir.y, dir.z, len] {
            file.write_all(&(x as f32).to_le_bytes()).unwrap();
        }
    }
    let world = World::new(&level).expect("the world");
    let view = world.everything();
    let first = |(from, to): &(glam::DVec3, glam::DVec3)| {
        view.ray_first(*from, *to)
            .unwrap()
            .map_or(f64::NAN, |h| h.distance)
    };
    let every =
        |(from, to): &(glam::DVec3, glam::DVec3)| view.ray_all(*from, *to).unwrap().len() as u32;
    // The fastest of five runs on `threads` threads, and the answers.
    fn timed<T: Send>(
        threads: usize,
        rays: &[(glam::DVec3, glam::DVec3)],
        answer: &(dyn Fn(&(glam::DVec3, glam::DVec3)) -> T + Sync),
    ) -> (f64, Vec<T>) {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        let mut seconds = Vec::new();
        let mut answers = Vec::new();
        for _ in 0..5 {
            let started = Instant::now();
            answers = pool.install(|| rays.par_iter().map(answer).collect::<Vec<T>>());
            seconds.push(started.elapsed().as_secs_f64());
        }
        seconds.sort_by(f64::total_cmp);
        (seconds[0], answers)
    }
    // The ray index is built once, before the first ray (as the anchor's first call builds its
    // BVH); timed here on one thread.
    let started = Instant::now();
    rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .unwrap()
        .install(|| world.prepare_rays());
    let build = started.elapsed().as_secs_f64();
    let (one, answers) = timed(1, &rays, &first);
    let (two, _) = timed(2, &rays, &first);
    let (all_one, counts) = timed(1, &rays, &every);
    let (all_two, _) = timed(2, &rays, &every);
    let mut file = std::fs::File::create(out.join("plumbline.f64")).unwrap();
    for d in &answers {
        file.write_all(&d.to_le_bytes()).unwrap();
    }
    let mut file = std::fs::File::create(out.join("plumbline_all.u32")).unwrap();
    for n in &counts {
        file.write_all(&n.to_le_bytes()).unwrap();
    }
    let summary = serde_json::json!({
        "level": which, "triangles": triangles, "rays": RAYS,
        "seconds_1_thread": one, "seconds_2_threads": two, "index_seconds": build,
        "all_seconds_1_thread": all_one, "all_seconds_2_threads": all_two,
    });
    std::fs::write(out.join("plumbline.json"), summary.to_string()).unwrap();
    let rate = |seconds: f64| RAYS as f64 / seconds / 1e6;
    println!(
        "Plumbline: {triangles} triangles, {RAYS} rays; first hit {:.2} M rays/s on one thread, \
         {:.2} on two ({:.2}x); all hits {:.2} on one, {:.2} on two; ray index built in \
         {build:.2} s on one thread",
        rate(one),
        rate(two),
        one / two,
        rate(all_one),
        rate(all_two),
    );
}

/// Writes every mesh triangle as nine little-endian f32 (three corners); returns how many.
fn write_triangles(level: &Level, path: &Path) -> usize {
    let mut file = std::io::BufWriter::new(std::fs::File::create(path).unwrap());
    let mut count = 0;
    for object in &level.objects {
        if let Geometry::Mesh(m) = &object.geometry {
            for t in &m.triangles {
                for &k in t {
                    let v = m.vertices[k as usize];
                    for x in [v.x, v.y, v.z] {
                        file.write_all(&(x as f32).to_le_bytes()).unwrap();
                    }
                }
                count += 1;
            }
        }
    }
    count
}
