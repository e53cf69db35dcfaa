//! Nothing is lost in a run over many files: every readable netlist is checked and reported,
//! each file that cannot be checked is named with why, and suppressed findings are counted.

use assert_cmd::Command;
use std::fs;
use std::time::Duration;

fn kickback() -> Command {
    let mut cmd = Command::cargo_bin("kickback").expect("binary built");
    for name in ["NO_COLOR", "COLUMNS", "TERM", "LC_ALL", "LC_CTYPE", "LANG"] {
        cmd.env_remove(name);
    }
    cmd.timeout(Duration::from_secs(120));
    cmd
}

/// 18 netlists with one dangling net each (one of them suppressed), one over the file size
/// limit, one a link to nothing: 20 netlists. A folder named like a netlist is a folder.
fn board_folder() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    for i in 0..18 {
        let allow = if i == 7 {
            "* kickback waive net-dangling because test point for the scope probe\n"
        } else {
            ""
        };
        fs::write(
            dir.path().join(format!("ch{i:02}.cir")),
            format!("Channel {i}\nV1 a 0 12\n{allow}R1 a tp{i} 1k\n.end\n"),
        )
        .unwrap();
    }
    let padding = "* padding\n".repeat(1000);
    fs::write(
        dir.path().join("big.cir"),
        format!("Big\n{padding}V1 a 0 12\n.end\n"),
    )
    .unwrap();
    std::os::unix::fs::symlink(dir.path().join("deleted.cir"), dir.path().join("gone.cir"))
        .unwrap();
    fs::create_dir(dir.path().join("x.cir")).unwrap();
    dir
}

#[test]
fn every_file_is_checked_or_named_as_failed() {
    let dir = board_folder();
    let output = kickback()
        .current_dir(dir.path())
        .args(["check", "--max-file-size", "5000", "--format", "lines", "."])
        .output()
        .unwrap();
    let out = String::from_utf8_lossy(&output.stdout);
    let err = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(2), "{out}{err}");
    for i in (0..18).filter(|&i| i != 7) {
        assert!(
            out.contains(&format!(
                "ch{i:02}.cir:3:1: warning net-dangling — net `tp{i}`"
            )),
            "ch{i:02} is reported: {out}"
        );
    }
    assert!(!out.contains("ch07.cir"), "suppressed: {out}");
    assert!(
        err.contains(
            "big.cir is 10019 bytes, above the file size limit of 5000 bytes (--max-file-size)"
        ),
        "{err}"
    );
    assert!(err.contains("cannot read gone.cir: No such file"), "{err}");
    assert!(!err.contains("x.cir"), "a folder is not a netlist: {err}");

    let output = kickback()
        .current_dir(dir.path())
        .args(["check", "--max-file-size", "5000", "."])
        .output()
        .unwrap();
    let cards = String::from_utf8_lossy(&output.stdout);
    let summary = cards.lines().last().unwrap_or_default();
    assert_eq!(
        summary,
        "17 warnings in 18 files (1 suppressed); 2 files could not be checked: big.cir, gone.cir",
        "{cards}"
    );
}

#[test]
fn json_counts_suppressed_findings_and_lists_failures() {
    let dir = board_folder();
    let output = kickback()
        .current_dir(dir.path())
        .args(["check", "--max-file-size", "5000", "--format", "json", "."])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(2));
    let json: serde_json::Value = serde_json::from_slice(&output.stdout).unwrap();
    assert_eq!(json["summary"]["files"], 20);
    assert_eq!(json["summary"]["warnings"], 17);
    assert_eq!(json["summary"]["suppressed"], 1);
    assert_eq!(json["diagnostics"].as_array().unwrap().len(), 17);
    let failures: Vec<(String, String)> = json["failures"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| {
            (
                f["file"].as_str().unwrap().to_string(),
                f["message"].as_str().unwrap().to_string(),
            )
        })
        .collect();
    assert_eq!(failures.len(), 2, "{failures:?}");
    assert_eq!(failures[0].0, "big.cir");
    assert!(failures[0].1.contains("--max-file-size"), "{failures:?}");
    assert_eq!(failures[1].0, "gone.cir");
}

#[test]
fn a_huge_file_size_limit_is_refused_as_a_usage_error() {
    // Positions inside a file are 32-bit; a larger limit could not be honoured.
    kickback()
        .args(["check", "--max-file-size", "5000000000", "."])
        .assert()
        .code(2)
        .stderr(predicates::str::contains("--max-file-size"));
    kickback()
        .args(["check", "--max-depth", "0", "."])
        .assert()
        .code(2)
        .stderr(predicates::str::contains("--max-depth"));
}
