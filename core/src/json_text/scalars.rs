//! Strings, keys and numbers as JSON writes them, byte for byte as serde_json (the reference
//! writer) would, without `core::fmt`.

use serde_json::Number;

/// A float as [`super::Json::float`] and [`write_number`] write it: `null` when not finite.
pub(super) fn write_float(x: f64, out: &mut String) {
    if write_billionths(x, out) {
    } else if x.is_finite() {
        out.push_str(zmij::Buffer::new().format_finite(x));
    } else {
        out.push_str("null");
    }
}

/// Writes `x` and returns true when it is the double nearest to a whole number `n` of billionths
/// (what [`super::round9`] returns) with 10⁻⁵ ≤ |x| < 2²² (or x = +0): the shortest decimal that
/// reads back as `x` is then `n`'s own digits with the point nine places from the right. No other
/// decimal of as few digits is within an ulp of `x` (it would lie at least 10⁻⁹ from those
/// digits, and an ulp is at most 2⁻³⁰ there), so this is byte for byte what the shortest-digits
/// formatter writes (decimal notation from 10⁻⁵ on). Other values return false, writing nothing.
fn write_billionths(x: f64, out: &mut String) -> bool {
    const BILLION: u64 = 1_000_000_000;
    let scaled = x * 1e9;
    // Integers past 2^52 have no fraction to round; below it `as i64` truncates exactly.
    let in_range = scaled.abs() < (BILLION << 22) as f64;
    if !in_range {
        return false;
    }
    let n = round_half_away(scaled) as i64;
    let magnitude = n.unsigned_abs();
    if (n as f64 / 1e9).to_bits() != x.to_bits() || (magnitude != 0 && magnitude < 10_000) {
        return false;
    }
    if n < 0 {
        out.push('-');
    }
    out.push_str(itoa::Buffer::new().format(magnitude / BILLION));
    let fraction = magnitude % BILLION;
    if fraction == 0 {
        out.push_str(".0");
        return true;
    }
    // The point and nine digits, two at a time from the right; then trailing zeros dropped.
    let mut text = [b'.'; 10];
    let mut rest = fraction as usize;
    for end in [9, 7, 5, 3] {
        let pair = 2 * (rest % 100);
        text[end - 1..=end].copy_from_slice(&DIGIT_PAIRS[pair..pair + 2]);
        rest /= 100;
    }
    text[1] = b'0' + rest as u8;
    let mut len = text.len();
    while text[len - 1] == b'0' {
        len -= 1;
    }
    debug_assert!(text[..len].is_ascii());
    // SAFETY: the bytes are a point and ASCII digits.
    out.push_str(unsafe { std::str::from_utf8_unchecked(&text[..len]) });
    true
}

/// "00", "01", … "99": two decimal digits at a time.
const DIGIT_PAIRS: [u8; 200] = {
    let mut pairs = [0; 200];
    let mut k = 0;
    while k < 100 {
        pairs[2 * k] = b'0' + (k / 10) as u8;
        pairs[2 * k + 1] = b'0' + (k % 10) as u8;
        k += 1;
    }
    pairs
};

/// `y` rounded to the nearest whole number, halves away from zero, as `f64::round` does (but
/// `+0` for results of zero): exact, and without the library call `round` compiles to where SSE4.1
/// is not assumed. `y - trunc(y)` is exact below 2⁵², and larger doubles are whole already.
#[inline]
pub(super) fn round_half_away(y: f64) -> f64 {
    let fractional = y.abs() < 4_503_599_627_370_496.0;
    if !fractional {
        return y;
    }
    let whole = y as i64 as f64;
    let part = y - whole;
    if part >= 0.5 {
        whole + 1.0
    } else if part <= -0.5 {
        whole - 1.0
    } else {
        whole
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

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(20_000))]

        /// Rounded lengths and coordinates (nine decimals, every magnitude from 10⁻¹² to 10⁸, both
        /// signs, whole numbers too) are written byte for byte as the shortest-digits formatter
        /// writes them, whether or not the billionths shortcut takes them.
        #[test]
        fn rounded_floats_are_written_as_the_shortest_digits(
            mantissa in 1.0f64..10.0,
            exponent in -12i32..9,
            negative in proptest::prelude::any::<bool>(),
            whole in proptest::prelude::any::<bool>(),
        ) {
            let raw = mantissa * 10f64.powi(exponent) * if negative { -1.0 } else { 1.0 };
            let x = if whole { raw.trunc() } else { crate::json_text::round9(raw) };
            let mut out = String::new();
            write_float(x, &mut out);
            let mut reference = zmij::Buffer::new();
            proptest::prop_assert_eq!(out.as_str(), reference.format_finite(x));
        }

        /// The rounding is `f64::round`'s, up to the sign of a zero result.
        #[test]
        fn rounding_halves_away_matches_the_library(bits in proptest::prelude::any::<u64>(), small in -1e6f64..1e6) {
            for y in [f64::from_bits(bits), small, small.trunc() + 0.5, small.trunc() - 0.5] {
                let ours = round_half_away(y);
                let theirs = y.round();
                proptest::prop_assert!(ours == theirs || (ours.is_nan() && theirs.is_nan()), "{} {} {}", y, ours, theirs);
            }
        }
    }

    #[test]
    fn billionths_at_the_edges_are_written_as_the_shortest_digits() {
        for x in [
            0.0,
            -0.0,
            1e-5,
            -1e-5,
            9.999e-6,
            1e-9,
            0.5,
            1.0,
            12.0,
            0.000010001,
            4194303.999999999,
            4194304.0,
            4194304.000000001,
            1e15,
            123456.000000001,
            -0.999999999,
            1e-4 + 1e-9,
        ] {
            let mut out = String::new();
            write_float(x, &mut out);
            assert_eq!(out, zmij::Buffer::new().format_finite(x), "{x:e}");
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
