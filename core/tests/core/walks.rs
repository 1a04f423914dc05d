//! Walk probes against elementary geometry: stairs climbed or refused by riser height, ramps by
//! slope, a wall slid along, a ledge fallen from, a wall that stops the walk.

use glam::{DQuat, DVec3};
use plumbline_core::level::{Primitive, ShapeSpec};
use plumbline_core::query::{Gait, ProbeShape, Progress, QueryError, SKIN, Stop, Walked, World};

use super::common::LevelBuilder;

/// A character: capsule of radius 0.35 m, 1.8 m tall (common practice).
fn character() -> ProbeShape {
    ProbeShape::new(
        &ShapeSpec::Capsule {
            radius: 0.35,
            half_height: 0.55,
        },
        DQuat::IDENTITY,
    )
    .unwrap()
}

/// The centre of a character standing on ground at height `y`.
const STAND: f64 = 0.9 + SKIN;

const GAIT: Gait = Gait {
    max_step: 0.35,
    max_slope: 45.0,
};

fn block(builder: LevelBuilder, name: &str, lo: DVec3, hi: DVec3) -> LevelBuilder {
    builder.primitive(
        name,
        Primitive::Box {
            half_extents: (hi - lo) / 2.0,
        },
        (lo + hi) / 2.0,
        DQuat::IDENTITY,
    )
}

fn floor() -> LevelBuilder {
    block(
        LevelBuilder::new(),
        "floor",
        DVec3::new(-20.0, -1.0, -20.0),
        DVec3::new(20.0, 0.0, 20.0),
    )
}

fn walk(world: &World, route: &[DVec3], gait: Gait) -> Walked {
    world
        .everything()
        .walk(&character(), route, gait)
        .expect("a walk")
}

/// Eight steps of `riser` up, 0.35 m deep, from x = 1, then a landing.
fn stairs(riser: f64) -> World {
    let mut builder = floor();
    for k in 0..8 {
        let x = 1.0 + k as f64 * 0.35;
        builder = block(
            builder,
            &format!("step-{k}"),
            DVec3::new(x, 0.0, -1.0),
            DVec3::new(x + 0.35, (k + 1) as f64 * riser, 1.0),
        );
    }
    let top = 8.0 * riser;
    block(
        builder,
        "landing",
        DVec3::new(3.8, 0.0, -1.0),
        DVec3::new(8.0, top, 1.0),
    )
    .world()
}

#[test]
fn stairs_of_0_30_m_risers_are_climbed_and_of_0_40_m_refused_with_a_0_35_m_step() {
    let world = stairs(0.30);
    let route = [
        DVec3::new(-2.0, STAND, 0.0),
        DVec3::new(6.0, 2.4 + STAND, 0.0),
    ];
    let up = walk(&world, &route, GAIT);
    assert_eq!(up.stop, None, "{up:?}");
    assert_eq!(up.reached, 1);
    assert!((up.highest_step - 0.30).abs() < 0.02, "{}", up.highest_step);
    let end = up.path.last().unwrap();
    assert!((end.y - (2.4 + STAND)).abs() < 1e-6, "{end}");

    let world = stairs(0.40);
    let route = [
        DVec3::new(-2.0, STAND, 0.0),
        DVec3::new(6.0, 3.2 + STAND, 0.0),
    ];
    let refused = walk(&world, &route, GAIT);
    match refused.stop {
        Some(Stop::StepTooHigh(_, rise)) => assert!((rise - 0.40).abs() < 1e-6, "{rise}"),
        other => panic!("a step too high, not {other:?}"),
    }
    assert_eq!(refused.reached, 0);
}

