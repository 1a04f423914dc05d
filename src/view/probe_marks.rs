//! How each probe and its answer look in the viewport. Every probe starts with a marker whose shape and
//! colour give its verdict; rays and paths are solid up to the first hit and dashed beyond it; hits are
//! yellow balls with blue normals; sweeps show the shape where it meets the level as a see-through
//! ghost (and, when selected, at the start and end too) and the point of least clearance; closest
//! probes show the segment between the two nearest points; overlaps show the shape, the deepest points
//! and the way out.

use std::sync::Arc;

use glam::{DQuat, DVec3};

use super::marks::{Mark, SharedShape};
use super::palette::{BACKING, HIT, NORMAL, SELECTED, verdict_colour, verdict_mark};
use plumbline_core::check::{Hits, ProbeResult, trajectory};
use plumbline_core::level::ShapeSpec;
use plumbline_core::probe::{JUMP_TIME, Probe, ProbeQuery};
use plumbline_core::query::ProbeShape;

/// Line width of probes, pixels.
const WIDTH: f64 = 3.0;
/// Line width of probes while another is selected, pixels.
const MUTED_WIDTH: f64 = 1.0;
/// Line width of the selected probe, pixels.
const SELECTED_WIDTH: f64 = 5.0;
/// How much wider than a selected line its dark halo is, pixels.
const HALO: f64 = 4.0;
/// Size of a probe's verdict marker, pixels.
const MARKER: f64 = 13.0;
/// Size of a hit marker, pixels.
const HIT_SIZE: f64 = 8.0;
/// Length of normal arrows, pixels.
const ARROW: f64 = 36.0;

/// What of a probe is picked out: nothing, the probe, or the probe and one of its hits.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Emphasis {
    /// The probe is selected.
    pub selected: bool,
    /// Another probe is selected: this one steps back (thin lines, no normals).
    pub muted: bool,
    /// Index of the selected hit.
    pub hit: Option<usize>,
}

/// Appends the marks of one probe and its answer. The selected probe's lines get a dark halo under
/// them, so they read against any level colour; while another probe is selected, this one's colour
/// fades towards grey.
/// `up` is the level's up axis (jumps fall against it).
pub fn probe_marks(
    probe: &Probe,
    result: &ProbeResult,
    emphasis: Emphasis,
    up: DVec3,
    out: &mut Vec<Mark>,
) {
    let first = out.len();
    own_marks(probe, result, emphasis, up, out);
    if emphasis.selected {
        let halos: Vec<Mark> = out[first..]
            .iter()
            .filter_map(|m| match m {
                Mark::Line {
                    from, to, width, ..
                } => Some(Mark::Halo {
                    from: *from,
                    to: *to,
                    colour: BACKING,
                    width: width + HALO,
                }),
                _ => None,
            })
            .collect();
        out.splice(first..first, halos);
    }
}

/// A colour faded halfway to grey (probes stepping back while another is selected).
fn faded([r, g, b]: [u8; 3]) -> [u8; 3] {
    let grey = 110u16;
    [r, g, b].map(|c| ((u16::from(c) + grey) / 2) as u8)
}

