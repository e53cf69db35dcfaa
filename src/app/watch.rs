//! `kickback check --watch`: checks, then checks again each time a file under the given paths
//! is saved, for editors without a language client. Saves come in bursts (a write, a rename,
//! a backup), so changes are gathered for a short quiet interval before the check runs.

use super::cli::GlobalArgs;
use super::{Console, Environment, EXIT_FAILURE};
use notify_debouncer_mini::notify::RecursiveMode;
use notify_debouncer_mini::{new_debouncer, DebouncedEvent};
use std::path::{Path, PathBuf};
use std::sync::mpsc;
use std::time::Duration;

/// How long the files must be quiet after a save before the check runs.
const QUIET: Duration = Duration::from_millis(200);

pub(super) fn run(
    paths: &[PathBuf],
    global: &GlobalArgs,
    env: &Environment,
    console: &mut Console<'_>,
) -> u8 {
    let (sender, receiver) = mpsc::channel();
    let mut debouncer = match new_debouncer(QUIET, sender) {
        Ok(d) => d,
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
        if let Err(e) = debouncer.watcher().watch(&target, mode) {
            console.error(&format!("cannot watch {}: {e}", target.display()));
            return EXIT_FAILURE;
        }
    }
    super::check(paths, global, env, console);
    console.print("kickback: watching for changes (Ctrl-C stops)\n");
    while let Ok(batch) = receiver.recv() {
        let events = match batch {
            Ok(events) => events,
            Err(e) => {
                console.error(&format!("watching stopped: {e}"));
                return EXIT_FAILURE;
            }
        };
        let mut changed: Vec<String> = events
            .iter()
            .filter(|e| counts(e))
            .filter_map(|e| e.path.file_name())
            .map(|n| n.to_string_lossy().to_string())
            .collect();
        changed.sort();
        changed.dedup();
        if changed.is_empty() {
            continue;
        }
        console.print(&format!(
            "\nkickback: {} changed, checking again\n",
            changed.join(", ")
        ));
        super::check(paths, global, env, console);
        console.print("kickback: watching for changes (Ctrl-C stops)\n");
    }
    EXIT_FAILURE
}

/// Editor back-ups, swap files and hidden folders (`.git`) are not the user's netlists.
fn counts(event: &DebouncedEvent) -> bool {
    let hidden = event.path.components().any(|c| {
        let part = c.as_os_str().to_string_lossy();
        part.starts_with('.') && part != "." && part != ".."
    });
    let name = event
        .path
        .file_name()
        .map(|n| n.to_string_lossy().to_string())
        .unwrap_or_default();
    !hidden && !name.ends_with('~') && !name.ends_with(".swp") && !name.is_empty()
}
