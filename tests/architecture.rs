//! The layering that DEVELOPERS.md states as "X never depends on Y", enforced: every
//! `crate::…` path in `src/` is read and checked against the allowed directions, and no rule
//! module reaches into another rule module.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

/// What each top-level module may use. Anything not listed is a backward or sideways edge.
/// Keep in step with the "never depends on" list in DEVELOPERS.md.
///
/// The stages in the order data flows; each may use the leaves and every stage before it,
/// except where a stage names a narrower set.
const LEAVES: &[&str] = &["source", "units", "vocabulary"];
const STAGES: &[(&str, Option<&[&str]>)] = &[
    ("diagnostic", Some(&["source"])),
    ("netlist", None),
    ("config", None),
    ("circuit", None),
    ("analysis", None),
    ("rules", None),
    // The per-file result: findings and sources, nothing of the graph or the facts.
    (
        "outcome",
        Some(&["source", "units", "diagnostic", "netlist", "config"]),
    ),
    ("report", None),
    (
        "check",
        Some(&[
            "source",
            "units",
            "vocabulary",
            "diagnostic",
            "netlist",
            "config",
            "circuit",
            "analysis",
            "rules",
            "outcome",
        ]),
    ),
    // The editor's front: reads the checked buffer's findings and facts, like `report`.
    ("lsp", None),
    ("app", None),
];

fn allowed() -> BTreeMap<&'static str, Vec<&'static str>> {
    let mut a = BTreeMap::new();
    for leaf in LEAVES {
        a.insert(*leaf, vec![]);
    }
    let mut before: Vec<&'static str> = LEAVES.to_vec();
    for (stage, narrower) in STAGES {
        let uses = match narrower {
            Some(list) => list.to_vec(),
            None => before.clone(),
        };
        a.insert(*stage, uses);
        before.push(stage);
    }
    a
}

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    for entry in entries.flatten() {
        let path = entry.path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// The code of a file without its comments (line comments and doc comments), so prose that
/// names a module is not taken for a dependency, and without its unit tests (a `#[cfg(test)]`
/// module at the end of the file may drive the whole pipeline).
fn code_lines(text: &str) -> impl Iterator<Item = (usize, &str)> {
    let end = text
        .lines()
        .position(|l| l.trim_start().starts_with("#[cfg(test)]"))
        .unwrap_or(usize::MAX);
    text.lines().enumerate().take(end).filter_map(|(i, line)| {
        let code = match line.find("//") {
            Some(at) => &line[..at],
            None => line,
        };
        (!code.trim().is_empty()).then_some((i + 1, code))
    })
}

/// Every `crate::NAME` in a piece of code.
fn crate_paths(code: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut rest = code;
    while let Some(at) = rest.find("crate::") {
        let before = rest[..at].chars().last();
        let after = &rest[at + "crate::".len()..];
        let name: String = after
            .chars()
            .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
            .collect();
        if !before.is_some_and(|c| c.is_ascii_alphanumeric() || c == '_') && !name.is_empty() {
            out.push(name);
        }
        rest = after;
    }
    out
}

fn src() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("src")
}

/// `src/rules/gate_underdrive.rs` → `rules`; `src/lib.rs` and `src/main.rs` → `None`.
fn top_module(path: &Path) -> Option<String> {
    let rel = path.strip_prefix(src()).ok()?;
    let first = rel
        .components()
        .next()?
        .as_os_str()
        .to_string_lossy()
        .to_string();
    let name = first.strip_suffix(".rs").unwrap_or(&first).to_string();
    (name != "lib" && name != "main").then_some(name)
}

