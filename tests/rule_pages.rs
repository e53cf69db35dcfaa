//! Every rule page's example, pasted into a file as it stands, fires the rule the page is about.
//! A page whose example has drifted from what the checker does teaches the wrong thing.
//!
//! The example is the section `## In a netlist`: its ```` ```spice ```` blocks are the files
//! (`spice file=NAME` names one; the first is the deck that is checked, `example.cir` unless
//! named) and a ```` ```toml file=kickback.toml ```` block, when present, sits beside them.

use kickback::check::{check_file, CheckOptions};
use kickback::rules::REGISTRY;
use std::path::Path;

/// The files of a page's example: (file name, text), the checked deck first.
fn example_files(page: &str) -> Vec<(String, String)> {
    let Some(start) = page.find("## In a netlist") else {
        return Vec::new();
    };
    let section = &page[start + 3..];
    let section = section.find("\n## ").map_or(section, |end| &section[..end]);
    let mut files = Vec::new();
    let mut lines = section.lines();
    while let Some(line) = lines.next() {
        let Some(info) = line.strip_prefix("```") else {
            continue;
        };
        let mut words = info.split_whitespace();
        let lang = words.next().unwrap_or("");
        let name = words
            .find_map(|w| w.strip_prefix("file="))
            .map(str::to_string);
        let body: Vec<&str> = lines
            .by_ref()
            .take_while(|l| !l.starts_with("```"))
            .collect();
        let text = body.join("\n") + "\n";
        match (lang, name) {
            ("spice", Some(name)) => files.push((name, text)),
            // Only the first unnamed block is the deck; a later one is a fragment of prose.
            ("spice", None) if files.is_empty() => files.push(("example.cir".to_string(), text)),
            ("toml", Some(name)) => files.push((name, text)),
            _ => {}
        }
    }
    files
}

#[test]
fn every_page_example_fires_its_rule() {
    let mut failures = Vec::new();
    for rule in REGISTRY {
        let files = example_files(rule.page);
        let Some((deck, _)) = files.first().cloned() else {
            failures.push(format!(
                "{}: no ```spice example under `## In a netlist`",
                rule.id
            ));
            continue;
        };
        let dir = tempfile::tempdir().expect("temp dir");
        for (name, text) in &files {
            std::fs::write(dir.path().join(name), text).expect("write example");
        }
        let report = check_file(&dir.path().join(&deck), &CheckOptions::default());
        let fired = report.findings.iter().any(|f| f.rule == rule.id);
        if !fired {
            let got: Vec<String> = report
                .findings
                .iter()
                .map(|f| format!("{} ({})", f.rule, f.message))
                .collect();
            failures.push(format!(
                "{}: the example does not fire it; it gives {got:?}{}",
                rule.id,
                report
                    .failure
                    .as_ref()
                    .map(|e| format!(", failure: {e}"))
                    .unwrap_or_default()
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n\n"));
}

#[test]
fn the_example_reader_finds_named_files() {
    let page = "# x\n\n## In a netlist\n\n```spice file=a.cir\nt\nR1 a 0 1\n```\n\n\
                ```toml file=kickback.toml\n[rules]\n```\n\n## The fix\n\n```spice\nR2\n```\n";
    let files = example_files(page);
    assert_eq!(
        files,
        vec![
            ("a.cir".to_string(), "t\nR1 a 0 1\n".to_string()),
            ("kickback.toml".to_string(), "[rules]\n".to_string()),
        ]
    );
    assert!(Path::new(&files[0].0).extension().is_some());
}
