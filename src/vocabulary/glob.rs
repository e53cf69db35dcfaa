//! Case-insensitive name globs for `[parts.NAME]`: `*` any run, `?` one character, `[abc]`,
//! `[a-z]` and `[!abc]` classes, `{a,b}` alternatives. Matching is `globset`'s (the same engine
//! file discovery uses): an automaton that never backtracks, whatever the pattern's shape; each
//! pattern is compiled once per thread and kept.

use globset::{GlobBuilder, GlobMatcher};
use std::cell::RefCell;
use std::collections::HashMap;

/// Compiled patterns kept per thread; a config has few, so the bound is only a guard.
const CACHE_LIMIT: usize = 4096;

thread_local! {
    static COMPILED: RefCell<HashMap<String, Option<GlobMatcher>>> = RefCell::new(HashMap::new());
}

/// True when the pattern uses glob syntax (otherwise it is an exact name).
pub fn is_glob(pattern: &str) -> bool {
    pattern.contains(['*', '?', '[', '{'])
}

fn compile(pattern: &str) -> Result<GlobMatcher, String> {
    GlobBuilder::new(pattern)
        .case_insensitive(true)
        .literal_separator(false)
        .backslash_escape(false)
        .build()
        .map(|g| g.compile_matcher())
        .map_err(|e| format!("the glob \"{pattern}\" cannot be read: {}", e.kind()))
}

/// Longest glob accepted: a part name pattern is a few words; a longer one would make every
/// match cost its length times the name's.
pub const MAX_GLOB_BYTES: usize = 256;

/// Explains what is wrong with a pattern, if anything.
pub fn validate(pattern: &str) -> Result<(), String> {
    if pattern.trim().is_empty() {
        return Err("a part name or glob is empty".into());
    }
    if is_glob(pattern) && pattern.len() > MAX_GLOB_BYTES {
        return Err(format!(
            "a glob is {} bytes long, above the limit of {MAX_GLOB_BYTES} bytes for a part name pattern",
            pattern.len()
        ));
    }
    if is_glob(pattern) {
        compile(pattern)?;
    }
    Ok(())
}

/// Case-insensitive match of a whole name; an invalid pattern matches nothing.
pub fn matches(pattern: &str, name: &str) -> bool {
    if !is_glob(pattern) {
        return pattern.eq_ignore_ascii_case(name);
    }
    if pattern.len() > MAX_GLOB_BYTES {
        return false;
    }
    COMPILED.with(|cache| {
        let mut cache = cache.borrow_mut();
        if !cache.contains_key(pattern) {
            if cache.len() >= CACHE_LIMIT {
                cache.clear();
            }
            cache.insert(pattern.to_string(), compile(pattern).ok());
        }
        cache
            .get(pattern)
            .and_then(|m| m.as_ref())
            .is_some_and(|m| m.is_match(name))
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn long_globs_are_refused_and_match_nothing() {
        let long = format!("{}*", "a".repeat(MAX_GLOB_BYTES));
        assert!(validate(&long).is_err());
        assert!(!matches(&long, &"a".repeat(2 * MAX_GLOB_BYTES)));
        // A long exact name is no glob and costs one comparison.
        assert!(validate(&"b".repeat(10 * MAX_GLOB_BYTES)).is_ok());
    }

    #[test]
    fn globs() {
        assert!(matches("PUMP12", "pump12"));
        assert!(!matches("PUMP12", "pump123"));
        assert!(matches("pump*", "PUMP12"));
        assert!(matches("*12", "PUMP12"));
        assert!(matches("P?MP*", "pump12"));
        assert!(matches("VALVE_[ab]", "valve_B"));
        assert!(!matches("VALVE_[!ab]", "valve_B"));
        assert!(matches("Q[0-9]*", "q2x"));
        assert!(matches("*", ""));
        assert!(matches("a*b*c", "aXXbYYc"));
        assert!(!matches("a*b*c", "aXXbYY"));
        assert!(matches("{pump,stir}*", "STIR6"));
        assert!(
            matches("x*/y", "XA/Y"),
            "a slash is an ordinary character in a part name"
        );
        assert!(validate("bad[").is_err());
        assert!(validate(" ").is_err());
        assert!(validate("[]]").is_ok());
    }

    #[test]
    fn a_long_pattern_against_a_long_name_is_linear() {
        // Backtracking matchers take pattern × name steps on this shape; globset's automaton
        // does not. No timing here (benchmarks measure speed): the answer must simply be right.
        let pattern = "*a".repeat(200) + "b";
        let name = "a".repeat(20_000);
        assert!(!matches(&pattern, &name));
    }
}
