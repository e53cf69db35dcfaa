//! Every fixture in `testdata/syntax/` gives exactly the findings it should: none for the decks
//! in the form real exports take, the listed ones for the decks that are wrong on purpose.

use kickback::diagnostic::Finding;
use kickback::netlist::{load, FlatElement, FlatNetlist, Limits, Num, Waveform};
use kickback::source::SourceMap;
use std::path::Path;

fn fixture(name: &str) -> (FlatNetlist, Vec<Finding>, SourceMap) {
    let mut sources = SourceMap::new();
    let path = Path::new("testdata/syntax").join(name);
    let keep = |n: &str| n.eq_ignore_ascii_case("ne555");
    let (flat, findings) = load(&path, &mut sources, &Limits::default(), &keep)
        .unwrap_or_else(|e| panic!("{name}: {e}"));
    (flat, findings, sources)
}

fn summary(findings: &[Finding], sources: &SourceMap) -> Vec<String> {
    findings
        .iter()
        .map(|f| {
            let loc = sources.locate(f.span);
            format!("{}:{}:{} {}", loc.file, loc.line, f.rule, f.message)
        })
        .collect()
}

fn element<'a>(flat: &'a FlatNetlist, path: &str) -> &'a FlatElement {
    flat.elements
        .iter()
        .find(|e| e.path == path)
        .unwrap_or_else(|| panic!("no element {path}"))
}

fn value(flat: &FlatNetlist, path: &str) -> f64 {
    match element(flat, path).value {
        Some(Num::Known(v)) => v,
        other => panic!("{path}: value {other:?}"),
    }
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-12 * a.abs().max(b.abs())
}

const CLEAN: &[&str] = &[
    "behavioural_resistor.cir",
    "behavioural_sources.cir",
    "brace_continued.cir",
    "code_model_arrays.cir",
    "dc_in_parens.cir",
    "if_blocks.cir",
    "model_version_number.cir",
    "mosfet_thermal.cir",
    "multiplier.cir",
    "param_block_gaps.cir",
    "semicolon_comments.cir",
    "step_param.cir",
    "step_param_included.cir",
    "code_models.cir",
    "comments_dollar_slash.cir",
    "continuation_model.cir",
    "continuation_x_line.cir",
    "control_blocks.cir",
    "crlf_bom.cir",
    "every_element_letter.cir",
    "expressions.cir",
    "include_subfolder.cir",
    "indented_title.cir",
    "instance_params.cir",
    "lib_sections.cir",
    "micro_sign.cir",
    "net_names_with_parens.cir",
    "node_pairs_in_parens.cir",
    "micro_sign_latin1.cir",
    "missing_include.cir",
    "nested_subckt_params.cir",
    "no_end_no_newline.cir",
    "odd_node_names.cir",
    "odd_suffixes.cir",
    "params_forms.cir",
    "source_forms.cir",
    "blank_dc_value.cir",
    // Quoted attribute values are bill-of-materials text, not parameters.
    "quoted_attributes.cir",
    // A `.model` card's `)` alone on the line after its `+` lines.
    "model_paren_own_line.cir",
    // A schematic tool's `.ALIASES` name map is not circuit.
    "aliases_block.cir",
    // Monte-Carlo spreads are read at their nominal values.
    "monte_carlo_functions.cir",
    // Parses clean; the missing library is the rules' business (one path, see below).
    "lib_path_with_spaces.cir",
    "suppressions.cir",
    "text_after_end.cir",
    "title_looks_like_element.cir",
];

#[test]
fn real_exports_parse_without_findings() {
    for name in CLEAN {
        let (flat, findings, sources) = fixture(name);
        assert!(
            findings.is_empty(),
            "{name}: {:#?}",
            summary(&findings, &sources)
        );
        assert!(!flat.elements.is_empty(), "{name}: no elements");
    }
}

