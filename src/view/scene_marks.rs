//! Every mark of the view for one frame, as pure geometry (no egui, no GL, so it is tested without a
//! window): each shown probe with its answer (the selection emphasised, the rest stepping back), the
//! objects the selected overlap probe overlaps, the selected probe's handles, the points being placed,
//! and the outline of the triangle under the pointer.

use glam::DVec3;

use super::marks::Mark;
use super::palette::{HANDLE, HOVER_OUTLINE, StateMark, VOLUME, VOLUME_ALPHA, okabe_ito};
use super::probe_marks::{Emphasis, probe_marks};
use plumbline_core::check::{Hits, ProbeResult, VolumeCrossing};
use plumbline_core::level::{Geometry, Level, LevelObject, VOLUME_TAG};
use plumbline_core::lint::Finding;
use plumbline_core::probe::Probe;
use plumbline_core::query::placed_primitive_surface;

/// Overlapped meshes with more triangles than this are not highlighted (the copy would cost more to
/// draw than it tells). Ours.
pub const HIGHLIGHT_TRIANGLES: usize = 20_000;

/// A highlighted object with more triangles than this shows only its triangles within
/// [`NEAR_METRES`] of the point it is highlighted for (where an overlap is deepest, where a lint
/// finding is): the part that matters, at a cost a frame can bear. Ours.
const WHOLE_TRIANGLES: usize = 2_000;

/// How near that point a big object's triangles are shown, metres. Ours: a few character heights.
const NEAR_METRES: f64 = 4.0;

/// How far a highlighted object's copy is pushed out from its centre, metres, so that it does not
/// fight the object's own surface for depth. Ours.
const HIGHLIGHT_PUSH: f64 = 0.02;

/// Size of a selected probe's handles, pixels.
const HANDLE_SIZE: f64 = 11.0;
/// Size of a placed point, pixels.
const PLACED_SIZE: f64 = 9.0;
/// Size of the markers where the selected probe enters and leaves volumes, pixels.
const EVENT_SIZE: f64 = 12.0;

/// What the view shows this frame.
pub struct SceneMarks<'a> {
    /// The level (for the objects an overlap probe overlaps).
    pub level: &'a Level,
    /// Every probe.
    pub probes: &'a [Probe],
    /// Their answers, in the same order.
    pub results: &'a [ProbeResult],
    /// The probes to draw, by index.
    pub shown: &'a [usize],
    /// The inspected probe.
    pub selected: Option<usize>,
    /// Every selected probe, ascending (empty when nothing is selected).
    pub selected_all: &'a [usize],
    /// The picked hit of the inspected probe.
    pub hit: Option<usize>,
    /// The selected probe's draggable points.
    pub handles: &'a [DVec3],
    /// Points placed so far with a placing tool, and where the next would go.
    pub preview: &'a [DVec3],
    /// The triangle under the pointer.
    pub hover_triangle: Option<[DVec3; 3]>,
    /// The lint finding picked, drawn over everything: its objects highlighted, its edges and
    /// its point.
    pub finding: Option<&'a Finding>,
    /// Objects with this tag are highlighted.
    pub highlight_tag: Option<&'a str>,
    /// While something is selected, the other probes fade and thin out (off: all at full strength).
    pub dim_others: bool,
}

impl<'a> SceneMarks<'a> {
    /// The `shown` probes of a set as they stand: nothing selected, placed, hovered or highlighted,
    /// the others fading once something is selected (set the fields to change that).
    pub fn of(
        level: &'a Level,
        probes: &'a [Probe],
        results: &'a [ProbeResult],
        shown: &'a [usize],
    ) -> SceneMarks<'a> {
        SceneMarks {
            level,
            probes,
            results,
            shown,
            selected: None,
            selected_all: &[],
            hit: None,
            handles: &[],
            preview: &[],
            hover_triangle: None,
            finding: None,
            highlight_tag: None,
            dim_others: true,
        }
    }
}

