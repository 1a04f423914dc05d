//! Whole-level checks — rules over tagged objects, rests, sightline matrices and coverage — against
//! analytic answers and brute force.

use std::path::Path;

use glam::{DQuat, DVec3};
use plumbline_core::check::{Aspect, Hits, Verdict, answer_probe, changes, expand_rules};
use plumbline_core::level::Primitive;
use plumbline_core::probe::{ProbeSet, parse_probe_set};
use plumbline_core::query::{SURFACE_LIFT, World};

use super::common::{LevelBuilder, box_at, box_mesh};

/// A probe set of `probes` and `rules` (JSON arrays as text) for a level called `level.json`.
fn set(probes: &str, rules: &str) -> ProbeSet {
    let text = format!(
        r#"{{"plumbline": "probes", "version": 1, "level": "level.json",
            "probes": {probes}, "rules": {rules}}}"#
    );
    parse_probe_set(Path::new("test.probes.json"), &text).expect("a valid probe set")
}

/// Every probe of `set` (its own and its rules') answered on `world`, as (id, verdict, hits).
fn answers(world: &World, set: &ProbeSet) -> Vec<(String, Verdict, Hits, String)> {
    let mut probes = set.probes.clone();
    probes.extend(expand_rules(&set.rules, world));
    probes
        .iter()
        .map(|p| {
            let r = answer_probe(world, p);
            (r.id.to_string(), r.verdict, r.hits, r.reason.into_owned())
        })
        .collect()
}

fn floor() -> LevelBuilder {
    let (v, t) = box_mesh(DVec3::new(0.0, -0.5, 0.0), DVec3::new(20.0, 0.5, 20.0));
    LevelBuilder::new().mesh("floor", v, t).tagged(&["ground"])
}

fn rest_gap(hits: &Hits) -> Option<(String, f64)> {
    match hits {
        Hits::Rest(h) => h.first().map(|r| (r.object.to_string(), r.gap)),
        _ => panic!("not a rest answer"),
    }
}

// ---------------------------------------------------------------- rests

#[test]
fn a_box_above_a_floor_rests_with_its_exact_gap_and_a_sunk_sphere_by_its_depth() {
    // Analytic: a 0.6 m cube centred 0.5 m up has its bottom 0.2 m above the floor; a sphere of
    // radius 0.5 centred 0.4 m up reaches 0.1 m below it.
    let world = box_at(floor(), "crate", DVec3::new(2.0, 0.5, 0.0), 0.3)
        .tagged(&["prop"])
        .primitive(
            "ball",
            Primitive::Sphere { radius: 0.5 },
            DVec3::new(-3.0, 0.4, 1.0),
            DQuat::IDENTITY,
        )
        .tagged(&["prop"])
        .world();
    let set = set(
        "[]",
        r#"[{"id": "props-rest", "objects": {"tags": ["prop"]}, "rests": {"max_gap": 0.05}}]"#,
    );
    let got = answers(&world, &set);
    assert_eq!(got.len(), 2);
    assert_eq!(got[0].0, "props-rest/crate");
    let (support, gap) = rest_gap(&got[0].2).unwrap();
    assert_eq!(support, "floor");
    assert!((gap - 0.2).abs() < 1e-9, "gap {gap}");
    assert_eq!(
        got[0].1,
        Verdict::Fail,
        "0.2 m is more than the 5 cm allowed"
    );
    let (_, sunk) = rest_gap(&got[1].2).unwrap();
    assert!((sunk + 0.1).abs() < 1e-9, "gap {sunk}");
    assert_eq!(got[1].1, Verdict::Fail, "sunk 10 cm, 1 cm allowed");
    assert!(
        got[1].3.contains("sinks 0.100 m into floor"),
        "{}",
        got[1].3
    );
}

