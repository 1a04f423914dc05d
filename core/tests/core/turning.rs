//! Sweeps that turn along their path: against the analytic angle at which a turning plank meets a
//! wall (elementary geometry: a point at (x, z) turned by θ about the vertical goes to
//! (x cos θ + z sin θ, −x sin θ + z cos θ)), and against a fine sampling of the motion.

use std::path::Path;

use glam::{DQuat, DVec3};
use plumbline_core::check::{Hits, Verdict, answer_probe};
use plumbline_core::level::ShapeSpec;
use plumbline_core::probe::parse_probe_set;
use plumbline_core::query::{ProbeShape, TurningPath, World};

use super::common::{LevelBuilder, box_mesh};

/// A wall filling z from −3 to −1.5 m, 10 m wide and 2 m high, centred on the origin's height.
fn wall() -> LevelBuilder {
    let (v, t) = box_mesh(DVec3::new(0.0, 0.0, -2.25), DVec3::new(5.0, 1.0, 0.75));
    LevelBuilder::new().mesh("wall", v, t)
}

fn answer(world: &World, fields: &str) -> (Verdict, Hits, String) {
    let text = format!(
        r#"{{"plumbline": "probes", "version": 1, "level": "level.json",
            "probes": [{{"id": "s", "kind": "sweep", {fields}}}]}}"#
    );
    let set = parse_probe_set(Path::new("test.probes.json"), &text).expect("a valid probe set");
    let r = answer_probe(world, &set.probes[0]);
    (r.verdict, r.hits, r.reason.into_owned())
}

const PLANK: &str = r#""shape": {"type": "box", "half_extents": [2, 0.1, 0.1]}"#;

