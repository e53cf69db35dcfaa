//! Odd encodings and odd shapes of file through the program: each gives a precise finding
//! (rule and line) or a clean pass, never a crash, a silent loss of the deck or a flood.
//!
//! Most decks below carry one deliberate mistake, a net `b` wired to one pin on line 3, so a
//! `net-dangling` warning at line 3 proves the deck was read line by line as written.

use assert_cmd::Command;
use std::time::Duration;

fn kickback() -> Command {
    let mut cmd = Command::cargo_bin("kickback").expect("binary built");
    for name in ["NO_COLOR", "COLUMNS", "TERM", "LC_ALL", "LC_CTYPE", "LANG"] {
        cmd.env_remove(name);
    }
    cmd.timeout(Duration::from_secs(60));
    cmd
}

/// Writes `bytes` as `name` and checks it in the lines format: (exit code, stdout, stderr).
fn check(name: &str, bytes: &[u8], extra: &[&str]) -> (i32, String, String) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join(name);
    std::fs::write(&path, bytes).unwrap();
    let output = kickback()
        .current_dir(dir.path())
        .args(["check", "--format", "lines"])
        .args(extra)
        .arg(name)
        .output()
        .unwrap();
    (
        output.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&output.stdout).into_owned(),
        String::from_utf8_lossy(&output.stderr).into_owned(),
    )
}

/// Exactly one finding: the dangling net `b` at line 3, exit 0 (a warning).
fn assert_dangling_b_at_line_3(name: &str, bytes: &[u8]) {
    let (code, out, err) = check(name, bytes, &[]);
    assert_eq!(code, 0, "{out}{err}");
    assert_eq!(
        out.lines().collect::<Vec<_>>(),
        [format!(
            "{name}:3:1: warning net-dangling — net `b` has a single connection (R1 node 2): \
             nothing else is wired to it"
        )],
        "{err}"
    );
}

fn assert_clean(name: &str, bytes: &[u8]) {
    let (code, out, err) = check(name, bytes, &[]);
    assert_eq!((code, out.as_str(), err.as_str()), (0, "", ""), "{name}");
}

const DECK: &str = "Doser channel\nV1 a 0 12\nR1 a b 1k\n.end\n";

#[test]
fn plain_deck() {
    assert_dangling_b_at_line_3("plain.cir", DECK.as_bytes());
}

#[test]
fn line_ends_crlf_lone_cr_and_no_final_newline() {
    assert_dangling_b_at_line_3("crlf.cir", DECK.replace('\n', "\r\n").as_bytes());
    // Old Mac line ends: each CR ends a line (before, the whole deck was one title line).
    assert_dangling_b_at_line_3("cr.cir", DECK.replace('\n', "\r").as_bytes());
    assert_dangling_b_at_line_3("last.cir", b"Doser channel\nV1 a 0 12\nR1 a b 1k");
}

#[test]
fn tabs_separate_fields() {
    assert_dangling_b_at_line_3("tabs.cir", DECK.replace(' ', "\t").as_bytes());
}

#[test]
fn byte_order_marks() {
    let mut utf8 = vec![0xEF, 0xBB, 0xBF];
    utf8.extend_from_slice(DECK.as_bytes());
    assert_dangling_b_at_line_3("bom8.cir", &utf8);
    let mut le = vec![0xFF, 0xFE];
    le.extend(DECK.encode_utf16().flat_map(u16::to_le_bytes));
    assert_dangling_b_at_line_3("bom16le.cir", &le);
    let mut be = vec![0xFE, 0xFF];
    be.extend(DECK.encode_utf16().flat_map(u16::to_be_bytes));
    assert_dangling_b_at_line_3("bom16be.cir", &be);
}

#[test]
fn bytes_that_are_not_utf8_are_read_as_latin1() {
    // 0xB5 is the micro sign of the legacy 8-bit encodings; 0xFF and 0xE9 are just letters.
    let deck = b"Doser \xff\nV1 a 0 12\nR1 a b 1k\nC1 a 0 10\xb5\n.end\n";
    assert_dangling_b_at_line_3("latin1.cir", deck);
}