/// The gap a prop at `at` rests with over a slope of `degrees` rising along +x through the origin
/// (the plane n·X = 0 with n = (-sin θ, cos θ, 0)), and the slope's normal.
fn gap_over_slope(degrees: f64, prop: Primitive, at: DVec3) -> (f64, DVec3) {
    let angle = degrees.to_radians();
    let n = DVec3::new(-angle.sin(), angle.cos(), 0.0);
    let world = LevelBuilder::new()
        .primitive(
            "slope",
            Primitive::Box {
                half_extents: DVec3::new(10.0, 0.5, 10.0),
            },
            -n * 0.5,
            DQuat::from_rotation_z(angle),
        )
        .primitive("prop", prop, at, DQuat::IDENTITY)
        .tagged(&["prop"])
        .world();
    let set = set(
        "[]",
        r#"[{"id": "rest", "objects": {"tags": ["prop"]}, "rests": {}}]"#,
    );
    let got = answers(&world, &set);
    let (support, gap) = rest_gap(&got[0].2).unwrap();
    assert_eq!(support, "slope");
    (gap, n)
}

#[test]
fn a_sphere_over_a_slope_drops_to_the_moving_sphere_plane_contact() {
    // Ericson, Real-Time Collision Detection (2005), §5.5.3 "Intersecting moving sphere against
    // plane": a sphere of radius r moving by v meets the plane n·X = d at t = (r - (n·C - d)) / (-n·v).
    // Here a slope of 25° rises along +x; the sphere moves straight down.
    let c = DVec3::new(1.5, 2.0, 0.3);
    let (gap, n) = gap_over_slope(25.0, Primitive::Sphere { radius: 0.4 }, c);
    let expected = (n.dot(c) - 0.4) / n.dot(DVec3::Y);
    assert!(
        (gap - expected).abs() < 1e-9,
        "gap {gap}, expected {expected}"
    );
}

#[test]
fn a_prop_with_nothing_below_and_a_wall_beside_it_has_no_support() {
    // A wall face beside the prop is not a support (it faces sideways): common practice.
    let (v, t) = box_mesh(DVec3::new(1.0, 2.0, 0.0), DVec3::new(0.5, 2.0, 2.0));
    let world = box_at(
        LevelBuilder::new().mesh("wall", v, t),
        "crate",
        DVec3::new(0.2, 1.0, 0.0),
        0.3,
    )
    .tagged(&["prop"])
    .world();
    let set = set(
        "[]",
        r#"[{"id": "rest", "objects": {"tags": ["prop"]}, "rests": {}}]"#,
    );
    let got = answers(&world, &set);
    assert_eq!(rest_gap(&got[0].2), None);
    assert_eq!(got[0].1, Verdict::Fail);
    assert!(got[0].3.contains("nothing below"), "{}", got[0].3);
}

// ---------------------------------------------------------------- rules

#[test]
fn rules_expand_to_one_probe_per_selected_object_in_level_order_the_same_every_time() {
    let mut builder = floor();
    for k in [3, 1, 2] {
        builder = builder
            .primitive(
                &format!("spawn-{k}"),
                Primitive::Sphere { radius: 0.1 },
                DVec3::new(k as f64 * 3.0, 0.1, 0.0),
                DQuat::IDENTITY,
            )
            .tagged(&["spawn"]);
    }
    let world = builder.world();
    let set = set(
        "[]",
        r#"[{"id": "spawns-clear", "label": "Spawns start in the open",
             "objects": {"tags": ["spawn"], "match": "spawn-?"},
             "clear": {"shape": {"type": "capsule", "radius": 0.3, "half_height": 0.6},
                       "at": {"anchor": "bottom", "offset": [0, 0.92, 0]}}}]"#,
    );
    let first = expand_rules(&set.rules, &world);
    let ids: Vec<&str> = first.iter().map(|p| &*p.id).collect();
    assert_eq!(
        ids,
        [
            "spawns-clear/spawn-3",
            "spawns-clear/spawn-1",
            "spawns-clear/spawn-2"
        ]
    );
    assert_eq!(expand_rules(&set.rules, &world), first, "deterministic");
    assert_eq!(
        first[1].label.as_deref(),
        Some("Spawns start in the open: spawn-1")
    );
    // The capsule stands on the spawn's bottom: its lowest point 0.92 - 0.9 = 0.02 m above the floor.
    let got = answers(&world, &set);
    assert!(got.iter().all(|a| a.1 == Verdict::Pass), "{got:?}");
}

