//! The registry and the pages in `rules/` agree one-to-one, and every page has the sections a
//! reader needs.

use kickback::rules::REGISTRY;
use std::collections::BTreeSet;

#[test]
fn every_rule_has_a_page_and_every_page_a_rule() {
    let pages: BTreeSet<String> = std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/rules"))
        .expect("rules/ folder")
        .filter_map(|e| e.ok())
        .filter_map(|e| {
            let name = e.file_name().to_string_lossy().to_string();
            name.strip_suffix(".md").map(str::to_string)
        })
        .collect();
    let registered: BTreeSet<String> = REGISTRY.iter().map(|r| r.id.to_string()).collect();
    assert_eq!(
        registered.len(),
        REGISTRY.len(),
        "a rule is registered twice"
    );
    let missing_pages: Vec<_> = registered.difference(&pages).collect();
    let orphan_pages: Vec<_> = pages.difference(&registered).collect();
    assert!(
        missing_pages.is_empty(),
        "rules without a page: {missing_pages:?}"
    );
    assert!(
        orphan_pages.is_empty(),
        "pages without a rule: {orphan_pages:?}"
    );
}

#[test]
fn pages_start_with_their_id_and_have_the_sections_a_reader_needs() {
    for rule in REGISTRY {
        assert!(
            rule.page.starts_with(&format!("# {}", rule.id)),
            "rules/{}.md must start with `# {}`",
            rule.id,
            rule.id
        );
        for section in ["## The fault", "## What it costs", "## In a netlist"] {
            assert!(
                rule.page.contains(section),
                "rules/{}.md lacks `{section}`",
                rule.id
            );
        }
    }
}

#[test]
fn ids_are_kebab_case() {
    for rule in REGISTRY {
        assert!(
            rule.id
                .chars()
                .all(|c| c.is_ascii_lowercase() || c == '-' || c.is_ascii_digit()),
            "{} is not kebab-case",
            rule.id
        );
    }
}
