//! The query core against published references and worked examples, one check per source.

use crate::common;

use common::*;
use glam::{DQuat, DVec3};
use plumbline_core::level::{Primitive, ShapeSpec};
use plumbline_core::query::{ClosestProbe, Filter, ProbeShape};

fn sphere(r: f64) -> ProbeShape {
    ProbeShape::new(&ShapeSpec::Sphere { radius: r }, DQuat::IDENTITY).unwrap()
}

fn floor() -> (Vec<DVec3>, Vec<[u32; 3]>) {
    let v = vec![
        DVec3::new(-50.0, 0.0, -50.0),
        DVec3::new(-50.0, 0.0, 50.0),
        DVec3::new(50.0, 0.0, 50.0),
        DVec3::new(50.0, 0.0, -50.0),
    ];
    (v, vec![[0, 1, 2], [0, 2, 3]])
}

/// Möller & Trumbore 1997, JGT 2(1), worked case: a ray along -Z through the triangle
/// (0,0,0),(1,0,0),(0,1,0) at barycentric (0.25, 0.25) meets it at t = 5 from z = 5.
#[test]
fn ray_triangle_worked_example_moller_trumbore_1997() {
    let v = vec![DVec3::ZERO, DVec3::X, DVec3::Y];
    let world = LevelBuilder::new()
        .mesh("tri", v.clone(), vec![[0, 1, 2]])
        .world();
    let from = DVec3::new(0.25, 0.25, 5.0);
    let to = DVec3::new(0.25, 0.25, -5.0);
    let hit = world
        .everything()
        .ray_first(from, to)
        .unwrap()
        .expect("hit");
    let oracle = moller_trumbore(from, (to - from).normalize(), v[0], v[1], v[2]).unwrap();
    assert!((hit.distance - 5.0).abs() < 1e-12 && (hit.distance - oracle).abs() < 1e-12);
    assert_eq!(hit.normal, DVec3::Z);
    assert!(!hit.back_face);
    assert_eq!(hit.triangle, Some(0));
    assert!((hit.t - 0.5).abs() < 1e-12);
    // From behind the same triangle is a back-face crossing and the normal still faces the start.
    let back = world
        .everything()
        .ray_first(to, from)
        .unwrap()
        .expect("hit");
    assert!(back.back_face);
    assert_eq!(back.normal, -DVec3::Z);
}

/// Woop, Benthin & Wald, "Watertight Ray/Triangle Intersection", JCGT 2(1), 2013: rays aimed exactly
/// at the vertices and edges of a closed mesh never pass through, and cross it exactly twice.
#[test]
fn rays_through_shared_vertices_and_edges_never_leak_woop_2013() {
    let (v, t) = icosphere(DVec3::new(0.3, -0.2, 0.1), 2.0, 2);
    let world = LevelBuilder::new()
        .mesh("ball", v.clone(), t.clone())
        .world();
    let centre = DVec3::new(0.3, -0.2, 0.1);
    let mut targets: Vec<DVec3> = v.clone();
    for tri in &t {
        for k in 0..3 {
            targets.push((v[tri[k] as usize] + v[tri[(k + 1) % 3] as usize]) * 0.5);
        }
    }
    for target in targets {
        // From outside, through the exact vertex or edge midpoint, and out the other side.
        let dir = (target - centre).normalize();
        let from = centre + dir * 5.0;
        let to = centre - dir * 5.0;
        let hits = world.everything().ray_all(from, to).unwrap();
        assert_eq!(
            hits.len(),
            2,
            "ray through {target:?} crossed {} times",
            hits.len()
        );
        assert!(!hits[0].back_face && hits[1].back_face);
        assert!(world.everything().ray_first(from, to).unwrap().is_some());
    }
}