#[test]
fn a_rule_that_selects_nothing_is_an_error_naming_the_selection() {
    // A tag renamed in the level must not let its rule pass silently.
    let world = box_at(floor(), "crate", DVec3::new(2.0, 0.3, 0.0), 0.3)
        .tagged(&["props"])
        .world();
    let set = set(
        "[]",
        r#"[{"id": "props-rest", "objects": {"tags": ["prop"]}, "rests": {}}]"#,
    );
    let got = answers(&world, &set);
    assert_eq!(got.len(), 1);
    assert_eq!(got[0].0, "props-rest");
    assert_eq!(got[0].1, Verdict::Error);
    assert!(got[0].3.contains("objects tagged prop"), "{}", got[0].3);
}

#[test]
fn a_rule_probe_template_is_anchored_on_each_object() {
    // A ray from 1.7 m above each tower's top to a gate; the tower itself does not block.
    let (wv, wt) = box_mesh(DVec3::new(5.0, 2.0, 0.0), DVec3::new(0.2, 2.0, 3.0));
    let world = floor()
        .mesh("wall", wv, wt)
        .primitive(
            "tower-west",
            Primitive::Box {
                half_extents: DVec3::new(0.5, 1.0, 0.5),
            },
            DVec3::new(0.0, 1.0, 0.0),
            DQuat::IDENTITY,
        )
        .tagged(&["lookout"])
        .primitive(
            "tower-north",
            Primitive::Box {
                half_extents: DVec3::new(0.5, 1.0, 0.5),
            },
            DVec3::new(0.0, 1.0, 8.0),
            DQuat::IDENTITY,
        )
        .tagged(&["lookout"])
        .world();
    let set = set(
        "[]",
        r#"[{"id": "see-gate", "objects": {"tags": ["lookout"]},
             "probe": {"kind": "ray", "from": {"anchor": "top", "offset": [0, 1.7, 0]},
                       "to": [10, 1.0, 0], "expect": "clear"}}]"#,
    );
    let probes = expand_rules(&set.rules, &world);
    assert_eq!(probes[0].query.points()[0], DVec3::new(0.0, 3.7, 0.0));
    let got = answers(&world, &set);
    assert_eq!(got[0].1, Verdict::Fail, "the wall stands between");
    assert_eq!(
        got[1].1,
        Verdict::Pass,
        "from z = 8 the ray passes the wall's end"
    );
}

// ---------------------------------------------------------------- sightlines

/// Spots on both sides of a wall.
fn walled_yard() -> (World, ProbeSet) {
    let (wv, wt) = box_mesh(DVec3::new(0.0, 1.5, 0.0), DVec3::new(0.15, 1.5, 4.0));
    let world = floor().mesh("wall", wv, wt).world();
    let set = set(
        r#"[{"id": "posts", "kind": "sightlines", "spots": [
              {"name": "w1", "at": [-3, 1.7, -1]}, {"name": "w2", "at": [-3, 1.7, 2]},
              {"name": "e1", "at": [3, 1.7, 0]}, {"name": "far", "at": [3, 1.7, 9]},
              {"name": "high", "at": [0, 5.0, 0]}],
            "expect": {"see": [["w1", "w2"]], "blind": [["w1", "e1"]]}}]"#,
        "[]",
    );
    (world, set)
}

