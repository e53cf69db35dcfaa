//! SPICE number syntax against its reference: the scale factors of the Berkeley SPICE3 user's
//! manual ("T=1e12 G=1e9 MEG=1e6 K=1e3 MIL=25.4e-6 M=1e-3 U=1e-6 N=1e-9 P=1e-12 F=1e-15";
//! letters that are not scale factors, and letters after one, are ignored).

use kickback::netlist::{parse_str, Num};

fn read(value: &str) -> Option<Num> {
    let deck = format!("value table\nR1 a 0 {value}\n.end\n");
    let (flat, findings, _) = parse_str("table.cir", &deck);
    assert!(findings.is_empty(), "{value}: {findings:?}");
    flat.elements.first().and_then(|e| e.value)
}

#[test]
fn spice3_manual_scale_factors() {
    // Source: Berkeley SPICE3 user's manual, section on element values (scale factors).
    let table: &[(&str, f64)] = &[
        ("1M", 1e-3),
        ("1MEG", 1e6),
        ("1MIL", 25.4e-6),
        ("10uF", 1e-5),
        ("4.7kOhm", 4700.0),
        ("1e3", 1e3),
        (".5", 0.5),
        ("-2.2n", -2.2e-9),
        ("1T", 1e12),
        ("1G", 1e9),
        ("1K", 1e3),
        ("1U", 1e-6),
        ("1N", 1e-9),
        ("1P", 1e-12),
        ("1F", 1e-15),
        ("1meg", 1e6),
        ("1m", 1e-3),
        ("1Meg", 1e6),
        ("1mil", 25.4e-6),
        ("1.5mH", 1.5e-3),
        ("1E-3", 1e-3),
        ("1.e2", 100.0),
        ("+3", 3.0),
        ("2.5e+2k", 250e3),
        ("1volt", 1.0),
        ("10Hz", 10.0),
    ];
    for &(text, want) in table {
        assert_eq!(read(text), Some(Num::Known(want)), "{text}");
    }
}

#[test]
fn micro_sign_is_micro() {
    assert_eq!(read("2200µ"), Some(Num::Known(2200e-6)));
    assert_eq!(read("3μ"), Some(Num::Known(3e-6)));
}

#[test]
fn values_that_do_not_fit_are_findings_not_infinities() {
    let (flat, findings, _) = parse_str("big.cir", "big\nR1 a 0 1e999\n.end\n");
    assert_eq!(findings.len(), 1);
    assert_eq!(findings[0].rule, "parameter-invalid");
    assert_eq!(flat.elements[0].value, Some(Num::Varies));
}
