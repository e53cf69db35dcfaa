//! A switch's rail, load branch and the currents it carries.

use super::*;

/// The supply a switch and its load work from.
#[derive(Clone, Debug)]
pub struct Rail {
    pub v: Range,
    pub supply: Option<DeviceId>,
    /// The supply's positive net, when known.
    pub net: Option<NetId>,
}
/// The rail of a switch: the analysis's rail voltage, or the corners of its rail supply.
pub fn rail(cx: &RuleContext<'_>, sw: &SwitchFacts) -> Option<Rail> {
    let net = sw.rail_net.or_else(|| {
        sw.rail_supply
            .and_then(|s| device(cx, s))
            .and_then(|d| d.pin(PinRole::Pos))
    });
    let from_supply = || {
        sw.rail_supply
            .and_then(|s| supply_facts(cx, s))
            .map(|s| supply_range(cx, s))
    };
    let v = match &sw.rail_v {
        Some(r) if r.max.abs() > 0.1 => Some(r.clone()),
        _ => from_supply(),
    }?;
    Some(Rail {
        v,
        supply: sw.rail_supply,
        net,
    })
}
pub fn load_of<'a>(cx: &RuleContext<'a>, sw: &SwitchFacts) -> Option<&'a LoadFacts> {
    cx.analysis.loads.get(sw.load?)
}
/// The device a person calls "the load": the load part, else the first inductive part of the
/// branch, else the branch's first device.
pub fn load_device(cx: &RuleContext<'_>, sw: &SwitchFacts) -> Option<DeviceId> {
    if let Some(load) = load_of(cx, sw) {
        return Some(load.device);
    }
    sw.branch
        .iter()
        .copied()
        .find(|&d| kind(cx, d).is_some_and(Kind::is_inductive))
        .or_else(|| sw.branch.first().copied())
}
/// The switch's main terminals: drain and source, or collector and emitter.
pub fn main_terminals(d: &Device) -> Option<(NetId, NetId)> {
    if d.kind.is_mos() {
        Some((d.pin(PinRole::Drain)?, d.pin(PinRole::Source)?))
    } else if d.kind.is_bjt() {
        Some((d.pin(PinRole::Collector)?, d.pin(PinRole::Emitter)?))
    } else {
        None
    }
}
/// The two ends of a load branch: the node the switch pulls (`switched`) and the far end.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct BranchEnds {
    pub switched: NetId,
    pub far: NetId,
}
pub fn branch_ends(cx: &RuleContext<'_>, sw: &SwitchFacts) -> Option<BranchEnds> {
    let mut counts: Vec<(NetId, usize)> = Vec::new();
    for &d in &sw.branch {
        for pin in &device(cx, d)?.pins {
            match counts.iter_mut().find(|(n, _)| *n == pin.net) {
                Some((_, c)) => *c += 1,
                None => counts.push((pin.net, 1)),
            }
        }
    }
    let ends: Vec<NetId> = counts
        .iter()
        .filter(|(_, c)| c % 2 == 1)
        .map(|(n, _)| *n)
        .collect();
    if let Some(switched) = sw.switched_net {
        if let Some(&far) = ends.iter().find(|&&n| n != switched) {
            return Some(BranchEnds { switched, far });
        }
    }
    let (a, b) = main_terminals(device(cx, sw.device)?)?;
    match ends.as_slice() {
        [x, y] if *x == a || *x == b => Some(BranchEnds {
            switched: *x,
            far: *y,
        }),
        [x, y] if *y == a || *y == b => Some(BranchEnds {
            switched: *y,
            far: *x,
        }),
        _ => None,
    }
}
/// A device's DC resistance as the stand-ins see it: a resistor's value, a winding's
/// resistance (or rated voltage over stall or rated current).
pub fn dc_resistance(cx: &RuleContext<'_>, id: DeviceId) -> Option<f64> {
    let d = device(cx, id)?;
    let data = &d.data;
    match d.kind {
        Kind::Resistor | Kind::Potentiometer => {
            crate::analysis::part_values::resistance(cx.netlist, d)
        }
        k if k.is_inductive() => data.value("resistance").or_else(|| {
            let v = data.value("rated_voltage")?;
            let i = data
                .value("stall_current")
                .or_else(|| data.value("rated_current").filter(|_| k != Kind::DcMotor))?;
            (i > 0.0).then(|| v / i)
        }),
        _ => None,
    }
    .filter(|r| r.is_finite() && *r >= 0.0)
}
/// The branch current with the switch saturated, as the analysis found it (the rail less a
/// saturated switch's drop over the branch's resistance; see
/// [`SwitchFacts::saturated_current_a`]).
pub fn saturated_current(sw: &SwitchFacts) -> Option<&Range> {
    sw.saturated_current_a.as_ref().filter(|r| r.max > 0.0)
}
/// True when something other than the load flows through the switch in the on state: a
/// freewheel diode fitted backwards, or one whose reverse rating is below the rail so that it
/// breaks down. The switch's current and loss then describe that short, which its own rule
/// reports, not the switch's drive.
pub fn shorted_through(cx: &RuleContext<'_>, sw: &SwitchFacts) -> bool {
    let rail_v = rail(cx, sw).map(|r| r.v.max);
    sw.freewheel.iter().any(|fw| {
        let broken_down = matches!(kind(cx, fw.device), Some(Kind::Diode | Kind::Schottky))
            && match (rated(cx, fw.device, "vrrm"), rail_v) {
                (Some(v), Some(rail)) => v.value < rail,
                _ => false,
            };
        fw.reversed || broken_down
    })
}
