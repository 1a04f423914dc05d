//! Judging an answer against a probe's expectation, with one sentence a designer can read.

use std::borrow::Cow;
use std::fmt;

use glam::DVec3;

use super::records::{ClearanceRecord, Hits, Verdict, VolumeRecord};
use crate::probe::{Conditions, Probe};

/// The verdict and the reason for it.
/// `up` is the level's up axis (for regions cut to an outline).
pub fn judge(
    probe: &Probe,
    hits: &Hits,
    clearance: Option<&ClearanceRecord>,
    volumes: &[VolumeRecord],
    up: DVec3,
) -> (Verdict, Cow<'static, str>) {
    let mut answer = describe(hits, clearance);
    if let Some(met) = super::volumes::describe(volumes) {
        let text = answer.to_mut();
        text.push_str("; ");
        text.push_str(&met);
    }
    let Some(expect) = &probe.expect else {
        return (
            Verdict::Unchecked,
            fixed_or(answer, |w| w.alone, capitalise),
        );
    };
    let conditions = expect.conditions();
    let unmet = first_unmet(&conditions, hits, clearance, up)
        .or_else(|| super::volumes::first_unmet(&conditions, volumes).map(Cow::Owned));
    match unmet {
        None => (
            Verdict::Pass,
            fixed_or(
                answer,
                |w| w.as_expected,
                |a| ["As expected: ", &a].concat(),
            ),
        ),
        Some(wanted) => {
            // Written in front of the answer's own text, which has room for most reasons: one
            // string a failing probe rather than three.
            let mut reason = answer.into_owned();
            reason.reserve("Expected ; ".len() + wanted.len());
            reason.insert_str(0, "; ");
            reason.insert_str(0, &wanted);
            reason.insert_str(0, "Expected ");
            (Verdict::Fail, Cow::Owned(reason))
        }
    }
}

/// An answer that is words alone (no object, no number), as [`describe`] gives it, with its
/// reasons written once: a check gives one of these for every clear ray, so they are shared, not
/// written again each time.
struct Words {
    answer: &'static str,
    /// The reason of a probe without an expectation.
    alone: &'static str,
    /// The reason of a probe whose expectation holds.
    as_expected: &'static str,
}

const CLEAR: Words = Words {
    answer: "clear",
    alone: "Clear",
    as_expected: "As expected: clear",
};

const NOTHING_WITHIN_REACH: Words = Words {
    answer: "nothing within reach",
    alone: "Nothing within reach",
    as_expected: "As expected: nothing within reach",
};

/// The reason for `answer`: its `form` when the answer is one of the shared [`Words`], else
/// `make` of it.
fn fixed_or(
    answer: Cow<'static, str>,
    form: fn(&Words) -> &'static str,
    make: impl FnOnce(String) -> String,
) -> Cow<'static, str> {
    if let Cow::Borrowed(text) = answer
        && let Some(words) = [CLEAR, NOTHING_WITHIN_REACH]
            .iter()
            .find(|w| w.answer == text)
    {
        return Cow::Borrowed(form(words));
    }
    Cow::Owned(make(answer.into_owned()))
}

