//! Output stays drawable and bounded whatever the lines look like: a finding far to the right
//! of a very wide line is drawn as a window around it in every format, and the other boards of
//! the run keep their findings, their summary and the exit code.

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

const FORMATS: [&str; 4] = ["cards", "lines", "json", "sarif"];

/// A board whose dangling resistor stands after 16,384 tabs: column 16,385 is drawn with an
/// underline padded to 16,384 tab stops, past what the renderer's formatting width holds.
fn wide_board() -> String {
    format!(
        "Wide\nV1 vcc 0 12\n{}R1 vcc dangle 1k\n.end\n",
        "\t".repeat(16_384)
    )
}

#[test]
fn a_finding_past_column_65535_is_drawn_in_every_format() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("wide.cir"), wide_board()).unwrap();
    for format in FORMATS {
        let output = kickback()
            .current_dir(dir.path())
            .args(["check", "--format", format, "wide.cir"])
            .output()
            .unwrap();
        let stdout = String::from_utf8_lossy(&output.stdout);
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(0), "{format}: {stderr}");
        assert!(!stderr.contains("internal error"), "{format}: {stderr}");
        assert!(stdout.contains("dangle"), "{format}: {stdout}");
        // The snippet is a window: the output never holds the 16,384 tabs again.
        assert!(
            !stdout.contains(&"\t".repeat(1_000)) && !stdout.contains(&"\\t".repeat(1_000)),
            "{format} printed the whole wide line"
        );
    }
    let cards = kickback()
        .current_dir(dir.path())
        .args(["check", "wide.cir"])
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&cards.stdout);
    // The real line and column, and the text around the span.
    assert!(text.contains("wide.cir:3:16385"), "{text}");
    assert!(text.contains("R1 vcc dangle 1k"), "{text}");
    assert!(text.contains("1 warning in 1 file"), "{text}");
}

#[test]
fn a_wide_board_costs_the_other_boards_nothing() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("a-wide.cir"), wide_board()).unwrap();
    fs::write(
        dir.path().join("b-good.cir"),
        "Good\nV1 vcc 0 12\nR1 vcc 0 1k\nRX vcc typo 1k\n.end\n",
    )
    .unwrap();
    let mut codes = Vec::new();
    for format in FORMATS {
        let output = kickback()
            .current_dir(dir.path())
            .args(["check", "--format", format, "."])
            .output()
            .unwrap();
        let stdout = String::from_utf8_lossy(&output.stdout);
        assert!(stdout.contains("typo"), "{format}: {stdout}");
        assert!(stdout.contains("dangle"), "{format}: {stdout}");
        if format == "cards" {
            assert!(stdout.contains("2 warnings in 2 files"), "{stdout}");
        }
        codes.push(output.status.code());
    }
    assert!(codes.iter().all(|c| *c == codes[0]), "{codes:?}");
}

#[test]
fn many_findings_on_one_wide_line_each_print_a_window() {
    // Ten thousand ports on one instance line, each wired to its own resistor inside: every
    // outer net dangles, and each finding labels the instance line. Drawn whole, the line
    // would be printed ten thousand times (hundreds of megabytes from a 300 kB file).
    let nodes = 10_000;
    let mut deck = String::from("Many ports\nV1 vcc 0 12\nX1");
    for i in 0..nodes {
        deck.push_str(&format!(" n{i}"));
    }
    deck.push_str(" BANK\n.subckt BANK");
    for i in 0..nodes {
        deck.push_str(&format!(" p{i}"));
    }
    deck.push('\n');
    for i in 0..nodes {
        deck.push_str(&format!("R{i} p{i} 0 1k\n"));
    }
    deck.push_str(".ends\n.end\n");
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("many.cir"), &deck).unwrap();
    let output = kickback()
        .current_dir(dir.path())
        .args(["check", "many.cir"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(0));
    // About a kilobyte a finding, not the 60 kB line each time.
    let per_finding = output.stdout.len() / nodes;
    assert!(per_finding < 4_000, "{per_finding} bytes a finding");
}
