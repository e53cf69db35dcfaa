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

#[test]
fn a_tree_of_repeated_includes_is_refused_before_it_is_walked() {
    // Eleven files, each including the next five times: 5^11 statements (48 million) from
    // eleven tiny files. The count is known before anything is walked, so the refusal takes
    // no longer than reading the eleven files once.
    let dir = tempfile::tempdir().unwrap();
    for level in 1..=11 {
        let body = if level < 11 {
            format!(".include level{}.inc\n", level + 1).repeat(5)
        } else {
            (1..=5).map(|i| format!("R{i} a b 1k\n")).collect()
        };
        fs::write(dir.path().join(format!("level{level}.inc")), body).unwrap();
    }
    fs::write(
        dir.path().join("top.cir"),
        "Top\nV1 a 0 5\n.include level1.inc\n.end\n",
    )
    .unwrap();
    let started = std::time::Instant::now();
    let (code, _, err) = run(&dir, &["top.cir"]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("above the element limit of 1000000 (--max-elements)"),
        "{err}"
    );
    // Well under a second even unoptimised; it took 16 s when every include was resolved
    // again on the file system.
    assert!(
        started.elapsed() < Duration::from_secs(2),
        "{:?}",
        started.elapsed()
    );
}

#[test]
fn limit_flags_are_range_checked() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("a.cir"), "A\nV1 a 0 5\nR1 a 0 1k\n.end\n").unwrap();
    for value in ["18446744073709551615", "100000001", "0"] {
        let (code, _, err) = run(&dir, &["--max-elements", value, "a.cir"]);
        assert_eq!(code, 2, "{value}: {err}");
        assert!(err.contains("is not in 1..=100000000"), "{value}: {err}");
    }
    let (code, _, err) = run(&dir, &["--max-elements", "100000000", "a.cir"]);
    assert_eq!(code, 0, "{err}");
}

#[test]
fn a_short_deck_expanding_to_millions_of_resistors_is_refused_by_default() {
    // Seven levels of seven-fold instances over a bank of 100 resistors: 82 million elements
    // from a few lines. Refused from the count, before anything is expanded.
    let mut deck = String::from("Expansion\nV1 a 0 5\nXTOP a L7\n");
    deck.push_str(".subckt L0 p\n");
    for i in 0..100 {
        deck.push_str(&format!("R{i} p 0 1k\n"));
    }
    deck.push_str(".ends\n");
    for level in 1..=7 {
        deck.push_str(&format!(".subckt L{level} p\n"));
        for i in 0..7 {
            deck.push_str(&format!("X{i} p L{}\n", level - 1));
        }
        deck.push_str(".ends\n");
    }
    deck.push_str(".end\n");
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("big.cir"), deck).unwrap();
    let started = std::time::Instant::now();
    let (code, _, err) = run(&dir, &["big.cir"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("big.cir"), "{err}");
    assert!(
        err.contains("above the limit of 1000000 (--max-elements)"),
        "{err}"
    );
    assert!(started.elapsed() < Duration::from_secs(5));
}

#[test]
fn one_line_with_many_nodes_counts_against_the_element_limit() {
    // With the statement limit raised, one instance line of 200,000 nodes is as heavy as
    // 200,000 elements and meets the element limit as they would.
    let mut line = String::from("X1");
    for i in 0..200_000 {
        write!(line, " n{i}").unwrap();
    }
    line.push_str(" WIDE\n");
    let deck = format!("Wide\nV1 n0 0 5\n{line}.subckt WIDE p\nR1 p 0 1k\n.ends\n.end\n");
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("wide.cir"), deck).unwrap();
    let (code, _, err) = run(
        &dir,
        &[
            "--max-statement-bytes",
            "100000000",
            "--max-elements",
            "100000",
            "wide.cir",
        ],
    );
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("above the limit of 100000 (--max-elements)"),
        "{err}"
    );
}

#[test]
fn thousands_of_switches_in_parallel_share_their_branch_walks_and_drive_lists() {
    // 12,000 MOSFETs on the same drain, gate and source nets (a 300 kB file). Each walked
    // every part on the drain net and listed every other switch on its drive: quadratic in
    // time and memory (32,000 took 42 s and 8.2 GB). Shared, it is a few seconds unoptimised.
    let mut deck = String::from(
        "Parallel switches\nV12 v12 0 DC 12\nVG g 0 PULSE(0 10 0 1u 1u 0.5m 1m)\nRL v12 d 10\n",
    );
    for i in 0..12_000 {
        writeln!(deck, "M{i} d g 0 0 NCH").unwrap();
    }
    deck.push_str(".model NCH NMOS (VTO=2 KP=5)\n.end\n");
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("parallel.cir"), deck).unwrap();
    let started = std::time::Instant::now();
    let (code, out, err) = run(&dir, &["parallel.cir"]);
    assert_eq!(code, 1, "{err}");
    assert!(out.contains("resistor-overpower"), "{out}");
    assert!(
        started.elapsed() < Duration::from_secs(30),
        "{:?}",
        started.elapsed()
    );
}
