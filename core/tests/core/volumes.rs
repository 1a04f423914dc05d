//! Volumes: they block nothing, and probes report entering, leaving and being inside them — checked
//! against the analytic entry and exit of segments with spheres and boxes, capsules swept through
//! boxes, a jump's parabola, grazing paths and nested volumes; and the expectations on them.

use std::path::Path;

use glam::{DQuat, DVec3};
use plumbline_core::check::{Verdict, VolumeCrossing, answer_probe, parse_results};
use plumbline_core::level::{Primitive, ShapeSpec};
use plumbline_core::probe::parse_probe_set;
use plumbline_core::query::{Crossing, Mover, ProbeShape, Trajectory, World};

use super::common::LevelBuilder;

/// A level of one wall (x from 10 to 11) and the given volumes, tagged `volume` and `extra`.
fn level(volumes: &[(&str, Primitive, DVec3, &[&str])]) -> World {
    let mut b = LevelBuilder::new().primitive(
        "wall",
        Primitive::Box {
            half_extents: DVec3::new(0.5, 5.0, 5.0),
        },
        DVec3::new(10.5, 0.0, 0.0),
        DQuat::IDENTITY,
    );
    for (name, shape, at, tags) in volumes {
        let mut all = vec!["volume"];
        all.extend_from_slice(tags);
        b = b
            .primitive(name, shape.clone(), *at, DQuat::IDENTITY)
            .tagged(&all);
    }
    b.world()
}

fn cube(half: f64) -> Primitive {
    Primitive::Box {
        half_extents: DVec3::splat(half),
    }
}

fn capsule() -> ProbeShape {
    let spec = ShapeSpec::Capsule {
        radius: 0.35,
        half_height: 0.55,
    };
    ProbeShape::new(&spec, DQuat::IDENTITY).unwrap()
}

/// Entry and exit of the segment `p + t d` (t in 0..1) with the sphere `c`, `r`: the roots of
/// |p + t d − c|² = r² (Ericson, Real-Time Collision Detection, 2005, §5.3.2).
fn segment_sphere(p: DVec3, d: DVec3, c: DVec3, r: f64) -> (f64, f64) {
    let m = p - c;
    let (a, b, k) = (d.dot(d), m.dot(d), m.dot(m) - r * r);
    let root = (b * b - a * k).sqrt();
    ((-b - root) / a, (-b + root) / a)
}

/// Entry and exit of the segment `p + t d` with the box `lo`–`hi`: the slab test (Ericson, §5.3.3).
fn segment_box(p: DVec3, d: DVec3, lo: DVec3, hi: DVec3) -> (f64, f64) {
    let (mut t0, mut t1) = (f64::NEG_INFINITY, f64::INFINITY);
    for k in 0..3 {
        let (a, b) = ((lo[k] - p[k]) / d[k], (hi[k] - p[k]) / d[k]);
        t0 = t0.max(a.min(b));
        t1 = t1.min(a.max(b));
    }
    (t0, t1)
}

/// The (entry, exit) metres of the events of one volume.
fn entry_exit(events: &[plumbline_core::query::VolumeEvent]) -> (f64, f64) {
    assert_eq!(events.len(), 2, "{events:?}");
    assert_eq!(events[0].crossing, Crossing::Enter);
    assert_eq!(events[1].crossing, Crossing::Exit);
    (events[0].at, events[1].at)
}

#[test]
fn a_ray_enters_and_leaves_a_ball_where_the_quadratic_says() {
    let (c, r) = (DVec3::new(4.0, 0.3, -0.2), 1.5);
    let world = level(&[("ball", Primitive::Sphere { radius: r }, c, &[])]);
    let (p, q) = (DVec3::new(0.0, 0.0, 0.0), DVec3::new(9.0, 1.0, 0.5));
    let events = world
        .everything()
        .volume_events(Mover::Point, &[p, q])
        .unwrap();
    let (t0, t1) = segment_sphere(p, q - p, c, r);
    let (m0, m1) = entry_exit(&events);
    let length = p.distance(q);
    assert!((m0 - t0 * length).abs() < 1e-9, "{m0} vs {}", t0 * length);
    assert!((m1 - t1 * length).abs() < 1e-9, "{m1} vs {}", t1 * length);
    assert!(events[0].point.distance(p + (q - p) * t0) < 1e-9);
}

