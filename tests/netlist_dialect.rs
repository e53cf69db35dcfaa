//! Forms real decks take that simulators of the SPICE family accept: each fixture in
//! `testdata/syntax/` parses clean (checked in `netlist_fixtures.rs`), and here its elements are
//! connected and valued as the simulator would read them.

use kickback::diagnostic::Finding;
use kickback::netlist::{load, FlatElement, FlatNetlist, Limits, Num};
use kickback::source::SourceMap;
use std::path::Path;

fn fixture(name: &str) -> (FlatNetlist, Vec<Finding>) {
    let mut sources = SourceMap::new();
    let path = Path::new("testdata/syntax").join(name);
    let keep = |_: &str| false;
    load(&path, &mut sources, &Limits::default(), &keep).unwrap_or_else(|e| panic!("{name}: {e}"))
}

fn element<'a>(flat: &'a FlatNetlist, path: &str) -> &'a FlatElement {
    flat.elements
        .iter()
        .find(|e| e.path.eq_ignore_ascii_case(path))
        .unwrap_or_else(|| panic!("no element {path}"))
}

fn nodes(flat: &FlatNetlist, path: &str) -> Vec<String> {
    element(flat, path).nodes.clone()
}

fn value(flat: &FlatNetlist, path: &str) -> f64 {
    match element(flat, path).value {
        Some(Num::Known(v)) => v,
        other => panic!("{path}: value {other:?}"),
    }
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * a.abs().max(b.abs())
}

#[test]
fn a_brace_expression_continues_over_plus_lines() {
    let (flat, findings) = fixture("brace_continued.cir");
    assert!(findings.is_empty(), "{findings:#?}");
    assert_eq!(nodes(&flat, "Rg"), ["drv", "g"]);
    assert!(close(value(&flat, "Rg"), 94.0));
    // `{10k *` / a comment line / `+ (1 +` / `+ 1)}`.
    assert_eq!(nodes(&flat, "Rpd"), ["g", "0"]);
    assert!(close(value(&flat, "Rpd"), 20e3));
}

#[test]
fn an_unclosed_brace_is_still_reported_once() {
    let text = "unclosed\nR1 a 0 {2*\n+ 3\nR2 a 0 1k\n";
    let (flat, findings, _) = kickback::netlist::parse_str("t.cir", text);
    assert_eq!(findings.len(), 1, "{findings:#?}");
    assert!(findings[0].message.contains("never closed"));
    assert!(flat.elements.iter().any(|e| e.name == "R2"));
}

#[test]
fn behavioural_resistors_connect_and_evaluate_where_constant() {
    let (flat, findings) = fixture("behavioural_resistor.cir");
    assert!(findings.is_empty(), "{findings:#?}");
    assert_eq!(nodes(&flat, "R1"), ["vbat", "a"]);
    assert!(close(value(&flat, "R1"), 24.0));
    assert!(close(value(&flat, "R2"), 13.0));
    assert!(close(value(&flat, "R3"), 3.0));
    for name in ["R4", "R5", "R6", "R7"] {
        assert_eq!(element(&flat, name).value, Some(Num::Varies), "{name}");
        assert_eq!(element(&flat, name).nodes.len(), 2, "{name}");
    }
}

#[test]
fn code_model_arrays_and_strings_are_read_as_parameters() {
    let (flat, findings) = fixture("code_model_arrays.cir");
    assert!(findings.is_empty(), "{findings:#?}");
    let bridge = flat.models.iter().find(|m| m.name == "dacgate").unwrap();
    assert_eq!(bridge.param("out_high"), Some(Num::Known(10.0)));
    assert_eq!(bridge.param("t_rise"), Some(Num::Varies));
    assert_eq!(bridge.param("t_fall"), Some(Num::Varies));
    let ramp = flat.models.iter().find(|m| m.name == "rampsrc").unwrap();
    assert_eq!(ramp.param("file"), Some(Num::Varies));
    assert_eq!(ramp.param("amplscale"), Some(Num::Varies));
    assert_eq!(nodes(&flat, "Ag"), ["dig", "gate"]);
}

#[test]
fn step_param_defines_its_first_value() {
    let (flat, findings) = fixture("step_param.cir");
    assert!(findings.is_empty(), "{findings:#?}");
    assert!(close(value(&flat, "Rload"), 6.0)); // `list 6 12 24`
    assert!(close(value(&flat, "V1"), 9.0)); // `9 15 3`: start
    assert!(close(value(&flat, "Rgate"), 10.0)); // `oct param rgate 10 1k 2`
    let (flat, findings) = fixture("step_param_included.cir");
    assert!(findings.is_empty(), "{findings:#?}");
    assert!(close(value(&flat, "Rload"), 6.0));
}