/// The marks of a frame, in drawing order.
pub fn scene_marks(scene: &SceneMarks) -> Vec<Mark> {
    let mut marks = Vec::new();
    volume_marks(scene.level, &mut marks);
    // The inspected probe last, so that it is drawn over the others where they meet.
    let order = scene
        .shown
        .iter()
        .filter(|&&i| scene.selected != Some(i))
        .chain(scene.shown.iter().filter(|&&i| scene.selected == Some(i)));
    for &i in order {
        let (Some(probe), Some(result)) = (scene.probes.get(i), scene.results.get(i)) else {
            continue;
        };
        let emphasis = Emphasis {
            selected: scene.selected == Some(i),
            muted: scene.dim_others
                && !scene.selected_all.is_empty()
                && scene.selected_all.binary_search(&i).is_err(),
            hit: scene.hit,
        };
        probe_marks(probe, result, emphasis, scene.level.up, &mut marks);
        if emphasis.selected {
            if let Hits::Overlap(hits) = &result.hits {
                let objects: Vec<(&str, Option<DVec3>)> = hits
                    .iter()
                    .map(|h| (&*h.object, Some(DVec3::from_array(h.point))))
                    .collect();
                highlight_objects(scene.level, &objects, &mut marks);
            }
            volume_event_marks(result, &mut marks);
        }
    }
    if let Some(finding) = scene.finding {
        finding_marks(scene.level, finding, &mut marks);
    }
    if let Some(tag) = scene.highlight_tag {
        let tagged: Vec<(&str, Option<DVec3>)> = scene
            .level
            .objects
            .iter()
            .filter(|o| o.tags.iter().any(|t| t == tag))
            .map(|o| (o.name.as_str(), None))
            .collect();
        highlight_objects(scene.level, &tagged, &mut marks);
    }
    for h in scene.handles {
        marks.push(Mark::Point {
            at: *h,
            colour: HANDLE,
            size: HANDLE_SIZE,
            mark: StateMark::Square,
        });
    }
    for (k, p) in scene.preview.iter().enumerate() {
        marks.push(Mark::Point {
            at: *p,
            colour: HANDLE,
            size: PLACED_SIZE,
            mark: StateMark::Round,
        });
        if k > 0 {
            marks.push(Mark::Line {
                from: scene.preview[k - 1],
                to: *p,
                colour: HANDLE,
                width: 2.5,
                dashed: k + 1 == scene.preview.len(),
            });
        }
    }
    if let Some(t) = scene.hover_triangle {
        for k in 0..3 {
            marks.push(Mark::Line {
                from: t[k],
                to: t[(k + 1) % 3],
                colour: HOVER_OUTLINE,
                width: 2.0,
                dashed: false,
            });
        }
    }
    marks
}

/// Every volume of the level, see-through (they block nothing, so the level is seen through them).
fn volume_marks(level: &Level, marks: &mut Vec<Mark>) {
    for object in level
        .objects
        .iter()
        .filter(|o| o.tags.iter().any(|t| t == VOLUME_TAG))
    {
        if let Some((vertices, triangles)) = object_surface(object) {
            marks.push(Mark::Ghost {
                vertices,
                triangles,
                colour: VOLUME,
                alpha: VOLUME_ALPHA,
            });
        }
    }
}

/// Where the selected probe is in, enters and leaves volumes: a round marker where it is in one at
/// the start, a diamond where it enters, a square where it leaves.
fn volume_event_marks(result: &ProbeResult, marks: &mut Vec<Mark>) {
    for event in &result.volumes {
        marks.push(Mark::Point {
            at: DVec3::from_array(event.point),
            colour: VOLUME,
            size: EVENT_SIZE,
            mark: match event.event {
                VolumeCrossing::Inside => StateMark::Round,
                VolumeCrossing::Enter => StateMark::Diamond,
                VolumeCrossing::Exit => StateMark::Square,
            },
        });
    }
}

/// A lint finding: its objects highlighted, its edges in thick lines, and a large marker at its
/// point.
fn finding_marks(level: &Level, finding: &Finding, marks: &mut Vec<Mark>) {
    let objects: Vec<(&str, Option<DVec3>)> = finding
        .objects
        .iter()
        .map(|o| (&**o, Some(finding.point)))
        .collect();
    highlight_objects(level, &objects, marks);
    for [a, b] in &finding.edges {
        marks.push(Mark::Line {
            from: *a,
            to: *b,
            colour: okabe_ito::VERMILLION,
            width: 4.0,
            dashed: false,
        });
    }
    marks.push(Mark::Point {
        at: finding.point,
        colour: okabe_ito::VERMILLION,
        size: 16.0,
        mark: StateMark::Diamond,
    });
}

