//! Include policy on real files: the folder tree of the top netlist, links, depth and size.

use kickback::netlist::{load, Limits};
use kickback::source::SourceMap;
use std::fs;

fn names(sources: &SourceMap) -> Vec<String> {
    sources.files().map(|(_, f)| f.name.clone()).collect()
}

#[test]
fn a_link_that_leads_outside_is_refused_unless_allowed() {
    let outside = tempfile::tempdir().unwrap();
    fs::write(outside.path().join("secret.lib"), ".model dsecret D\n").unwrap();
    let tree = tempfile::tempdir().unwrap();
    std::os::unix::fs::symlink(
        outside.path().join("secret.lib"),
        tree.path().join("parts.lib"),
    )
    .unwrap();
    let top = tree.path().join("top.cir");
    fs::write(&top, "Top\n.include parts.lib\nD1 a 0 dsecret\n.end\n").unwrap();

    let mut sources = SourceMap::new();
    let (flat, findings) = load(&top, &mut sources, &Limits::default(), &|_| false).unwrap();
    assert_eq!(findings.len(), 1, "{findings:?}");
    assert_eq!(findings[0].rule, "include-refused");
    assert!(findings[0].message.contains("through a link"));
    assert_eq!(sources.files().count(), 1, "the refused file is not read");
    assert!(flat.models.is_empty());

    let allow = Limits {
        allow_outside_includes: true,
        ..Limits::default()
    };
    let mut sources = SourceMap::new();
    let (flat, findings) = load(&top, &mut sources, &allow, &|_| false).unwrap();
    assert!(findings.is_empty(), "{findings:?}");
    assert_eq!(flat.models.len(), 1);
}

#[test]
fn include_nesting_and_size_limits() {
    let tree = tempfile::tempdir().unwrap();
    for i in 0..5 {
        fs::write(
            tree.path().join(format!("n{i}.lib")),
            format!(".include n{}.lib\nR{i} a 0 1\n", i + 1),
        )
        .unwrap();
    }
    fs::write(tree.path().join("n5.lib"), "R5 a 0 1\n").unwrap();
    let top = tree.path().join("top.cir");
    fs::write(&top, "Top\n.include n0.lib\n.end\n").unwrap();
    let shallow = Limits {
        max_depth: 3,
        ..Limits::default()
    };
    let (flat, findings) = load(&top, &mut SourceMap::new(), &shallow, &|_| false).unwrap();
    assert_eq!(findings.len(), 1, "{findings:?}");
    assert!(findings[0].message.contains("nested more than 3 levels"));
    assert_eq!(flat.elements.len(), 3);

    let big = tree.path().join("big.lib");
    fs::write(&big, "* ".repeat(600)).unwrap();
    fs::write(&top, "Top\n.include big.lib\nR1 a 0 1\n.end\n").unwrap();
    let small = Limits {
        max_file_bytes: 1000,
        ..Limits::default()
    };
    let mut sources = SourceMap::new();
    let (_, findings) = load(&top, &mut sources, &small, &|_| false).unwrap();
    assert_eq!(findings.len(), 1);
    assert!(
        findings[0].message.contains("1200 bytes"),
        "{}",
        findings[0].message
    );
    assert_eq!(sources.files().count(), 1);

    let tiny = Limits {
        max_file_bytes: 10,
        ..Limits::default()
    };
    let err = load(&top, &mut SourceMap::new(), &tiny, &|_| false).unwrap_err();
    assert!(matches!(
        err,
        kickback::netlist::LoadError::TooLarge { limit: 10, .. }
    ));
}

#[test]
fn names_are_shown_relative_to_how_the_top_file_was_given() {
    let mut sources = SourceMap::new();
    let top = std::path::Path::new("testdata/syntax/../syntax/include_subfolder.cir");
    load(top, &mut sources, &Limits::default(), &|_| false).unwrap();
    assert_eq!(
        names(&sources),
        [
            "testdata/syntax/../syntax/include_subfolder.cir",
            "testdata/syntax/sub/parts.lib",
            "testdata/syntax/sub/more.lib"
        ]
    );
}

#[test]
fn one_argument_lib_includes_the_whole_file_and_sections_can_come_from_the_same_file() {
    let tree = tempfile::tempdir().unwrap();
    fs::write(tree.path().join("models.lib"), ".model dfw D\n").unwrap();
    let top = tree.path().join("top.cir");
    fs::write(
        &top,
        "Top\n.lib models.lib\n.lib 'top.cir' extra\nD1 a 0 dfw\nQ1 c b 0 qx\n.lib extra\n.model qx NPN\n.endl extra\n.end\n",
    )
    .unwrap();
    let (flat, findings) =
        load(&top, &mut SourceMap::new(), &Limits::default(), &|_| false).unwrap();
    assert!(findings.is_empty(), "{findings:?}");
    let models: Vec<&str> = flat.models.iter().map(|m| m.name.as_str()).collect();
    assert_eq!(models, ["dfw", "qx"]);
}

#[test]
fn an_unreadable_top_file_is_an_error() {
    let err = load(
        std::path::Path::new("testdata/syntax/absent.cir"),
        &mut SourceMap::new(),
        &Limits::default(),
        &|_| false,
    )
    .unwrap_err();
    assert!(matches!(
        err,
        kickback::netlist::LoadError::Unreadable { .. }
    ));
}
