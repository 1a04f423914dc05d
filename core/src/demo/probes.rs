//! The demo probe set: what a designer checks on Saltfen Quay, one probe per question, each with a
//! label in words. One probe fails on purpose so a first run shows what a failure looks like.

use glam::DVec3;

use super::quay::layout::*;
use super::quay::{bollards, crates, drums, ground_height};
use crate::level::ShapeSpec;
use crate::probe::{
    Conditions, Expect, ExpectWord, HitsMode, Launch, Probe, ProbeQuery, ProbeSet, Range, Region,
    Spot, Spots, Turns,
};
use crate::query::Filter;

/// A character: capsule of radius 0.35 m and 1.8 m tall.
fn character() -> ShapeSpec {
    ShapeSpec::Capsule {
        radius: 0.35,
        half_height: 0.55,
    }
}

/// The height of a standing character's centre with its feet 1 cm above a floor at `floor`.
fn standing(floor: f64) -> f64 {
    floor + 0.9 + 0.01
}

fn v(x: f64, y: f64, z: f64) -> DVec3 {
    DVec3::new(x, y, z)
}

fn probe(id: &str, label: &str, query: ProbeQuery, expect: Option<Expect>) -> Probe {
    Probe {
        id: id.into(),
        label: Some(label.into()),
        filter: Filter::default(),
        query,
        expect,
        from_rule: None,
    }
}

fn clear() -> Option<Expect> {
    Some(Expect::Word(ExpectWord::Clear))
}

fn blocked() -> Option<Expect> {
    Some(Expect::Word(ExpectWord::Blocked))
}

fn when(c: Conditions) -> Option<Expect> {
    Some(Expect::Conditions(Box::new(c)))
}

fn ray(from: DVec3, to: DVec3) -> ProbeQuery {
    ProbeQuery::Ray {
        from,
        to,
        hits: None,
    }
}

fn walk(path: Vec<DVec3>) -> ProbeQuery {
    ProbeQuery::Sweep {
        shape: character(),
        rotation: None,
        path,
        hits: None,
        duration: None,
        clearance: None,
        turns: None,
    }
}

fn spawn(at: DVec3) -> ProbeQuery {
    ProbeQuery::Overlap {
        shape: character(),
        at,
        rotation: None,
    }
}

fn resting(at: DVec3) -> ProbeQuery {
    ProbeQuery::Closest {
        shape: ShapeSpec::Point {},
        at,
        rotation: None,
        max_distance: 0.5,
    }
}

fn ignoring_tags(mut p: Probe, tags: &[&str]) -> Probe {
    p.filter.ignore_tags = tags.iter().map(|t| t.to_string()).collect();
    p
}

/// Props let go as rigid bodies: crate 3 stays where it was put; a barrel laid on its side on the
/// spoil bank's back rolls away (on purpose).
fn settle_probes() -> Vec<Probe> {
    let (_, crate_3) = crates()
        .into_iter()
        .find(|(n, _)| *n == "crate-3")
        .expect("the demo has crate 3");
    let mut stays = probe(
        "crate-3-stays-put",
        "Crate 3, let go where it stands, stays put",
        ProbeQuery::Settle {
            shape: ShapeSpec::Box {
                half_extents: [0.3, 0.3, 0.3],
            },
            at: crate_3,
            rotation: None,
            density: None,
            friction: None,
            restitution: None,
            max_time: None,
        },
        when(Conditions {
            max_move: Some(0.01),
            max_turn: Some(1.0),
            ..Conditions::default()
        }),
    );
    stays.filter.ignore_objects = vec!["crate-3".into()];
    // On the bank's 25° back, 30.5 m north, lying along x with its side 1 mm off the slope.
    let slope = 25f64.to_radians();
    let (x0, x1, profile) = SPOIL_BANK;
    let (top, foot) = (profile[2], profile[3]);
    let z = 30.5;
    let ground = top.1 * (foot.0 - z) / (foot.0 - top.0);
    let normal = v(0.0, slope.cos(), slope.sin());
    let barrel = probe(
        "barrel-on-the-spoil-bank",
        "A barrel laid on the spoil bank stays there (fails on purpose: it rolls down)",
        ProbeQuery::Settle {
            shape: ShapeSpec::Cylinder {
                radius: 0.3,
                half_height: 0.45,
            },
            at: v((x0 + x1) / 2.0, ground, z) + normal * 0.301,
            rotation: Some(glam::DQuat::from_rotation_z(std::f64::consts::FRAC_PI_2)),
            density: None,
            friction: None,
            restitution: None,
            max_time: None,
        },
        when(Conditions {
            max_move: Some(0.05),
            ..Conditions::default()
        }),
    );
    vec![stays, barrel]
}

