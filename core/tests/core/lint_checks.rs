//! Level lint against analytic answers: boxes that overlap or stand apart by known amounts, meshes
//! with known open, shared and duplicated faces, slivers and degenerate triangles.

use glam::{DQuat, DVec3};
use plumbline_core::level::{
    Allowance, Level, LintSettings, Primitive, Selection, load_level_from,
};
use plumbline_core::lint::{Finding, FindingKind, LintOptions, LintReport, lint, smallest_angle};
use plumbline_core::query::World;

use super::common::{LevelBuilder, box_at, box_mesh};

fn run(level: &Level, settings: &LintSettings) -> LintReport {
    let world = World::new(level).unwrap();
    lint(level, &world, settings, &LintOptions::default(), &|_| {})
}

fn of_kind(report: &LintReport, kind: FindingKind) -> Vec<&Finding> {
    report.findings.iter().filter(|f| f.kind == kind).collect()
}

fn cube(name: &str, builder: LevelBuilder, c: DVec3, h: DVec3) -> LevelBuilder {
    let (v, t) = box_mesh(c, h);
    builder.mesh(name, v, t)
}

#[test]
fn two_boxes_overlapping_by_a_known_depth_are_found_with_that_depth() {
    // Ericson, Real-Time Collision Detection (2005), §4.2 (AABB overlap: separated on some axis or
    // overlapping on all three) and §5.2.1 (the separating-axis test): for axis-aligned boxes the
    // penetration depth is the least overlap over the three axes. Unit boxes 0.85 m apart along x
    // overlap 0.15 m along x and 1 m along y and z: depth 0.15 m.
    let d = 0.15;
    let level = box_at(
        box_at(LevelBuilder::new(), "a", DVec3::splat(0.5), 0.5),
        "b",
        DVec3::new(1.5 - d, 0.5, 0.5),
        0.5,
    )
    .level();
    let report = run(&level, &LintSettings::default());
    let overlaps = of_kind(&report, FindingKind::Overlap);
    assert_eq!(overlaps.len(), 1);
    assert_eq!(overlaps[0].objects.len(), 2);
    assert!((overlaps[0].measure.unwrap() - d).abs() < 1e-9);

    // Turned boxes (Ericson §4.4, oriented bounding boxes, separated by the same axis test): both
    // turned 30° about y, the second moved 1 - d along their shared local x: still d deep.
    let turn = DQuat::from_rotation_y(30f64.to_radians());
    let turned = |b: LevelBuilder, name: &str, at: DVec3| {
        b.primitive(
            name,
            Primitive::Box {
                half_extents: DVec3::splat(0.5),
            },
            at,
            turn,
        )
    };
    let level = turned(
        turned(LevelBuilder::new(), "a", DVec3::ZERO),
        "b",
        turn * DVec3::new(1.0 - d, 0.0, 0.0),
    )
    .level();
    let report = run(&level, &LintSettings::default());
    let overlaps = of_kind(&report, FindingKind::Overlap);
    assert_eq!(overlaps.len(), 1);
    assert!((overlaps[0].measure.unwrap() - d).abs() < 1e-9);

    // The same as meshes: a unit cube and a narrower box reaching d into it. Its faces cross the
    // cube's x = 1 face along a segment; the least move that parts two crossing triangles is d
    // (moving back along x), less than the 0.25 m it would take sideways.
    let narrow = DVec3::new(0.5 + d / 2.0, 0.25, 0.25);
    let level = cube(
        "box",
        cube(
            "cube",
            LevelBuilder::new(),
            DVec3::splat(0.5),
            DVec3::splat(0.5),
        ),
        DVec3::new(1.0 - d + narrow.x, 0.5, 0.5),
        narrow,
    )
    .level();
    let overlaps = run(&level, &LintSettings::default());
    let overlaps = of_kind(&overlaps, FindingKind::Overlap);
    assert_eq!(overlaps.len(), 1);
    assert!(
        (overlaps[0].measure.unwrap() - d).abs() < 1e-9,
        "{:?}",
        overlaps[0]
    );
    assert_eq!(overlaps[0].triangles.len(), 2, "a triangle of each mesh");
}

#[test]
fn boxes_that_touch_are_clean_and_boxes_a_hand_apart_leave_a_narrow_gap() {
    // Touching faces (distance 0) are neither an overlap nor a gap; 0.2 m apart is narrower than
    // the 0.3 m default; 0.5 m apart is not.
    let level = box_at(
        box_at(
            box_at(LevelBuilder::new(), "a", DVec3::new(0.0, 0.5, 0.0), 0.5),
            "touching",
            DVec3::new(1.0, 0.5, 0.0),
            0.5,
        ),
        "near",
        DVec3::new(-1.2, 0.5, 0.0),
        0.5,
    );
    let level = box_at(level, "far", DVec3::new(0.0, 0.5, 1.5), 0.5).level();
    let report = run(&level, &LintSettings::default());
    let gaps = of_kind(&report, FindingKind::NarrowGap);
    assert_eq!(gaps.len(), 1, "{:?}", report.findings);
    assert_eq!(
        gaps[0].objects.iter().map(|o| &**o).collect::<Vec<_>>(),
        ["a", "near"]
    );
    assert!((gaps[0].measure.unwrap() - 0.2).abs() < 1e-9);
    assert!(of_kind(&report, FindingKind::Overlap).is_empty());
}

