//! JSON as the program writes it for people to read and review: two-space indents, with short
//! arrays and objects (vectors, shapes, ranges) kept on one line. Stable: the same value gives the
//! same bytes.

use serde_json::{Number, Value};

/// Lines longer than this are broken up even when they could be inline.
const INLINE_WIDTH: usize = 100;

/// A JSON value that borrows its text: what the writer lays out. Records build it without the
/// allocations of a `serde_json::Value` (no owned keys, no maps).
#[derive(Debug, Clone, PartialEq)]
pub enum Json<'a> {
    /// `null`.
    Null,
    /// `true` or `false`.
    Bool(bool),
    /// A number, formatted as serde_json formats it.
    Num(Number),
    /// A float, written as [`Json::Num`] writes one (`null` when not finite): records' lengths,
    /// fractions and coordinates, without a `Number` made for each.
    Float(f64),
    /// A string.
    Str(&'a str),
    /// An array.
    Arr(Vec<Json<'a>>),
    /// An object, keys in order.
    Obj(Vec<(&'a str, Json<'a>)>),
    /// Three floats, an array written as [`Json::vec3`] describes (no allocation: records hold
    /// many points and normals).
    Vec3([f64; 3]),
    /// A list of strings (tags, names), an array of them (no allocation).
    Strs(&'a [String]),
}

impl Json<'_> {
    /// A float (`null` when not finite, as serde_json writes it).
    pub fn float(x: f64) -> Json<'static> {
        Json::Float(x)
    }

    /// A whole number.
    pub fn int(x: u64) -> Json<'static> {
        Json::Num(Number::from(x))
    }

    /// Three floats, a vector: an array of three numbers, each `null` when not finite.
    pub fn vec3(v: [f64; 3]) -> Json<'static> {
        Json::Vec3(v)
    }
}

impl<'a> From<&'a Value> for Json<'a> {
    fn from(value: &'a Value) -> Json<'a> {
        match value {
            Value::Null => Json::Null,
            Value::Bool(b) => Json::Bool(*b),
            Value::Number(n) => Json::Num(n.clone()),
            Value::String(s) => Json::Str(s),
            Value::Array(items) => Json::Arr(items.iter().map(Json::from).collect()),
            Value::Object(map) => Json::Obj(
                map.iter()
                    .map(|(k, v)| (k.as_str(), Json::from(v)))
                    .collect(),
            ),
        }
    }
}

/// Formats a JSON value for a file, ending with a newline.
pub fn to_pretty(value: &Value) -> String {
    let mut out = String::new();
    write_pretty(&Json::from(value), 0, &mut out);
    out.push('\n');
    out
}

/// Writes a value laid out as [`to_pretty`] does, as if it stood `depth` levels deep (no newline).
pub fn write_pretty(value: &Json, depth: usize, out: &mut String) {
    let width = INLINE_WIDTH.saturating_sub(depth * 2);
    // A scalar stands on one line however long it is (the last arm below).
    let scalar = matches!(
        value,
        Json::Null | Json::Bool(_) | Json::Num(_) | Json::Float(_) | Json::Str(_)
    );
    if !scalar && inline_at_least(value, width, 2) <= width {
        // Written on one line, then taken back if it runs past the width: each number is
        // formatted once for values that fit, and at most a line's worth is wasted for those
        // that do not.
        let start = out.len();
        if write_inline_within(value, out, start + width) {
            return;
        }
        out.truncate(start);
    }
    match value {
        Json::Arr(items) => write_lines(('[', ']'), items, depth, out, |item, out| {
            write_item(item, depth + 1, out)
        }),
        Json::Obj(fields) => write_lines(('{', '}'), fields, depth, out, |(key, item), out| {
            write_key(key, out);
            write_item(item, depth + 1, out);
        }),
        Json::Vec3(v) => write_pretty(&Json::Arr(v.map(Json::float).to_vec()), depth, out),
        Json::Strs(items) => {
            let items = items.iter().map(|s| Json::Str(s)).collect();
            write_pretty(&Json::Arr(items), depth, out);
        }
        scalar => write_inline(scalar, out),
    }
}