#[test]
fn a_sightline_matrix_is_symmetric_and_walls_block_where_geometry_says() {
    let (world, set) = walled_yard();
    let got = answers(&world, &set);
    let Hits::Sightlines(pairs) = &got[0].2 else {
        panic!("sightlines")
    };
    assert_eq!(pairs.len(), 10, "5 spots, 10 pairs");
    assert_eq!(got[0].1, Verdict::Pass, "{}", got[0].3);
    // Brute force: each pair's segment against the wall box by the slab method (Kay & Kajiya,
    // "Ray tracing complex scenes", SIGGRAPH 1986), independent of the query core.
    let blocked_by_wall = |a: DVec3, b: DVec3| {
        let (lo, hi) = (DVec3::new(-0.15, 0.0, -4.0), DVec3::new(0.15, 3.0, 4.0));
        let d = b - a;
        let (mut t0, mut t1) = (0.0f64, 1.0f64);
        for k in 0..3 {
            if d[k].abs() < 1e-12 {
                if a[k] < lo[k] || a[k] > hi[k] {
                    return false;
                }
                continue;
            }
            let (u, v) = ((lo[k] - a[k]) / d[k], (hi[k] - a[k]) / d[k]);
            t0 = t0.max(u.min(v));
            t1 = t1.min(u.max(v));
        }
        t0 <= t1
    };
    for p in pairs {
        let (a, b) = (DVec3::from_array(p.from), DVec3::from_array(p.to));
        assert_eq!(!p.sees, blocked_by_wall(a, b), "{}-{}", p.a, p.b);
        if let Some(d) = p.distance {
            // The blocker is the wall face the segment first enters.
            let x_face = if a.x < 0.0 { -0.15 } else { 0.15 };
            let t = (x_face - a.x) / (b.x - a.x);
            assert!((d - t * a.distance(b)).abs() < 1e-9, "{}-{}", p.a, p.b);
        }
    }
    // Symmetry: the same matrix with the spots in reverse order.
    let mut reversed = set.probes[0].clone();
    if let plumbline_core::probe::ProbeQuery::Sightlines { spots } = &mut reversed.query {
        spots.points.reverse();
    }
    let Hits::Sightlines(back) = answer_probe(&world, &reversed).hits else {
        panic!("sightlines")
    };
    for p in pairs {
        let q = back
            .iter()
            .find(|q| q.a == p.b && q.b == p.a)
            .expect("the same pair");
        assert_eq!(p.sees, q.sees, "{}-{}", p.a, p.b);
    }
}

#[test]
fn a_blocked_pair_is_told_as_a_lost_sightline_between_runs() {
    let (world, set) = walled_yard();
    let before = answer_probe(&world, &set.probes[0]);
    // The wall raised to 6 m hides the high spot from both sides.
    let (wv, wt) = box_mesh(DVec3::new(0.0, 3.0, 0.0), DVec3::new(0.15, 3.0, 4.0));
    let taller = floor().mesh("wall", wv, wt).world();
    let after = answer_probe(&taller, &set.probes[0]);
    let aspects = changes(&before, &after, 0.01);
    let Some(Aspect::Sightlines { lost, gained }) = aspects
        .iter()
        .find(|a| matches!(a, Aspect::Sightlines { .. }))
    else {
        panic!("{aspects:?}")
    };
    assert!(gained.is_empty());
    assert!(lost.contains(&("w1".into(), "high".into())), "{lost:?}");
}

// ---------------------------------------------------------------- coverage

#[test]
fn an_open_floor_is_all_seen_and_its_area_is_the_grid_cells() {
    let world = floor().world();
    let set = set(
        r#"[{"id": "yard", "kind": "coverage", "spots": [{"name": "mast", "at": [0, 10, 0]}],
             "region": {"min": [-5, -1, -5], "max": [5, 2, 5]}, "spacing": 0.5,
             "expect": {"seen": {"min": 1.0}}}]"#,
        "[]",
    );
    let got = answers(&world, &set);
    let Hits::Coverage(c) = &got[0].2 else {
        panic!("coverage")
    };
    assert_eq!(c[0].points, 21 * 21);
    assert_eq!(c[0].seen, 21 * 21);
    assert!((c[0].area_seen - 441.0 * 0.25).abs() < 1e-9);
    assert_eq!(got[0].1, Verdict::Pass);
}