#[test]
fn a_nul_byte_is_part_of_a_word_and_shows_in_the_finding_at_its_line() {
    // NUL does not separate fields, so `a<NUL>` is a net of its own, wired once.
    let (code, out, _) = check("nul.cir", b"Doser\nV1 a 0 12\nR1 a\x00 0 1k\n.end\n", &[]);
    assert_eq!(code, 0, "{out}");
    assert!(
        out.contains("nul.cir:3:1: warning net-dangling — net `a\u{0}` has a single connection"),
        "{out}"
    );
}

#[test]
fn empty_comment_only_and_title_only_files_pass_cleanly() {
    assert_clean("empty.cir", b"");
    assert_clean("comments.cir", b"* a comment\n* and another\n");
    assert_clean("title.cir", b"Doser channel, nothing drawn yet");
    assert_clean("title_nl.cir", b"Doser channel\n");
}

#[test]
fn a_million_character_comment_line_passes() {
    let long = "x".repeat(1_000_000);
    let deck = format!("Doser channel\n* {long}\nV1 a 0 12 ; {long}\nR1 a b 1k\n.end\n");
    let (code, out, err) = check("comment.cir", deck.as_bytes(), &[]);
    assert_eq!(code, 0, "{err}");
    assert!(
        out.starts_with("comment.cir:4:1: warning net-dangling"),
        "{out}"
    );
    assert_eq!(out.lines().count(), 1);
}

#[test]
fn a_million_character_statement_is_read_or_skipped_by_the_statement_limit() {
    // 1,000,003 bytes of code: under the default limit of 1 MiB, so it is read.
    let sum = format!("{{1{}}}", "+0".repeat(499_999));
    let deck = format!("Doser channel\nV1 a 0 12\nR1 a b {sum}\n.end\n");
    assert_dangling_b_at_line_3("sum.cir", deck.as_bytes());
    // Over a lower limit, it is skipped with a finding that names the limit and its flag.
    let (code, out, _) = check(
        "sum.cir",
        deck.as_bytes(),
        &["--max-statement-bytes", "65536"],
    );
    assert_eq!(code, 1, "{out}");
    assert!(
        out.contains(
            "sum.cir:3:1: error syntax — this statement is 1000008 bytes long with its \
             continuation lines, above the statement length limit of 65536 bytes \
             (--max-statement-bytes); it is skipped"
        ),
        "{out}"
    );
    // And two million characters are over the default.
    let deck = format!(
        "Doser channel\nV1 a 0 12\nR1 a b {{1{}}}\n.end\n",
        "+0".repeat(1_000_000)
    );
    let (code, out, _) = check("big.cir", deck.as_bytes(), &[]);
    assert_eq!(code, 1, "{out}");
    assert!(
        out.contains("big.cir:3:1: error syntax — this statement is"),
        "{out}"
    );
    assert!(out.contains("limit of 1048576 bytes"), "{out}");
}

#[test]
fn very_many_continuation_lines() {
    let mut deck = String::from("Doser channel\nV1 a 0 12\nR1 a\n");
    for _ in 0..100_000 {
        deck.push_str("+\n");
    }
    deck.push_str("+ b 1k\n.end\n");
    assert_dangling_b_at_line_3("cont.cir", deck.as_bytes());
    // Joined, they count against the statement limit like one long line.
    let mut deck = String::from("Doser channel\nV1 a 0 12\nR1 a b 1k\n");
    for i in 0..50_000 {
        deck.push_str(&format!("+ tc{i}=0\n"));
    }
    let (code, out, _) = check(
        "long.cir",
        deck.as_bytes(),
        &["--max-statement-bytes", "1000"],
    );
    assert_eq!(code, 1, "{out}");
    assert!(
        out.contains("long.cir:3:1: error syntax — this statement is"),
        "{out}"
    );
}
