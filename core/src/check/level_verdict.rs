//! What the whole-level kinds (rest, sightlines, coverage) found, in words, and which of their
//! conditions do not hold.

use std::collections::HashMap;

use super::records::Hits;
use super::verdict::{metres, named};
use crate::probe::Conditions;

/// What a rest, sightlines or coverage probe found, in a few words.
pub(super) fn describe(hits: &Hits) -> String {
    match hits {
        Hits::Rest(h) => match h.first() {
            Some(x) if x.gap < 0.0 => format!(
                "sinks {} into {}",
                metres(-x.gap),
                named(&x.object, &x.material)
            ),
            Some(x) => format!(
                "rests on {} with a gap of {}",
                named(&x.object, &x.material),
                metres(x.gap)
            ),
            None => "has nothing below it within reach".into(),
        },
        Hits::Sightlines(pairs) => {
            let seeing = pairs.iter().filter(|p| p.sees).count();
            let mut text = format!("{seeing} of {} pairs see each other", pairs.len());
            if let Some(p) = pairs.iter().find(|p| !p.sees) {
                text.push_str(&format!(
                    "; {}–{} blocked by {} at {}",
                    p.a,
                    p.b,
                    p.object.as_deref().unwrap_or("?"),
                    metres(p.distance.unwrap_or(0.0))
                ));
            }
            text
        }
        Hits::Coverage(c) => match c.first() {
            Some(c) => format!(
                "sees {:.1}% of the region ({} of {} points; {:.1} m² unseen)",
                c.share * 100.0,
                c.seen,
                c.points,
                c.area_unseen
            ),
            None => "no surface in the region".into(),
        },
        _ => String::new(),
    }
}

/// The first condition of the whole-level kinds that does not hold, worded as what was expected.
pub(super) fn first_unmet(c: &Conditions, hits: &Hits) -> Option<String> {
    if let Hits::Sightlines(pairs) = hits {
        let sees = |a: &str, b: &str| {
            pairs
                .iter()
                .find(|p| (&*p.a, &*p.b) == (a, b) || (&*p.a, &*p.b) == (b, a))
                .map(|p| p.sees)
        };
        for [a, b] in c.see.iter().flatten() {
            if sees(a, b) != Some(true) {
                return Some(format!("{a} and {b} to see each other"));
            }
        }
        for [a, b] in c.blind.iter().flatten() {
            if sees(a, b) != Some(false) {
                return Some(format!("{a} and {b} not to see each other"));
            }
        }
        if let Some(n) = c.min_seen {
            let mut seen: HashMap<&str, usize> = HashMap::new();
            for p in pairs {
                for (x, _) in [(&p.a, &p.b), (&p.b, &p.a)] {
                    *seen.entry(x).or_default() += usize::from(p.sees);
                }
            }
            let mut short: Vec<(&str, usize)> = seen.into_iter().filter(|(_, k)| *k < n).collect();
            short.sort();
            if let Some((spot, k)) = short.first() {
                return Some(format!(
                    "every spot to see at least {n} others ({spot} sees {k})"
                ));
            }
        }
    }
    if let (Some(range), Hits::Coverage(c)) = (c.seen, hits) {
        let share = c.first().map_or(0.0, |c| c.share);
        if range.min.is_some_and(|lo| share < lo) || range.max.is_some_and(|hi| share > hi) {
            let percent = |v: f64| format!("{:.1}%", v * 100.0);
            return Some(match (range.min, range.max) {
                (Some(lo), Some(hi)) => format!("between {} and {} seen", percent(lo), percent(hi)),
                (Some(lo), None) => format!("at least {} seen", percent(lo)),
                (None, Some(hi)) => format!("at most {} seen", percent(hi)),
                (None, None) => "a share seen".into(),
            });
        }
    }
    None
}
