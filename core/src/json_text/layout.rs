//! The layout rule applied straight from a value's members, without building a tree: an array or
//! object is measured (a lower bound on its length on one line, no number formatted), written on
//! one line when that may fit and kept if it does, and otherwise broken up a member to a line, each
//! member laid out by the same rule one level deeper. Results' records implement [`Layout`]
//! themselves; [`Json`] trees are laid out by the same three passes.

use std::borrow::Cow;

use serde_json::Number;

use super::Json;
use super::scalars::{write_float, write_key, write_number, write_string, write_uint};

/// Lines longer than this are broken up even when they could be inline.
const INLINE_WIDTH: usize = 100;

/// How many levels of arrays and objects a value kept on one line may have, counting itself:
/// `[1, 2]` has one, `{"p": [1, 2]}` two; `{"a": [[1]]}` is always broken up.
const LINE_LEVELS: usize = 2;

/// Which brackets a value's members go between.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Brackets {
    /// `{` and `}`: members have keys.
    Object,
    /// `[` and `]`: members are items.
    Array,
}

impl Brackets {
    fn chars(self) -> (char, char) {
        match self {
            Brackets::Object => ('{', '}'),
            Brackets::Array => ('[', ']'),
        }
    }
}

/// What comes before a member's value: nothing for an array's item, a key for an object's field.
#[derive(Debug, Clone, Copy)]
pub enum Key<'k> {
    /// An array's item.
    Item,
    /// A key as written, quoted and followed by `": "`: made by [`key!`](crate::json_text::key),
    /// which checks at compile time that nothing in it needs escaping.
    Quoted(&'static str),
    /// Any key, quoted and escaped when written.
    Text(&'k str),
}

impl Key<'_> {
    /// Its length as written (at least, for a key that may need escapes).
    fn least_length(self) -> usize {
        match self {
            Key::Item => 0,
            Key::Quoted(k) => k.len(),
            Key::Text(k) => k.len() + 4,
        }
    }

    fn write(self, out: &mut String) {
        match self {
            Key::Item => {}
            Key::Quoted(k) => out.push_str(k),
            Key::Text(k) => write_key(k, out),
        }
    }
}

/// A key that needs no escapes, written pre-quoted: `key!("point")` is `"point": `. Checked when
/// compiled.
macro_rules! key {
    ($name:literal) => {
        $crate::json_text::Key::Quoted(
            const {
                let quoted = concat!("\"", $name, "\": ");
                assert!(
                    $crate::json_text::is_plain_key(quoted),
                    "a key needs no escapes"
                );
                quoted
            },
        )
    };
}
pub(crate) use key;

