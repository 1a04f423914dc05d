//! JSON as the program writes it for people to read and review: two-space indents; an array or
//! object stays on one line when it nests at most two levels and fits in 100 characters less two
//! for each level it stands at (vectors, shapes, ranges), otherwise it has a member to a line.
//! Stable: the same value gives the same bytes. Results' records lay themselves out through
//! [`Layout`] without building anything; other values are built as [`Json`] trees first.

use serde_json::{Number, Value};

mod layout;
mod scalars;

pub(crate) use layout::key;
pub use layout::{Brackets, Key, Layout, Members, Scalar, Trees, write_layout};
pub use scalars::is_plain_key;

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
    match value {
        Json::Arr(items) => write_layout(items.as_slice(), depth, out),
        Json::Obj(fields) => write_layout(fields.as_slice(), depth, out),
        Json::Vec3(v) => write_layout(&v[..], depth, out),
        Json::Strs(items) => write_layout(*items, depth, out),
        // A scalar stands on one line however long it is.
        scalar => scalar
            .as_scalar()
            .expect("not an array or object")
            .write(out),
    }
}

impl Json<'_> {
    /// The value as a scalar; `None` for arrays and objects.
    fn as_scalar(&self) -> Option<Scalar<'_>> {
        Some(match self {
            Json::Null => Scalar::Word("null"),
            Json::Bool(b) => Scalar::Word(if *b { "true" } else { "false" }),
            Json::Num(n) => Scalar::Number(n),
            Json::Float(x) => Scalar::Float(*x),
            Json::Str(s) => Scalar::Str(s),
            Json::Arr(_) | Json::Obj(_) | Json::Vec3(_) | Json::Strs(_) => return None,
        })
    }
}

/// Rounds a length, fraction or coordinate for output: nine decimals (a nanometre), and never `-0`.
pub fn round9(x: f64) -> f64 {
    let r = round_half_away(x * 1e9) / 1e9;
    if r == 0.0 { 0.0 } else { r }
}

/// `y` rounded to a whole number, halves away from zero, as [`f64::round`] (IEEE 754's
/// roundToIntegralTiesToAway) but for the sign of a zero, without the library call that `round`
/// is on a CPU baseline without SSE4.1 (a results file rounds eight numbers a hit). Below 2^52 the
/// whole part is exact in an `i64` and the fraction `y - t` is exact (Sterbenz's lemma), so the
/// comparison with one half decides exactly; from 2^52 on (and for infinities and NaN) `y` is
/// already whole.
fn round_half_away(y: f64) -> f64 {
    if y.is_nan() || y.abs() >= 4_503_599_627_370_496.0 {
        return y;
    }
    let t = y as i64 as f64;
    let fraction = y - t;
    if fraction >= 0.5 {
        t + 1.0
    } else if fraction <= -0.5 {
        t - 1.0
    } else {
        t
    }
}

/// [`round9`] on each component.
pub fn round9_vec(v: glam::DVec3) -> [f64; 3] {
    [round9(v.x), round9(v.y), round9(v.z)]
}

#[cfg(test)]
mod tests {
    proptest::proptest! {
        /// The same whole number as the standard library's `f64::round` (IEEE 754-2008 §5.9,
        /// roundToIntegralTiesToAway) for any bits, the sign of a zero aside; and `round9` as the
        /// same formula with the library's rounding, zeros included.
        #[test]
        fn rounding_matches_the_standard_library(bits in proptest::prelude::any::<u64>(), small in -1e7f64..1e7) {
            // The edges: halves, the largest below a half, around 2^52 and 2^53, and 2^63.
            let edges = [0.5, -0.5, 0.499_999_999_999_999_94, -2.5, 4_503_599_627_370_495.5, 4_503_599_627_370_496.0, 9_007_199_254_740_993.0, 9.223_372_036_854_776e18];
            for y in [f64::from_bits(bits), small, small.trunc() + 0.5, small.trunc() - 0.5].into_iter().chain(edges) {
                let (ours, reference) = (super::round_half_away(y), y.round());
                proptest::prop_assert!(ours == reference || (ours.is_nan() && reference.is_nan()), "{y}: {ours} against {reference}");
                let r = (y * 1e9).round() / 1e9;
                let expected = if r == 0.0 { 0.0 } else { r };
                let got = super::round9(y);
                proptest::prop_assert!(got.to_bits() == expected.to_bits() || (got.is_nan() && expected.is_nan()), "{y}");
            }
        }
    }

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

