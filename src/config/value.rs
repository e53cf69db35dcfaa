//! Numbers written as strings in `kickback.toml`: a decimal number with an optional SPICE scale
//! suffix, unit letters after it ignored (`"2.2m"`, `"10k"`, `"4.7uF"`, `"1MEG"`, `"2200µ"`).
//! The config reads numbers with the netlist's own number parser, so a value means the same in
//! both places (`M` is milli, `MEG` mega, `F` femto, `MIL` 25.4 µm).

use crate::netlist::value::{number_prefix, parse_number};

/// Parses a config value string into SI base units, or `None` when it is not a number.
/// Beyond what a netlist accepts, a space may stand between the number and its suffix (`10 k`).
pub(crate) fn parse_value(text: &str) -> Option<f64> {
    let text = text.trim();
    let (value, rest) = number_prefix(text)?;
    let value = if rest.is_empty() {
        value
    } else if rest.starts_with(char::is_whitespace) {
        let digits = &text[..text.len() - rest.len()];
        parse_number(&format!("{digits}{}", rest.trim_start()))?
    } else {
        return None;
    };
    value.ok()
}

/// The unit a config value string names after its number and scale suffix, as an SI symbol
/// (`"45 mH"` → `H`, `"6 A"` → `A`, `"10k"` → none), when the letters are a unit kickback knows.
/// Unknown letters name no unit: they are ignored, as SPICE ignores them.
pub(crate) fn written_unit(text: &str) -> Option<&'static str> {
    let text = text.trim();
    let start = text.find(|c: char| c.is_alphabetic() || c == 'Ω' || c == 'µ')?;
    let letters = text[start..].trim().to_lowercase();
    // The scale suffix first, as the number parser reads it: letters that are only a scale
    // (`1f` is a femto, not a farad) name no unit.
    for prefix in ["meg", "mil", "t", "g", "k", "m", "u", "µ", "n", "p", "f"] {
        if let Some(rest) = letters.strip_prefix(prefix) {
            if rest.trim().is_empty() {
                return None;
            }
            if let Some(unit) = unit_of(rest.trim()) {
                return Some(unit);
            }
        }
    }
    unit_of(&letters)
}

fn unit_of(letters: &str) -> Option<&'static str> {
    Some(match letters {
        "v" | "volt" | "volts" => "V",
        "a" | "amp" | "amps" | "ampere" | "amperes" => "A",
        "ohm" | "ohms" | "Ω" | "r" => "Ω",
        "h" | "henry" | "henries" => "H",
        "f" | "farad" | "farads" => "F",
        "w" | "watt" | "watts" => "W",
        "s" | "sec" | "second" | "seconds" => "s",
        "c" | "coulomb" | "coulombs" => "C",
        "hz" => "Hz",
        _ => return None,
    })
}

#[cfg(test)]
mod tests {
    use super::parse_value;

    #[test]
    fn units_after_the_scale_are_read() {
        use super::written_unit;
        assert_eq!(written_unit("6 A"), Some("A"));
        assert_eq!(written_unit("45 mH"), Some("H"));
        assert_eq!(written_unit("4.7uF"), Some("F"));
        assert_eq!(written_unit("100mohm"), Some("Ω"));
        assert_eq!(written_unit("1MEGohm"), Some("Ω"));
        assert_eq!(written_unit("12V"), Some("V"));
        assert_eq!(written_unit("10k"), None);
        assert_eq!(written_unit("1f"), None);
        assert_eq!(written_unit("2.2m"), None);
        assert_eq!(written_unit("6"), None);
        assert_eq!(written_unit("1 farad"), Some("F"));
        assert_eq!(written_unit("5 ms"), Some("s"));
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1e-30)
    }

    // Scale suffixes as in the SPICE3 user's manual's scale-factor table (Quarles et al.,
    // SPICE3 Version 3f3 User's Manual, section 2.1): T G MEG K MIL M U N P F,
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
            // The SPICE3 user's manual scale-factor table: MIL = 25.4e-6 (one thousandth
            // of an inch, in metres).
            ("1mil", 25.4e-6),
            ("2MIL", 50.8e-6),
        ];
        for (text, want) in cases {
            let got = parse_value(text);
            assert!(
                got.is_some_and(|g| close(g, want)),
                "{text}: got {got:?}, want {want}"
            );
        }
    }

    /// One parser for the config and the netlist: every netlist number reads the same here.
    #[test]
    fn agrees_with_the_netlist_parser() {
        for text in [
            "1mil", "10k", "2.2m", "1MEG", "4.7uF", "2200µ", "6.8kR", "0.1_r", "1e3k",
        ] {
            let netlist = crate::netlist::value::parse_number(text).and_then(Result::ok);
            assert_eq!(parse_value(text), netlist, "{text}");
        }
    }

    #[test]
    fn refuses_non_numbers() {
        for text in ["", "abc", "k10", ".", "-", "1.2.3", "5%", "1e400"] {
            assert_eq!(parse_value(text), None, "{text}");
        }
    }
}
