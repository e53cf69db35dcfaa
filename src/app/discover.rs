//! Which netlists a `check` covers: files named on the command line always, and the netlists
//! found in folders, honouring `.gitignore` and `.ignore` files (in git checkouts or not).

use std::collections::BTreeSet;
use std::path::{Component, Path, PathBuf};

/// Netlist extensions, compared case-insensitively.
pub const EXTENSIONS: &[&str] = &["cir", "sp", "spice", "net", "ckt"];

/// Extensions of files that hold definitions for netlists to include (subcircuits, models),
/// compared case-insensitively. Such a file has no title line and is never checked as a deck:
/// named on the command line, it is checked as a library and stands for the netlists that
/// include it.
pub const LIBRARY_EXTENSIONS: &[&str] = &["lib", "inc", "mod", "sub"];

#[derive(Debug, Default)]
pub struct Discovery {
    /// Netlists to check, sorted, each once.
    pub files: Vec<PathBuf>,
    /// Paths that could not be read or walked, with why.
    pub failures: Vec<(PathBuf, String)>,
    /// Folders that held no netlist.
    pub empty_folders: Vec<PathBuf>,
    /// Library files named on the command line: the netlists that include them are checked.
    pub libraries: Vec<PathBuf>,
}

pub fn discover(paths: &[PathBuf]) -> Discovery {
    discover_with(paths, false)
}

/// As [`discover`]; `allow_outside` lets a linked netlist found in a folder lead outside it
/// (`--allow-outside-includes`). Without it such a link is a failure and is never read: a
/// branch could otherwise commit `board.cir` as a link to a secret and have it printed.
pub fn discover_with(paths: &[PathBuf], allow_outside: bool) -> Discovery {
    let mut files = BTreeSet::new();
    let mut out = Discovery::default();
    for path in paths {
        let path = tidy(path);
        match std::fs::metadata(&path) {
            Err(e) => out.failures.push((path, e.to_string())),
            Ok(meta) if meta.is_dir() => {
                if !walk(&path, allow_outside, &mut files, &mut out.failures) {
                    out.empty_folders.push(path);
                }
            }
            // A changed configuration re-checks every netlist it governs: those in its folder
            // and below.
            Ok(_)
                if path
                    .file_name()
                    .is_some_and(|n| n == crate::config::FILE_NAME) =>
            {
                let folder = match path.parent() {
                    Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
                    _ => PathBuf::from("."),
                };
                walk(&folder, allow_outside, &mut files, &mut out.failures);
            }
            Ok(_) if is_library(&path) => out.libraries.push(path),
            Ok(_) => {
                files.insert(path);
            }
        }
    }
    out.libraries.sort();
    out.libraries.dedup();
    out.files = files.into_iter().collect();
    out.failures.sort();
    out.empty_folders.sort();
    out
}

/// Adds the netlists under `root`; false when there were none.
fn walk(
    root: &Path,
    allow_outside: bool,
    files: &mut BTreeSet<PathBuf>,
    failures: &mut Vec<(PathBuf, String)>,
) -> bool {
    let mut found = false;
    let canonical_root = std::fs::canonicalize(root).ok();
    let walker = ignore::WalkBuilder::new(root).require_git(false).build();
    for entry in walker {
        match entry {
            Ok(entry) => {
                let path = entry.path();
                // Symlinked netlists count; the walk itself does not follow linked folders.
                let is_file = entry.file_type().is_some_and(|t| t.is_file())
                    || (entry.path_is_symlink() && path.is_file());
                if !is_file && is_netlist(path) {
                    // A netlist name on something that is not a file (a FIFO, a device, a link
                    // to one or to nothing) cannot be checked: it is named and counted, never
                    // opened. A folder with such a name is walked as a folder.
                    match std::fs::metadata(path) {
                        Ok(meta) if meta.is_dir() => {}
                        Ok(meta) => {
                            failures.push((
                                tidy(path),
                                format!(
                                    "it is {}, not a regular file, and is not read",
                                    crate::source::file_kind(&meta)
                                ),
                            ));
                            found = true;
                        }
                        Err(e) => {
                            failures.push((tidy(path), e.to_string()));
                            found = true;
                        }
                    }
                    continue;
                }
                if is_file && is_netlist(path) {
                    found = true;
                    let inside = |root: &PathBuf| {
                        std::fs::canonicalize(path).is_ok_and(|target| target.starts_with(root))
                    };
                    if entry.path_is_symlink()
                        && !allow_outside
                        && !canonical_root.as_ref().is_some_and(inside)
                    {
                        failures.push((
                            tidy(path),
                            "it links to a file outside the folder being checked and is not \
                             read (--allow-outside-includes reads it)"
                                .to_string(),
                        ));
                        continue;
                    }
                    files.insert(tidy(path));
                }
            }
            Err(e) => failures.push((root.to_path_buf(), e.to_string())),
        }
    }
    found
}

pub fn is_library(path: &Path) -> bool {
    path.extension()
        .and_then(|e| e.to_str())
        .is_some_and(|e| LIBRARY_EXTENSIONS.iter().any(|x| x.eq_ignore_ascii_case(e)))
}

pub fn is_netlist(path: &Path) -> bool {
    path.extension()
        .and_then(|e| e.to_str())
        .is_some_and(|e| EXTENSIONS.iter().any(|x| x.eq_ignore_ascii_case(e)))
}

/// `./hw/a.cir` → `hw/a.cir`: leading `.` components say nothing to the reader.
fn tidy(path: &Path) -> PathBuf {
    let mut components = path.components().peekable();
    while components.peek() == Some(&Component::CurDir) {
        components.next();
    }
    let tidied: PathBuf = components.collect();
    if tidied.as_os_str().is_empty() {
        PathBuf::from(".")
    } else {
        tidied
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn extensions_match_case_insensitively() {
        assert!(is_netlist(Path::new("a/b.CIR")));
        assert!(is_netlist(Path::new("b.Spice")));
        assert!(is_netlist(Path::new("b.ckt")));
        assert!(!is_netlist(Path::new("b.txt")));
        assert!(!is_netlist(Path::new("cir")));
    }

    #[test]
    fn leading_dots_are_dropped() {
        assert_eq!(tidy(Path::new("./hw/a.cir")), PathBuf::from("hw/a.cir"));
        assert_eq!(tidy(Path::new(".")), PathBuf::from("."));
        assert_eq!(tidy(Path::new("../a.cir")), PathBuf::from("../a.cir"));
    }
}