#[test]
fn no_module_depends_on_a_later_stage() {
    let allowed = allowed();
    let mut files = Vec::new();
    rust_files(&src(), &mut files);
    files.sort();
    let mut problems = Vec::new();
    for file in &files {
        let Some(module) = top_module(file) else {
            continue;
        };
        let Some(may_use) = allowed.get(module.as_str()) else {
            problems.push(format!(
                "{}: module `{module}` is not in the layering table; add it to DEVELOPERS.md \
                 and to this test",
                file.display()
            ));
            continue;
        };
        let text = std::fs::read_to_string(file).unwrap_or_default();
        for (line, code) in code_lines(&text) {
            for used in crate_paths(code) {
                if used != module && !may_use.contains(&used.as_str()) {
                    problems.push(format!(
                        "{}:{line}: `{module}` never depends on `{used}`",
                        file.display()
                    ));
                }
            }
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

/// Rule modules: files in `src/rules/` that declare a rule's identity.
fn rule_modules() -> BTreeMap<String, PathBuf> {
    let mut files = Vec::new();
    rust_files(&src().join("rules"), &mut files);
    files
        .into_iter()
        .filter(|f| {
            std::fs::read_to_string(f)
                .unwrap_or_default()
                .lines()
                .any(|l| l.starts_with("pub const RULE: Rule ="))
        })
        .filter_map(|f| Some((f.file_stem()?.to_string_lossy().to_string(), f)))
        .collect()
}

#[test]
fn no_rule_imports_another_rule() {
    let modules = rule_modules();
    assert!(modules.len() > 30, "rule modules not found: {modules:?}");
    let names: BTreeSet<&str> = modules.keys().map(|s| s.as_str()).collect();
    let mut problems = Vec::new();
    for (name, file) in &modules {
        let text = std::fs::read_to_string(file).unwrap_or_default();
        for (line, code) in code_lines(&text) {
            for other in &names {
                if other == name {
                    continue;
                }
                let paths = [
                    format!("super::{other}::"),
                    format!("rules::{other}::"),
                    format!("super::{other}}}"),
                    format!("super::{other},"),
                    format!("super::{other};"),
                ];
                if paths.iter().any(|p| code.contains(p.as_str())) {
                    problems.push(format!(
                        "{}:{line}: rule `{name}` uses rule `{other}`; move what they share \
                         into the analysis (a fact) or into `rules/support/`",
                        file.display()
                    ));
                }
            }
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

/// The rules' shared helpers (`src/rules/support/`) never depend on a rule: what a helper needs
/// from a rule is either a fact (then it belongs in the analysis) or belongs in the helper.
#[test]
fn rule_support_never_depends_on_a_rule() {
    let modules = rule_modules();
    let mut files = Vec::new();
    rust_files(&src().join("rules/support"), &mut files);
    files.sort();
    assert!(!files.is_empty(), "src/rules/support not found");
    let mut problems = Vec::new();
    for file in &files {
        let text = std::fs::read_to_string(file).unwrap_or_default();
        for (line, code) in code_lines(&text) {
            for name in modules.keys() {
                let used = ["rules::", "super::super::", "support::super::"]
                    .iter()
                    .any(|prefix| {
                        ["::", ",", "}", ";"]
                            .iter()
                            .any(|end| code.contains(format!("{prefix}{name}{end}").as_str()))
                    });
                if used {
                    problems.push(format!(
                        "{}:{line}: rules/support uses rule `{name}`",
                        file.display()
                    ));
                }
            }
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

/// A rule's findings take their severity from its identity: outside the `RULE` declaration a
/// rule module names a severity only to compare with one, or through `RULE.grade(...)` (which
/// keeps it among the grades the rule declares); an ungraded finding says `RULE.severity()`.
#[test]
fn a_rule_chooses_severity_through_its_identity() {
    let mut problems = Vec::new();
    for file in rule_modules().values() {
        let text = std::fs::read_to_string(file).unwrap_or_default();
        let mut in_declaration = false;
        for (line, code) in code_lines(&text) {
            if code.starts_with("pub const RULE: Rule =") {
                in_declaration = true;
            }
            if in_declaration {
                in_declaration = code != "};";
                continue;
            }
            let mut rest = code;
            while let Some(at) = rest.find("Severity::") {
                let before = rest[..at].trim_end();
                let after = &rest[at..];
                let compared = before.ends_with("==") || before.ends_with("!=");
                let graded = before.ends_with("RULE.grade(");
                let pattern = after
                    .split_once(char::is_whitespace)
                    .is_some_and(|(_, tail)| tail.trim_start().starts_with("=>"));
                if !(compared || graded || pattern) {
                    problems.push(format!(
                        "{}:{line}: a severity chosen outside the rule's identity; use \
                         `RULE.severity()` or `RULE.grade(..)`",
                        file.display()
                    ));
                }
                rest = &after["Severity::".len()..];
            }
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn every_rule_module_is_registered_once() {
    let registry = std::fs::read_to_string(src().join("rules/mod.rs")).unwrap();
    for name in rule_modules().keys() {
        let line = format!("&{name}::RULE,");
        assert_eq!(
            registry.matches(line.as_str()).count(),
            1,
            "`{name}` declares a rule; list it once in REGISTRY as `{line}`"
        );
    }
}

#[test]
fn the_checker_sees_what_it_must() {
    // The scanner itself: paths in code are found, prose in comments is not.
    assert_eq!(crate_paths("use crate::analysis::Range;"), ["analysis"]);
    assert_eq!(
        crate_paths("let x = crate::rules::find(id); mycrate::x"),
        ["rules"]
    );
    let lines: Vec<_> =
        code_lines("// crate::report\nuse crate::source; // crate::app\n").collect();
    assert_eq!(lines.len(), 1);
    assert_eq!(crate_paths(lines[0].1), ["source"]);
}