/// A ramp rising at `degrees` from x = 1 to a height of 3 m, then a landing.
fn ramp(degrees: f64) -> World {
    let theta = degrees.to_radians();
    let run = 3.0 / theta.tan();
    let slab = DQuat::from_rotation_z(theta);
    let length = (run * run + 9.0).sqrt();
    // A slab 0.2 m thick whose top face runs from (1, 0) to (1 + run, 3), going on 0.3 m into the
    // floor at its foot and ending at the landing's edge.
    let normal = slab * DVec3::Y;
    let along = slab * DVec3::X;
    let centre = DVec3::new(1.0 + run / 2.0, 1.5, 0.0) - normal * 0.1 - along * 0.15;
    let builder = floor().primitive(
        "ramp",
        Primitive::Box {
            half_extents: DVec3::new(length / 2.0 + 0.15, 0.1, 1.5),
        },
        centre,
        slab,
    );
    block(
        builder,
        "landing",
        DVec3::new(1.0 + run, 0.0, -1.5),
        DVec3::new(1.0 + run + 4.0, 3.0, 1.5),
    )
    .world()
}

#[test]
fn a_40_degree_ramp_is_climbed_and_a_50_degree_one_refused_with_a_45_degree_limit() {
    for (degrees, climbs) in [(40.0, true), (50.0, false)] {
        let world = ramp(degrees);
        let run = 3.0 / f64::to_radians(degrees).tan();
        let route = [
            DVec3::new(-1.0, STAND, 0.0),
            DVec3::new(1.0 + run + 2.0, 3.0 + STAND, 0.0),
        ];
        let walked = walk(&world, &route, GAIT);
        if climbs {
            assert_eq!(walked.stop, None, "{degrees}°: {walked:?}");
            assert!((walked.steepest_slope - degrees).abs() < 1e-6);
        } else {
            match walked.stop {
                Some(Stop::TooSteep(_, slope)) => assert!((slope - degrees).abs() < 1e-6),
                other => panic!("{degrees}°: too steep, not {other:?}"),
            }
        }
    }
}

#[test]
fn walking_into_a_wall_at_45_degrees_slides_along_it() {
    // Collide-and-slide keeps the part of the move along the wall (common practice, from memory):
    // headed at 45° into the wall x = 3, the character ends against it (a skin away) and well along
    // it, where a stop at the first touch would leave it near z = 2.6.
    let world = block(
        floor(),
        "wall",
        DVec3::new(3.0, 0.0, -10.0),
        DVec3::new(3.5, 3.0, 10.0),
    )
    .world();
    let route = [DVec3::new(0.0, STAND, 0.0), DVec3::new(8.0, STAND, 8.0)];
    let walked = walk(&world, &route, GAIT);
    let end = *walked.path.last().unwrap();
    assert!((end.x - (3.0 - 0.35 - SKIN)).abs() < 1e-6, "{end}");
    assert!(end.z > 6.0, "slid along the wall: {end}");
    assert!(matches!(
        walked.stop,
        Some(Stop::Blocked(_)) | Some(Stop::NoHeadway)
    ));
}

#[test]
fn off_a_ledge_it_falls_to_the_floor_and_walks_on() {
    let world = block(
        floor(),
        "platform",
        DVec3::new(-3.0, 0.0, -2.0),
        DVec3::new(1.0, 2.0, 2.0),
    )
    .world();
    let route = [
        DVec3::new(-1.0, 2.0 + STAND, 0.0),
        DVec3::new(5.0, STAND, 0.0),
    ];
    let walked = walk(&world, &route, GAIT);
    assert_eq!(walked.stop, None, "{walked:?}");
    assert!(
        (walked.longest_fall - 2.0).abs() < 0.05,
        "{}",
        walked.longest_fall
    );
    assert!((walked.path.last().unwrap().y - STAND).abs() < 1e-6);
}

