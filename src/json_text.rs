//! JSON as the program writes it for people to read and review: two-space indents, with short
//! arrays and objects (vectors, shapes, ranges) kept on one line. Stable: the same value gives the
//! same bytes.

use serde_json::Value;

/// Lines longer than this are broken up even when they could be inline.
const INLINE_WIDTH: usize = 100;

/// Formats a JSON value for a file, ending with a newline.
pub fn to_pretty(value: &Value) -> String {
    let mut out = String::new();
    write_value(value, 0, &mut out);
    out.push('\n');
    out
}

/// Writes a value laid out as [`to_pretty`] does, as if it stood `depth` levels deep (no newline).
pub fn write_pretty(value: &Value, depth: usize, out: &mut String) {
    write_value(value, depth, out);
}

fn write_value(value: &Value, depth: usize, out: &mut String) {
    if nests_within(value, 2) && inline_len(value, INLINE_WIDTH.saturating_sub(depth * 2)).is_some()
    {
        write_inline(value, out);
        return;
    }
    let pad = indent(depth + 1);
    match value {
        Value::Array(items) => {
            out.push_str("[\n");
            for (k, item) in items.iter().enumerate() {
                out.push_str(&pad);
                write_value(item, depth + 1, out);
                out.push_str(if k + 1 < items.len() { ",\n" } else { "\n" });
            }
            out.push_str(&indent(depth));
            out.push(']');
        }
        Value::Object(map) => {
            out.push_str("{\n");
            for (k, (key, item)) in map.iter().enumerate() {
                out.push_str(&pad);
                write_scalar_string(key, out);
                out.push_str(": ");
                write_value(item, depth + 1, out);
                out.push_str(if k + 1 < map.len() { ",\n" } else { "\n" });
            }
            out.push_str(&indent(depth));
            out.push('}');
        }
        scalar => write_inline(scalar, out),
    }
}

/// Writes a value on one line, with a space after each `,` and `:`.
fn write_inline(value: &Value, out: &mut String) {
    match value {
        Value::Array(items) => {
            out.push('[');
            for (k, item) in items.iter().enumerate() {
                if k > 0 {
                    out.push_str(", ");
                }
                write_inline(item, out);
            }
            out.push(']');
        }
        Value::Object(map) => {
            out.push('{');
            for (k, (key, item)) in map.iter().enumerate() {
                if k > 0 {
                    out.push_str(", ");
                }
                write_scalar_string(key, out);
                out.push_str(": ");
                write_inline(item, out);
            }
            out.push('}');
        }
        Value::String(s) => write_scalar_string(s, out),
        scalar => {
            use std::fmt::Write;
            let _ = write!(out, "{scalar}");
        }
    }
}

fn write_scalar_string(s: &str, out: &mut String) {
    if s.bytes().any(|b| b < 0x20 || b == b'"' || b == b'\\') {
        out.push_str(&serde_json::to_string(s).expect("strings serialise"));
    } else {
        out.push('"');
        out.push_str(s);
        out.push('"');
    }
}

/// Two spaces per level.
fn indent(depth: usize) -> std::borrow::Cow<'static, str> {
    const SPACES: &str = "                                ";
    match SPACES.get(..2 * depth) {
        Some(s) => std::borrow::Cow::Borrowed(s),
        None => std::borrow::Cow::Owned("  ".repeat(depth)),
    }
}

/// The one-line length of a value when it is at most `budget` characters, else `None` (stops early).
fn inline_len(value: &Value, budget: usize) -> Option<usize> {
    let len = match value {
        Value::Array(items) => {
            let mut len = 2 + 2 * items.len().saturating_sub(1);
            for item in items {
                len += inline_len(item, budget.checked_sub(len)?)?;
            }
            len
        }
        Value::Object(map) => {
            let mut len = 2 + 2 * map.len().saturating_sub(1);
            for (key, item) in map {
                len += key.len() + 4;
                len += inline_len(item, budget.checked_sub(len)?)?;
            }
            len
        }
        Value::String(s) => s.len() + 2,
        Value::Number(n) => number_len(n),
        Value::Bool(b) => {
            if *b {
                4
            } else {
                5
            }
        }
        Value::Null => 4,
    };
    (len <= budget).then_some(len)
}

/// The length of a number as JSON writes it, without allocating.
fn number_len(n: &serde_json::Number) -> usize {
    struct Count(usize);
    impl std::fmt::Write for Count {
        fn write_str(&mut self, s: &str) -> std::fmt::Result {
            self.0 += s.len();
            Ok(())
        }
    }
    let mut count = Count(0);
    let _ = std::fmt::Write::write_fmt(&mut count, format_args!("{n}"));
    count.0
}

/// True when arrays and objects nest at most `levels` deep (`[1, 2]` is 1, `[[1], [2]]` is 2);
/// stops looking as soon as it is deeper, so large documents are not walked.
fn nests_within(value: &Value, levels: usize) -> bool {
    match value {
        Value::Array(items) => levels > 0 && items.iter().all(|i| nests_within(i, levels - 1)),
        Value::Object(map) => levels > 0 && map.values().all(|v| nests_within(v, levels - 1)),
        _ => true,
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

    #[test]
    fn rounding_is_stable() {
        assert_eq!(round9(-1e-12), 0.0);
        assert!(round9(-1e-12).is_sign_positive());
        assert_eq!(round9(23.9140000000004), 23.914);
    }
}