#[test]
fn a_ray_enters_and_leaves_a_box_where_the_slab_test_says() {
    let world = level(&[("zone", cube(1.0), DVec3::new(5.0, 0.5, 0.0), &[])]);
    let (lo, hi) = (DVec3::new(4.0, -0.5, -1.0), DVec3::new(6.0, 1.5, 1.0));
    for (p, q) in [
        (DVec3::new(0.0, 0.0, 0.0), DVec3::new(9.0, 1.0, 0.5)),
        (DVec3::new(3.0, 3.0, -2.0), DVec3::new(7.0, -1.0, 1.7)),
    ] {
        let events = world
            .everything()
            .volume_events(Mover::Point, &[p, q])
            .unwrap();
        let (t0, t1) = segment_box(p, q - p, lo, hi);
        let (m0, m1) = entry_exit(&events);
        let length = p.distance(q);
        assert!((m0 - t0 * length).abs() < 1e-9, "{m0} vs {}", t0 * length);
        assert!((m1 - t1 * length).abs() < 1e-9, "{m1} vs {}", t1 * length);
    }
}

#[test]
fn volumes_block_nothing() {
    let world = level(&[("zone", cube(1.0), DVec3::new(5.0, 0.0, 0.0), &[])]);
    let view = world.everything();
    // The ray passes through the volume to the wall behind it.
    let hit = view
        .ray_first(DVec3::ZERO, DVec3::new(20.0, 0.0, 0.0))
        .unwrap()
        .expect("the wall");
    assert_eq!(world.name(hit.object), "wall");
    // A capsule inside the volume overlaps nothing, and sweeps through it to the wall.
    let at = DVec3::new(5.0, 0.0, 0.0);
    assert!(view.overlap(&capsule(), at).unwrap().is_empty());
    let swept = view
        .sweep_first(&capsule(), &[at, DVec3::new(20.0, 0.0, 0.0)])
        .unwrap()
        .expect("the wall");
    assert_eq!(world.name(swept.object), "wall");
    // And the volumes a placed shape is in are named.
    let inside = view.volumes_at(Mover::Shape(&capsule()), at).unwrap();
    assert_eq!(inside, vec![1]);
}

#[test]
fn a_capsule_swept_through_a_box_enters_and_leaves_a_radius_outside_its_faces() {
    // Elementary geometry: moving along x, the capsule (radius 0.35) first touches the face x = 4
    // when its centre is at 4 − 0.35, and last touches the face x = 6 at 6 + 0.35.
    let world = level(&[("zone", cube(1.0), DVec3::new(5.0, 0.0, 0.0), &[])]);
    let (p, q) = (DVec3::new(0.0, 0.2, 0.3), DVec3::new(9.0, 0.2, 0.3));
    let events = world
        .everything()
        .volume_events(Mover::Shape(&capsule()), &[p, q])
        .unwrap();
    let (m0, m1) = entry_exit(&events);
    assert!((m0 - 3.65).abs() < 1e-9, "{m0}");
    assert!((m1 - 6.35).abs() < 1e-9, "{m1}");
}

#[test]
fn a_path_that_grazes_a_volume_enters_and_leaves_it_at_the_same_place() {
    // A ball of radius 0.5 passing with its centre 1.5 from a ball volume's centre (radius 1): they
    // touch at the closest approach only (touching counts as inside).
    let world = level(&[(
        "orb",
        Primitive::Sphere { radius: 1.0 },
        DVec3::new(5.0, 0.0, 0.0),
        &[],
    )]);
    let ball = ProbeShape::new(&ShapeSpec::Sphere { radius: 0.5 }, DQuat::IDENTITY).unwrap();
    let path = [DVec3::new(0.0, 1.5, 0.0), DVec3::new(9.0, 1.5, 0.0)];
    let events = world
        .everything()
        .volume_events(Mover::Shape(&ball), &path)
        .unwrap();
    let (m0, m1) = entry_exit(&events);
    assert!(
        (m0 - 5.0).abs() < 1e-6 && (m1 - 5.0).abs() < 1e-6,
        "{m0} {m1}"
    );
    // A millimetre farther out it misses.
    let path = [DVec3::new(0.0, 1.501, 0.0), DVec3::new(9.0, 1.501, 0.0)];
    let events = world
        .everything()
        .volume_events(Mover::Shape(&ball), &path)
        .unwrap();
    assert!(events.is_empty(), "{events:?}");
}

