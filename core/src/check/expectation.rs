//! An expectation taken from a probe's current answer, so that a designer who has checked a probe by
//! eye can fix what it shows in one action.

use super::records::{Hits, ProbeResult, Verdict};
use crate::probe::{Conditions, Expect, ExpectWord, Range};

/// Slack around measured distances and clearances, metres (the default change tolerance).
const SLACK: f64 = super::compare::DEFAULT_TOLERANCE;

/// The expectation the answer meets: clear, or blocked by its first object; for closest points and
/// rests, the nearest object (the support) and its distance (gap) ± 1 cm; for sweeps that report
/// clearance, the clearance rounded down to the centimetre; for sightlines, which pairs see each
/// other and which do not; for coverage, at least the share seen now, rounded down to a tenth of a
/// percent; for jumps, the object landed on and whether it is walkable; for walks, whether it
/// reaches the end; for a settle that comes to rest, how far it moves and turns (rounded up, with a
/// centimetre and a degree of slack). `None` when the probe could
/// not be answered.
pub fn expectation_from(result: &ProbeResult) -> Option<Expect> {
    if result.verdict == Verdict::Error {
        return None;
    }
    let first = result
        .hits
        .first()
        .map(|(object, _, measure)| (object.to_string(), measure));
    let around = |distance: f64, floor: f64| Range {
        min: Some(((distance - SLACK) * 1000.0).floor().max(floor) / 1000.0),
        max: Some(((distance + SLACK) * 1000.0).ceil() / 1000.0),
    };
    Some(match (&result.hits, first) {
        (Hits::Closest(_), Some((object, distance))) => Expect::Conditions(Box::new(Conditions {
            first_object: Some(object),
            distance: Some(around(distance, 0.0)),
            ..Conditions::default()
        })),
        (Hits::Rest(_), Some((object, gap))) => Expect::Conditions(Box::new(Conditions {
            first_object: Some(object),
            distance: Some(around(gap, f64::NEG_INFINITY)),
            ..Conditions::default()
        })),
        (Hits::Jump(h), Some((object, _))) => Expect::Conditions(Box::new(Conditions {
            first_object: Some(object),
            walkable: h.first().map(|x| x.walkable),
            ..Conditions::default()
        })),
        (Hits::Reach(h), _) => {
            let list = |reached: bool| {
                let names: Vec<String> = h
                    .iter()
                    .flat_map(|r| &r.targets)
                    .filter(|t| t.reachable == reached)
                    .map(|t| t.name.to_string())
                    .collect();
                (!names.is_empty()).then_some(names)
            };
            Expect::Conditions(Box::new(Conditions {
                reachable: list(true),
                unreachable: list(false),
                ..Conditions::default()
            }))
        }
        (Hits::Settle(h), _) if h.first().is_some_and(|x| x.rests()) => {
            let x = &h[0];
            Expect::Conditions(Box::new(Conditions {
                max_move: Some(((x.moved + SLACK) * 100.0).ceil() / 100.0),
                max_turn: Some((x.turned + 1.0).ceil().min(180.0)),
                ..Conditions::default()
            }))
        }
        (Hits::Walk(h), _) => Expect::Conditions(Box::new(Conditions {
            reaches: h.first().map(|w| w.reached),
            ..Conditions::default()
        })),
        (Hits::Sightlines(pairs), _) => {
            let list = |sees: bool| {
                let chosen: Vec<[String; 2]> = pairs
                    .iter()
                    .filter(|p| p.sees == sees)
                    .map(|p| [p.a.to_string(), p.b.to_string()])
                    .collect();
                (!chosen.is_empty()).then_some(chosen)
            };
            Expect::Conditions(Box::new(Conditions {
                see: list(true),
                blind: list(false),
                ..Conditions::default()
            }))
        }
        (Hits::Coverage(c), _) => Expect::Conditions(Box::new(Conditions {
            seen: Some(Range {
                min: Some(
                    c.first()
                        .map_or(0.0, |c| (c.share * 1000.0).floor() / 1000.0),
                ),
                max: None,
            }),
            ..Conditions::default()
        })),
        (_, Some((object, _))) => Expect::Conditions(Box::new(Conditions {
            blocked: Some(true),
            first_object: Some(object),
            ..Conditions::default()
        })),
        (_, None) => match &result.clearance {
            Some(c) if c.distance >= SLACK => Expect::Conditions(Box::new(Conditions {
                blocked: Some(false),
                min_clearance: Some((c.distance * 100.0).floor() / 100.0),
                ..Conditions::default()
            })),
            _ => Expect::Word(ExpectWord::Clear),
        },
    })
}