/// Eye height above a floor, for lookouts.
const EYE: f64 = 1.7;

/// The demo probe set for the level file `level`.
pub fn probe_set(level: &str) -> ProbeSet {
    let gate = v(0.0, EYE, QUAY_Z + 3.0);
    let hill = v(-12.0, ground_height(-12.0, 82.0) + EYE, 82.0);
    let catwalk_eye = v(40.7, CATWALK_Y + EYE, 7.0);
    let [wx0, wz0, wx1, _] = WAREHOUSE;
    let door_x = (VEHICLE_DOOR[0] + VEHICLE_DOOR[1]) * 0.5;
    let personnel_x = (PERSONNEL_DOOR[0] + PERSONNEL_DOOR[1]) * 0.5;
    let office_door_x = (OFFICE_DOOR[0] + OFFICE_DOOR[1]) * 0.5;
    let [cx0, cx1, cz, _, _] = CULVERT;
    let mut probes = vec![
        // Sightlines.
        probe(
            "gate-sees-warehouse-door",
            "Quay gate lookout sees into the warehouse's vehicle door",
            ray(gate, v(door_x, 2.0, wz0 + 0.5)),
            clear(),
        ),
        probe(
            "gate-view-of-office-blocked",
            "Containers hide the office door from the quay gate",
            ray(gate, v(office_door_x, 1.2, OFFICE[1] - 0.5)),
            when(Conditions {
                first_tag: Some("container".into()),
                ..Conditions::default()
            }),
        ),
        probe(
            "catwalk-sees-bollard-12",
            "From the catwalk, bollard 12 on the quay is in view",
            ray(catwalk_eye, v(40.0, 0.9, QUAY_Z + 0.4)),
            when(Conditions {
                first_object: Some("bollard-12".into()),
                ..Conditions::default()
            }),
        ),
        ignoring_tags(
            probe(
                "office-window-view",
                "From the office desk, the view through the south window is open",
                ray(v(-30.5, 1.6, 18.0), v(-30.5, 1.6, -5.0)),
                clear(),
            ),
            &["glass"],
        ),
        probe(
            "office-window-is-glazed",
            "The office's south window has glass in it",
            ray(v(-30.5, 1.6, 18.0), v(-30.5, 1.6, -5.0)),
            when(Conditions {
                first_tag: Some("glass".into()),
                ..Conditions::default()
            }),
        ),
        ignoring_tags(
            probe(
                "hill-sees-yard-through-trees",
                "Hill lookout sees the yard once foliage is see-through",
                ray(hill, v(0.0, 1.0, 0.0)),
                clear(),
            ),
            &["foliage"],
        ),
        probe(
            "hill-view-screened-by-canopy",
            "Tree canopies screen the yard from the hill lookout",
            ray(hill, v(0.0, 1.0, 0.0)),
            when(Conditions {
                first_tag: Some("foliage".into()),
                ..Conditions::default()
            }),
        ),
        probe(
            "fence-screens-low-view",
            "The north fence blocks a low view into the yard",
            ray(v(20.0, 1.2, FENCE_Z + 4.0), v(20.0, 1.0, 30.0)),
            when(Conditions {
                first_tag: Some("fence".into()),
                distance: Some(Range {
                    min: Some(3.9),
                    max: Some(4.1),
                }),
                ..Conditions::default()
            }),
        ),
        probe(
            "warehouse-walls-crossed",
            "A line through the warehouse at 5.5 m crosses its west wall, then leaves by the catwalk door",
            ProbeQuery::Ray {
                from: v(wx0 - 5.0, 5.5, 15.0),
                to: v(wx1 + 5.0, 5.5, 14.6),
                hits: Some(HitsMode::All),
            },
            when(Conditions {
                first_object: Some("yard/warehouse".into()),
                ..Conditions::default()
            }),
        ),
        probe(
            "crane-cab-sees-bollards",
            "The crane driver sees the quay edge below the cab",
            ray(v(0.0, 8.9, -36.7), v(-8.0, 0.9, QUAY_Z + 0.8)),
            when(Conditions {
                first_object: Some("bollard-06".into()),
                ..Conditions::default()
            }),
        ),
        // Camera paths.
        probe(
            "quay-camera",
            "The quay camera glides under the crane and keeps a metre clear",
            ProbeQuery::Sweep {
                shape: ShapeSpec::Sphere { radius: 0.5 },
                rotation: None,
                path: vec![
                    v(-55.0, 6.0, -35.5),
                    v(-25.0, 6.5, -35.0),
                    v(0.0, 6.0, -35.5),
                    v(25.0, 6.5, -35.0),
                    v(55.0, 6.0, -35.5),
                ],
                hits: None,
                duration: Some(12.0),
                clearance: Some(true),
                turns: None,
            },
            when(Conditions {
                blocked: Some(false),
                min_clearance: Some(1.0),
                never_enters: Some(vec!["no-camera".into()]),
                ..Conditions::default()
            }),
        ),
        probe(
            "drone-flight",
            "The drone's flight from the hill to the crane stays half a metre clear",
            ProbeQuery::Sweep {
                shape: ShapeSpec::Sphere { radius: 0.4 },
                rotation: None,
                path: vec![
                    v(0.0, 16.0, 80.0),
                    v(0.0, 13.0, 40.0),
                    v(0.0, 12.0, -20.0),
                    v(0.0, 12.5, -36.0),
                ],
                hits: None,
                duration: Some(20.0),
                clearance: None,
                turns: None,
            },
            when(Conditions {
                min_clearance: Some(0.5),
                ..Conditions::default()
            }),
        ),
        probe(
            "ball-along-bollards",
            "A ball rolled along the quay edge meets every bollard",
            ProbeQuery::Sweep {
                shape: ShapeSpec::Sphere { radius: 0.3 },
                rotation: None,
                path: vec![v(-52.0, 0.5, QUAY_Z + 0.7), v(52.0, 0.5, QUAY_Z + 0.7)],
                hits: Some(HitsMode::All),
                duration: Some(8.0),
                clearance: None,
                turns: None,
            },
            None,
        ),
        ignoring_tags(
            probe(
                "forklift-route",
                "A forklift can drive from the warehouse door to the quay with 0.3 m to spare",
                ProbeQuery::Sweep {
                    shape: ShapeSpec::Box {
                        half_extents: [0.6, 1.1, 1.4],
                    },
                    rotation: None,
                    path: vec![
                        v(door_x, 1.16, wz0 - 3.0),
                        v(door_x, 1.16, -20.0),
                        v(5.0, 1.16, -30.0),
                    ],
                    hits: None,
                    duration: None,
                    clearance: None,
                    turns: None,
                },
                when(Conditions {
                    min_clearance: Some(0.3),
                    ..Conditions::default()
                }),
            ),
            &["ground"],
        ),
        // A character through doorways, the culvert and up the stairs.
        probe(
            "walk-through-vehicle-door",
            "A character walks in through the vehicle door",
            walk(vec![
                v(door_x, standing(0.0), wz0 - 7.0),
                v(door_x, standing(0.0), wz0 + 7.0),
            ]),
            clear(),
        ),
        // A 4.2 m beam is wider than the 4 m door across, so it is turned end-on in the yard first.
        probe(
            "beam-turned-through-vehicle-door",
            "A 4.2 m beam carried across fits through the vehicle door once turned end-on",
            ProbeQuery::Sweep {
                shape: ShapeSpec::Box {
                    half_extents: [2.1, 0.15, 0.15],
                },
                rotation: None,
                path: vec![
                    v(door_x, 1.2, wz0 - 9.0),
                    v(door_x, 1.2, wz0 - 3.0),
                    v(door_x, 1.2, wz0 + 7.0),
                ],
                hits: None,
                duration: None,
                clearance: None,
                turns: Some(Turns::Yaw(vec![0.0, 90.0, 90.0])),
            },
            clear(),
        ),
        probe(
            "walk-through-personnel-door",
            "A character walks in through the personnel door",
            walk(vec![
                v(personnel_x, standing(0.0), wz0 - 6.0),
                v(personnel_x, standing(0.0), wz0 + 5.0),
            ]),
            clear(),
        ),
        probe(
            "walk-into-office",
            "A character walks into the office",
            walk(vec![
                v(office_door_x, standing(0.0), OFFICE[1] - 5.0),
                v(office_door_x, standing(0.0), OFFICE[1] + 5.0),
            ]),
            clear(),
        ),
        ignoring_tags(
            probe(
                "crawl-through-culvert",
                "A character just fits through the culvert, 4 cm to spare",
                ProbeQuery::Sweep {
                    shape: character(),
                    rotation: None,
                    path: vec![
                        v(cx0 - 4.0, standing(0.0), cz),
                        v(cx1 + 4.0, standing(0.0), cz),
                    ],
                    hits: None,
                    duration: Some(4.0),
                    clearance: None,
                    turns: None,
                },
                when(Conditions {
                    blocked: Some(false),
                    min_clearance: Some(0.04),
                    ..Conditions::default()
                }),
            ),
            &["ground"],
        ),
        ignoring_tags(
            probe(
                "window-too-small",
                "A character cannot climb through a warehouse window",
                walk(vec![v(wx0 - 5.0, 3.1, 15.0), v(wx0 + 4.0, 3.1, 15.0)]),
                blocked(),
            ),
            &["glass"],
        ),
        probe(
            "walk-up-to-catwalk",
            "A character climbs the stairs and walks the catwalk",
            walk(vec![
                v(40.7, standing(0.0), -1.5),
                v(40.7, standing(0.0), -0.4),
                v(40.7, standing(CATWALK_Y) + 0.01, 5.6),
                v(40.7, standing(CATWALK_Y) + 0.01, 19.0),
            ]),
            clear(),
        ),
        // Walked as a character moves: up the twenty 0.2 m steps and along the catwalk.
        probe(
            "character-walks-to-catwalk",
            "A character walks up the stairs and along the catwalk",
            ProbeQuery::Walk {
                shape: character(),
                path: vec![
                    v(40.7, standing(0.0), -2.0),
                    v(40.7, standing(CATWALK_Y), 15.0),
                ],
                max_step: None,
                max_slope: None,
            },
            when(Conditions {
                reaches: Some(true),
                enters: Some(vec!["checkpoint".into()]),
                ..Conditions::default()
            }),
        ),
        // Crate 1 is 0.6 m tall: no character steps onto it.
        probe(
            "crate-1-too-high-to-step-on",
            "A character cannot step up onto crate 1",
            ProbeQuery::Walk {
                shape: character(),
                path: vec![v(4.0, standing(0.0), -13.0), v(4.0, standing(0.0), -7.0)],
                max_step: None,
                max_slope: None,
            },
            when(Conditions {
                reaches: Some(false),
                ..Conditions::default()
            }),
        ),
        // The spoil bank's south face rises at 55°: over the 45° a character walks up.
        probe(
            "character-up-the-spoil-bank",
            "A character cannot walk straight up the spoil bank's steep face",
            ProbeQuery::Walk {
                shape: character(),
                path: vec![v(-20.0, standing(0.0), 23.0), v(-20.0, standing(2.4), 28.2)],
                max_step: None,
                max_slope: None,
            },
            when(Conditions {
                reaches: Some(false),
                ..Conditions::default()
            }),
        ),
        // Across the 0.44 m gap from a stack of three containers down onto a stack of two.
        probe(
            "container-gap-jump",
            "A character jumps the gap from the high container stack onto the lower one",
            ProbeQuery::Jump {
                shape: character(),
                rotation: None,
                from: v(-18.4, standing(3.0 * 2.59), -19.1),
                launch: Launch::Target {
                    to: v(-16.0, standing(2.0 * 2.59), -19.1),
                    apex: 0.8,
                },
                gravity: None,
                max_slope: None,
                max_time: None,
            },
            when(Conditions {
                first_object: Some("container-19".into()),
                walkable: Some(true),
                ..Conditions::default()
            }),
        ),
        // Off the quay's edge between two bollards, over the kerb and into the river.
        probe(
            "jump-into-the-river",
            "A character jumping off the quay lands in the river",
            ProbeQuery::Jump {
                shape: character(),
                rotation: None,
                from: v(4.0, standing(0.0), QUAY_Z + 1.5),
                launch: Launch::Velocity(v(0.0, 4.0, -5.0)),
                gravity: None,
                max_slope: None,
                max_time: None,
            },
            when(Conditions {
                enters: Some(vec!["water".into()]),
                ..Conditions::default()
            }),
        ),
        // Spawn points off the pads (the pads have a rule of their own).
        probe(
            "spawn-near-boulder",
            "Spawn beside the boulder is clear",
            spawn(v(BOULDER.x - 4.3, standing(0.0), BOULDER.z)),
            clear(),
        ),
        probe(
            "spawn-by-drums",
            "Spawn beside the drums is clear (fails on purpose: the drums were put there later)",
            spawn(v(8.4, standing(0.0), 3.2)),
            clear(),
        ),
        probe(
            "marker-buried-in-boulder",
            "The treasure marker is buried inside the boulder",
            ProbeQuery::Overlap {
                shape: ShapeSpec::Sphere { radius: 0.2 },
                at: BOULDER,
                rotation: None,
            },
            blocked(),
        ),
        ignoring_tags(
            probe(
                "pallet-bay-clear-of-office",
                "The pallet bay keeps half a metre from the office wall",
                ProbeQuery::Closest {
                    shape: ShapeSpec::Box {
                        half_extents: [0.4, 0.6, 0.8],
                    },
                    at: v(-36.0, 0.61, 12.0),
                    rotation: None,
                    max_distance: 5.0,
                },
                when(Conditions {
                    distance: Some(Range {
                        min: Some(0.5),
                        max: None,
                    }),
                    ..Conditions::default()
                }),
            ),
            &["ground"],
        ),
    ];
    let props = crates()
        .into_iter()
        .map(|(n, c)| (n.to_string(), c, 0.3, "sits"))
        .chain(
            drums()
                .into_iter()
                .map(|(n, c)| (n.to_string(), c, 0.45, "stands")),
        )
        .chain(
            bollards()
                .into_iter()
                .step_by(6)
                .map(|(n, c)| (n, c, 0.5, "stands")),
        );
    for (name, centre, half_height, verb) in props {
        // A point 1 cm above the floor under the prop's centre lies inside the prop only while the
        // prop rests on the floor; lifted or moved, the floor is nearest instead.
        let probe_point = v(centre.x, centre.y - half_height + 0.01, centre.z);
        probes.push(probe(
            &format!("{name}-on-floor"),
            &format!("{} {verb} on the floor at its spot", capitalised(&name)),
            resting(probe_point),
            when(Conditions {
                first_object: Some(name.clone()),
                distance: Some(Range {
                    min: None,
                    max: Some(0.0),
                }),
                ..Conditions::default()
            }),
        ));
    }
    probes.extend(settle_probes());
    probes.extend(whole_level_probes());
    ProbeSet {
        schema: None,
        level: level.to_string(),
        probes,
        rules: rules(),
    }
}