    /// Arrays and objects of `scalar`s, up to `depth` levels, about `size` values in all and
    /// `branch` items each on average (proptest's `prop_recursive`), fewer than `items` each, keys
    /// drawn from `keys`.
    fn nested(
        scalar: impl proptest::strategy::Strategy<Value = Value> + 'static,
        (depth, size, branch): (u32, u32, u32),
        items: usize,
        keys: &'static str,
    ) -> impl proptest::strategy::Strategy<Value = Value> {
        use proptest::prelude::*;
        scalar.prop_recursive(depth, size, branch, move |inner| {
            prop_oneof![
                prop::collection::vec(inner.clone(), 0..items).prop_map(Value::Array),
                prop::collection::vec((keys, inner), 0..items)
                    .prop_map(|fields| Value::Object(fields.into_iter().collect())),
            ]
        })
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
        nested(scalar, (3, 40, 6), 6, "[a-z_]{1,10}")
    }

    /// Small values nested up to four levels: short enough that many fit on one line near the
    /// width, and deep enough to meet the two-level limit.
    fn small_value() -> impl proptest::strategy::Strategy<Value = Value> {
        use proptest::prelude::*;
        let scalar = prop_oneof![
            Just(Value::Null),
            (0u64..100).prop_map(Value::from),
            "[a-z]{0,3}".prop_map(Value::from),
        ];
        nested(scalar, (4, 24, 3), 4, "[a-z]{1,2}")
    }

    /// How many levels of arrays and objects a value has (a scalar none).
    fn levels(value: &Value) -> usize {
        match value {
            Value::Array(items) => 1 + items.iter().map(levels).max().unwrap_or(0),
            Value::Object(map) => 1 + map.values().map(levels).max().unwrap_or(0),
            _ => 0,
        }
    }

    /// A value on one line: serde_json's scalars and keys, `, ` between members, `: ` after keys.
    fn one_line(value: &Value) -> String {
        let key = |k: &String| serde_json::to_string(k).unwrap();
        match value {
            Value::Array(items) => {
                let items: Vec<String> = items.iter().map(one_line).collect();
                format!("[{}]", items.join(", "))
            }
            Value::Object(map) => {
                let fields: Vec<String> = map
                    .iter()
                    .map(|(k, v)| format!("{}: {}", key(k), one_line(v)))
                    .collect();
                format!("{{{}}}", fields.join(", "))
            }
            scalar => serde_json::to_string(scalar).unwrap(),
        }
    }

    /// The layout rule, written out plainly over serde_json's values as the reference: a scalar as
    /// serde_json writes it; an array or object on one line when it nests at most two levels and
    /// that line is at most `100 - 2 × depth` long; otherwise a member to a line, each laid out
    /// one level deeper, and the closing bracket on a line of its own.
    fn reference(value: &Value, depth: usize) -> String {
        let key = |k: &String| serde_json::to_string(k).unwrap();
        let line = one_line(value);
        let (open, close, members): (char, char, Vec<String>) = match value {
            Value::Array(items) => (
                '[',
                ']',
                items.iter().map(|v| reference(v, depth + 1)).collect(),
            ),
            Value::Object(map) => (
                '{',
                '}',
                map.iter()
                    .map(|(k, v)| format!("{}: {}", key(k), reference(v, depth + 1)))
                    .collect(),
            ),
            _ => return line,
        };
        if levels(value) <= 2 && line.len() <= 100usize.saturating_sub(2 * depth) {
            return line;
        }
        // Each member on its own line; an empty one (too deep for its width) still breaks.
        let pad = "  ".repeat(depth + 1);
        let lines: String = members
            .iter()
            .map(|m| format!("{pad}{m}"))
            .collect::<Vec<_>>()
            .join(",\n");
        let lines = if members.is_empty() {
            lines
        } else {
            lines + "\n"
        };
        format!("{open}\n{lines}{}{close}", "  ".repeat(depth))
    }

    proptest::proptest! {
        /// Values are laid out as the plainly written rule lays them out, at any depth and at the
        /// two depths where the value's own line just fits and just does not, and read back as
        /// the same value by serde_json (RFC 8259).
        #[test]
        fn values_are_laid_out_by_the_rule(
            value in proptest::prop_oneof![json_value(), small_value()],
            depth in 0usize..55,
        ) {
            let edge = 100usize.saturating_sub(one_line(&value).len()) / 2;
            for depth in [depth, edge, edge + 1] {
                let mut out = String::new();
                write_pretty(&Json::from(&value), depth, &mut out);
                proptest::prop_assert_eq!(&out, &reference(&value, depth));
                proptest::prop_assert_eq!(serde_json::from_str::<Value>(&out).unwrap(), value.clone());
            }
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