/// [`write_pretty`] of an array's item or an object's value: strings and numbers, most of them,
/// written here without the call.
#[inline(always)]
fn write_item(item: &Json, depth: usize, out: &mut String) {
    match item {
        Json::Str(s) => write_string(s, out),
        Json::Num(n) => write_number(n, out),
        Json::Float(x) => write_float(*x, out),
        _ => write_pretty(item, depth, out),
    }
}

/// Writes `items` between `open` and `close`, each by `item` on its own line one level deeper
/// than `depth`.
fn write_lines<T>(
    (open, close): (char, char),
    items: &[T],
    depth: usize,
    out: &mut String,
    mut item: impl FnMut(&T, &mut String),
) {
    let pad = indent(depth + 1);
    out.push(open);
    out.push('\n');
    for (k, each) in items.iter().enumerate() {
        out.push_str(&pad);
        item(each, out);
        out.push_str(if k + 1 < items.len() { ",\n" } else { "\n" });
    }
    out.push_str(&indent(depth));
    out.push(close);
}

/// Writes a value on one line, with a space after each `,` and `:`.
fn write_inline(value: &Json, out: &mut String) {
    write_inline_within(value, out, usize::MAX);
}

/// Writes a value as [`write_inline`] does while `out` stays at most `limit` bytes long; returns
/// false (with `out` part written) as soon as it is longer.
fn write_inline_within(value: &Json, out: &mut String, limit: usize) -> bool {
    let complete = match value {
        Json::Arr(items) => write_list(('[', ']'), items, out, |item, out| {
            write_inline_within(item, out, limit)
        }),
        Json::Obj(fields) => write_list(('{', '}'), fields, out, |(key, item), out| {
            write_key(key, out);
            write_inline_within(item, out, limit)
        }),
        Json::Vec3(v) => write_list(('[', ']'), v, out, |x, out| {
            write_float(*x, out);
            true
        }),
        Json::Strs(items) => write_list(('[', ']'), items, out, |item, out| {
            write_string(item, out);
            true
        }),
        Json::Str(s) => {
            write_string(s, out);
            true
        }
        Json::Num(n) => {
            write_number(n, out);
            true
        }
        Json::Float(x) => {
            write_float(*x, out);
            true
        }
        Json::Bool(b) => {
            out.push_str(if *b { "true" } else { "false" });
            true
        }
        Json::Null => {
            out.push_str("null");
            true
        }
    };
    complete && out.len() <= limit
}

/// Writes `items` between `open` and `close` on one line, `, ` between them, each by `item`;
/// false as soon as `item` is (the line ran past its limit), with `out` part written.
fn write_list<T>(
    (open, close): (char, char),
    items: &[T],
    out: &mut String,
    mut item: impl FnMut(&T, &mut String) -> bool,
) -> bool {
    out.push(open);
    for (k, each) in items.iter().enumerate() {
        if k > 0 {
            out.push_str(", ");
        }
        if !item(each, out) {
            return false;
        }
    }
    out.push(close);
    true
}

/// A float as [`Json::float`] and [`write_number`] write it: `null` when not finite.
fn write_float(x: f64, out: &mut String) {
    if x.is_finite() {
        out.push_str(zmij::Buffer::new().format_finite(x));
    } else {
        out.push_str("null");
    }
}

/// A number as serde_json writes it (the same formatters, without `core::fmt`).
fn write_number(n: &Number, out: &mut String) {
    if let Some(x) = n.as_f64().filter(|_| n.is_f64()) {
        write_float(x, out);
    } else if let Some(u) = n.as_u64() {
        out.push_str(itoa::Buffer::new().format(u));
    } else if let Some(i) = n.as_i64() {
        out.push_str(itoa::Buffer::new().format(i));
    }
}

