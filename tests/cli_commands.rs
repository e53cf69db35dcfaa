//! The program end to end: every command, the formats, the exit codes, folder discovery and
//! determinism. The pre-commit hook has its own file.

use assert_cmd::Command;
use predicates::prelude::*;
use std::fs;
use std::path::{Path, PathBuf};

fn testdata(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("testdata/cli")
        .join(name)
}

/// The program with an environment that does not vary between machines: no colour hints, no
/// locale, no width.
fn kickback() -> Command {
    let mut cmd = Command::cargo_bin("kickback").expect("binary built");
    for name in ["NO_COLOR", "COLUMNS", "TERM", "LC_ALL", "LC_CTYPE", "LANG"] {
        cmd.env_remove(name);
    }
    cmd
}

fn stdout_of(cmd: &mut Command) -> String {
    String::from_utf8(cmd.output().expect("runs").stdout).expect("utf-8")
}

// ---- arguments and exit codes --------------------------------------------------------------

#[test]
fn help_and_version_exit_0() {
    kickback()
        .arg("--help")
        .assert()
        .code(0)
        .stdout(predicate::str::contains("Usage: kickback"));
    kickback()
        .args(["check", "--help"])
        .assert()
        .code(0)
        .stdout(predicate::str::contains("PATHS"));
    kickback()
        .arg("--version")
        .assert()
        .code(0)
        .stdout(format!("kickback {}\n", env!("CARGO_PKG_VERSION")));
}

