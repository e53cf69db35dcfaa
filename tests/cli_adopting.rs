//! Adopting kickback on designs that already exist, end to end through the program: a CI gate
//! that checked nothing fails, baselines, rule selection for one run, `rules --format json`,
//! a netlist on stdin, and `report` refusing what it cannot do.

use assert_cmd::Command;
use predicates::prelude::*;
use std::fs;
use std::path::{Path, PathBuf};

fn repo(path: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(path)
}

/// The program with an environment that does not vary between machines.
fn kickback() -> Command {
    let mut cmd = Command::cargo_bin("kickback").expect("binary built");
    for name in ["NO_COLOR", "COLUMNS", "TERM", "LC_ALL", "LC_CTYPE", "LANG"] {
        cmd.env_remove(name);
    }
    cmd
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

/// A scratch project: the flyback fixtures' part data and the valve channel that has no
/// freewheel diode, as `hw/valve.cir`.
fn project() -> tempfile::TempDir {
    let dir = tempfile::tempdir().expect("tempdir");
    let hw = dir.path().join("hw");
    fs::create_dir(&hw).unwrap();
    let fixtures = repo("testdata/rules/flyback-missing");
    fs::copy(fixtures.join("kickback.toml"), hw.join("kickback.toml")).unwrap();
    fs::copy(fixtures.join("fires-valve-npn.cir"), hw.join("valve.cir")).unwrap();
    dir
}

// ---- a gate that checked nothing does not pass ------------------------------------------------

#[test]
fn a_folder_with_no_netlist_exits_2() {
    let dir = tempfile::tempdir().expect("tempdir");
    fs::create_dir(dir.path().join("hw")).unwrap();
    fs::write(dir.path().join("hw/notes.txt"), "no netlists here\n").unwrap();
    kickback()
        .current_dir(dir.path())
        .args(["check", "hw"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("no netlists (*.cir"))
        .stderr(predicate::str::contains(
            "in hw; name the files, or check the path",
        ))
        .stdout("no netlist was checked\n");
}

#[test]
fn a_missing_file_is_never_counted_as_clean() {
    let output = kickback()
        .args(["check", "--color", "never", "no-such-board.cir"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(2));
    assert_eq!(
        text(&output.stdout),
        "no netlist was checked; 1 file could not be checked: no-such-board.cir\n"
    );
}

#[test]
fn report_takes_one_file_and_says_so_for_a_folder() {
    kickback()
        .args(["report"])
        .arg(repo("testdata/cli"))
        .assert()
        .code(2)
        .stderr(predicate::str::contains("report takes one netlist file"))
        .stderr(predicate::str::contains("is a folder"));
}

#[test]
fn report_on_a_deck_with_unreadable_lines_says_so_and_fails() {
    kickback()
        .args(["report"])
        .arg(repo("testdata/cli/syntax-error.cir"))
        .assert()
        .code(1)
        .stdout(predicate::str::contains("Supplies"))
        .stderr(predicate::str::contains("1 statement of"))
        .stderr(predicate::str::contains("could not be read"))
        .stderr(predicate::str::contains("syntax-error.cir:3:"));
}

// ---- baselines ---------------------------------------------------------------------------------

#[test]
fn a_baseline_keeps_old_findings_out_and_fails_on_new_ones() {
    let dir = project();
    let root = dir.path();
    // Without a baseline the valve channel fails.
    kickback()
        .current_dir(root)
        .args(["check", "hw"])
        .assert()
        .code(1);

    let output = kickback()
        .current_dir(root)
        .args(["baseline", "hw"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(0), "{}", text(&output.stderr));
    assert!(text(&output.stdout).starts_with("wrote kickback-baseline.toml with "));
    let written = fs::read_to_string(root.join("kickback-baseline.toml")).unwrap();
    assert!(written.contains("version = 1"), "{written}");
    assert!(written.contains("file = \"hw/valve.cir\""), "{written}");
    assert!(written.contains("rule = \"flyback-missing\""), "{written}");
    assert!(written.contains("element = \"XV\""), "{written}");
    assert!(
        !written.contains("line ="),
        "keyed without lines: {written}"
    );

    // With it, the same findings pass, and the summary says how many were known.
    let output = kickback()
        .current_dir(root)
        .args([
            "check",
            "--color",
            "never",
            "--baseline",
            "kickback-baseline.toml",
            "hw",
        ])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(0), "{}", text(&output.stdout));
    assert!(
        text(&output.stdout).contains("known from the baseline"),
        "{}",
        text(&output.stdout)
    );

    // Lines moving and unrelated edits do not disturb it.
    let valve = fs::read_to_string(root.join("hw/valve.cir")).unwrap();
    let (title, rest) = valve.split_once('\n').unwrap();
    let moved =
        format!("{title}\n* bench notes\n* wired on the second rack\nRSPARE v12 0 100k\n{rest}");
    fs::write(root.join("hw/valve.cir"), moved).unwrap();
    kickback()
        .current_dir(root)
        .args(["check", "--baseline", "kickback-baseline.toml", "hw"])
        .assert()
        .code(0);

    // A new board with the same fault is new: it fails, and only it is shown.
    fs::write(root.join("hw/second.cir"), &valve).unwrap();
    let output = kickback()
        .current_dir(root)
        .args([
            "check",
            "--format",
            "lines",
            "--baseline",
            "kickback-baseline.toml",
            "hw",
        ])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    let lines = text(&output.stdout);
    assert!(lines.contains("hw/second.cir:"), "{lines}");
    assert!(!lines.contains("hw/valve.cir:"), "{lines}");
}

#[test]
fn a_baseline_names_entries_that_no_longer_occur() {
    let dir = project();
    let root = dir.path();
    kickback()
        .current_dir(root)
        .args(["baseline", "--out", "known.toml", "hw"])
        .assert()
        .code(0);
    // The valve gets its diode: the baseline's entry is stale, and the check passes.
    let fixed = fs::read_to_string(root.join("hw/valve.cir"))
        .unwrap()
        .replace("CB    v12 0 100u", "CB    v12 0 100u\nDFW   c v12 DSW");
    fs::write(root.join("hw/valve.cir"), fixed).unwrap();
    kickback()
        .current_dir(root)
        .args(["check", "--baseline", "known.toml", "hw/valve.cir"])
        .assert()
        .code(0)
        .stderr(predicate::str::contains(
            "the baseline lists 1 flyback-missing finding on xv in hw/valve.cir that no longer occurs",
        ));
    // A netlist the run did not check (a hook passes only the changed files) is never stale.
    fs::write(
        root.join("hw/other.cir"),
        "Other\nV1 a 0 DC 1\nR1 a 0 1k\n.end\n",
    )
    .unwrap();
    kickback()
        .current_dir(root)
        .args(["check", "--baseline", "known.toml", "hw/other.cir"])
        .assert()
        .code(0)
        .stderr(predicate::str::contains("no longer").not());
}

#[test]
fn a_baseline_that_cannot_be_read_stops_the_run() {
    let dir = project();
    fs::write(dir.path().join("bad.toml"), "version = 7\n").unwrap();
    kickback()
        .current_dir(dir.path())
        .args(["check", "--baseline", "bad.toml", "hw"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("version 7"));
    kickback()
        .current_dir(dir.path())
        .args(["check", "--baseline", "absent.toml", "hw"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains(
            "cannot use the baseline absent.toml",
        ));
}

// ---- rule selection for one run ------------------------------------------------------------

#[test]
fn only_and_skip_select_rules_for_one_run() {
    let demo = repo("testdata/demo/doser.cir");
    let all = text(
        &kickback()
            .args(["check", "--format", "lines"])
            .arg(&demo)
            .output()
            .unwrap()
            .stdout,
    );
    assert!(all.contains(" flyback-missing "), "{all}");
    assert!(all.contains(" gate-underdrive "), "{all}");

    let only = text(
        &kickback()
            .args(["check", "--format", "lines", "--only", "flyback-missing"])
            .arg(&demo)
            .output()
            .unwrap()
            .stdout,
    );
    assert!(only.contains(" flyback-missing "), "{only}");
    assert!(!only.contains(" gate-underdrive "), "{only}");

    let skipped = text(
        &kickback()
            .args([
                "check",
                "--format",
                "lines",
                "--skip",
                "Flyback-Missing,gate-underdrive",
            ])
            .arg(&demo)
            .output()
            .unwrap()
            .stdout,
    );
    assert!(!skipped.contains(" flyback-missing "), "{skipped}");
    assert!(!skipped.contains(" gate-underdrive "), "{skipped}");
    assert!(!skipped.is_empty(), "other rules still run");

    kickback()
        .args(["check", "--only", "flyback-misssing"])
        .arg(&demo)
        .assert()
        .code(2)
        .stderr(predicate::str::contains("did you mean flyback-missing"));
}

#[test]
fn rules_prints_json_with_the_level_in_effect() {
    let dir = tempfile::tempdir().expect("tempdir");
    fs::write(
        dir.path().join("kickback.toml"),
        "[rules]\nGate-Underdrive = \"off\"\npwm-audible = \"warning\"\n",
    )
    .unwrap();
    let output = kickback()
        .current_dir(dir.path())
        .args(["rules", "--format", "json", "--skip", "shoot-through"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(0), "{}", text(&output.stderr));
    let json: serde_json::Value = serde_json::from_slice(&output.stdout).unwrap();
    assert_eq!(json["version"], 1);
    let rules = json["rules"].as_array().unwrap();
    let find = |id: &str| {
        rules
            .iter()
            .find(|r| r["id"] == id)
            .unwrap_or_else(|| panic!("{id} listed"))
            .clone()
    };
    assert_eq!(find("gate-underdrive")["in_effect"], "off");
    assert_eq!(find("pwm-audible")["in_effect"], "warning");
    assert_eq!(find("shoot-through")["in_effect"], "off");
    assert_eq!(find("flyback-missing")["in_effect"], "as-graded");
    assert_eq!(find("flyback-missing")["default"], "error");
    assert!(find("flyback-missing")["gives"].is_array());
    assert!(json["configs"][0]
        .as_str()
        .is_some_and(|p| p.ends_with("kickback.toml")));

    // The table says the same.
    let table = text(
        &kickback()
            .current_dir(dir.path())
            .args(["rules"])
            .output()
            .unwrap()
            .stdout,
    );
    let line = table
        .lines()
        .find(|l| l.starts_with("gate-underdrive "))
        .expect("listed");
    assert!(line.contains(" off "), "{line}");

    kickback()
        .args(["rules", "--format", "sarif"])
        .assert()
        .code(2);
}

#[test]
fn a_config_rule_level_applies_whatever_its_case() {
    let dir = tempfile::tempdir().expect("tempdir");
    fs::copy(
        repo("testdata/demo/doser.cir"),
        dir.path().join("doser.cir"),
    )
    .unwrap();
    let mut config = fs::read_to_string(repo("testdata/demo/kickback.toml")).unwrap();
    config.push_str("\n[rules]\nGate-Underdrive = \"off\"\n");
    fs::write(dir.path().join("kickback.toml"), config).unwrap();
    let lines = text(
        &kickback()
            .current_dir(dir.path())
            .args(["check", "--format", "lines", "doser.cir"])
            .output()
            .unwrap()
            .stdout,
    );
    assert!(!lines.contains("gate-underdrive"), "{lines}");
}

// ---- a netlist on stdin --------------------------------------------------------------------

#[test]
fn stdin_is_checked_under_the_name_given() {
    let dir = project();
    let valve = fs::read_to_string(dir.path().join("hw/valve.cir")).unwrap();
    // The name places the netlist in hw/, so hw/kickback.toml describes its parts.
    let output = kickback()
        .current_dir(dir.path())
        .args(["check", "--format", "lines", "--name", "hw/piped.cir", "-"])
        .write_stdin(valve.clone())
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1), "{}", text(&output.stderr));
    let lines = text(&output.stdout);
    assert!(lines.starts_with("hw/piped.cir:"), "{lines}");
    assert!(lines.contains(" flyback-missing "), "{lines}");

    // Without a name it is stdin.cir; `-` does not mix with other paths.
    let output = kickback()
        .current_dir(dir.path())
        .args(["check", "--format", "lines", "-"])
        .write_stdin("Clean\nV1 a 0 DC 5\nR1 a 0 1k\n.end\n")
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(0), "{}", text(&output.stdout));
    kickback()
        .current_dir(dir.path())
        .args(["check", "-", "hw"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("cannot be checked together"));
}

// ---- configuration values carry their units ------------------------------------------------

#[test]
fn a_value_in_the_wrong_unit_is_an_error_with_its_line() {
    let dir = project();
    let config = dir.path().join("hw/kickback.toml");
    let edited = fs::read_to_string(&config).unwrap().replace(
        "rated_voltage = 12\nresistance = 24",
        "rated_voltage = \"6 A\"\nresistance = 24",
    );
    fs::write(&config, edited).unwrap();
    let output = kickback()
        .current_dir(dir.path())
        .args(["check", "hw"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(2));
    let err = text(&output.stderr);
    assert!(
        err.contains("`parts.VALVE12.rated_voltage`: \"6 A\" is in A, and `rated_voltage` is in V"),
        "{err}"
    );
    // The line, and the value underlined under it.
    assert!(err.contains("| rated_voltage = \"6 A\"\n"), "{err}");
    assert!(err.contains("|                 ^^^^^"), "{err}");

    // A unit that agrees is read.
    let edited = fs::read_to_string(&config)
        .unwrap()
        .replace("rated_voltage = \"6 A\"", "rated_voltage = \"12 V\"")
        .replace("inductance = \"45m\"", "inductance = \"45 mH\"");
    fs::write(&config, edited).unwrap();
    kickback()
        .current_dir(dir.path())
        .args(["check", "hw"])
        .assert()
        .code(1)
        .stdout(predicate::str::contains("flyback-missing"));
}

// ---- layered configuration -----------------------------------------------------------------

#[test]
fn configurations_layer_from_the_project_root_down_and_under_config() {
    let dir = tempfile::tempdir().expect("tempdir");
    let outer = dir.path();
    // Above the project: a file that would silence the rule, never read past `root = true`.
    fs::write(
        outer.join("kickback.toml"),
        "[rules]\nflyback-missing = \"off\"\n",
    )
    .unwrap();
    let project = outer.join("bench");
    let hw = project.join("hw");
    fs::create_dir_all(&hw).unwrap();
    let fixtures = repo("testdata/rules/flyback-missing");
    let parts = fs::read_to_string(fixtures.join("kickback.toml")).unwrap();
    fs::write(
        project.join("kickback.toml"),
        format!("root = true\n\n{parts}"),
    )
    .unwrap();
    fs::copy(fixtures.join("fires-valve-npn.cir"), hw.join("valve.cir")).unwrap();

    // Only the project's file: the parts are known and the rule fires as an error.
    let output = kickback()
        .current_dir(&project)
        .args(["check", "--color", "never", "hw"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1), "{}", text(&output.stderr));
    let out = text(&output.stdout);
    assert!(out.contains("flyback-missing"), "{out}");
    assert!(out.contains("configuration: kickback.toml\n"), "{out}");

    // A file in the subfolder is laid over it: its level wins, the parts still come from above.
    fs::write(
        hw.join("kickback.toml"),
        "[rules]\nFlyback-Missing = \"warning\"\n",
    )
    .unwrap();
    let output = kickback()
        .current_dir(&project)
        .args(["check", "--color", "never", "hw"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(0), "{}", text(&output.stderr));
    let out = text(&output.stdout);
    assert!(out.contains("warning"), "{out}");
    assert!(!out.contains("model-missing"), "{out}");
    assert!(
        out.contains("configuration: hw/kickback.toml, kickback.toml\n"),
        "{out}"
    );

    // `--config` is laid over both.
    fs::write(
        project.join("ci.toml"),
        "[rules]\nflyback-missing = \"off\"\n",
    )
    .unwrap();
    let output = kickback()
        .current_dir(&project)
        .args(["check", "--color", "never", "--config", "ci.toml", "hw"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(0), "{}", text(&output.stderr));
    let out = text(&output.stdout);
    assert!(!out.contains("flyback-missing"), "{out}");
    assert!(out.contains("ci.toml"), "{out}");
    assert!(
        !out.contains("model-missing"),
        "the parts still come from below: {out}"
    );

    // An unknown rule in a layer above is reported at its own file.
    fs::write(
        project.join("kickback.toml"),
        format!("root = true\n\n{parts}\n[rules]\nflyback-mising = \"off\"\n"),
    )
    .unwrap();
    kickback()
        .current_dir(&project)
        .args(["check", "hw"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("bench/kickback.toml:"))
        .stderr(predicate::str::contains("did you mean flyback-missing"));
}

// ---- summaries for big runs ----------------------------------------------------------------

#[test]
fn counts_by_rule_and_file_come_before_the_summary() {
    let dir = project();
    let valve = fs::read_to_string(dir.path().join("hw/valve.cir")).unwrap();
    for i in 0..12 {
        fs::write(dir.path().join(format!("hw/copy{i:02}.cir")), &valve).unwrap();
    }
    let output = kickback()
        .current_dir(dir.path())
        .args(["check", "--color", "never", "--counts", "hw"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    let out = text(&output.stdout);
    let rule_header = out.find("RULE ").expect("a table by rule");
    let file_header = out.find("FILE ").expect("a table by file");
    let summary = out.rfind("in 13 files").expect("the summary");
    assert!(rule_header < file_header && file_header < summary, "{out}");
    let row = out[rule_header..]
        .lines()
        .find(|l| l.starts_with("flyback-missing "))
        .expect("a row for the rule");
    let cells: Vec<&str> = row.split_whitespace().collect();
    assert_eq!(cells[1], "13", "{row}");
    assert!(out[file_header..].contains("hw/copy00.cir "), "{out}");
    // A pipe never gets a progress line, however long the run.
    assert!(
        !text(&output.stderr).contains("netlists\r"),
        "{}",
        text(&output.stderr)
    );
    assert!(
        !text(&output.stderr).contains("checked "),
        "{}",
        text(&output.stderr)
    );
}

// ---- what could not be judged is named in the summary -----------------------------------------

#[test]
fn the_summary_names_what_could_not_be_judged() {
    // A sub-network that hangs on a switch the engine does not model: the finding is a note,
    // and the summary line says that part of the deck was not judged, so a run that judged
    // nothing never reads as a clean pass.
    let out = kickback()
        .arg("check")
        .arg(repo(
            "testdata/rules/solve-failed/fires-note-unmodelled-switch.cir",
        ))
        .output()
        .expect("runs");
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let stdout = text(&out.stdout);
    let last = stdout.lines().last().unwrap_or_default();
    assert!(
        last.contains("kickback could not judge 1 place (solve-failed 1)"),
        "{stdout}"
    );
}

// ---- a reference of every part kind and its keys ----------------------------------------------

#[test]
fn parts_lists_every_kind_and_every_key_with_its_default() {
    use kickback::vocabulary::{ratings, Kind};
    let output = kickback()
        .arg("parts")
        .assert()
        .code(0)
        .get_output()
        .clone();
    let shown = text(&output.stdout);
    for kind in Kind::CONFIGURABLE {
        assert!(
            shown.contains(&format!("\n{kind}   pins in package order:")),
            "{kind} is missing:\n{shown}"
        );
    }
    for key in ratings::RATING_NAMES.iter().chain(ratings::FLAG_RATINGS) {
        assert!(
            shown.contains(&format!("\n  {key} ")),
            "{key} is missing:\n{shown}"
        );
    }
    // The defaults a check applies, with their sources (from src/circuit/defaults.rs).
    assert!(shown.contains("built-in default for timer-555 (from memory)"));
    assert!(shown.contains("built-in default for logic-level nmos"));
    assert!(shown.contains("√(power_rating/resistance)"));

    let output = kickback()
        .args(["parts", "--format", "json"])
        .assert()
        .code(0)
        .get_output()
        .clone();
    let doc: serde_json::Value = serde_json::from_slice(&output.stdout).expect("json");
    assert_eq!(doc["version"], 1);
    let kinds = doc["kinds"].as_array().expect("kinds");
    for kind in Kind::CONFIGURABLE {
        assert!(kinds.iter().any(|k| k["kind"] == kind.as_str()), "{kind}");
    }
    for key in ratings::RATING_NAMES.iter().chain(ratings::FLAG_RATINGS) {
        let found = kinds.iter().any(|k| {
            k["keys"]
                .as_array()
                .is_some_and(|keys| keys.iter().any(|e| e["key"] == *key))
        });
        assert!(found, "{key}");
    }
    // A bipolar 555's ladder: 5 kΩ, from memory (src/circuit/defaults.rs).
    let timer = kinds.iter().find(|k| k["kind"] == "timer-555").unwrap();
    let ladder = timer["keys"]
        .as_array()
        .unwrap()
        .iter()
        .find(|e| e["key"] == "ladder_resistance")
        .unwrap();
    assert_eq!(ladder["unit"], "Ω");
    assert_eq!(ladder["defaults"][0]["value"], 5000.0);
    assert_eq!(
        ladder["defaults"][0]["source"],
        "built-in default for timer-555 (from memory)"
    );
}

// ---- "6M" where mega was meant ----------------------------------------------------------------

#[test]
fn a_capital_m_where_mega_was_meant_is_a_warning_that_does_not_fail() {
    let dir = project();
    let toml = dir.path().join("hw/kickback.toml");
    let mut config = fs::read_to_string(&toml).unwrap();
    let line = config.lines().count() + 4;
    config.push_str("\n[parts.SPARE555]\nkind = \"timer-555\"\nladder_resistance = \"6M\"\n");
    config.push_str("\n[parts.SPAREPOT]\nkind = \"potentiometer\"\nresistance = \"10MEG\"\n");
    config.push_str("\n[parts.SPARENMOS]\nkind = \"nmos\"\nrds_on = \"6M\"\n");
    fs::write(&toml, &config).unwrap();
    let output = kickback()
        .current_dir(dir.path())
        .args(["check", "hw/valve.cir", "--format", "lines"])
        .assert()
        // The valve's own finding decides the exit code, as without the warning.
        .code(1)
        .get_output()
        .clone();
    let stderr = text(&output.stderr);
    assert!(
        stderr.contains(&format!(
            "kickback.toml:{line}:1: `parts.SPARE555.ladder_resistance`: \"6M\" reads as 6 mΩ"
        )),
        "{stderr}"
    );
    assert!(stderr.contains("write \"6MEG\" for 6 MΩ"), "{stderr}");
    assert!(stderr.contains("ladder_resistance = \"6M\""), "{stderr}");
    // Mega written as MEG, and milli on a key where milli is usual, say nothing.
    assert_eq!(stderr.matches("warning:").count(), 1, "{stderr}");
    // The findings are what they were.
    assert!(text(&output.stdout).contains("flyback-missing"));
}

// ---- a library is checked as a library ----------------------------------------------------------

#[test]
fn a_library_named_directly_is_checked_for_its_definitions_only() {
    let dir = tempfile::tempdir().expect("tempdir");
    // A title-like first line, a subcircuit with a broken line, and a stray top-level resistor
    // whose second net nothing else touches (in a deck, a dangling net).
    fs::write(
        dir.path().join("bench.lib"),
        "Bench library of gate drivers\n\
         .subckt GD in g gnd\n\
         Rg in g\n\
         .ends GD\n\
         R9 a b 10k\n",
    )
    .unwrap();
    fs::write(
        dir.path().join("models.inc"),
        "* models only\n.model DSW D(IS=1e-6)\n.subckt PULL a b\nR1 a b 10k\n.ends PULL\n",
    )
    .unwrap();
    let output = kickback()
        .current_dir(dir.path())
        .args(["check", "bench.lib", "models.inc", "--format", "lines"])
        .assert()
        .code(1)
        .get_output()
        .clone();
    let stdout = text(&output.stdout);
    let lines: Vec<&str> = stdout.lines().collect();
    // The first line is a statement, as for the decks that include the file, and its
    // finding says why; the broken definition line is reported; nothing electrical is.
    assert_eq!(lines.len(), 2, "{stdout}");
    assert!(
        lines[0].starts_with("bench.lib:1:1: error syntax"),
        "{stdout}"
    );
    assert!(
        lines[0].contains("read its first line as a statement"),
        "{stdout}"
    );
    assert!(
        lines[1].starts_with("bench.lib:3:1: error syntax"),
        "{stdout}"
    );
    assert!(!stdout.contains("models.inc"), "{stdout}");
    assert!(!stdout.contains("dangling"), "{stdout}");
}

// ---- a compact mode for big runs ----------------------------------------------------------------

#[test]
fn compact_cards_give_a_short_block_per_finding_and_keep_the_summaries() {
    let demo = repo("testdata/demo");
    let full = kickback()
        .current_dir(&demo)
        .args(["check", "doser.cir", "--format", "lines"])
        .assert()
        .code(1)
        .get_output()
        .clone();
    let findings = text(&full.stdout).lines().count();
    let output = kickback()
        .current_dir(&demo)
        .args(["check", "doser.cir", "--compact", "--counts"])
        .assert()
        .code(1)
        .get_output()
        .clone();
    let shown = text(&output.stdout);
    // One heading per finding, each with its place; no netlist lines, no numbers table.
    let headings = shown
        .lines()
        .filter(|l| l.contains(" at doser.cir:"))
        .count();
    assert_eq!(headings, findings, "{shown}");
    assert!(!shown.contains('┃'), "{shown}");
    assert!(!shown.contains("number  "), "{shown}");
    assert!(shown.contains("  fix ▸ "), "{shown}");
    // The counts by rule and by file, and the summary line, stay.
    assert!(shown.contains("gate-underdrive"), "{shown}");
    assert!(
        shown.contains("5 errors, 6 warnings, 2 notes in 1 file"),
        "{shown}"
    );
    let full_cards = kickback()
        .current_dir(&demo)
        .args(["check", "doser.cir"])
        .assert()
        .get_output()
        .clone();
    assert!(shown.lines().count() * 2 < text(&full_cards.stdout).lines().count());
}

// ---- an honest summary ---------------------------------------------------------------------------

#[test]
fn the_summary_counts_assumed_ratings_leaves_run_choices_out_and_gives_the_baseline() {
    // A finding whose deciding rating is only a default becomes a note, and the summary counts
    // it among what kickback could not judge.
    let fixtures = repo("testdata/rules/discharge-unprotected");
    let output = kickback()
        .current_dir(&fixtures)
        .args(["check", "fires-100-ohm-series.cir"])
        .assert()
        .get_output()
        .clone();
    let shown = text(&output.stdout);
    assert!(
        shown.contains("kickback could not judge 1 place (rating assumed 1)"),
        "{shown}"
    );

    // `--skip` and `--only` choose what a run shows: nothing is counted as suppressed.
    let demo = repo("testdata/demo");
    let json = |args: &[&str]| -> serde_json::Value {
        let output = kickback()
            .current_dir(&demo)
            .args(["check", "doser.cir", "--format", "json"])
            .args(args)
            .output()
            .expect("run");
        serde_json::from_slice(&output.stdout).expect("json")
    };
    let all = json(&[]);
    let skipped = json(&["--skip", "gate-underdrive"]);
    assert_eq!(
        skipped["summary"]["suppressed"],
        all["summary"]["suppressed"]
    );
    assert_eq!(
        skipped["summary"]["errors"].as_u64().unwrap() + 1,
        all["summary"]["errors"].as_u64().unwrap()
    );
    let only = json(&["--only", "flyback-missing"]);
    assert_eq!(only["summary"]["suppressed"], all["summary"]["suppressed"]);
    // No baseline, no baseline count.
    assert!(all["summary"].get("baseline").is_none());

    // With a baseline, the JSON summary says how many findings it left out.
    let dir = project();
    kickback()
        .current_dir(dir.path())
        .args(["baseline", "hw", "--out", "known.toml"])
        .assert()
        .code(0);
    let output = kickback()
        .current_dir(dir.path())
        .args([
            "check",
            "hw",
            "--baseline",
            "known.toml",
            "--format",
            "json",
        ])
        .assert()
        .code(0)
        .get_output()
        .clone();
    let doc: serde_json::Value = serde_json::from_slice(&output.stdout).expect("json");
    assert!(doc["summary"]["baseline"].as_u64().unwrap() >= 1, "{doc}");
}