#[test]
fn nested_volumes_are_entered_and_left_in_order_along_a_path_of_several_segments() {
    let world = level(&[
        ("outer", cube(2.0), DVec3::new(5.0, 0.0, 0.0), &[]),
        ("inner", cube(0.5), DVec3::new(5.0, 0.0, 0.0), &[]),
    ]);
    let path = [
        DVec3::new(0.0, 0.0, 0.0),
        DVec3::new(5.0, 0.0, 0.0),
        DVec3::new(9.0, 0.0, 0.0),
    ];
    let events = world
        .everything()
        .volume_events(Mover::Point, &path)
        .unwrap();
    let got: Vec<(&str, Crossing, f64)> = events
        .iter()
        .map(|e| (world.name(e.volume), e.crossing, (e.at * 1e6).round() / 1e6))
        .collect();
    assert_eq!(
        got,
        [
            ("outer", Crossing::Enter, 3.0),
            ("inner", Crossing::Enter, 4.5),
            ("inner", Crossing::Exit, 5.5),
            ("outer", Crossing::Exit, 7.0),
        ]
    );
    // Starting inside both: in them at the start, then out.
    let events = world
        .everything()
        .volume_events(Mover::Point, &path[1..])
        .unwrap();
    let crossings: Vec<Crossing> = events.iter().map(|e| e.crossing).collect();
    assert_eq!(
        crossings,
        [
            Crossing::Inside,
            Crossing::Inside,
            Crossing::Exit,
            Crossing::Exit
        ]
    );
}

#[test]
fn a_jump_enters_and_leaves_a_volume_when_the_parabola_says() {
    // The horizontal speed of a throw stays constant (any introductory mechanics text, e.g.
    // Halliday, Resnick & Walker, Fundamentals of Physics, ch. 4): a ball of radius 0.2 thrown along
    // x at 3 m/s enters the slab x in [2, 3] when its centre reaches x = 1.8 and leaves at x = 3.2.
    let world = level(&[(
        "slab",
        Primitive::Box {
            half_extents: DVec3::new(0.5, 50.0, 50.0),
        },
        DVec3::new(2.5, 0.0, 0.0),
        &[],
    )]);
    let ball = ProbeShape::new(&ShapeSpec::Sphere { radius: 0.2 }, DQuat::IDENTITY).unwrap();
    let arc = Trajectory {
        from: DVec3::new(0.0, 1.0, 0.0),
        velocity: DVec3::new(3.0, 4.0, 0.0),
        gravity: DVec3::new(0.0, -9.81, 0.0),
    };
    let events = world
        .everything()
        .volume_events_on_arc(&ball, &arc, 2.0)
        .unwrap();
    let (t0, t1) = entry_exit(&events);
    // Within the advancement's tolerance of a micrometre, over 3 m/s.
    assert!((t0 - 1.8 / 3.0).abs() < 1e-6, "{t0}");
    assert!((t1 - 3.2 / 3.0).abs() < 1e-6, "{t1}");
}

/// A probe set with one probe given as JSON, answered on `world`.
fn answer(world: &World, probe: &str) -> plumbline_core::check::ProbeResult {
    let text = format!(
        r#"{{"plumbline": "probes", "version": 1, "level": "level.json", "probes": [{probe}]}}"#
    );
    let set = parse_probe_set(Path::new("t.probes.json"), &text).unwrap();
    answer_probe(world, &set.probes[0])
}

#[test]
fn expectations_on_volumes_pass_and_fail_by_name_or_tag() {
    let world = level(&[
        (
            "checkpoint",
            cube(1.0),
            DVec3::new(3.0, 0.0, 0.0),
            &["gate"],
        ),
        ("pool", cube(1.0), DVec3::new(8.0, 0.0, 0.0), &["water"]),
    ]);
    let ray = |expect: &str| {
        answer(
            &world,
            &format!(
                r#"{{"id": "r", "kind": "ray", "from": [0, 0, 0], "to": [8, 0, 0], "hits": "all",
                    "expect": {expect}}}"#
            ),
        )
    };
    let passed = ray(r#"{"enters": ["checkpoint", "water"], "ends_inside": ["pool"]}"#);
    assert_eq!(passed.verdict, Verdict::Pass, "{}", passed.reason);
    assert!(
        passed
            .reason
            .contains("enters checkpoint at 2.000 m, leaves at 4.000 m; enters pool at 7.000 m"),
        "{}",
        passed.reason
    );
    let failed = ray(r#"{"never_enters": ["water"]}"#);
    assert_eq!(failed.verdict, Verdict::Fail);
    assert!(
        failed.reason.starts_with("Expected never to enter water;"),
        "{}",
        failed.reason
    );
    let failed = ray(r#"{"ends_inside": ["checkpoint"]}"#);
    assert!(
        failed
            .reason
            .starts_with("Expected to end inside checkpoint;"),
        "{}",
        failed.reason
    );
    // A first-hit ray stops at the wall; nothing beyond it is entered (the ray ends at 8 m here,
    // short of the wall, so it ends inside the pool).
    let events: Vec<(&str, VolumeCrossing)> = passed
        .volumes
        .iter()
        .map(|v| (&*v.volume, v.event))
        .collect();
    assert_eq!(
        events,
        [
            ("checkpoint", VolumeCrossing::Enter),
            ("checkpoint", VolumeCrossing::Exit),
            ("pool", VolumeCrossing::Enter),
        ]
    );
    // An overlap in the pool is in it.
    let placed = answer(
        &world,
        r#"{"id": "o", "kind": "overlap", "at": [8, 0, 0],
            "shape": {"type": "sphere", "radius": 0.3}, "expect": {"never_enters": ["water"]}}"#,
    );
    assert_eq!(placed.verdict, Verdict::Fail);
    assert!(placed.reason.contains("in pool"), "{}", placed.reason);
}

#[test]
fn volume_expectations_are_refused_where_they_do_not_apply() {
    let text = r#"{"plumbline": "probes", "version": 1, "level": "level.json", "probes": [
        {"id": "m", "kind": "sightlines", "spots": [{"name": "a", "at": [0, 0, 0]},
          {"name": "b", "at": [1, 0, 0]}], "expect": {"never_enters": ["water"]}}]}"#;
    let error = parse_probe_set(Path::new("t.probes.json"), text).unwrap_err();
    assert!(
        error.to_string().contains("apply to rays, sweeps"),
        "{error}"
    );
}