#[test]
fn an_open_cube_missing_one_face_has_its_four_open_edges() {
    let (v, mut t) = box_mesh(DVec3::ZERO, DVec3::splat(0.5));
    // Drop the two triangles of the top face (+y).
    t.retain(|tri| !tri.iter().all(|&i| v[i as usize].y > 0.0));
    assert_eq!(t.len(), 10);
    let level = LevelBuilder::new()
        .mesh("crate", v, t)
        .tagged(&["solid"])
        .level();
    let closed = LintSettings {
        closed: Some(Selection {
            tags: vec!["solid".into()],
            pattern: None,
        }),
        ..LintSettings::default()
    };
    let report = run(&level, &closed);
    let open = of_kind(&report, FindingKind::OpenEdges);
    assert_eq!(open.len(), 1);
    assert_eq!(open[0].count, 4);
    assert_eq!(open[0].edges.len(), 4);
    for [a, b] in &open[0].edges {
        assert!(a.y > 0.0 && b.y > 0.0, "the rim of the missing face");
    }
    // Not selected as closed: not checked.
    assert!(
        of_kind(
            &run(&level, &LintSettings::default()),
            FindingKind::OpenEdges
        )
        .is_empty()
    );
}

#[test]
fn a_fin_on_a_closed_mesh_makes_a_non_manifold_edge_and_two_open_ones() {
    let (mut v, mut t) = box_mesh(DVec3::ZERO, DVec3::splat(0.5));
    // A triangle standing on one of the cube's top edges.
    let edge = t
        .iter()
        .flat_map(|tri| [[tri[0], tri[1]], [tri[1], tri[2]], [tri[2], tri[0]]])
        .find(|[a, b]| v[*a as usize].y > 0.0 && v[*b as usize].y > 0.0)
        .unwrap();
    let tip = (v[edge[0] as usize] + v[edge[1] as usize]) / 2.0 + DVec3::Y;
    v.push(tip);
    t.push([edge[0], edge[1], (v.len() - 1) as u32]);
    let level = LevelBuilder::new()
        .mesh("rock", v, t)
        .tagged(&["rock"])
        .level();
    let settings = LintSettings {
        closed: Some(Selection {
            tags: vec!["rock".into()],
            pattern: None,
        }),
        ..LintSettings::default()
    };
    let report = run(&level, &settings);
    assert_eq!(of_kind(&report, FindingKind::NonManifoldEdges)[0].count, 1);
    assert_eq!(of_kind(&report, FindingKind::OpenEdges)[0].count, 2);
}

#[test]
fn a_face_written_twice_is_a_duplicate_and_neighbouring_faces_are_not() {
    let (v, mut t) = box_mesh(DVec3::ZERO, DVec3::splat(0.5));
    let clean = run(
        &LevelBuilder::new()
            .mesh("crate", v.clone(), t.clone())
            .level(),
        &LintSettings::default(),
    );
    assert!(of_kind(&clean, FindingKind::DuplicateFaces).is_empty());
    t.push(t[3]);
    let report = run(
        &LevelBuilder::new().mesh("crate", v, t).level(),
        &LintSettings::default(),
    );
    let dup = of_kind(&report, FindingKind::DuplicateFaces);
    assert_eq!(dup.len(), 1);
    assert_eq!(dup[0].count, 1);
    let numbers: Vec<u32> = dup[0].triangles.iter().map(|t| t.number).collect();
    assert_eq!(numbers, [3, 12]);
}

#[test]
fn the_same_floor_in_two_objects_is_found_and_a_floor_under_a_box_is_not() {
    // Two objects with the same upward face (z-fighting), and a box standing on a floor (the box's
    // bottom faces down: back to back, not a duplicate).
    let quad = |y: f64| {
        (
            vec![
                DVec3::new(0.0, y, 0.0),
                DVec3::new(0.0, y, 2.0),
                DVec3::new(2.0, y, 2.0),
                DVec3::new(2.0, y, 0.0),
            ],
            vec![[0u32, 1, 2], [0, 2, 3]],
        )
    };
    let (fv, ft) = quad(0.0);
    let (gv, gt) = quad(0.0);
    let level = cube(
        "box",
        LevelBuilder::new()
            .mesh("floor", fv, ft)
            .mesh("floor-copy", gv, gt),
        DVec3::new(1.0, 0.5, 1.0),
        DVec3::splat(0.5),
    )
    .level();
    let report = run(&level, &LintSettings::default());
    let dup = of_kind(&report, FindingKind::DuplicateFaces);
    assert_eq!(dup.len(), 1);
    assert_eq!(
        dup[0].objects.iter().map(|o| &**o).collect::<Vec<_>>(),
        ["floor", "floor-copy"]
    );
}