/// Williams, Barrus, Morley & Shirley, "An Efficient and Robust Ray–Box Intersection Algorithm",
/// JGT 10(1), 2005: direction components of +0.0 and -0.0, and origins on a slab plane.
#[test]
fn ray_box_signed_zero_directions_williams_2005() {
    let world = LevelBuilder::new()
        .primitive(
            "crate",
            Primitive::Box {
                half_extents: DVec3::ONE,
            },
            DVec3::ZERO,
            DQuat::IDENTITY,
        )
        .world();
    let view = world.everything();
    for zero in [0.0, -0.0] {
        // Parallel to X inside the Y and Z slabs: hits the x = -1 face.
        let hit = view
            .ray_first(DVec3::new(-5.0, zero, 0.5), DVec3::new(5.0, zero, 0.5))
            .unwrap()
            .unwrap();
        assert!((hit.distance - 4.0).abs() < 1e-12);
        assert_eq!(hit.normal, -DVec3::X);
        // Parallel to X outside the Y slab: misses.
        assert!(
            view.ray_first(DVec3::new(-5.0, 1.5, zero), DVec3::new(5.0, 1.5, zero))
                .unwrap()
                .is_none()
        );
    }
    // Origin on the slab plane y = 1, moving down: hits at distance 0 on the top face.
    let hit = view
        .ray_first(DVec3::new(0.2, 1.0, 0.2), DVec3::new(0.2, -5.0, 0.2))
        .unwrap()
        .unwrap();
    assert!(hit.distance.abs() < 1e-12);
    assert_eq!(hit.normal, DVec3::Y);
}

/// Ericson, Real-Time Collision Detection, 2005, §5.3.2 (IntersectRaySphere): t = -b - sqrt(b² - c)
/// with b = m·d, c = m·m - r².
#[test]
fn ray_sphere_ericson_5_3_2() {
    let centre = DVec3::new(1.0, 2.0, 3.0);
    let r = 1.5;
    let world = LevelBuilder::new()
        .primitive(
            "ball",
            Primitive::Sphere { radius: r },
            centre,
            DQuat::IDENTITY,
        )
        .world();
    let from = DVec3::new(-4.0, 1.0, 2.5);
    let to = DVec3::new(6.0, 3.0, 3.5);
    let d = (to - from).normalize();
    let m = from - centre;
    let b = m.dot(d);
    let c = m.dot(m) - r * r;
    let expected = -b - (b * b - c).sqrt();
    let exit = -b + (b * b - c).sqrt();
    let hits = world.everything().ray_all(from, to).unwrap();
    assert_eq!(hits.len(), 2);
    assert!((hits[0].distance - expected).abs() < 1e-9);
    assert!((hits[1].distance - exit).abs() < 1e-9);
    let n = (hits[0].point - centre).normalize();
    assert!((hits[0].normal - n).length() < 1e-9);
}

/// Ericson 2005, §5.5.3 (IntersectMovingSpherePlane): a sphere of radius r at c moving by v towards
/// the plane n·x = d first touches at t = (r - (n·c - d)) / (n·v).
#[test]
fn moving_sphere_against_plane_ericson_5_5_3() {
    let (v, t) = floor();
    let world = LevelBuilder::new().mesh("floor", v, t).world();
    let r = 0.4;
    let c = DVec3::new(1.0, 5.0, -2.0);
    let end = DVec3::new(7.0, -3.0, 4.0);
    let vel = end - c;
    let n = DVec3::Y;
    let t_hit = (r - n.dot(c)) / n.dot(vel);
    let hit = world
        .everything()
        .sweep_first(&sphere(r), &[c, end])
        .unwrap()
        .expect("hit");
    // parry's time of impact converges to within about 1e-7 m of the analytic one.
    assert!(
        (hit.distance - t_hit * vel.length()).abs() < 1e-6,
        "t {} vs {}",
        hit.t,
        t_hit
    );
    assert!(
        (hit.normal - DVec3::Y).length() < 1e-6,
        "normal {:?}",
        hit.normal
    );
    let expected_point = c + vel * t_hit - DVec3::Y * r;
    assert!(
        (hit.point - expected_point).length() < 1e-4,
        "point {:?} vs {expected_point:?}",
        hit.point
    );
    assert!(!hit.started_inside);
}

