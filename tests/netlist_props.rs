//! Properties: the front end never panics, whatever it is given, and a flattened deck printed
//! back to SPICE reads back to the same connectivity.

use kickback::netlist::{decode, load, parse_str, write_flat, FlatNetlist, Limits};
use kickback::source::SourceMap;
use proptest::prelude::*;
use std::path::Path;

fn connectivity(flat: &FlatNetlist) -> Vec<(char, Vec<String>, Vec<String>)> {
    flat.elements
        .iter()
        .map(|e| (e.letter, e.nodes.clone(), e.refs.clone()))
        .collect()
}

fn fixture_texts() -> Vec<String> {
    let mut out: Vec<String> = std::fs::read_dir("testdata/syntax")
        .unwrap()
        .filter_map(|e| {
            let p = e.ok()?.path();
            if p.extension()? != "cir" {
                return None;
            }
            Some(decode(std::fs::read(p).ok()?))
        })
        .collect();
    out.sort();
    out
}

fn round_trip(flat: &FlatNetlist) {
    let text = write_flat(flat);
    let (again, findings, _) = parse_str("again.cir", &text);
    assert!(
        findings.iter().all(|f| f.rule != "syntax"),
        "{text}\n{findings:#?}"
    );
    assert_eq!(connectivity(flat), connectivity(&again), "{text}");
}

#[test]
fn clean_fixtures_round_trip() {
    for entry in std::fs::read_dir("testdata/syntax").unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_none_or(|e| e != "cir") {
            continue;
        }
        let mut sources = SourceMap::new();
        let (flat, findings) = load(&path, &mut sources, &Limits::default(), &|_| false).unwrap();
        if findings.iter().any(|f| f.rule == "syntax") {
            continue;
        }
        round_trip(&flat);
    }
}

const NODES: &[&str] = &[
    "0", "a", "b", "c", "+V", "net.1", "N$3", "x:y", "bus[2]", "gnd", "d/e",
];

fn node() -> impl Strategy<Value = String> {
    proptest::sample::select(NODES).prop_map(str::to_string)
}

fn value() -> impl Strategy<Value = String> {
    prop_oneof![
        (
            1u32..1000,
            proptest::sample::select(&["", "k", "u", "n", "meg", "m", "p"][..])
        )
            .prop_map(|(v, s)| format!("{v}{s}")),
        (1u32..100).prop_map(|v| format!("{{{v}*2}}")),
        Just("{V(a)*2}".to_string()),
    ]
}

/// One element line of a random letter, with its nodes.
fn line() -> impl Strategy<Value = String> {
    let n = || node();
    prop_oneof![
        (
            proptest::sample::select(&["R", "C", "L"][..]),
            n(),
            n(),
            value(),
            proptest::option::of(1u32..9)
        )
            .prop_map(|(l, a, b, v, m)| match m {
                Some(m) => format!("{l} {a} {b} {v} m={m}"),
                None => format!("{l} {a} {b} {v}"),
            }),
        (n(), n()).prop_map(|(a, b)| format!("D {a} {b} dm")),
        (n(), n(), n(), proptest::bool::ANY, n()).prop_map(|(c, b, e, four, s)| if four {
            format!("Q {c} {b} {e} {s} qm")
        } else {
            format!("Q {c} {b} {e} qm")
        }),
        (n(), n(), n(), n()).prop_map(|(d, g, s, b)| format!("M {d} {g} {s} {b} mm l=1u")),
        (n(), n(), n()).prop_map(|(d, g, s)| format!("J {d} {g} {s} jm")),
        (n(), n(), 0u32..20).prop_map(|(a, b, v)| format!("V {a} {b} DC {v} AC 1")),
        (n(), n()).prop_map(|(a, b)| format!("V {a} {b} PULSE(0 5 0 1n 1n 5u 10u) Rser=1")),
        (n(), n()).prop_map(|(a, b)| format!("I {a} {b} SIN(0 1 1k)")),
        (n(), n(), n(), n()).prop_map(|(a, b, c, d)| format!("E {a} {b} {c} {d} 2")),
        (n(), n(), n(), n()).prop_map(|(a, b, c, d)| format!("G {a} {b} poly(1) {c} {d} 0 1")),
        (n(), n()).prop_map(|(a, b)| format!("E {a} {b} value={{V(a)}}")),
        (n(), n()).prop_map(|(a, b)| format!("F {a} {b} Vref 2")),
        (n(), n()).prop_map(|(a, b)| format!("H {a} {b} poly(2) Vref Vother 0 1 1")),
        (n(), n()).prop_map(|(a, b)| format!("B {a} {b} I=V(a)*2")),
        (n(), n(), n(), n()).prop_map(|(a, b, c, d)| format!("S {a} {b} {c} {d} sm")),
        (n(), n()).prop_map(|(a, b)| format!("W {a} {b} Vref wm")),
        (n(), n(), n(), n()).prop_map(|(a, b, c, d)| format!("T {a} {b} {c} {d} z0=50 td=1n")),
        Just("K Lk1 Lk2 0.9".to_string()),
        (n(), n(), n()).prop_map(|(a, b, c)| format!("A [{a} ~{b}] {c} am")),
        (n(), n()).prop_map(|(a, b)| format!("X {a} {b} cell")),
        (n(), n()).prop_map(|(a, b)| format!("X {a} {b} unknown_cell")),
    ]
}