/// A lower bound on the length of `value` on one line, formatting no number (each is at least one
/// digit), exact until it passes `width` (then it stops counting); more than `width` when arrays
/// and objects nest more than `levels` deep (`[1, 2]` is one level, `[[1], [2]]` two), as such a
/// value is never kept on one line. One walk, stopping early, however large the value.
fn inline_at_least(value: &Json, width: usize, levels: usize) -> usize {
    let too_deep = width.saturating_add(1);
    match value {
        Json::Null | Json::Bool(true) => 4,
        Json::Bool(false) => 5,
        Json::Num(_) | Json::Float(_) => 1,
        Json::Str(s) => s.len() + 2,
        Json::Vec3(_) | Json::Strs(_) | Json::Arr(_) | Json::Obj(_) if levels == 0 => too_deep,
        Json::Vec3(_) => 9,
        Json::Strs(items) => {
            let mut length = items.len().max(1) * 2;
            for item in *items {
                length += item.len() + 2;
                if length > width {
                    break;
                }
            }
            length
        }
        Json::Arr(items) => {
            let mut length = items.len().max(1) * 2;
            for item in items {
                length += item_at_least(item, width, levels - 1);
                if length > width {
                    break;
                }
            }
            length
        }
        Json::Obj(fields) => {
            let mut length = fields.len().max(1) * 2;
            for (key, item) in fields {
                length += key.len() + 4 + item_at_least(item, width, levels - 1);
                if length > width {
                    break;
                }
            }
            length
        }
    }
}

/// [`inline_at_least`] of an array's item or an object's value: scalars, most of them, measured
/// here without the call.
#[inline(always)]
fn item_at_least(item: &Json, width: usize, levels: usize) -> usize {
    match item {
        Json::Num(_) | Json::Float(_) => 1,
        Json::Str(s) => s.len() + 2,
        _ => inline_at_least(item, width, levels),
    }
}

fn write_string(s: &str, out: &mut String) {
    if needs_escapes(s.as_bytes()) {
        write_escaped(s, out);
    } else {
        out.reserve(s.len() + 2);
        out.push('"');
        out.push_str(s);
        out.push('"');
    }
}

/// An object's key and the `": "` after it (one copy fewer than a string and then the colon).
fn write_key(key: &str, out: &mut String) {
    if needs_escapes(key.as_bytes()) {
        write_escaped(key, out);
        out.push_str(": ");
    } else {
        out.reserve(key.len() + 4);
        out.push('"');
        out.push_str(key);
        out.push_str("\": ");
    }
}

/// A string that needs escapes, as serde_json writes it (rare: kept out of the common path).
#[cold]
fn write_escaped(s: &str, out: &mut String) {
    out.push_str(&serde_json::to_string(s).expect("strings serialise"));
}

/// True when `bytes` hold a byte of [`ESCAPED`]: eight bytes at a time, by the zero-byte tests of
/// Anderson's "Bit Twiddling Hacks" ("Determine if a word has a zero byte", "... a byte less than
/// n"), which are exact for the word as a whole; the tail byte by byte.
fn needs_escapes(bytes: &[u8]) -> bool {
    const ONES: u64 = u64::from_ne_bytes([1; 8]);
    const HIGHS: u64 = ONES * 0x80;
    let has_zero = |v: u64| v.wrapping_sub(ONES) & !v & HIGHS != 0;
    let mut words = bytes.chunks_exact(8);
    for word in &mut words {
        let x = u64::from_ne_bytes(word.try_into().expect("eight bytes"));
        let control = x.wrapping_sub(ONES * 0x20) & !x & HIGHS != 0;
        if control
            || has_zero(x ^ (ONES * u64::from(b'"')))
            || has_zero(x ^ (ONES * u64::from(b'\\')))
        {
            return true;
        }
    }
    words.remainder().iter().any(|&b| ESCAPED[usize::from(b)])
}

/// The bytes a JSON string cannot hold as they are (RFC 8259 §7): control characters, `"` and `\`.
const ESCAPED: [bool; 256] = {
    let mut table = [false; 256];
    let mut b = 0;
    while b < 0x20 {
        table[b] = true;
        b += 1;
    }
    table[b'"' as usize] = true;
    table[b'\\' as usize] = true;
    table
};

