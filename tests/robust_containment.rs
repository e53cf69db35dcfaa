//! A netlist from an unreviewed branch must not make kickback read, print or write anything
//! outside what it was asked to check. One test per escape route that `netlist_includes.rs`
//! (a file link out of the tree) does not already cover; each checks through the program that
//! the refused file's text never reaches its output.

use assert_cmd::Command;
use std::fs;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

/// Text that must never appear in any output: it stands for a secret outside the tree.
const SECRET: &str = "TOPSECRET-7f3a";

fn kickback() -> Command {
    let mut cmd = Command::cargo_bin("kickback").expect("binary built");
    for name in ["NO_COLOR", "COLUMNS", "TERM", "LC_ALL", "LC_CTYPE", "LANG"] {
        cmd.env_remove(name);
    }
    cmd.timeout(Duration::from_secs(30));
    cmd
}

/// An outside folder holding a library whose model name and comment are the secret, and a
/// tree folder for the netlist.
struct Layout {
    outside: tempfile::TempDir,
    tree: tempfile::TempDir,
}

impl Layout {
    fn new() -> Layout {
        let layout = Layout {
            outside: tempfile::tempdir().unwrap(),
            tree: tempfile::tempdir().unwrap(),
        };
        let library =
            format!("* {SECRET}\n.model {SECRET} D\n.lib sect\n.model {SECRET}s D\n.endl\n");
        fs::write(layout.outside.path().join("secret.lib"), library).unwrap();
        layout
    }

    fn top(&self, include_line: &str) -> PathBuf {
        let top = self.tree.path().join("top.cir");
        fs::write(
            &top,
            format!("Containment\n{include_line}\nR1 a 0 1k\nV1 a 0 5\n.end\n"),
        )
        .unwrap();
        top
    }
}

/// Runs `check` on `top` in every format and returns (exit code, stdout + stderr) of the
/// lines format; every format must keep the secret out.
fn check_all_formats(top: &Path, extra: &[&str]) -> (i32, String) {
    let mut lines = None;
    for format in ["lines", "cards", "json", "sarif"] {
        let output = kickback()
            .arg("check")
            .arg(top)
            .args(["--format", format])
            .args(extra)
            .output()
            .unwrap();
        let text = format!(
            "{}{}",
            String::from_utf8_lossy(&output.stdout),
            String::from_utf8_lossy(&output.stderr)
        );
        assert!(
            !text.contains(SECRET),
            "{format} leaked the secret:\n{text}"
        );
        if format == "lines" {
            lines = Some((output.status.code().unwrap_or(-1), text));
        }
    }
    lines.unwrap()
}

fn assert_refused(top: &Path) {
    let (code, text) = check_all_formats(top, &[]);
    assert_eq!(code, 1, "{text}");
    assert!(text.contains("error include-refused"), "{text}");
    assert!(text.contains("--allow-outside-includes"), "{text}");
}

#[test]
fn an_absolute_path_outside_the_tree_is_refused() {
    let layout = Layout::new();
    let secret = layout.outside.path().join("secret.lib");
    let top = layout.top(&format!(".include \"{}\"", secret.display()));
    assert_refused(&top);
}

#[test]
fn climbing_out_with_dot_dot_is_refused() {
    let layout = Layout::new();
    let outside_name = layout.outside.path().file_name().unwrap().to_str().unwrap();
    let top = layout.top(&format!(".include ../{outside_name}/secret.lib"));
    // The tree and the outside folder are siblings in the temporary folder.
    assert_eq!(layout.tree.path().parent(), layout.outside.path().parent());
    assert_refused(&top);
    // Climbing out and back in stays inside and is fine.
    let tree_name = layout.tree.path().file_name().unwrap().to_str().unwrap();
    fs::write(layout.tree.path().join("ok.lib"), ".model dok D\n").unwrap();
    let top = layout.top(&format!(".include ../{tree_name}/ok.lib"));
    let (code, text) = check_all_formats(&top, &[]);
    assert!(!text.contains("include-refused"), "{text}");
    assert!(code == 0 || code == 1, "{text}");
}

#[test]
fn a_linked_folder_that_leads_outside_is_refused() {
    let layout = Layout::new();
    std::os::unix::fs::symlink(layout.outside.path(), layout.tree.path().join("parts")).unwrap();
    let top = layout.top(".include parts/secret.lib");
    assert_refused(&top);
    let (_, text) = check_all_formats(&top, &[]);
    assert!(text.contains("through a link"), "{text}");
}