fn own_marks(
    probe: &Probe,
    result: &ProbeResult,
    emphasis: Emphasis,
    up: DVec3,
    out: &mut Vec<Mark>,
) {
    let colour = if emphasis.muted {
        faded(verdict_colour(result.verdict))
    } else {
        verdict_colour(result.verdict)
    };
    let width = if emphasis.selected {
        SELECTED_WIDTH
    } else if emphasis.muted {
        MUTED_WIDTH
    } else {
        WIDTH
    };
    let start = start_point(&probe.query, Some(result));
    out.push(Mark::Point {
        at: start,
        colour: if emphasis.selected { SELECTED } else { colour },
        size: if emphasis.selected {
            MARKER * 1.4
        } else {
            MARKER
        },
        mark: verdict_mark(result.verdict),
    });
    match (&probe.query, &result.hits) {
        (ProbeQuery::Ray { from, to, .. }, Hits::Ray(hits)) => {
            let first = hits.first().map(|h| DVec3::from(h.point));
            path_lines(&[*from, *to], first.map(|p| (0, p)), colour, width, out);
            for (i, hit) in hits.iter().enumerate() {
                hit_marks(hit.point.into(), hit.normal.into(), i, emphasis, out);
            }
        }
        (
            ProbeQuery::Sweep {
                shape,
                rotation,
                path,
                turns,
                ..
            },
            Hits::Sweep(hits),
        ) => {
            let first = hits.first().map(|h| (h.segment, DVec3::from(h.position)));
            path_lines(path, first, colour, width, out);
            // A turning shape is drawn with its turn at each place; otherwise with its one turn.
            let orientations = turns.as_ref().map(|t| t.orientations(up));
            let turn_at = |k: usize| {
                orientations
                    .as_ref()
                    .and_then(|o| o.get(k).copied())
                    .or(*rotation)
            };
            if emphasis.selected {
                // At the ends, and at every point where a turning shape's turn is given.
                let last = path.len() - 1;
                for (k, at) in path.iter().enumerate() {
                    if k == 0 || k == last || orientations.is_some() {
                        ShapeGhost::new(shape, turn_at(k)).place(*at, colour, 50, out);
                    }
                }
            }
            for (i, hit) in hits.iter().enumerate() {
                if i == 0 || emphasis.selected {
                    let turn = hit.rotation.map(DQuat::from_array).or(*rotation);
                    ShapeGhost::new(shape, turn).place(hit.position.into(), HIT, 110, out);
                }
                hit_marks(hit.point.into(), hit.normal.into(), i, emphasis, out);
            }
            if let Some(clearance) = &result.clearance {
                out.push(Mark::Point {
                    at: clearance.position.into(),
                    colour: SELECTED,
                    size: HIT_SIZE,
                    mark: super::palette::StateMark::Diamond,
                });
                out.push(Mark::Line {
                    from: clearance.position.into(),
                    to: clearance.point.into(),
                    colour: SELECTED,
                    width: 2.0,
                    dashed: true,
                });
            }
        }
        (
            ProbeQuery::Closest {
                shape,
                at,
                rotation,
                ..
            },
            Hits::Closest(hits),
        ) => {
            if emphasis.selected {
                ShapeGhost::new(shape, *rotation).place(*at, colour, 70, out);
            }
            for (i, hit) in hits.iter().enumerate() {
                out.push(Mark::Line {
                    from: hit.shape_point.into(),
                    to: hit.point.into(),
                    colour,
                    width,
                    dashed: false,
                });
                hit_marks(hit.point.into(), hit.normal.into(), i, emphasis, out);
            }
        }
        (
            ProbeQuery::Overlap {
                shape,
                at,
                rotation,
            },
            Hits::Overlap(hits),
        ) => {
            ShapeGhost::new(shape, *rotation).place(*at, colour, 90, out);
            for (i, hit) in hits.iter().enumerate() {
                let point = DVec3::from(hit.point);
                let direction = DVec3::from(hit.direction);
                out.push(Mark::Line {
                    from: point,
                    to: point + direction * hit.depth,
                    colour: SELECTED,
                    width: SELECTED_WIDTH,
                    dashed: false,
                });
                hit_marks(point, direction, i, emphasis, out);
            }
        }
        (
            ProbeQuery::Rest {
                shape,
                at,
                rotation,
                ..
            },
            Hits::Rest(hits),
        ) => {
            ShapeGhost::new(shape, *rotation).place(*at, colour, 80, out);
            for (i, hit) in hits.iter().enumerate() {
                let point = DVec3::from(hit.point);
                out.push(Mark::Line {
                    from: *at,
                    to: point,
                    colour,
                    width,
                    dashed: true,
                });
                hit_marks(point, hit.normal.into(), i, emphasis, out);
            }
        }
        (ProbeQuery::Sightlines { .. }, Hits::Sightlines(pairs)) if emphasis.selected => {
            sightline_marks(pairs, colour, width, emphasis, out);
        }
        // Whole-level answers cover the view: drawn in full only while selected.
        (ProbeQuery::Coverage { region, .. }, Hits::Coverage(records)) if emphasis.selected => {
            region_outline(region, colour, width, out);
            for record in records {
                coverage_marks(record, out);
            }
        }
        // A reach map covers the view: drawn in full only while selected.
        (ProbeQuery::Reach { region, .. }, Hits::Reach(records)) if emphasis.selected => {
            region_outline(region, colour, width, out);
            for record in records {
                reach_marks(record, out);
            }
        }
        (ProbeQuery::Walk { shape, path, .. }, Hits::Walk(walks)) => {
            // The route as drawn, thin and dashed; the way taken, solid; the character where it
            // stopped (or, when selected, where it got to).
            path_lines(path, Some((0, path[0])), colour, width * 0.5, out);
            for walk in walks {
                let taken: Vec<DVec3> = walk.path.iter().map(|p| DVec3::from(*p)).collect();
                if taken.len() >= 2 {
                    path_lines(&taken, None, colour, width, out);
                }
                if let Some(end) = walk.end()
                    && (!walk.reached || emphasis.selected)
                {
                    let tint = if walk.reached { colour } else { HIT };
                    ShapeGhost::new(shape, None).place(end, tint, 110, out);
                }
            }
        }
        (
            ProbeQuery::Settle {
                shape,
                at,
                rotation,
                ..
            },
            Hits::Settle(settled),
        ) => {
            // Where it was put, faint; the way it went; where it ends, solid when at rest.
            ShapeGhost::new(shape, *rotation).place(*at, colour, 50, out);
            for x in settled {
                let way: Vec<DVec3> = x.path.iter().map(|p| DVec3::from(*p)).collect();
                if way.len() >= 2 {
                    path_lines(&way, None, colour, width, out);
                }
                let end = DQuat::from_array(x.rotation);
                let tint = if x.rests() { colour } else { HIT };
                ShapeGhost::new(shape, Some(end)).place(x.position.into(), tint, 120, out);
            }
        }
        (
            ProbeQuery::Jump {
                shape, rotation, ..
            },
            Hits::Jump(hits),
        ) => {
            let landing = hits.first();
            let arc = arc_points(&probe.query, up, landing.map(|h| h.time));
            let ghost = ShapeGhost::new(shape, *rotation);
            if emphasis.selected {
                ghost.place(arc[0], colour, 50, out);
            }
            match landing {
                Some(hit) => {
                    path_lines(&arc, None, colour, width, out);
                    ghost.place(hit.position.into(), HIT, 110, out);
                    hit_marks(hit.point.into(), hit.normal.into(), 0, emphasis, out);
                }
                // Lands nowhere: the arc dashed, as far as it is drawn.
                None => path_lines(&arc, Some((0, arc[0])), colour, width, out),
            }
        }
        _ => {}
    }
}