/// One part of a reason: words, an object as [`named`] names it, or a length as [`metres`] writes
/// it.
enum Part<'a> {
    Text(&'a str),
    Named(Named<'a>),
    Metres(f64),
}

/// A reason written from its parts straight into a string with room for most reasons, without the
/// formatter (a check words one for every probe).
fn sentence(parts: &[Part]) -> String {
    let mut out = String::with_capacity(64);
    for part in parts {
        match part {
            Part::Text(text) => out.push_str(text),
            Part::Named(named) => named.push_to(&mut out),
            Part::Metres(x) => {
                write_metres(*x, &mut out).expect("writing to a String cannot fail");
            }
        }
    }
    out
}

/// The first condition that does not hold, worded as what was expected.
fn first_unmet(
    c: &Conditions,
    hits: &Hits,
    clearance: Option<&ClearanceRecord>,
    up: DVec3,
) -> Option<Cow<'static, str>> {
    let first = hits.first();
    if let Some(blocked) = c.blocked
        && blocked == hits.is_empty()
    {
        return Some(Cow::Borrowed(if blocked { "blocked" } else { "clear" }));
    }
    if let Some(name) = &c.first_object
        && first.is_none_or(|(object, _, _)| object != name)
    {
        return Some(format!("{} {name}", first_word(hits)).into());
    }
    if let Some(tag) = &c.first_tag
        && first.is_none_or(|(_, tags, _)| !tags.contains(tag))
    {
        return Some(format!("{} tagged {tag}", first_word(hits)).into());
    }
    if let Some(range) = c.distance {
        let within = first.is_some_and(|(_, _, d)| {
            range.min.is_none_or(|lo| d >= lo) && range.max.is_none_or(|hi| d <= hi)
        });
        if !within {
            let wanted = match (range.min, range.max) {
                (Some(lo), Some(hi)) => {
                    format!("a distance between {} and {}", metres(lo), metres(hi))
                }
                (Some(lo), None) => format!("a distance of at least {}", metres(lo)),
                (None, Some(hi)) => format!("a distance of at most {}", metres(hi)),
                (None, None) => "a distance".to_string(),
            };
            return Some(wanted.into());
        }
    }
    if let Some(min) = c.min_clearance
        && clearance.is_none_or(|cl| cl.distance < min)
    {
        return Some(format!("a clearance of at least {}", metres(min)).into());
    }
    if let Some(max) = c.max_depth
        && first.is_some_and(|(_, _, depth)| depth > max)
    {
        return Some(format!("a depth of at most {}", metres(max)).into());
    }
    if let Hits::Jump(h) = hits {
        return super::jump::first_unmet(c, h, up).map(Cow::Owned);
    }
    if let Hits::Walk(h) = hits {
        return super::walk::first_unmet(c, h).map(Cow::Owned);
    }
    if let Hits::Reach(h) = hits {
        return super::reach::first_unmet(c, h).map(Cow::Owned);
    }
    if let Hits::Settle(h) = hits {
        return super::settle::first_unmet(c, h).map(Cow::Owned);
    }
    super::level_verdict::first_unmet(c, hits).map(Cow::Owned)
}

fn first_word(hits: &Hits) -> &'static str {
    match hits {
        Hits::Ray(_) | Hits::Sweep(_) => "the first hit to be",
        Hits::Closest(_) => "the nearest object to be",
        Hits::Overlap(_) => "the deepest overlap to be",
        Hits::Rest(_) => "the support to be",
        Hits::Sightlines(_) => "the first blocked sightline's blocker to be",
        Hits::Coverage(_) => "a blocker to be",
        Hits::Jump(_) => "the landing to be on",
        Hits::Walk(_) => "the walk to be stopped by",
        Hits::Reach(_) => "the first target not reached to be",
        Hits::Settle(_) => "the support at rest to be",
    }
}

