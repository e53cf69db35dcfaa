//! `kickback init`: a commented starter `kickback.toml`, written so that a half-written file is
//! never left behind and an existing one is never replaced.

use crate::config::FILE_NAME;
use std::fs::{self, OpenOptions};
use std::io::{self, Write};
use std::path::{Path, PathBuf};

/// Every section a project is likely to need, commented out except the reference nets, so the
/// file is valid as written and checks behave exactly as with no file at all.
pub const STARTER: &str = r#"# kickback.toml: settings for checking the netlists in this folder and below.
# kickback looks for this file beside each netlist and then in parent folders.
# Values are in SI base units; a string takes SPICE suffixes ("2.2m", "10k", "1meg").

[analysis]
# Nets that are the reference (ground), compared case-insensitively.
ground = ["0", "gnd"]

[rules]
# Severity per rule ID: "error", "warning", "note" or "off". `kickback rules` lists them.
# pwm-audible = "off"
# resistor-overpower = "error"

# Supply corners of an independent source, by element name. A battery's end of life is a
# corner worth checking.
# [supply.VBAT]
# min = 7.0
# max = 9.6

# What a model or subcircuit is, and its ratings. The name may be a glob ("IRF*"), matched
# case-insensitively.
# [parts.PUMP12]
# kind = "dc-motor"            # timer-555, nmos, npn, diode, relay-coil, solenoid, ...
# rated_voltage = 12
# stall_current = "1.8"
# inductance = "2.2m"

# Pin roles in port order, where the port names and the usual order do not say.
# [parts.QSW]
# kind = "nmos"
# pins = ["d", "g", "s"]
# vgs_th_max = 4
# rds_on = "0.05"

# One placed part, by its instance path.
# [elements."XCH2.XM"]
# rated_voltage = 6
"#;

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
    let placed = write_new(&temp, STARTER).and_then(|()| place_without_replacing(&temp, &target));
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
    fn starter_is_valid_toml_with_only_the_reference_nets_active() {
        let table: toml::Table = toml::from_str(STARTER).expect("starter parses");
        let keys: Vec<&String> = table.keys().collect();
        assert_eq!(keys, ["analysis", "rules"]);
        assert!(table["rules"].as_table().is_some_and(|t| t.is_empty()));
    }
}
