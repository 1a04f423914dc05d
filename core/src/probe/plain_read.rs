//! A probe's fields read straight from its JSON text, for the plain case that nearly every probe
//! is: known fields once each, strings without escapes, numbers where numbers belong. Anything else
//! (an unknown or repeated field, an escape, `null`, a wrong type, text that is not JSON) gives
//! `None`, and the caller reads the probe with serde, which finds the same fields or the exact
//! error. Nested objects (shapes, spots, regions, expectations) are handed to serde as their own
//! slices. This reader exists for speed: serde's derived reader and its float parsing were most of
//! a check's time on sets of many small probes.
//!
//! The JSON grammar followed is RFC 8259 (Bray, ed., "The JavaScript Object Notation (JSON) Data
//! Interchange Format", IETF, 2017): §2 whitespace, §6 numbers, §7 strings.

use serde::Deserialize;
use serde_json::value::RawValue;

use glam::DVec3;

use super::model::{Expect, ExpectWord, HitsMode, Probe, ProbeQuery};
use super::parse::check_id;
use crate::json_object::{from_object_str, objects};
use crate::level::within_range;
use crate::query::Filter;

/// Where reading is in a probe's text.
struct Scanner<'a> {
    text: &'a str,
    at: usize,
}

impl<'a> Scanner<'a> {
    fn new(text: &'a str) -> Scanner<'a> {
        Scanner { text, at: 0 }
    }

    fn bytes(&self) -> &'a [u8] {
        self.text.as_bytes()
    }

    fn peek(&self) -> Option<u8> {
        self.bytes().get(self.at).copied()
    }

    /// Skips whitespace (RFC 8259 §2: space, tab, line feed, carriage return).
    fn skip_space(&mut self) {
        while matches!(self.peek(), Some(b' ' | b'\t' | b'\n' | b'\r')) {
            self.at += 1;
        }
    }

    /// Takes `byte` after any whitespace.
    fn take(&mut self, byte: u8) -> Option<()> {
        self.skip_space();
        (self.peek() == Some(byte)).then(|| self.at += 1)
    }

    /// True (and taken) when `byte` comes next after any whitespace.
    fn takes(&mut self, byte: u8) -> bool {
        self.take(byte).is_some()
    }

    /// A string without escapes or control characters, its quotes taken off.
    fn string(&mut self) -> Option<&'a str> {
        self.take(b'"')?;
        let start = self.at;
        let length = plain_run(&self.bytes()[start..])?;
        self.at = start + length;
        self.takes_exact(b'"').then_some(())?;
        // The quote is ASCII, so the slice ends on a character boundary.
        Some(&self.text[start..start + length])
    }

    /// The value of `words` a plain string names; any other string is not plain.
    fn one_of<T: Copy>(&mut self, words: &[(&str, T)]) -> Option<T> {
        let word = self.string()?;
        words
            .iter()
            .find(|(w, _)| *w == word)
            .map(|&(_, value)| value)
    }

    /// A number as RFC 8259 §6 writes it, when it is a finite f64.
    fn number(&mut self) -> Option<f64> {
        self.skip_space();
        let start = self.at;
        if let Some((end, x)) = short_decimal(self.bytes(), start) {
            self.at = end;
            return Some(x);
        }
        let (length, exact) = scan_number(&self.bytes()[start..])?;
        self.at += length;
        // The standard library's parse is correctly rounded, as serde_json's is with
        // `float_roundtrip`; out of range is serde_json's error, so it is not read here.
        let x = match exact {
            Some(x) => x,
            None => self.text[start..self.at].parse().ok()?,
        };
        x.is_finite().then_some(x)
    }

    /// A whole number in `u32` (digits only, as serde reads a `u32`).
    fn whole_u32(&mut self) -> Option<u32> {
        self.skip_space();
        let (length, _) = scan_number(&self.bytes()[self.at..])?;
        let text = &self.text[self.at..self.at + length];
        self.at += length;
        if !text.bytes().all(|b| b.is_ascii_digit()) {
            return None;
        }
        text.parse().ok()
    }

    fn takes_exact(&mut self, byte: u8) -> bool {
        let found = self.peek() == Some(byte);
        self.at += usize::from(found);
        found
    }

    /// `true` or `false`.
    fn boolean(&mut self) -> Option<bool> {
        self.skip_space();
        let rest = &self.bytes()[self.at..];
        let (value, length) = if rest.starts_with(b"true") {
            (true, 4)
        } else if rest.starts_with(b"false") {
            (false, 5)
        } else {
            return None;
        };
        self.at += length;
        Some(value)
    }

    /// The text of the next value, whatever it holds (checked by whoever reads it), or `None` when
    /// its brackets or strings do not close or no value starts here.
    fn value_text(&mut self) -> Option<&'a str> {
        self.skip_space();
        let b = self.bytes();
        let start = self.at;
        let end = match *b.get(start)? {
            b'{' | b'[' => nested_end(b, start)?,
            b'"' => string_end(b, start + 1)? + 1,
            b',' | b':' | b'}' | b']' => return None,
            // A number or a literal: up to the next delimiter.
            _ => {
                start
                    + b[start..]
                        .iter()
                        .position(|c| {
                            matches!(
                                c,
                                b',' | b':'
                                    | b'{'
                                    | b'}'
                                    | b'['
                                    | b']'
                                    | b'"'
                                    | b' '
                                    | b'\t'
                                    | b'\n'
                                    | b'\r'
                            )
                        })
                        .unwrap_or(b.len() - start)
            }
        };
        self.at = end;
        self.text.get(start..end)
    }

    /// The text of the next value, checked to be JSON: a plain string here, anything else by
    /// serde.
    fn checked_text(&mut self) -> Option<&'a str> {
        let text = self.value_text()?;
        match plain_string(text) {
            Some(_) => Some(text),
            None => serde_json::from_str::<&RawValue>(text)
                .ok()
                .map(RawValue::get),
        }
    }

    /// An array, each item read by `item`.
    fn list<T>(&mut self, mut item: impl FnMut(&mut Self) -> Option<T>) -> Option<Vec<T>> {
        self.take(b'[')?;
        let mut items = Vec::new();
        if self.takes(b']') {
            return Some(items);
        }
        loop {
            items.push(item(self)?);
            if self.takes(b']') {
                return Some(items);
            }
            self.take(b',')?;
        }
    }

    /// The next value, read by serde from its own text.
    fn with_serde<T>(&mut self, read: impl FnOnce(&'a str) -> serde_json::Result<T>) -> Option<T> {
        read(self.value_text()?).ok()
    }

    /// Reads an object's members, each by `member` given its key once the colon is taken; `None`
    /// as soon as `member` gives `None` or the object is not plain (its brackets and commas).
    fn members(&mut self, mut member: impl FnMut(&mut Self, &'a str) -> Option<()>) -> Option<()> {
        self.take(b'{')?;
        if self.takes(b'}') {
            return Some(());
        }
        loop {
            let key = self.string()?;
            self.take(b':')?;
            member(self, key)?;
            if self.takes(b'}') {
                return Some(());
            }
            self.take(b',')?;
        }
    }

    /// A value of a type this reader knows.
    fn read<T: Plain<'a>>(&mut self) -> Option<T> {
        T::read(self)
    }

    /// The end of the text: nothing but whitespace left.
    fn at_end(&mut self) -> bool {
        self.skip_space();
        self.at == self.text.len()
    }
}

