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

fn write_value(value: &Value, depth: usize, out: &mut String) {
    let inline = serde_json::to_string(value).expect("JSON values always serialise");
    if nesting(value) <= 2 && inline.len() + depth * 2 <= INLINE_WIDTH {
        out.push_str(&spaced(&inline, value));
        return;
    }
    let pad = "  ".repeat(depth + 1);
    match value {
        Value::Array(items) => {
            out.push_str("[\n");
            for (k, item) in items.iter().enumerate() {
                out.push_str(&pad);
                write_value(item, depth + 1, out);
                out.push_str(if k + 1 < items.len() { ",\n" } else { "\n" });
            }
            out.push_str(&"  ".repeat(depth));
            out.push(']');
        }
        Value::Object(map) => {
            out.push_str("{\n");
            for (k, (key, item)) in map.iter().enumerate() {
                out.push_str(&pad);
                out.push_str(&serde_json::to_string(key).expect("keys serialise"));
                out.push_str(": ");
                write_value(item, depth + 1, out);
                out.push_str(if k + 1 < map.len() { ",\n" } else { "\n" });
            }
            out.push_str(&"  ".repeat(depth));
            out.push('}');
        }
        _ => out.push_str(&inline),
    }
}

/// How deeply arrays and objects nest: 0 for a scalar, 1 for `[1, 2]`, 2 for `[[1], [2]]`.
fn nesting(value: &Value) -> usize {
    match value {
        Value::Array(items) => 1 + items.iter().map(nesting).max().unwrap_or(0),
        Value::Object(map) => 1 + map.values().map(nesting).max().unwrap_or(0),
        _ => 0,
    }
}

/// Compact JSON with a space after each `,` and `:` outside strings, for one-line readability.
fn spaced(compact: &str, value: &Value) -> String {
    if matches!(
        value,
        Value::String(_) | Value::Number(_) | Value::Bool(_) | Value::Null
    ) {
        return compact.to_string();
    }
    let mut out = String::with_capacity(compact.len() + 16);
    let mut in_string = false;
    let mut escaped = false;
    for c in compact.chars() {
        out.push(c);
        if in_string {
            if escaped {
                escaped = false;
            } else if c == '\\' {
                escaped = true;
            } else if c == '"' {
                in_string = false;
            }
        } else if c == '"' {
            in_string = true;
        } else if c == ',' || c == ':' {
            out.push(' ');
        }
    }
    out
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
