//! Each limit through the program: configurable by its flag, and named (with the flag) in the
//! message it gives when it is hit.

use assert_cmd::Command;
use std::fmt::Write;
use std::fs;
use std::time::Duration;

fn kickback() -> Command {
    let mut cmd = Command::cargo_bin("kickback").expect("binary built");
    for name in ["NO_COLOR", "COLUMNS", "TERM", "LC_ALL", "LC_CTYPE", "LANG"] {
        cmd.env_remove(name);
    }
    cmd.timeout(Duration::from_secs(60));
    cmd
}

fn run(dir: &tempfile::TempDir, args: &[&str]) -> (i32, String, String) {
    let output = kickback()
        .current_dir(dir.path())
        .args(["check", "--format", "lines"])
        .args(args)
        .output()
        .unwrap();
    (
        output.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&output.stdout).into_owned(),
        String::from_utf8_lossy(&output.stderr).into_owned(),
    )
}

/// Subcircuits `s0` … `s{levels}`, each instancing the next.
fn nested_instances(levels: usize) -> String {
    let mut deck = String::from("Nested channels\nV1 a 0 12\n");
    for i in 0..levels {
        let _ = writeln!(
            deck,
            ".subckt s{i} p q\nX1 p q s{}\nR1 p q 10k\n.ends",
            i + 1
        );
    }
    let _ = writeln!(
        deck,
        ".subckt s{levels} p q\nR1 p q 10k\n.ends\nX0 a 0 s0\n.end"
    );
    deck
}

#[test]
fn instance_nesting_follows_max_depth() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("deep.cir"), nested_instances(10)).unwrap();
    let (code, out, _) = run(&dir, &["deep.cir"]);
    assert_eq!(code, 0, "10 levels are within the default of 64: {out}");
    let (code, out, _) = run(&dir, &["--max-depth", "4", "deep.cir"]);
    assert_eq!(code, 1, "{out}");
    assert!(
        out.contains("nests subcircuit instances more than 4 levels deep (--max-depth)"),
        "{out}"
    );
}

#[test]
fn definition_and_include_nesting_follow_max_depth() {
    let dir = tempfile::tempdir().unwrap();
    let mut deck = String::from("Nested definitions\n");
    for i in 0..6 {
        let _ = writeln!(deck, ".subckt d{i} p q\nR{i} p q 1k");
    }
    deck.push_str(&".ends\n".repeat(6));
    fs::write(dir.path().join("defs.cir"), deck).unwrap();
    let (code, out, _) = run(&dir, &["--max-depth", "3", "defs.cir"]);
    assert_eq!(code, 1, "{out}");
    assert!(
        out.contains(
            "subcircuit definitions are nested more than 3 levels deep here (--max-depth)"
        ),
        "{out}"
    );

    for i in 0..5 {
        fs::write(
            dir.path().join(format!("n{i}.lib")),
            format!(".include n{}.lib\n", i + 1),
        )
        .unwrap();
    }
    fs::write(dir.path().join("n5.lib"), "* the bottom\n").unwrap();
    fs::write(
        dir.path().join("inc.cir"),
        "Nested includes\n.include n0.lib\n.end\n",
    )
    .unwrap();
    let (code, out, _) = run(&dir, &["--max-depth", "3", "inc.cir"]);
    assert_eq!(code, 1, "{out}");
    assert!(
        out.contains("error include-refused — `n3.lib` is not read: includes are nested more than 3 levels deep (--max-depth)"),
        "{out}"
    );
}

#[test]
fn element_count_follows_max_elements() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("wide.cir"), nested_instances(30)).unwrap();
    let (code, _, err) = run(&dir, &["--max-elements", "20", "wide.cir"]);
    assert_eq!(code, 2);
    assert!(
        err.contains("above the limit of 20 (--max-elements)"),
        "{err}"
    );
}

#[test]
fn file_size_follows_max_file_size_for_netlists_and_includes() {
    let dir = tempfile::tempdir().unwrap();
    let padding = "* the channel's parts\n".repeat(100);
    fs::write(
        dir.path().join("parts.lib"),
        format!("{padding}.model dfw D\n"),
    )
    .unwrap();
    fs::write(
        dir.path().join("top.cir"),
        "Top\n.include parts.lib\nV1 a 0 12\nR1 a 0 1k\n.end\n",
    )
    .unwrap();
    let (code, out, _) = run(&dir, &["--max-file-size", "1000", "top.cir"]);
    assert_eq!(code, 1, "{out}");
    assert!(
        out.contains(
            "top.cir:2:1: error include-refused — `parts.lib` is 2213 bytes, above the file size limit of 1000 bytes (--max-file-size), and is not read"
        ),
        "{out}"
    );
    let (code, _, err) = run(&dir, &["--max-file-size", "40", "top.cir"]);
    assert_eq!(code, 2);
    assert!(
        err.contains(
            "top.cir is 48 bytes, above the file size limit of 40 bytes (--max-file-size)"
        ),
        "{err}"
    );
}

#[test]
fn statement_length_counts_in_includes_too() {
    let dir = tempfile::tempdir().unwrap();
    let long = format!(".model dfw D (IS=1e-14 {})\n", "N=1 ".repeat(500));
    fs::write(dir.path().join("parts.lib"), long).unwrap();
    fs::write(
        dir.path().join("top.cir"),
        "Top\n.include parts.lib\nV1 a 0 12\nD1 a 0 dfw\n.end\n",
    )
    .unwrap();
    let (_, out, _) = run(&dir, &["--max-statement-bytes", "1000", "top.cir"]);
    assert!(
        out.contains("parts.lib:1:1: error syntax — this statement is 2024 bytes long"),
        "{out}"
    );
    assert!(out.contains("(--max-statement-bytes)"), "{out}");
}

#[test]
fn one_file_included_over_and_over_meets_the_element_limit_before_memory_does() {
    // Each include of the same file walks its statements again: 2,000 includes of a 2,000-line
    // library would hold four million statements from a 34 kB netlist.
    let dir = tempfile::tempdir().unwrap();
    let library: String = (0..2000).map(|i| format!("R{i} a{i} 0 1k\n")).collect();
    fs::write(dir.path().join("bank.lib"), library).unwrap();
    let top = format!("Top\n{}.end\n", ".include bank.lib\n".repeat(2000));
    fs::write(dir.path().join("top.cir"), top).unwrap();
    let started = std::time::Instant::now();
    let (code, _, err) = run(&dir, &["--max-elements", "100000", "top.cir"]);
    assert_eq!(code, 2);
    assert!(
        err.contains("the includes would hold 102000 statements or more (a file included over and over counts each time), above the element limit of 100000 (--max-elements)"),
        "{err}"
    );
    assert!(started.elapsed() < Duration::from_secs(30));
}