/// The bytes that matter while finding where a nested value ends: quotes and brackets.
const NESTING: [bool; 256] = {
    let mut table = [false; 256];
    table[b'"' as usize] = true;
    table[b'{' as usize] = true;
    table[b'}' as usize] = true;
    table[b'[' as usize] = true;
    table[b']' as usize] = true;
    table
};

/// Where the array or object whose opening bracket is `b[start]` ends (one past its closing
/// bracket): strings stepped over with their escapes, brackets counted in one pass (whether they
/// match is for whoever reads the value). `None` when it does not close. Sixteen bytes are looked
/// at together (see [`nesting_bits`]): only the quotes, backslashes and brackets among them are
/// visited.
fn nested_end(b: &[u8], start: usize) -> Option<usize> {
    let mut depth = 0usize;
    let mut in_string = false;
    // Bytes before this are stepped over: the one after a backslash in a string is escaped.
    let mut escaped_to = start;
    let mut i = start;
    while let Some(mut bits) = nesting_bits(b, i) {
        while bits != 0 {
            let at = i + bits.trailing_zeros() as usize;
            bits &= bits - 1;
            if at < escaped_to {
                continue;
            }
            match (in_string, b[at]) {
                (_, b'"') => in_string = !in_string,
                (true, b'\\') => escaped_to = at + 2,
                (true, _) | (false, b'\\') => {}
                (false, b'{' | b'[') => depth += 1,
                // A closing bracket: the opening one at `start` was counted first.
                (false, _) => {
                    depth -= 1;
                    if depth == 0 {
                        return Some(at + 1);
                    }
                }
            }
        }
        i += 16;
    }
    // The last bytes, fewer than a block: the rest of a string first.
    if in_string {
        i = string_end(b, i.max(escaped_to))? + 1;
    }
    nested_end_bytewise(b, i.max(escaped_to), depth)
}

/// [`nested_end`] a byte at a time from `b[i]`, `depth` brackets being open there: for the last
/// bytes of the text, fewer than a block.
fn nested_end_bytewise(b: &[u8], mut i: usize, mut depth: usize) -> Option<usize> {
    loop {
        let c = *b.get(i)?;
        i += 1;
        if !NESTING[usize::from(c)] {
            continue;
        }
        match c {
            b'"' => i = string_end(b, i)? + 1,
            b'{' | b'[' => depth += 1,
            _ => {
                depth -= 1;
                if depth == 0 {
                    return Some(i);
                }
            }
        }
    }
}

/// How many bytes `b` starts with that a string holds as they are: none a quote, a backslash or a
/// control character; `None` when every byte is. Sixteen bytes are looked at together where
/// SSE2 is at hand (see [`string_stops`]).
fn plain_run(b: &[u8]) -> Option<usize> {
    let mut i = 0;
    while let Some(stops) = string_stops(b, i) {
        if stops != 0 {
            return Some(i + stops.trailing_zeros() as usize);
        }
        i += 16;
    }
    let stop = |c: &u8| *c == b'"' || *c == b'\\' || *c < 0x20;
    Some(i + b[i..].iter().position(stop)?)
}