/// The lookouts' sightline matrix and what share of the yard they see together.
fn whole_level_probes() -> Vec<Probe> {
    let lookouts = Spots {
        points: Vec::new(),
        tags: vec!["lookout".into()],
        eye: None,
    };
    let pairs = |list: &[[&str; 2]]| {
        Some(
            list.iter()
                .map(|p| p.map(|n| n.to_string()))
                .collect::<Vec<_>>(),
        )
    };
    vec![
        ignoring_tags(
            probe(
                "lookout-matrix",
                "Which lookouts see which (glass is see-through)",
                ProbeQuery::Sightlines {
                    spots: lookouts.clone(),
                },
                when(Conditions {
                    see: pairs(&[
                        ["lookout-gate", "lookout-crane"],
                        ["lookout-crane", "lookout-warehouse-roof"],
                        ["lookout-hill", "lookout-gate"],
                    ]),
                    blind: pairs(&[["lookout-gate", "lookout-catwalk"]]),
                    ..Conditions::default()
                }),
            ),
            &["glass"],
        ),
        ignoring_tags(
            probe(
                "yard-coverage",
                "The lookouts together see most of the yard",
                ProbeQuery::Coverage {
                    spots: lookouts,
                    region: Region {
                        min: [-YARD_X + 4.0, -1.0, QUAY_Z],
                        max: [YARD_X - 4.0, 3.0, FENCE_Z - 0.5],
                        outline: None,
                    },
                    spacing: 1.0,
                },
                when(Conditions {
                    seen: Some(Range {
                        min: Some(0.6),
                        max: None,
                    }),
                    ..Conditions::default()
                }),
            ),
            &["glass"],
        ),
        // One pickup was left on top of a stack of three containers, where no one walks.
        probe(
            "pickups-reachable",
            "Every pickup can be walked to from a spawn pad (fails on purpose: one was left on \
             top of the containers)",
            ProbeQuery::Reach {
                shape: character(),
                spots: Spots {
                    points: Vec::new(),
                    tags: vec!["spawn".into()],
                    eye: Some(0.91),
                },
                region: Region {
                    min: [-50.0, -1.0, -36.0],
                    max: [46.0, 12.0, 34.0],
                    outline: None,
                },
                spacing: 1.0,
                targets: vec![Spot {
                    name: "pickup-on-containers".into(),
                    at: [-21.0, 3.0 * 2.59 + 0.3, -19.1],
                }],
                target_tags: vec!["pickup".into()],
                max_step: None,
                max_slope: None,
            },
            clear(),
        ),
    ]
}

