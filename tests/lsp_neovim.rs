//! `kickback lsp` under a real client: Neovim's built-in one, headless, driven by
//! `testdata/lsp/nvim_driver.lua`. `.ci/run` installs Neovim from the system's packages; in CI
//! (`CI` set) a missing `nvim` fails this test, elsewhere it is skipped with a message.

use std::path::Path;
use std::process::Command;

fn nvim_available() -> bool {
    Command::new("nvim")
        .arg("--version")
        .output()
        .is_ok_and(|o| o.status.success())
}

#[test]
fn neovim_shows_the_findings_the_numbers_and_applies_a_fix() {
    if !nvim_available() {
        if std::env::var_os("CI").is_some() {
            panic!("nvim is not installed; .ci/run installs it (apt-get install neovim)");
        }
        eprintln!("skipped: nvim is not installed (CI installs it)");
        return;
    }
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let folder = tempfile::tempdir().unwrap();
    for name in ["doser.cir", "kickback.toml"] {
        std::fs::copy(
            root.join("testdata/demo").join(name),
            folder.path().join(name),
        )
        .unwrap();
    }
    let result = folder.path().join("result.txt");
    let status = Command::new("nvim")
        .args(["--headless", "--clean", "-u", "NONE", "-c"])
        .arg(format!(
            "luafile {}",
            root.join("testdata/lsp/nvim_driver.lua").display()
        ))
        .env("KICKBACK", env!("CARGO_BIN_EXE_kickback"))
        .env("NETLIST", folder.path().join("doser.cir"))
        .env("RESULT", &result)
        .env("XDG_CACHE_HOME", folder.path().join("cache"))
        .env("XDG_STATE_HOME", folder.path().join("state"))
        .env("XDG_DATA_HOME", folder.path().join("data"))
        .status()
        .expect("nvim runs");
    let seen = std::fs::read_to_string(&result).unwrap_or_default();
    assert!(status.success(), "nvim failed: {status}\n{seen}");
    let field = |key: &str| -> Vec<&str> {
        seen.lines()
            .filter_map(|l| l.strip_prefix(&format!("{key}: ")))
            .collect()
    };
    // The demo's findings as `kickback check` gives them (tests/demo.rs): line, rule,
    // severity (1 error, 2 warning, 3 information for a note).
    let diagnostics = field("diagnostics").concat();
    for expected in [
        "38:base-underdrive:1",
        "40:flyback-missing:1",
        "33:gate-underdrive:1",
        "18:pwm-audible:3",
        "27:shoot-through:2",
    ] {
        assert!(
            diagnostics.contains(expected),
            "{expected} in {diagnostics}"
        );
    }
    // The hover is `kickback report`'s table for the timer (tests/report_facts.rs).
    let hover = field("hover").join("\n");
    assert!(hover.contains("Timer XU1 (timer-555, astable)"), "{hover}");
    assert!(
        hover.contains("frequency      2.782 kHz … 2.783 kHz"),
        "{hover}"
    );
    assert!(
        field("action").contains(&"base-underdrive: set RBV to 47 Ω (E12)"),
        "{seen}"
    );
    assert_eq!(field("line"), ["RBV   pwm_valv valv_b 47"]);
    let after = field("after").concat();
    assert!(!after.contains("base-underdrive"), "{after}");
    assert_eq!(
        after.split(' ').count(),
        diagnostics.split(' ').count() - 1,
        "only the fixed finding went: {seen}"
    );
}