#[test]
fn bad_arguments_exit_2() {
    kickback().assert().code(2);
    kickback().arg("frobnicate").assert().code(2);
    kickback()
        .args(["check", "--no-such-flag"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("--no-such-flag"));
    kickback()
        .args(["--format", "xml", "check"])
        .assert()
        .code(2);
    kickback()
        .args(["--fail-on", "errors", "check"])
        .assert()
        .code(2);
    kickback()
        .args(["--max-elements", "many", "check"])
        .assert()
        .code(2);
    kickback()
        .args(["--color", "sometimes", "rules"])
        .assert()
        .code(2);
}

#[test]
fn missing_file_exits_2_naming_it() {
    kickback()
        .args(["check", "no-such-board.cir"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("no-such-board.cir"))
        .stdout(predicate::str::contains(
            "1 file could not be checked: no-such-board.cir",
        ));
}

#[test]
fn clean_netlist_exits_0() {
    kickback()
        .args(["check", "--color", "never"])
        .arg(testdata("divider.cir"))
        .assert()
        .code(0)
        .stdout("no findings in 1 file\n")
        .stderr("");
}

#[test]
fn one_bad_file_does_not_stop_the_others() {
    let dir = tempfile::tempdir().expect("tempdir");
    fs::copy(testdata("divider.cir"), dir.path().join("good.cir")).expect("copy");
    let output = kickback()
        .current_dir(dir.path())
        .args(["check", "--format", "json", "good.cir", "gone.cir"])
        .output()
        .expect("runs");
    assert_eq!(output.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(stderr.contains("gone.cir"), "{stderr}");
    assert!(!stderr.contains("good.cir"), "{stderr}");
    let value: serde_json::Value = serde_json::from_slice(&output.stdout).expect("json");
    assert_eq!(value["summary"]["files"], 2);
    assert_eq!(value["failures"][0]["file"], "gone.cir");
    assert_eq!(value["failures"].as_array().map(Vec::len), Some(1));
}

#[test]
fn unreadable_config_exits_2() {
    kickback()
        .args(["check", "--config", "no-such-kickback.toml"])
        .arg(testdata("divider.cir"))
        .assert()
        .code(2)
        .stderr(predicate::str::contains("no-such-kickback.toml"));
}

#[test]
fn limits_and_fail_on_flags_are_accepted() {
    kickback()
        .args([
            "check",
            "--fail-on",
            "warning",
            "--max-elements",
            "1000",
            "--allow-outside-includes",
            "--quiet",
        ])
        .arg(testdata("divider.cir"))
        .assert()
        .code(0);
    // Global flags may also stand before the command.
    kickback()
        .args(["--format", "lines", "--fail-on", "warning", "check"])
        .arg(testdata("divider.cir"))
        .assert()
        .code(0)
        .stdout("")
        .stderr("");
}

#[test]
fn the_earlier_spellings_still_work_with_a_notice() {
    // `--format short` and `--deny warnings` were the names of the previous release.
    let output = kickback()
        .args(["check", "--format", "short", "--deny", "warnings"])
        .arg(testdata("divider.cir"))
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(0));
    assert!(output.stdout.is_empty());
    let err = String::from_utf8_lossy(&output.stderr);
    assert_eq!(err.lines().count(), 2, "{err}");
    assert!(
        err.contains("notice: `--format short` is now `--format lines`"),
        "{err}"
    );
    assert!(
        err.contains("notice: `--deny warnings` is now `--fail-on warning`"),
        "{err}"
    );
    let output = kickback()
        .args(["check", "--format", "human", "--color", "never"])
        .arg(testdata("divider.cir"))
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(0));
    let err = String::from_utf8_lossy(&output.stderr);
    assert!(
        err.contains("notice: `--format human` is now `--format cards`"),
        "{err}"
    );
    // The old names are hidden from the help, which shows only the current ones.
    let help = stdout_of(kickback().args(["check", "--help"]));
    assert!(help.contains("cards") && help.contains("fail-on"), "{help}");
    assert!(
        !help.contains("human") && !help.contains("--deny"),
        "{help}"
    );
}

// ---- formats ---------------------------------------------------------------------------------

#[test]
fn every_format_of_a_clean_check() {
    let divider = testdata("divider.cir");
    kickback()
        .args(["check", "--format", "lines"])
        .arg(&divider)
        .assert()
        .code(0)
        .stdout("");
    let json: serde_json::Value = serde_json::from_str(&stdout_of(
        kickback().args(["check", "--format", "json"]).arg(&divider),
    ))
    .expect("json");
    assert_eq!(json["version"], 1);
    assert_eq!(json["diagnostics"], serde_json::json!([]));
    assert_eq!(json["summary"]["files"], 1);
    let sarif: serde_json::Value = serde_json::from_str(&stdout_of(
        kickback()
            .args(["check", "--format", "sarif"])
            .arg(&divider),
    ))
    .expect("json");
    assert_eq!(sarif["version"], "2.1.0");
    assert_eq!(
        sarif["runs"][0]["invocations"][0]["executionSuccessful"],
        true
    );
    let schema: serde_json::Value = serde_json::from_str(
        &fs::read_to_string(
            Path::new(env!("CARGO_MANIFEST_DIR")).join("testdata/sarif-schema-2.1.0.json"),
        )
        .expect("schema"),
    )
    .expect("schema json");
    let validator = jsonschema::validator_for(&schema).expect("schema compiles");
    assert!(validator.is_valid(&sarif));
}

#[test]
fn colour_only_when_asked() {
    let divider = testdata("divider.cir");
    let always = stdout_of(
        kickback()
            .args(["check", "--color", "always"])
            .arg(&divider),
    );
    assert!(always.contains('\u{1b}'), "{always:?}");
    // Not a terminal: auto means no colour.
    let auto = stdout_of(kickback().arg("check").arg(&divider));
    assert!(!auto.contains('\u{1b}'));
    let never = stdout_of(
        kickback()
            .env("NO_COLOR", "1")
            .args(["check", "--color", "never"])
            .arg(&divider),
    );
    assert!(!never.contains('\u{1b}'));
}

// ---- discovery and determinism ---------------------------------------------------------------

/// A folder that is not a git checkout, with netlists at several depths, a nested
/// `.gitignore`, files of other kinds and a hidden folder.
fn project() -> tempfile::TempDir {
    let dir = tempfile::tempdir().expect("tempdir");
    let root = dir.path();
    let divider = fs::read_to_string(testdata("divider.cir")).expect("divider");
    for name in [
        "top.cir",
        "drive/pump.SP",
        "drive/stirrer.spice",
        "drive/valve.net",
        "drive/old/valve-v1.ckt",
        "drive/sim/out.cir",
        "drive/scratch.cir",
        "notes/readme.txt",
        ".cache/hidden.cir",
    ] {
        let path = root.join(name);
        fs::create_dir_all(path.parent().expect("parent")).expect("mkdir");
        fs::write(&path, &divider).expect("write");
    }
    // The nested rules: a folder and one file in the subfolder; `!` re-includes below.
    fs::write(
        root.join("drive/.gitignore"),
        "sim/\nscratch.cir\nold/*\n!old/valve-v1.ckt\n",
    )
    .expect("gitignore");
    dir
}

#[test]
fn folders_are_searched_honouring_nested_gitignore() {
    let dir = project();
    let found = kickback::app::discover::discover(&[dir.path().to_path_buf()]);
    let names: Vec<String> = found
        .files
        .iter()
        .map(|p| {
            p.strip_prefix(dir.path())
                .expect("inside")
                .to_string_lossy()
                .replace('\\', "/")
        })
        .collect();
    assert_eq!(
        names,
        [
            "drive/old/valve-v1.ckt",
            "drive/pump.SP",
            "drive/stirrer.spice",
            "drive/valve.net",
            "top.cir"
        ]
    );
    // Through the program, from inside the folder, with the default path `.`.
    let output = kickback()
        .current_dir(dir.path())
        .args(["check", "--format", "json"])
        .output()
        .expect("runs");
    assert_eq!(output.status.code(), Some(0));
    let value: serde_json::Value = serde_json::from_slice(&output.stdout).expect("json");
    assert_eq!(value["summary"]["files"], 5);
}

#[test]
fn files_named_explicitly_are_always_checked() {
    let dir = project();
    kickback()
        .current_dir(dir.path())
        .args(["check", "drive/scratch.cir", "notes/readme.txt"])
        .assert()
        .code(0)
        .stdout(predicate::str::ends_with("no findings in 2 files\n"));
}

#[test]
fn a_folder_without_netlists_fails() {
    let dir = tempfile::tempdir().expect("tempdir");
    kickback()
        .current_dir(dir.path())
        .arg("check")
        .assert()
        .code(2)
        .stderr(predicate::str::contains("no netlists"));
}

#[test]
fn same_input_same_bytes() {
    let dir = project();
    for format in ["cards", "lines", "json", "sarif"] {
        let run = || {
            kickback()
                .current_dir(dir.path())
                .args(["check", "--format", format, "."])
                .output()
                .expect("runs")
        };
        let (first, second) = (run(), run());
        assert_eq!(first.stdout, second.stdout, "{format}");
        assert_eq!(first.stderr, second.stderr, "{format}");
    }
}

// ---- the other commands ----------------------------------------------------------------------

#[test]
fn report_prints_the_facts_in_both_formats() {
    kickback()
        .args(["report"])
        .arg(testdata("divider.cir"))
        .assert()
        .code(0)
        .stdout(predicate::str::contains("Supplies"));
    let output = kickback()
        .args(["report", "--format", "json"])
        .arg(testdata("divider.cir"))
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(0));
    let json: serde_json::Value = serde_json::from_slice(&output.stdout).unwrap();
    assert_eq!(json["version"], 1);
    for key in ["supplies", "timers", "switches", "loads"] {
        assert!(json[key].is_array(), "{key} missing");
    }
    kickback()
        .args(["report", "--format", "sarif"])
        .arg(testdata("divider.cir"))
        .assert()
        .code(2)
        .stderr(predicate::str::contains(
            "report prints --format cards (tables for a person), json, html",
        ));
    kickback()
        .args(["report", "no-such-board.cir"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("no-such-board.cir"));
    kickback().arg("report").assert().code(2);
}

#[test]
fn rules_lists_the_registry() {
    let text = stdout_of(kickback().arg("rules"));
    let lines: Vec<&str> = text.lines().collect();
    assert!(lines[0].starts_with("RULE"));
    assert_eq!(lines.len(), kickback::rules::REGISTRY.len() + 1);
    for (line, rule) in lines[1..].iter().zip(kickback::rules::REGISTRY) {
        assert!(line.starts_with(rule.id));
        assert!(line.contains(rule.default_severity.as_str()));
        assert!(line.ends_with(rule.summary));
    }
}

#[test]
fn explain_prints_the_page_and_the_caution() {
    let page = kickback::rules::find("syntax").expect("syntax rule").page;
    kickback()
        .args(["explain", "SYNTAX"])
        .assert()
        .code(0)
        .stdout(predicate::str::starts_with(page.trim_end()))
        .stdout(predicate::str::contains("not a sign-off"));
}

#[test]
fn explain_of_an_unknown_rule_suggests_the_closest() {
    kickback()
        .args(["explain", "syntx"])
        .assert()
        .code(2)
        .stdout("")
        .stderr(predicate::str::contains("did you mean syntax?"));
    kickback()
        .args(["explain", "qqqqqq"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("kickback rules"));
}

#[test]
fn init_writes_a_starter_once() {
    let dir = tempfile::tempdir().expect("tempdir");
    kickback()
        .args(["init", "--path"])
        .arg(dir.path())
        .assert()
        .code(0)
        .stdout(predicate::str::contains("kickback.toml"));
    let target = dir.path().join("kickback.toml");
    let written = fs::read_to_string(&target).expect("written");
    assert_eq!(written, kickback::config::starter_toml());
    assert!(kickback::config::Config::load(&target).is_ok());
    // Only the file itself is left: no temporary file.
    let entries: Vec<_> = fs::read_dir(dir.path()).expect("dir").collect();
    assert_eq!(entries.len(), 1);
    // A second run refuses and leaves the file alone.
    fs::write(&target, "# mine\n").expect("edit");
    kickback()
        .args(["init", "--path"])
        .arg(dir.path())
        .assert()
        .code(2)
        .stderr(predicate::str::contains("already exists"));
    assert_eq!(fs::read_to_string(&target).expect("kept"), "# mine\n");
    // The current folder by default.
    let here = tempfile::tempdir().expect("tempdir");
    kickback()
        .current_dir(here.path())
        .arg("init")
        .assert()
        .code(0);
    assert!(here.path().join("kickback.toml").is_file());
    // A folder that is not there.
    kickback()
        .args(["init", "--path"])
        .arg(dir.path().join("missing"))
        .assert()
        .code(2);
}

#[test]
fn completions_for_each_shell() {
    for shell in ["bash", "zsh", "fish", "powershell", "elvish"] {
        let text = stdout_of(kickback().args(["completions", shell]));
        assert!(text.contains("kickback"), "{shell}");
    }
    kickback().args(["completions", "tcsh"]).assert().code(2);
}

// ---- with findings from the pipeline ---------------------------------------------------------

#[test]
fn error_finding_exits_1_in_every_format() {
    let broken = testdata("syntax-error.cir");
    kickback().arg("check").arg(&broken).assert().code(1);
    let lines = stdout_of(kickback().args(["check", "--format", "lines"]).arg(&broken));
    assert!(lines.contains("syntax-error.cir:3:"), "{lines}");
    assert!(lines.contains(": error syntax — "), "{lines}");
    let json: serde_json::Value = serde_json::from_str(&stdout_of(
        kickback().args(["check", "--format", "json"]).arg(&broken),
    ))
    .expect("json");
    assert_eq!(json["diagnostics"][0]["rule"], "syntax");
    assert_eq!(json["diagnostics"][0]["line"], 3);
}

#[test]
fn cards_output_of_a_finding_through_the_program() {
    let dir = tempfile::tempdir().expect("tempdir");
    fs::copy(testdata("syntax-error.cir"), dir.path().join("valve.cir")).expect("copy");
    let output = kickback()
        .current_dir(dir.path())
        .args(["check", "--color", "never", "valve.cir"])
        .output()
        .expect("runs");
    assert_eq!(output.status.code(), Some(1));
    insta::assert_snapshot!(String::from_utf8_lossy(&output.stdout));
}
