//! `[rules]` levels apply whatever the letter case of the rule ID in `kickback.toml`.

use kickback::check::{check_file, CheckOptions};
use std::path::Path;

fn audible_fixture() -> std::path::PathBuf {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("testdata/rules/pwm-audible");
    let mut files: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| {
            p.file_name()
                .is_some_and(|n| n.to_string_lossy().starts_with("fires"))
        })
        .collect();
    files.sort();
    files.remove(0)
}

fn audible_count(config_text: Option<&str>) -> (usize, usize) {
    let netlist = audible_fixture();
    let dir = tempfile::tempdir().unwrap();
    let copy = dir.path().join("board.cir");
    std::fs::copy(&netlist, &copy).unwrap();
    let mut options = CheckOptions::default();
    if let Some(text) = config_text {
        let path = dir.path().join("kickback.toml");
        std::fs::write(&path, text).unwrap();
        options.config_path = Some(path);
    }
    let report = check_file(&copy, &options);
    assert!(report.failure.is_none(), "{:?}", report.failure);
    let count = report
        .findings
        .iter()
        .filter(|f| f.rule == "pwm-audible")
        .count();
    (count, report.suppressed)
}

#[test]
fn a_rule_turned_off_in_mixed_case_is_off() {
    let (before, _) = audible_count(None);
    assert!(before > 0, "the fixture fires pwm-audible");
    let (after, suppressed) = audible_count(Some("[rules]\nPWM-Audible = \"off\"\n"));
    assert_eq!(after, 0);
    assert!(suppressed >= before);
}

#[test]
fn a_level_set_in_mixed_case_is_applied() {
    let report_level = |text: &str| {
        let netlist = audible_fixture();
        let dir = tempfile::tempdir().unwrap();
        let copy = dir.path().join("board.cir");
        std::fs::copy(&netlist, &copy).unwrap();
        let path = dir.path().join("kickback.toml");
        std::fs::write(&path, text).unwrap();
        let options = CheckOptions {
            config_path: Some(path),
            ..CheckOptions::default()
        };
        check_file(&copy, &options)
            .findings
            .iter()
            .filter(|f| f.rule == "pwm-audible")
            .map(|f| f.severity.as_str())
            .collect::<Vec<_>>()
    };
    let levels = report_level("[rules]\nPwm-Audible = \"warning\"\n");
    assert!(!levels.is_empty());
    assert!(levels.iter().all(|l| *l == "warning"), "{levels:?}");
}
