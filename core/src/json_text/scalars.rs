//! Strings, keys and numbers as JSON writes them, byte for byte as serde_json (the reference
//! writer) would, without `core::fmt`.

use serde_json::Number;

/// A float as [`super::Json::float`] and [`write_number`] write it: `null` when not finite.
pub(super) fn write_float(x: f64, out: &mut String) {
    if x.is_finite() {
        out.push_str(zmij::Buffer::new().format_finite(x));
    } else {
        out.push_str("null");
    }
}

/// A number as serde_json writes it (the same formatters).
pub(super) fn write_number(n: &Number, out: &mut String) {
    if let Some(x) = n.as_f64().filter(|_| n.is_f64()) {
        write_float(x, out);
    } else if let Some(u) = n.as_u64() {
        write_uint(u, out);
    } else if let Some(i) = n.as_i64() {
        out.push_str(itoa::Buffer::new().format(i));
    }
}

/// A whole number.
pub(super) fn write_uint(u: u64, out: &mut String) {
    out.push_str(itoa::Buffer::new().format(u));
}

/// A string, quoted and escaped as JSON needs.
pub(super) fn write_string(s: &str, out: &mut String) {
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
pub(super) fn write_key(key: &str, out: &mut String) {
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

/// True when `key` is written as `"key": ` with nothing escaped: what [`super::key!`] asks of a
/// key at compile time.
pub const fn is_plain_key(quoted: &str) -> bool {
    let bytes = quoted.as_bytes();
    let n = bytes.len();
    if n < 4
        || bytes[0] != b'"'
        || bytes[n - 3] != b'"'
        || bytes[n - 2] != b':'
        || bytes[n - 1] != b' '
    {
        return false;
    }
    let mut i = 1;
    while i < n - 3 {
        if ESCAPED[bytes[i] as usize] {
            return false;
        }
        i += 1;
    }
    true
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

#[cfg(test)]
mod tests {
    use super::*;

    proptest::proptest! {
        /// Strings are written byte for byte as serde_json (the reference writer) writes them, as
        /// values and as keys, whatever bytes need escaping and wherever they fall in a word; a
        /// key is plain (may be written pre-quoted) exactly when serde_json escapes nothing in it.
        #[test]
        fn strings_are_written_as_serde_json_writes_them(s in "[ -~\u{0}-\u{1f}\u{7f}-\u{3ff}]{0,40}") {
            let mut out = String::new();
            write_string(&s, &mut out);
            let reference = serde_json::to_string(&s).unwrap();
            proptest::prop_assert_eq!(&out, &reference);
            let mut key = String::new();
            write_key(&s, &mut key);
            proptest::prop_assert_eq!(&key, &format!("{reference}: "));
            let escaped = s.bytes().any(|b| b < 0x20 || b == b'"' || b == b'\\');
            proptest::prop_assert_eq!(needs_escapes(s.as_bytes()), escaped);
            proptest::prop_assert_eq!(is_plain_key(&format!("\"{s}\": ")), reference == format!("\"{s}\""));
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
    }

    #[test]
    fn a_plain_key_is_quoted_and_followed_by_a_colon_and_a_space() {
        assert!(is_plain_key("\"object\": "));
        assert!(is_plain_key("\"\": "));
        assert!(!is_plain_key("\"object\":"));
        assert!(!is_plain_key("object: "));
        assert!(!is_plain_key("\"a\"b\": "));
    }
}
