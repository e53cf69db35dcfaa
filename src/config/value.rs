//! Numbers written as strings in `kickback.toml`: a decimal number with an optional SPICE scale
//! suffix, unit letters after it ignored (`"2.2m"`, `"10k"`, `"4.7uF"`, `"1MEG"`, `"2200µ"`).
//! As in SPICE, `M` is milli and `MEG` is mega; `F` is femto.

/// Parses a config value string into SI base units, or `None` when it is not a number.
pub(crate) fn parse_value(text: &str) -> Option<f64> {
    let text = text.trim();
    let (number, rest) = split_number(text)?;
    let mantissa: f64 = number.parse().ok()?;
    let scale = scale_of(rest.trim_start())?;
    let value = mantissa * scale;
    value.is_finite().then_some(value)
}

/// Splits `text` after its leading decimal number (sign, digits, point, exponent).
fn split_number(text: &str) -> Option<(&str, &str)> {
    let bytes = text.as_bytes();
    let mut end = 0;
    if matches!(bytes.first(), Some(b'+' | b'-')) {
        end += 1;
    }
    let digits_start = end;
    while bytes.get(end).is_some_and(u8::is_ascii_digit) {
        end += 1;
    }
    let mut digits = end - digits_start;
    if bytes.get(end) == Some(&b'.') {
        end += 1;
        let fraction_start = end;
        while bytes.get(end).is_some_and(u8::is_ascii_digit) {
            end += 1;
        }
        digits += end - fraction_start;
    }
    if digits == 0 {
        return None;
    }
    // An exponent only counts when digits follow it; otherwise `e` is a unit letter.
    if matches!(bytes.get(end), Some(b'e' | b'E')) {
        let mut probe = end + 1;
        if matches!(bytes.get(probe), Some(b'+' | b'-')) {
            probe += 1;
        }
        if bytes.get(probe).is_some_and(u8::is_ascii_digit) {
            while bytes.get(probe).is_some_and(u8::is_ascii_digit) {
                probe += 1;
            }
            end = probe;
        }
    }
    Some((&text[..end], &text[end..]))
}

/// The multiplier of a suffix; trailing unit letters are ignored, anything else is refused.
fn scale_of(suffix: &str) -> Option<f64> {
    if !suffix
        .chars()
        .all(|c| c.is_alphabetic() || c == 'µ' || c == 'Ω')
    {
        return None;
    }
    let upper = suffix.to_uppercase();
    if upper.starts_with("MEG") {
        return Some(1e6);
    }
    let scale = match upper.chars().next() {
        None => 1.0,
        Some('T') => 1e12,
        Some('G') => 1e9,
        Some('K') => 1e3,
        Some('M') => 1e-3,
        Some('U') | Some('µ') | Some('Μ') => 1e-6,
        Some('N') => 1e-9,
        Some('P') => 1e-12,
        Some('F') => 1e-15,
        Some(_) => 1.0,
    };
    Some(scale)
}

#[cfg(test)]
mod tests {
    use super::parse_value;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1e-30)
    }

    // Scale suffixes as in the SPICE3 user's manual (from memory): T G MEG K M U N P F,
    // case-insensitive, letters after the suffix ignored.
    #[test]
    fn spice_suffixes() {
        let cases = [
            ("2.2m", 2.2e-3),
            ("1.8", 1.8),
            ("10k", 10e3),
            ("4.7u", 4.7e-6),
            ("4.7uF", 4.7e-6),
            ("2200µ", 2200e-6),
            ("1MEG", 1e6),
            ("1meg", 1e6),
            ("1M", 1e-3),
            ("1mA", 1e-3),
            ("12V", 12.0),
            ("3n", 3e-9),
            ("5p", 5e-12),
            ("2f", 2e-15),
            ("1T", 1e12),
            ("1G", 1e9),
            ("1e3", 1e3),
            ("1.5e-3", 1.5e-3),
            ("-5", -5.0),
            (".5", 0.5),
            ("10 k", 10e3),
            ("4.7kOhm", 4.7e3),
        ];
        for (text, want) in cases {
            let got = parse_value(text);
            assert!(
                got.is_some_and(|g| close(g, want)),
                "{text}: got {got:?}, want {want}"
            );
        }
    }

    #[test]
    fn refuses_non_numbers() {
        for text in ["", "abc", "k10", ".", "-", "1.2.3", "5%", "1e400"] {
            assert_eq!(parse_value(text), None, "{text}");
        }
    }
}