/// The box of a whole-level probe's region, in thinner lines than the probe's own.
fn region_outline(
    region: &plumbline_core::probe::Region,
    colour: [u8; 3],
    width: f64,
    out: &mut Vec<Mark>,
) {
    box_outline(
        region.min.into(),
        region.max.into(),
        colour,
        width * 0.6,
        out,
    );
}

/// How many straight pieces draw a jump's arc. The answer itself is continuous; only the drawing is
/// made of pieces.
const ARC_PIECES: usize = 48;

/// How long a jump that lands nowhere is drawn for, seconds at most (a fall of about 44 m).
const FALL_DRAWN: f64 = 3.0;

/// Points along a jump's arc from the launch to `until` (seconds; the landing), or for
/// [`FALL_DRAWN`] seconds (at most the probe's own time) when it lands nowhere.
fn arc_points(query: &ProbeQuery, up: DVec3, until: Option<f64>) -> Vec<DVec3> {
    let Ok(Some(arc)) = trajectory(query, up) else {
        return query.points();
    };
    let span = until.unwrap_or_else(|| match query {
        ProbeQuery::Jump { max_time, .. } => max_time.unwrap_or(JUMP_TIME).min(FALL_DRAWN),
        _ => FALL_DRAWN,
    });
    (0..=ARC_PIECES)
        .map(|k| arc.at(span * k as f64 / ARC_PIECES as f64))
        .collect()
}

