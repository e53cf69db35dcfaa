//! Numbers in messages: SI prefixes, a few significant figures, the unit.

/// `0.0123` A → `12.3 mA`; `4700` Ω → `4.7 kΩ`.
pub fn format_si(value: f64, unit: &str) -> String {
    if !value.is_finite() {
        return format!("{value} {unit}");
    }
    if value == 0.0 {
        return format!("0 {unit}");
    }
    const PREFIXES: [(f64, &str); 9] = [
        (1e9, "G"),
        (1e6, "M"),
        (1e3, "k"),
        (1.0, ""),
        (1e-3, "m"),
        (1e-6, "µ"),
        (1e-9, "n"),
        (1e-12, "p"),
        (1e-15, "f"),
    ];
    let magnitude = value.abs();
    let (scale, prefix) = PREFIXES
        .iter()
        .copied()
        .find(|(s, _)| magnitude >= *s * 0.9995)
        .unwrap_or((1e-15, "f"));
    format!("{} {prefix}{unit}", sig3(value / scale))
}

/// Three significant figures, trailing zeros dropped.
pub fn sig3(v: f64) -> String {
    if v == 0.0 || !v.is_finite() {
        return format!("{v}");
    }
    let digits = (2 - v.abs().log10().floor() as i32).clamp(0, 6) as usize;
    let s = format!("{v:.digits$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// `0.905` → `90.5 %`.
pub fn percent(fraction: f64) -> String {
    format!("{} %", sig3(fraction * 100.0))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn prefixes() {
        assert_eq!(format_si(4700.0, "Ω"), "4.7 kΩ");
        assert_eq!(format_si(0.0123, "A"), "12.3 mA");
        assert_eq!(format_si(12.0, "V"), "12 V");
        assert_eq!(format_si(2.5e-7, "A"), "250 nA");
        assert_eq!(format_si(-1.7, "V"), "-1.7 V");
        assert_eq!(format_si(999.9, "Hz"), "1 kHz");
        assert_eq!(percent(0.905), "90.5 %");
    }
}
