//! `kickback check --watch`: checks once, then again after each save, through the program.

use std::io::{BufRead, BufReader};
use std::process::{Command, Stdio};
use std::sync::mpsc::channel;
use std::time::Duration;

const WAIT: Duration = Duration::from_secs(60);
const WATCHING: &str = "kickback: watching for changes (Ctrl-C stops)";

#[test]
fn a_save_is_checked_again() {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
    let folder = tempfile::tempdir().unwrap();
    for name in ["doser.cir", "kickback.toml"] {
        std::fs::copy(
            root.join("testdata/demo").join(name),
            folder.path().join(name),
        )
        .unwrap();
    }
    let netlist = folder.path().join("doser.cir");
    let mut child = Command::new(env!("CARGO_BIN_EXE_kickback"))
        .args(["check", "--watch", "--format", "lines"])
        .arg(&netlist)
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let stdout = child.stdout.take().unwrap();
    let (sender, lines) = channel();
    std::thread::spawn(move || {
        for line in BufReader::new(stdout).lines().map_while(Result::ok) {
            if sender.send(line).is_err() {
                return;
            }
        }
    });
    let until_watching = || {
        let mut seen = Vec::new();
        loop {
            match lines.recv_timeout(WAIT) {
                Ok(line) if line == WATCHING => return seen,
                Ok(line) => seen.push(line),
                Err(_) => return seen,
            }
        }
    };
    let first = until_watching();
    let has = |lines: &[String], rule: &str| lines.iter().any(|l| l.contains(rule));
    assert!(has(&first, " base-underdrive "), "{first:?}");

    // The fix the rule names, saved.
    let text = std::fs::read_to_string(&netlist).unwrap();
    let fixed = text.replace("RBV   pwm_valv valv_b 1k", "RBV   pwm_valv valv_b 47");
    std::fs::write(&netlist, fixed).unwrap();
    let second = until_watching();
    let _ = child.kill();
    let _ = child.wait();
    assert!(
        second
            .iter()
            .any(|l| l.contains("doser.cir changed, checking again")),
        "{second:?}"
    );
    assert!(!has(&second, " base-underdrive "), "{second:?}");
    assert!(has(&second, " flyback-missing "), "{second:?}");
}