/// Every sightline of a selected matrix: clear ones thin in the probe's colour, blocked ones solid
/// up to the blocker and dashed beyond it with the blocker marked; the picked pair (as a hit index)
/// thick and orange.
fn sightline_marks(
    pairs: &[plumbline_core::check::PairRecord],
    colour: [u8; 3],
    width: f64,
    emphasis: Emphasis,
    out: &mut Vec<Mark>,
) {
    let mut spots: Vec<[f64; 3]> = Vec::new();
    for (i, pair) in pairs.iter().enumerate() {
        let picked = emphasis.hit == Some(i);
        let (from, to) = (DVec3::from(pair.from), DVec3::from(pair.to));
        let (colour, width) = if picked {
            (SELECTED, SELECTED_WIDTH)
        } else {
            (colour, width * if pair.sees { 0.5 } else { 0.8 })
        };
        match pair.point {
            Some(blocked) => path_lines(&[from, to], Some((0, blocked.into())), colour, width, out),
            None => path_lines(&[from, to], None, colour, width, out),
        }
        if let Some(at) = pair.point {
            out.push(Mark::Point {
                at: at.into(),
                colour: if picked { SELECTED } else { HIT },
                size: if picked {
                    HIT_SIZE * 1.8
                } else {
                    HIT_SIZE * 0.8
                },
                mark: super::palette::StateMark::Round,
            });
        }
        for p in [pair.from, pair.to] {
            if !spots.contains(&p) {
                spots.push(p);
            }
        }
    }
    for p in spots {
        out.push(Mark::Point {
            at: p.into(),
            colour,
            size: MARKER * 0.7,
            mark: super::palette::StateMark::Diamond,
        });
    }
}

/// Small sample-point markers (coverage, reach maps), one per point.
fn dots(
    points: &[[f64; 3]],
    colour: [u8; 3],
    mark: super::palette::StateMark,
    out: &mut Vec<Mark>,
) {
    out.extend(points.iter().map(|p| Mark::Point {
        at: (*p).into(),
        colour,
        size: 4.0,
        mark,
    }));
}

/// A coverage probe's sample points: seen ones as small round bluish-green dots, unseen ones as
/// vermillion squares (shape and colour both tell them apart), and its spots.
fn coverage_marks(record: &plumbline_core::check::CoverageRecord, out: &mut Vec<Mark>) {
    use super::palette::{StateMark, okabe_ito};
    dots(
        &record.seen_points,
        okabe_ito::BLUISH_GREEN,
        StateMark::Round,
        out,
    );
    dots(
        &record.unseen_points,
        okabe_ito::VERMILLION,
        StateMark::Square,
        out,
    );
    for p in &record.spot_points {
        out.push(Mark::Point {
            at: (*p).into(),
            colour: SELECTED,
            size: MARKER * 0.8,
            mark: super::palette::StateMark::Diamond,
        });
    }
}

/// A reach map's ground: reached cells as small round bluish-green dots, walkable cells not reached
/// as vermillion squares, ground too steep as grey crosses; targets as diamonds (bluish green when
/// reached; vermillion, with a dashed line to the nearest reached ground, when not).
fn reach_marks(record: &plumbline_core::check::ReachRecord, out: &mut Vec<Mark>) {
    use super::palette::{STEEP, StateMark, okabe_ito};
    dots(
        &record.reached_points,
        okabe_ito::BLUISH_GREEN,
        StateMark::Round,
        out,
    );
    dots(
        &record.unreached_points,
        okabe_ito::VERMILLION,
        StateMark::Square,
        out,
    );
    dots(&record.steep_points, STEEP, StateMark::Cross, out);
    for t in &record.targets {
        let colour = if t.reachable {
            okabe_ito::BLUISH_GREEN
        } else {
            okabe_ito::VERMILLION
        };
        out.push(Mark::Point {
            at: t.at.into(),
            colour,
            size: MARKER,
            mark: StateMark::Diamond,
        });
        if let (false, Some(nearest)) = (t.reachable, t.nearest) {
            out.push(Mark::Line {
                from: t.at.into(),
                to: nearest.into(),
                colour,
                width: 2.0,
                dashed: true,
            });
        }
    }
}

