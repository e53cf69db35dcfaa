//! Per-rule fixtures: every netlist under `testdata/rules/<rule-id>/` is checked and its
//! findings kept as a snapshot. A file whose name starts with `fires` must produce at least one
//! finding of that rule; one whose name starts with `quiet` must produce none of it.

use kickback::check::{check_file, CheckOptions};
use std::fmt::Write;
use std::path::{Path, PathBuf};

fn fixture_files() -> Vec<(String, PathBuf)> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("testdata/rules");
    let mut out = Vec::new();
    let Ok(dirs) = std::fs::read_dir(&root) else {
        return out;
    };
    for dir in dirs.filter_map(|d| d.ok()) {
        let rule = dir.file_name().to_string_lossy().to_string();
        let Ok(files) = std::fs::read_dir(dir.path()) else {
            continue;
        };
        for file in files.filter_map(|f| f.ok()) {
            let path = file.path();
            if path.extension().is_some_and(|e| e == "cir") {
                out.push((rule.clone(), path));
            }
        }
    }
    out.sort();
    out
}

/// A plain, stable rendering of one file's findings for snapshots.
fn render(path: &Path, grade_problems: &mut Vec<String>) -> (String, Vec<String>) {
    let report = check_file(path, &CheckOptions::default());
    let mut text = String::new();
    if let Some(failure) = &report.failure {
        writeln!(text, "failure: {failure}").unwrap();
    }
    let mut rules = Vec::new();
    for f in &report.findings {
        let loc = report.sources.locate(f.span);
        writeln!(
            text,
            "{}:{}: {} {} — {}",
            loc.line, loc.column, f.severity, f.rule, f.message
        )
        .unwrap();
        if let Some(path) = &f.instance_path {
            writeln!(text, "    instance: {path}").unwrap();
        }
        for label in &f.labels {
            let l = report.sources.locate(label.span);
            writeln!(text, "    label {}:{}: {}", l.line, l.column, label.message).unwrap();
        }
        if let Some(help) = &f.help {
            writeln!(text, "    help: {help}").unwrap();
        }
        for v in &f.values {
            writeln!(
                text,
                "    value {} = {:.6e} {} ({})",
                v.name, v.value, v.unit, v.source
            )
            .unwrap();
        }
        rules.push(f.rule.clone());
        grade_problems.extend(grade_problem(path, f));
    }
    if report.suppressed > 0 {
        writeln!(text, "suppressed: {}", report.suppressed).unwrap();
    }
    (text, rules)
}

/// Every finding names a registered rule and carries a severity its rule declares it gives
/// (a rating finding resting on an assumed value may also be lowered to a note), unless the
/// fixture's own `kickback.toml` sets levels.
fn grade_problem(path: &Path, f: &kickback::diagnostic::Finding) -> Option<String> {
    let Some(rule) = kickback::rules::find(&f.rule) else {
        return Some(format!(
            "{}: `{}` is not in the registry",
            path.display(),
            f.rule
        ));
    };
    let sets_levels = path
        .parent()
        .and_then(|d| std::fs::read_to_string(d.join("kickback.toml")).ok())
        .is_some_and(|c| c.contains("[rules]"));
    let lowered =
        f.severity == kickback::diagnostic::Severity::Note && f.message.contains("assumed");
    (!rule.grades.contains(&f.severity) && !lowered && !sets_levels).then(|| {
        format!(
            "{}: `{}` gave a {} but declares only {:?}",
            path.display(),
            f.rule,
            f.severity,
            rule.grades
        )
    })
}

#[test]
fn rule_fixtures() {
    let mut problems = Vec::new();
    for (rule, path) in fixture_files() {
        let (text, rules) = render(&path, &mut problems);
        let stem = path.file_stem().unwrap().to_string_lossy().to_string();
        let fired = rules.contains(&rule);
        if stem.starts_with("fires") && !fired {
            problems.push(format!("{}: expected `{rule}` to fire", path.display()));
        }
        if stem.starts_with("quiet") && fired {
            problems.push(format!(
                "{}: expected `{rule}` to stay quiet",
                path.display()
            ));
        }
        insta::with_settings!({
            snapshot_path => "snapshots/rules",
            prepend_module_to_snapshot => false,
            omit_expression => true,
        }, {
            insta::assert_snapshot!(format!("{rule}__{stem}"), text);
        });
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}