/// Ericson 2005, §5.1.5 (ClosestPtPointTriangle): the closest point of the level to a point, against
/// the book's region test for each Voronoi region (vertex, edge and face) of a triangle.
#[test]
fn closest_point_on_triangle_regions_ericson_5_1_5() {
    let (a, b, c) = (
        DVec3::new(0.0, 0.0, 0.0),
        DVec3::new(4.0, 0.0, 0.0),
        DVec3::new(0.0, 0.0, 3.0),
    );
    let world = LevelBuilder::new()
        .mesh("tri", vec![a, b, c], vec![[0, 1, 2]])
        .world();
    let probes = [
        DVec3::new(-1.0, 1.0, -1.0), // vertex a region
        DVec3::new(6.0, -2.0, -0.5), // vertex b region
        DVec3::new(2.0, 0.5, -1.0),  // edge ab
        DVec3::new(3.0, 2.0, 3.0),   // edge bc
        DVec3::new(1.0, 1.5, 1.0),   // face
    ];
    for p in probes {
        let hit = world
            .everything()
            .closest(ClosestProbe::Point, p, 100.0)
            .unwrap()
            .unwrap();
        let q = closest_point_triangle(p, a, b, c);
        assert!(
            (hit.point - q).length() < 1e-12,
            "{p:?}: {:?} vs {q:?}",
            hit.point
        );
        assert!((hit.distance - p.distance(q)).abs() < 1e-12);
        assert!((hit.normal - (p - q).normalize()).length() < 1e-9);
    }
}

/// Ericson 2005, §5.1.9 (ClosestPtSegmentSegment): a capsule probe against a capsule object is
/// separated by the segment–segment distance minus both radii.
#[test]
fn capsule_to_capsule_distance_ericson_5_1_9() {
    let rot = DQuat::from_rotation_z(0.7) * DQuat::from_rotation_x(0.3);
    let world = LevelBuilder::new()
        .primitive(
            "post",
            Primitive::Capsule {
                radius: 0.2,
                half_height: 1.0,
            },
            DVec3::new(2.0, 1.0, 0.0),
            rot,
        )
        .world();
    let probe = ProbeShape::new(
        &ShapeSpec::Capsule {
            radius: 0.35,
            half_height: 0.55,
        },
        DQuat::IDENTITY,
    )
    .unwrap();
    let at = DVec3::new(0.0, 0.9, 0.4);
    let hit = world
        .everything()
        .closest(ClosestProbe::Shape(&probe), at, 10.0)
        .unwrap()
        .unwrap();
    let axis = rot * DVec3::Y;
    let (p, q) = closest_segment_segment(
        at - DVec3::Y * 0.55,
        at + DVec3::Y * 0.55,
        DVec3::new(2.0, 1.0, 0.0) - axis,
        DVec3::new(2.0, 1.0, 0.0) + axis,
    );
    let expected = p.distance(q) - 0.35 - 0.2;
    // The bar for closest-point answers is 1e-6 m (parry's GJK converges to about 6e-7 here).
    assert!(
        (hit.distance - expected).abs() < 1e-6,
        "{} vs {expected}",
        hit.distance
    );
    assert!(!hit.overlapping);
}

/// A 1 mm wall crossed by a 1 km sweep is hit (no tunnelling), and the time of impact is exact.
#[test]
fn thin_wall_is_hit_by_a_long_fast_sweep() {
    let (v, t) = box_mesh(DVec3::new(500.0, 0.0, 0.0), DVec3::new(0.0005, 5.0, 5.0));
    let world = LevelBuilder::new().mesh("wall", v, t).world();
    let from = DVec3::new(0.0, 0.3, -0.2);
    let to = DVec3::new(1000.0, 0.3, -0.2);
    let r = 0.25;
    let hit = world
        .everything()
        .sweep_first(&sphere(r), &[from, to])
        .unwrap()
        .expect("the wall is hit");
    assert!(
        (hit.distance - (500.0 - 0.0005 - r)).abs() < 1e-6,
        "{}",
        hit.distance
    );
    let ray = world.everything().ray_all(from, to).unwrap();
    assert_eq!(ray.len(), 2, "a ray crosses both faces of the wall");
    assert!((ray[1].distance - ray[0].distance - 0.001).abs() < 1e-9);
}