#[test]
fn a_plank_turning_in_place_meets_the_wall_at_the_analytic_angle() {
    // The corner (2, ±0.1, −0.1) reaches z = −1.5 when 2 sin θ + 0.1 cos θ = 1.5, that is
    // θ = asin(1.5 / √4.01) − atan2(0.1, 2); turning at an even rate through 90°, t = θ / 90°.
    let world = wall().world();
    let theta = (1.5 / 4.01f64.sqrt()).asin() - 0.1f64.atan2(2.0);
    for turns in [
        r#""yaw": [0, 90]"#.to_string(),
        format!(
            r#""turns": [[0, 0, 0, 1], [0, {s}, 0, {s}]]"#,
            s = std::f64::consts::FRAC_1_SQRT_2
        ),
    ] {
        let (_, hits, reason) = answer(
            &world,
            &format!(r#"{PLANK}, "path": [[0, 0, 0], [0, 0, 0]], {turns}"#),
        );
        let Hits::Sweep(hits) = hits else {
            panic!("a sweep's answer")
        };
        let hit = hits
            .first()
            .unwrap_or_else(|| panic!("meets the wall: {reason}"));
        let expected = theta / std::f64::consts::FRAC_PI_2;
        assert_eq!(&*hit.object, "wall");
        assert!(
            (hit.t - expected).abs() < 1e-5,
            "{turns}: t {} vs {expected}",
            hit.t
        );
        assert!((hit.point[2] + 1.5).abs() < 1e-5, "{:?}", hit.point);
        let q = DQuat::from_array(hit.rotation.expect("the turn at impact"));
        assert!((q.angle_between(DQuat::IDENTITY) - theta).abs() < 1e-5);
        assert!(!hit.started_inside && hit.distance == 0.0);
    }
}

#[test]
fn a_crate_carried_round_a_corner_clears_it_only_when_it_turns() {
    // A 3 m crate carried along x, then down −z past a block (x from 2.2 m, z below −0.5 m): held
    // straight its far end runs into the block; turned to face the new way on the first leg, its
    // far end stays 0.4 m short of it.
    let (v, t) = box_mesh(DVec3::new(3.6, 0.0, -3.75), DVec3::new(1.4, 1.0, 3.25));
    let world = LevelBuilder::new().mesh("corner", v, t).world();
    let crate_ = r#""shape": {"type": "box", "half_extents": [1.5, 0.3, 0.3]}"#;
    let path = r#""path": [[-4, 0, 0.5], [1.5, 0, 0.5], [1.5, 0, -6]]"#;
    let (_, straight, _) = answer(&world, &format!("{crate_}, {path}, \"expect\": \"clear\""));
    assert!(!straight.is_empty(), "held straight, it hits the corner");
    let (verdict, turned, reason) = answer(
        &world,
        &format!(r#"{crate_}, {path}, "yaw": [0, 90, 90], "expect": "clear""#),
    );
    assert!(
        matches!(&turned, Hits::Sweep(h) if h.is_empty()),
        "turned, it clears: {reason}"
    );
    assert_eq!(verdict, Verdict::Pass);
}

#[test]
fn turning_sweeps_are_never_later_than_a_fine_sampling_finds_an_overlap() {
    // Brute force: each segment sampled at 2,000 poses (the same interpolation), overlap tested at
    // each; the continuous answer is no later than the first overlapping pose and no earlier than
    // the pose before it (less the contact tolerance's worth).
    let mut builder = LevelBuilder::new();
    for (k, (x, z, r)) in [(3.0, 1.0, 0.8), (6.0, -1.0, 1.1), (9.0, 0.5, 0.9)]
        .into_iter()
        .enumerate()
    {
        let (v, t) = super::common::icosphere(DVec3::new(x, 0.0, z), r, 2);
        builder = builder.mesh(&format!("rock-{k}"), v, t);
    }
    let world = builder.world();
    let view = world.everything();
    let spec = ShapeSpec::Box {
        half_extents: [1.2, 0.2, 0.3],
    };
    let shape = ProbeShape::new(&spec, DQuat::IDENTITY).unwrap();
    for (z, spin) in [(0.0, 1.0), (1.5, -2.0), (-1.2, 3.0)] {
        let points = [DVec3::new(0.0, 0.0, z), DVec3::new(12.0, 0.0, -z)];
        let turns = [DQuat::IDENTITY, DQuat::from_rotation_y(spin)];
        let path = TurningPath {
            points: &points,
            turns: &turns,
        };
        let hit = view.sweep_turning_first(&shape, path).unwrap();
        let samples = 2000;
        let first = (0..=samples).map(|k| k as f64 / samples as f64).find(|&s| {
            let (at, turn) = path.pose(0, s);
            !view.overlap(&shape.turned(turn), at).unwrap().is_empty()
        });
        match (hit, first) {
            (Some(hit), Some(first)) => {
                assert!(hit.t <= first + 1e-12, "{} after {first}", hit.t);
                assert!(
                    hit.t >= first - 1.0 / samples as f64 - 1e-6,
                    "{} before {first}",
                    hit.t
                );
            }
            (None, None) => {}
            (hit, first) => panic!("continuous {hit:?} vs sampled {first:?}"),
        }
    }
}

#[test]
fn every_object_met_is_listed_once_in_order() {
    let mut builder = LevelBuilder::new();
    for (k, x) in [2.0, 5.0, 8.0].into_iter().enumerate() {
        let (v, t) = box_mesh(DVec3::new(x, 0.0, 1.0), DVec3::new(0.2, 1.0, 0.2));
        builder = builder.mesh(&format!("post-{k}"), v, t);
    }
    let world = builder.world();
    let (_, hits, _) = answer(
        &world,
        &format!(r#"{PLANK}, "path": [[0, 0, 0], [10, 0, 0]], "yaw": [0, 180], "hits": "all""#),
    );
    let Hits::Sweep(hits) = hits else {
        panic!("a sweep's answer")
    };
    let names: Vec<&str> = hits.iter().map(|h| &*h.object).collect();
    assert_eq!(names, ["post-0", "post-1", "post-2"]);
    assert!(hits.windows(2).all(|w| w[0].t <= w[1].t));
}

#[test]
fn turn_fields_are_checked_where_they_are_written() {
    let bad = [
        (
            r#""path": [[0, 0, 0], [1, 0, 0]], "yaw": [0]"#,
            "one orientation per path point",
        ),
        (
            r#""path": [[0, 0, 0], [1, 0, 0]], "yaw": [0, 1], "rotation": [0, 0, 0, 1]"#,
            "takes no \"rotation\"",
        ),
        (
            r#""path": [[0, 0, 0], [1, 0, 0]], "yaw": [0, 1], "clearance": true"#,
            "clearance is measured for sweeps that keep one turn",
        ),
        (
            r#""path": [[0, 0, 0], [1, 0, 0]], "turns": [[0, 0, 0, 1], [0, 0, 0, 2]]"#,
            "unit quaternions",
        ),
        (
            r#""path": [[0, 0, 0], [0, 0, 0]], "yaw": [5, 5]"#,
            "no length",
        ),
        (
            r#""path": [[0, 0, 0], [1, 0, 0]], "yaw": [0, 1], "turns": [[0, 0, 0, 1], [0, 0, 0, 1]]"#,
            "not both",
        ),
    ];
    for (fields, message) in bad {
        let text = format!(
            r#"{{"plumbline": "probes", "version": 1, "level": "level.json",
                "probes": [{{"id": "s", "kind": "sweep", {PLANK}, {fields}}}]}}"#
        );
        let error = parse_probe_set(Path::new("test.probes.json"), &text)
            .expect_err(fields)
            .to_string();
        assert!(error.contains(message), "{fields}: {error}");
    }
}