/// Which of the sixteen bytes from `b[i]` end a plain run of a string (a quote, a backslash or a
/// control character; bit `k` for `b[i + k]`), or `None` when fewer than sixteen are left.
#[cfg(target_arch = "x86_64")]
fn string_stops(b: &[u8], i: usize) -> Option<u32> {
    use std::arch::x86_64::{
        __m128i, _mm_cmpeq_epi8, _mm_loadu_si128, _mm_min_epu8, _mm_movemask_epi8, _mm_or_si128,
        _mm_set1_epi8,
    };
    let block = b.get(i..i + 16)?;
    // SAFETY: every x86-64 target enables SSE2, so these instructions exist wherever this runs;
    // the load reads the sixteen bytes of `block` (unaligned loads are allowed).
    unsafe {
        let v = _mm_loadu_si128(block.as_ptr().cast::<__m128i>());
        let is = |c: u8| _mm_cmpeq_epi8(v, _mm_set1_epi8(c as i8));
        // A byte at most 0x1f is its own minimum with 0x1f.
        let control = _mm_cmpeq_epi8(_mm_min_epu8(v, _mm_set1_epi8(0x1f)), v);
        let any = _mm_or_si128(control, _mm_or_si128(is(b'"'), is(b'\\')));
        Some(_mm_movemask_epi8(any) as u32)
    }
}

/// [`string_stops`] where SSE2 is not at hand: none found by blocks, every byte looked at singly.
#[cfg(not(target_arch = "x86_64"))]
fn string_stops(_b: &[u8], _i: usize) -> Option<u32> {
    None
}

/// Which of the sixteen bytes from `b[i]` are quotes, backslashes or brackets (bit `k` for
/// `b[i + k]`), or `None` when fewer than sixteen are left. One SSE2 comparison per byte value
/// (SSE2 is part of every x86-64 processor).
#[cfg(target_arch = "x86_64")]
fn nesting_bits(b: &[u8], i: usize) -> Option<u32> {
    use std::arch::x86_64::{
        __m128i, _mm_cmpeq_epi8, _mm_loadu_si128, _mm_movemask_epi8, _mm_or_si128, _mm_set1_epi8,
    };
    let block = b.get(i..i + 16)?;
    // SAFETY: every x86-64 target enables SSE2, so these instructions exist wherever this runs;
    // the load reads the sixteen bytes of `block` (unaligned loads are allowed).
    unsafe {
        let v = _mm_loadu_si128(block.as_ptr().cast::<__m128i>());
        let is = |c: u8| _mm_cmpeq_epi8(v, _mm_set1_epi8(c as i8));
        let quotes = _mm_or_si128(is(b'"'), is(b'\\'));
        let braces = _mm_or_si128(is(b'{'), is(b'}'));
        let any = _mm_or_si128(
            quotes,
            _mm_or_si128(braces, _mm_or_si128(is(b'['), is(b']'))),
        );
        Some(_mm_movemask_epi8(any) as u32)
    }
}

/// [`nesting_bits`] where SSE2 is not at hand: none found by blocks, every byte looked at singly.
#[cfg(not(target_arch = "x86_64"))]
fn nesting_bits(_b: &[u8], _i: usize) -> Option<u32> {
    None
}

/// Where the string whose text starts at `i` ends (its closing quote), stepping over escapes.
fn string_end(b: &[u8], mut i: usize) -> Option<usize> {
    loop {
        i += b.get(i..)?.iter().position(|&c| c == b'"' || c == b'\\')?;
        if b[i] == b'"' {
            return Some(i);
        }
        i += 2;
    }
}

/// Reads the decimal digits from `b[i..]` into `mantissa` (wrapping past 19 digits, when the
/// mantissa is not used); returns where they end.
fn take_digits(b: &[u8], mut i: usize, mantissa: &mut u64) -> usize {
    while let Some(&c) = b.get(i) {
        let d = c.wrapping_sub(b'0');
        if d > 9 {
            break;
        }
        *mantissa = mantissa.wrapping_mul(10).wrapping_add(u64::from(d));
        i += 1;
    }
    i
}

/// Powers of ten that f64 holds exactly.
const POWERS: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

/// A JSON number's sign, digits and fraction (RFC 8259 §6), up to where its exponent would start.
struct Decimal {
    /// Where its digits end.
    end: usize,
    negative: bool,
    /// Its digits, before and after the point, as one whole number (wrapping past 19 digits,
    /// when it is not used).
    mantissa: u64,
    /// How many digits it has (a leading zero counted).
    digits: usize,
    /// How many of them follow the point.
    fraction: usize,
}

/// Reads the number's sign, digits and fraction at `b[at..]`; `None` when no number starts there
/// or its point has no digits after it.
#[inline(always)]
fn decimal(b: &[u8], at: usize) -> Option<Decimal> {
    let negative = b.get(at) == Some(&b'-');
    let first = at + usize::from(negative);
    let mut mantissa = 0u64;
    let mut end = match b.get(first) {
        // A lone zero before the point, as JSON writes it.
        Some(b'0') => first + 1,
        Some(b'1'..=b'9') => take_digits(b, first, &mut mantissa),
        _ => return None,
    };
    let mut digits = end - first;
    let mut fraction = 0;
    if b.get(end) == Some(&b'.') {
        let after = take_digits(b, end + 1, &mut mantissa);
        fraction = after - (end + 1);
        if fraction == 0 {
            return None;
        }
        digits += fraction;
        end = after;
    }
    Some(Decimal {
        end,
        negative,
        mantissa,
        digits,
        fraction,
    })
}

