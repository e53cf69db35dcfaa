//! Every input that once crashed a fuzz target (`testdata/robust/crashers/`) now goes through
//! the library and the program without a panic, an internal error or a hang.

use kickback::check::{check_file, CheckError, CheckOptions};
use kickback::config::Config;
use kickback::netlist::evaluate_value;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

fn crashers(folder: &str, extension: &str) -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("testdata/robust/crashers")
        .join(folder);
    let mut files: Vec<PathBuf> = std::fs::read_dir(dir)
        .map(|entries| {
            entries
                .filter_map(|e| e.ok().map(|e| e.path()))
                .filter(|p| p.extension().is_some_and(|e| e == extension))
                .collect()
        })
        .unwrap_or_default();
    files.sort();
    files
}

fn netlists() -> Vec<PathBuf> {
    let mut all = crashers("netlist_parse", "cir");
    all.extend(crashers("check_pipeline", "cir"));
    all
}

#[test]
fn crashing_netlists_are_checked() {
    let all = netlists();
    assert!(!all.is_empty());
    for path in all {
        let started = Instant::now();
        let report = check_file(&path, &CheckOptions::default());
        if let Some(CheckError::Internal { message, .. }) = &report.failure {
            panic!("{}: {message}", path.display());
        }
        assert!(
            started.elapsed() < Duration::from_secs(30),
            "{}",
            path.display()
        );
    }
}

#[test]
fn crashing_netlists_through_the_program() {
    for path in netlists() {
        let output = assert_cmd::Command::cargo_bin("kickback")
            .unwrap()
            .args(["check", "--format", "json"])
            .arg(&path)
            .timeout(Duration::from_secs(60))
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert!(
            matches!(output.status.code(), Some(0..=1)),
            "{}: {:?} {stderr}",
            path.display(),
            output.status
        );
        assert!(serde_json::from_slice::<serde_json::Value>(&output.stdout).is_ok());
    }
}

#[test]
fn crashing_values_are_evaluated() {
    for path in crashers("value_expr", "txt") {
        let text = String::from_utf8_lossy(&std::fs::read(&path).unwrap()).into_owned();
        if let Ok(kickback::netlist::Num::Known(v)) = evaluate_value(&text) {
            assert!(v.is_finite(), "{}", path.display());
        }
    }
}

#[test]
fn crashing_configurations_are_read() {
    for path in crashers("config_parse", "toml") {
        let text = String::from_utf8_lossy(&std::fs::read(&path).unwrap()).into_owned();
        if let Ok(config) = Config::parse(&text, &path) {
            let _ = kickback::check::validate_rule_ids(&config);
        }
    }
}
