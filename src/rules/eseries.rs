//! IEC 60063 preferred numbers, for fixes that name a resistor value a buyer can order.

/// E12 series (IEC 60063), one decade.
pub const E12: [f64; 12] = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2];

/// E24 series (IEC 60063), one decade.
pub const E24: [f64; 24] = [
    1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6,
    6.2, 6.8, 7.5, 8.2, 9.1,
];

/// The smallest value of `series` at or above `value` (for resistors that must limit a current).
pub fn round_up(value: f64, series: &[f64]) -> Option<f64> {
    if !value.is_finite() || value <= 0.0 || series.is_empty() {
        return None;
    }
    let decade = 10f64.powf(value.log10().floor());
    for d in [decade, decade * 10.0] {
        for &m in series {
            let candidate = snap(m * d);
            // A relative tolerance keeps 4.7k from rounding up to 5.6k through float noise.
            if candidate >= value * (1.0 - 1e-9) {
                return Some(candidate);
            }
        }
    }
    None
}

/// The largest value of `series` at or below `value`.
pub fn round_down(value: f64, series: &[f64]) -> Option<f64> {
    if !value.is_finite() || value <= 0.0 || series.is_empty() {
        return None;
    }
    let decade = 10f64.powf(value.log10().floor());
    for d in [decade, decade / 10.0] {
        for &m in series.iter().rev() {
            let candidate = snap(m * d);
            if candidate <= value * (1.0 + 1e-9) {
                return Some(candidate);
            }
        }
    }
    None
}

/// Removes float noise from `m × 10^k` (so 4.7 × 1000 prints as 4700, not 4700.000000001).
fn snap(v: f64) -> f64 {
    let exponent = v.log10().floor() as i32 - 2;
    if exponent < 0 {
        let inverse = 10f64.powi(-exponent);
        (v * inverse).round() / inverse
    } else {
        let scale = 10f64.powi(exponent);
        (v / scale).round() * scale
    }
}

/// Formats ohms the way a parts list does: `100 Ω`, `4.7 kΩ`, `1 MΩ`.
pub fn ohms(v: f64) -> String {
    crate::rules::units::format_si(v, "Ω")
}

#[cfg(test)]
mod tests {
    use super::*;

    // Values from the IEC 60063 E12 and E24 tables.
    #[test]
    fn rounds_up_to_e12() {
        assert_eq!(round_up(95.0, &E12), Some(100.0));
        assert_eq!(round_up(100.0, &E12), Some(100.0));
        assert_eq!(round_up(101.0, &E12), Some(120.0));
        assert_eq!(round_up(4700.0, &E12), Some(4700.0));
        assert_eq!(round_up(830.0, &E12), Some(1000.0));
        assert_eq!(round_up(0.47, &E12), Some(0.47));
    }

    #[test]
    fn rounds_up_to_e24() {
        assert_eq!(round_up(105.0, &E24), Some(110.0));
        assert_eq!(round_up(9050.0, &E24), Some(9100.0));
        assert_eq!(round_up(9200.0, &E24), Some(10000.0));
    }

    #[test]
    fn rounds_down() {
        assert_eq!(round_down(1000.0, &E12), Some(1000.0));
        assert_eq!(round_down(999.0, &E12), Some(820.0));
        assert_eq!(round_down(150.0, &E24), Some(150.0));
    }

    #[test]
    fn refuses_nonsense() {
        assert_eq!(round_up(0.0, &E12), None);
        assert_eq!(round_up(f64::NAN, &E12), None);
        assert_eq!(round_up(-5.0, &E12), None);
    }
}