/// The twelve edges of the box `lo`–`hi`.
fn box_outline(lo: DVec3, hi: DVec3, colour: [u8; 3], width: f64, out: &mut Vec<Mark>) {
    let corner = |k: usize| {
        DVec3::new(
            if k & 1 == 0 { lo.x } else { hi.x },
            if k & 2 == 0 { lo.y } else { hi.y },
            if k & 4 == 0 { lo.z } else { hi.z },
        )
    };
    for a in 0..8 {
        for bit in [1, 2, 4] {
            if a & bit == 0 {
                out.push(Mark::Line {
                    from: corner(a),
                    to: corner(a | bit),
                    colour,
                    width,
                    dashed: true,
                });
            }
        }
    }
}

/// Where a probe's verdict marker goes: the ray's start, the path's first point, the placed shape,
/// the first spot (from the answer, for spots of tagged objects).
pub fn start_point(query: &ProbeQuery, result: Option<&ProbeResult>) -> DVec3 {
    match query {
        ProbeQuery::Ray { from, .. } => *from,
        ProbeQuery::Sweep { path, .. } => path[0],
        ProbeQuery::Closest { at, .. }
        | ProbeQuery::Overlap { at, .. }
        | ProbeQuery::Rest { at, .. }
        | ProbeQuery::Settle { at, .. } => *at,
        ProbeQuery::Jump { from, .. } => *from,
        ProbeQuery::Walk { path, .. } => path[0],
        ProbeQuery::Sightlines { .. } | ProbeQuery::Coverage { .. } | ProbeQuery::Reach { .. } => {
            let answered = result.and_then(|r| match &r.hits {
                Hits::Sightlines(pairs) => pairs.first().map(|p| DVec3::from(p.from)),
                Hits::Coverage(records) => records
                    .first()
                    .and_then(|c| c.spot_points.first())
                    .map(|p| DVec3::from(*p)),
                _ => None,
            });
            answered
                .or_else(|| query.points().first().copied())
                .unwrap_or(DVec3::ZERO)
        }
    }
}

/// Where each row of the probe's hit table is in the level, in the table's order (rays, sweeps,
/// closest points and overlaps; the whole-level kinds have none).
pub fn hit_points(hits: &Hits) -> Vec<DVec3> {
    match hits {
        Hits::Ray(h) => h.iter().map(|x| x.point.into()).collect(),
        Hits::Sweep(h) => h.iter().map(|x| x.point.into()).collect(),
        Hits::Closest(h) => h.iter().map(|x| x.point.into()).collect(),
        Hits::Overlap(h) => h.iter().map(|x| x.point.into()).collect(),
        Hits::Jump(h) => h.iter().map(|x| x.point.into()).collect(),
        Hits::Walk(h) => h
            .iter()
            .filter(|w| !w.reached)
            .filter_map(|w| w.end())
            .collect(),
        Hits::Settle(h) => h.iter().map(|x| x.position.into()).collect(),
        Hits::Rest(_) | Hits::Sightlines(_) | Hits::Coverage(_) | Hits::Reach(_) => Vec::new(),
    }
}

