//! The fuzz targets' properties, bounded so that they run in every `cargo test`: the value
//! evaluator, the configuration reader and the whole pipeline (parse → circuit → analysis →
//! rules → every renderer) never panic, and a value that comes back is a finite number.
//! The front end alone on arbitrary bytes is in `netlist_props.rs`. `PROPTEST_CASES` runs
//! more cases.

use kickback::check::{check_str, CheckError, CheckOptions, FileReport};
use kickback::config::Config;
use kickback::diagnostic::Severity;
use kickback::netlist::{decode, evaluate_value, Limits, Num};
use kickback::report;
use proptest::prelude::*;
use std::path::Path;

fn cases(default: u32) -> u32 {
    std::env::var("PROPTEST_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

/// Every renderer on the report; JSON and SARIF must be valid JSON.
fn render_all(file: FileReport) {
    if let Some(CheckError::Internal { message, .. }) = &file.failure {
        panic!("internal error: {message}");
    }
    let reports = [file];
    let human = report::cards::CardsOptions {
        color: true,
        unicode: true,
        width: 80,
        min_severity: Severity::Note,
        summary: true,
    };
    let _ = report::cards::render(&reports, &human);
    let _ = report::lines::render(&reports, Severity::Note);
    let json = report::json::render(&reports);
    assert!(
        serde_json::from_str::<serde_json::Value>(&json).is_ok(),
        "{json}"
    );
    let sarif = report::sarif::render(&reports);
    assert!(
        serde_json::from_str::<serde_json::Value>(&sarif).is_ok(),
        "{sarif}"
    );
}

fn pipeline(text: &str) {
    let options = CheckOptions {
        limits: Limits {
            max_elements: 5_000,
            ..Limits::default()
        },
        config_path: None,
        rule_levels: Vec::new(),
    };
    render_all(check_str("prop.cir", text, &Config::default(), &options));
}

/// Atoms of expressions, including the ones that overflow or divide by zero.
fn atom() -> impl Strategy<Value = String> {
    prop_oneof![
        (0u32..1000).prop_map(|v| v.to_string()),
        proptest::sample::select(
            &[
                "1e999", "1e308", "1e-320", "0", "-0", "4.7k", "10u", "1MEG", "2200µ", "1t", "pi",
                "time", "V(a)", "x",
            ][..]
        )
        .prop_map(str::to_string),
    ]
}

/// Random expressions of bounded size from operators and functions.
fn expression() -> impl Strategy<Value = String> {
    atom().prop_recursive(6, 48, 3, |inner| {
        prop_oneof![
            (
                inner.clone(),
                proptest::sample::select(
                    &["+", "-", "*", "/", "**", "^", "%", "<", "==", "&&", "||"][..]
                ),
                inner.clone()
            )
                .prop_map(|(a, op, b)| format!("({a}{op}{b})")),
            (
                proptest::sample::select(
                    &["sqrt", "exp", "log", "abs", "tanh", "-", "sin", "atan"][..]
                ),
                inner.clone()
            )
                .prop_map(|(f, a)| format!("{f}({a})")),
            (
                proptest::sample::select(&["min", "max", "pow", "atan2"][..]),
                inner.clone(),
                inner.clone()
            )
                .prop_map(|(f, a, b)| format!("{f}({a},{b})")),
            (inner.clone(), inner.clone(), inner)
                .prop_map(|(c, a, b)| format!("({c} ? {a} : {b})")),
        ]
    })
}

/// A small motor-drive deck with random values and connections.
fn deck() -> impl Strategy<Value = String> {
    let node = || proptest::sample::select(&["0", "vcc", "g", "d", "out", "dis", "thr"][..]);
    let line = prop_oneof![
        (node(), node(), expression()).prop_map(|(a, b, v)| format!("R {a} {b} {{{v}}}")),
        (node(), node(), atom()).prop_map(|(a, b, v)| format!("C {a} {b} {v}")),
        (node(), node(), atom()).prop_map(|(a, b, v)| format!("L {a} {b} {v}")),
        (node(), node(), atom()).prop_map(|(a, b, v)| format!("V {a} {b} DC {v}")),
        (node(), node()).prop_map(|(a, b)| format!("V {a} {b} PULSE(0 5 0 1n 1n 5u 10u)")),
        (node(), node()).prop_map(|(a, b)| format!("D {a} {b} dfw")),
        (node(), node(), node()).prop_map(|(a, b, c)| format!("M {a} {b} {c} {c} nch")),
        (node(), node(), node()).prop_map(|(a, b, c)| format!("Q {a} {b} {c} npn1")),
        (node(), node(), node(), node())
            .prop_map(|(a, b, c, d)| format!("X {a} {b} {c} {d} vcc dis thr out ne555")),
        (node(), node()).prop_map(|(a, b)| format!("X {a} {b} motor")),
        expression().prop_map(|v| format!(".param p{{}}={{{v}}}")),
    ];
    proptest::collection::vec(line, 1..14).prop_map(|lines| {
        let mut text = String::from(
            "random drive\n.model dfw D (BV=50)\n.model nch NMOS (VTO=2 KP=0.1)\n\
             .model npn1 NPN\n.subckt motor p n\nLm p x 1m\nRm x n 10\n.ends\n",
        );
        for (i, line) in lines.iter().enumerate() {
            let (letter, rest) = line.split_at(1);
            let rest = rest.replace("{}", &i.to_string());
            text.push_str(&format!("{letter}{i}{rest}\n"));
        }
        text.push_str(".end\n");
        text
    })
}

proptest! {
    #![proptest_config(ProptestConfig {
        cases: cases(256),
        failure_persistence: None,
        ..ProptestConfig::default()
    })]

    #[test]
    fn values_are_finite_or_errors(text in expression()) {
        for form in [text.clone(), format!("{{{text}}}")] {
            if let Ok(Num::Known(v)) = evaluate_value(&form) {
                prop_assert!(v.is_finite(), "{} gave {}", form, v);
            }
        }
    }

    #[test]
    fn the_value_reader_never_panics_on_text(text in "\\PC{0,120}") {
        let _ = evaluate_value(&text);
    }

    #[test]
    fn the_value_reader_never_panics_on_value_like_text(text in "[-+*/^%()?:,.<>=!&|{}' 0-9eEkKmMuUnNpPfFgGtTµa-z_]{0,80}") {
        let _ = evaluate_value(&text);
    }

    #[test]
    fn configurations_never_panic(text in "[\\[\\]a-z_.\"= \n0-9,{}#-]{0,300}") {
        match Config::parse(&text, Path::new("kickback.toml")) {
            Ok(config) => { let _ = kickback::check::validate_rule_ids(&config); }
            Err(e) => prop_assert!(e.line >= 1 && e.column >= 1),
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig {
        cases: cases(64),
        failure_persistence: None,
        ..ProptestConfig::default()
    })]

    #[test]
    fn the_pipeline_never_panics_on_random_drives(text in deck()) {
        pipeline(&text);
    }

    #[test]
    fn the_pipeline_never_panics_on_bytes(bytes in proptest::collection::vec(any::<u8>(), 0..800)) {
        pipeline(&decode(bytes));
    }

    #[test]
    fn the_pipeline_never_panics_on_mutated_demo(
        edits in proptest::collection::vec((any::<prop::sample::Index>(), 0u8..3, proptest::sample::select(&['+', '\n', '{', '}', '(', ')', '=', ' ', 'X', '*', '0', 'k', '-'][..])), 1..10),
    ) {
        let demo = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/testdata/demo/doser.cir")).unwrap();
        let mut chars: Vec<char> = demo.chars().collect();
        for (at, op, c) in edits {
            if chars.is_empty() {
                chars.push(c);
                continue;
            }
            let i = at.index(chars.len());
            match op {
                0 => { chars.remove(i); }
                1 => chars.insert(i, c),
                _ => chars[i] = c,
            }
        }
        pipeline(&chars.into_iter().collect::<String>());
    }
}

