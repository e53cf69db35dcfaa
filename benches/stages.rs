//! One criterion group per stage of a check, on generated boards (see
//! `examples/gen_board/board.rs`): parse and flatten, graph, partition and analyses (small
//! boards only: the DC solves take seconds on large ones), rules, and each renderer.
//!
//! ```sh
//! cargo bench --bench stages              # everything
//! cargo bench --bench stages -- graph     # one group
//! ```

#[path = "../examples/gen_board/board.rs"]
mod board;

use criterion::measurement::WallTime;
use criterion::{
    criterion_group, criterion_main, BenchmarkGroup, BenchmarkId, Criterion, Throughput,
};
use kickback::analysis::{self, Analysis};
use kickback::check::FileReport;
use kickback::circuit::{parts, Circuit};
use kickback::config::Config;
use kickback::diagnostic::Severity;
use kickback::netlist::{self, FlatNetlist, Limits};
use kickback::report::{cards, json, lines, sarif};
use kickback::rules::{self, RuleContext};
use kickback::source::SourceMap;
use std::hint::black_box;
use std::path::{Path, PathBuf};

/// Front-end sizes, in channels of `board::CHANNEL_ELEMENTS` elements: 1k, 10k, 100k elements.
const FRONT_CHANNELS: [usize; 3] = [100, 1_000, 10_000];
/// Boards small enough for the analyses.
const ANALYSIS_CHANNELS: [usize; 2] = [10, 100];

fn config() -> Config {
    Config::parse(board::CONFIG, Path::new("kickback.toml")).expect("the boards' config parses")
}

fn flat_text(channels: usize) -> String {
    let mut out = Vec::new();
    board::write_flat(&mut out, channels).expect("writing to memory");
    String::from_utf8(out).expect("the generator writes UTF-8")
}

/// Loads a board as `check` does, with the config's parts kept whole.
fn load(text: &str, config: &Config) -> (FlatNetlist, SourceMap) {
    let dir = std::env::temp_dir().join(format!("kickback-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("a temporary folder");
    let path = dir.join(format!("board{}.cir", text.len()));
    std::fs::write(&path, text).expect("writing the board");
    let mut sources = SourceMap::new();
    let keep = |name: &str| parts::keeps_whole(name, config);
    let (flat, _) =
        netlist::load(&path, &mut sources, &Limits::default(), &keep).expect("the board loads");
    let _ = std::fs::remove_file(&path);
    (flat, sources)
}

/// The same channels in `levels` levels of subcircuits.
fn nested_text(channels: usize, levels: usize) -> String {
    let mut out = Vec::new();
    board::write_nested(&mut out, channels, levels).expect("writing to memory");
    String::from_utf8(out).expect("the generator writes UTF-8")
}

fn elements(channels: usize) -> u64 {
    (channels * board::CHANNEL_ELEMENTS) as u64
}

fn sized<'c>(c: &'c mut Criterion, name: &str) -> BenchmarkGroup<'c, WallTime> {
    let mut group = c.benchmark_group(name);
    group.sample_size(10);
    group
}

fn parse_flatten(c: &mut Criterion) {
    let config = config();
    let mut group = sized(c, "parse+flatten");
    for channels in FRONT_CHANNELS {
        let text = flat_text(channels);
        group.throughput(Throughput::Elements(elements(channels)));
        group.bench_with_input(
            BenchmarkId::new("parse_str", elements(channels)),
            &text,
            |b, t| b.iter(|| black_box(netlist::parse_str("board.cir", t))),
        );
        group.bench_with_input(
            BenchmarkId::new("load", elements(channels)),
            &text,
            |b, t| b.iter(|| black_box(load(t, &config))),
        );
        let nested = nested_text(channels, 10);
        group.bench_with_input(
            BenchmarkId::new("load-10-levels", elements(channels)),
            &nested,
            |b, t| b.iter(|| black_box(load(t, &config))),
        );
    }
    group.finish();
}

