//! The mutation corpus: every netlist of the project's own fixtures (`testdata/rules`,
//! `testdata/syntax`, `testdata/demo`), each mutated in a few fixed ways a hostile or careless
//! author might (lines dropped, doubled or swapped, a line pushed past column 65,535, an element
//! given thousands of nodes, a value that overflows, a cut at a random byte), is checked and
//! drawn in every format, cards included. No mutant may crash, fault a renderer, end as an
//! internal error, give invalid JSON or SARIF, or take long.
//!
//! The mutants are made from a fixed seed, so a failure names a mutant that can be made again.
//! `KICKBACK_MUTANTS=N` makes N mutants a fixture instead of the default.

use kickback::check::{check_str, CheckError, CheckOptions};
use kickback::config::Config;
use kickback::diagnostic::Severity;
use kickback::netlist::Limits;
use kickback::report;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

const DEFAULT_MUTANTS: usize = 2;

/// A mutant of the small fixtures that takes longer than this (unoptimised) is a bug.
const SLOW: Duration = Duration::from_secs(20);

fn fixtures() -> Vec<PathBuf> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("testdata");
    let mut out = Vec::new();
    let mut stack = vec![root.join("rules"), root.join("syntax"), root.join("demo")];
    while let Some(dir) = stack.pop() {
        let Ok(entries) = std::fs::read_dir(&dir) else {
            continue;
        };
        for entry in entries.flatten() {
            let path = entry.path();
            if path.is_dir() {
                stack.push(path);
            } else if path
                .extension()
                .is_some_and(|e| ["cir", "sp", "spice", "net", "ckt"].iter().any(|x| e == *x))
            {
                out.push(path);
            }
        }
    }
    out.sort();
    out
}

/// xorshift64*: a fixed, dependency-free sequence, so every run makes the same mutants.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }

    fn below(&mut self, n: usize) -> usize {
        if n == 0 {
            0
        } else {
            (self.next() % n as u64) as usize
        }
    }
}

/// Values that once broke a number reader or a formatter somewhere.
const HOSTILE_VALUES: &[&str] = &[
    "1e999",
    "{1/0}",
    "{1e308*10}",
    "-0",
    "NaN",
    "µ",
    "1meg1k",
    "{",
    "'",
    "\u{202e}1k",
    "0x7fffffff",
    "1e-400",
];

fn mutate(text: &str, rng: &mut Rng) -> (String, &'static str) {
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    if lines.is_empty() {
        lines.push(String::new());
    }
    let n = lines.len();
    let at = rng.below(n);
    let what = match rng.below(8) {
        0 => {
            lines.remove(at);
            "a line dropped"
        }
        1 => {
            let copy = lines[at].clone();
            lines.insert(at, copy);
            "a line doubled"
        }
        2 => {
            lines[at] = format!("{}{}", "\t".repeat(16_384), lines[at]);
            "a line pushed past column 65,535"
        }
        3 => {
            let extra: String = (0..3_000).map(|i| format!(" m{i}")).collect();
            lines[at].push_str(&extra);
            "3,000 nodes added to a line"
        }
        4 => {
            let value = HOSTILE_VALUES[rng.below(HOSTILE_VALUES.len())];
            let mut words: Vec<&str> = lines[at].split_whitespace().collect();
            if words.is_empty() {
                lines[at] = value.to_string();
            } else {
                let i = rng.below(words.len());
                words[i] = value;
                lines[at] = words.join(" ");
            }
            "a word replaced by a hostile value"
        }
        5 => {
            let other = rng.below(n);
            lines.swap(at, other);
            "two lines swapped"
        }
        6 => {
            let joined = lines.join("\r");
            return (joined, "every line break a lone carriage return");
        }
        _ => {
            let joined = lines.join("\n");
            let mut cut = rng.below(joined.len() + 1);
            while !joined.is_char_boundary(cut) {
                cut -= 1;
            }
            return (joined[..cut].to_string(), "cut at a random byte");
        }
    };
    (lines.join("\n") + "\n", what)
}

#[test]
fn every_format_survives_every_mutant_of_every_fixture() {
    let per_fixture = std::env::var("KICKBACK_MUTANTS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(DEFAULT_MUTANTS);
    let options = CheckOptions {
        limits: Limits {
            max_elements: 50_000,
            ..Limits::default()
        },
        config_path: None,
        rule_levels: Vec::new(),
    };
    let cards = report::cards::CardsOptions {
        color: false,
        unicode: true,
        width: 100,
        min_severity: Severity::Note,
        summary: true,
    };
    let files = fixtures();
    assert!(files.len() > 100, "the fixtures are found");
    let mut checked = 0usize;
    for (index, path) in files.iter().enumerate() {
        let Ok(text) = std::fs::read_to_string(path) else {
            continue;
        };
        let mut rng = Rng(0x9E37_79B9_7F4A_7C15 ^ (index as u64 + 1));
        for round in 0..per_fixture {
            let (mutant, what) = mutate(&text, &mut rng);
            let name = format!("{} (mutant {round}: {what})", path.display());
            let started = Instant::now();
            let file = check_str("mutant.cir", &mutant, &Config::default(), &options);
            if let Some(CheckError::Internal { message, .. }) = &file.failure {
                panic!("{name}: internal error: {message}");
            }
            let reports = [file];
            let drawn = report::cards::render(&reports, &cards);
            assert!(
                !drawn.contains("could not be drawn"),
                "{name}: a finding could not be drawn"
            );
            let _ = report::lines::render(&reports, Severity::Note);
            for (format, text) in [
                ("json", report::json::render(&reports)),
                ("sarif", report::sarif::render(&reports)),
            ] {
                assert!(
                    serde_json::from_str::<serde_json::Value>(&text).is_ok(),
                    "{name}: invalid {format}"
                );
            }
            assert!(started.elapsed() < SLOW, "{name}: {:?}", started.elapsed());
            checked += 1;
        }
    }
    assert!(checked >= files.len(), "{checked} mutants checked");
}
