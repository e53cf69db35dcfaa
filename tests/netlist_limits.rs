//! Hostile inputs finish quickly, without deep recursion, and say what they hit.

use kickback::netlist::{parse_str, Num};
use std::fmt::Write;
use std::time::Instant;

fn timed(
    text: &str,
) -> (
    kickback::netlist::FlatNetlist,
    Vec<kickback::diagnostic::Finding>,
    f64,
) {
    let started = Instant::now();
    let (flat, findings, _) = parse_str("hostile.cir", text);
    (flat, findings, started.elapsed().as_secs_f64())
}

#[test]
fn deeply_nested_definitions() {
    let mut deck = String::from("Nested definitions\n");
    for i in 0..5000 {
        let _ = writeln!(deck, ".subckt s{i} a\nX{i} a s{i}x\nR{i} a 0 1");
    }
    for _ in 0..5000 {
        deck.push_str(".ends\n");
    }
    deck.push_str("X1 n s0\n");
    let (flat, findings, secs) = timed(&deck);
    assert!(secs < 5.0, "{secs}");
    assert!(findings
        .iter()
        .any(|f| f.message.contains("nested more than 64 levels")));
    assert_eq!(
        flat.elements.len(),
        2,
        "s0's resistor and its unresolved X line"
    );
}

#[test]
fn parameter_chains_defined_backwards() {
    let mut deck = String::from("Backward chain\n");
    for i in 0..2000 {
        let _ = writeln!(deck, ".param p{i}={{p{}+1}}", i + 1);
    }
    deck.push_str(".param p2000=0\nR1 a 0 {p1990}\nR2 a 0 {p0}\n");
    let (flat, findings, secs) = timed(&deck);
    assert!(secs < 5.0, "{secs}");
    assert_eq!(flat.elements[0].value, Some(Num::Known(10.0)));
    // Written backwards, evaluation nests one level per link: every 128 links hit the limit.
    assert!(
        !findings.is_empty() && findings.len() <= 20,
        "{}",
        findings.len()
    );
    assert!(findings.iter().all(
        |f| f.rule == "parameter-invalid" && f.message.contains("nested more than 256 levels")
    ));
    assert_eq!(flat.elements[1].value, Some(Num::Varies));
}

#[test]
fn parameter_chains_defined_forwards_are_fine() {
    let mut deck = String::from("Forward chain\n.param p0=0\n");
    for i in 1..5000 {
        let _ = writeln!(deck, ".param p{i}={{p{}+1}}", i - 1);
    }
    deck.push_str("R1 a 0 {p4999}\n");
    let (flat, findings, _) = timed(&deck);
    assert!(findings.is_empty(), "{findings:#?}");
    assert_eq!(flat.elements[0].value, Some(Num::Known(4999.0)));
}

#[test]
fn nested_parentheses_in_a_model_card() {
    let deck = format!(
        "Parens\n.model d1 D {}IS=1{}\nD1 a 0 d1\n",
        "(".repeat(50_000),
        ")".repeat(50_000)
    );
    let (flat, _, secs) = timed(&deck);
    assert!(secs < 5.0, "{secs}");
    assert_eq!(flat.elements.len(), 1);
}

#[test]
fn one_statement_over_many_continuation_lines() {
    let mut deck =
        String::from("Long instance\n.subckt wide a b\nR1 a b {p0+p19999}\n.ends\nX1 a b wide\n");
    for i in 0..20_000 {
        let _ = writeln!(deck, "+ p{i}={i}");
    }
    deck.push_str("B1 o 0 V=1\n");
    for _ in 0..20_000 {
        deck.push_str("+ + V(a)\n");
    }
    let (flat, findings, secs) = timed(&deck);
    assert!(secs < 5.0, "{secs}");
    assert!(findings.is_empty(), "{findings:#?}");
    assert_eq!(flat.elements[0].value, Some(Num::Known(19999.0)));
    assert_eq!(flat.elements[1].value, Some(Num::Varies));
}

#[test]
fn many_instances_of_a_subcircuit_with_a_broken_line_report_it_once() {
    let mut deck = String::from("Repeated error\n.subckt cell a\nR1 a\nR2 a 0 {missing}\n.ends\n");
    for i in 0..10_000 {
        let _ = writeln!(deck, "X{i} n{i} cell");
    }
    let (flat, findings, secs) = timed(&deck);
    assert!(secs < 5.0, "{secs}");
    assert_eq!(flat.elements.len(), 10_000);
    assert_eq!(findings.len(), 2, "{findings:#?}");
    assert_eq!(
        findings[0].instances.len(),
        1,
        "the first instance is named"
    );
}