/// The demo's rules: every spawn pad has room for a character, every prop rests on what is under
/// it, and every lookout sees the quay gate.
fn rules() -> Vec<crate::probe::Rule> {
    let gate = [0.0, 1.0, QUAY_Z + 3.0];
    let text = format!(
        r#"[
  {{"id": "spawns-clear", "label": "A character fits on the spawn pad",
    "objects": {{"tags": ["spawn"]}},
    "clear": {{"shape": {{"type": "capsule", "radius": 0.35, "half_height": 0.55}},
               "at": {{"anchor": "top", "offset": [0, 0.91, 0]}}}}}},
  {{"id": "props-rest", "label": "The prop rests on what is under it",
    "objects": {{"tags": ["prop"]}}, "rests": {{"max_gap": 0.01, "max_sink": 0.01}}}},
  {{"id": "lookouts-see-gate", "label": "The lookout sees the quay gate",
    "objects": {{"tags": ["lookout"]}}, "ignore_tags": ["glass"],
    "probe": {{"kind": "ray", "from": {{"anchor": "top", "offset": [0, 1.7, 0]}},
               "to": [{}, {}, {}], "expect": "clear"}}}}
]"#,
        gate[0], gate[1], gate[2]
    );
    crate::probe::parse_rules(std::path::Path::new("demo rules"), &text)
        .expect("the demo's rules are valid")
}

fn capitalised(name: &str) -> String {
    let mut c = name.replace('-', " ").chars().collect::<Vec<_>>();
    if let Some(first) = c.first_mut() {
        *first = first.to_ascii_uppercase();
    }
    c.into_iter().collect()
}