/// The same level and probes 10 km from the origin give the same answers to 1e-6 m.
#[test]
fn answers_hold_ten_kilometres_from_the_origin() {
    let offset = DVec3::new(10_000.0, 35.0, -10_000.0);
    let answer = |o: DVec3| {
        let (v, t) = icosphere(o + DVec3::new(3.0, 1.0, 0.5), 1.2, 2);
        let (bv, bt) = box_mesh(o + DVec3::new(-2.0, 0.0, 1.0), DVec3::new(1.0, 2.0, 0.5));
        let world = LevelBuilder::new()
            .mesh("rock", v, t)
            .mesh("crate", bv, bt)
            .world();
        let view = world.everything();
        let ray = view
            .ray_first(
                o + DVec3::new(-6.0, 1.1, 0.7),
                o + DVec3::new(8.0, 0.9, 0.6),
            )
            .unwrap()
            .unwrap();
        let sweep = view
            .sweep_first(
                &sphere(0.3),
                &[
                    o + DVec3::new(0.0, 6.0, 0.5),
                    o + DVec3::new(3.1, -4.0, 0.5),
                ],
            )
            .unwrap()
            .unwrap();
        let closest = view
            .closest(ClosestProbe::Point, o + DVec3::new(0.5, 0.2, 0.2), 50.0)
            .unwrap()
            .unwrap();
        (ray.distance, sweep.distance, closest.distance)
    };
    let near = answer(DVec3::ZERO);
    let far = answer(offset);
    assert!(
        (near.0 - far.0).abs() < 1e-6
            && (near.1 - far.1).abs() < 1e-6
            && (near.2 - far.2).abs() < 1e-6
    );
}

/// Grazing rays: a segment that runs exactly along a box mesh's top edge, and one that lies in the
/// plane of the top face. Common practice: a ray lying in a surface's plane does not cross that
/// surface, but it does cross the faces it meets head-on.
#[test]
fn grazing_and_coplanar_rays() {
    let (v, t) = box_mesh(DVec3::ZERO, DVec3::ONE);
    let world = LevelBuilder::new().mesh("block", v, t).world();
    let view = world.everything();
    // In the plane of the top face (y = 1), through the middle: meets the x = -1 side face at its top
    // edge head-on.
    let coplanar = view
        .ray_all(DVec3::new(-3.0, 1.0, 0.0), DVec3::new(3.0, 1.0, 0.0))
        .unwrap();
    assert!(!coplanar.is_empty());
    assert!((coplanar[0].distance - 2.0).abs() < 1e-12);
    // Just above the top face: clear; just below: blocked at x = -1.
    assert!(
        view.ray_first(
            DVec3::new(-3.0, 1.0 + 1e-9, 0.0),
            DVec3::new(3.0, 1.0 + 1e-9, 0.0)
        )
        .unwrap()
        .is_none()
    );
    let below = view
        .ray_first(
            DVec3::new(-3.0, 1.0 - 1e-9, 0.0),
            DVec3::new(3.0, 1.0 - 1e-9, 0.0),
        )
        .unwrap()
        .unwrap();
    assert!((below.distance - 2.0).abs() < 1e-12);
    assert_eq!(below.normal, -DVec3::X);
}

