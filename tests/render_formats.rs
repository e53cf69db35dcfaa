//! The renderers on hand-built findings: cards (snapshots, colour off), lines, JSON structure,
//! SARIF against the OASIS 2.1.0 schema. The findings imitate what the rules will say about the
//! demo board (our own invented scenario); their numbers are illustrative only.

use kickback::check::{CheckError, FileReport};
use kickback::diagnostic::{Finding, InstanceStep, Severity};
use kickback::netlist::LoadError;
use kickback::report::{self, cards::CardsOptions};
use kickback::source::{FileId, SourceMap, Span};
use std::path::PathBuf;

const PUMP: &str = "\
* doser pump channel
VBAT vbat 0 DC 12
VPIN pin 0 PULSE(0 3.3 0 1u 1u 0.5m 1m)
RG pin g 100
M1 d g 0 0 NSTD
XPUMP vbat d PUMP12
.include \"parts.lib\"
.end
";

const PARTS: &str = "\
* parts for the doser
.model NSTD NMOS (VTO=3 KP=0.5)
.subckt PUMP12 p n
RW p n 6.6
.ends
";

const STIRRER: &str = "\
* stirrer channel
VBAT vbat 0 DC 12
XDRV vbat in out DRIVER
.subckt DRIVER vcc in out
M1 out in 0 0 NSTD
R1 in 0 10MEG
.ends
.end
";

/// Span of the first occurrence of `needle` in `text`.
fn span_of(file: FileId, text: &str, needle: &str) -> Span {
    let start = text.find(needle).expect("needle in text");
    Span::new(file, start, start + needle.len())
}

/// Span of the whole line that the first occurrence of `needle` starts, without its break.
fn line_of(file: FileId, text: &str, needle: &str) -> Span {
    let start = text.find(needle).expect("needle in text");
    let end = text[start..].find('\n').map_or(text.len(), |n| start + n);
    Span::new(file, start, end)
}

fn pump_report() -> FileReport {
    let mut sources = SourceMap::new();
    let top = sources.add("hw/pump.cir".into(), "hw/pump.cir".into(), PUMP.into());
    let lib = sources.add("hw/parts.lib".into(), "hw/parts.lib".into(), PARTS.into());
    let underdrive = Finding::new(
        "gate-underdrive",
        Severity::Error,
        line_of(top, PUMP, "M1 d g"),
        "M1 sees 3.3 V gate-source in the on state; a standard-threshold switch needs about 10 V",
    )
    .with_element("M1", None)
    .with_label(
        line_of(top, PUMP, "VPIN"),
        "the gate is driven from this 3.3 V pin",
    )
    .with_label(line_of(lib, PARTS, ".model NSTD"), "threshold set here")
    .with_help(
        "use a logic-level MOSFET (vgs_rated 4.5 V or less) or a gate driver from the 12 V rail",
    )
    .with_value("vgs_on", 3.3, "V", "from VPIN PULSE high level")
    .with_value("vgs_th_max", 4.0, "V", "built-in default for nmos")
    .with_value("load_current", 1.818, "A", "computed");
    let flyback = Finding::new(
        "flyback-missing",
        Severity::Error,
        line_of(top, PUMP, "XPUMP"),
        "the pump XPUMP is switched by M1 with no freewheeling path",
    )
    .with_element("XPUMP", None)
    .with_label(line_of(top, PUMP, "M1 d g"), "switch")
    .with_help("fit a diode across XPUMP, cathode to vbat (1N5819 or similar)")
    .with_value("inductance", 0.0022, "H", "from config")
    .with_value("stored_energy", 0.003_636, "J", "computed");
    let audible = Finding::new(
        "pwm-audible",
        Severity::Note,
        span_of(top, PUMP, "PULSE(0 3.3 0 1u 1u 0.5m 1m)"),
        "VPIN switches at 1 kHz: the pump will whine",
    )
    .with_element("VPIN", None)
    .with_value("frequency", 1000.0, "Hz", "from VPIN PULSE period")
    .with_value("duty", 0.5, "", "from VPIN PULSE");
    FileReport {
        path: "hw/pump.cir".into(),
        sources,
        // Deliberately not in line order: the renderer sorts.
        findings: vec![audible, flyback, underdrive],
        suppressed: 1,
        configs: Vec::new(),
        failure: None,
    }
}

