//! Load time of a large flat deck. Run with
//! `cargo test --release --test netlist_perf -- --ignored --nocapture`.

use kickback::netlist::{load, Limits};
use kickback::source::SourceMap;
use std::fmt::Write;
use std::time::Instant;

/// A flat deck of `n` elements: resistors, capacitors, MOSFETs and diodes in turn.
pub fn flat_deck(n: usize) -> String {
    let mut text = String::with_capacity(n * 28);
    text.push_str("Large flat deck\n.model nsw NMOS (VTO=2 KP=1)\n.model dfw D (BV=100)\n");
    for i in 0..n {
        let (a, b) = (i % 5000, (i * 7 + 1) % 5000);
        let _ = match i % 4 {
            0 => writeln!(text, "R{i} n{a} n{b} 4.7k"),
            1 => writeln!(text, "C{i} n{a} 0 100n"),
            2 => writeln!(text, "M{i} n{a} n{b} 0 0 nsw"),
            _ => writeln!(text, "D{i} n{a} n{b} dfw"),
        };
    }
    text.push_str(".end\n");
    text
}

/// CPU time of this thread so far (Linux), so the figure means something on a busy machine.
fn thread_cpu() -> Option<std::time::Duration> {
    let text = std::fs::read_to_string("/proc/thread-self/schedstat").ok()?;
    let ns: u64 = text.split_whitespace().next()?.parse().ok()?;
    Some(std::time::Duration::from_nanos(ns))
}

#[test]
#[ignore]
fn load_a_million_elements() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("large.cir");
    // `KICKBACK_PERF_N` picks another size (and one run), e.g. for an instruction profiler.
    let custom: Option<usize> = std::env::var("KICKBACK_PERF_N")
        .ok()
        .and_then(|v| v.parse().ok());
    let n = custom.unwrap_or(1_000_000);
    std::fs::write(&path, flat_deck(n)).unwrap();
    let size = std::fs::metadata(&path).unwrap().len();
    for _ in 0..if custom.is_some() { 1 } else { 3 } {
        let mut sources = SourceMap::new();
        let cpu = thread_cpu();
        let started = Instant::now();
        let (flat, findings) = load(&path, &mut sources, &Limits::default(), &|_| false).unwrap();
        let took = started.elapsed();
        let cpu = thread_cpu().zip(cpu).map(|(b, a)| b - a);
        assert_eq!(flat.elements.len(), n);
        assert!(findings.is_empty());
        println!("load: {n} elements, {size} bytes in {took:?} wall, {cpu:?} CPU");
    }
}

#[test]
#[ignore]
fn floor_of_the_output_types() {
    use kickback::netlist::{FlatElement, Num};
    println!(
        "size_of FlatElement = {}",
        std::mem::size_of::<FlatElement>()
    );
    let cpu = thread_cpu();
    let started = Instant::now();
    let mut out = Vec::with_capacity(1_000_000);
    for i in 0..1_000_000usize {
        out.push(FlatElement {
            path: format!("R{i}"),
            name: format!("R{i}"),
            letter: 'R',
            nodes: vec![format!("n{}", i % 5000), format!("n{}", (i * 7) % 5000)],
            model: None,
            model_index: None,
            value: Some(Num::Known(4.7e3)),
            value_text: Some("4.7k".to_string()),
            value_span: None,
            params: Vec::new(),
            source: None,
            refs: Vec::new(),
            subckt: None,
            span: Default::default(),
            instances: Vec::new(),
        });
    }
    let cpu = thread_cpu().zip(cpu).map(|(b, a)| b - a);
    println!(
        "building 1M elements alone: {:?} wall, {cpu:?} CPU",
        started.elapsed()
    );
    let started = Instant::now();
    drop(out);
    println!("dropping them: {:?}", started.elapsed());
}