/// Two spaces per level.
fn indent(depth: usize) -> std::borrow::Cow<'static, str> {
    const SPACES: &str = "                                ";
    match SPACES.get(..2 * depth) {
        Some(s) => std::borrow::Cow::Borrowed(s),
        None => std::borrow::Cow::Owned("  ".repeat(depth)),
    }
}

/// Rounds a length, fraction or coordinate for output: nine decimals (a nanometre), and never `-0`.
pub fn round9(x: f64) -> f64 {
    let r = (x * 1e9).round() / 1e9;
    if r == 0.0 { 0.0 } else { r }
}

/// [`round9`] on each component.
pub fn round9_vec(v: glam::DVec3) -> [f64; 3] {
    [round9(v.x), round9(v.y), round9(v.z)]
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn vectors_inline_and_records_broken() {
        let v = json!({"a": [1.0, 2.5, 3.0], "b": {"type": "sphere", "radius": 0.3}, "c": [{"x": 1}, {"y": "a,b"}]});
        let deep = json!({"hits": [{"point": [1.0, 2.0, 3.0]}]});
        assert_eq!(
            to_pretty(&deep),
            "{\n  \"hits\": [\n    {\"point\": [1.0, 2.0, 3.0]}\n  ]\n}\n"
        );
        let text = to_pretty(&v);
        assert_eq!(
            text,
            "{\n  \"a\": [1.0, 2.5, 3.0],\n  \"b\": {\"type\": \"sphere\", \"radius\": 0.3},\n  \"c\": [{\"x\": 1}, {\"y\": \"a,b\"}]\n}\n"
        );
        assert_eq!(serde_json::from_str::<Value>(&text).unwrap(), v);
    }

    /// Random JSON values: scalars of every kind, and arrays and objects of them.
    fn json_value() -> impl proptest::strategy::Strategy<Value = Value> {
        use proptest::prelude::*;
        let scalar = prop_oneof![
            Just(Value::Null),
            any::<bool>().prop_map(Value::Bool),
            any::<u64>().prop_map(Value::from),
            any::<i64>().prop_map(Value::from),
            any::<f64>().prop_map(Value::from),
            "[a-z\\\"é ]{0,12}".prop_map(Value::from),
        ];
        scalar.prop_recursive(3, 40, 6, |inner| {
            prop_oneof![
                prop::collection::vec(inner.clone(), 0..6).prop_map(Value::Array),
                prop::collection::vec(("[a-z_]{1,10}", inner), 0..6)
                    .prop_map(|fields| Value::Object(fields.into_iter().collect())),
            ]
        })
    }

    proptest::proptest! {
        /// Strings are written byte for byte as serde_json (the reference writer) writes them, as
        /// values and as keys, whatever bytes need escaping and wherever they fall in a word.
        #[test]
        fn strings_are_written_as_serde_json_writes_them(s in "[ -~\u{0}-\u{1f}\u{7f}-\u{3ff}]{0,40}") {
            let mut out = String::new();
            write_string(&s, &mut out);
            proptest::prop_assert_eq!(out, serde_json::to_string(&s).unwrap());
            let mut key = String::new();
            write_key(&s, &mut key);
            proptest::prop_assert_eq!(key, format!("{}: ", serde_json::to_string(&s).unwrap()));
            let escaped = s.bytes().any(|b| b < 0x20 || b == b'"' || b == b'\\');
            proptest::prop_assert_eq!(needs_escapes(s.as_bytes()), escaped);
        }

        /// Numbers are written byte for byte as serde_json (the reference writer) writes them.
        #[test]
        fn numbers_are_written_as_serde_json_writes_them(bits in proptest::prelude::any::<u64>(), i in proptest::prelude::any::<i64>()) {
            for n in [Number::from_f64(f64::from_bits(bits)), Some(Number::from(bits)), Some(Number::from(i))]
                .into_iter()
                .flatten()
            {
                let mut out = String::new();
                write_number(&n, &mut out);
                proptest::prop_assert_eq!(out, n.to_string());
            }
        }

        /// The bound that skips one-line attempts never exceeds a value's one-line length, so no
        /// value that fits is broken up.
        #[test]
        fn the_one_line_bound_never_exceeds_the_length(value in json_value()) {
            let json = Json::from(&value);
            let mut line = String::new();
            write_inline(&json, &mut line);
            proptest::prop_assert!(inline_at_least(&json, usize::MAX, usize::MAX) <= line.len(), "{}", line);
            proptest::prop_assert_eq!(serde_json::from_str::<Value>(&to_pretty(&value)).unwrap(), value);
        }
    }

    proptest::proptest! {
        /// A float is laid out exactly as the serde_json `Number` (or `null`) it stands for, on
        /// one line or broken up, at any depth, NaN, infinities, −0 and subnormals included.
        #[test]
        fn floats_are_laid_out_as_the_numbers_they_stand_for(
            bits in proptest::prelude::any::<[u64; 3]>(),
            special in 0usize..6,
            depth in 0usize..60,
        ) {
            // What `Json::float` gave before it had its own variant: serde_json's `Number`, or
            // `null` where that has none.
            let number = |x: f64| Number::from_f64(x).map_or(Json::Null, Json::Num);
            let odd = [f64::NAN, f64::INFINITY, f64::NEG_INFINITY, -0.0, 1e300, 5e-324][special];
            let xs = [f64::from_bits(bits[0]), f64::from_bits(bits[1]), odd, f64::from_bits(bits[2])];
            let record = |f: &dyn Fn(f64) -> Json<'static>| {
                Json::Obj(vec![
                    ("distance", f(xs[0])),
                    ("list", Json::Arr(xs.iter().map(|&x| f(x)).collect())),
                    ("inner", Json::Obj(vec![("t", f(xs[2])), ("u", f(xs[3]))])),
                ])
            };
            let (mut a, mut b) = (String::new(), String::new());
            write_pretty(&record(&Json::float), depth, &mut a);
            write_pretty(&record(&number), depth, &mut b);
            proptest::prop_assert_eq!(a, b);
        }

        /// A vector is written exactly as the array of its three numbers, on one line or broken
        /// up (deep enough that it no longer fits), alone or inside objects (nested too deep for
        /// one line at two levels).
        #[test]
        fn vectors_are_written_as_arrays_of_numbers(bits in proptest::prelude::any::<[u64; 3]>(), depth in 0usize..60) {
            let v = bits.map(f64::from_bits);
            let as_array = Json::Arr(v.iter().map(|x| Json::float(*x)).collect());
            let within = |inner| Json::Obj(vec![("p", inner)]);
            for (vector, array) in [
                (Json::vec3(v), as_array.clone()),
                (within(Json::vec3(v)), within(as_array.clone())),
                (within(within(Json::vec3(v))), within(within(as_array))),
            ] {
                let (mut a, mut b) = (String::new(), String::new());
                write_pretty(&vector, depth, &mut a);
                write_pretty(&array, depth, &mut b);
                proptest::prop_assert_eq!(a, b);
            }
        }
    }

    proptest::proptest! {
        /// A list of strings is written exactly as the array of its strings, on one line or
        /// broken up, alone or nested too deep for one line.
        #[test]
        fn string_lists_are_written_as_arrays_of_strings(items in proptest::collection::vec("[a-z\"é ]{0,12}", 0..8), depth in 0usize..50) {
            let as_array = Json::Arr(items.iter().map(|s| Json::Str(s)).collect());
            let within = |inner| Json::Obj(vec![("tags", inner)]);
            for (list, array) in [
                (Json::Strs(&items), as_array.clone()),
                (within(within(Json::Strs(&items))), within(within(as_array))),
            ] {
                let (mut a, mut b) = (String::new(), String::new());
                write_pretty(&list, depth, &mut a);
                write_pretty(&array, depth, &mut b);
                proptest::prop_assert_eq!(a, b);
            }
        }
    }

    #[test]
    fn rounding_is_stable() {
        assert_eq!(round9(-1e-12), 0.0);
        assert!(round9(-1e-12).is_sign_positive());
        assert_eq!(round9(23.9140000000004), 23.914);
    }
}