/// The length of the JSON number at the start of `b` (RFC 8259 §6), and its value when it is
/// exact by Clinger's fast path (Clinger, "How to Read Floating Point Numbers Accurately", PLDI
/// 1990): at most 2^53 in its digits and a power of ten up to 22 either way, both exact in f64,
/// so that one multiplication or division rounds once, correctly.
fn scan_number(b: &[u8]) -> Option<(usize, Option<f64>)> {
    let Decimal {
        end: mut i,
        negative,
        mantissa,
        digits,
        fraction,
    } = decimal(b, 0)?;
    let mut exponent = 0i64;
    if matches!(b.get(i), Some(b'e' | b'E')) {
        i += 1;
        let negative_exponent = b.get(i) == Some(&b'-');
        i += usize::from(matches!(b.get(i), Some(b'+' | b'-')));
        let mut digits = 0u64;
        let end = take_digits(b, i, &mut digits);
        let taken = end - i;
        if taken == 0 {
            return None;
        }
        i = end;
        // Past 19 digits the exponent only matters as "huge" (and the fast path is not taken).
        exponent = if taken > 19 {
            i64::MAX / 2
        } else {
            digits.min(1 << 40) as i64
        };
        if negative_exponent {
            exponent = -exponent;
        }
    }
    let power = exponent - fraction as i64;
    let exact = (digits <= 19 && mantissa <= 1 << 53 && power.abs() <= 22).then(|| {
        let m = mantissa as f64;
        let x = if power >= 0 {
            m * POWERS[power as usize]
        } else {
            m / POWERS[(-power) as usize]
        };
        if negative { -x } else { x }
    });
    Some((i, exact))
}

/// [`scan_number`]'s reading of the numbers nearly every probe holds — no exponent, at most 15
/// digits — in one pass, from `b[at]`: where the number ends and its value, or `None` to leave the
/// number to [`scan_number`]. The same value: the digits as a whole number and the power of ten
/// for the fraction are both exact, so one division rounds once, correctly (Clinger's fast path,
/// as there). Always finite.
fn short_decimal(b: &[u8], at: usize) -> Option<(usize, f64)> {
    let d = decimal(b, at)?;
    if d.digits > 15 || matches!(b.get(d.end), Some(b'e' | b'E')) {
        return None;
    }
    let x = d.mantissa as f64 / POWERS[d.fraction];
    Some((d.end, if d.negative { -x } else { x }))
}

/// A value read without serde.
trait Plain<'a>: Sized {
    fn read(s: &mut Scanner<'a>) -> Option<Self>;
}

impl<'a> Plain<'a> for f64 {
    fn read(s: &mut Scanner<'a>) -> Option<f64> {
        s.number()
    }
}

impl<'a> Plain<'a> for bool {
    fn read(s: &mut Scanner<'a>) -> Option<bool> {
        s.boolean()
    }
}

impl<'a> Plain<'a> for String {
    fn read(s: &mut Scanner<'a>) -> Option<String> {
        s.string().map(str::to_string)
    }
}

impl<'a> Plain<'a> for HitsMode {
    fn read(s: &mut Scanner<'a>) -> Option<HitsMode> {
        s.one_of(&[("first", HitsMode::First), ("all", HitsMode::All)])
    }
}

/// A one-word expectation, as the general reader reads it; any other word is not plain.
impl<'a> Plain<'a> for ExpectWord {
    fn read(s: &mut Scanner<'a>) -> Option<ExpectWord> {
        s.one_of(&[
            ("clear", ExpectWord::Clear),
            ("blocked", ExpectWord::Blocked),
        ])
    }
}

impl<'a, T: Plain<'a>> Plain<'a> for Vec<T> {
    fn read(s: &mut Scanner<'a>) -> Option<Vec<T>> {
        s.list(Scanner::read)
    }
}

impl<'a, const N: usize> Plain<'a> for [f64; N] {
    fn read(s: &mut Scanner<'a>) -> Option<[f64; N]> {
        s.take(b'[')?;
        let mut items = [0.0; N];
        for (k, item) in items.iter_mut().enumerate() {
            if k > 0 {
                s.take(b',')?;
            }
            *item = s.number()?;
        }
        s.take(b']')?;
        Some(items)
    }
}

/// Puts `value` in an empty `slot`; `None` when the field came before.
fn put<T>(slot: &mut Option<T>, value: T) -> Option<()> {
    match slot {
        Some(_) => None,
        None => {
            *slot = Some(value);
            Some(())
        }
    }
}

/// The fields of one probe, as the probe file names them: read by [`ProbeFields::read_into`], or
/// by serde (the derived reader below) when the probe is not plain.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct ProbeFields<'a> {
    pub id: super::ProbeId,
    pub label: Option<String>,
    /// Borrowed from the text when it holds no escapes (nearly always): no allocation a probe.
    #[serde(borrow)]
    pub kind: std::borrow::Cow<'a, str>,
    pub from: Option<[f64; 3]>,
    pub to: Option<[f64; 3]>,
    pub hits: Option<HitsMode>,
    #[serde(default, deserialize_with = "crate::json_object::optional_object")]
    pub shape: Option<crate::level::ShapeSpec>,
    pub rotation: Option<[f64; 4]>,
    pub path: Option<Vec<[f64; 3]>>,
    pub duration: Option<f64>,
    pub clearance: Option<bool>,
    pub at: Option<[f64; 3]>,
    pub max_distance: Option<f64>,
    pub search: Option<f64>,
    #[serde(default, deserialize_with = "crate::json_object::optional_objects")]
    pub spots: Option<Vec<super::model::Spot>>,
    pub spot_tags: Option<Vec<String>>,
    pub eye: Option<f64>,
    #[serde(default, deserialize_with = "crate::json_object::optional_object")]
    pub region: Option<super::model::Region>,
    pub spacing: Option<f64>,
    pub velocity: Option<[f64; 3]>,
    pub turns: Option<Vec<[f64; 4]>>,
    pub yaw: Option<Vec<f64>>,
    pub apex: Option<f64>,
    pub gravity: Option<f64>,
    pub max_slope: Option<f64>,
    pub max_step: Option<f64>,
    #[serde(default, deserialize_with = "crate::json_object::optional_objects")]
    pub targets: Option<Vec<super::model::Spot>>,
    pub target_tags: Option<Vec<String>>,
    pub max_time: Option<f64>,
    pub density: Option<f64>,
    pub friction: Option<f64>,
    pub restitution: Option<f64>,
    pub ignore_tags: Option<Vec<String>>,
    pub only_tags: Option<Vec<String>>,
    pub ignore_objects: Option<Vec<String>>,
    /// The expectation's text (parse.rs reads it).
    #[serde(default, borrow, deserialize_with = "raw_text")]
    pub expect: Option<&'a str>,
}