#[test]
fn a_wall_across_the_route_stops_the_walk_and_is_named() {
    let world = block(
        floor(),
        "wall",
        DVec3::new(3.0, 0.0, -10.0),
        DVec3::new(3.5, 3.0, 10.0),
    )
    .world();
    let route = [DVec3::new(0.0, STAND, 0.0), DVec3::new(8.0, STAND, 0.0)];
    let walked = walk(&world, &route, GAIT);
    match walked.stop {
        Some(Stop::Blocked(object)) => assert_eq!(world.name(object), "wall"),
        other => panic!("blocked by the wall, not {other:?}"),
    }
    assert!((walked.path.last().unwrap().x - (3.0 - 0.35 - SKIN)).abs() < 1e-6);
}

#[test]
fn a_walk_probe_says_where_it_stopped_and_why_and_its_record_reads_back() {
    use plumbline_core::check::{Hits, ResultsFile, Verdict, answer_probe, parse_results};
    use plumbline_core::probe::parse_probe_set;
    let world = stairs(0.40);
    let text = format!(
        r#"{{"plumbline": "probes", "version": 1, "level": "level.json", "probes": [
            {{"id": "up", "kind": "walk",
              "shape": {{"type": "capsule", "radius": 0.35, "half_height": 0.55}},
              "path": [[-2, {STAND}, 0], [6, {}, 0]], "expect": {{"reaches": true}}}}]}}"#,
        3.2 + STAND
    );
    let set = parse_probe_set(std::path::Path::new("t.probes.json"), &text).unwrap();
    let result = answer_probe(&world, &set.probes[0]);
    assert_eq!(result.verdict, Verdict::Fail);
    assert!(
        result
            .reason
            .starts_with("Expected it to reach the end; stops after")
            && result.reason.ends_with(
                "0 of 1 waypoints reached: a step of 0.400 m onto step-0 is over the 0.350 m limit"
            ),
        "{}",
        result.reason
    );
    let Hits::Walk(records) = &result.hits else {
        panic!("a walk's answer")
    };
    assert_eq!(records[0].object.as_deref(), Some("step-0"));
    // Written and read back, the record is the same.
    let file = ResultsFile::new(
        "t.probes.json".into(),
        "level.json".into(),
        String::new(),
        String::new(),
        vec![result.clone()],
    );
    let back = parse_results(std::path::Path::new("r.json"), &file.to_json()).unwrap();
    assert_eq!(back.results[0].hits, result.hits);
}

#[test]
fn a_route_too_long_to_walk_is_refused_at_once() {
    use plumbline_core::query::QueryError;
    let world = floor().world();
    let route = [DVec3::new(0.0, STAND, 0.0), DVec3::new(9.0e4, STAND, 0.0)];
    let error = world
        .everything()
        .walk(&character(), &route, GAIT)
        .expect_err("too long");
    assert!(matches!(error, QueryError::RouteTooLong(_)), "{error}");
}

// ---------------------------------------------------------------- reach maps

fn reach(
    world: &World,
    starts: &[DVec3],
    (min, max): (DVec3, DVec3),
) -> plumbline_core::query::Reach {
    world
        .everything()
        .reach(
            &character(),
            starts,
            (min, max),
            0.5,
            GAIT,
            &Progress::default(),
        )
        .expect("a reach map")
}

/// Whether the cell under `at` (a point on the ground) is reached.
fn reached_at(map: &plumbline_core::query::Reach, at: DVec3) -> bool {
    let k = map
        .cell_at(at + DVec3::Y * STAND, DVec3::Y, 0.5, 1.8)
        .unwrap_or_else(|| panic!("walkable ground at {at}"));
    map.reached[k]
}

