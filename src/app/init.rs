//! `kickback init`: a commented starter `kickback.toml`, written so that a half-written file is
//! never left behind and an existing one is never replaced.

use crate::config::FILE_NAME;
use std::fs::{self, OpenOptions};
use std::io::{self, Write};
use std::path::{Path, PathBuf};

/// The starter text lives with the schema it must satisfy.
pub use crate::config::starter_toml;

#[derive(Debug, thiserror::Error)]
pub enum InitError {
    #[error("{0} already exists; not overwriting it")]
    Exists(PathBuf),
    #[error("cannot write {path}: {source}")]
    Io { path: PathBuf, source: io::Error },
}

/// Writes the starter file into `dir` and returns its path.
pub fn write_starter(dir: &Path) -> Result<PathBuf, InitError> {
    let target = dir.join(FILE_NAME);
    if target.exists() {
        return Err(InitError::Exists(target));
    }
    let temp = dir.join(format!(".{FILE_NAME}.{}.tmp", std::process::id()));
    let io_error = |source| InitError::Io {
        path: target.clone(),
        source,
    };
    let placed =
        write_new(&temp, starter_toml()).and_then(|()| place_without_replacing(&temp, &target));
    let _ = fs::remove_file(&temp);
    match placed {
        Ok(()) => Ok(target),
        Err(e) if e.kind() == io::ErrorKind::AlreadyExists => Err(InitError::Exists(target)),
        Err(e) => Err(io_error(e)),
    }
}

fn write_new(path: &Path, text: &str) -> io::Result<()> {
    let mut file = OpenOptions::new().write(true).create_new(true).open(path)?;
    file.write_all(text.as_bytes())?;
    file.sync_all()
}

/// A hard link appears whole and fails if the target exists, so a file created meanwhile is
/// not replaced; where links are not supported, a rename after a fresh look does the job.
fn place_without_replacing(temp: &Path, target: &Path) -> io::Result<()> {
    match fs::hard_link(temp, target) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == io::ErrorKind::AlreadyExists => Err(e),
        Err(_) => {
            if target.exists() {
                return Err(io::ErrorKind::AlreadyExists.into());
            }
            fs::rename(temp, target)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn starter_passes_the_schema() {
        let config = crate::config::Config::parse(starter_toml(), Path::new("kickback.toml"))
            .expect("starter is a valid configuration");
        assert!(config.rules.is_empty());
    }
}
