//! Jump probes against the projectile formulas: range, apex, and first contact with a wall, from the
//! closed-form parabola (Halliday, D., Resnick, R. & Walker, J., "Fundamentals of Physics", 10th ed.,
//! 2014, ch. 4, §4-6 "Projectile motion analyzed": x = v₀ cos θ t, y = v₀ sin θ t − g t²/2,
//! horizontal range R = v₀² sin 2θ / g (eq. 4-26) and maximum height H = v₀² sin² θ / 2g).

use std::path::Path;

use glam::{DQuat, DVec3};
use plumbline_core::check::{Hits, JumpRecord, Verdict, answer_probe};
use plumbline_core::level::Primitive;
use plumbline_core::probe::{STANDARD_GRAVITY, parse_probe_set};
use plumbline_core::query::{CONTACT_TOLERANCE, World};

use super::common::{LevelBuilder, box_mesh};

const G: f64 = STANDARD_GRAVITY;
/// A ball of this radius is thrown in most tests.
const R: f64 = 0.5;

/// A flat floor whose top is at y = 0, 40 m across.
fn floor() -> LevelBuilder {
    let (v, t) = box_mesh(DVec3::new(0.0, -0.5, 0.0), DVec3::new(40.0, 0.5, 40.0));
    LevelBuilder::new().mesh("floor", v, t).tagged(&["ground"])
}

/// The answer to one jump probe given as JSON fields (after `"kind": "jump"`), with `expect` when
/// given.
fn jump(world: &World, fields: &str) -> (Verdict, Option<JumpRecord>, String) {
    let text = format!(
        r#"{{"plumbline": "probes", "version": 1, "level": "level.json",
            "probes": [{{"id": "j", "kind": "jump", {fields}}}]}}"#
    );
    let set = parse_probe_set(Path::new("test.probes.json"), &text).expect("a valid probe set");
    let result = answer_probe(world, &set.probes[0]);
    let Hits::Jump(hits) = result.hits else {
        panic!("a jump answer")
    };
    (
        result.verdict,
        hits.into_iter().next(),
        result.reason.into_owned(),
    )
}

fn ball() -> &'static str {
    r#""shape": {"type": "sphere", "radius": 0.5}"#
}

#[test]
fn a_ball_thrown_from_the_floor_lands_at_the_textbook_range() {
    // Launched touching the floor (centre at R), it lands when the centre is back at R: the range
    // and flight time of eq. 4-26 with launch and landing at one height.
    let world = floor().world();
    for (speed, degrees) in [(6.0, 45.0), (8.0, 30.0), (5.0, 70.0)] {
        let theta = f64::to_radians(degrees);
        let (vx, vy) = (speed * theta.cos(), speed * theta.sin());
        let (_, hit, reason) = jump(
            &world,
            &format!(
                r#"{}, "from": [0, {R}, 0], "velocity": [{vx}, {vy}, 0]"#,
                ball()
            ),
        );
        let hit = hit.unwrap_or_else(|| panic!("lands ({reason})"));
        let range = speed * speed * (2.0 * theta).sin() / G;
        let height = (speed * theta.sin()).powi(2) / (2.0 * G);
        assert_eq!(&*hit.object, "floor");
        assert!(
            (hit.distance - range).abs() < 1e-5,
            "{} vs {range}",
            hit.distance
        );
        assert!((hit.time - 2.0 * vy / G).abs() < 1e-5, "{} s", hit.time);
        assert!(
            (hit.apex - height).abs() < 1e-9,
            "apex {} vs {height}",
            hit.apex
        );
        assert!(hit.walkable && hit.slope.abs() < 1e-6);
        assert!(hit.rise.abs() < 1e-5);
    }
}