impl<'a> ProbeFields<'a> {
    /// Reads a probe's fields from `text` (one JSON object) into `fields` (a default one, filled
    /// where it stands: the struct is large, and moving it was a tenth of a parse): by this reader
    /// when the probe is plain, else by serde, whose error this returns.
    pub(super) fn read_into(text: &'a str, fields: &mut ProbeFields<'a>) -> serde_json::Result<()> {
        if ProbeFields::read_plain_into(text, fields).is_none() {
            *fields = from_object_str(text)?;
        }
        Ok(())
    }

    /// Reads a plain probe; `None` for anything else.
    #[cfg(test)]
    fn read_plain(text: &'a str) -> Option<ProbeFields<'a>> {
        let mut fields = ProbeFields::default();
        ProbeFields::read_plain_into(text, &mut fields)?;
        Some(fields)
    }

    /// Reads a plain probe into `f` (a default one); `None` for anything else, leaving `f` partly
    /// filled.
    fn read_plain_into(text: &'a str, f: &mut ProbeFields<'a>) -> Option<()> {
        let mut s = Scanner::new(text);
        let (mut id, mut kind) = (None, None);
        s.members(|s, key| match key {
            "id" => put(&mut id, s.string()?.into()),
            "label" => put(&mut f.label, s.read()?),
            "kind" => put(&mut kind, s.string()?.into()),
            "from" => put(&mut f.from, s.read()?),
            "to" => put(&mut f.to, s.read()?),
            "hits" => put(&mut f.hits, s.read()?),
            "shape" => put(&mut f.shape, s.with_serde(from_object_str)?),
            "rotation" => put(&mut f.rotation, s.read()?),
            "path" => put(&mut f.path, s.read()?),
            "duration" => put(&mut f.duration, s.read()?),
            "clearance" => put(&mut f.clearance, s.read()?),
            "at" => put(&mut f.at, s.read()?),
            "max_distance" => put(&mut f.max_distance, s.read()?),
            "search" => put(&mut f.search, s.read()?),
            "spots" => put(&mut f.spots, s.with_serde(objects_str)?),
            "spot_tags" => put(&mut f.spot_tags, s.read()?),
            "eye" => put(&mut f.eye, s.read()?),
            "region" => put(&mut f.region, s.with_serde(from_object_str)?),
            "spacing" => put(&mut f.spacing, s.read()?),
            "velocity" => put(&mut f.velocity, s.read()?),
            "turns" => put(&mut f.turns, s.read()?),
            "yaw" => put(&mut f.yaw, s.read()?),
            "apex" => put(&mut f.apex, s.read()?),
            "gravity" => put(&mut f.gravity, s.read()?),
            "max_slope" => put(&mut f.max_slope, s.read()?),
            "max_step" => put(&mut f.max_step, s.read()?),
            "targets" => put(&mut f.targets, s.with_serde(objects_str)?),
            "target_tags" => put(&mut f.target_tags, s.read()?),
            "max_time" => put(&mut f.max_time, s.read()?),
            "density" => put(&mut f.density, s.read()?),
            "friction" => put(&mut f.friction, s.read()?),
            "restitution" => put(&mut f.restitution, s.read()?),
            "ignore_tags" => put(&mut f.ignore_tags, s.read()?),
            "only_tags" => put(&mut f.only_tags, s.read()?),
            "ignore_objects" => put(&mut f.ignore_objects, s.read()?),
            "expect" => put(&mut f.expect, s.checked_text()?),
            _ => None,
        })?;
        if !s.at_end() {
            return None;
        }
        f.id = id?;
        f.kind = kind?;
        Some(())
    }
}

/// A ray probe that holds nothing but its id, its kind, its two ends and perhaps its hits mode
/// and an expectation in one word ("clear" or "blocked"), each once and plainly written, with a
/// well-formed id and two distinct ends within range, read straight into a [`Probe`]: the probes
/// of large generated sets are nearly all such rays, and this skips the general reader's table of
/// every field. `None` for anything else, which the general reader then reads (and names any error
/// in); where both read a probe they give the same one.
pub(super) fn plain_ray(text: &str) -> Option<Probe> {
    let mut s = Scanner::new(text);
    let (mut id, mut ray, mut from, mut to, mut hits) = (None, None, None, None, None);
    let mut expect = None;
    s.members(|s, key| match key {
        "id" => put(&mut id, s.string()?),
        // Another kind is left at once to the general reader (it reads the probe from its start).
        "kind" => put(&mut ray, (s.string()? == "ray").then_some(())?),
        "from" => put(&mut from, s.read::<[f64; 3]>()?),
        "to" => put(&mut to, s.read::<[f64; 3]>()?),
        "hits" => put(&mut hits, s.read::<HitsMode>()?),
        "expect" => put(&mut expect, s.read::<ExpectWord>()?),
        _ => None,
    })?;
    if !s.at_end() {
        return None;
    }
    ray?;
    let id = id?;
    check_id("probe", id).ok()?;
    let (from, to) = (DVec3::from_array(from?), DVec3::from_array(to?));
    if !within_range(from) || !within_range(to) || from == to {
        return None;
    }
    Some(Probe {
        id: id.into(),
        label: None,
        filter: Filter::default(),
        query: ProbeQuery::Ray { from, to, hits },
        expect: expect.map(Expect::Word),
        from_rule: None,
    })
}

/// An array of objects, read by serde from `text`.
fn objects_str<'a, T: Deserialize<'a>>(text: &'a str) -> serde_json::Result<Vec<T>> {
    let mut de = serde_json::Deserializer::from_str(text);
    let value = objects(&mut de)?;
    de.end()?;
    Ok(value)
}

/// The top of a probe-set file: its header, and each probe's and rule's text (read one by one
/// later, which checks them).
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct SetFields<'a> {
    #[serde(rename = "$schema")]
    pub schema: Option<String>,
    pub plumbline: String,
    pub version: u32,
    pub level: String,
    #[serde(borrow, deserialize_with = "raw_texts")]
    pub probes: Vec<&'a str>,
    #[serde(default, borrow, deserialize_with = "raw_texts")]
    pub rules: Vec<&'a str>,
}