/// A value that is not an array or object.
#[derive(Debug, Clone, Copy)]
pub enum Scalar<'a> {
    /// A string.
    Str(&'a str),
    /// A float (`null` when not finite, as serde_json writes it).
    Float(f64),
    /// A whole number.
    Uint(u64),
    /// A number as serde_json holds it.
    Number(&'a Number),
    /// `true`, `false` or `null`.
    Word(&'static str),
}

impl Scalar<'_> {
    /// Its length as written, at least (a number has one digit or more).
    fn least_length(self) -> usize {
        match self {
            Scalar::Str(s) => s.len() + 2,
            Scalar::Float(_) | Scalar::Uint(_) | Scalar::Number(_) => 1,
            Scalar::Word(w) => w.len(),
        }
    }

    /// Writes the scalar at the end of `out`.
    pub(super) fn write(self, out: &mut String) {
        match self {
            Scalar::Str(s) => write_string(s, out),
            Scalar::Float(x) => write_float(x, out),
            Scalar::Uint(u) => write_uint(u, out),
            Scalar::Number(n) => write_number(n, out),
            Scalar::Word(w) => out.push_str(w),
        }
    }
}

/// A JSON array or object that offers its members, in order, to whichever pass lays it out.
pub trait Layout {
    /// Object or array.
    const BRACKETS: Brackets;

    /// Offers each member to `m`, in order. Called once for each pass (up to three times), so it
    /// must offer the same members each time; it may stop early once `m.done()`.
    fn members<M: Members>(&self, m: &mut M);
}

/// What a [`Layout`] offers its members to: one pass of the layout.
pub trait Members {
    /// A member whose value is a scalar.
    fn scalar(&mut self, key: Key, value: Scalar);

    /// A member whose value is an array or object.
    fn nested<L: Layout + ?Sized>(&mut self, key: Key, value: &L);

    /// True when the pass has its answer and further members change nothing.
    fn done(&self) -> bool;

    /// A string member.
    #[inline(always)]
    fn str(&mut self, key: Key, s: &str) {
        self.scalar(key, Scalar::Str(s));
    }

    /// A float member (`null` when not finite).
    #[inline(always)]
    fn float(&mut self, key: Key, x: f64) {
        self.scalar(key, Scalar::Float(x));
    }

    /// A whole-number member.
    #[inline(always)]
    fn uint(&mut self, key: Key, u: u64) {
        self.scalar(key, Scalar::Uint(u));
    }

    /// A `true` or `false` member.
    #[inline(always)]
    fn boolean(&mut self, key: Key, b: bool) {
        self.scalar(key, Scalar::Word(if b { "true" } else { "false" }));
    }

    /// A vector: an array of three floats.
    #[inline(always)]
    fn vec3(&mut self, key: Key, v: [f64; 3]) {
        self.nested(key, &v[..]);
    }

    /// A list of strings: an array of them.
    #[inline(always)]
    fn strs(&mut self, key: Key, items: &[String]) {
        self.nested(key, items);
    }

    /// A member whose value is a tree.
    fn json(&mut self, key: Key, value: &Json) {
        match value {
            Json::Arr(items) => self.nested(key, items.as_slice()),
            Json::Obj(fields) => self.nested(key, fields.as_slice()),
            Json::Vec3(v) => self.vec3(key, *v),
            Json::Strs(items) => self.strs(key, items),
            scalar => self.scalar(key, scalar.as_scalar().expect("not an array or object")),
        }
    }
}

/// Writes `value` laid out as if it stood `depth` levels deep (no newline after it).
pub fn write_layout<L: Layout + ?Sized>(value: &L, depth: usize, out: &mut String) {
    let width = INLINE_WIDTH.saturating_sub(depth * 2);
    let (open, close) = L::BRACKETS.chars();
    let mut measure = Measure::new(width, LINE_LEVELS - 1);
    value.members(&mut measure);
    if measure.fits() {
        // Written on one line, then taken back if it runs past the width: each number is
        // formatted once for values that fit, and at most a line's worth is wasted for those
        // that do not.
        let start = out.len();
        let limit = start + width;
        out.push(open);
        let mut line = OneLine {
            out: &mut *out,
            limit,
            count: 0,
            fits: true,
        };
        value.members(&mut line);
        if line.fits {
            out.push(close);
            if out.len() <= limit {
                return;
            }
        }
        out.truncate(start);
    }
    out.push(open);
    let mut lines = Broken {
        out: &mut *out,
        depth,
        count: 0,
    };
    value.members(&mut lines);
    out.push('\n');
    out.push_str(&indent(depth));
    out.push(close);
}

/// The first pass: a lower bound on the value's length on one line, counting no further than the
/// width, and whether its arrays and objects nest too deep for one line.
struct Measure {
    length: usize,
    width: usize,
    /// How many more levels nested values may open.
    levels: usize,
    /// Too long or too deep: the value is broken up.
    over: bool,
}

impl Measure {
    fn new(width: usize, levels: usize) -> Measure {
        Measure {
            length: 0,
            width,
            levels,
            over: false,
        }
    }

    /// Counts a member: `", "` before it (or the brackets, for the first), its key and `value`.
    fn add(&mut self, key: Key, value: usize) {
        self.length += 2 + key.least_length() + value;
        self.over |= self.length > self.width;
    }

    /// True when the value may fit on one line (an empty one still takes its two brackets).
    fn fits(&self) -> bool {
        !self.over && self.length.max(2) <= self.width
    }
}

impl Members for Measure {
    #[inline(always)]
    fn scalar(&mut self, key: Key, value: Scalar) {
        if !self.over {
            self.add(key, value.least_length());
        }
    }

    fn nested<L: Layout + ?Sized>(&mut self, key: Key, value: &L) {
        if self.over {
            return;
        }
        if self.levels == 0 {
            self.over = true;
            return;
        }
        let mut inner = Measure::new(self.width, self.levels - 1);
        value.members(&mut inner);
        // Too long alone is too long within this value too.
        self.over |= inner.over;
        self.add(key, inner.length.max(2));
    }

    fn done(&self) -> bool {
        self.over
    }
}

/// The second pass: the value written on one line, `, ` between members and a space after each
/// key's colon, while the line stays within its limit.
struct OneLine<'o> {
    out: &'o mut String,
    /// The longest `out` may grow.
    limit: usize,
    count: usize,
    fits: bool,
}

impl OneLine<'_> {
    /// Starts a member (its separator and key); false once the line is past its limit.
    #[inline(always)]
    fn start(&mut self, key: Key) -> bool {
        if !self.fits {
            return false;
        }
        if self.count > 0 {
            self.out.push_str(", ");
        }
        self.count += 1;
        key.write(self.out);
        true
    }
}