/// Two rooms 4 m square side by side (x from 0 to 4 and 4.2 to 8.2), walls 2.5 m high; the wall
/// between them has a 1.2 m doorway when `open`.
fn rooms(open: bool) -> World {
    let mut b = floor();
    let wall = |b: LevelBuilder, name: &str, lo: [f64; 3], hi: [f64; 3]| {
        block(b, name, DVec3::from(lo), DVec3::from(hi))
    };
    b = wall(b, "south", [-0.2, 0.0, -0.2], [8.4, 2.5, 0.0]);
    b = wall(b, "north", [-0.2, 0.0, 4.0], [8.4, 2.5, 4.2]);
    b = wall(b, "west", [-0.2, 0.0, 0.0], [0.0, 2.5, 4.0]);
    b = wall(b, "east", [8.2, 0.0, 0.0], [8.4, 2.5, 4.0]);
    if open {
        b = wall(b, "middle-a", [4.0, 0.0, 0.0], [4.2, 2.5, 1.4]);
        b = wall(b, "middle-b", [4.0, 0.0, 2.6], [4.2, 2.5, 4.0]);
    } else {
        b = wall(b, "middle", [4.0, 0.0, 0.0], [4.2, 2.5, 4.0]);
    }
    b.world()
}

#[test]
fn a_closed_door_leaves_the_other_room_unreached_and_an_open_one_does_not() {
    // Elementary: with the wall between the rooms whole, no walk crosses it.
    let region = (DVec3::new(0.0, -0.5, 0.0), DVec3::new(8.2, 3.0, 4.0));
    let start = [DVec3::new(2.0, STAND, 2.0)];
    let far = DVec3::new(6.2, 0.0, 2.0);
    assert!(!reached_at(&reach(&rooms(false), &start, region), far));
    let open = reach(&rooms(true), &start, region);
    assert!(reached_at(&open, far));
    // Every cell of floor is reached (the tops of the walls are cells of their own, not reached).
    assert!(
        open.cells
            .iter()
            .zip(&open.reached)
            .all(|(c, r)| c.ground.y > 0.1 || *r)
    );
}

#[test]
fn a_30_degree_ramp_joins_two_floors_and_a_50_degree_one_does_not() {
    for (degrees, joins) in [(30.0, true), (50.0, false)] {
        let world = ramp(degrees);
        let run = 3.0 / f64::to_radians(degrees).tan();
        let region = (
            DVec3::new(-2.0, -0.5, -1.0),
            DVec3::new(1.0 + run + 4.0, 4.0, 1.0),
        );
        let map = reach(&world, &[DVec3::new(-1.5, STAND, 0.0)], region);
        let top = DVec3::new(1.0 + run + 2.0, 3.0, 0.0);
        assert_eq!(reached_at(&map, top), joins, "{degrees}°");
    }
}

#[test]
fn a_catwalk_above_the_ground_is_a_layer_of_its_own() {
    // A 2 m wide catwalk 4 m up with no way onto it: the ground under it is reached, it is not,
    // though both lie in the same grid columns.
    let world = block(
        floor(),
        "catwalk",
        DVec3::new(-1.0, 3.9, -4.0),
        DVec3::new(1.0, 4.0, 4.0),
    )
    .world();
    let region = (DVec3::new(-3.0, -0.5, -3.0), DVec3::new(3.0, 5.0, 3.0));
    let map = reach(&world, &[DVec3::new(-2.5, STAND, 0.0)], region);
    assert!(reached_at(&map, DVec3::new(0.0, 0.0, 0.0)));
    assert!(!reached_at(&map, DVec3::new(0.0, 4.0, 0.0)));
}

/// The reach probe of the two rooms: from a spawn in the first, targets "near" (first room) and
/// "far" (second room).
fn rooms_reach(world: &World, expect: &str) -> plumbline_core::check::ProbeResult {
    use plumbline_core::probe::parse_probe_set;
    let text = format!(
        r#"{{"plumbline": "probes", "version": 1, "level": "level.json", "probes": [
            {{"id": "map", "kind": "reach",
              "shape": {{"type": "capsule", "radius": 0.35, "half_height": 0.55}},
              "spots": [{{"name": "spawn", "at": [2, {STAND}, 2]}}],
              "region": {{"min": [0, -0.5, 0], "max": [8.2, 3, 4]}}, "spacing": 0.5,
              "targets": [{{"name": "near", "at": [3, 0.3, 3]}},
                          {{"name": "far", "at": [6.2, 0.3, 2]}}],
              "expect": {expect}}}]}}"#
    );
    let set = parse_probe_set(std::path::Path::new("t.probes.json"), &text).unwrap();
    plumbline_core::check::answer_probe(world, &set.probes[0])
}