/// Every point that should be in view when the probe is framed (`up`: the level's up axis).
pub fn probe_points(probe: &Probe, result: Option<&ProbeResult>, up: DVec3) -> Vec<DVec3> {
    let mut points = probe.query.points();
    match result.map(|r| &r.hits) {
        Some(Hits::Walk(walks)) => points.extend(
            walks
                .iter()
                .flat_map(|w| w.path.iter().map(|p| DVec3::from(*p))),
        ),
        Some(Hits::Jump(hits)) => {
            points.extend(arc_points(&probe.query, up, hits.first().map(|h| h.time)))
        }
        Some(Hits::Closest(hits)) => points.extend(hits.iter().map(|h| DVec3::from(h.point))),
        Some(Hits::Settle(settled)) => points.extend(
            settled
                .iter()
                .flat_map(|x| x.path.iter().map(|p| DVec3::from(*p))),
        ),
        Some(Hits::Rest(hits)) => points.extend(hits.iter().map(|h| DVec3::from(h.point))),
        Some(Hits::Sightlines(pairs)) => points.extend(
            pairs
                .iter()
                .flat_map(|p| [DVec3::from(p.from), DVec3::from(p.to)]),
        ),
        Some(Hits::Coverage(records)) => points.extend(
            records
                .iter()
                .flat_map(|c| c.spot_points.iter().map(|p| DVec3::from(*p))),
        ),
        _ => {}
    }
    if points.is_empty() {
        points.push(start_point(&probe.query, result));
    }
    points
}

/// The polyline, solid up to the first hit (on segment `first.0` at `first.1`) and dashed after it.
fn path_lines(
    path: &[DVec3],
    first: Option<(usize, DVec3)>,
    colour: [u8; 3],
    width: f64,
    out: &mut Vec<Mark>,
) {
    for (s, pair) in path.windows(2).enumerate() {
        let line = |from, to, dashed, width| Mark::Line {
            from,
            to,
            colour,
            width,
            dashed,
        };
        match first {
            Some((hit_segment, at)) if s == hit_segment => {
                out.push(line(pair[0], at, false, width));
                out.push(line(at, pair[1], true, width * 0.6));
            }
            Some((hit_segment, _)) if s > hit_segment => {
                out.push(line(pair[0], pair[1], true, width * 0.6))
            }
            _ => out.push(line(pair[0], pair[1], false, width)),
        }
    }
}

/// A hit's ball and normal arrow; the selected hit is larger and orange.
/// While another probe is selected, only the first hit is marked.
fn hit_marks(point: DVec3, normal: DVec3, index: usize, emphasis: Emphasis, out: &mut Vec<Mark>) {
    if emphasis.muted && index > 0 {
        return;
    }
    let picked = emphasis.selected && emphasis.hit == Some(index);
    // The selection's hits are larger than anyone else's; the picked one larger still.
    let size = if picked {
        HIT_SIZE * 1.8
    } else if emphasis.selected {
        HIT_SIZE * 1.4
    } else if emphasis.muted {
        HIT_SIZE * 0.7
    } else {
        HIT_SIZE
    };
    out.push(Mark::Point {
        at: point,
        colour: if picked { SELECTED } else { HIT },
        size,
        mark: super::palette::StateMark::Round,
    });
    if emphasis.selected || (index == 0 && !emphasis.muted) {
        out.push(Mark::Arrow {
            from: point,
            direction: normal,
            length: if picked { ARROW * 1.5 } else { ARROW },
            colour: NORMAL,
            width: 2.5,
        });
    }
}

/// A probe's shape, ready to be placed as see-through ghosts.
struct ShapeGhost {
    shape: Option<SharedShape>,
}

impl ShapeGhost {
    fn new(spec: &ShapeSpec, rotation: Option<DQuat>) -> ShapeGhost {
        let shape = ProbeShape::new(spec, rotation.unwrap_or(DQuat::IDENTITY))
            .ok()
            .map(|shape| SharedShape(Arc::new(shape)));
        ShapeGhost { shape }
    }

