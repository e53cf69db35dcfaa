//! The published pre-commit hook, run by the real pre-commit framework against a scratch git
//! repository. Skipped, with a notice, where the framework is not installed (CI installs it).

use std::fs;
use std::path::{Path, PathBuf};

fn testdata(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("testdata/cli")
        .join(name)
}

/// How to run the pre-commit framework here: the `pre-commit` script, or its module.
fn pre_commit() -> Option<Vec<String>> {
    let works = |program: &str, args: &[&str]| {
        std::process::Command::new(program)
            .args(args)
            .arg("--version")
            .output()
            .is_ok_and(|o| o.status.success())
    };
    if works("pre-commit", &[]) {
        Some(vec!["pre-commit".into()])
    } else if works("python3", &["-m", "pre_commit"]) {
        Some(vec!["python3".into(), "-m".into(), "pre_commit".into()])
    } else {
        None
    }
}

/// The `files` pattern of the published hook, so the scratch repository uses the same one.
fn published_files_pattern() -> String {
    let hooks =
        fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join(".pre-commit-hooks.yaml"))
            .expect(".pre-commit-hooks.yaml");
    let line = hooks
        .lines()
        .find_map(|l| l.trim().strip_prefix("files:"))
        .expect("files pattern");
    line.trim().trim_matches('\'').to_string()
}

/// A command that sees none of this machine's git or pre-commit settings: no global or system
/// git config (hook paths, signing, templates), its own pre-commit cache, a fixed identity, and
/// no repository inherited from a surrounding git process.
fn isolated(program: &str, root: &Path) -> std::process::Command {
    let mut cmd = std::process::Command::new(program);
    cmd.current_dir(root)
        .env("GIT_CONFIG_GLOBAL", "/dev/null")
        .env("GIT_CONFIG_NOSYSTEM", "1")
        .env("GIT_AUTHOR_NAME", "Doser Bench")
        .env("GIT_AUTHOR_EMAIL", "bench@example.invalid")
        .env("GIT_COMMITTER_NAME", "Doser Bench")
        .env("GIT_COMMITTER_EMAIL", "bench@example.invalid")
        .env("PRE_COMMIT_HOME", root.join(".pre-commit-home"));
    for name in [
        "GIT_DIR",
        "GIT_WORK_TREE",
        "GIT_INDEX_FILE",
        "NO_COLOR",
        "COLUMNS",
        "TERM",
        "LC_ALL",
        "LC_CTYPE",
        "LANG",
    ] {
        cmd.env_remove(name);
    }
    cmd
}

fn git(root: &Path, args: &[&str]) -> std::process::Output {
    isolated("git", root)
        .args([
            "-c",
            "init.defaultBranch=main",
            "-c",
            "commit.gpgsign=false",
        ])
        .args(args)
        .output()
        .expect("git runs")
}

/// A scratch repository whose pre-commit configuration runs the built program as the published
/// hook does.
fn scratch_repository(framework: &[String]) -> tempfile::TempDir {
    let dir = tempfile::tempdir().expect("tempdir");
    let root = dir.path();
    assert!(git(root, &["init", "-q"]).status.success());
    let binary = assert_cmd::cargo::cargo_bin("kickback");
    let config = format!(
        "repos:\n  - repo: local\n    hooks:\n      - id: kickback\n        name: kickback\n        \
         entry: '{} check'\n        language: system\n        files: '{}'\n        \
         pass_filenames: true\n",
        binary.display(),
        published_files_pattern()
    );
    fs::write(root.join(".pre-commit-config.yaml"), config).expect("config");
    let install = isolated(&framework[0], root)
        .args(&framework[1..])
        .arg("install")
        .output()
        .expect("pre-commit install");
    assert!(install.status.success(), "{install:?}");
    fs::write(root.join(".gitignore"), ".pre-commit-home/\n").expect("gitignore");
    assert!(git(root, &["add", ".gitignore", ".pre-commit-config.yaml"])
        .status
        .success());
    dir
}

fn commit(root: &Path, file: &str, content: &str) -> std::process::Output {
    fs::write(root.join(file), content).expect("write");
    assert!(git(root, &["add", file]).status.success());
    git(root, &["commit", "-q", "-m", file])
}

#[test]
fn pre_commit_accepts_the_published_manifest() {
    let Some(framework) = pre_commit() else {
        println!("skipped: pre-commit is not installed (python3 -m pip install pre-commit)");
        return;
    };
    let output = std::process::Command::new(&framework[0])
        .args(&framework[1..])
        .arg("validate-manifest")
        .arg(Path::new(env!("CARGO_MANIFEST_DIR")).join(".pre-commit-hooks.yaml"))
        .output()
        .expect("pre-commit runs");
    assert!(output.status.success(), "{output:?}");
}

#[test]
fn pre_commit_hook_lets_a_clean_netlist_through() {
    let Some(framework) = pre_commit() else {
        println!("skipped: pre-commit is not installed (python3 -m pip install pre-commit)");
        return;
    };
    let repo = scratch_repository(&framework);
    let divider = fs::read_to_string(testdata("divider.cir")).expect("divider");
    let output = commit(repo.path(), "level.cir", &divider);
    assert!(output.status.success(), "{output:?}");
    // The hook ran on the netlist (a hook with no matching file says "Skipped").
    // git passes a hook's output on to stderr.
    let said = format!(
        "{}{}",
        String::from_utf8_lossy(&output.stdout),
        String::from_utf8_lossy(&output.stderr)
    );
    assert!(
        said.contains("kickback") && said.contains("Passed"),
        "{said}"
    );
    let log = git(repo.path(), &["log", "--oneline"]);
    assert!(String::from_utf8_lossy(&log.stdout).contains("level.cir"));
}

#[test]
fn pre_commit_hook_blocks_a_netlist_with_an_error() {
    let Some(framework) = pre_commit() else {
        println!("skipped: pre-commit is not installed (python3 -m pip install pre-commit)");
        return;
    };
    let repo = scratch_repository(&framework);
    let broken = fs::read_to_string(testdata("syntax-error.cir")).expect("broken");
    let output = commit(repo.path(), "valve.cir", &broken);
    assert!(!output.status.success(), "{output:?}");
    let said = format!(
        "{}{}",
        String::from_utf8_lossy(&output.stdout),
        String::from_utf8_lossy(&output.stderr)
    );
    assert!(said.contains("syntax"), "{said}");
    let log = git(repo.path(), &["log", "--oneline"]);
    assert!(!String::from_utf8_lossy(&log.stdout).contains("valve.cir"));
}
