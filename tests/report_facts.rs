//! `kickback report` on the fixtures in `testdata/report/`: the JSON facts and the tables for a
//! person, kept as snapshots. Each fixture's header says what it shows; the checks below pin
//! the facts an engineer would look at first.

use kickback::check::{report_file, CheckOptions, FileFacts};
use kickback::report::facts::{render_human_with, render_json};
use std::path::{Path, PathBuf};

fn fixtures() -> Vec<PathBuf> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("testdata/report");
    let mut out: Vec<PathBuf> = std::fs::read_dir(&root)
        .map(|d| {
            d.filter_map(|e| e.ok())
                .map(|e| e.path())
                .filter(|p| p.extension().is_some_and(|e| e == "cir"))
                .collect()
        })
        .unwrap_or_default();
    out.sort();
    out
}

fn facts(name: &str) -> FileFacts {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("testdata/report")
        .join(name);
    match report_file(&path, &CheckOptions::default()) {
        Ok(f) => f,
        Err(e) => panic!("{name}: {e}"),
    }
}

#[test]
fn report_snapshots() {
    let files = fixtures();
    assert!(files.len() >= 6, "fixtures missing: {files:?}");
    for path in files {
        let stem = path
            .file_stem()
            .unwrap_or_default()
            .to_string_lossy()
            .to_string();
        let f = facts(&format!("{stem}.cir"));
        let json = render_json(&f.analysis, &f.netlist, &f.circuit);
        insta::assert_snapshot!(format!("{stem}.json"), json);
        let human = render_human_with(&f.analysis, &f.netlist, &f.circuit, true);
        insta::assert_snapshot!(format!("{stem}.txt"), human);
    }
}

#[test]
fn json_is_deterministic_and_has_the_documented_keys() {
    let f = facts("switch_bridge_shared_gate.cir");
    let a = render_json(&f.analysis, &f.netlist, &f.circuit);
    let b = render_json(&f.analysis, &f.netlist, &f.circuit);
    assert_eq!(a, b);
    let v: serde_json::Value = serde_json::from_str(&a).expect("valid JSON");
    let mut keys: Vec<&str> = v
        .as_object()
        .map(|o| o.keys().map(String::as_str).collect())
        .unwrap_or_default();
    keys.sort_unstable();
    assert_eq!(keys, ["loads", "supplies", "switches", "timers", "version"]);
    assert_eq!(v["version"], 1);
    let switch = &v["switches"][0];
    for key in [
        "element",
        "kind",
        "side",
        "load",
        "driver",
        "vgs_on_v",
        "vgs_off_v",
        "current_a",
        "dissipation_w",
    ] {
        assert!(switch.get(key).is_some(), "switch lacks {key}");
    }
    let load = &v["loads"][0];
    for key in [
        "element",
        "kind",
        "rated_v",
        "peak_v",
        "avg_v",
        "effective_v",
        "freewheel",
    ] {
        assert!(load.get(key).is_some(), "load lacks {key}");
    }
}
