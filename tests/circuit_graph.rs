//! The circuit graph: nets, ground aliases and the queries the analyses and rules use.

#[path = "circuit_support.rs"]
mod support;

use kickback::circuit::{Kind, PinRole};
use kickback::config::Config;
use support::{config, el, id, net, Deck};

/// A low-side switch running an inductive load from a 12 V rail, with a freewheel diode and a
/// gate network, plus islands that have no DC path to ground.
fn drive() -> Deck {
    Deck::new()
        .model("MN", "NMOS", &[])
        .model("DFW", "D", &[])
        .with(el("V1", "vcc 0").value(12.0))
        .with(el("R1", "vcc n1").value(1.0))
        .with(el("R2", "n1 n2").value(1.0))
        .with(el("L1", "n2 drain").value(1e-3))
        .with(el("M1", "drain gate 0 0").model("MN"))
        .with(el("D1", "drain vcc").model("DFW"))
        .with(el("R3", "gate GND").value(10e3))
        .with(el("VG", "gsrc 0").value(5.0))
        .with(el("R4", "gsrc gate").value(100.0))
        .with(el("C1", "vcc 0").value(100e-6))
        .with(el("C2", "float1 0").value(1e-9))
        .with(el("R5", "float1 float2").value(1e3))
        .with(el("I1", "isl 0").value(1e-3))
        .with(el("RX", "a1 a2").value(1e3))
        .with(el("M2", "d2 g2 0 0").model("MN"))
        .with(el("C3", "g2 0").value(1e-9))
        .with(el("R6", "d2 vcc").value(1e3))
        .with(el("E1", "eout 0 ctl 0").value(2.0))
        .with(el("R7", "eout 0").value(1e3))
        .with(el("C4", "ctl 0").value(1e-9))
}

#[test]
fn ground_aliases_merge_into_one_net() {
    let deck = || {
        Deck::new()
            .with(el("R1", "a 0").value(1.0))
            .with(el("R2", "a GND").value(1.0))
            .with(el("R3", "a gnd").value(1.0))
            .with(el("R4", "a AGND").value(1.0))
    };
    let (circuit, _, _) = deck().build(&Config::default());
    let ground = circuit.ground().expect("a ground net");
    assert_eq!(circuit.nets().iter().filter(|n| n.is_ground).count(), 1);
    assert!(circuit.nets()[ground].is_ground);
    assert_eq!(circuit.nets()[ground].name, "0", "named as first written");
    assert_eq!(circuit.net_named("Gnd"), Some(ground));
    assert_ne!(
        circuit.net_named("agnd"),
        Some(ground),
        "not an alias by default"
    );
    assert_eq!(circuit.net_degree(ground), 3);

    let cfg = config("[analysis]\nground = [\"gnd\", \"AGND\"]\n");
    let (circuit, _, _) = deck().build(&cfg);
    let ground = circuit.ground().expect("a ground net");
    assert_eq!(circuit.net_named("agnd"), Some(ground));
    assert_eq!(
        circuit.net_named("0"),
        Some(ground),
        "node 0 is always ground"
    );
    assert_eq!(circuit.net_degree(ground), 4);
    assert_eq!(circuit.nets().len(), 2);
}

#[test]
fn net_names_are_case_insensitive() {
    let (circuit, _, _) = Deck::new()
        .with(el("R1", "VBAT Out").value(1.0))
        .with(el("R2", "vbat out").value(1.0))
        .build(&Config::default());
    assert_eq!(circuit.nets().len(), 2);
    assert_eq!(circuit.nets()[0].name, "VBAT");
    assert_eq!(circuit.net_named("vBaT"), Some(0));
    assert_eq!(circuit.ground(), None);
    assert!(!circuit.has_dc_path_to_ground(0));
}

#[test]
fn devices_on_a_net_and_degree() {
    let (circuit, _, _) = drive().build(&Config::default());
    let vcc = net(&circuit, "vcc");
    let mut on: Vec<(usize, usize)> = circuit.devices_on(vcc).to_vec();
    on.sort();
    let mut want = vec![
        (id(&circuit, "V1"), 0),
        (id(&circuit, "R1"), 0),
        (id(&circuit, "D1"), 1),
        (id(&circuit, "C1"), 0),
        (id(&circuit, "R6"), 1),
    ];
    want.sort();
    assert_eq!(on, want);
    assert_eq!(circuit.net_degree(vcc), 5);
    let drain = net(&circuit, "drain");
    assert_eq!(circuit.net_degree(drain), 3);
    // The pin index points at the role on the device.
    for &(device, pin) in circuit.devices_on(drain) {
        let role = circuit.devices()[device].pins[pin].role;
        assert!(
            matches!(role, PinRole::Neg | PinRole::Drain | PinRole::Anode),
            "{role}"
        );
    }
}

