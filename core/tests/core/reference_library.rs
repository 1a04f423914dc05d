//! Cross-check against a general-purpose reference library: trimesh 5.2.0 (Python, PyPI; with
//! rtree 1.4.1 and numpy 2.4.6), whose ray and closest-point answers on the same mesh are frozen in
//! tests/fixtures/trimesh_reference.json by tests/fixtures/make_trimesh_reference.py.

use crate::common;

use common::LevelBuilder;
use glam::DVec3;
use plumbline_core::query::ClosestProbe;
use serde::Deserialize;

#[derive(Deserialize)]
struct Fixture {
    library: String,
    version: String,
    vertices: Vec<[f64; 3]>,
    triangles: Vec<[u32; 3]>,
    rays: Vec<RayCase>,
    points: Vec<PointCase>,
}

#[derive(Deserialize)]
struct RayCase {
    from: [f64; 3],
    direction: [f64; 3],
    first_distance: Option<f64>,
    triangle: Option<u32>,
}

#[derive(Deserialize)]
struct PointCase {
    at: [f64; 3],
    closest: [f64; 3],
    distance: f64,
}

fn fixture() -> Fixture {
    let text = include_str!("../fixtures/trimesh_reference.json");
    serde_json::from_str(text).expect("the fixture parses")
}

#[test]
fn rays_agree_with_trimesh() {
    let f = fixture();
    assert_eq!(
        (f.library.as_str(), f.version.as_str()),
        ("trimesh", "5.2.0")
    );
    let vertices = f.vertices.iter().map(|v| DVec3::from_array(*v)).collect();
    let world = LevelBuilder::new()
        .mesh("yard", vertices, f.triangles.clone())
        .world();
    let mut hits = 0;
    for case in &f.rays {
        let from = DVec3::from_array(case.from);
        // trimesh casts unbounded rays; 100 m reaches past every part of this 24 m mesh.
        let to = from + DVec3::from_array(case.direction) * 100.0;
        let ours = world.everything().ray_first(from, to).unwrap();
        match (ours, case.first_distance) {
            (Some(hit), Some(d)) => {
                hits += 1;
                assert!(
                    (hit.distance - d).abs() < 1e-9,
                    "{} vs trimesh {d}",
                    hit.distance
                );
                assert_eq!(hit.triangle, case.triangle);
            }
            (None, None) => {}
            (ours, theirs) => {
                panic!("hit/miss disagree from {from:?}: {ours:?} vs trimesh {theirs:?}")
            }
        }
    }
    assert!(hits > 100, "the fixture exercises hits");
}

#[test]
fn closest_points_agree_with_trimesh() {
    let f = fixture();
    let vertices = f.vertices.iter().map(|v| DVec3::from_array(*v)).collect();
    let world = LevelBuilder::new()
        .mesh("yard", vertices, f.triangles.clone())
        .world();
    for case in &f.points {
        let at = DVec3::from_array(case.at);
        let hit = world
            .everything()
            .closest(ClosestProbe::Point, at, 1000.0)
            .unwrap()
            .unwrap();
        assert!(
            (hit.distance - case.distance).abs() < 1e-9,
            "{} vs trimesh {}",
            hit.distance,
            case.distance
        );
        assert!((hit.point - DVec3::from_array(case.closest)).length() < 1e-7);
    }
}