#[test]
fn a_ceiling_just_below_the_apex_is_hit_and_one_just_above_is_not() {
    // The continuous sweep meets the ceiling at the top of the arc, where a sampled one could step
    // over it: H = v² sin² θ / 2g above the launch.
    let (vx, vy) = (2.0, 5.0);
    let top = R + vy * vy / (2.0 * G) + R;
    for (gap, touches) in [(-1e-4, true), (1e-4, false)] {
        let (v, t) = box_mesh(
            DVec3::new(0.0, top + gap + 0.5, 0.0),
            DVec3::new(40.0, 0.5, 40.0),
        );
        let world = floor().mesh("ceiling", v, t).world();
        let (_, hit, _) = jump(
            &world,
            &format!(
                r#"{}, "from": [0, {R}, 0], "velocity": [{vx}, {vy}, 0]"#,
                ball()
            ),
        );
        let hit = hit.expect("lands somewhere");
        assert_eq!(&*hit.object == "ceiling", touches, "gap {gap}: {hit:?}");
        if touches {
            // Near the apex time v sin θ / g, just before it.
            assert!((hit.time - vy / G).abs() < 0.01 && hit.time < vy / G);
            assert!(!hit.walkable, "a ceiling is no ground");
        }
    }
}

#[test]
fn a_wall_is_met_where_the_parabola_reaches_it() {
    // A wall's face at x = 4: the ball's side reaches it when its centre is at x = 4 − R, at
    // t = (4 − R) / vx, with the centre at the height of the closed-form parabola then.
    let (v, t) = box_mesh(DVec3::new(4.5, 5.0, 0.0), DVec3::new(0.5, 5.0, 10.0));
    let world = floor().mesh("wall", v, t).world();
    let (vx, vy) = (4.0, 6.0);
    let (_, hit, _) = jump(
        &world,
        &format!(
            r#"{}, "from": [0, 1, 0], "velocity": [{vx}, {vy}, 0]"#,
            ball()
        ),
    );
    let hit = hit.expect("meets the wall");
    let time = (4.0 - R) / vx;
    let height = 1.0 + vy * time - G * time * time / 2.0;
    assert_eq!(&*hit.object, "wall");
    assert!((hit.time - time).abs() < 1e-5, "{} vs {time}", hit.time);
    assert!((hit.position[1] - height).abs() < 1e-4);
    assert!((hit.point[0] - 4.0).abs() < CONTACT_TOLERANCE * 2.0);
    assert!((hit.slope - 90.0).abs() < 1e-6 && !hit.walkable);
}

#[test]
fn a_jump_aimed_at_a_target_with_an_apex_comes_down_through_it() {
    // From the floor to a platform 2 m up and 6 m on, rising 3 m: the ball's centre passes through
    // the target, which sits exactly where it touches the platform's top.
    let (v, t) = box_mesh(DVec3::new(9.0, 1.0, 0.0), DVec3::new(4.0, 1.0, 4.0));
    let world = floor().mesh("platform", v, t).world();
    let (verdict, hit, reason) = jump(
        &world,
        &format!(
            r#"{}, "from": [0, {R}, 0], "to": [6, {}, 0], "apex": 3,
               "expect": {{"first_object": "platform", "walkable": true,
                           "lands_within": {{"min": [5, 0, -1], "max": [7, 4, 1]}}}}"#,
            ball(),
            2.0 + R
        ),
    );
    let hit = hit.expect("lands on the platform");
    assert_eq!(verdict, Verdict::Pass, "{reason}");
    assert!((DVec3::from(hit.position) - DVec3::new(6.0, 2.0 + R, 0.0)).length() < 1e-5);
    assert!((hit.apex - 3.0).abs() < 1e-9);
    assert!((hit.rise - 2.0).abs() < 1e-5);
}

