//! Pin role names, and whether a name given in the config is one.

use super::layouts::{normalize, ALL_LAYOUTS, OTHER_NAMES};

/// The role names to suggest in messages (each kind accepts its own aliases too).
pub const PRIMARY_ROLE_NAMES: [&str; 23] = [
    "gnd", "trig", "out", "reset", "ctrl", "thr", "dis", "vcc", "d", "g", "s", "b", "c", "e",
    "sub", "a", "k", "pos", "neg", "w", "ctrl+", "ctrl-", "other",
];

/// True when `name` is a pin role any kind accepts (for validating `pins = [...]`).
pub fn is_role_name(name: &str) -> bool {
    let name = normalize(name);
    OTHER_NAMES.contains(&name.as_str())
        || ALL_LAYOUTS.iter().any(|layout| {
            layout
                .order
                .iter()
                .any(|r| r.names.contains(&name.as_str()))
        })
}
