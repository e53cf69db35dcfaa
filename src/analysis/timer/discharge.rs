//! The discharge pin: the current it sinks while on (DC, the capacitor open) over pot travel
//! and corners, what it sees while off (a Thevenin resistance and the voltage behind it, so a
//! dead short at a pot's end shows up as almost no resistance), the parts between it and the
//! supply, and a capacitor dumped straight into it through a steering diode.

use super::config::{NetIndex, Setup};
use super::sweep::{self, Point};
use crate::analysis::dc;
use crate::analysis::facts::Range;
use crate::analysis::stand_in;
use crate::analysis::states::{Context, Solved, State};
use crate::circuit::{DeviceId, Kind, PinRole};

#[derive(Clone, Debug, Default, PartialEq)]
pub struct Discharge {
    pub current_a: Option<Range>,
    pub source_ohms: Option<Range>,
    pub open_v: Option<Range>,
    pub chain: Vec<DeviceId>,
    pub dump: Option<(DeviceId, f64)>,
    pub dump_state: Option<String>,
}

/// Share of the pin's current above which a part counts as part of the chain that feeds it.
const CHAIN_SHARE: f64 = 0.01;

fn pin_current(cx: &Context<'_>, setup: &Setup, state: &State) -> Option<(f64, Solved)> {
    let dis = setup.dis?;
    let component = cx
        .partition
        .net_component
        .get(dis)
        .copied()
        .flatten()
        .and_then(|c| cx.partition.components.get(c))?;
    let low = sweep::with_level(state, setup.device, false);
    let solved = cx.solve(component, &low).ok()?;
    let element = solved.elements(setup.device)?.discharge?;
    let i = solved.current(element)?;
    Some((i, solved))
}

/// Thevenin equivalent at the discharge pin with the pin off.
fn seen_when_off(cx: &Context<'_>, setup: &Setup, state: &State) -> Option<dc::Thevenin> {
    let dis = setup.dis?;
    let component = cx
        .partition
        .net_component
        .get(dis)
        .copied()
        .flatten()
        .and_then(|c| cx.partition.components.get(c))?;
    let high = sweep::with_level(state, setup.device, true);
    let built = cx.build(component, &high);
    let node = built.node(dis)?;
    cx.thevenin(&built.network, node).ok()
}

pub fn analyze(
    cx: &Context<'_>,
    index: &NetIndex,
    setup: &Setup,
    describe: &dyn Fn(&State) -> String,
) -> Discharge {
    let mut out = Discharge::default();
    let Some(dis) = setup.dis else {
        return out;
    };
    // A discharge pin on a fixed net (tied to ground or straight to a rail) has no network of
    // its own to solve; a rail is the dead short itself.
    if cx
        .partition
        .net_component
        .get(dis)
        .copied()
        .flatten()
        .is_none()
    {
        return tied(cx, setup, dis, describe).unwrap_or(out);
    }
    let mut pots = setup.pots.clone();
    if let Some(c) = cx.partition.net_component.get(dis).copied().flatten() {
        if let Some(component) = cx.partition.components.get(c) {
            pots.extend(cx.pots(component));
        }
    }
    pots.sort_unstable();
    pots.dedup();
    let points: Vec<Point> = sweep::points(cx, &pots, &[]);

    let current = |s: &State| pin_current(cx, setup, s).map(|(i, _)| i);
    let values: Vec<Option<f64>> = points.iter().map(|p| current(&p.state)).collect();
    out.current_a = sweep::range(&points, &values, &current, describe);

    let ohms = |s: &State| seen_when_off(cx, setup, s).map(|t| t.r_th);
    let open = |s: &State| seen_when_off(cx, setup, s).map(|t| t.v_open);
    let thevenins: Vec<Option<dc::Thevenin>> = points
        .iter()
        .map(|p| seen_when_off(cx, setup, &p.state))
        .collect();
    let r: Vec<Option<f64>> = thevenins.iter().map(|t| t.map(|t| t.r_th)).collect();
    let v: Vec<Option<f64>> = thevenins.iter().map(|t| t.map(|t| t.v_open)).collect();
    out.source_ohms = sweep::range(&points, &r, &ohms, describe);
    out.open_v = sweep::range(&points, &v, &open, describe);

    // The chain: parts carrying the pin's current where it is largest.
    let worst = values
        .iter()
        .enumerate()
        .filter_map(|(i, v)| v.map(|v| (i, v)))
        .max_by(|a, b| a.1.total_cmp(&b.1));
    if let Some((i, _)) = worst {
        if let Some((amps, solved)) = pin_current(cx, setup, &points[i].state) {
            out.chain = carriers(cx, &solved, amps, dis);
        }
    }
    if let Some((diode, peak, at)) = dump(cx, index, setup, &points) {
        out.dump = Some((diode, peak));
        out.dump_state = Some(describe(&points[at].state));
    }
    out
}