#[test]
fn a_lib_section_outside_the_tree_is_refused() {
    let layout = Layout::new();
    let secret = layout.outside.path().join("secret.lib");
    let top = layout.top(&format!(".lib \"{}\" sect", secret.display()));
    assert_refused(&top);
    let outside_name = layout.outside.path().file_name().unwrap().to_str().unwrap();
    let top = layout.top(&format!(".lib ../{outside_name}/secret.lib sect"));
    assert_refused(&top);
}

#[test]
fn allowing_outside_includes_reads_them() {
    let layout = Layout::new();
    let secret = layout.outside.path().join("secret.lib");
    let top = layout.top(&format!(".include \"{}\"", secret.display()));
    let output = kickback()
        .args(["check", "--format", "lines", "--allow-outside-includes"])
        .arg(&top)
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&output.stdout);
    assert!(!text.contains("include-refused"), "{text}");
}

#[test]
fn device_files_are_refused_or_rejected_without_blocking() {
    let layout = Layout::new();
    for device in ["/dev/zero", "/dev/urandom", "/dev/stdin"] {
        let top = layout.top(&format!(".include {device}"));
        let started = Instant::now();
        assert_refused(&top);
        // Allowed outside the tree, a device is still not a file: a missing include, read
        // not at all (reading /dev/zero would never end).
        let (code, text) = check_all_formats(&top, &["--allow-outside-includes"]);
        assert!(code == 0 || code == 1, "{text}");
        assert!(text.contains(device), "the include is named: {text}");
        assert!(started.elapsed() < Duration::from_secs(60), "{device}");
    }
    // A device named as the netlist itself.
    let output = kickback().args(["check", "/dev/zero"]).output().unwrap();
    assert_eq!(output.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&output.stderr).contains("not a regular file"));
}

#[test]
fn a_fifo_never_blocks() {
    let layout = Layout::new();
    let fifo = layout.tree.path().join("pipe.lib");
    let made = std::process::Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .is_ok_and(|s| s.success());
    if !made {
        eprintln!("mkfifo is not available; skipped");
        return;
    }
    // Opening a FIFO for reading blocks until a writer comes: kickback must not open it.
    let top = layout.top(".include pipe.lib");
    let (code, text) = check_all_formats(&top, &[]);
    assert!(code == 0 || code == 1, "{text}");
    assert!(text.contains("pipe.lib"), "{text}");
    // As the netlist itself, named and found in a folder (named with a netlist extension).
    let fifo_cir = layout.tree.path().join("pipe.cir");
    std::process::Command::new("mkfifo")
        .arg(&fifo_cir)
        .status()
        .unwrap();
    let output = kickback().arg("check").arg(&fifo_cir).output().unwrap();
    assert_eq!(output.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&output.stderr).contains("it is a FIFO, not a regular file"));
    // Found in a folder it is named with its reason, and the run says a file was not checked.
    let output = kickback()
        .args(["check", "--format", "lines"])
        .arg(layout.tree.path())
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(2), "{stderr}");
    assert!(stderr.contains("pipe.cir: it is a FIFO"), "{stderr}");
    // As an include, it is refused with the reason.
    assert!(
        text.contains("`pipe.lib` is a FIFO, not a regular file"),
        "{text}"
    );
}

#[test]
fn a_netlist_name_on_a_device_or_a_link_loop_in_a_folder_is_a_named_failure() {
    let layout = Layout::new();
    let folder = layout.tree.path();
    fs::write(folder.join("good.cir"), "good\nV1 a 0 5\nR1 a 0 1k\n.end\n").unwrap();
    std::os::unix::fs::symlink("/dev/zero", folder.join("zero.cir")).unwrap();
    std::os::unix::fs::symlink("loop.cir", folder.join("loop.cir")).unwrap();
    for format in ["cards", "lines", "json", "sarif"] {
        let output = kickback()
            .args(["check", "--allow-outside-includes", "--format", format])
            .arg(folder)
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(2), "{format}: {stderr}");
        assert!(stderr.contains("zero.cir: it is a device"), "{stderr}");
        assert!(stderr.contains("loop.cir"), "{stderr}");
    }
}

#[test]
fn a_folder_or_a_link_loop_as_an_include_is_refused_with_its_reason() {
    let layout = Layout::new();
    fs::create_dir(layout.tree.path().join("parts.lib")).unwrap();
    std::os::unix::fs::symlink("loop.lib", layout.tree.path().join("loop.lib")).unwrap();
    let top = layout.top(".include parts.lib\n.include loop.lib");
    let (code, text) = check_all_formats(&top, &[]);
    assert_eq!(code, 1, "{text}");
    assert!(
        text.contains("`parts.lib` is a folder, not a regular file"),
        "{text}"
    );
    assert!(text.contains("`loop.lib` cannot be read"), "{text}");
    assert!(text.contains("include-refused"), "{text}");
}

