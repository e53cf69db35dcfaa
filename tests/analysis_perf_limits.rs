//! Bounds on the analyses: a sub-network too large for the dense DC engine is refused with one
//! `solve-failed` finding (never a terabyte allocation or an abort), degenerate networks are
//! errors rather than panics, and a timer's analysis stops at its deterministic work bound and
//! says so.

use kickback::analysis::budget::Scope;
use kickback::analysis::dc::{solve, DcError, Network, SolveOptions, DENSE_LIMIT};
use kickback::analysis::states::Context;
use kickback::analysis::{self, timer};
use kickback::circuit::Circuit;
use kickback::config::Config;
use kickback::netlist::parse_str;
use std::fmt::Write as _;
use std::time::Instant;

/// Peak resident memory of this process in kB (Linux), if known.
fn peak_rss_kb() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

#[test]
fn a_million_resistor_chain_is_refused_with_one_finding() {
    // Just under the default element limit of 1,000,000 (the source is one element more).
    const LINKS: usize = 999_998;
    let mut text = String::with_capacity(LINKS * 24);
    text.push_str("resistor chain\nV1 n0 0 DC 10\n");
    for k in 0..LINKS {
        let next = if k + 1 == LINKS {
            "0".to_string()
        } else {
            format!("n{}", k + 1)
        };
        let _ = writeln!(text, "R{k} n{k} {next} 1");
    }
    text.push_str(".end\n");
    let started = Instant::now();
    let (netlist, _, _) = parse_str("chain.cir", &text);
    let config = Config::default();
    let (circuit, _) = Circuit::build(&netlist, &config);
    let front_end = started.elapsed();
    let (facts, findings) = analysis::analyze(&netlist, &circuit, &config);
    let analysis_time = started.elapsed() - front_end;
    println!(
        "front end {front_end:?}, analyses {analysis_time:?}, peak {:?} kB",
        peak_rss_kb()
    );
    let failed: Vec<_> = findings
        .iter()
        .filter(|f| f.rule == "solve-failed")
        .collect();
    assert_eq!(failed.len(), 1, "{failed:?}");
    let message = &failed[0].message;
    assert!(
        message.contains(&format!("{} unknowns", LINKS - 1))
            && message.contains(&DENSE_LIMIT.to_string()),
        "{message}"
    );
    // No resistor got made-up numbers (the source fixes n0; the other 999,997 nets are free).
    assert!(facts.resistors.is_empty());
    // The analyses of a refused sub-network do no per-state work on it; in a debug build they
    // take well under the front end's own time for the same million elements.
    assert!(
        analysis_time < front_end.max(std::time::Duration::from_secs(5)),
        "analysis {analysis_time:?}, front end {front_end:?}"
    );
    // A dense 1M × 1M matrix would be 8 TB; what is resident is the netlist and the circuit.
    if let Some(kb) = peak_rss_kb() {
        assert!(kb < 4_000_000, "peak resident {kb} kB");
    }
}

#[test]
fn a_network_with_no_free_node_is_an_error() {
    let options = SolveOptions::default();
    // All ground: what a capacitor straight across a rail leaves to solve.
    let empty = Network::new();
    assert_eq!(solve(&empty, &options), Err(DcError::NoFreeNode));
    let mut grounded = Network::new();
    let gnd = grounded.ground();
    grounded.add_resistor(gnd, gnd, 10.0);
    assert_eq!(solve(&grounded, &options), Err(DcError::NoFreeNode));
}

#[test]
fn networks_past_the_dense_limit_are_refused_before_solving() {
    let options = SolveOptions::default();
    // Free nodes alone past the limit.
    let mut ladder = Network::new();
    let gnd = ladder.ground();
    let mut previous = ladder.add_node("n0");
    ladder.add_voltage_source(previous, gnd, 1.0);
    for k in 1..=DENSE_LIMIT + 1 {
        let node = ladder.add_node(&format!("n{k}"));
        ladder.add_resistor(previous, node, 1.0);
        previous = node;
    }
    ladder.add_resistor(previous, gnd, 1.0);
    assert_eq!(
        solve(&ladder, &options),
        Err(DcError::TooLarge {
            unknowns: DENSE_LIMIT + 2,
            limit: DENSE_LIMIT
        })
    );
    // Few enough nodes, but their branch currents take the unknowns past it.
    let mut sources = Network::new();
    let gnd = sources.ground();
    for k in 0..DENSE_LIMIT / 2 + 1 {
        let node = sources.add_node(&format!("s{k}"));
        sources.add_voltage_source(node, gnd, 1.0);
    }
    assert!(matches!(
        solve(&sources, &options),
        Err(DcError::TooLarge { unknowns, .. }) if unknowns == 2 * (DENSE_LIMIT / 2 + 1)
    ));
    // At the limit it still solves: a divider chain of exactly DENSE_LIMIT unknowns.
    let mut fits = Network::new();
    let gnd = fits.ground();
    let top = fits.add_node("top");
    fits.add_voltage_source(top, gnd, 1.0);
    let mut previous = top;
    for k in 1..DENSE_LIMIT - 1 {
        let node = fits.add_node(&format!("m{k}"));
        fits.add_resistor(previous, node, 1.0);
        previous = node;
    }
    fits.add_resistor(previous, gnd, 1.0);
    assert!(solve(&fits, &options).is_ok());
}

const DEMO: &str = include_str!("../testdata/demo/doser.cir");

#[test]
fn a_timer_analysis_stops_at_its_work_bound_and_says_so() {
    let (netlist, _, _) = parse_str("doser.cir", DEMO);
    let config = Config::parse(
        include_str!("../testdata/demo/kickback.toml"),
        std::path::Path::new("kickback.toml"),
    )
    .expect("the demo's configuration");
    let (circuit, _) = Circuit::build(&netlist, &config);
    let mut cx = Context::new(&netlist, &circuit, &config);
    let (_, unbounded) = timer::analyze(&cx);
    assert!(unbounded.iter().all(|f| f.rule != "solve-failed"));
    cx.timer_solves = 25;
    let (_, bounded) = timer::analyze(&cx);
    let hits: Vec<_> = bounded
        .iter()
        .filter(|f| f.rule == "solve-failed")
        .collect();
    // One finding per timer, naming the bound.
    assert_eq!(hits.len(), 2, "{hits:?}");
    assert!(hits
        .iter()
        .all(|f| f.message.contains("bound of 25 DC solves")));
    // The same bound falls at the same place however warm the memo is.
    let (_, again) = timer::analyze(&cx);
    assert_eq!(format!("{bounded:?}"), format!("{again:?}"));
}

#[test]
fn a_budget_refuses_solves_once_spent() {
    let (netlist, _, _) = parse_str("doser.cir", DEMO);
    let config = Config::default();
    let (circuit, _) = Circuit::build(&netlist, &config);
    let cx = Context::new(&netlist, &circuit, &config);
    let component = cx
        .partition
        .components
        .iter()
        .find(|c| !c.nets.is_empty())
        .expect("a free sub-network");
    let state = cx.states(component, &[0.5]).remove(0);
    let scope = Scope::open(2);
    assert!(cx.solve(component, &state).is_ok());
    assert!(cx.solve(component, &state).is_ok());
    assert_eq!(scope.spent(), 2);
    assert!(matches!(
        cx.solve(component, &state),
        Err(DcError::WorkBound { limit: 2 })
    ));
    assert_eq!(scope.exhausted(), Some(2));
    drop(scope);
    // Outside a scope nothing is counted.
    assert!(cx.solve(component, &state).is_ok());
}
