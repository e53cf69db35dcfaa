//! How a number in SI base units is written for a person: one SI prefix table and one
//! significant-figure rule, used by the rules' messages (three figures: `12.3 mA`) and by the
//! renderers' tables (four figures, optionally ASCII: `4.7 kohm`).

/// SI prefixes from tera to femto, as powers of ten.
const PREFIXES: [(i32, &str); 10] = [
    (12, "T"),
    (9, "G"),
    (6, "M"),
    (3, "k"),
    (0, ""),
    (-3, "m"),
    (-6, "µ"),
    (-9, "n"),
    (-12, "p"),
    (-15, "f"),
];

/// Units that take an SI prefix in a table (a message prefixes any unit).
const PREFIXED_UNITS: &[&str] = &["V", "A", "W", "Ω", "ohm", "F", "H", "Hz", "s", "J", "C"];

/// How to write a number.
#[derive(Clone, Copy, Debug)]
pub struct Style {
    /// Significant figures at most (trailing zeros are dropped).
    pub digits: i32,
    /// `u` for `µ` and `ohm` for `Ω`.
    pub ascii: bool,
    /// Prefix every unit, the empty one included (messages); otherwise only [`PREFIXED_UNITS`]
    /// and never a bare number (tables).
    pub prefix_any_unit: bool,
}

/// The style of the rules' messages.
pub const MESSAGE: Style = Style {
    digits: 3,
    ascii: false,
    prefix_any_unit: true,
};

/// Writes `value` (SI base units) with `unit` in `style`.
pub fn write(value: f64, unit: &str, style: Style) -> String {
    let unit = if style.ascii && unit == "Ω" {
        "ohm"
    } else {
        unit
    };
    if !value.is_finite() {
        return format!("{value} {unit}").trim_end().to_string();
    }
    let prefixed = style.prefix_any_unit || PREFIXED_UNITS.contains(&unit);
    let number = if prefixed && value != 0.0 {
        let (scaled, prefix) = engineering(value, style.digits);
        let prefix = if style.ascii && prefix == "µ" {
            "u"
        } else {
            prefix
        };
        return format!("{} {prefix}{unit}", significant(scaled, style.digits));
    } else if value == 0.0 {
        "0".to_string()
    } else {
        significant(value, style.digits)
    };
    if unit.is_empty() {
        number
    } else {
        format!("{number} {unit}")
    }
}

/// `0.0123` A → `12.3 mA`; `4700` Ω → `4.7 kΩ` (three significant figures, for messages).
pub fn format_si(value: f64, unit: &str) -> String {
    write(value, unit, MESSAGE)
}

/// Four significant figures with SI prefixes on the usual units, for tables; `ascii` writes
/// `u` and `ohm`.
pub fn format_quantity(value: f64, unit: &str, ascii: bool) -> String {
    write(
        value,
        unit,
        Style {
            digits: 4,
            ascii,
            prefix_any_unit: false,
        },
    )
}

/// A bare number to three significant figures.
pub fn sig3(value: f64) -> String {
    if value == 0.0 || !value.is_finite() {
        return format!("{value}");
    }
    significant(value, 3)
}

/// `0.905` → `90.5 %`.
pub fn percent(fraction: f64) -> String {
    format!("{} %", sig3(fraction * 100.0))
}

/// Scales a non-zero finite value into 1 ≤ |x| < 1000 (after rounding to `digits`, so 999.96 m
/// is written 1, not 1000 m) with its SI prefix.
fn engineering(value: f64, digits: i32) -> (f64, &'static str) {
    let magnitude = value.abs();
    for &(exponent, prefix) in &PREFIXES {
        let scale = 10f64.powi(exponent);
        if round_significant(magnitude / scale, digits) >= 1.0 {
            return (value / scale, prefix);
        }
    }
    (value / 1e-15, "f")
}

fn round_significant(value: f64, digits: i32) -> f64 {
    if value == 0.0 || !value.is_finite() {
        return value;
    }
    let places = digits - 1 - value.abs().log10().floor() as i32;
    let factor = 10f64.powi(places.clamp(-300, 300));
    (value * factor).round() / factor
}

/// `digits` significant figures, trailing zeros trimmed, no exponent for everyday magnitudes.
fn significant(value: f64, digits: i32) -> String {
    if value == 0.0 {
        return "0".to_string();
    }
    let magnitude = value.abs();
    if !(1e-4..1e9).contains(&magnitude) {
        return format!("{value:.3e}");
    }
    let rounded = round_significant(value, digits);
    let decimals = (digits - 1 - rounded.abs().log10().floor() as i32).clamp(0, 12) as usize;
    // The figures count from the rounded value (9.9996 has three decimals fewer than 10.00);
    // the digits themselves are the value's own.
    let text = format!("{value:.decimals$}");
    let text = if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    };
    if text == "-0" {
        "0".to_string()
    } else {
        text
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn messages_take_three_figures() {
        assert_eq!(format_si(4700.0, "Ω"), "4.7 kΩ");
        assert_eq!(format_si(0.0123, "A"), "12.3 mA");
        assert_eq!(format_si(12.0, "V"), "12 V");
        assert_eq!(format_si(2.5e-7, "A"), "250 nA");
        assert_eq!(format_si(-1.7, "V"), "-1.7 V");
        assert_eq!(format_si(999.9, "Hz"), "1 kHz");
        assert_eq!(format_si(0.0, "V"), "0 V");
        assert_eq!(percent(0.905), "90.5 %");
        assert_eq!(sig3(2.345_678), "2.35");
    }

    #[test]
    fn tables_take_four_figures() {
        assert_eq!(format_quantity(3.3, "V", false), "3.3 V");
        assert_eq!(format_quantity(0.0022, "H", false), "2.2 mH");
        assert_eq!(format_quantity(4700.0, "Ω", false), "4.7 kΩ");
        assert_eq!(format_quantity(4700.0, "Ω", true), "4.7 kohm");
        assert_eq!(format_quantity(1e-5, "F", false), "10 µF");
        assert_eq!(format_quantity(1e-5, "F", true), "10 uF");
        assert_eq!(format_quantity(0.99996, "V", false), "1 V");
        assert_eq!(format_quantity(-0.012, "A", false), "-12 mA");
        assert_eq!(format_quantity(1234.5678, "Hz", false), "1.235 kHz");
        assert_eq!(format_quantity(0.0, "W", false), "0 W");
    }
}