fn stirrer_report() -> FileReport {
    let mut sources = SourceMap::new();
    let top = sources.add(
        "hw/stirrer.cir".into(),
        "hw/stirrer.cir".into(),
        STIRRER.into(),
    );
    let mut floating = Finding::new(
        "value-suspicious",
        Severity::Warning,
        line_of(top, STIRRER, "R1 in 0"),
        "R1 is 10 MΩ in a gate network; a pull-down of 10 kΩ is usual",
    )
    .with_element("R1", Some("XDRV.R1".into()))
    .with_help("use 10k")
    .with_value("resistance", 10e6, "Ω", "from R1");
    floating.instances.push(InstanceStep {
        name: "XDRV".into(),
        span: line_of(top, STIRRER, "XDRV"),
    });
    FileReport {
        path: "hw/stirrer.cir".into(),
        sources,
        findings: vec![floating],
        suppressed: 0,
        configs: Vec::new(),
        failure: None,
    }
}

fn failed_report() -> FileReport {
    FileReport {
        path: "hw/gone.cir".into(),
        sources: SourceMap::new(),
        findings: Vec::new(),
        suppressed: 0,
        configs: Vec::new(),
        failure: Some(CheckError::Load(LoadError::Unreadable {
            path: "hw/gone.cir".into(),
            reason: "No such file or directory".into(),
        })),
    }
}

fn all_reports() -> Vec<FileReport> {
    // Not in path order: the renderers sort.
    vec![stirrer_report(), pump_report()]
}

fn plain() -> CardsOptions {
    CardsOptions {
        color: false,
        unicode: true,
        width: 100,
        min_severity: Severity::Note,
        summary: true,
    }
}

#[test]
fn cards_report_unicode() {
    insta::assert_snapshot!(report::cards::render(&all_reports(), &plain()));
}

#[test]
fn cards_report_ascii() {
    let options = CardsOptions {
        unicode: false,
        ..plain()
    };
    insta::assert_snapshot!(report::cards::render(&all_reports(), &options));
}

#[test]
fn cards_quiet_shows_only_errors_but_counts_everything() {
    let options = CardsOptions {
        min_severity: Severity::Error,
        ..plain()
    };
    let text = report::cards::render(&all_reports(), &options);
    assert!(text.contains("gate-underdrive"));
    assert!(!text.contains("pwm-audible"));
    assert!(!text.contains("value-suspicious"));
    assert!(text.ends_with("2 errors, 1 warning, 1 note in 2 files (1 suppressed)\n"));
}

#[test]
fn cards_colour_only_when_asked() {
    let reports = all_reports();
    let off = report::cards::render(&reports, &plain());
    assert!(!off.contains('\u{1b}'), "no escape codes without colour");
    let on = report::cards::render(
        &reports,
        &CardsOptions {
            color: true,
            ..plain()
        },
    );
    assert!(on.contains("\u{1b}["), "escape codes with colour");
}

#[test]
fn cards_summary_names_failed_files() {
    let reports = vec![pump_report(), failed_report()];
    let text = report::cards::render(&reports, &plain());
    assert!(text.ends_with(
        "2 errors, 1 note in 1 file (1 suppressed); 1 file could not be checked: hw/gone.cir\n"
    ));
}

#[test]
fn cards_survive_spans_outside_the_text() {
    let mut sources = SourceMap::new();
    let id = sources.add("x.cir".into(), "x.cir".into(), "t\nµ1 a b\n".into());
    let findings = [
        Finding::new("syntax", Severity::Error, Span::new(id, 3, 4), "inside µ"),
        Finding::new(
            "syntax",
            Severity::Error,
            Span::new(id, 500, 900),
            "past the end",
        ),
        Finding::new(
            "syntax",
            Severity::Error,
            Span::new(FileId(7), 0, 1),
            "no file",
        )
        .with_label(Span::new(FileId(9), 0, 1), "nowhere"),
    ];
    for finding in &findings {
        let text = report::cards::render_finding(finding, &sources, &plain());
        assert!(text.contains(&finding.message));
        assert!(!text.contains("Failed to read"), "{text}");
    }
}