/// Numbers that overflow and divisions by zero are `parameter-invalid` at the value, never an
/// infinity used silently.
#[test]
fn overflow_is_a_finding_at_the_value() {
    for (value, needle) in [
        ("1e999", "1e999"),
        ("{1e308*10}", "finite"),
        ("{1/0}", ""),
        ("{exp(1000)}", "finite"),
        ("{pow(10,400)}", "finite"),
    ] {
        let deck = format!("Overflow\nV1 a 0 12\nR1 a 0 {value}\n.end\n");
        let (flat, findings, sources) = kickback::netlist::parse_str("o.cir", &deck);
        let finding = findings
            .iter()
            .find(|f| f.rule == "parameter-invalid")
            .unwrap_or_else(|| panic!("{value}: {findings:#?}"));
        assert!(
            finding.message.contains(needle),
            "{value}: {}",
            finding.message
        );
        let located = sources.locate(finding.span);
        assert_eq!(located.line, 3, "{value}");
        let start = deck.find("R1").unwrap() + "R1 a 0 ".len();
        assert_eq!(
            finding.span.start as usize, start,
            "{value}: the value's own span"
        );
        let r1 = flat.elements.iter().find(|e| e.name == "R1");
        assert!(
            r1.is_none_or(|e| e.value.is_none_or(|v| v.known().is_none_or(f64::is_finite))),
            "{value}: {r1:?}"
        );
    }
}

/// A DC solve that has no answer ends with a `solve-failed` finding at the switch, not a hang;
/// one whose Newton steps swing wildly (diodes of tiny emission coefficient against a kiloamp
/// source) ends too.
#[test]
fn pathological_dc_decks_end() {
    let singular = "Pathological\n.model nch NMOS (VTO=2 KP=0.1)\nVcc vcc 0 12\nLm vcc d 1m\n\
                    M1 d g 0 0 nch\nVg g 0 PULSE(0 10 0 1n 1n 5u 10u)\nV2 d x 1\nV3 d x 2\n.end\n";
    let mut stiff = String::from(
        "Stiff\n.model nch NMOS (VTO=2 KP=0.1)\n.model dx D (IS=1e-30 N=0.01)\nVcc vcc 0 12\n\
         Lm vcc d 1m\nM1 d g 0 0 nch\nVg g 0 PULSE(0 10 0 1n 1n 5u 10u)\nI1 0 d 1e6\n",
    );
    for i in 0..40 {
        stiff.push_str(&format!("D{i} d 0 dx\nDR{i} 0 d dx\n"));
    }
    for (deck, must_fail) in [(singular.to_string(), true), (stiff, false)] {
        let started = std::time::Instant::now();
        let report = check_str("p.cir", &deck, &Config::default(), &CheckOptions::default());
        assert!(started.elapsed().as_secs() < 60);
        assert!(report.failure.is_none(), "{:?}", report.failure);
        if must_fail {
            let failed = report
                .findings
                .iter()
                .find(|f| f.rule == "solve-failed")
                .unwrap_or_else(|| panic!("{:#?}", report.findings));
            assert_eq!(report.sources.locate(failed.span).line, 5, "at M1");
            assert!(
                failed.message.contains("no unique DC solution"),
                "{}",
                failed.message
            );
        }
        render_all(report);
    }
}
