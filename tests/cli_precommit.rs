//! The published pre-commit hook, run by the real pre-commit framework against a scratch git
//! repository. The framework must be installed (`.ci/run` installs it with
//! `python3 -m pip install pre-commit`): without it these tests fail rather than pass unseen.

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

/// The framework, or a failure that says how to install it.
fn required_pre_commit() -> Vec<String> {
    pre_commit().expect(
        "the pre-commit framework is not installed; install it with \
         `python3 -m pip install pre-commit` (as .ci/run does)",
    )
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
    let framework = required_pre_commit();
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
    let framework = required_pre_commit();
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
    let framework = required_pre_commit();
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

/// Part data and a valve channel whose subcircuit comes from a library, as a project keeps
/// them: the netlist, `lib/chan.lib` and `kickback.toml`.
const VALVE_DECK: &str = "Drain valve channel from the bench library
.include \"lib/chan.lib\"
V12   v12 0 DC 12
VC1   cmd1 0 PULSE(0 5 0 1u 1u 0.5 1)
XCH1  v12 cmd1 CHAN
CB    v12 0 100u
.end
";

const CHAN_WITH_DIODE: &str = "* bench library: one drain valve channel
.subckt CHAN rail cmd
RB    cmd b 68 power_rating=0.5
Q1    c b 0 NPNSW
XV    rail c VALVE12
DFW   c rail DSW
.ends CHAN
";

const PARTS: &str = "[parts.NPNSW]
kind = \"npn\"
vce_max = 40
ic_max = 1
hfe_min = 60

[parts.VALVE12]
kind = \"solenoid\"
rated_voltage = 12
resistance = 24
inductance = \"45m\"

[parts.DSW]
kind = \"schottky\"
vrrm = 40
if_avg = 3
";

fn said(output: &std::process::Output) -> String {
    format!(
        "{}{}",
        String::from_utf8_lossy(&output.stdout),
        String::from_utf8_lossy(&output.stderr)
    )
}

/// A scratch repository holding the clean valve channel, committed.
fn valve_repository(framework: &[String], config: &str) -> tempfile::TempDir {
    let repo = scratch_repository(framework);
    let root = repo.path();
    fs::create_dir(root.join("lib")).expect("lib");
    fs::write(root.join("lib/chan.lib"), CHAN_WITH_DIODE).expect("lib");
    fs::write(root.join("kickback.toml"), config).expect("config");
    fs::write(root.join("valve.cir"), VALVE_DECK).expect("deck");
    assert!(git(root, &["add", "."]).status.success());
    let output = git(root, &["commit", "-q", "-m", "valve channel"]);
    assert!(output.status.success(), "{}", said(&output));
    repo
}

#[test]
fn a_commit_changing_only_the_configuration_rechecks_its_netlists() {
    let framework = required_pre_commit();
    // The first configuration turns the freewheel rule off; the deck without its diode passes.
    let quiet = format!("{PARTS}\n[rules]\nflyback-missing = \"off\"\n");
    let repo = valve_repository(&framework, &quiet);
    let root = repo.path();
    let bare = CHAN_WITH_DIODE.replace("DFW   c rail DSW\n", "");
    let output = commit(root, "lib/chan.lib", &bare);
    assert!(output.status.success(), "{}", said(&output));
    // Only kickback.toml changes: the netlist it governs is checked again, and now fails.
    let output = commit(root, "kickback.toml", PARTS);
    assert!(!output.status.success(), "{}", said(&output));
    assert!(
        said(&output).contains("flyback-missing"),
        "{}",
        said(&output)
    );
    assert!(said(&output).contains("valve.cir"), "{}", said(&output));
}

#[test]
fn a_commit_changing_only_a_library_rechecks_the_netlists_that_include_it() {
    let framework = required_pre_commit();
    let repo = valve_repository(&framework, PARTS);
    let root = repo.path();
    // A netlist that does not include the library is left alone.
    let divider = fs::read_to_string(testdata("divider.cir")).expect("divider");
    let output = commit(root, "level.cir", &divider);
    assert!(output.status.success(), "{}", said(&output));
    // The library loses the diode: the deck that includes it fails, and the library itself is
    // never read as a deck (its first line is no title).
    let bare = CHAN_WITH_DIODE.replace("DFW   c rail DSW\n", "");
    let output = commit(root, "lib/chan.lib", &bare);
    assert!(!output.status.success(), "{}", said(&output));
    let text = said(&output);
    assert!(text.contains("flyback-missing"), "{text}");
    assert!(text.contains("valve.cir"), "{text}");
    assert!(!text.contains("level.cir"), "{text}");
    assert!(!text.contains("lib/chan.lib:1:"), "{text}");
}