fn graph(c: &mut Criterion) {
    let config = config();
    let mut group = sized(c, "graph");
    for channels in FRONT_CHANNELS {
        let (flat, _) = load(&flat_text(channels), &config);
        group.throughput(Throughput::Elements(elements(channels)));
        group.bench_function(BenchmarkId::new("build", elements(channels)), |b| {
            b.iter(|| black_box(Circuit::build(&flat, &config)))
        });
    }
    group.finish();
}

fn analyses(c: &mut Criterion) {
    let config = config();
    let mut group = sized(c, "partition+analyses");
    for channels in ANALYSIS_CHANNELS {
        let (flat, _) = load(&flat_text(channels), &config);
        let (circuit, _) = Circuit::build(&flat, &config);
        group.throughput(Throughput::Elements(elements(channels)));
        group.bench_function(BenchmarkId::new("analyze", elements(channels)), |b| {
            b.iter(|| black_box(analysis::analyze(&flat, &circuit, &config)))
        });
    }
    group.finish();
}

fn rules_group(c: &mut Criterion) {
    let config = config();
    let mut group = sized(c, "rules");
    for channels in FRONT_CHANNELS {
        let (flat, _) = load(&flat_text(channels), &config);
        let (circuit, _) = Circuit::build(&flat, &config);
        // The analyses are too slow for the large boards; the rules' graph queries still run.
        let facts = Analysis::default();
        let cx = RuleContext {
            netlist: &flat,
            circuit: &circuit,
            analysis: &facts,
            config: &config,
        };
        group.throughput(Throughput::Elements(elements(channels)));
        group.bench_function(BenchmarkId::new("run", elements(channels)), |b| {
            b.iter(|| black_box(rules::run(&cx)))
        });
    }
    for channels in ANALYSIS_CHANNELS {
        let (flat, _) = load(&flat_text(channels), &config);
        let (circuit, _) = Circuit::build(&flat, &config);
        let (facts, _) = analysis::analyze(&flat, &circuit, &config);
        let cx = RuleContext {
            netlist: &flat,
            circuit: &circuit,
            analysis: &facts,
            config: &config,
        };
        group.bench_function(
            BenchmarkId::new("run-with-facts", elements(channels)),
            |b| b.iter(|| black_box(rules::run(&cx))),
        );
    }
    group.finish();
}

/// A report with the findings a checked board has: about one channel in fifty is faulty.
fn report(channels: usize, config: &Config) -> FileReport {
    let (flat, sources) = load(&flat_text(channels), config);
    let (circuit, mut findings) = Circuit::build(&flat, config);
    let (facts, more) = analysis::analyze(&flat, &circuit, config);
    findings.extend(more);
    let cx = RuleContext {
        netlist: &flat,
        circuit: &circuit,
        analysis: &facts,
        config,
    };
    findings.extend(rules::run(&cx));
    let outcome = rules::suppress::apply(findings, &flat, &sources, config);
    FileReport {
        path: PathBuf::from("board.cir"),
        sources,
        findings: outcome.findings,
        suppressed: outcome.suppressed,
        configs: Vec::new(),
        failure: None,
    }
}

fn render(c: &mut Criterion) {
    let config = config();
    let mut group = sized(c, "render");
    for channels in [100, 1_000] {
        let reports = [report(channels, &config)];
        let n = reports[0].findings.len();
        group.throughput(Throughput::Elements(n as u64));
        let id = |format: &str| BenchmarkId::new(format, format!("{n} findings"));
        group.bench_function(id("lines"), |b| {
            b.iter(|| black_box(lines::render(&reports, Severity::Note)))
        });
        group.bench_function(id("json"), |b| b.iter(|| black_box(json::render(&reports))));
        group.bench_function(id("sarif"), |b| {
            b.iter(|| black_box(sarif::render(&reports)))
        });
        let options = cards::CardsOptions::default();
        group.bench_function(id("cards"), |b| {
            b.iter(|| black_box(cards::render(&reports, &options)))
        });
    }
    group.finish();
}

criterion_group!(stages, parse_flatten, graph, analyses, rules_group, render);
criterion_main!(stages);
