//! An expectation taken from a probe's current answer, so that a designer who has checked a probe by
//! eye can fix what it shows in one action.

use super::records::{Hits, ProbeResult, Verdict};
use crate::probe::{Conditions, Expect, ExpectWord, Range};

/// Slack around measured distances and clearances, metres (the default change tolerance).
const SLACK: f64 = super::compare::DEFAULT_TOLERANCE;

/// The expectation the answer meets: clear, or blocked by its first object; for closest points, the
/// nearest object and its distance ± 1 cm; for sweeps that report clearance, the clearance rounded
/// down to the centimetre. `None` when the probe could not be answered.
pub fn expectation_from(result: &ProbeResult) -> Option<Expect> {
    if result.verdict == Verdict::Error {
        return None;
    }
    let first = result
        .hits
        .first()
        .map(|(object, _, measure)| (object.to_string(), measure));
    Some(match (&result.hits, first) {
        (Hits::Closest(_), Some((object, distance))) => Expect::Conditions(Conditions {
            first_object: Some(object),
            distance: Some(Range {
                min: Some(((distance - SLACK) * 1000.0).floor().max(0.0) / 1000.0),
                max: Some(((distance + SLACK) * 1000.0).ceil() / 1000.0),
            }),
            ..Conditions::default()
        }),
        (_, Some((object, _))) => Expect::Conditions(Conditions {
            blocked: Some(true),
            first_object: Some(object),
            ..Conditions::default()
        }),
        (_, None) => match &result.clearance {
            Some(c) if c.distance >= SLACK => Expect::Conditions(Conditions {
                blocked: Some(false),
                min_clearance: Some((c.distance * 100.0).floor() / 100.0),
                ..Conditions::default()
            }),
            _ => Expect::Word(ExpectWord::Clear),
        },
    })
}
