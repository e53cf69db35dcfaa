//! `kickback check --watch`: checks, then checks again each time a file under the given paths
//! is saved, for editors without a language client. Saves come in bursts (a write, a rename,
//! a backup), so changes are gathered for a short quiet interval before the check runs.

use super::cli::GlobalArgs;
use super::{Console, Environment, EXIT_FAILURE};
use notify::{Event, EventKind, RecursiveMode, Watcher};
use std::path::{Path, PathBuf};
use std::sync::mpsc;
use std::time::Duration;

/// How long the files must be quiet after a save before the check runs.
const QUIET: Duration = Duration::from_millis(200);

pub(super) fn run(
    paths: &[PathBuf],
    run: &super::CheckRun<'_>,
    global: &GlobalArgs,
    env: &Environment,
    console: &mut Console<'_>,
) -> u8 {
    let (sender, receiver) = mpsc::channel();
    let mut watcher = match notify::recommended_watcher(sender) {
        Ok(w) => w,
        Err(e) => {
            console.error(&format!("cannot watch for changes: {e}"));
            return EXIT_FAILURE;
        }
    };
    for path in paths {
        // A file is watched through its folder: editors save by writing a new file and
        // renaming it over the old one, which ends a watch on the file itself.
        let (target, mode) = if path.is_dir() {
            (path.clone(), RecursiveMode::Recursive)
        } else {
            let folder = path
                .parent()
                .filter(|p| !p.as_os_str().is_empty())
                .unwrap_or(Path::new("."));
            (folder.to_path_buf(), RecursiveMode::NonRecursive)
        };
        if let Err(e) = watcher.watch(&target, mode) {
            console.error(&format!("cannot watch {}: {e}", target.display()));
            return EXIT_FAILURE;
        }
    }
    super::check(paths, run, global, env, console);
    console.print("kickback: watching for changes (Ctrl-C stops)\n");
    while let Ok(first) = receiver.recv() {
        // A save is a burst of events: gather them until the files are quiet.
        let mut events = vec![first];
        while let Ok(more) = receiver.recv_timeout(QUIET) {
            events.push(more);
        }
        let mut changed = Vec::new();
        for event in events {
            match event {
                Ok(event) => changed.extend(changed_names(&event)),
                Err(e) => {
                    console.error(&format!("watching stopped: {e}"));
                    return EXIT_FAILURE;
                }
            }
        }
        changed.sort();
        changed.dedup();
        if changed.is_empty() {
            continue;
        }
        console.print(&format!(
            "\nkickback: {} changed, checking again\n",
            changed.join(", ")
        ));
        super::check(paths, run, global, env, console);
        console.print("kickback: watching for changes (Ctrl-C stops)\n");
    }
    EXIT_FAILURE
}

/// The names of the files an event changed: writes, new files, renames and removals (reading
/// a file, as the check itself does, is no change).
fn changed_names(event: &Event) -> Vec<String> {
    if !matches!(
        event.kind,
        EventKind::Modify(_) | EventKind::Create(_) | EventKind::Remove(_)
    ) {
        return Vec::new();
    }
    event
        .paths
        .iter()
        .filter(|p| counts(p))
        .filter_map(|p| p.file_name())
        .map(|n| n.to_string_lossy().to_string())
        .collect()
}

/// Editor back-ups, swap files, hidden files and the version-control folder are not the
/// user's netlists.
fn counts(path: &Path) -> bool {
    let in_git = path.components().any(|c| c.as_os_str() == ".git");
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().to_string())
        .unwrap_or_default();
    !in_git
        && !name.is_empty()
        && !name.starts_with('.')
        && !name.ends_with('~')
        && !name.ends_with(".swp")
}
