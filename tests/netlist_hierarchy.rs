//! Flattening: instance paths, net prefixes, spans pointing at definitions, kept subcircuits,
//! and refusal of expansions past the element limit.

use kickback::netlist::{load, parse_str, Limits, LoadError, Num};
use kickback::source::SourceMap;
use std::io::Write;
use std::time::Instant;

const THREE_LEVELS: &str = "\
Three-level motor controller
.global vcc
.subckt leaf a b params: r=1k
R1 a mid {r}
C1 mid b 1n
D1 b gnd dleaf
.model dleaf D (BV=50)
.ends leaf
.subckt mid in out
XL1 in n1 leaf r=2k
XL2 n1 out leaf
Rm n1 vcc 10k
.ends mid
.subckt top p q
XM1 p x mid
XM2 x q mid
K1 L1 L2 0.5
L1 p 0 1u
L2 q 0 1u
.ends top
XT a 0 top
V1 vcc 0 5
.end
";

#[test]
fn three_levels_flatten_with_paths_nets_and_definition_spans() {
    let (flat, findings, sources) = parse_str("three.cir", THREE_LEVELS);
    assert!(findings.is_empty(), "{findings:?}");
    // 2 mid × (2 leaf × 3 + 1) + 3 in top + V1
    assert_eq!(flat.elements.len(), 18);
    let r1 = flat
        .elements
        .iter()
        .find(|e| e.path == "XT.XM2.XL1.R1")
        .unwrap();
    assert_eq!(r1.name, "R1");
    assert_eq!(r1.nodes, ["XT.x", "XT.XM2.XL1.mid"]);
    assert_eq!(r1.value, Some(Num::Known(2000.0)));
    assert_eq!(r1.instance_path().as_deref(), Some("XT.XM2.XL1.R1"));
    assert_eq!(
        sources.locate(r1.span).line,
        4,
        "span is the definition line"
    );
    let chain: Vec<(&str, usize)> = r1
        .instances
        .iter()
        .map(|s| (s.name.as_str(), sources.locate(s.span).line))
        .collect();
    assert_eq!(chain, [("XT", 21), ("XM2", 16), ("XL1", 10)]);

    let d1 = flat
        .elements
        .iter()
        .find(|e| e.path == "XT.XM1.XL2.D1")
        .unwrap();
    assert_eq!(d1.nodes, ["XT.x", "gnd"]);
    assert_eq!(d1.model_index, Some(0));
    let rm = flat
        .elements
        .iter()
        .find(|e| e.path == "XT.XM1.Rm")
        .unwrap();
    assert_eq!(rm.nodes, ["XT.XM1.n1", "vcc"], "global net keeps its name");
    let k1 = flat.elements.iter().find(|e| e.path == "XT.K1").unwrap();
    assert_eq!(k1.refs, ["XT.L1", "XT.L2"]);
    assert_eq!(
        flat.elements
            .iter()
            .find(|e| e.path == "XT.L1")
            .unwrap()
            .nodes,
        ["a", "0"]
    );
    assert_eq!(flat.elements.last().unwrap().path, "V1");
    assert!(flat.elements.last().unwrap().instances.is_empty());
}

#[test]
fn kept_subcircuits_stay_one_element() {
    let deck = "\
Kept timer
.subckt timer555 gnd trig out reset ctrl thr dis vcc params: ladder=5k
R1 vcc ctrl {ladder}
.ends timer555
XU1 0 tr o vcc c th d vcc timer555 ladder=4.7k extra=1
XU2 a b pumpmotor rated_voltage=12
XU3 a b nothing_known
";
    let mut sources = SourceMap::new();
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("kept.cir");
    std::fs::write(&path, deck).unwrap();
    let keep = |n: &str| n.eq_ignore_ascii_case("TIMER555") || n.eq_ignore_ascii_case("pumpmotor");
    let (flat, findings) = load(&path, &mut sources, &Limits::default(), &keep).unwrap();
    assert!(findings.is_empty(), "{findings:?}");
    assert_eq!(flat.elements.len(), 3);
    let u1 = &flat.elements[0];
    assert_eq!((u1.letter, u1.model.as_deref()), ('X', Some("timer555")));
    let kept = u1.subckt.as_ref().unwrap();
    assert_eq!(
        kept.ports,
        ["gnd", "trig", "out", "reset", "ctrl", "thr", "dis", "vcc"]
    );
    assert_eq!(sources.locate(kept.definition.unwrap()).line, 2);
    assert_eq!(
        u1.params,
        [
            ("ladder".to_string(), Num::Known(4700.0)),
            ("extra".to_string(), Num::Known(1.0))
        ]
    );
    let u2 = &flat.elements[1];
    let kept = u2.subckt.as_ref().unwrap();
    assert!(kept.ports.is_empty() && kept.definition.is_none());
    assert_eq!(u2.param("rated_voltage"), Some(Num::Known(12.0)));
    let u3 = &flat.elements[2];
    assert!(u3.subckt.is_none());
    assert_eq!(u3.model.as_deref(), Some("nothing_known"));
    assert_eq!(u3.nodes, ["a", "b"]);
}

fn write_deck(text: &str) -> (tempfile::TempDir, std::path::PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("deck.cir");
    let mut f = std::fs::File::create(&path).unwrap();
    f.write_all(text.as_bytes()).unwrap();
    (dir, path)
}

#[test]
fn expansion_past_the_limit_is_refused_quickly() {
    // Ten levels of ten instances: 10^10 resistors if it were expanded.
    let mut deck = String::from("Instance bomb\n.subckt l0 a b\nR1 a b 1\n.ends\n");
    for level in 1..=10 {
        deck.push_str(&format!(".subckt l{level} a b\n"));
        for i in 0..10 {
            deck.push_str(&format!("X{i} a b l{}\n", level - 1));
        }
        deck.push_str(".ends\n");
    }
    deck.push_str("XTOP in 0 l10\n.end\n");
    let (_dir, path) = write_deck(&deck);
    let started = Instant::now();
    let result = load(&path, &mut SourceMap::new(), &Limits::default(), &|_| false);
    let took = started.elapsed();
    match result {
        Err(LoadError::TooManyElements {
            count,
            limit,
            chain,
        }) => {
            assert_eq!(count, 10_000_000_000);
            assert_eq!(limit, Limits::default().max_elements);
            assert_eq!(chain, "XTOP.X0.X0.X0.X0.X0.X0.X0.X0.X0.X0");
        }
        other => panic!("{:?}", other.map(|r| r.0.elements.len())),
    }
    assert!(took.as_secs_f64() < 1.0, "took {took:?}");
}

#[test]
fn too_deep_nesting_is_a_finding() {
    let mut deck = String::from("Deep\n.subckt d0 a\nR1 a 0 1\n.ends\n");
    for level in 1..=80 {
        deck.push_str(&format!(".subckt d{level} a\nX1 a d{}\n.ends\n", level - 1));
    }
    deck.push_str("XTOP n d80\n.end\n");
    let (flat, findings, _) = parse_str("deep.cir", &deck);
    assert!(
        findings
            .iter()
            .any(|f| f.message.contains("more than 64 levels")),
        "{findings:?}"
    );
    assert!(flat.elements.is_empty());
}