    fn place(&self, at: DVec3, colour: [u8; 3], alpha: u8, out: &mut Vec<Mark>) {
        if let Some(shape) = &self.shape {
            out.push(Mark::Shape {
                shape: shape.clone(),
                at,
                colour,
                alpha,
            });
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use plumbline_core::check::{RayHitRecord, Verdict};
    use plumbline_core::query::Filter;

    fn ray_with_one_hit() -> (Probe, ProbeResult) {
        let probe = Probe {
            id: "gate-view".into(),
            label: None,
            filter: Filter::default(),
            query: ProbeQuery::Ray {
                from: DVec3::ZERO,
                to: DVec3::new(10.0, 0.0, 0.0),
                hits: None,
            },
            expect: None,
            from_rule: None,
        };
        let result = ProbeResult {
            id: "gate-view".into(),
            kind: probe.query.kind(),
            verdict: Verdict::Pass,
            reason: "".into(),
            hits: Hits::Ray(vec![RayHitRecord {
                object: "gate".into(),
                tags: Vec::<String>::new().into(),
                distance: 4.0,
                t: 0.4,
                point: [4.0, 0.0, 0.0],
                normal: [-1.0, 0.0, 0.0],
                triangle: None,
                source: None,
                material: None,
                back_face: false,
            }]),
            clearance: None,
            volumes: Vec::new(),
        };
        (probe, result)
    }

    fn lines(marks: &[Mark]) -> Vec<(f64, [u8; 3])> {
        marks
            .iter()
            .filter_map(|m| match m {
                Mark::Line { width, colour, .. } => Some((*width, *colour)),
                _ => None,
            })
            .collect()
    }

    fn hit_size(marks: &[Mark]) -> f64 {
        marks
            .iter()
            .find_map(|m| match m {
                Mark::Point { size, colour, .. } if *colour == HIT => Some(*size),
                _ => None,
            })
            .expect("a hit marker")
    }

    fn marks_for(emphasis: Emphasis) -> Vec<Mark> {
        let (probe, result) = ray_with_one_hit();
        let mut marks = Vec::new();
        probe_marks(&probe, &result, emphasis, DVec3::Y, &mut marks);
        marks
    }

    #[test]
    fn the_selected_probe_has_a_dark_halo_under_each_line_and_larger_hits() {
        let plain = marks_for(Emphasis::default());
        let selected = marks_for(Emphasis {
            selected: true,
            ..Emphasis::default()
        });
        let own = lines(&selected);
        assert_eq!(own.len(), lines(&plain).len());
        let halos: Vec<(usize, f64, [u8; 3])> = selected
            .iter()
            .enumerate()
            .filter_map(|(k, m)| match m {
                Mark::Halo { width, colour, .. } => Some((k, *width, *colour)),
                _ => None,
            })
            .collect();
        assert_eq!(halos.len(), own.len(), "one halo per line");
        let first_line = selected
            .iter()
            .position(|m| matches!(m, Mark::Line { .. }))
            .unwrap();
        for ((k, halo_width, halo_colour), (width, _)) in halos.iter().zip(&own) {
            assert!(*k < first_line, "halos come first, under the lines");
            assert_eq!(*halo_colour, BACKING);
            assert_eq!(*halo_width, width + HALO);
        }
        assert!(own.iter().any(|(w, _)| *w == SELECTED_WIDTH));
        assert!(hit_size(&selected) > hit_size(&plain));
    }

    #[test]
    fn probes_step_back_while_another_is_selected() {
        let plain = marks_for(Emphasis::default());
        let muted = marks_for(Emphasis {
            muted: true,
            ..Emphasis::default()
        });
        let colour = verdict_colour(Verdict::Pass);
        // The solid part up to the hit has the full width; the dashed rest is thinner.
        assert_eq!(lines(&plain)[0], (WIDTH, colour));
        assert_eq!(lines(&muted)[0], (MUTED_WIDTH, faded(colour)));
        assert!(lines(&muted).iter().all(|(_, c)| *c == faded(colour)));
        assert!(!muted.iter().any(|m| matches!(m, Mark::Halo { .. })));
        assert!(hit_size(&muted) < hit_size(&plain));
    }

    #[test]
    fn fading_moves_a_colour_halfway_to_grey() {
        assert_eq!(faded([0, 110, 220]), [55, 110, 165]);
    }
}
