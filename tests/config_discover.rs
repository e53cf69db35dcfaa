//! Finding `kickback.toml` beside the netlist or in a parent folder.

use kickback::config::{Config, RuleLevel, FILE_NAME};
use std::fs;
use std::path::Path;

#[test]
fn found_in_a_parent_folder() {
    let netlist = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("testdata/config/nested/boards/channel/doser.cir");
    let config = Config::discover(&netlist)
        .unwrap_or_else(|e| panic!("{e}"))
        .expect("the nested folder's kickback.toml");
    assert_eq!(config.rules.get("pwm-audible"), Some(&RuleLevel::Off));
    let found = config.path.expect("a path");
    assert!(
        found.ends_with("testdata/config/nested/kickback.toml"),
        "{}",
        found.display()
    );
    assert!(found.is_absolute(), "discovery canonicalizes first");
}

#[test]
fn beside_the_netlist_beats_a_parent() {
    let root = tempfile::tempdir().expect("temp dir");
    let sub = root.path().join("boards");
    fs::create_dir_all(&sub).expect("mkdir");
    fs::write(
        root.path().join(FILE_NAME),
        "[rules]\npwm-audible = \"off\"\n",
    )
    .expect("write");
    fs::write(sub.join(FILE_NAME), "[rules]\npwm-audible = \"note\"\n").expect("write");
    let netlist = sub.join("doser.cir");
    fs::write(&netlist, "title\n.end\n").expect("write");
    let config = Config::discover(&netlist)
        .unwrap_or_else(|e| panic!("{e}"))
        .expect("a config");
    assert_ne!(config.rules.get("pwm-audible"), Some(&RuleLevel::Off));

    // A relative path with `..` and a netlist that does not exist yet still search upwards.
    let odd = sub.join("..").join("boards").join("missing.cir");
    let config = Config::discover(&odd).unwrap_or_else(|e| panic!("{e}"));
    assert!(config.is_some());
}

#[test]
fn a_bad_config_on_the_way_up_is_an_error() {
    let root = tempfile::tempdir().expect("temp dir");
    fs::write(root.path().join(FILE_NAME), "[bogus]\n").expect("write");
    let deep = root.path().join("a/b/c");
    fs::create_dir_all(&deep).expect("mkdir");
    let error = Config::discover(&deep.join("x.cir")).expect_err("bad config");
    assert_eq!(error.key.as_deref(), Some("bogus"));
    assert_eq!((error.line, error.column), (1, 2));
}

#[test]
fn none_when_no_folder_has_one() {
    let root = tempfile::tempdir().expect("temp dir");
    let netlist = root.path().join("x.cir");
    fs::write(&netlist, "title\n.end\n").expect("write");
    // The temporary folder's own ancestors could hold a kickback.toml on some machine; only
    // assert when they do not.
    let ancestors_have_one = root
        .path()
        .ancestors()
        .any(|folder| folder.join(FILE_NAME).is_file());
    if !ancestors_have_one {
        assert!(Config::discover(&netlist)
            .unwrap_or_else(|e| panic!("{e}"))
            .is_none());
    }
}

#[test]
fn a_config_that_links_out_of_its_folder_is_refused_unread() {
    let outside = tempfile::tempdir().expect("temp dir");
    let secret = outside.path().join("secret.toml");
    fs::write(&secret, "[rules]\nsecret-token-4711 = \"off\"\n").expect("write");
    let root = tempfile::tempdir().expect("temp dir");
    std::os::unix::fs::symlink(&secret, root.path().join(FILE_NAME)).expect("link");
    let netlist = root.path().join("x.cir");
    fs::write(&netlist, "title\n.end\n").expect("write");
    let error = Config::discover(&netlist).expect_err("refused");
    let text = error.to_string();
    assert!(
        text.contains("links to a file outside its folder"),
        "{text}"
    );
    assert!(!text.contains("secret-token-4711"), "{text}");
    // Allowed, it is read (and its unknown rule is then the error).
    let read = Config::discover_with(&netlist, true).expect("parses");
    assert!(read.is_some());
}

#[test]
fn a_config_that_is_not_a_regular_file_is_an_error_not_skipped() {
    let root = tempfile::tempdir().expect("temp dir");
    // A good configuration in the parent must not stand in for the broken one beside the
    // netlist.
    fs::write(root.path().join(FILE_NAME), "[rules]\n").expect("write");
    let deep = root.path().join("board");
    fs::create_dir_all(deep.join(FILE_NAME)).expect("a folder named like the config");
    let error = Config::discover(&deep.join("x.cir")).expect_err("a folder");
    assert!(
        error
            .to_string()
            .contains("it is a folder, not a regular file"),
        "{error}"
    );

    let fifo_dir = root.path().join("fifo");
    fs::create_dir_all(&fifo_dir).expect("mkdir");
    let made = std::process::Command::new("mkfifo")
        .arg(fifo_dir.join(FILE_NAME))
        .status()
        .is_ok_and(|s| s.success());
    if made {
        let error = Config::discover(&fifo_dir.join("x.cir")).expect_err("a FIFO");
        assert!(
            error
                .to_string()
                .contains("it is a FIFO, not a regular file"),
            "{error}"
        );
    }
}