#[test]
fn the_smallest_angle_is_exact_and_slivers_are_those_below_the_threshold() {
    // Elementary trigonometry: a right triangle with legs 1 and tan θ has angle θ at the long leg's
    // far end.
    for degrees in [45.0f64, 1.0, 0.05] {
        let h = degrees.to_radians().tan();
        let angle = smallest_angle(DVec3::ZERO, DVec3::X, DVec3::new(0.0, h, 0.0));
        assert!((angle - degrees).abs() < 1e-9, "{angle} vs {degrees}");
    }
    let thin = 0.05f64.to_radians().tan();
    let level = LevelBuilder::new()
        .mesh(
            "strip",
            vec![
                DVec3::ZERO,
                DVec3::X,
                DVec3::new(0.0, 0.0, thin),
                DVec3::new(0.0, 0.0, 1.0),
            ],
            vec![[0, 2, 1], [0, 3, 1]],
        )
        .level();
    let report = run(&level, &LintSettings::default());
    let slivers = of_kind(&report, FindingKind::Slivers);
    assert_eq!(slivers.len(), 1);
    assert_eq!(slivers[0].count, 1);
    assert_eq!(slivers[0].triangles[0].number, 0);
}

#[test]
fn triangles_without_area_are_named_by_their_number_and_place() {
    let text = r#"{"plumbline": "level", "version": 1, "objects": [
        {"name": "ramp", "shape": {"type": "triangles",
         "vertices": [[0,0,0], [1,0,0], [0,0,1], [2,0,0], [4,0,0]],
         "indices": [[0,2,1], [1,3,4], [0,2,1]]}}]}"#;
    let loaded = load_level_from(
        std::path::Path::new("ramp.level.json"),
        text.as_bytes(),
        Default::default(),
    )
    .unwrap();
    let report = run(&loaded.level, &loaded.lint);
    let dropped = of_kind(&report, FindingKind::Degenerate);
    assert_eq!(dropped.len(), 1);
    assert_eq!(dropped[0].triangles[0].number, 1);
    assert!((dropped[0].point - DVec3::new(7.0 / 3.0, 0.0, 0.0)).length() < 1e-12);
}

#[test]
fn props_that_float_or_sink_are_found_and_accepted_findings_set_aside() {
    let floor = |b: LevelBuilder| {
        cube(
            "floor",
            b,
            DVec3::new(0.0, -0.5, 0.0),
            DVec3::new(10.0, 0.5, 10.0),
        )
    };
    let level = box_at(
        box_at(
            box_at(
                floor(LevelBuilder::new()),
                "resting",
                DVec3::new(0.0, 0.3, 0.0),
                0.3,
            )
            .tagged(&["prop"]),
            "floating",
            DVec3::new(2.0, 0.35, 0.0),
            0.3,
        )
        .tagged(&["prop"]),
        "sunk",
        DVec3::new(-2.0, 0.28, 0.0),
        0.3,
    )
    .tagged(&["prop"])
    .level();
    let report = run(&level, &LintSettings::default());
    let floats = of_kind(&report, FindingKind::Floats);
    assert_eq!(floats.len(), 1);
    assert!((floats[0].measure.unwrap() - 0.05).abs() < 1e-9);
    let sinks = of_kind(&report, FindingKind::Sinks);
    assert_eq!(sinks.len(), 1);
    assert!((sinks[0].measure.unwrap() - 0.02).abs() < 1e-9);
    // The sunk prop's overlap with its floor is told once, as the sinking.
    assert!(of_kind(&report, FindingKind::Overlap).is_empty());

    let accepting = LintSettings {
        allow: vec![Allowance {
            finding: Some("floats".into()),
            objects: vec!["float*".into()],
            why: Some("hangs from a hook".into()),
        }],
        ..LintSettings::default()
    };
    let report = run(&level, &accepting);
    assert!(of_kind(&report, FindingKind::Floats).is_empty());
    assert_eq!(report.allowed.len(), 1);
    assert_eq!(report.allowed[0].1, "hangs from a hook");
}

#[test]
fn findings_do_not_depend_on_the_order_objects_are_listed_in() {
    let build = |names: [&str; 3]| {
        let mut b = LevelBuilder::new();
        for (k, name) in names.iter().enumerate() {
            b = box_at(b, name, DVec3::new(0.9 * k as f64, 0.0, 0.0), 0.5);
        }
        run(&b.level(), &LintSettings::default())
    };
    let summary = |r: &LintReport| {
        let mut list: Vec<(FindingKind, Vec<String>, u64)> = r
            .findings
            .iter()
            .map(|f| {
                let mut names: Vec<String> = f.objects.iter().map(|o| o.to_string()).collect();
                names.sort();
                (f.kind, names, (f.measure.unwrap() * 1e9).round() as u64)
            })
            .collect();
        list.sort();
        list
    };
    let forward = build(["a", "b", "c"]);
    assert_eq!(forward.findings.len(), 2, "a-b and b-c overlap by 0.1 m");
    assert_eq!(summary(&forward), summary(&build(["c", "b", "a"])));
}