#[test]
fn lines_format_is_one_line_per_finding() {
    let text = report::lines::render(&all_reports(), Severity::Note);
    insta::assert_snapshot!(text, @r"
    hw/pump.cir:3:12: note pwm-audible — VPIN switches at 1 kHz: the pump will whine
    hw/pump.cir:5:1: error gate-underdrive — M1 sees 3.3 V gate-source in the on state; a standard-threshold switch needs about 10 V
    hw/pump.cir:6:1: error flyback-missing — the pump XPUMP is switched by M1 with no freewheeling path
    hw/stirrer.cir:6:1: warning value-suspicious — R1 is 10 MΩ in a gate network; a pull-down of 10 kΩ is usual
    ");
    let errors = report::lines::render(&all_reports(), Severity::Error);
    assert_eq!(errors.lines().count(), 2);
}

#[test]
fn lines_format_keeps_multi_line_messages_on_one_line() {
    let mut sources = SourceMap::new();
    let id = sources.add("a.cir".into(), "a.cir".into(), "t\nR1 a b 1\n".into());
    let report = FileReport {
        path: "a.cir".into(),
        sources,
        findings: vec![Finding::new(
            "syntax",
            Severity::Error,
            Span::new(id, 2, 4),
            "first\nsecond",
        )],
        suppressed: 0,
        configs: Vec::new(),
        failure: None,
    };
    assert_eq!(
        report::lines::render(&[report], Severity::Note),
        "a.cir:2:1: error syntax — first second\n"
    );
}

fn json(reports: &[FileReport]) -> serde_json::Value {
    serde_json::from_str(&report::json::render(reports)).expect("valid JSON")
}

#[test]
fn json_has_the_documented_shape() {
    let mut reports = all_reports();
    reports.push(failed_report());
    let value = json(&reports);
    assert_eq!(value["version"], 1);
    assert_eq!(
        value["summary"],
        serde_json::json!({"errors": 2, "warnings": 1, "notes": 1, "suppressed": 1, "files": 3})
    );
    assert_eq!(
        value["failures"],
        serde_json::json!([{"file": "hw/gone.cir", "message": "cannot read hw/gone.cir: No such file or directory"}])
    );
    let diagnostics = value["diagnostics"].as_array().expect("array");
    assert_eq!(diagnostics.len(), 4);
    let underdrive = &diagnostics[1];
    for key in [
        "rule",
        "severity",
        "message",
        "file",
        "line",
        "column",
        "end_line",
        "end_column",
        "element",
        "instance_path",
        "instances",
        "labels",
        "help",
        "values",
    ] {
        assert!(underdrive.get(key).is_some(), "missing {key}");
    }
    assert_eq!(underdrive["rule"], "gate-underdrive");
    assert_eq!(underdrive["severity"], "error");
    assert_eq!(underdrive["file"], "hw/pump.cir");
    assert_eq!(
        (
            &underdrive["line"],
            &underdrive["column"],
            &underdrive["end_line"],
            &underdrive["end_column"]
        ),
        (
            &serde_json::json!(5),
            &serde_json::json!(1),
            &serde_json::json!(5),
            &serde_json::json!(16)
        )
    );
    assert_eq!(underdrive["element"], "M1");
    assert_eq!(underdrive["instance_path"], serde_json::Value::Null);
    assert_eq!(
        underdrive["values"]["vgs_on"],
        serde_json::json!({"value": 3.3, "unit": "V", "source": "from VPIN PULSE high level", "provenance": "computed"})
    );
    assert_eq!(
        underdrive["labels"][1],
        serde_json::json!({"message": "threshold set here", "file": "hw/parts.lib",
            "line": 2, "column": 1, "end_line": 2, "end_column": 32})
    );
    let hierarchical = &diagnostics[3];
    assert_eq!(hierarchical["instance_path"], "XDRV.R1");
    assert_eq!(hierarchical["instances"][0]["name"], "XDRV");
    assert_eq!(hierarchical["instances"][0]["line"], 3);
}

#[test]
fn json_of_nothing_is_still_complete() {
    let value = json(&[]);
    assert_eq!(
        value,
        serde_json::json!({"version": 1, "diagnostics": [], "failures": [],
            "summary": {"errors": 0, "warnings": 0, "notes": 0, "suppressed": 0, "files": 0}})
    );
}

#[test]
fn json_non_finite_numbers_become_null() {
    let mut report = pump_report();
    report.findings[0].values[0].value = f64::INFINITY;
    let value = json(&[report]);
    assert_eq!(
        value["diagnostics"][0]["values"]["frequency"]["value"],
        serde_json::Value::Null
    );
}

fn sarif_validator() -> jsonschema::Validator {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("testdata/sarif-schema-2.1.0.json");
    let schema: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(path).expect("schema copy")).expect("json");
    jsonschema::validator_for(&schema).expect("schema compiles")
}

fn assert_valid_sarif(text: &str) -> serde_json::Value {
    let value: serde_json::Value = serde_json::from_str(text).expect("valid JSON");
    let validator = sarif_validator();
    let errors: Vec<String> = validator
        .iter_errors(&value)
        .map(|e| format!("{e} at {}", e.instance_path))
        .collect();
    assert!(errors.is_empty(), "SARIF schema errors: {errors:#?}");
    value
}