/// What the probe found, in a few words.
fn describe(hits: &Hits, clearance: Option<&ClearanceRecord>) -> Cow<'static, str> {
    let more = if hits.len() > 1 {
        format!(" (and {} more)", hits.len() - 1)
    } else {
        String::new()
    };
    let more = Part::Text(&more);
    let found = match hits {
        Hits::Ray(h) => h.first().map(|x| {
            let what = Part::Named(named(&x.object, &x.material));
            let at = Part::Metres(x.distance);
            sentence(&[
                Part::Text("blocked by "),
                what,
                Part::Text(" at "),
                at,
                more,
            ])
        }),
        Hits::Sweep(h) => h.first().map(|x| {
            let what = Part::Named(named(&x.object, &x.material));
            if x.started_inside {
                sentence(&[Part::Text("starts inside "), what, more])
            } else {
                let after = Part::Metres(x.distance);
                sentence(&[
                    Part::Text("hits "),
                    what,
                    Part::Text(" after "),
                    after,
                    more,
                ])
            }
        }),
        Hits::Closest(h) => h.first().map(|x| {
            let what = Part::Named(named(&x.object, &x.material));
            if x.overlapping {
                sentence(&[Part::Text("overlaps "), what])
            } else {
                let at = Part::Metres(x.distance);
                sentence(&[Part::Text("nearest is "), what, Part::Text(" at "), at])
            }
        }),
        Hits::Overlap(h) => h.first().map(|x| {
            let how = Part::Text(if x.enclosed {
                "is inside "
            } else {
                "overlaps "
            });
            let what = Part::Named(named(&x.object, &x.material));
            let by = Part::Metres(x.depth);
            sentence(&[how, what, Part::Text(" by "), by, more])
        }),
        Hits::Rest(_) | Hits::Sightlines(_) | Hits::Coverage(_) => {
            return super::level_verdict::describe(hits).into();
        }
        Hits::Jump(h) => return super::jump::describe(h).into(),
        Hits::Walk(h) => return super::walk::describe(h).into(),
        Hits::Reach(h) => return super::reach::describe(h).into(),
        Hits::Settle(h) => return super::settle::describe(h).into(),
    };
    match (found, clearance) {
        (Some(text), _) => Cow::Owned(text),
        (None, Some(c)) => Cow::Owned(format!(
            "clear; closest approach {} to {} at {:.0}% of the path",
            metres(c.distance),
            c.object,
            c.t * 100.0
        )),
        (None, None) => Cow::Borrowed(match hits {
            Hits::Closest(_) => NOTHING_WITHIN_REACH.answer,
            _ => CLEAR.answer,
        }),
    }
}

/// An object as a reason names it, with the material of the surface when the file names one.
pub(super) fn named<'a>(object: &'a str, material: &'a Option<std::sync::Arc<str>>) -> Named<'a> {
    Named { object, material }
}

/// An object's name as a reason writes it (see [`named`]); nothing is copied until it is written.
pub(super) struct Named<'a> {
    object: &'a str,
    material: &'a Option<std::sync::Arc<str>>,
}

impl Named<'_> {
    /// Writes the name (and material) at the end of `out`.
    fn push_to(&self, out: &mut String) {
        out.push_str(self.object);
        if let Some(m) = self.material {
            out.push_str(" (");
            out.push_str(m);
            out.push(')');
        }
    }
}

impl fmt::Display for Named<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.material {
            Some(m) => write!(f, "{} ({m})", self.object),
            None => f.write_str(self.object),
        }
    }
}

/// Metres with millimetre precision, as designers read them: what `format!("{x:.3} m")` writes.
pub fn metres(x: f64) -> String {
    Metres(x).to_string()
}

/// A length as [`metres`] writes it, for sentences built with `format!` (no string of its own).
pub(super) struct Metres(pub f64);

impl fmt::Display for Metres {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write_metres(self.0, f)
    }
}

/// Writes `x` with three decimals and " m", as `{x:.3} m` writes it, without the float formatter
/// where that is sure to give the same digits (a check words a distance for every ray that hits).
/// The product `|x| · 1000` is within half an ulp of the exact one, so when it is farther than
/// that from a half, both round to the same whole number of millimetres; halves, near-halves,
/// huge and non-finite values go to the formatter.
fn write_metres(x: f64, out: &mut impl fmt::Write) -> fmt::Result {
    let scaled = x.abs() * 1000.0;
    if scaled < 1e15 {
        let whole = scaled.floor();
        let fraction = scaled - whole;
        if (fraction - 0.5).abs() > scaled * f64::EPSILON {
            let millimetres = (whole as u64) + u64::from(fraction > 0.5);
            if x.is_sign_negative() {
                out.write_str("-")?;
            }
            out.write_str(itoa::Buffer::new().format(millimetres / 1000))?;
            let thousandths = millimetres % 1000;
            let digit = |d: u64| b'0' + d as u8;
            let digits = [
                b'.',
                digit(thousandths / 100),
                digit(thousandths / 10 % 10),
                digit(thousandths % 10),
                b' ',
                b'm',
            ];
            return out.write_str(std::str::from_utf8(&digits).expect("ASCII digits"));
        }
    }
    write!(out, "{x:.3} m")
}