/// Filters: ignored tags, only-tags and ignored names take objects out of the view.
#[test]
fn filtered_views_skip_objects() {
    let (g, gt) = box_mesh(DVec3::new(2.0, 0.0, 0.0), DVec3::new(0.05, 2.0, 2.0));
    let (w, wt) = box_mesh(DVec3::new(5.0, 0.0, 0.0), DVec3::new(0.5, 2.0, 2.0));
    let world = LevelBuilder::new()
        .mesh("pane", g, gt)
        .tagged(&["glass"])
        .mesh("wall", w, wt)
        .world();
    let (from, to) = (DVec3::ZERO, DVec3::new(10.0, 0.0, 0.0));
    let first = |f: Filter| {
        world
            .view(&f)
            .ray_first(from, to)
            .unwrap()
            .map(|h| world.name(h.object).to_string())
    };
    assert_eq!(first(Filter::default()).as_deref(), Some("pane"));
    assert_eq!(
        first(Filter {
            ignore_tags: vec!["glass".into()],
            ..Filter::default()
        })
        .as_deref(),
        Some("wall")
    );
    assert_eq!(
        first(Filter {
            only_tags: Some(vec!["glass".into()]),
            ..Filter::default()
        })
        .as_deref(),
        Some("pane")
    );
    assert_eq!(
        first(Filter {
            ignore_objects: vec!["pane".into(), "wall".into()],
            ..Filter::default()
        }),
        None
    );
}

/// Overlap of a sphere and a box: depth r - (distance from centre to face) (elementary geometry),
/// the direction out of the face, and a sphere wholly inside a closed mesh reported as enclosed with
/// depth (distance to the nearest wall + r).
#[test]
fn overlap_depths_and_enclosed_shapes() {
    let (v, t) = box_mesh(DVec3::ZERO, DVec3::new(2.0, 2.0, 2.0));
    let world = LevelBuilder::new().mesh("rock", v, t).world();
    let hits = world
        .everything()
        .overlap(&sphere(0.5), DVec3::new(2.3, 0.1, 0.2))
        .unwrap();
    assert_eq!(hits.len(), 1);
    assert!((hits[0].depth - 0.2).abs() < 1e-9, "{}", hits[0].depth);
    assert!((hits[0].direction - DVec3::X).length() < 1e-9);
    assert!(!hits[0].enclosed);
    let inside = world
        .everything()
        .overlap(&sphere(0.5), DVec3::new(1.2, 0.0, 0.3))
        .unwrap();
    assert_eq!(inside.len(), 1);
    assert!(inside[0].enclosed);
    assert!(
        (inside[0].depth - (0.8 + 0.5)).abs() < 1e-9,
        "{}",
        inside[0].depth
    );
    assert!((inside[0].direction - DVec3::X).length() < 1e-9);
    // Resting exactly on the top face is touching, not overlapping.
    assert!(
        world
            .everything()
            .overlap(&sphere(0.5), DVec3::new(0.0, 2.5, 0.0))
            .unwrap()
            .is_empty()
    );
}

/// Sweep details: started inside, all hits sorted by time, and clearance where nothing is hit.
#[test]
fn sweep_all_hits_started_inside_and_clearance() {
    let (a, at) = box_mesh(DVec3::new(3.0, 0.0, 0.0), DVec3::splat(0.5));
    let (b, bt) = box_mesh(DVec3::new(6.0, 0.0, 0.0), DVec3::splat(0.5));
    let world = LevelBuilder::new()
        .mesh("near", a, at)
        .mesh("far", b, bt)
        .world();
    let view = world.everything();
    let path = [DVec3::ZERO, DVec3::new(10.0, 0.0, 0.0)];
    let hits = view.sweep_all(&sphere(0.25), &path).unwrap();
    assert_eq!(
        hits.iter()
            .map(|h| world.name(h.object))
            .collect::<Vec<_>>(),
        ["near", "far"]
    );
    assert!((hits[0].distance - 2.25).abs() < 1e-9 && (hits[1].distance - 5.25).abs() < 1e-9);
    assert_eq!(hits[1].segment, 0);
    let inside = view
        .sweep_first(
            &sphere(0.25),
            &[DVec3::new(3.0, 0.0, 0.0), DVec3::new(3.0, 5.0, 0.0)],
        )
        .unwrap();
    assert!(inside.unwrap().started_inside);
    // Passing above both boxes at height 1.5 with radius 0.25: clearance 0.75 over the boxes' tops.
    let over = [
        DVec3::new(0.0, 1.5, 0.0),
        DVec3::new(4.0, 1.5, 0.0),
        DVec3::new(10.0, 1.5, 0.0),
    ];
    assert!(view.sweep_first(&sphere(0.25), &over).unwrap().is_none());
    let clearance = view
        .sweep_clearance(&sphere(0.25), &over, None)
        .unwrap()
        .unwrap();
    assert!(
        (clearance.distance - 0.75).abs() < 1e-7,
        "{}",
        clearance.distance
    );
    assert!((clearance.point.y - 0.5).abs() < 1e-7);
}