#[test]
fn volume_events_are_written_to_results_files_and_read_back() {
    use plumbline_core::check::ResultsFile;
    let world = level(&[("checkpoint", cube(1.0), DVec3::new(3.0, 0.0, 0.0), &[])]);
    let result = answer(
        &world,
        r#"{"id": "s", "kind": "sweep", "shape": {"type": "sphere", "radius": 0.25},
            "path": [[0, 0, 0], [6, 0, 0]], "duration": 3, "expect": {"enters": ["checkpoint"]}}"#,
    );
    assert_eq!(result.verdict, Verdict::Pass, "{}", result.reason);
    // Entered at 1.75 m of 6 m, over 3 s: 0.875 s.
    assert_eq!(result.volumes[0].distance, Some(1.75));
    assert_eq!(result.volumes[0].time, Some(0.875));
    let file = ResultsFile::new(
        "t.probes.json".into(),
        "level.json".into(),
        "sha256:0".into(),
        "sha256:0".into(),
        vec![result.clone()],
    );
    let text = file.to_json();
    assert!(text.contains("\"volumes\""), "{text}");
    let back = parse_results(Path::new("t.results.json"), &text).unwrap();
    assert_eq!(back.results, vec![result]);
}

#[test]
fn a_turning_plank_enters_a_volume_where_fine_sampling_finds_it() {
    // A 4 m plank carried 1 m along x while it turns from along x to along z (yaw 0° to 90°) reaches
    // into a volume beyond z = 1 part of the way: the entry agrees with a fine sampling of the
    // motion (a brute-force upper bound on the first touching place, 1e-5 of the way apart).
    let world = level(&[(
        "bay",
        Primitive::Box {
            half_extents: DVec3::new(5.0, 5.0, 0.5),
        },
        DVec3::new(0.5, 0.0, 1.5),
        &[],
    )]);
    let plank = ProbeShape::new(
        &ShapeSpec::Box {
            half_extents: [2.0, 0.1, 0.1],
        },
        DQuat::IDENTITY,
    )
    .unwrap();
    let points = [DVec3::ZERO, DVec3::new(1.0, 0.0, 0.0)];
    let turns = [
        DQuat::IDENTITY,
        DQuat::from_rotation_y(-std::f64::consts::FRAC_PI_2),
    ];
    let path = plumbline_core::query::TurningPath {
        points: &points,
        turns: &turns,
    };
    let events = world
        .everything()
        .volume_events_turning(&plank, path)
        .unwrap();
    assert_eq!(events.len(), 1, "{events:?}");
    assert_eq!(events[0].crossing, Crossing::Enter);
    let view = world.everything();
    let touching = |s: f64| {
        let (at, turn) = path.pose(0, s);
        !view
            .volumes_at(Mover::Shape(&plank.turned(turn)), at)
            .unwrap()
            .is_empty()
    };
    let n = 100_000;
    let sampled = (0..=n)
        .map(|k| k as f64 / n as f64)
        .find(|s| touching(*s))
        .expect("it reaches in");
    assert!(
        events[0].at <= sampled + 1e-9 && sampled - events[0].at <= 1e-5 + 1e-6,
        "{} vs {sampled}",
        events[0].at
    );
}

#[test]
fn a_flat_mesh_marked_as_a_volume_is_refused_with_its_name_not_a_panic() {
    // A volume is a solid region; a single triangle encloses nothing.
    let level = LevelBuilder::new()
        .mesh(
            "sheet",
            vec![DVec3::ZERO, DVec3::X, DVec3::Z],
            vec![[0, 1, 2]],
        )
        .tagged(&["volume"])
        .level();
    let error = World::new(&level).err().expect("refused");
    assert!(error.to_string().contains("sheet"), "{error}");
    assert!(error.to_string().contains("enclose"), "{error}");
}