/// Highlights objects by name (see-through copies of their surfaces): what an overlap probe
/// overlaps, what a lint finding is about, what carries a tag. An object given with a point and
/// more than [`WHOLE_TRIANGLES`] triangles shows only those near the point.
fn highlight_objects(level: &Level, objects: &[(&str, Option<DVec3>)], marks: &mut Vec<Mark>) {
    for (name, near) in objects {
        let Some(object) = level.objects.iter().find(|o| o.name == *name) else {
            continue;
        };
        let Some((vertices, mut triangles)) = object_surface(object) else {
            continue;
        };
        if let Some(point) = near.filter(|_| triangles.len() > WHOLE_TRIANGLES) {
            triangles.retain(|t| {
                t.iter()
                    .any(|&i| vertices[i as usize].distance(point) <= NEAR_METRES)
            });
        }
        let centre = vertices.iter().copied().sum::<DVec3>() / vertices.len().max(1) as f64;
        let vertices = vertices
            .iter()
            .map(|v| *v + (*v - centre).normalize_or_zero() * HIGHLIGHT_PUSH)
            .collect();
        marks.push(Mark::Ghost {
            vertices,
            triangles,
            colour: okabe_ito::ORANGE,
            alpha: 130,
        });
    }
}

/// An object's surface in level coordinates, unless it is a mesh too big to copy into marks.
fn object_surface(object: &LevelObject) -> Option<(Vec<DVec3>, Vec<[u32; 3]>)> {
    match &object.geometry {
        Geometry::Mesh(mesh) if mesh.triangles.len() <= HIGHLIGHT_TRIANGLES => {
            Some((mesh.vertices.clone(), mesh.triangles.clone()))
        }
        Geometry::Mesh(_) => None,
        Geometry::Primitive {
            shape,
            translation,
            rotation,
        } => Some(placed_primitive_surface(shape, *translation, *rotation)),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use plumbline_core::check::{OverlapRecord, Verdict};
    use plumbline_core::level::{LevelObject, Primitive, ShapeSpec};
    use plumbline_core::probe::ProbeQuery;
    use plumbline_core::query::Filter;

    fn overlap_probe() -> (Level, Probe, ProbeResult) {
        let level = Level {
            up: DVec3::Y,
            objects: vec![LevelObject {
                name: "drum".into(),
                tags: Vec::new(),
                geometry: Geometry::Primitive {
                    shape: Primitive::Sphere { radius: 1.0 },
                    translation: DVec3::new(5.0, 0.0, 0.0),
                    rotation: glam::DQuat::IDENTITY,
                },
            }],
        };
        let probe = Probe {
            id: "spawn".into(),
            label: None,
            filter: Filter::default(),
            query: ProbeQuery::Overlap {
                shape: ShapeSpec::Sphere { radius: 0.5 },
                at: DVec3::new(4.0, 0.0, 0.0),
                rotation: None,
            },
            expect: None,
            from_rule: None,
        };
        let result = ProbeResult {
            id: "spawn".into(),
            kind: probe.query.kind(),
            verdict: Verdict::Unchecked,
            reason: "".into(),
            hits: Hits::Overlap(vec![OverlapRecord {
                object: "drum".into(),
                tags: Vec::<String>::new().into(),
                depth: 0.5,
                direction: [-1.0, 0.0, 0.0],
                point: [4.0, 0.0, 0.0],
                enclosed: false,
                material: None,
            }]),
            clearance: None,
            volumes: Vec::new(),
        };
        (level, probe, result)
    }

    #[test]
    fn a_big_overlapped_mesh_is_highlighted_only_near_the_overlap() {
        let (mut level, probe, mut result) = overlap_probe();
        // A flat ground of 40 × 40 one-metre squares (3,200 triangles) beside the drum.
        let n = 40u32;
        let vertices = (0..=n)
            .flat_map(|i| (0..=n).map(move |j| DVec3::new(f64::from(i), -1.0, f64::from(j))))
            .collect();
        let at = |i: u32, j: u32| i * (n + 1) + j;
        let triangles = (0..n)
            .flat_map(|i| (0..n).map(move |j| (i, j)))
            .flat_map(|(i, j)| {
                [
                    [at(i, j), at(i, j + 1), at(i + 1, j)],
                    [at(i + 1, j), at(i, j + 1), at(i + 1, j + 1)],
                ]
            })
            .collect();
        level.objects.push(LevelObject {
            name: "ground".into(),
            tags: Vec::new(),
            geometry: Geometry::Mesh(plumbline_core::level::Mesh {
                vertices,
                triangles,
                origin: Default::default(),
            }),
        });
        let Hits::Overlap(hits) = &mut result.hits else {
            unreachable!("an overlap");
        };
        let point = DVec3::new(4.0, -1.0, 0.0);
        hits.push(OverlapRecord {
            object: "ground".into(),
            point: point.to_array(),
            ..hits[0].clone()
        });
        let (probes, results) = ([probe], [result]);
        let scene = SceneMarks {
            selected: Some(0),
            selected_all: &[0],
            ..SceneMarks::of(&level, &probes, &results, &[0])
        };
        let highlighted: Vec<(Vec<DVec3>, Vec<[u32; 3]>)> = scene_marks(&scene)
            .into_iter()
            .filter_map(|m| match m {
                Mark::Ghost {
                    vertices,
                    triangles,
                    colour,
                    ..
                } if colour == okabe_ito::ORANGE => Some((vertices, triangles)),
                _ => None,
            })
            .collect();
        let [(_, drum), (ground_vertices, ground)] = highlighted.as_slice() else {
            panic!("the drum and the ground are highlighted");
        };
        let (_, whole_drum) = object_surface(&level.objects[0]).unwrap();
        assert_eq!(drum.len(), whole_drum.len(), "a small object whole");
        assert!(
            !ground.is_empty() && ground.len() < 200,
            "{} triangles",
            ground.len()
        );
        for t in ground {
            let nearest = t
                .iter()
                .map(|&i| ground_vertices[i as usize].distance(point))
                .fold(f64::INFINITY, f64::min);
            assert!(nearest <= NEAR_METRES + 2.0 * HIGHLIGHT_PUSH, "{nearest}");
        }
    }

    #[test]
    fn the_selected_overlap_highlights_what_it_overlaps_and_handles_follow_the_selection() {
        let (level, probe, result) = overlap_probe();
        let (probes, results) = ([probe], [result]);
        let handles = [DVec3::new(4.0, 0.0, 0.0)];
        let mut scene = SceneMarks::of(&level, &probes, &results, &[0]);
        let highlights = |marks: &[Mark]| {
            marks
                .iter()
                .filter(|m| matches!(m, Mark::Ghost { colour, .. } if *colour == okabe_ito::ORANGE))
                .count()
        };
        assert_eq!(highlights(&scene_marks(&scene)), 0, "nothing highlighted");
        scene.selected = Some(0);
        scene.selected_all = &[0];
        scene.handles = &handles;
        let marks = scene_marks(&scene);
        assert_eq!(highlights(&marks), 1, "the drum is highlighted");
        assert!(marks.iter().any(|m| matches!(
            m,
            Mark::Point { colour, mark: StateMark::Square, .. } if *colour == HANDLE
        )));
        // A lint finding about the drum highlights it too, with a marker at its point.
        scene.selected = None;
        scene.selected_all = &[];
        let finding = plumbline_core::lint::Finding {
            kind: plumbline_core::lint::FindingKind::Floats,
            objects: vec!["drum".into()],
            triangles: Vec::new(),
            count: 1,
            measure: Some(0.2),
            point: DVec3::new(4.0, 0.0, 0.0),
            edges: vec![[DVec3::ZERO, DVec3::X]],
            message: "drum floats".into(),
        };
        scene.finding = Some(&finding);
        let marks = scene_marks(&scene);
        assert_eq!(highlights(&marks), 1, "the finding's object is highlighted");
        assert!(
            marks
                .iter()
                .any(|m| matches!(m, Mark::Point { at, .. } if *at == finding.point))
        );
    }

    #[test]
    fn volumes_are_drawn_see_through_and_the_selected_probes_entries_marked() {
        use plumbline_core::check::{VolumeCrossing, VolumeRecord};
        let (mut level, probe, mut result) = overlap_probe();
        level.objects.push(LevelObject {
            name: "pool".into(),
            tags: vec!["volume".into()],
            geometry: Geometry::Primitive {
                shape: Primitive::Box {
                    half_extents: DVec3::ONE,
                },
                translation: DVec3::ZERO,
                rotation: glam::DQuat::IDENTITY,
            },
        });
        result.volumes = vec![VolumeRecord {
            volume: "pool".into(),
            tags: vec!["volume".to_string()].into(),
            event: VolumeCrossing::Enter,
            distance: Some(1.0),
            time: None,
            point: [1.0, 2.0, 3.0],
        }];
        let probes = [probe];
        let results = [result];
        let scene = |selected: Option<usize>| SceneMarks {
            selected,
            ..SceneMarks::of(&level, &probes, &results, &[0])
        };
        let volume_ghosts = |marks: &[Mark]| {
            marks
                .iter()
                .filter(|m| matches!(m, Mark::Ghost { colour, alpha, .. } if *colour == VOLUME && *alpha == VOLUME_ALPHA))
                .count()
        };
        let entry = Mark::Point {
            at: DVec3::new(1.0, 2.0, 3.0),
            colour: VOLUME,
            size: EVENT_SIZE,
            mark: StateMark::Diamond,
        };
        let unselected = scene_marks(&scene(None));
        assert_eq!(volume_ghosts(&unselected), 1);
        assert!(!unselected.contains(&entry));
        let selected = scene_marks(&scene(Some(0)));
        assert!(selected.contains(&entry));
    }
}
