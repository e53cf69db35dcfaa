//! Times the stages of `kickback check` one by one on a netlist and prints each stage's wall
//! and CPU time and peak resident memory, so a slow or greedy stage shows by name.
//!
//! ```sh
//! cargo run --release --example gen_board -- --channels 100000 --out /tmp/big
//! cargo run --release --example stage_times -- /tmp/big/board0000.cir
//! cargo run --release --example stage_times -- /tmp/big/board0000.cir --analyze
//! ```
//!
//! The `kickback.toml` beside the netlist (or `--config PATH`) is used as `check` would.
//! Without `--analyze` the analyses are skipped and the rules run on empty facts, which still
//! exercises every graph query a rule makes; with it the whole pipeline runs.
//! Peak memory is the process's high-water mark (`VmHWM`), reset before each stage where the
//! kernel allows it, so each figure is that stage's own peak on top of what earlier stages keep.

use kickback::analysis::{self, Analysis};
use kickback::check::{self, CheckOptions, FileReport};
use kickback::circuit::{parts, Circuit};
use kickback::diagnostic::Severity;
use kickback::netlist;
use kickback::report::{cards, json, lines, sarif};
use kickback::rules::{self, RuleContext};
use kickback::source::SourceMap;
use std::path::PathBuf;
use std::time::Instant;

fn status_kib(key: &str) -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with(key))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

/// Resets the high-water mark to the current resident size (Linux 4.0 and later).
fn reset_peak() {
    let _ = std::fs::write("/proc/self/clear_refs", "5");
}

/// CPU time of this thread so far (Linux), which means something on a busy machine.
fn thread_cpu_ms() -> Option<f64> {
    let text = std::fs::read_to_string("/proc/thread-self/schedstat").ok()?;
    let ns: u64 = text.split_whitespace().next()?.parse().ok()?;
    Some(ns as f64 / 1e6)
}

fn timed<T>(name: &str, f: impl FnOnce() -> T) -> T {
    reset_peak();
    let cpu = thread_cpu_ms();
    let start = Instant::now();
    let value = f();
    let elapsed = start.elapsed();
    let cpu = match (thread_cpu_ms(), cpu) {
        (Some(b), Some(a)) => format!("{:>9.1}", b - a),
        _ => format!("{:>9}", "?"),
    };
    let mib = |k: Option<u64>| k.map_or("?".to_string(), |k| format!("{:.0}", k as f64 / 1024.0));
    println!(
        "{name:<12} {:>9.1} ms wall {cpu} ms CPU   peak {:>5} MiB   now {:>5} MiB",
        elapsed.as_secs_f64() * 1e3,
        mib(status_kib("VmHWM:")),
        mib(status_kib("VmRSS:")),
    );
    value
}

fn usage() -> ! {
    eprintln!("usage: stage_times NETLIST [--config PATH] [--analyze]");
    std::process::exit(2);
}

fn main() {
    let mut path = None;
    let mut options = CheckOptions::default();
    let mut run_analyses = false;
    let mut args = std::env::args().skip(1);
    while let Some(arg) = args.next() {
        match arg.as_str() {
            "--analyze" => run_analyses = true,
            "--config" => options.config_path = Some(args.next().unwrap_or_else(|| usage()).into()),
            _ if path.is_none() => path = Some(PathBuf::from(arg)),
            _ => usage(),
        }
    }
    let path = path.unwrap_or_else(|| usage());
    let total = Instant::now();
    let config = check::load_config(&path, &options).unwrap_or_else(|e| {
        eprintln!("{e}");
        std::process::exit(2)
    });
    let mut sources = SourceMap::new();
    let keep = |name: &str| parts::keeps_whole(name, &config);
    let (flat, mut findings) = timed("load", || {
        netlist::load(&path, &mut sources, &options.limits, &keep)
    })
    .unwrap_or_else(|e| {
        eprintln!("{e}");
        std::process::exit(2)
    });
    let (circuit, more) = timed("build", || Circuit::build(&flat, &config));
    findings.extend(more);
    let facts = if run_analyses {
        let (facts, more) = timed("analyze", || analysis::analyze(&flat, &circuit, &config));
        findings.extend(more);
        facts
    } else {
        Analysis::default()
    };
    let cx = RuleContext {
        netlist: &flat,
        circuit: &circuit,
        analysis: &facts,
        config: &config,
    };
    findings.extend(timed("rules", || rules::run(&cx)));
    let outcome = timed("suppress", || {
        let mut outcome = rules::suppress::apply(findings, &flat, &sources, &config);
        outcome
            .findings
            .sort_by_cached_key(|f| (sources.locate(f.span), f.rule.clone(), f.message.clone()));
        outcome.findings.dedup();
        outcome
    });
    let reports = [FileReport {
        path: path.clone(),
        sources,
        findings: outcome.findings,
        suppressed: outcome.suppressed,
        configs: Vec::new(),
        failure: None,
    }];
    let bytes = [
        timed("lines", || lines::render(&reports, Severity::Note).len()),
        timed("json", || json::render(&reports).len()),
        timed("sarif", || sarif::render(&reports).len()),
        timed("cards", || {
            cards::render(&reports, &cards::CardsOptions::default()).len()
        }),
    ];
    println!(
        "{} elements, {} nets, {} findings; rendered {bytes:?} bytes; total {:.1} ms",
        flat.elements.len(),
        circuit.nets().len(),
        reports[0].findings.len(),
        total.elapsed().as_secs_f64() * 1e3
    );
}