/// The sentence with its first letter a capital (in place when that letter is ASCII).
fn capitalise(mut s: String) -> String {
    match s.chars().next() {
        Some(f) if f.is_ascii() => {
            s[..1].make_ascii_uppercase();
            s
        }
        Some(f) => f.to_uppercase().chain(s.chars().skip(1)).collect(),
        None => s,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The shared reasons are the words the general path would write for the same answer.
    #[test]
    fn answers_of_words_alone_are_shared_and_worded_as_any_other() {
        let as_expected = |a: String| ["As expected: ", &a].concat();
        for Words {
            answer,
            alone,
            as_expected: expected,
        } in [CLEAR, NOTHING_WITHIN_REACH]
        {
            let shared = fixed_or(Cow::Borrowed(answer), |w| w.alone, capitalise);
            assert!(matches!(shared, Cow::Borrowed(_)));
            assert_eq!(shared, capitalise(answer.to_string()));
            assert_eq!(shared, alone);
            let expected_shared = fixed_or(Cow::Borrowed(answer), |w| w.as_expected, as_expected);
            assert_eq!(expected_shared, expected);
            assert_eq!(as_expected(answer.to_string()), expected);
        }
        let other = fixed_or(
            Cow::Owned("blocked by gate".into()),
            |w| w.alone,
            capitalise,
        );
        assert_eq!(other, "Blocked by gate");
    }

    #[test]
    fn sentences_start_with_a_capital_whatever_their_first_letter() {
        assert_eq!(capitalise("clear".into()), "Clear");
        assert_eq!(capitalise("élan hits".into()), "Élan hits");
        assert_eq!(capitalise("ßeam".into()), "SSeam");
        assert_eq!(capitalise("3 of 4".into()), "3 of 4");
        assert_eq!(capitalise(String::new()), "");
    }

    /// The reference: the standard library's exact formatting.
    fn formatted(x: f64) -> String {
        format!("{x:.3} m")
    }

    #[test]
    fn millimetres_are_written_as_the_formatter_writes_them() {
        // Halves of a millimetre that binary holds exactly (x = q/16, q odd: x · 1000 = 62.5 q),
        // either sign, zeros, the fast path's edges and the values it leaves to the formatter.
        let mut cases: Vec<f64> = (1..2000).map(|q| f64::from(2 * q - 1) / 16.0).collect();
        cases.extend([
            0.0,
            -0.0,
            1e-4,
            -1e-4,
            0.0005,
            0.0015,
            2.0005,
            999.9995,
            1e11,
            1e12,
            1e13,
            1e18,
            f64::MIN_POSITIVE,
            f64::MAX,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::NAN,
            1.869,
            0.9995,
            0.9995f64.next_down(),
            123.4565,
            5e-324,
        ]);
        for x in cases
            .clone()
            .into_iter()
            .chain(cases.into_iter().map(|x| -x))
        {
            assert_eq!(metres(x), formatted(x), "{x:e}");
        }
    }

    proptest::proptest! {
        /// Random doubles of every size, and random distances as a check meets them.
        #[test]
        fn random_millimetres_are_written_as_the_formatter_writes_them(
            bits in proptest::prelude::any::<u64>(),
            metres_away in -1e6f64..1e6,
        ) {
            for x in [f64::from_bits(bits), metres_away] {
                proptest::prop_assert_eq!(metres(x), formatted(x), "{:e}", x);
            }
        }
    }
}