#[test]
fn elements_between_and_other_end() {
    let (circuit, _, _) = drive().build(&Config::default());
    let vcc = net(&circuit, "vcc");
    let ground = circuit.ground().expect("ground");
    let drain = net(&circuit, "drain");
    let want = vec![id(&circuit, "V1"), id(&circuit, "C1")];
    assert_eq!(circuit.elements_between(vcc, ground), want);
    assert_eq!(
        circuit.elements_between(ground, vcc),
        want,
        "either orientation"
    );
    assert_eq!(
        circuit.elements_between(drain, vcc),
        vec![id(&circuit, "D1")]
    );
    assert!(
        circuit.elements_between(drain, ground).is_empty(),
        "M1 is not two-terminal"
    );

    let r2 = id(&circuit, "R2");
    assert_eq!(
        circuit.other_end(r2, net(&circuit, "n1")),
        Some(net(&circuit, "n2"))
    );
    assert_eq!(
        circuit.other_end(r2, net(&circuit, "n2")),
        Some(net(&circuit, "n1"))
    );
    assert_eq!(circuit.other_end(r2, vcc), None);
    assert_eq!(circuit.other_end(id(&circuit, "M1"), drain), None);
}

#[test]
fn series_chain_through_degree_two_nets() {
    let (circuit, _, _) = drive().build(&Config::default());
    let vcc = net(&circuit, "vcc");
    let chain = circuit
        .series_chain(vcc, id(&circuit, "R1"))
        .expect("R1 is on vcc");
    assert_eq!(
        chain.devices,
        vec![id(&circuit, "R1"), id(&circuit, "R2"), id(&circuit, "L1")]
    );
    assert_eq!(
        chain.nets,
        vec![
            vcc,
            net(&circuit, "n1"),
            net(&circuit, "n2"),
            net(&circuit, "drain")
        ]
    );
    assert_eq!(chain.end(), net(&circuit, "drain"));
    assert!(!chain.closed);
    // Walking the other way from the drain end comes back to the rail.
    let back = circuit
        .series_chain(net(&circuit, "drain"), id(&circuit, "L1"))
        .expect("L1 is on drain");
    assert_eq!(back.end(), vcc);
    assert_eq!(back.devices.len(), 3);
    assert!(circuit.series_chain(vcc, id(&circuit, "M1")).is_none());
}

#[test]
fn series_chain_of_a_ring_stops() {
    let (circuit, _, _) = Deck::new()
        .with(el("R1", "a b").value(1.0))
        .with(el("R2", "b c").value(1.0))
        .with(el("R3", "c a").value(1.0))
        .build(&Config::default());
    let chain = circuit
        .series_chain(net(&circuit, "a"), id(&circuit, "R1"))
        .expect("chain");
    assert!(chain.closed);
    assert_eq!(chain.devices.len(), 3);
}

#[test]
fn path_between_respects_avoid_and_through() {
    let (circuit, _, _) = drive().build(&Config::default());
    let vcc = net(&circuit, "vcc");
    let ground = circuit.ground().expect("ground");
    let v1 = id(&circuit, "V1");
    let c1 = id(&circuit, "C1");
    // Among paths of one length, walks meet devices in netlist order: V1 before C1.
    assert_eq!(
        circuit.path_between(vcc, ground, &[], |_| true),
        Some(vec![v1])
    );
    assert_eq!(
        circuit.path_between(vcc, ground, &[v1], |_| true),
        Some(vec![c1])
    );
    // Without the source and the bulk capacitor: through the diode and the switch (D1 comes
    // before R6 on the rail).
    let path = circuit.path_between(vcc, ground, &[v1, c1], |_| true);
    assert_eq!(path, Some(vec![id(&circuit, "D1"), id(&circuit, "M1")]));
    // Through resistors and inductors only, the rail does not reach ground.
    let passive = |d: &kickback::circuit::Device| matches!(d.kind, Kind::Resistor | Kind::Inductor);
    assert_eq!(circuit.path_between(vcc, ground, &[], passive), None);
    let to_drain = circuit.path_between(vcc, net(&circuit, "drain"), &[], passive);
    assert_eq!(
        to_drain,
        Some(vec![
            id(&circuit, "R1"),
            id(&circuit, "R2"),
            id(&circuit, "L1")
        ])
    );
    assert_eq!(circuit.path_between(vcc, vcc, &[], |_| false), Some(vec![]));
    assert_eq!(
        circuit.path_between(vcc, net(&circuit, "a1"), &[], |_| true),
        None
    );
}