/// A capsule swept into a box's top edge touches it where its lower hemisphere meets the edge:
/// elementary geometry (a sphere of radius r whose centre is h above the edge's height touches it at
/// a horizontal distance √(r² − h²)); the normal points from the edge to the hemisphere's centre.
#[test]
fn capsule_meets_an_edge_exactly() {
    let (v, t) = box_mesh(DVec3::new(12.0, 1.25, 0.0), DVec3::new(2.0, 1.25, 2.0)); // top edge at x = 10, y = 2.5
    let world = LevelBuilder::new().mesh("sill", v, t).world();
    let capsule = ProbeShape::new(
        &ShapeSpec::Capsule {
            radius: 0.35,
            half_height: 0.55,
        },
        DQuat::IDENTITY,
    )
    .unwrap();
    let hit = world
        .everything()
        .sweep_first(
            &capsule,
            &[DVec3::new(5.0, 3.1, 0.3), DVec3::new(14.0, 3.1, 0.3)],
        )
        .unwrap()
        .expect("the edge is met");
    let reach = (0.35f64 * 0.35 - 0.05 * 0.05).sqrt();
    assert!(
        (hit.position.x - (10.0 - reach)).abs() < 1e-6,
        "{:?}",
        hit.position
    );
    assert!(
        (hit.point - DVec3::new(10.0, 2.5, 0.3)).length() < 1e-6,
        "{:?}",
        hit.point
    );
    let expected = DVec3::new(-reach, 0.05, 0.0) / 0.35;
    assert!(
        (hit.normal - expected).length() < 1e-6,
        "{:?} vs {expected:?}",
        hit.normal
    );
}

#[test]
fn a_turned_box_is_exactly_as_far_from_a_wall_as_its_nearest_corner() {
    // Elementary geometry: a 4 × 0.2 × 0.2 m box turned by θ about the vertical has its nearest
    // corner (2, ±0.1, −0.1) at z = −(2 sin θ + 0.1 cos θ); a wall whose face is the plane z = −1.5
    // (10 m wide, so its own corners are far off) is 1.5 − (2 sin θ + 0.1 cos θ) away. A support
    // point of the separating axis (a far corner of one of the wall's big triangles) once gave up to
    // 0.6 m more.
    let (v, t) = box_mesh(DVec3::new(0.0, 0.0, -2.25), DVec3::new(5.0, 1.0, 0.75));
    let world = LevelBuilder::new().mesh("wall", v, t).world();
    let spec = ShapeSpec::Box {
        half_extents: [2.0, 0.1, 0.1],
    };
    for degrees in [0.0, 10.0, 30.0, 44.0] {
        let theta = f64::to_radians(degrees);
        let shape = ProbeShape::new(&spec, DQuat::from_rotation_y(theta)).unwrap();
        let hit = world
            .everything()
            .closest(ClosestProbe::Shape(&shape), DVec3::ZERO, 8.0)
            .unwrap()
            .expect("the wall is within reach");
        let expected = 1.5 - (2.0 * theta.sin() + 0.1 * theta.cos());
        assert!(
            (hit.distance - expected).abs() < 1e-9,
            "{degrees}°: {} vs {expected}",
            hit.distance
        );
    }
}