#[test]
fn semicolon_and_slash_comment_lines_are_comments() {
    let (flat, findings) = fixture("semicolon_comments.cir");
    assert!(findings.is_empty(), "{findings:#?}");
    let names: Vec<&str> = flat.elements.iter().map(|e| e.name.as_str()).collect();
    assert_eq!(names, ["V1", "Q1", "Rb", "Vdrv", "Lsol", "Dfw"]);
}

#[test]
fn a_param_block_continues_past_comment_and_blank_lines() {
    let (flat, findings) = fixture("param_block_gaps.cir");
    assert!(findings.is_empty(), "{findings:#?}");
    assert!(close(value(&flat, "Rg"), 22.0));
    assert!(close(value(&flat, "Rp"), 10e3));
    assert!(close(value(&flat, "V1"), 12.0));
}

#[test]
fn a_vertical_mosfet_with_thermal_nodes_keeps_its_model_and_nodes() {
    let (flat, findings) = fixture("mosfet_thermal.cir");
    assert!(findings.is_empty(), "{findings:#?}");
    for name in ["M1", "M2", "M3", "M4", "M5"] {
        assert_eq!(
            element(&flat, name).model.as_deref(),
            Some("pwrfet"),
            "{name}"
        );
    }
    // No body terminal on a vertical part: the body is its source, then the thermal nodes.
    assert_eq!(nodes(&flat, "M1"), ["d", "g", "0", "0", "tj", "tc"]);
    assert_eq!(nodes(&flat, "M2"), ["d", "g", "0", "0", "0", "tj2"]);
    assert_eq!(nodes(&flat, "M3"), ["d", "g", "0"]);
    assert_eq!(nodes(&flat, "M4"), ["d", "g", "0", "0", "tj4", "tc4"]);
    assert_eq!(nodes(&flat, "M5"), ["d", "g", "0", "0", "tj5"]);
}

#[test]
fn dc_in_parentheses_is_the_dc_value() {
    let (flat, findings) = fixture("dc_in_parens.cir");
    assert!(findings.is_empty(), "{findings:#?}");
    assert!(close(value(&flat, "V1"), 12.0));
    assert_eq!(value(&flat, "V2"), 0.0);
    assert!(close(value(&flat, "I1"), 2e-3));
    // `DC ac=1 AC 1`: a bare `DC` gives no DC value, and the line still connects.
    assert_eq!(nodes(&flat, "V3"), ["acin", "0"]);
}

#[test]
fn if_blocks_read_one_branch() {
    let (flat, findings) = fixture("if_blocks.cir");
    assert!(findings.is_empty(), "{findings:#?}");
    let count = |name: &str| flat.elements.iter().filter(|e| e.name == name).count();
    assert_eq!(count("Rload"), 1);
    assert_eq!(count("Rgate"), 1);
    // `variant == 2` holds; `drive > 1` is not a constant here, so the first branch is read.
    assert!(close(value(&flat, "Rload"), 12.0));
    assert!(close(value(&flat, "Rgate"), 47.0));
}

#[test]
fn the_multiplier_puts_passives_in_parallel() {
    let (flat, findings) = fixture("multiplier.cir");
    assert!(findings.is_empty(), "{findings:#?}");
    // m identical parts in parallel: R/m, C·m, L/m (circuit theory, from memory).
    assert!(close(value(&flat, "Rsense"), 0.1));
    assert!(close(value(&flat, "Cbulk"), 400e-6));
    assert!(close(value(&flat, "Lch"), 5e-6));
    assert_eq!(element(&flat, "D1").multiplier(), 3.0);
    assert_eq!(element(&flat, "Rload").multiplier(), 1.0);
}

#[test]
fn a_library_whose_first_line_is_a_subckt_has_no_title() {
    let (flat, findings) = fixture("library_first_subckt.lib");
    assert!(findings.is_empty(), "{findings:#?}");
    assert!(flat.is_library);
    assert!(flat.title.is_empty());
    assert!(flat.elements.is_empty());
    assert_eq!(flat.subckt_names, ["halfbridge"]);
    assert_eq!(flat.models.len(), 2);
}

#[test]
fn a_file_of_definitions_is_a_library() {
    let (flat, findings) = fixture("library_definitions_only.sub");
    assert!(findings.is_empty(), "{findings:#?}");
    assert!(flat.is_library);
    assert_eq!(flat.subckt_names, ["gatedrv"]);
}

#[test]
fn a_library_definition_with_a_broken_line_is_reported() {
    let (flat, findings) = fixture("library_with_error.lib");
    assert!(flat.is_library);
    assert_eq!(findings.len(), 1, "{findings:#?}");
    assert_eq!(findings[0].rule, "syntax");
    assert!(findings[0].message.contains("`R1`"));
}

#[test]
fn a_deck_is_not_a_library() {
    let (flat, _) = fixture("step_param.cir");
    assert!(!flat.is_library);
    assert_eq!(flat.title, "Motor driver swept over load and supply");
}
