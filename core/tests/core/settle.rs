//! Settle probes: a body let go on the level under gravity, simulated until it rests — checked
//! against elementary mechanics: a box on a floor stays, one dropped 0.3 m lands 0.3 m lower, a
//! sphere rolls down a 20° slope, and a box on it stays or slides as Coulomb's friction law says.

use std::f64::consts::PI;

use glam::{DQuat, DVec3};
use plumbline_core::level::{Primitive, ShapeSpec};
use plumbline_core::query::{Material, ProbeShape, SettleEnd, World};

use super::common::LevelBuilder;

/// A floor whose top is y = 0, turned `slope` degrees about z through the origin (rising towards
/// +x).
fn floor(slope: f64) -> World {
    let turn = DQuat::from_rotation_z(slope.to_radians());
    LevelBuilder::new()
        .primitive(
            "floor",
            Primitive::Box {
                half_extents: DVec3::new(40.0, 0.5, 40.0),
            },
            turn * DVec3::new(0.0, -0.5, 0.0),
            turn,
        )
        .world()
}

fn material(friction: f64) -> Material {
    Material {
        density: 500.0,
        friction,
        restitution: 0.0,
    }
}

fn cube(rotation: DQuat) -> ProbeShape {
    let spec = ShapeSpec::Box {
        half_extents: [0.25, 0.25, 0.25],
    };
    ProbeShape::new(&spec, rotation).unwrap()
}

#[test]
fn a_box_on_a_flat_floor_stays_where_it_was_put() {
    let at = DVec3::new(1.0, 0.25, 2.0);
    let rest = floor(0.0)
        .everything()
        .settle(&cube(DQuat::IDENTITY), at, material(0.5), 10.0)
        .unwrap();
    assert_eq!(rest.end, SettleEnd::Rests);
    assert!(rest.position.distance(at) <= 1e-3, "{:?}", rest.position);
    assert_eq!(rest.support, Some(0));
}

#[test]
fn a_box_let_go_0_3_m_above_the_floor_lands_0_3_m_lower() {
    let at = DVec3::new(0.0, 0.55, 0.0);
    let rest = floor(0.0)
        .everything()
        .settle(&cube(DQuat::IDENTITY), at, material(0.5), 10.0)
        .unwrap();
    assert_eq!(rest.end, SettleEnd::Rests);
    let drop = at.y - rest.position.y;
    assert!((drop - 0.3).abs() <= 0.01, "{drop}");
}

/// Where a shape of half height `h` sits on the 20° slope through the origin, and the slope's turn.
fn on_slope(h: f64) -> (DVec3, DQuat) {
    let turn = DQuat::from_rotation_z(20f64.to_radians());
    (turn * DVec3::new(0.0, h, 0.0), turn)
}

#[test]
fn a_sphere_on_a_20_degree_slope_rolls_away() {
    let world = floor(20.0);
    let ball = ProbeShape::new(&ShapeSpec::Sphere { radius: 0.25 }, DQuat::IDENTITY).unwrap();
    let (at, _) = on_slope(0.25);
    let rest = world
        .everything()
        .settle(&ball, at, material(0.6), 2.0)
        .unwrap();
    // Rolling without slipping down a slope accelerates at (5/7) g sin θ (a solid ball; any
    // introductory mechanics text): about 2.4 m/s² here, so it is still rolling after 2 s, metres away.
    assert_eq!(rest.end, SettleEnd::StillMoving);
    assert!(rest.position.distance(at) > 2.0, "{:?}", rest.position);
}

#[test]
fn a_box_on_a_20_degree_slope_stays_with_friction_0_6_and_slides_with_0_2() {
    // Coulomb friction: a block on an incline stays while μ ≥ tan θ (tan 20° ≈ 0.364; any
    // introductory mechanics text).
    let world = floor(20.0);
    let (at, turn) = on_slope(0.25);
    let box_on_slope = cube(turn);
    let stays = world
        .everything()
        .settle(&box_on_slope, at, material(0.6), 10.0)
        .unwrap();
    assert_eq!(stays.end, SettleEnd::Rests);
    assert!(stays.position.distance(at) < 0.01, "{:?}", stays.position);
    let slides = world
        .everything()
        .settle(&box_on_slope, at, material(0.2), 2.0)
        .unwrap();
    // Sliding accelerates at g (sin θ − μ cos θ) ≈ 1.51 m/s²: ½ a t² ≈ 3.0 m in 2 s (within a tenth,
    // for the simulation's 60 steps a second).
    let slid = slides.position.distance(at);
    assert!((slid - 3.02).abs() < 0.3, "{slid}");
    assert!(
        (slides.rotation.angle_between(turn)) < PI / 36.0,
        "it slides without tumbling"
    );
}

#[test]
fn a_settle_is_the_same_on_every_run_and_any_thread_count() {
    let world = floor(20.0);
    let (at, turn) = on_slope(0.25);
    let run = || {
        world
            .everything()
            .settle(&cube(turn), at, material(0.2), 1.5)
            .unwrap()
    };
    let on = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(run)
    };
    let first = run();
    assert_eq!(first, run());
    assert_eq!(first, on(1));
    assert_eq!(first, on(2));
}

#[test]
fn a_body_let_go_beyond_the_level_falls_out_of_it() {
    let rest = floor(0.0)
        .everything()
        .settle(
            &cube(DQuat::IDENTITY),
            DVec3::new(100.0, 1.0, 0.0),
            material(0.5),
            10.0,
        )
        .unwrap();
    assert_eq!(rest.end, SettleEnd::FellOut);
}

#[test]
fn a_settle_asking_to_be_followed_for_days_is_refused() {
    // Each second is 60 physics steps: a file may not ask one probe for years of work.
    let text = r#"{"plumbline": "probes", "version": 1, "level": "l.level.json", "probes": [
        {"id": "s", "kind": "settle", "shape": {"type": "sphere", "radius": 0.3},
         "at": [0, 1, 0], "max_time": 1000000}]}"#;
    let error = plumbline_core::probe::parse_probe_set(std::path::Path::new("t.probes.json"), text)
        .unwrap_err();
    assert!(error.to_string().contains("at most 600 seconds"), "{error}");
}
