//! A bug met on one netlist (a panic anywhere in its pipeline) is that file's internal-error
//! failure: named, exit code 2, no Rust panic text, and every other file still checked.
//!
//! The panic is forced through `kickback::check::fault`, which only a program embedding the
//! library can set: the shipped binary never calls it, so no netlist, configuration, argument
//! or environment variable can trigger it in production. These tests embed the library and
//! run the program in-process, or re-run this test binary as a child for the quiet-hook check.

use kickback::app::{self, Environment, EXIT_FAILURE};
use std::fs;
use std::path::Path;

const CHILD: &str = "KICKBACK_ROBUST_PANIC_CHILD";

fn explodes(path: &Path) -> bool {
    path.file_name().is_some_and(|n| n == "boom.cir")
}

/// a.cir and c.cir each have a dangling net (a warning); boom.cir panics.
fn folder() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    for name in ["a.cir", "boom.cir", "c.cir"] {
        fs::write(dir.path().join(name), "Board\nV1 a 0 5\nR1 a b 1k\n.end\n").unwrap();
    }
    dir
}

fn run(args: &[&str]) -> (u8, String, String) {
    kickback::check::fault::panic_when(explodes);
    app::install_quiet_panic_hook();
    let mut out = Vec::new();
    let mut err = Vec::new();
    let env = Environment::default();
    let code = app::run(args.iter().copied(), &env, &mut out, &mut err);
    (
        code,
        String::from_utf8(out).unwrap(),
        String::from_utf8(err).unwrap(),
    )
}

#[test]
fn a_panic_fails_its_file_only() {
    let dir = folder();
    let path = dir.path().to_str().unwrap();
    let (code, out, err) = run(&["kickback", "check", "--format", "lines", path]);
    assert_eq!(code, EXIT_FAILURE, "{out}{err}");
    let boom = dir.path().join("boom.cir");
    let expected = format!(
        "internal error while checking {}: fault injected",
        boom.display()
    );
    assert!(err.contains(&expected), "{err}");
    assert!(err.contains("please report it with the netlist"), "{err}");
    assert!(err.contains("check.rs:"), "the place is named: {err}");
    for other in ["a.cir", "c.cir"] {
        assert!(
            out.contains(&format!("{other}:3:1: warning net-dangling")),
            "{other} is still checked: {out}"
        );
    }
    assert!(!out.contains("boom.cir:3"), "{out}");

    let (code, out, _) = run(&["kickback", "check", "--format", "json", path]);
    assert_eq!(code, EXIT_FAILURE);
    let json: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(json["diagnostics"].as_array().unwrap().len(), 2, "{out}");
    assert!(out.contains("internal error while checking"), "{out}");
}

#[test]
fn a_panic_while_reporting_is_an_internal_error() {
    let dir = folder();
    let boom = dir.path().join("boom.cir");
    let (code, _, err) = run(&["kickback", "report", boom.to_str().unwrap()]);
    assert_eq!(code, EXIT_FAILURE);
    assert!(err.contains("internal error while checking"), "{err}");
}

/// With the program's own panic hook, nothing of Rust's panic report reaches stderr. Runs
/// this binary again as a child that installs the hook and runs the program for real.
#[test]
fn no_panic_text_reaches_the_user() {
    if std::env::var_os(CHILD).is_some() {
        return;
    }
    let dir = folder();
    let output = std::process::Command::new(std::env::current_exe().unwrap())
        .args([
            "child_runs_the_program",
            "--exact",
            "--nocapture",
            "--test-threads=1",
        ])
        .env(CHILD, dir.path())
        .env("RUST_BACKTRACE", "1")
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&output.stderr);
    let stdout = String::from_utf8_lossy(&output.stdout);
    assert_eq!(
        output.status.code(),
        Some(i32::from(EXIT_FAILURE)),
        "{stdout}{stderr}"
    );
    assert!(stderr.contains("internal error while checking"), "{stderr}");
    for word in ["panicked", "backtrace", "RUST_BACKTRACE"] {
        assert!(!stderr.contains(word), "{word} in {stderr}");
    }
    assert!(stdout.contains("warning net-dangling"), "{stdout}");
}

/// Not a test of its own: the child half of [`no_panic_text_reaches_the_user`].
#[test]
fn child_runs_the_program() {
    let Some(dir) = std::env::var_os(CHILD) else {
        return;
    };
    kickback::check::fault::panic_when(explodes);
    app::install_quiet_panic_hook();
    let args = [
        "kickback".into(),
        "check".into(),
        "--format".into(),
        "lines".into(),
        dir,
    ];
    let stdout = std::io::stdout();
    let stderr = std::io::stderr();
    let code = app::run(
        args,
        &Environment::default(),
        &mut stdout.lock(),
        &mut stderr.lock(),
    );
    std::process::exit(i32::from(code));
}