impl Members for OneLine<'_> {
    #[inline(always)]
    fn scalar(&mut self, key: Key, value: Scalar) {
        if self.start(key) {
            value.write(self.out);
            self.fits = self.out.len() <= self.limit;
        }
    }

    fn nested<L: Layout + ?Sized>(&mut self, key: Key, value: &L) {
        if !self.start(key) {
            return;
        }
        let (open, close) = L::BRACKETS.chars();
        self.out.push(open);
        let mut inner = OneLine {
            out: &mut *self.out,
            limit: self.limit,
            count: 0,
            fits: true,
        };
        value.members(&mut inner);
        self.fits = inner.fits;
        if self.fits {
            self.out.push(close);
            self.fits = self.out.len() <= self.limit;
        }
    }

    fn done(&self) -> bool {
        !self.fits
    }
}

/// The third pass: a member to a line, one level deeper than the value, each laid out again by
/// the rule.
struct Broken<'o> {
    out: &'o mut String,
    depth: usize,
    count: usize,
}

impl Broken<'_> {
    /// Starts a member: the line break (after a comma, but for the first), the indent and its key.
    #[inline(always)]
    fn start(&mut self, key: Key) {
        let from = usize::from(self.count == 0);
        match BREAKS.get(from..2 + 2 * (self.depth + 1)) {
            Some(text) => self.out.push_str(text),
            None => {
                self.out.push_str(&BREAKS[from..2]);
                self.out.push_str(&indent(self.depth + 1));
            }
        }
        self.count += 1;
        key.write(self.out);
    }
}

impl Members for Broken<'_> {
    #[inline(always)]
    fn scalar(&mut self, key: Key, value: Scalar) {
        self.start(key);
        value.write(self.out);
    }

    fn nested<L: Layout + ?Sized>(&mut self, key: Key, value: &L) {
        self.start(key);
        write_layout(value, self.depth + 1, self.out);
    }

    fn done(&self) -> bool {
        false
    }
}

/// A comma, a line break and the indents of the first 32 levels: a member's line start is one
/// slice of it, an indent another.
const BREAKS: &str = ",\n                                                                ";

/// Two spaces per level.
fn indent(depth: usize) -> Cow<'static, str> {
    match BREAKS.get(2..2 + 2 * depth) {
        Some(s) => Cow::Borrowed(s),
        None => Cow::Owned("  ".repeat(depth)),
    }
}

/// Offers each of `items` to the pass `m` by `offer`, until the pass has its answer.
#[inline(always)]
fn offer_each<M: Members, T>(
    m: &mut M,
    items: impl IntoIterator<Item = T>,
    mut offer: impl FnMut(&mut M, T),
) {
    for item in items {
        if m.done() {
            return;
        }
        offer(m, item);
    }
}

impl Layout for [f64] {
    const BRACKETS: Brackets = Brackets::Array;

    fn members<M: Members>(&self, m: &mut M) {
        offer_each(m, self, |m, x| m.float(Key::Item, *x));
    }
}

impl Layout for [String] {
    const BRACKETS: Brackets = Brackets::Array;

    fn members<M: Members>(&self, m: &mut M) {
        offer_each(m, self, |m, s| m.str(Key::Item, s));
    }
}

impl Layout for [Json<'_>] {
    const BRACKETS: Brackets = Brackets::Array;

    fn members<M: Members>(&self, m: &mut M) {
        offer_each(m, self, |m, item| m.json(Key::Item, item));
    }
}

impl Layout for [(&str, Json<'_>)] {
    const BRACKETS: Brackets = Brackets::Object;

    fn members<M: Members>(&self, m: &mut M) {
        offer_each(m, self, |m, (key, item)| m.json(Key::Text(key), item));
    }
}

/// A list of records, each with its own layout.
impl<T: Layout> Layout for [T] {
    const BRACKETS: Brackets = Brackets::Array;

    fn members<M: Members>(&self, m: &mut M) {
        offer_each(m, self, |m, item| m.nested(Key::Item, item));
    }
}

/// Records laid out as trees, each built when a pass reaches it (so a pass that stops early
/// builds no more of them).
pub struct Trees<'a, T, F>(pub &'a [T], pub F);

impl<'a, T, F: Fn(&'a T) -> Json<'a>> Layout for Trees<'a, T, F> {
    const BRACKETS: Brackets = Brackets::Array;

    fn members<M: Members>(&self, m: &mut M) {
        offer_each(m, self.0, |m, item| m.json(Key::Item, &(self.1)(item)));
    }
}
