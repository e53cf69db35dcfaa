//! SPICE numbers: mantissa, exponent, scale factor and ignored unit letters
//! (`10uF`, `4.7kOhm`, `1MEG`, `2200µ`, `0.1_r`).

/// A number whose magnitude does not fit an `f64` (`1e999`).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Overflow;

fn is_suffix_start(c: char) -> bool {
    c.is_alphabetic() || c == '_'
}

fn is_suffix_char(c: char) -> bool {
    c.is_alphanumeric() || c == '_'
}

/// What a suffix scales by: a power of ten, or the mil (25.4 µm).
#[derive(Clone, Copy, Debug, PartialEq)]
enum Scale {
    Pow10(i32),
    Mil,
}

fn scale_of(suffix: &str) -> Scale {
    let mut chars = suffix.chars();
    let Some(first) = chars.next() else {
        return Scale::Pow10(0);
    };
    let second = chars.next().map(|c| c.to_ascii_lowercase());
    let third = chars.next().map(|c| c.to_ascii_lowercase());
    match (first.to_ascii_lowercase(), second, third) {
        ('m', Some('e'), Some('g')) => Scale::Pow10(6),
        ('m', Some('i'), Some('l')) => Scale::Mil,
        ('t', _, _) => Scale::Pow10(12),
        ('g', _, _) => Scale::Pow10(9),
        ('k', _, _) => Scale::Pow10(3),
        ('m', _, _) => Scale::Pow10(-3),
        ('u', _, _) | ('µ', _, _) | ('μ', _, _) => Scale::Pow10(-6),
        ('n', _, _) => Scale::Pow10(-9),
        ('p', _, _) => Scale::Pow10(-12),
        ('f', _, _) => Scale::Pow10(-15),
        _ => Scale::Pow10(0),
    }
}

/// Applies a power-of-ten scale in decimal, so `5u` is exactly the double nearest 5e-6.
fn scaled(digits: &str, exp10: i32) -> Option<f64> {
    if exp10 == 0 {
        return digits.parse().ok();
    }
    let (mantissa, own_exp) = match digits.find(['e', 'E']) {
        Some(i) => (&digits[..i], digits[i + 1..].parse::<i32>().ok()?),
        None => (digits, 0),
    };
    let total = own_exp.saturating_add(exp10);
    // Mantissa, `e` and exponent written into a stack buffer: no allocation per value.
    let mut buf = [0u8; 64];
    let exp_text = itoa(total);
    let exp_bytes = exp_text.as_bytes();
    let len = mantissa.len() + 1 + exp_bytes.len();
    if len > buf.len() {
        return format!("{mantissa}e{total}").parse().ok();
    }
    buf[..mantissa.len()].copy_from_slice(mantissa.as_bytes());
    buf[mantissa.len()] = b'e';
    buf[mantissa.len() + 1..len].copy_from_slice(exp_bytes);
    std::str::from_utf8(&buf[..len]).ok()?.parse().ok()
}

/// A small integer as text without allocating.
struct SmallInt {
    buf: [u8; 12],
    start: usize,
}

impl SmallInt {
    fn as_bytes(&self) -> &[u8] {
        &self.buf[self.start..]
    }
}

fn itoa(value: i32) -> SmallInt {
    let mut buf = [0u8; 12];
    let mut at = buf.len();
    let negative = value < 0;
    let mut v = value.unsigned_abs();
    loop {
        at -= 1;
        buf[at] = b'0' + (v % 10) as u8;
        v /= 10;
        if v == 0 {
            break;
        }
    }
    if negative {
        at -= 1;
        buf[at] = b'-';
    }
    SmallInt { buf, start: at }
}

/// Length of `[+-]? (digits [. digits*] | . digits) ([eE] [+-]? digits)?` at the start of
/// `bytes` (the grammar of the combinator reference in the tests, scanned without combinators because
/// every value of a large deck passes through here).
fn scan_number(bytes: &[u8]) -> Option<usize> {
    let digits = |from: usize| {
        bytes
            .get(from..)
            .map_or(0, |b| b.iter().take_while(|c| c.is_ascii_digit()).count())
    };
    let mut i = usize::from(matches!(bytes.first(), Some(b'+' | b'-')));
    let whole = digits(i);
    i += whole;
    if bytes.get(i) == Some(&b'.') {
        let frac = digits(i + 1);
        if whole == 0 && frac == 0 {
            return None;
        }
        i += 1 + frac;
    } else if whole == 0 {
        return None;
    }
    if matches!(bytes.get(i), Some(b'e' | b'E')) {
        let sign = usize::from(matches!(bytes.get(i + 1), Some(b'+' | b'-')));
        let exp = digits(i + 1 + sign);
        if exp > 0 {
            i += 1 + sign + exp;
        }
    }
    Some(i)
}