/// A value that may be there, kept as its text (`null` is no value, as serde reads an option).
fn raw_text<'de, D: serde::Deserializer<'de>>(d: D) -> Result<Option<&'de str>, D::Error> {
    let raw = Option::<&'de RawValue>::deserialize(d)?;
    Ok(raw.map(RawValue::get))
}

/// A string and nothing else (no escapes); `None` for anything else.
pub(super) fn plain_string(text: &str) -> Option<&str> {
    let mut s = Scanner::new(text);
    let found = s.string()?;
    s.at_end().then_some(found)
}

/// A probe's id, found in its text (one JSON object) without reading anything else: the first
/// `"id"` member's plain string, other members' values stepped over. `None` when there is no such
/// member before the object closes or the text is not plain there (the caller parses the probe).
/// Whether the probe is otherwise valid is not looked at.
pub(super) fn plain_id(text: &str) -> Option<&str> {
    plain_member(text, "id", &[])
}

/// The level a probe-set file names, found in its head without reading its probes: the `"level"`
/// member's plain string, when it comes before `"probes"` and `"rules"` and every member before it
/// is plain. `None` otherwise (the caller reads the whole top). Whether the file is otherwise valid
/// is not looked at; when it is, its level is this one (a repeated member is not valid).
pub(super) fn plain_level(text: &str) -> Option<&str> {
    plain_member(text, "level", &["probes", "rules"])
}

/// The plain string of the first member `name` of the object `text`, the values of the members
/// before it stepped over; `None` when a member of `first` comes before it, the object closes
/// without it, or the text is not plain up to it.
fn plain_member<'t>(text: &'t str, name: &str, first: &[&str]) -> Option<&'t str> {
    let mut s = Scanner::new(text);
    s.take(b'{')?;
    loop {
        let key = s.string()?;
        s.take(b':')?;
        if key == name {
            return s.string();
        }
        if first.contains(&key) {
            return None;
        }
        s.value_text()?;
        s.take(b',')?;
    }
}

/// An array of values, each kept as its text.
fn raw_texts<'de, D: serde::Deserializer<'de>>(d: D) -> Result<Vec<&'de str>, D::Error> {
    let raw = Vec::<&'de RawValue>::deserialize(d)?;
    Ok(raw.into_iter().map(RawValue::get).collect())
}

