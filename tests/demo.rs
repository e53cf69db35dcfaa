//! The demo board shows what the tool is for, and its fixed twin checks clean.

use kickback::check::{check_file, CheckOptions};
use kickback::diagnostic::Severity;
use std::path::Path;

fn rules_at(file: &str, severity: Severity) -> Vec<String> {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("testdata/demo")
        .join(file);
    let report = check_file(&path, &CheckOptions::default());
    assert!(report.failure.is_none(), "{:?}", report.failure);
    report
        .findings
        .iter()
        .filter(|f| f.severity == severity)
        .map(|f| f.rule.clone())
        .collect()
}

#[test]
fn demo_board_shows_its_mistakes() {
    let errors = rules_at("doser.cir", Severity::Error);
    for rule in [
        "discharge-unprotected",
        "gate-underdrive",
        "base-underdrive",
        "flyback-missing",
        "resistor-overpower",
    ] {
        assert!(
            errors.iter().any(|r| r == rule),
            "{rule} missing: {errors:?}"
        );
    }
    let warnings = rules_at("doser.cir", Severity::Warning);
    for rule in ["shoot-through", "load-overvoltage", "pot-wiper-overcurrent"] {
        assert!(
            warnings.iter().any(|r| r == rule),
            "{rule} missing: {warnings:?}"
        );
    }
}

#[test]
fn fixed_board_has_no_errors_and_no_warnings() {
    assert_eq!(
        rules_at("doser-fixed.cir", Severity::Error),
        Vec::<String>::new()
    );
    assert_eq!(
        rules_at("doser-fixed.cir", Severity::Warning),
        Vec::<String>::new()
    );
}