/// A number with its suffix at the start of `input`; returns the rest after the suffix letters.
pub fn number_prefix(input: &str) -> Option<(Result<f64, Overflow>, &str)> {
    let len = scan_number(input.as_bytes())?;
    let (digits, rest) = input.split_at(len);
    let suffix_len = if rest.starts_with(is_suffix_start) {
        rest.find(|c: char| !is_suffix_char(c))
            .unwrap_or(rest.len())
    } else {
        0
    };
    let (suffix, rest) = rest.split_at(suffix_len);
    let value = match scale_of(suffix) {
        Scale::Pow10(e) => scaled(digits, e)?,
        Scale::Mil => digits.parse::<f64>().ok()? * 25.4e-6,
    };
    let value = if value.is_finite() {
        Ok(value)
    } else {
        Err(Overflow)
    };
    Some((value, rest))
}

/// A whole token read as a number (`None` when it is not one, e.g. a node or model name).
pub fn parse_number(token: &str) -> Option<Result<f64, Overflow>> {
    match number_prefix(token) {
        Some((value, "")) => Some(value),
        _ => None,
    }
}

/// Quick test used when deciding whether a token can be a value.
pub fn is_number(token: &str) -> bool {
    parse_number(token).is_some()
}

#[cfg(test)]
mod tests {
    use super::*;
    use nom::branch::alt;
    use nom::character::complete::{char, digit0, digit1, one_of};
    use nom::combinator::{opt, recognize};
    use nom::sequence::{pair, tuple};
    use nom::IResult;

    /// The number grammar in combinators: the reference the byte scanner is checked against.
    fn mantissa_and_exponent(input: &str) -> IResult<&str, &str> {
        recognize(tuple((
            opt(one_of("+-")),
            alt((
                recognize(pair(digit1, opt(pair(char('.'), digit0)))),
                recognize(pair(char('.'), digit1)),
            )),
            opt(recognize(tuple((one_of("eE"), opt(one_of("+-")), digit1)))),
        )))(input)
    }

    fn num(t: &str) -> f64 {
        match parse_number(t) {
            Some(Ok(v)) => v,
            other => panic!("{t}: {other:?}"),
        }
    }

    #[test]
    fn suffixes_and_units() {
        assert_eq!(num("6.8kR"), 6800.0);
        assert_eq!(num("1t"), 1e12);
        assert!((num("0.1_r") - 0.1).abs() < 1e-15);
        assert!((num("2200µ") - 2.2e-3).abs() < 1e-15);
        assert!((num("1.5mH") - 1.5e-3).abs() < 1e-15);
        assert_eq!(num("1e3k"), 1e6);
        assert_eq!(num("5V"), 5.0);
        assert_eq!(num("5u"), 5e-6);
        assert_eq!(num("4.7kOhm"), 4700.0);
        assert_eq!(num("2.2e-3k"), 2.2);
        assert_eq!(num("3e-20f"), 3e-35);
    }

    #[test]
    fn scanner_agrees_with_the_grammar() {
        for t in [
            "1", "-2.5e-3x", ".5", "1.", "+.5e+2", "1e", "1e+", "e1", ".", "-", "12k", "3.e4",
        ] {
            let nom_len = mantissa_and_exponent(t)
                .ok()
                .map(|(rest, _)| t.len() - rest.len());
            assert_eq!(scan_number(t.as_bytes()), nom_len, "{t}");
        }
    }

    #[test]
    fn not_numbers() {
        assert!(parse_number("n1").is_none());
        assert!(parse_number("1k-2").is_none());
        assert!(parse_number("").is_none());
        assert!(parse_number("-").is_none());
        assert!(parse_number("net.1").is_none());
    }

    #[test]
    fn overflow_is_reported() {
        assert_eq!(parse_number("1e999"), Some(Err(Overflow)));
        assert_eq!(parse_number("1e308MEG"), Some(Err(Overflow)));
    }
}