#[test]
fn the_shadow_of_a_wall_is_what_similar_triangles_say() {
    // A spot at height H = 4 m above x = 0 and a wall of height h = 2 m at x = 4 (long along z):
    // the floor is hidden from x = 4 to x = 4·H/(H - h) = 8 (similar triangles), every sample point
    // raised SURFACE_LIFT, which moves the far edge to where the sightline clears the wall top.
    let (wv, wt) = box_mesh(DVec3::new(4.0, 1.0, 0.0), DVec3::new(0.05, 1.0, 30.0));
    let world = floor().mesh("wall", wv, wt).world();
    let set = set(
        r#"[{"id": "yard", "kind": "coverage", "spots": [{"name": "mast", "at": [0, 4, 0]}],
             "region": {"min": [0.5, -1, -2], "max": [12, 3, 2]}, "spacing": 0.25}]"#,
        "[]",
    );
    let got = answers(&world, &set);
    let Hits::Coverage(c) = &got[0].2 else {
        panic!("coverage")
    };
    let (h_spot, h_wall, near, far_face, lift) = (4.0, 2.0, 3.95, 4.05, SURFACE_LIFT);
    // Brute force over the listed points: a floor point past the wall is hidden exactly when the
    // sightline to it is below the wall's top at the wall's far face (it descends); points inside
    // the wall's footprint are hidden, points on its top seen.
    let hidden = |p: DVec3| {
        if p.y > 1.5 || p.x < near {
            return false;
        }
        if p.x <= far_face {
            return true;
        }
        h_spot + (p.y - h_spot) * (far_face / p.x) < h_wall
    };
    for p in &c[0].seen_points {
        assert!(!hidden(DVec3::from_array(*p)), "seen {p:?}");
    }
    for p in &c[0].unseen_points {
        assert!(hidden(DVec3::from_array(*p)), "unseen {p:?}");
    }
    // Along each of the 17 rows (z = -2 to 2), floor points from the wall to
    // far_face·(H - lift)/(H - h) are hidden.
    let far = far_face * (h_spot - lift) / (h_spot - h_wall);
    let hidden_row = c[0].unseen_points.iter().filter(|p| p[2] == 0.0).count();
    let expected = (0..=46)
        .map(|k| 0.5 + 0.25 * k as f64)
        .filter(|&x| x > near && x < far)
        .count();
    assert_eq!(expected, 17);
    assert_eq!(hidden_row, expected);
    assert_eq!(c[0].unseen_points.len(), 17 * expected);
    assert_eq!(
        c[0].points,
        17 * 47 + 17,
        "every floor point and the wall's top row"
    );
}

#[test]
fn boxes_set_on_a_floor_at_known_heights_rest_float_and_sink_by_exactly_that_much() {
    // Analytic: a box of half height 0.3 centred 0.3 + g above a floor at y = 0 has a gap g (a
    // negative g is sunk). The rule allows 2 cm of gap and 1 cm of sinking.
    let mut builder = floor();
    let gaps = [0.0, 0.01, 0.3, -0.02];
    for (k, g) in gaps.iter().enumerate() {
        builder = box_at(
            builder,
            &format!("box-{k}"),
            DVec3::new(2.0 * k as f64, 0.3 + g, 0.0),
            0.3,
        )
        .tagged(&["prop"]);
    }
    let world = builder.world();
    let set = set(
        "[]",
        r#"[{"id": "rest", "objects": {"tags": ["prop"]}, "rests": {"max_gap": 0.02}}]"#,
    );
    let got = answers(&world, &set);
    for ((_, verdict, hits, reason), g) in got.iter().zip(gaps) {
        let (_, gap) = rest_gap(hits).unwrap();
        assert!((gap - g).abs() < 1e-9, "gap {gap} for {g}");
        let expected = if (-0.01..=0.02).contains(&g) {
            Verdict::Pass
        } else {
            Verdict::Fail
        };
        assert_eq!(*verdict, expected, "{reason}");
    }
}