impl<'a> SetFields<'a> {
    /// Reads a probe set's top from `text`: by this reader when it is plain, else by serde, whose
    /// error this returns.
    pub(super) fn read(text: &'a str) -> serde_json::Result<SetFields<'a>> {
        match SetFields::read_plain(text) {
            Some(fields) => Ok(fields),
            None => from_object_str(text),
        }
    }

    /// Reads a plain probe set's top; `None` for anything else.
    fn read_plain(text: &'a str) -> Option<SetFields<'a>> {
        let mut s = Scanner::new(text);
        let (mut schema, mut plumbline, mut version, mut level) = (None, None, None, None);
        let (mut probes, mut rules) = (None, None);
        s.members(|s, key| match key {
            "$schema" => put(&mut schema, s.read()?),
            "plumbline" => put(&mut plumbline, s.read()?),
            "version" => put(&mut version, s.whole_u32()?),
            "level" => put(&mut level, s.read()?),
            "probes" => put(&mut probes, s.list(Scanner::value_text)?),
            "rules" => put(&mut rules, s.list(Scanner::value_text)?),
            _ => None,
        })?;
        if !s.at_end() {
            return None;
        }
        Some(SetFields {
            schema,
            plumbline: plumbline?,
            version: version?,
            level: level?,
            probes: probes?,
            rules: rules.unwrap_or_default(),
        })
    }
}

#[cfg(test)]
mod tests {
    //! The plain reader against serde_json, the general-purpose reader from crates.io it stands in
    //! for: the same values wherever it reads a text, and nothing read that serde_json refuses. The
    //! number grammar is RFC 8259 §6.

    use proptest::prelude::*;

    use super::*;

    /// The demo's probe set, whose probes are all plain.
    fn demo_set() -> String {
        let path = concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../scenes/saltfen-quay.probes.json"
        );
        std::fs::read_to_string(path).expect("the demo's probe set")
    }

    /// The same reading, whoever read it (f64 fields compared to the bit by their debug text).
    fn same(a: &ProbeFields, b: &ProbeFields) -> bool {
        format!("{a:?}") == format!("{b:?}")
    }

    /// A JSON number's text from its parts (RFC 8259 §6), some with leading zeros in the exponent
    /// and more digits than an f64 holds.
    fn json_number() -> impl Strategy<Value = String> {
        (
            any::<bool>(),
            prop_oneof!["0", "[1-9][0-9]{0,24}"],
            prop::option::of("[0-9]{1,25}"),
            prop::option::of(("[eE]", "[+-]?", "[0-9]{1,4}")),
        )
            .prop_map(|(minus, whole, fraction, exponent)| {
                let mut text = String::new();
                if minus {
                    text.push('-');
                }
                text.push_str(&whole);
                if let Some(f) = fraction {
                    text.push('.');
                    text.push_str(&f);
                }
                if let Some((e, sign, digits)) = exponent {
                    text.push_str(&e);
                    text.push_str(&sign);
                    text.push_str(&digits);
                }
                text
            })
    }

    /// Reads `text` as one number, as the probe reader does.
    fn plain_number(text: &str) -> Option<f64> {
        let mut s = Scanner::new(text);
        let x = s.number()?;
        s.at_end().then_some(x)
    }

    proptest! {
        #[test]
        fn numbers_read_as_serde_json_reads_them(text in json_number()) {
            let reference: Option<f64> = serde_json::from_str(&text).ok();
            let plain = plain_number(&text);
            match (plain, reference) {
                (Some(x), Some(y)) => prop_assert_eq!(x.to_bits(), y.to_bits(), "{}", text),
                // Only out of range is left to serde (which refuses it).
                (None, y) => prop_assert!(y.is_none_or(|y| !y.is_finite()), "{}", text),
                (Some(x), None) => prop_assert!(false, "{} read as {} but refused by serde_json", text, x),
            }
        }

        #[test]
        fn floats_written_shortest_read_back_exactly(bits in any::<u64>()) {
            let x = f64::from_bits(bits);
            prop_assume!(x.is_finite());
            for text in [format!("{x:?}"), format!("{x:e}"), serde_json::to_string(&x).unwrap()] {
                prop_assert_eq!(plain_number(&text).map(f64::to_bits), Some(bits), "{}", text);
            }
        }

        #[test]
        fn broken_probes_are_never_read_differently(
            pick in any::<prop::sample::Index>(),
            at in any::<prop::sample::Index>(),
            edit in 0..3usize,
            byte in prop::sample::select(b"{}[],:\"\\ 0-.eE1nul\x01tfa".to_vec()),
        ) {
            let set = demo_set();
            let fields = SetFields::read(&set).unwrap();
            let probe = fields.probes[pick.index(fields.probes.len())];
            let mut bytes = probe.as_bytes().to_vec();
            let k = at.index(bytes.len());
            match edit {
                0 => { bytes.remove(k); }
                1 => bytes.insert(k, byte),
                _ => bytes[k] = byte,
            }
            // Edits that break UTF-8 cannot reach the reader (the file is checked as text first).
            let Ok(text) = String::from_utf8(bytes) else { return Ok(()) };
            // The id found alone is the one a whole reading finds, whenever that reading succeeds.
            if let (Some(id), Ok(reference)) = (plain_id(&text), from_object_str::<ProbeFields>(&text)) {
                prop_assert_eq!(id, &*reference.id, "{}", text);
            }
            if let Some(plain) = ProbeFields::read_plain(&text) {
                let reference = from_object_str::<ProbeFields>(&text);
                prop_assert!(reference.is_ok(), "read {:?}, serde_json refused it: {:?}", text, reference.err());
                prop_assert!(same(&plain, &reference.unwrap()), "{}", text);
            }
        }

        #[test]
        fn broken_sets_are_never_read_as_sets(
            at in any::<prop::sample::Index>(),
            edit in 0..3usize,
            byte in prop::sample::select(b"{}[],:\"\\ 0-.eE1nul\x01tfa".to_vec()),
        ) {
            let mut bytes = demo_set().into_bytes();
            let k = at.index(bytes.len());
            match edit {
                0 => { bytes.remove(k); }
                1 => bytes.insert(k, byte),
                _ => bytes[k] = byte,
            }
            let Ok(text) = String::from_utf8(bytes) else { return Ok(()) };
            // What the reader takes must be JSON, with the probes serde_json finds.
            if ProbeText::parse(std::path::Path::new("set"), text.clone()).is_ok() {
                let value: serde_json::Value = serde_json::from_str(&text)
                    .map_err(|e| TestCaseError::fail(format!("read a set that is not JSON ({e}): {text}")))?;
                // The level found in the head alone is the one the whole top names.
                if let Some(level) = plain_level(&text) {
                    prop_assert_eq!(Some(level), value["level"].as_str(), "{}", text);
                }
                let set = ProbeText::parse(std::path::Path::new("set"), text).unwrap();
                prop_assert_eq!(Some(set.len()), value["probes"].as_array().map(Vec::len));
            }
        }
    }

    use super::super::ProbeText;

    #[test]
    fn every_demo_probe_is_plain_and_read_as_serde_reads_it() {
        let set = demo_set();
        let plain = SetFields::read_plain(&set).expect("the demo's set is plain");
        let reference: SetFields = from_object_str(&set).unwrap();
        assert_eq!(plain.probes, reference.probes);
        assert_eq!(plain.rules, reference.rules);
        assert_eq!(
            (&plain.schema, &plain.plumbline, plain.version, &plain.level),
            (
                &reference.schema,
                &reference.plumbline,
                reference.version,
                &reference.level
            )
        );
        for probe in plain.probes {
            let fields = ProbeFields::read_plain(probe).expect("a plain probe");
            assert!(same(&fields, &from_object_str(probe).unwrap()), "{probe}");
        }
    }

    #[test]
    fn a_probe_id_is_found_wherever_it_stands() {
        let set = demo_set();
        for probe in SetFields::read_plain(&set).unwrap().probes {
            let fields: ProbeFields = from_object_str(probe).unwrap();
            assert_eq!(plain_id(probe), Some(&*fields.id), "{probe}");
            // The same probe with its id last, after every nested value.
            let serde_json::Value::Object(members) = serde_json::from_str(probe).unwrap() else {
                panic!("a probe is an object");
            };
            let (id, rest): (Vec<_>, Vec<_>) = members.into_iter().partition(|(k, _)| k == "id");
            let last: serde_json::Map<_, _> = rest.into_iter().chain(id).collect();
            let text = serde_json::to_string_pretty(&last).unwrap();
            assert_eq!(plain_id(&text), Some(&*fields.id), "{text}");
        }
        // Escaped, missing or not a string: left to the whole reading.
        for text in [
            r#"{"\u0069d": "a"}"#,
            r#"{"kind": "ray"}"#,
            r#"{"id": 7}"#,
            r#"{"id": "a\"b"}"#,
        ] {
            assert_eq!(plain_id(text), None, "{text}");
        }
    }

    /// Brackets, braces and escaped quotes inside strings are text, not structure: each probe's
    /// text ends where serde_json (the reference reader) ends it.
    #[test]
    fn brackets_and_quotes_inside_strings_do_not_end_a_probe() {
        let text = r#"{"plumbline": "probes", "version": 1, "level": "l.level.json", "probes": [
            {"id": "a", "label": "gate ]} [north {", "kind": "ray", "from": [0, 0, 0], "to": [1, 0, 0]},
            {"id": "b", "label": "say \"]}\" twice \\", "kind": "ray", "from": [0, 0, 0], "to": [0, 1, 0]}
        ]}"#;
        let plain = SetFields::read_plain(text).expect("a plain top");
        let reference: SetFields = from_object_str(text).unwrap();
        assert_eq!(plain.probes.len(), 2);
        assert_eq!(plain.probes, reference.probes);
        assert_eq!(plain_id(plain.probes[1]), Some("b"));
    }

    #[test]
    fn a_sets_level_is_found_in_its_head() {
        let set = demo_set();
        let top: SetFields = from_object_str(&set).unwrap();
        assert_eq!(plain_level(&set), Some(top.level.as_str()));
        for (text, level) in [
            (
                r#"{"level": "a.level.json", "probes": []}"#,
                Some("a.level.json"),
            ),
            (
                r#"{"plumbline": "probes", "version": 1, "level": "b"}"#,
                Some("b"),
            ),
            // After the probes, escaped, or not a string: left to the whole top.
            (r#"{"probes": [], "level": "a"}"#, None),
            (r#"{"rules": [], "level": "a"}"#, None),
            (r#"{"level": "a\u0062"}"#, None),
            (r#"{"level": 3}"#, None),
            (r#"{"$schema": {"x": 1}, "level": "c"}"#, Some("c")),
        ] {
            assert_eq!(plain_level(text), level, "{text}");
        }
    }

    #[test]
    fn anything_not_plain_is_left_to_serde() {
        for text in [
            r#"{"id": "a", "id": "b", "kind": "ray"}"#,
            r#"{"id": "a", "kind": "ray", "colour": 1}"#,
            r#"{"id": "a\u0062", "kind": "ray"}"#,
            r#"{"id": "a", "kind": "ray", "from": null}"#,
            r#"{"id": "a", "kind": "ray", "from": [1, 2]}"#,
            r#"{"id": "a", "kind": "ray", "from": [1, 2, 1e400]}"#,
            r#"{"id": "a", "kind": "ray", "from": [01, 2, 3]}"#,
            r#"{"id": "a", "kind": "ray", "hits": "First"}"#,
            r#"{"id": "a"}"#,
            r#"{"id": "a", "kind": "ray"} x"#,
            "[\"a\"]",
        ] {
            assert!(ProbeFields::read_plain(text).is_none(), "{text}");
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(4096))]

        /// Where a nested value ends, found sixteen bytes at a time, is where a byte-at-a-time
        /// scan finds it: on texts dense in quotes, backslashes and brackets, of every length
        /// around the block's, from any place in the text.
        #[test]
        fn nested_ends_found_by_blocks_are_found_bytewise(
            before in "[a \"]{0,20}",
            opening in prop::sample::select(vec!['{', '[']),
            rest in proptest::collection::vec(prop::sample::select(b"{}[]\"\\ a,:1".to_vec()), 0..80),
        ) {
            let mut text = before.into_bytes();
            let start = text.len();
            text.push(opening as u8);
            text.extend(rest);
            prop_assert_eq!(nested_end(&text, start), nested_end_bytewise(&text, start, 0), "{:?}", String::from_utf8_lossy(&text));
        }

        /// A string's plain run, found sixteen bytes at a time, ends where a byte-at-a-time
        /// search ends it: at the first quote, backslash or control character.
        #[test]
        fn plain_runs_found_by_blocks_are_found_bytewise(
            text in proptest::collection::vec(prop_oneof![8 => 0x20u8..0x7f, 1 => Just(b'"'), 1 => Just(b'\\'), 1 => 0u8..0x20, 1 => 0x7fu8..=0xff], 0..60),
        ) {
            let bytewise = text.iter().position(|&c| c == b'"' || c == b'\\' || c < 0x20);
            prop_assert_eq!(plain_run(&text), bytewise, "{:?}", text);
        }
    }
}