#[test]
fn sarif_is_valid_against_the_oasis_schema() {
    let mut reports = all_reports();
    reports.push(failed_report());
    let value = assert_valid_sarif(&report::sarif::render(&reports));
    let run = &value["runs"][0];
    assert_eq!(value["version"], "2.1.0");
    assert_eq!(run["tool"]["driver"]["name"], "kickback");
    assert_eq!(run["tool"]["driver"]["version"], env!("CARGO_PKG_VERSION"));
    let results = run["results"].as_array().expect("results");
    assert_eq!(results.len(), 4);
    let underdrive = &results[1];
    assert_eq!(underdrive["ruleId"], "gate-underdrive");
    assert_eq!(underdrive["level"], "error");
    let region = &underdrive["locations"][0]["physicalLocation"];
    assert_eq!(region["artifactLocation"]["uri"], "hw/pump.cir");
    assert_eq!(
        region["region"],
        serde_json::json!({"startLine": 5, "startColumn": 1, "endLine": 5, "endColumn": 16})
    );
    let related = underdrive["relatedLocations"].as_array().expect("related");
    assert_eq!(related.len(), 2);
    assert_eq!(
        related[1]["physicalLocation"]["artifactLocation"]["uri"],
        "hw/parts.lib"
    );
    assert_eq!(related[1]["message"]["text"], "threshold set here");
    let invocation = &run["invocations"][0];
    assert_eq!(invocation["executionSuccessful"], false);
    assert_eq!(
        invocation["toolExecutionNotifications"][0]["locations"][0]["physicalLocation"]
            ["artifactLocation"]["uri"],
        "hw/gone.cir"
    );
}

#[test]
fn sarif_rules_come_from_the_registry_and_pages() {
    let value = assert_valid_sarif(&report::sarif::render(&[]));
    let rules = value["runs"][0]["tool"]["driver"]["rules"]
        .as_array()
        .expect("rules");
    assert_eq!(rules.len(), kickback::rules::REGISTRY.len());
    for (descriptor, info) in rules.iter().zip(kickback::rules::REGISTRY) {
        assert_eq!(descriptor["id"], info.id);
        assert_eq!(descriptor["shortDescription"]["text"], info.summary);
        assert_eq!(
            descriptor["defaultConfiguration"]["level"],
            info.default_severity.as_str()
        );
        assert_eq!(descriptor["help"]["markdown"], info.page);
        let what = report::sarif::page_section(info.page, "The fault").expect("section");
        assert_eq!(descriptor["fullDescription"]["markdown"], what);
    }
    // A finding of a registered rule points at its descriptor.
    let mut sources = SourceMap::new();
    let id = sources.add("a.cir".into(), "a.cir".into(), "t\nR1 a\n".into());
    let report = FileReport {
        path: "a.cir".into(),
        sources,
        findings: vec![Finding::new(
            "syntax",
            Severity::Error,
            Span::new(id, 2, 6),
            "R needs two nodes and a value",
        )],
        suppressed: 0,
        configs: Vec::new(),
        failure: None,
    };
    let value = assert_valid_sarif(&report::sarif::render(&[report]));
    let result = &value["runs"][0]["results"][0];
    let index = result["ruleIndex"].as_u64().expect("index") as usize;
    assert_eq!(rules[index]["id"], "syntax");
}

#[test]
fn renderers_do_not_depend_on_report_order() {
    let forward = all_reports();
    let mut backward = all_reports();
    backward.reverse();
    assert_eq!(
        report::cards::render(&forward, &plain()),
        report::cards::render(&backward, &plain())
    );
    assert_eq!(
        report::json::render(&forward),
        report::json::render(&backward)
    );
    assert_eq!(
        report::sarif::render(&forward),
        report::sarif::render(&backward)
    );
}

#[test]
fn the_schema_check_rejects_broken_sarif() {
    // Guards the test above: the validator must be reading the real schema.
    let mut value: serde_json::Value =
        serde_json::from_str(&report::sarif::render(&all_reports())).expect("json");
    value["runs"][0]["results"][0]["level"] = serde_json::json!("fatal");
    value["runs"][0]["results"][1]["locations"][0]["physicalLocation"]["region"]["startLine"] =
        serde_json::json!(0);
    let validator = sarif_validator();
    assert!(validator.iter_errors(&value).count() >= 2);
}
