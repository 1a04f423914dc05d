//! Shared benchmark inputs: the generated large level, a raw parry3d-f64 mesh of the same triangles,
//! and deterministic probe inputs.
#![allow(dead_code)]

use glam::DVec3;
use parry3d_f64::shape::TriMesh;
use plumbline_core::demo::large_level;
use plumbline_core::demo::quay::Random;
use plumbline_core::level::{Geometry, Level};

/// Triangles in the benchmark level.
pub const TRIANGLES: usize = 1_000_000;

/// The large level, and the same triangles as one raw parry TriMesh (parry's own BVH).
pub fn levels() -> (Level, TriMesh) {
    let level = large_level(TRIANGLES);
    let mut vertices = Vec::new();
    let mut indices = Vec::new();
    for object in &level.objects {
        if let Geometry::Mesh(m) = &object.geometry {
            let base = vertices.len() as u32;
            vertices.extend(m.vertices.iter().copied());
            indices.extend(m.triangles.iter().map(|t| t.map(|i| i + base)));
        }
    }
    let raw = TriMesh::new(vertices, indices).expect("a valid mesh");
    (level, raw)
}

/// A point over the yard or the hills, `lift` metres above the ground.
pub fn spot(random: &mut Random, lift: f64) -> DVec3 {
    let x = random.range(-95.0, 95.0);
    let z = random.range(-38.0, 95.0);
    DVec3::new(x, plumbline_core::demo::quay::ground_height(x, z) + lift, z)
}

/// `n` segments of 1–20 m from points 0.5–3 m above the ground, in random directions.
pub fn short_segments(n: usize) -> Vec<(DVec3, DVec3)> {
    let mut random = Random::new(7);
    (0..n)
        .map(|_| {
            let lift = random.range(0.5, 3.0);
            let from = spot(&mut random, lift);
            let dir = DVec3::new(
                random.range(-1.0, 1.0),
                random.range(-0.6, 0.3),
                random.range(-1.0, 1.0),
            )
            .normalize();
            (from, from + dir * random.range(1.0, 20.0))
        })
        .collect()
}