#[test]
fn a_steep_bank_is_no_landing_for_a_character() {
    // A 60° bank (elementary geometry: its normal is 60° from up).
    let bank = DQuat::from_rotation_z(f64::to_radians(60.0));
    let world = floor()
        .primitive(
            "bank",
            Primitive::Box {
                half_extents: DVec3::new(3.0, 0.2, 3.0),
            },
            DVec3::new(5.0, 2.0, 0.0),
            bank,
        )
        .world();
    let (verdict, hit, reason) = jump(
        &world,
        &format!(
            r#"{}, "from": [0, {R}, 0], "velocity": [5, 6, 0], "expect": {{"walkable": true}}"#,
            ball()
        ),
    );
    let hit = hit.expect("meets the bank");
    assert_eq!(&*hit.object, "bank");
    assert!((hit.slope - 60.0).abs() < 1e-6, "{}", hit.slope);
    assert!(!hit.walkable);
    assert_eq!(verdict, Verdict::Fail);
    assert!(
        reason.contains("Expected a landing on walkable ground"),
        "{reason}"
    );
    // The same bank with a 65° limit is walkable.
    let (_, hit, _) = jump(
        &world,
        &format!(
            r#"{}, "from": [0, {R}, 0], "velocity": [5, 6, 0], "max_slope": 65"#,
            ball()
        ),
    );
    assert!(hit.unwrap().walkable);
}

#[test]
fn straight_up_it_comes_back_down_on_the_ground_it_left_even_from_a_tiny_hop() {
    // A vertical throw returns after 2v/g (the speed is zero at the top, where the advancement must
    // still move on); a hop lower than the launch skin still lands on the floor it left.
    let world = floor().world();
    for speed in [3.0, 0.05] {
        let (_, hit, reason) = jump(
            &world,
            &format!(
                r#"{}, "from": [1, {R}, 2], "velocity": [0, {speed}, 0]"#,
                ball()
            ),
        );
        let hit = hit.unwrap_or_else(|| panic!("lands ({reason})"));
        assert_eq!(&*hit.object, "floor");
        assert!(
            (hit.time - 2.0 * speed / G).abs() < 1e-5,
            "{speed}: {} s",
            hit.time
        );
        assert!(hit.distance < 1e-9);
    }
}

#[test]
fn a_throw_into_the_floor_or_from_inside_a_rock_lands_at_once() {
    let world = floor()
        .primitive(
            "rock",
            Primitive::Sphere { radius: 1.0 },
            DVec3::new(10.0, 1.0, 0.0),
            DQuat::IDENTITY,
        )
        .world();
    let (_, hit, reason) = jump(
        &world,
        &format!(r#"{}, "from": [0, {R}, 0], "velocity": [3, -1, 0]"#, ball()),
    );
    let hit = hit.expect("lands at once");
    assert!(hit.started_inside && hit.time == 0.0, "{hit:?}");
    assert!(reason.starts_with("Starts inside floor"), "{reason}");
    let (_, hit, _) = jump(
        &world,
        &format!(r#"{}, "from": [10, 1.2, 0], "velocity": [3, 3, 0]"#, ball()),
    );
    assert!(hit.unwrap().started_inside);
}

#[test]
fn off_the_edge_of_the_world_it_lands_nowhere_and_an_unreachable_target_is_an_error() {
    let (v, t) = box_mesh(DVec3::new(0.0, -0.5, 0.0), DVec3::new(2.0, 0.5, 2.0));
    let world = LevelBuilder::new().mesh("ledge", v, t).world();
    let (verdict, hit, reason) = jump(
        &world,
        &format!(
            r#"{}, "from": [0, {R}, 0], "velocity": [5, 3, 0], "expect": "clear""#,
            ball()
        ),
    );
    assert!(hit.is_none());
    assert_eq!(verdict, Verdict::Pass, "{reason}");
    assert!(reason.contains("lands nowhere"), "{reason}");
    let (verdict, _, reason) = jump(
        &world,
        &format!(
            r#"{}, "from": [0, 1, 0], "to": [3, 5, 0], "apex": 2"#,
            ball()
        ),
    );
    assert_eq!(verdict, Verdict::Error);
    assert!(
        reason.contains("apex must be higher than its target"),
        "{reason}"
    );
}

#[test]
fn jump_fields_are_checked_where_they_are_written() {
    let bad = [
        (
            r#""from": [0, 1, 0]"#,
            r#"needs "velocity", or "to" and "apex""#,
        ),
        (
            r#""from": [0, 1, 0], "velocity": [1, 1, 0], "to": [1, 1, 1], "apex": 2"#,
            "not both",
        ),
        (
            r#""from": [0, 1, 0], "to": [1, 1, 1]"#,
            r#"needs "apex" too"#,
        ),
        (
            r#""from": [0, 1, 0], "velocity": [1, 1, 0], "gravity": -9.8"#,
            "gravity must be a positive number",
        ),
        (
            r#""from": [0, 1, 0], "velocity": [1, 1, 0], "max_slope": 95"#,
            "max_slope must be an angle from 0 to 90",
        ),
        (
            r#""from": [0, 1, 0], "velocity": [1, 1, 0], "at": [0, 0, 0]"#,
            r#"field "at" does not apply to a jump probe"#,
        ),
    ];
    for (fields, message) in bad {
        let text = format!(
            r#"{{"plumbline": "probes", "version": 1, "level": "level.json",
                "probes": [{{"id": "j", "kind": "jump", {}, {fields}}}]}}"#,
            ball()
        );
        let error = parse_probe_set(Path::new("test.probes.json"), &text)
            .expect_err(fields)
            .to_string();
        assert!(error.contains(message), "{fields}: {error}");
        assert!(error.contains("test.probes.json: line 2,"), "{error}");
    }
}