/// File suffix, line, rule and part of the message of one expected finding.
type Expected = (&'static str, usize, &'static str, &'static str);

/// Each deck that is wrong on purpose, with its findings in order.
const WRONG: &[(&str, &[Expected])] = &[
    (
        "syntax_errors.cir",
        &[
            ("syntax_errors.cir", 3, "syntax", "expected 4 nodes and a model name after `M1`, found 4 tokens"),
            ("syntax_errors.cir", 4, "syntax", "expected 3 nodes and a model name after `Q1`, found 2 tokens"),
            ("syntax_errors.cir", 5, "syntax", "expected 2 nodes after `R1`, found 1 token"),
            ("syntax_errors.cir", 6, "syntax", "expected 2 nodes and a model name after `D1`"),
            ("syntax_errors.cir", 7, "syntax", "expected a number, a name or `(`"),
            ("syntax_errors.cir", 9, "syntax", "`X1` connects 3 nodes but subcircuit `twoport` has 2 ports"),
            ("syntax_errors.cir", 13, "syntax", "unexpected `(`"),
            ("syntax_errors.cir", 14, "syntax", "expected an element name or a dot card"),
            ("syntax_errors.cir", 15, "syntax", "`.ends` with no `.subckt`"),
            ("syntax_errors.cir", 16, "syntax", "never closed"),
        ],
    ),
    (
        "element_unknown.cir",
        &[("element_unknown.cir", 3, "element-unknown", "`U1`")],
    ),
    (
        // One finding per letter, not one per line.
        "element_unknown_many.cir",
        &[
            ("element_unknown_many.cir", 7, "element-unknown", "so is 1 more such line"),
            ("element_unknown_many.cir", 9, "element-unknown", "`U3`"),
            ("element_unknown_many.cir", 10, "element-unknown", "`Y1`"),
        ],
    ),
    (
        "param_cycle.cir",
        &[("param_cycle.cir", 2, "parameter-invalid", "parameter cycle: ra → rb → ra")],
    ),
    (
        "param_invalid.cir",
        &[
            ("param_invalid.cir", 2, "parameter-invalid", "`rmissing` is not defined"),
            ("param_invalid.cir", 3, "parameter-invalid", "division by zero"),
            ("param_invalid.cir", 4, "parameter-invalid", "too large"),
            ("param_invalid.cir", 5, "parameter-invalid", "nested more than 256 levels"),
            ("param_invalid.cir", 8, "parameter-invalid", "`undefined_too` is not defined"),
            ("param_invalid.cir", 9, "parameter-invalid", "sqrt of a negative number"),
        ],
    ),
    (
        "include_cycle_a.cir",
        &[(
            "include_cycle_b.cir",
            2,
            "include-cycle",
            "include cycle: testdata/syntax/include_cycle_a.cir → testdata/syntax/include_cycle_b.cir → testdata/syntax/include_cycle_a.cir",
        )],
    ),
    (
        // Used as the top deck, the other half's first line is an element line, not a title.
        "include_cycle_b.cir",
        &[
            ("include_cycle_a.cir", 1, "syntax", "after the model name of `Deck`"),
            ("include_cycle_a.cir", 2, "include-cycle", "include cycle"),
        ],
    ),
    (
        "include_refused.cir",
        &[
            ("include_refused.cir", 2, "include-refused", "`../../Cargo.toml` is outside"),
            ("include_refused.cir", 3, "include-refused", "`/etc/hostname` is outside"),
        ],
    ),
    (
        "recursive_subckt.cir",
        &[("recursive_subckt.cir", 7, "syntax", "recursive instantiation")],
    ),
    (
        "foreign_keyword_style.cir",
        &[("foreign_keyword_style.cir", 2, "dialect-foreign", "keyword-style netlist")],
    ),
    (
        "foreign_type_first.cir",
        &[("foreign_type_first.cir", 2, "dialect-foreign", "type-first netlist")],
    ),
    (
        // The first line is read as the title; the rest is enough to tell the family.
        "foreign_keyword_first_line.cir",
        &[("foreign_keyword_first_line.cir", 2, "dialect-foreign", "5 of 5 statements")],
    ),
    (
        // Placeholders for code-model devices: one note for the file's `U` lines, and their
        // nets count as connected.
        "code_model_placeholders.cir",
        &[(
            "code_model_placeholders.cir",
            4,
            "element-unknown",
            "stands for a mixed-signal code-model device",
        )],
    ),
    (
        // A layout tool's netlists: one note each, however many lines.
        "foreign_parenthesised.cir",
        &[("foreign_parenthesised.cir", 2, "dialect-foreign", "parenthesised netlist")],
    ),
    (
        "foreign_table.cir",
        &[("foreign_table.cir", 2, "dialect-foreign", "table netlist")],
    ),
    (
        "foreign_behavioural.cir",
        &[("foreign_behavioural.cir", 2, "dialect-foreign", "Verilog-A/AMS")],
    ),
];

#[test]
fn wrong_decks_give_their_findings_and_no_others() {
    for (name, expected) in WRONG {
        let (_, findings, sources) = fixture(name);
        let got = summary(&findings, &sources);
        assert_eq!(got.len(), expected.len(), "{name}: {got:#?}");
        for ((file, line, rule, text), f) in expected.iter().zip(&findings) {
            let loc = sources.locate(f.span);
            assert!(
                loc.file.ends_with(file)
                    && loc.line == *line
                    && f.rule == *rule
                    && f.message.contains(text),
                "{name}: expected {file}:{line} {rule} `{text}`, got {:#?}",
                got
            );
        }
    }
}

#[test]
fn every_fixture_is_listed() {
    let mut listed: Vec<&str> = CLEAN.to_vec();
    listed.extend(WRONG.iter().map(|(n, _)| *n));
    for entry in std::fs::read_dir("testdata/syntax").unwrap() {
        let name = entry.unwrap().file_name().into_string().unwrap();
        if name.ends_with(".cir") {
            assert!(listed.contains(&name.as_str()), "{name} has no expectation");
        }
    }
}

#[test]
fn title_is_the_first_line_even_when_it_looks_like_an_element() {
    let (flat, _, _) = fixture("title_looks_like_element.cir");
    assert!(flat.title.starts_with("R1 vcc out 10k"));
    let names: Vec<&str> = flat.elements.iter().map(|e| e.name.as_str()).collect();
    assert_eq!(names, ["V1", "R2", "R3"]);
}

#[test]
fn nothing_after_end_is_read() {
    let (flat, _, _) = fixture("text_after_end.cir");
    assert_eq!(flat.elements.len(), 7);
    assert!(flat
        .elements
        .iter()
        .all(|e| e.name != "R9" && e.name != "M1"));
}

#[test]
fn continuation_lines_join_the_statement_and_its_span() {
    let (flat, _, sources) = fixture("continuation_x_line.cir");
    let m1 = element(&flat, "XQ1.M1");
    assert_eq!(m1.nodes, ["d", "XQ1.g", "XQ1.s", "XQ1.s"]);
    assert!(close(value(&flat, "XQ1.Rg"), 47.0));
    assert!(close(value(&flat, "XQ1.Rs"), 0.011));
    let step = &m1.instances[0];
    let loc = sources.locate(step.span);
    assert_eq!((loc.line, loc.end_line), (11, 15));
    assert_eq!(sources.snippet(step.span).lines().last(), Some("+rs=10m"));

    let (flat, _, _) = fixture("continuation_model.cir");
    let d = &flat.models[0];
    assert_eq!((d.name.as_str(), d.kind.as_str()), ("dfly", "D"));
    assert_eq!(d.params.len(), 5);
    assert_eq!(d.param("bv"), Some(Num::Known(100.0)));
    assert_eq!(flat.models[1].param("lambda"), Some(Num::Known(0.01)));
    assert_eq!(element(&flat, "M1").model_index, Some(1));
}

#[test]
fn micro_sign_in_utf8_and_in_latin1() {
    for name in ["micro_sign.cir", "micro_sign_latin1.cir"] {
        let (flat, _, sources) = fixture(name);
        assert!(close(value(&flat, "C1"), 2200e-6), "{name}");
        assert!(close(value(&flat, "C2"), 4.7e-6), "{name}");
        assert!(close(value(&flat, "L1"), 47e-6), "{name}");
        let (_, file) = sources.files().next().unwrap();
        assert!(
            file.text.contains("2200µ"),
            "{name}: decoded text keeps the sign"
        );
    }
    let (flat, _, _) = fixture("micro_sign.cir");
    assert!(close(value(&flat, "C3"), 100e-6), "Greek mu");
}

#[test]
fn odd_suffixes() {
    let (flat, _, _) = fixture("odd_suffixes.cir");
    let cases = [
        ("V1", 12.0),
        ("R1", 6800.0),
        ("R2", 0.1),
        ("R3", 4700.0),
        ("R4", 1e12),
        ("C1", 10e-6),
        ("L1", 1.5e-3),
        ("R5", 1e6),
        ("R6", 2.2e6),
        ("R7", 254e-6),
        ("C2", 0.5e-6),
        ("C3", 1e-6),
        ("I1", -2.2e-9),
        ("R8", 1e3),
    ];
    for (name, want) in cases {
        assert!(
            close(value(&flat, name), want),
            "{name}: {}",
            value(&flat, name)
        );
    }
}

#[test]
fn expressions_evaluate_or_vary() {
    let (flat, _, _) = fixture("expressions.cir");
    assert!(close(value(&flat, "Rload"), 240.0));
    assert!(close(value(&flat, "Rg"), 22.0));
    assert!(close(value(&flat, "R1"), 5000.0), "mix = 2 + 1 + 2");
    let model = &flat.models[0];
    assert!(close(
        model.param("vto").and_then(Num::known).unwrap(),
        2.0 * 1f64.tanh()
    ));
    assert!(close(model.param("kp").and_then(Num::known).unwrap(), 2.4));
    // lg = 1 + 0 + 2; trig = 0+1+0+pi/4+0+1; rnd = 1+2+2+3-1; logic = 1
    let r2 = 3000.0 + 2.0 + std::f64::consts::FRAC_PI_4 + 7.0 + 1.0;
    assert!(close(value(&flat, "R2"), r2));
    match &element(&flat, "Vg").source.as_ref().unwrap().wave {
        Waveform::Pulse { v2, delay, .. } => assert_eq!((*v2, *delay), (15.0, 10e-3)),
        other => panic!("{other:?}"),
    }
    for varies in ["B1", "B2", "E1", "R3"] {
        assert_eq!(element(&flat, varies).value, Some(Num::Varies), "{varies}");
    }
    assert_eq!(element(&flat, "E1").nodes, ["ref", "0"]);
}

#[test]
fn instance_parameters_are_kept_with_lower_case_keys() {
    let (flat, _, _) = fixture("instance_params.cir");
    let l = element(&flat, "Lmot");
    for (key, want) in [
        ("rser", 3.1),
        ("rpar", 10e3),
        ("cpar", 1e-9),
        ("ic", 0.0),
        ("rated_voltage", 6.0),
    ] {
        assert_eq!(l.param(key), Some(Num::Known(want)), "{key}");
    }
    assert!(l
        .params
        .iter()
        .all(|(k, _)| k.chars().all(|c| !c.is_ascii_uppercase())));
    let r = element(&flat, "Rsense");
    assert_eq!(r.param("tc"), Some(Num::Known(0.0039)));
    assert_eq!(r.param("power_rating"), Some(Num::Known(0.5)));
    assert_eq!(r.param("m"), Some(Num::Known(2.0)));
    assert_eq!(element(&flat, "V1").param("rser"), Some(Num::Known(0.05)));
    assert_eq!(
        element(&flat, "Cbulk").param("voltage_rating"),
        Some(Num::Known(25.0))
    );
    assert!(close(value(&flat, "Cbulk"), 470e-6));
}

#[test]
fn lib_sections_read_only_the_named_section() {
    let (flat, _, sources) = fixture("lib_sections.cir");
    assert_eq!(flat.models.len(), 2, "only the typ section's models");
    assert_eq!(flat.models[0].param("vto"), Some(Num::Known(2.0)));
    assert_eq!(element(&flat, "Xcoil.Cs").nodes, ["Xcoil.m", "d"]);
    let names: Vec<String> = sources.files().map(|(_, f)| f.name.clone()).collect();
    assert_eq!(
        names,
        [
            "testdata/syntax/lib_sections.cir",
            "testdata/syntax/lib/corners.lib"
        ]
    );
}

#[test]
fn includes_are_read_relative_to_the_including_file() {
    let (flat, _, sources) = fixture("include_subfolder.cir");
    assert_eq!(flat.models.len(), 2);
    assert!(element(&flat, "Dfw").model_index.is_some());
    assert_eq!(element(&flat, "Xsnub.Cs").nodes, ["Xsnub.m", "vbat"]);
    let names: Vec<String> = sources.files().map(|(_, f)| f.name.clone()).collect();
    assert_eq!(
        names,
        [
            "testdata/syntax/include_subfolder.cir",
            "testdata/syntax/sub/parts.lib",
            "testdata/syntax/sub/more.lib"
        ]
    );
}

#[test]
fn refused_includes_are_never_opened() {
    let (_, _, sources) = fixture("include_refused.cir");
    assert_eq!(sources.files().count(), 1);
}

#[test]
fn missing_includes_are_recorded_not_reported() {
    let (flat, findings, _) = fixture("missing_include.cir");
    assert!(findings.is_empty());
    let paths: Vec<&str> = flat
        .missing_includes
        .iter()
        .map(|m| m.path.as_str())
        .collect();
    assert_eq!(
        paths,
        ["models/not_here.lib", "models/corners.lib (section typ)"]
    );
    assert_eq!(element(&flat, "M1").model.as_deref(), Some("nmissing"));
    assert_eq!(element(&flat, "M1").model_index, None);
}

#[test]
fn every_letter_connects_as_spice_says() {
    let (flat, _, _) = fixture("every_element_letter.cir");
    let nodes = |p: &str| element(&flat, p).nodes.clone();
    assert_eq!(nodes("Q1"), ["c", "b", "0"]);
    assert_eq!(nodes("Q2"), ["c", "b", "0", "0"]);
    assert_eq!(nodes("M1").len(), 4);
    assert_eq!(nodes("J1").len(), 3);
    assert_eq!(nodes("S1"), ["a", "b", "g", "0"]);
    assert_eq!(nodes("W1"), ["a", "b"]);
    assert_eq!(element(&flat, "W1").refs, ["V1"]);
    assert_eq!(nodes("E1"), ["e", "0", "a", "0"]);
    assert_eq!(nodes("F1"), ["f", "0"]);
    assert_eq!(element(&flat, "H1").refs, ["V1"]);
    assert_eq!(element(&flat, "K1").refs, ["L1", "L2"]);
    assert_eq!(value(&flat, "K1"), 0.95);
    assert_eq!(nodes("T1"), ["a", "0", "b", "0"]);
    assert_eq!(nodes("A1"), ["a", "b", "out"]);
    assert_eq!(nodes("X1.Rb"), ["a", "b"]);
    assert_eq!(
        element(&flat, "I1").source.as_ref().and_then(|s| s.dc),
        Some(1e-3)
    );
    let letters: String = flat.elements.iter().map(|e| e.letter).collect();
    assert_eq!(letters, "RCLLKDQQMJVIEFGHBSWRTA");
}

#[test]
fn controlled_and_behavioural_forms() {
    let (flat, _, _) = fixture("behavioural_sources.cir");
    let nodes = |p: &str| element(&flat, p).nodes.clone();
    assert_eq!(nodes("B1"), ["emf", "0"]);
    assert_eq!(nodes("B2"), ["0", "speed"]);
    assert_eq!(
        element(&flat, "B2").value_text.as_deref(),
        Some("I(Vsense) * 50 - V(speed)/1k")
    );
    assert_eq!(value(&flat, "E1"), 0.5);
    assert_eq!(nodes("E2"), ["b", "0"]);
    assert_eq!(nodes("E3"), ["c", "0"]);
    assert_eq!(nodes("E4"), ["d", "0"]);
    assert_eq!(nodes("E5"), ["e", "0", "a", "0", "b", "0"]);
    assert_eq!(nodes("G3"), ["f", "0", "a", "0"]);
    assert_eq!(element(&flat, "F2").refs, ["Vsense", "V1"]);
    assert_eq!(
        element(&flat, "Vsense").source.as_ref().and_then(|s| s.dc),
        Some(0.0)
    );
}

#[test]
fn code_model_ports() {
    let (flat, _, _) = fixture("code_models.cir");
    let nodes = |p: &str| element(&flat, p).nodes.clone();
    assert_eq!(nodes("A1"), ["clk", "en", "q", "qb"]);
    assert_eq!(nodes("A2"), ["in_p", "in_n", "out", "0"]);
    assert_eq!(nodes("A3"), ["a", "b", "c", "y"]);
    assert_eq!(nodes("A4"), ["clk"]);
    assert_eq!(element(&flat, "A4").refs, ["V1"]);
    assert_eq!(nodes("A5"), ["d0", "d1", "bus_out"]);
    assert_eq!(element(&flat, "A3").model.as_deref(), Some("nand3"));
}

#[test]
fn node_names_with_punctuation() {
    let (flat, _, _) = fixture("odd_node_names.cir");
    assert_eq!(element(&flat, "V1").nodes, ["+V", "0"]);
    assert_eq!(element(&flat, "R2").nodes, ["net.1", "N$3"]);
    assert_eq!(element(&flat, "R5").nodes, ["n#1", "bus[0]"]);
    assert_eq!(element(&flat, "R7").nodes, ["x:y", "why?"]);
    assert_eq!(value(&flat, "V2"), -12.0);
}

#[test]
fn decks_without_end_bom_crlf_and_indentation() {
    let (flat, _, _) = fixture("no_end_no_newline.cir");
    assert_eq!(value(&flat, "Vg"), 10.0);
    let (flat, _, sources) = fixture("crlf_bom.cir");
    assert_eq!(
        flat.title,
        "Windows export with a byte-order mark and CRLF line ends"
    );
    assert_eq!(element(&flat, "R1").param("tc"), Some(Num::Known(0.001)));
    assert_eq!(element(&flat, "L1").nodes, ["d", "0"]);
    assert!(!sources.snippet(element(&flat, "L1").span).contains('\r'));
    let (flat, _, _) = fixture("indented_title.cir");
    assert_eq!(flat.title, "Relay driver, indented export");
    assert_eq!(flat.elements.len(), 7);
    assert_eq!(
        flat.models.len(),
        4,
        "two local, two from the included file"
    );
}

#[test]
fn control_blocks_and_analysis_cards_are_skipped() {
    let (flat, _, _) = fixture("control_blocks.cir");
    let names: Vec<&str> = flat.elements.iter().map(|e| e.name.as_str()).collect();
    assert_eq!(names, ["V1", "R1", "R2", "C1", "Rl"]);
    assert_eq!(flat.globals, ["vcc"]);
}

#[test]
fn comments_of_every_style_are_removed() {
    let (flat, _, _) = fixture("comments_dollar_slash.cir");
    assert_eq!(value(&flat, "V1"), 12.0);
    assert_eq!(element(&flat, "R1").nodes, ["vbat", "d"]);
    assert_eq!(element(&flat, "R2").nodes, ["x", "N$3"]);
    assert_eq!(element(&flat, "D1").model.as_deref(), Some("dfw"));
}

#[test]
fn suppression_comments() {
    let (flat, _, _) = fixture("suppressions.cir");
    let got: Vec<(Vec<String>, Option<String>, usize)> = flat
        .suppressions
        .iter()
        .map(|s| (s.rules.clone(), s.reason.clone(), s.target_line))
        .collect();
    let own = |r: &[&str], reason: Option<&str>, line| {
        (
            r.iter().map(|s| s.to_string()).collect::<Vec<_>>(),
            reason.map(str::to_string),
            line,
        )
    };
    assert_eq!(
        got,
        [
            own(
                &["flyback-missing"],
                Some("the motor has a built-in suppressor"),
                4
            ),
            own(
                &["gate-underdrive", "switch-dissipation"],
                Some("logic-level part"),
                5
            ),
            own(&["pwm-audible"], None, 6),
            own(&["value-suspicious"], Some("bleeder"), 7),
            own(&["net-dangling"], None, 11),
            own(
                &["resistor-overpower"],
                Some("trailing a continuation line"),
                13
            ),
        ]
    );
}

#[test]
fn a_blank_dc_value_is_unknown_and_a_bare_source_is_zero() {
    let (flat, _, _) = fixture("blank_dc_value.cir");
    let spec = |p: &str| element(&flat, p).source.clone().unwrap();
    // SPICE3 manual: an independent source with no value is 0 V (an ammeter); a `DC` keyword
    // with its value left blank is a placeholder, not a value.
    assert_eq!(spec("V1").dc, None);
    assert_eq!(spec("V2").dc, Some(0.0));
}

#[test]
fn independent_sources_in_every_form() {
    let (flat, _, _) = fixture("source_forms.cir");
    let spec = |p: &str| element(&flat, p).source.clone().unwrap();
    assert_eq!(spec("Vbat").dc, Some(12.0));
    assert_eq!(
        spec("Vac").dc,
        Some(0.0),
        "SPICE's DC value of an AC-only source is 0"
    );
    let p1 = spec("Vp1");
    assert_eq!(p1.dc, Some(0.0));
    assert_eq!(p1.levels(), Some((0.0, 5.0)));
    assert_eq!(p1.frequency(), Some(10e3));
    assert!(close(p1.duty().unwrap(), (40e-6 + 10e-9) / 100e-6));
    let p2 = spec("Vp2");
    assert_eq!(p2.levels(), Some((0.0, 3.3)));
    assert!(close(p2.frequency().unwrap(), 1e3));
    let p3 = spec("Vp3");
    assert_eq!(p3.levels(), Some((0.0, 10.0)));
    assert!(close(p3.frequency().unwrap(), 50.0));
    assert_eq!(spec("Vs").levels(), Some((0.0, 5.0)));
    assert_eq!(spec("Vs").dc, Some(2.5));
    assert_eq!(spec("Vs2").frequency(), Some(1e3));
    assert_eq!(element(&flat, "Vs2").param("rser"), Some(Num::Known(1.0)));
    match spec("Vpwl").wave {
        Waveform::Pwl(points) => assert_eq!(points.len(), 4),
        other => panic!("{other:?}"),
    }
    assert_eq!(spec("Vpwl").levels(), Some((0.0, 5.0)));
    assert_eq!(spec("Vexp").wave, Waveform::Other("EXP".into()));
    assert_eq!(spec("Vexp").dc, Some(0.0));
    assert_eq!(spec("Ibias").dc, Some(2e-3));
    assert_eq!(spec("Vplain").dc, Some(5.0));
    assert_eq!(value(&flat, "Vneg"), -12.0);
}

#[test]
fn params_forms_and_defaults() {
    let (flat, _, _) = fixture("params_forms.cir");
    let cases = [
        ("X1.Rg", 47.0),
        ("X1.Rpd", 100e3),
        ("X2.Rg", 33.0),
        ("X2.Rpd", 220e3),
        ("X3.Rm", 2.7),
        ("X3.Lm", 1.2e-3),
        ("X4.Rpd", 47e3),
        ("X5.Ra", 5.0),
        ("Rpu", 10e3),
    ];
    for (p, want) in cases {
        assert!(close(value(&flat, p), want), "{p}");
    }
    assert_eq!(flat.subckt_names, ["gatedrv", "pump", "drv3"]);
}

#[test]
fn nested_definitions_and_parameter_scopes() {
    let (flat, _, _) = fixture("nested_subckt_params.cir");
    assert_eq!(flat.elements.len(), 11);
    assert_eq!(
        element(&flat, "XA.Xhi.M1").param("w"),
        Some(Num::Known(6e-6))
    );
    assert_eq!(
        element(&flat, "XB.Xhi.M1").param("w"),
        Some(Num::Known(2e-6))
    );
    assert_eq!(value(&flat, "XA.Rgh"), 44.0);
    assert_eq!(value(&flat, "XB.Rgh"), 20.0);
    assert_eq!(element(&flat, "XA.Xhi.M1").nodes, ["vp", "XA.gh", "a", "a"]);
    assert_eq!(element(&flat, "XA.Xlo.M1").model_index, Some(0));
}

#[test]
fn foreign_decks_get_one_finding() {
    let (flat, findings, _) = fixture("foreign_keyword_style.cir");
    assert_eq!(findings.len(), 1);
    assert!(flat.elements.is_empty());
    assert!(findings[0].help.is_some());
}

/// `E1 (out 0) (in 0) -10`: the parentheses around node pairs are separators.
#[test]
fn node_pairs_in_parentheses_connect_like_plain_nodes() {
    let (flat, _, _) = fixture("node_pairs_in_parens.cir");
    assert_eq!(element(&flat, "E1").nodes, ["out", "0", "in", "0"]);
    assert!(close(value(&flat, "E1"), -10.0));
    assert_eq!(element(&flat, "G1").nodes, ["sink", "0", "in", "0"]);
    assert_eq!(element(&flat, "F1").nodes, ["mir", "0"]);
    assert_eq!(element(&flat, "E2").nodes, ["poly", "0", "in", "0"]);
}

/// `Net-(U1-DIS)`: a group right after a dash is part of the net name; `PULSE(` and `POLY(1)`
/// stay groups.
#[test]
fn net_names_keep_their_parentheses() {
    let (flat, _, _) = fixture("net_names_with_parens.cir");
    assert_eq!(element(&flat, "R2").nodes, ["Net-(U1-DIS)", "Net-(U1-THR)"]);
    assert_eq!(
        element(&flat, "R3").nodes,
        ["Net-(U1-THR)", "unconnected-(J1-Pad3)"]
    );
    assert!(matches!(
        element(&flat, "V2").source.as_ref().map(|s| &s.wave),
        Some(Waveform::Pulse { .. })
    ));
    assert_eq!(element(&flat, "E1").nodes, ["ctl", "GND", "pwm", "GND"]);
}

/// `$` opens a comment only as a word of its own; `$N_0001` is a node name.
#[test]
fn dollar_node_names_are_not_comments() {
    let (flat, _, _) = fixture("comments_dollar_slash.cir");
    assert_eq!(element(&flat, "R3").nodes, ["vbat", "$N_0001"]);
    assert!(close(value(&flat, "R3"), 1e3));
    assert_eq!(element(&flat, "R4").nodes, ["$N_0001", "0"]);
}

#[test]
fn an_unquoted_lib_path_with_spaces_is_one_path() {
    // Some simulators write their installed libraries as `.lib C:\Program Files\...`: one
    // path, not a file `C:\Program` and a section `Files\...`.
    let (flat, _, _) = fixture("lib_path_with_spaces.cir");
    let paths: Vec<&str> = flat
        .missing_includes
        .iter()
        .map(|m| m.path.as_str())
        .collect();
    assert_eq!(paths, ["C:\\Program Files\\sim\\lib\\cmp\\standard.dio"]);
}

#[test]
fn a_model_closed_on_its_own_line_keeps_its_parameters() {
    let (flat, _, _) = fixture("model_paren_own_line.cir");
    let model = flat
        .models
        .iter()
        .find(|m| m.name == "DFW")
        .expect("model DFW");
    let names: Vec<&str> = model.params.iter().map(|(k, _)| k.as_str()).collect();
    assert_eq!(names.len(), 3, "{names:?}");
    assert!(
        names.iter().any(|k| k.eq_ignore_ascii_case("bv")),
        "{names:?}"
    );
}

#[test]
fn monte_carlo_spreads_are_read_at_their_nominal_values() {
    // mc(x, tol), gauss(x, rel, sigmas) and agauss(x, abs, sigmas) each spread a nominal x by a
    // tolerance (simulators' manuals, from memory); a check judges the nominal design.
    let (flat, _, _) = fixture("monte_carlo_functions.cir");
    let value = |name: &str| {
        flat.elements
            .iter()
            .find(|e| e.name == name)
            .and_then(|e| e.value)
            .and_then(|v| v.known())
    };
    assert_eq!(value("R1"), Some(10e3));
    assert_eq!(value("R2"), Some(4.7e3));
    assert!((value("C1").unwrap_or(0.0) - 100e-9).abs() < 1e-18);
}

#[test]
fn an_aliases_block_holds_no_elements() {
    let (flat, _, _) = fixture("aliases_block.cir");
    let names: Vec<&str> = flat.elements.iter().map(|e| e.name.as_str()).collect();
    assert_eq!(names, ["V1", "R_R1", "C_C1"]);
}