#[test]
fn a_linked_netlist_found_in_a_folder_must_stay_inside_it() {
    let layout = Layout::new();
    let secret_netlist = layout.outside.path().join("secret.cir");
    fs::write(&secret_netlist, format!("{SECRET}\nR1 a {SECRET}\n.end\n")).unwrap();
    std::os::unix::fs::symlink(&secret_netlist, layout.tree.path().join("board.cir")).unwrap();
    fs::write(
        layout.tree.path().join("inside.cir"),
        "Inside\nR1 a 0 1k\nV1 a 0 5\n.end\n",
    )
    .unwrap();
    std::os::unix::fs::symlink(
        layout.tree.path().join("inside.cir"),
        layout.tree.path().join("alias.cir"),
    )
    .unwrap();
    let output = kickback()
        .args(["check", "--color", "never"])
        .arg(layout.tree.path())
        .output()
        .unwrap();
    let stdout = String::from_utf8_lossy(&output.stdout);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(!stdout.contains(SECRET) && !stderr.contains(SECRET));
    assert_eq!(output.status.code(), Some(2), "{stdout}{stderr}");
    assert!(
        stderr.contains("board.cir") && stderr.contains("outside the folder"),
        "{stderr}"
    );
    assert!(
        stdout.contains("in 2 files; 1 file could not be checked"),
        "the link inside the tree is checked: {stdout}"
    );
    // Allowed, the link is followed.
    let output = kickback()
        .args(["check", "--format", "lines", "--allow-outside-includes"])
        .arg(layout.tree.path())
        .output()
        .unwrap();
    assert!(String::from_utf8_lossy(&output.stdout).contains("board.cir"));
}

#[test]
fn a_committed_config_link_to_a_device_or_a_huge_config_does_not_hang_or_fill_memory() {
    let layout = Layout::new();
    let config = layout.tree.path().join("kickback.toml");
    std::os::unix::fs::symlink("/dev/zero", &config).unwrap();
    let top = layout.top("* no include");
    // A link out of the tree is refused before it is opened; allowed, a device is still not a
    // configuration: an error, never opened, never passed over for a parent's.
    let output = kickback().arg("check").arg(&top).output().unwrap();
    assert_eq!(output.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        stderr.contains("links to a file outside its folder"),
        "{stderr}"
    );
    let output = kickback()
        .args(["check", "--allow-outside-includes"])
        .arg(&top)
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        stderr.contains("it is a device, not a regular file"),
        "{stderr}"
    );
    fs::remove_file(&config).unwrap();
    fs::write(&config, format!("# {}\n", "x".repeat(2 * 1024 * 1024))).unwrap();
    let output = kickback().arg("check").arg(&top).output().unwrap();
    assert_eq!(output.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        stderr.contains("larger than the limit of 1048576 bytes"),
        "{stderr}"
    );
}

#[test]
fn init_writes_whole_files_only_and_never_through_a_link() {
    let dir = tempfile::tempdir().unwrap();
    kickback()
        .args(["init", "--path"])
        .arg(dir.path())
        .assert()
        .code(0);
    let names: Vec<String> = fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names, ["kickback.toml"], "no temporary file is left behind");
    // A dangling link where the file would go: writing through it would create a file
    // wherever it points.
    let elsewhere = tempfile::tempdir().unwrap();
    let target = elsewhere.path().join("planted.toml");
    let linked = tempfile::tempdir().unwrap();
    std::os::unix::fs::symlink(&target, linked.path().join("kickback.toml")).unwrap();
    kickback()
        .args(["init", "--path"])
        .arg(linked.path())
        .assert()
        .code(2);
    assert!(!target.exists(), "init wrote through a link");
    assert_eq!(fs::read_dir(linked.path()).unwrap().count(), 1);
}

/// The program's own source holds no way to reach the network or run another program.
#[test]
fn the_source_opens_no_sockets_and_runs_no_commands() {
    let mut stack = vec![Path::new(env!("CARGO_MANIFEST_DIR")).join("src")];
    let forbidden = [
        "std::net",
        "TcpStream",
        "UdpSocket",
        "TcpListener",
        "process::Command",
        "Command::new",
        "libc::exec",
    ];
    let mut seen = 0;
    while let Some(dir) = stack.pop() {
        for entry in fs::read_dir(dir).unwrap() {
            let path = entry.unwrap().path();
            if path.is_dir() {
                stack.push(path);
            } else if path.extension().is_some_and(|e| e == "rs") {
                seen += 1;
                let text = fs::read_to_string(&path).unwrap();
                for word in forbidden {
                    assert!(!text.contains(word), "{} uses {word}", path.display());
                }
            }
        }
    }
    assert!(seen > 50, "{seen} source files");
}