#[test]
fn the_landing_is_never_later_than_a_fine_sampling_finds_an_overlap_nor_much_earlier() {
    // Brute force: the capsule placed every 0.1 ms along the closed-form parabola, overlap tested
    // at each place. The continuous answer must come no later than the first overlapping sample
    // and no earlier than the sample before it (less the contact tolerance's worth of time).
    use plumbline_core::level::ShapeSpec;
    use plumbline_core::query::{ProbeShape, Trajectory};
    let mut builder = floor();
    for (k, (x, z, r)) in [
        (3.0, 0.5, 0.8),
        (5.0, -1.0, 1.1),
        (7.5, 0.8, 0.7),
        (4.0, 2.5, 1.3),
    ]
    .into_iter()
    .enumerate()
    {
        let (v, t) = super::common::icosphere(DVec3::new(x, r * 0.6, z), r, 2);
        builder = builder.mesh(&format!("rock-{k}"), v, t);
    }
    let world = builder.world();
    let spec = ShapeSpec::Capsule {
        radius: 0.3,
        half_height: 0.6,
    };
    let shape = ProbeShape::new(&spec, DQuat::IDENTITY).unwrap();
    let view = world.everything();
    let mut landed_on_rocks = 0;
    for (vx, vy, vz) in [
        (4.0, 5.0, 0.0),
        (6.0, 3.0, 0.2),
        (3.0, 7.0, -0.3),
        (8.0, 2.0, 0.5),
    ] {
        let arc = Trajectory {
            from: DVec3::new(0.0, 1.0, 0.0),
            velocity: DVec3::new(vx, vy, vz),
            gravity: DVec3::new(0.0, -G, 0.0),
        };
        let hit = view.jump(&shape, &arc, 5.0, -10.0).unwrap().expect("lands");
        let dt = 1e-4;
        let first = (0..50_000)
            .map(|k| k as f64 * dt)
            .find(|&t| !view.overlap(&shape, arc.at(t)).unwrap().is_empty())
            .expect("the sampling finds the overlap");
        assert!(hit.time <= first + 1e-12, "{} after {first}", hit.time);
        assert!(
            hit.time >= first - dt - 1e-6,
            "{} long before {first}",
            hit.time
        );
        if hit.object != world.everything().world().tagged(&["ground".into()])[0] {
            landed_on_rocks += 1;
        }
    }
    assert!(
        landed_on_rocks >= 2,
        "the arcs meet rocks, not only the floor"
    );
}
