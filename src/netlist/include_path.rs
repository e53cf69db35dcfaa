//! Paths of included files: lexical normalisation (checked before any file is opened), the
//! name a user sees for an include, and how `.lib` section names compare.

use std::path::{Component, Path, PathBuf};

pub fn sections_equal(a: Option<&str>, b: Option<&str>) -> bool {
    match (a, b) {
        (None, None) => true,
        (Some(x), Some(y)) => x.eq_ignore_ascii_case(y),
        _ => false,
    }
}

/// Removes `.` and resolves `..` lexically (no file system access).
pub fn normalize(path: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for comp in path.components() {
        match comp {
            Component::CurDir => {}
            Component::ParentDir => {
                let last_is_normal =
                    matches!(out.components().next_back(), Some(Component::Normal(_)));
                if last_is_normal {
                    out.pop();
                } else if !out.has_root() {
                    out.push("..");
                }
            }
            other => out.push(other.as_os_str()),
        }
    }
    out
}

/// The include's name as the user should see it: the including file's shown folder joined
/// with the path as written.
pub fn display_name(including: &str, written: &str) -> String {
    let written_path = Path::new(written);
    if written_path.is_absolute() {
        return normalize(written_path).display().to_string();
    }
    let dir = Path::new(including).parent().unwrap_or(Path::new(""));
    let joined = normalize(&dir.join(written_path));
    joined.display().to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn normalizing_paths() {
        assert_eq!(normalize(Path::new("a/./b/../c")), PathBuf::from("a/c"));
        assert_eq!(normalize(Path::new("../x")), PathBuf::from("../x"));
        assert_eq!(normalize(Path::new("/a/../../b")), PathBuf::from("/b"));
        assert_eq!(
            display_name("decks/top.cir", "sub/parts.lib"),
            "decks/sub/parts.lib"
        );
        assert_eq!(display_name("top.cir", "./parts.lib"), "parts.lib");
    }
}