const HEADER: &str = "\
random deck
.model dm D
.model qm NPN
.model mm NMOS
.model jm NJF
.model sm SW
.model wm CSW
.model am d_and
.subckt cell p q
Rc p inner 1k
Cc inner q 1n
Xn inner q leafcell
.ends
.subckt leafcell p q
Lk1 p q 1u
Lk2 q 0 1u
Kc Lk1 Lk2 0.5
.ends
Vref a 0 0
Vother b 0 0
";

fn deck(lines: &[String]) -> String {
    let mut text = String::from(HEADER);
    for (i, l) in lines.iter().enumerate() {
        let (letter, rest) = l.split_at(1);
        text.push_str(&format!("{letter}{i} {}\n", rest.trim_start()));
    }
    text
}

proptest! {
    #![proptest_config(ProptestConfig {
        // `PROPTEST_CASES` runs more cases (e.g. 5000 before a release).
        cases: std::env::var("PROPTEST_CASES").ok().and_then(|v| v.parse().ok()).unwrap_or(256),
        failure_persistence: None,
        ..ProptestConfig::default()
    })]

    #[test]
    fn never_panics_on_bytes(bytes in proptest::collection::vec(any::<u8>(), 0..1500)) {
        let text = decode(bytes);
        let _ = parse_str("bytes.cir", &text);
    }

    #[test]
    fn never_panics_on_spice_like_text(text in "[RCLXMQDVIEBKASTWFHGJ.+*;${}()=',\\[\\]~%: \t\n0-9a-z_µ-]{0,600}") {
        let _ = parse_str("junk.cir", &text);
        let _ = parse_str("junk.cir", &format!("title\n.subckt s a b params: r=1\n{text}\n.ends\nX1 a b s\n"));
    }

    #[test]
    fn never_panics_on_mutated_fixtures(
        pick in 0usize..64,
        edits in proptest::collection::vec((any::<prop::sample::Index>(), 0u8..3, proptest::sample::select(&['+', '\n', '{', '}', '(', ')', '=', '.', ' ', 'X', '*', ';', '\'', '"', '$', 'µ', '0'][..])), 1..12),
    ) {
        let texts = fixture_texts();
        let mut chars: Vec<char> = texts[pick % texts.len()].chars().collect();
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
        let text: String = chars.into_iter().collect();
        let _ = parse_str("mutated.cir", &text);
    }

    #[test]
    fn written_decks_read_back_the_same(lines in proptest::collection::vec(line(), 1..30)) {
        let text = deck(&lines);
        let (flat, findings, _) = parse_str("random.cir", &text);
        prop_assert!(findings.is_empty(), "{}\n{:#?}", text, findings);
        round_trip(&flat);
    }
}

#[test]
fn written_deck_is_spice_for_a_person_too() {
    let (flat, _, _) = parse_str(
        "w.cir",
        "Writer\n.subckt s a b\nR1 a mid 1k\nC1 mid b 1u\n.ends\nX1 in 0 s\nV1 in 0 PULSE(0 5 0 1n 1n 5u 10u)\n",
    );
    let text = write_flat(&flat);
    assert!(text.contains("R:X1.R1 in X1.mid 1e3"), "{text}");
    assert!(
        text.contains("V1 in 0 DC 0e0 PULSE(0e0 5e0 0e0 1e-9 1e-9 5e-6 1e-5)"),
        "{text}"
    );
    assert!(Path::new("testdata/syntax").exists());
}
