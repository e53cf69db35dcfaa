//! The discharge pin: the current it sinks while on (DC, the capacitor open) over pot travel
//! and corners, what it sees while off (a Thevenin resistance and the voltage behind it, so a
//! dead short at a pot's end shows up as almost no resistance), the parts between it and the
//! supply, and a capacitor dumped straight into it through a steering diode.

use super::config::{NetIndex, Setup};
use super::sweep::{self, Point};
use crate::analysis::dc::{self, DcError};
use crate::analysis::facts::Range;
use crate::analysis::states::{Context, Solved, State};
use crate::circuit::{DeviceId, Kind, PinRole};

#[derive(Clone, Debug, Default, PartialEq)]
pub struct Discharge {
    pub current_a: Option<Range>,
    pub source_ohms: Option<Range>,
    pub open_v: Option<Range>,
    pub chain: Vec<DeviceId>,
    pub dump: Option<(DeviceId, f64)>,
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
    dc::thevenin(&built.network, node, &cx.options).ok()
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
        return out;
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
    out.dump = dump(cx, index, setup);
    out
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
        let device = &cx.circuit.devices[d];
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

/// A diode from the timing net straight onto the discharge net (no resistor in series): at
/// each discharge the capacitor empties through it into the pin. Its peak current is the
/// diode's current with the capacitor held at the upper threshold and the pin on, at the
/// highest supply corner — the pin's own current limit included.
fn dump(cx: &Context<'_>, index: &NetIndex, setup: &Setup) -> Option<(DeviceId, f64)> {
    let (thr, dis) = (setup.timing_net?, setup.dis?);
    if thr == dis {
        return None;
    }
    let diode = index.on(thr).iter().find_map(|&(d, role)| {
        let device = &cx.circuit.devices[d];
        (device.kind.is_diode_like()
            && role == PinRole::Anode
            && device.pin(PinRole::Cathode) == Some(dis))
        .then_some(d)
    })?;
    let mut peak: Option<f64> = None;
    let index_ref = index;
    for &corner in sweep::corners(cx) {
        let state = State {
            corner,
            high: Vec::new(),
            wipers: setup.pots.iter().map(|&p| (p, 0.5)).collect(),
        };
        let high = sweep::with_level(&state, setup.device, true);
        let upper = super::phase::thresholds(cx, index_ref, setup, &high)
            .ok()
            .flatten()?
            .upper;
        let i = diode_current_held(cx, setup, &state, diode, upper)
            .ok()
            .flatten();
        if let Some(i) = i {
            peak = Some(peak.map_or(i, |p: f64| p.max(i)));
        }
    }
    peak.filter(|p| *p > 0.0).map(|p| (diode, p))
}

fn diode_current_held(
    cx: &Context<'_>,
    setup: &Setup,
    state: &State,
    diode: DeviceId,
    volts: f64,
) -> Result<Option<f64>, DcError> {
    let (Some(net), Some(component)) = (
        setup.timing_net,
        setup.component.and_then(|c| cx.partition.components.get(c)),
    ) else {
        return Ok(None);
    };
    let low = sweep::with_level(state, setup.device, false);
    let mut built = cx.build(component, &low);
    let Some(node) = built.node(net) else {
        return Ok(None);
    };
    let ground = built.network.ground();
    built.network.add_voltage_source(node, ground, volts);
    let solved = built.solve(&cx.options)?;
    Ok(solved
        .elements(diode)
        .and_then(|e| e.main)
        .and_then(|e| solved.current(e)))
}