/// DIS wired straight to a fixed net. On a rail it is the dead short itself: nothing between
/// the pin and the supply, and the pin sinks all it can (its own current limit).
fn tied(
    cx: &Context<'_>,
    setup: &Setup,
    dis: usize,
    describe: &dyn Fn(&State) -> String,
) -> Option<Discharge> {
    let gnd = cx.circuit.devices().get(setup.device)?.pin(PinRole::Gnd);
    let mut volts = Vec::new();
    for &corner in sweep::corners(cx) {
        let state = State {
            corner,
            high: Vec::new(),
            wipers: Default::default(),
        };
        let v = cx.fixed_voltage(dis, &state)?
            - gnd.and_then(|g| cx.fixed_voltage(g, &state)).unwrap_or(0.0);
        volts.push((v, describe(&state)));
    }
    let open_v = Range::from_samples(volts.iter().map(|(v, s)| (*v, s.as_str())))?;
    if open_v.max <= 1.0 {
        return None;
    }
    let limit = Range::point(stand_in::DISCHARGE_LIMIT_A, open_v.max_state.clone());
    Some(Discharge {
        current_a: Some(limit),
        source_ohms: Some(Range::point(0.0, open_v.max_state.clone())),
        open_v: Some(open_v),
        ..Discharge::default()
    })
}

/// Resistors, pots and diodes carrying at least [`CHAIN_SHARE`] of the pin's current.
fn carriers(cx: &Context<'_>, solved: &Solved, amps: f64, dis: usize) -> Vec<DeviceId> {
    if amps <= 0.0 {
        return Vec::new();
    }
    let Some(component) = cx
        .partition
        .net_component
        .get(dis)
        .copied()
        .flatten()
        .and_then(|c| cx.partition.components.get(c))
    else {
        return Vec::new();
    };
    let mut chain = Vec::new();
    for &d in &component.devices {
        let device = &cx.circuit.devices()[d];
        let is_path = matches!(device.kind, Kind::Resistor | Kind::Potentiometer)
            || device.kind.is_diode_like();
        if !is_path {
            continue;
        }
        let Some(el) = solved.elements(d) else {
            continue;
        };
        let i = [el.main, el.wiper_b]
            .into_iter()
            .flatten()
            .filter_map(|e| solved.current(e))
            .fold(0.0f64, |m, i| m.max(i.abs()));
        if i >= CHAIN_SHARE * amps {
            chain.push(d);
        }
    }
    chain
}

/// Most a diode drop (and its own series resistance) can account for between the capacitor and
/// DIS while the pin takes the dump; anything more is a resistor in the path.
const DUMP_DROP_V: f64 = 1.5;

/// A capacitor dumped into the pin through a steering diode with no resistor in series (a
/// diode straight from the timing net onto DIS, or through a pot turned to its zero end). With
/// the capacitor held at the upper threshold and the pin on, the pin's current runs through a
/// diode from the timing net and the capacitor sits no more than a diode drop above DIS. The
/// peak is the largest such pin current over pot travel and corners, the pin's own current
/// limit included.
fn dump(
    cx: &Context<'_>,
    index: &NetIndex,
    setup: &Setup,
    points: &[Point],
) -> Option<(DeviceId, f64, usize)> {
    let (thr, dis) = (setup.timing_net?, setup.dis?);
    if thr == dis {
        return None;
    }
    let diodes: Vec<DeviceId> = index
        .on(thr)
        .iter()
        .filter(|&&(d, role)| {
            cx.circuit.devices()[d].kind.is_diode_like() && role == PinRole::Anode
        })
        .map(|&(d, _)| d)
        .collect();
    if diodes.is_empty() {
        return None;
    }
    let data = &cx.circuit.devices().get(setup.device)?.data;
    let floor = data.value("discharge_current_rated").unwrap_or(0.015);
    let mut best: Option<(DeviceId, f64, usize)> = None;
    for (at, point) in points.iter().enumerate() {
        let high = sweep::with_level(&point.state, setup.device, true);
        let Some(th) = super::phase::thresholds(cx, index, setup, &high)
            .ok()
            .flatten()
        else {
            continue;
        };
        let Some(solved) = held_low(cx, setup, &point.state, th.upper) else {
            continue;
        };
        let pin = solved
            .elements(setup.device)
            .and_then(|e| e.discharge)
            .and_then(|e| solved.current(e));
        let (Some(pin), Some(vt), Some(vd)) = (pin, solved.voltage(thr), solved.voltage(dis))
        else {
            continue;
        };
        if pin <= floor || vt - vd > DUMP_DROP_V {
            continue;
        }
        let carrier = diodes.iter().copied().find(|&d| {
            solved
                .elements(d)
                .and_then(|e| e.main)
                .and_then(|e| solved.current(e))
                .is_some_and(|i| i >= 0.5 * pin)
        });
        if let Some(d) = carrier {
            if best.is_none_or(|(_, p, _)| pin > p) {
                best = Some((d, pin, at));
            }
        }
    }
    best
}

/// The timing component solved with the pin on and the capacitor held at `volts`.
fn held_low(cx: &Context<'_>, setup: &Setup, state: &State, volts: f64) -> Option<Solved> {
    let net = setup.timing_net?;
    let component = setup
        .component
        .and_then(|c| cx.partition.components.get(c))?;
    let low = sweep::with_level(state, setup.device, false);
    let mut built = cx.build(component, &low);
    let node = built.node(net)?;
    let ground = built.network.ground();
    built.network.add_voltage_source(node, ground, volts);
    built.solve_in(cx).ok()
}