#[test]
fn a_reach_probe_names_the_targets_it_cannot_get_to_and_how_far_off_they_are() {
    use plumbline_core::check::{Hits, Verdict};
    let world = rooms(false);
    let named = rooms_reach(&world, r#"{"reachable": ["near"], "unreachable": ["far"]}"#);
    assert_eq!(named.verdict, Verdict::Pass, "{}", named.reason);
    let all = rooms_reach(&world, r#""clear""#);
    assert_eq!(all.verdict, Verdict::Fail);
    // The nearest reached ground to "far" is in the first room, beyond the wall.
    assert!(all.reason.contains("far is "), "{}", all.reason);
    let Hits::Reach(records) = &all.hits else {
        panic!("a reach answer")
    };
    let far = &records[0].targets[1];
    assert!(!far.reachable && far.gap.unwrap() > 0.5, "{far:?}");
}

#[test]
fn a_door_closed_between_runs_shows_as_ground_and_a_target_lost() {
    use plumbline_core::check::{Aspect, DEFAULT_TOLERANCE, changes};
    let open = rooms_reach(&rooms(true), r#""clear""#);
    let closed = rooms_reach(&rooms(false), r#""clear""#);
    let aspects = changes(&open, &closed, DEFAULT_TOLERANCE);
    // Closing the door loses the second room's floor where a capsule of radius 0.35 m stands, less
    // than a radius from no wall: (4 − 2 × 0.35)² ≈ 10.9 m², plus the doorway (elementary geometry;
    // the grid's 0.5 m cells count it to within a row of cells).
    let lost_area = aspects.iter().find_map(|a| match a {
        Aspect::Reached(a, b) => Some(a - b),
        _ => None,
    });
    assert!(
        lost_area.is_some_and(|m2| (9.0..=14.0).contains(&m2)),
        "{aspects:?}"
    );
    assert!(aspects.contains(&Aspect::Targets {
        lost: vec!["far".into()],
        gained: vec![],
    }));
    let words: Vec<String> = aspects.iter().map(|a| a.to_string()).collect();
    assert!(
        words.contains(&"targets lost: far".to_string()),
        "{words:?}"
    );
    // Nothing changed, nothing told.
    assert!(changes(&open, &open, DEFAULT_TOLERANCE).is_empty());
}

#[test]
fn a_reach_map_is_the_same_on_one_thread_and_on_two() {
    // Results are byte-identical for any --jobs (DEVELOPERS.md, check invariants).
    let world = rooms(true);
    let region = (DVec3::new(0.0, -0.5, 0.0), DVec3::new(8.2, 3.0, 4.0));
    let start = [DVec3::new(2.0, STAND, 2.0)];
    let on = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| reach(&world, &start, region))
    };
    assert_eq!(on(1), on(2));
}

#[test]
fn a_reach_map_counts_its_progress_to_the_end_and_stops_when_cancelled() {
    let world = rooms(true);
    let region = (DVec3::new(0.0, -0.5, 0.0), DVec3::new(8.2, 3.0, 4.0));
    let start = [DVec3::new(2.0, STAND, 2.0)];
    let progress = Progress::default();
    assert_eq!(progress.fraction(), 0.0);
    world
        .everything()
        .reach(&character(), &start, region, 0.5, GAIT, &progress)
        .expect("a reach map");
    assert_eq!(progress.fraction(), 1.0);
    // Cancelled (as the window's Cancel button does, from another thread): no map, an error.
    let cancelled = Progress::default();
    cancelled.cancel();
    let error = world
        .everything()
        .reach(&character(), &start, region, 0.5, GAIT, &cancelled)
        .expect_err("cancelled");
    assert!(matches!(error, QueryError::Cancelled), "{error}");
}