#[test]
fn a_box_over_a_slope_drops_until_its_lowest_corner_meets_the_plane() {
    // Elementary geometry: over the plane n·X = 0 with n = (-sin θ, cos θ, 0), an unturned box of
    // half extents (hx, hy, hz) centred at c first touches with the corner that minimises n·X, at
    // signed distance n·c - hx sin θ - hy cos θ; dropping straight down covers that over cos θ.
    let angle = 20f64.to_radians();
    let (hx, hy) = (0.4, 0.25);
    let c = DVec3::new(0.7, 1.5, -0.2);
    let (gap, n) = gap_over_slope(
        20.0,
        Primitive::Box {
            half_extents: DVec3::new(hx, hy, 0.3),
        },
        c,
    );
    let expected = (n.dot(c) - hx * angle.sin() - hy * angle.cos()) / angle.cos();
    assert!(
        (gap - expected).abs() < 1e-9,
        "gap {gap}, expected {expected}"
    );
}

#[test]
fn rule_ids_stay_the_same_when_unrelated_objects_are_added() {
    let spawn = |b: LevelBuilder, name: &str, x: f64| {
        b.primitive(
            name,
            Primitive::Sphere { radius: 0.1 },
            DVec3::new(x, 0.1, 0.0),
            DQuat::IDENTITY,
        )
        .tagged(&["spawn"])
    };
    let rules = set(
        "[]",
        r#"[{"id": "clear", "objects": {"tags": ["spawn"]},
             "clear": {"shape": {"type": "sphere", "radius": 0.2}, "at": {"anchor": "top", "offset": [0, 0.3, 0]}}}]"#,
    );
    let before = spawn(spawn(floor(), "s1", 0.0), "s2", 3.0).world();
    let (wv, wt) = box_mesh(DVec3::new(9.0, 1.0, 9.0), DVec3::splat(1.0));
    let after = spawn(spawn(floor().mesh("shed", wv, wt), "s1", 0.0), "s2", 3.0).world();
    let ids = |w: &World| -> Vec<String> {
        expand_rules(&rules.rules, w)
            .into_iter()
            .map(|p| p.id.to_string())
            .collect()
    };
    assert_eq!(ids(&before), ["clear/s1", "clear/s2"]);
    assert_eq!(ids(&after), ids(&before));
    assert_eq!(
        expand_rules(&rules.rules, &before),
        expand_rules(&rules.rules, &after)
    );
}

#[test]
fn an_outline_limits_coverage_to_the_grid_points_inside_it() {
    // Brute force: count the grid points inside the triangle by barycentric signs (an independent
    // test from the crossing-number one the product uses).
    let world = floor().world();
    let set = set(
        r#"[{"id": "lot", "kind": "coverage", "spots": [{"name": "mast", "at": [0, 10, 0]}],
             "region": {"min": [-6, -1, -6], "max": [6, 2, 6],
                        "outline": [[-5.1, 0, -4.9], [5.3, 0, -5.2], [0.2, 0, 5.7]]},
             "spacing": 0.5}]"#,
        "[]",
    );
    let got = answers(&world, &set);
    let Hits::Coverage(c) = &got[0].2 else {
        panic!("coverage")
    };
    let (a, b, t) = ((-5.1, -4.9), (5.3, -5.2), (0.2, 5.7));
    let side = |p: (f64, f64), q: (f64, f64), r: (f64, f64)| {
        (q.0 - p.0) * (r.1 - p.1) - (q.1 - p.1) * (r.0 - p.0)
    };
    let mut expected = 0;
    for i in 0..=24 {
        for j in 0..=24 {
            let p = (-6.0 + 0.5 * i as f64, -6.0 + 0.5 * j as f64);
            let s = [side(a, b, p), side(b, t, p), side(t, a, p)];
            if s.iter().all(|v| *v > 0.0) || s.iter().all(|v| *v < 0.0) {
                expected += 1;
            }
        }
    }
    assert!(expected > 100);
    assert_eq!(c[0].points, expected);
    assert_eq!(c[0].seen, expected, "an open floor is all seen");
}