#[test]
fn components_and_dc_paths() {
    let (circuit, _, _) = drive().build(&Config::default());
    let a1 = net(&circuit, "a1");
    let a2 = net(&circuit, "a2");
    assert_eq!(circuit.connected_component(a1), &[a1, a2]);
    let main = circuit.connected_component(net(&circuit, "vcc"));
    assert!(main.contains(&net(&circuit, "float2")));
    assert!(!main.contains(&a1));
    assert_eq!(
        circuit.component_of(net(&circuit, "gate")),
        circuit.component_of(net(&circuit, "vcc"))
    );

    for (name, want) in [
        ("vcc", true),
        ("drain", true),
        ("gate", true),
        ("n2", true),
        ("eout", true),
        ("float1", false), // only a capacitor to ground
        ("float2", false), // a resistor to a net that has only a capacitor
        ("isl", false),    // a current source is no DC path
        ("g2", false),     // a gate is insulated
        ("ctl", false),    // a controlled source's input draws nothing
        ("a1", false),
    ] {
        assert_eq!(
            circuit.has_dc_path_to_ground(net(&circuit, name)),
            want,
            "{name}"
        );
    }
}

#[test]
fn devices_by_kind_and_by_name() {
    let (circuit, _, netlist) = drive().build(&Config::default());
    let mosfets: Vec<&str> = circuit
        .devices_of(Kind::Nmos)
        .iter()
        .map(|&d| netlist.elements[circuit.devices()[d].element].path.as_str())
        .collect();
    assert_eq!(mosfets, ["M1", "M2"]);
    assert!(circuit.devices_of(Kind::Timer555).is_empty());
    assert_eq!(circuit.device_named("r2"), Some(id(&circuit, "R2")));
    assert_eq!(circuit.device_named("nope"), None);
    for (i, device) in circuit.devices().iter().enumerate() {
        assert_eq!(
            device.element, i,
            "Device::element indexes the flat elements"
        );
    }
    // The bipartite graph: one node per net and device, one edge per pin.
    let pins: usize = circuit.devices().iter().map(|d| d.pins.len()).sum();
    assert_eq!(
        circuit.graph().node_count(),
        circuit.nets().len() + circuit.devices().len()
    );
    assert_eq!(circuit.graph().edge_count(), pins);
}

#[test]
fn long_chains_stay_linear() {
    // 50,000 resistors in series: every query here must walk the chain once, not square it.
    let mut deck = Deck::new();
    let count = 50_000;
    for i in 0..count {
        let nodes = format!("n{i} n{}", i + 1);
        deck = deck.with(el(&format!("R{i}"), &nodes).value(1.0));
    }
    let deck = deck.with(el("RG", &format!("n{count} 0")).value(1.0));
    let (circuit, _, _) = deck.build(&Config::default());
    let start = net(&circuit, "n0");
    let chain = circuit
        .series_chain(start, id(&circuit, "R0"))
        .expect("chain");
    assert_eq!(chain.devices.len(), count + 1);
    assert_eq!(Some(chain.end()), circuit.ground());
    assert!(circuit.has_dc_path_to_ground(start));
    let path = circuit.path_between(start, net(&circuit, "n1000"), &[], |_| true);
    assert_eq!(path.map(|p| p.len()), Some(1000));
}

#[test]
fn out_of_range_ids_answer_nothing() {
    let (circuit, _, _) = drive().build(&Config::default());
    let far = usize::MAX;
    assert!(circuit.devices_on(far).is_empty());
    assert_eq!(circuit.net_degree(far), 0);
    assert!(circuit.elements_between(far, 0).is_empty());
    assert_eq!(circuit.other_end(far, 0), None);
    assert!(circuit.series_chain(0, far).is_none());
    assert_eq!(circuit.path_between(far, 0, &[], |_| true), None);
    assert!(circuit.connected_component(far).is_empty());
    assert!(!circuit.has_dc_path_to_ground(far));
}

/// A circuit assembled by hand through `CircuitBuilder` answers every query as the circuit
/// built from the same netlist does: the indexes exist whichever way a circuit is made.
#[test]
fn a_built_by_hand_circuit_has_the_same_indexes() {
    use kickback::circuit::CircuitBuilder;
    let config = Config::default();
    let (built, _, netlist) = drive().build(&config);
    let mut parts = CircuitBuilder::new();
    for n in built.nets() {
        parts.add_net(n.clone());
    }
    for d in built.devices() {
        parts.add_device(d.clone());
    }
    let by_hand = parts.build(&netlist, &config);
    assert_eq!(by_hand.ground(), built.ground());
    for (n, named) in built.nets().iter().enumerate() {
        assert_eq!(by_hand.net_named(&named.name), Some(n), "{}", named.name);
        assert_eq!(by_hand.devices_on(n), built.devices_on(n));
        assert_eq!(by_hand.component_of(n), built.component_of(n));
        assert_eq!(by_hand.dc_component_of(n), built.dc_component_of(n));
        assert_eq!(by_hand.wire_of(n), built.wire_of(n));
    }
    assert_eq!(by_hand.net_named("gnd"), built.ground());
    for e in &netlist.elements {
        assert_eq!(by_hand.device_named(&e.path), built.device_named(&e.path));
    }
    assert_eq!(by_hand.devices_of(Kind::Nmos), built.devices_of(Kind::Nmos));
}
