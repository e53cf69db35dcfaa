//! `driver-overload`: an output pin (a timer's `out`, a logic output) would source or sink more
//! than its rating, e.g. a motor hung straight on the pin. See `rules/driver-overload.md`.

use super::eseries::{ohms, round_up, E12};
use super::support::switch::{drive_level, finding_at, kind, label, name, rated_or, timer_facts};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::Range;
use crate::circuit::{DeviceId, Kind, NetId, PinRole};
use crate::diagnostic::{Finding, Severity};
use std::collections::BTreeMap;

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "driver-overload",
    default_severity: Severity::Error,
    grades: &[Severity::Error],
    summary: "An output pin would source or sink more than its rating",
    page: include_str!("../../rules/driver-overload.md"),
    check: Some(check),
};
/// V_BE of a silicon switch driven hard (from memory).
const VBE_ON_V: f64 = 0.8;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let mut draws = all_draws(cx);
    for (id, d) in cx.circuit.devices().iter().enumerate() {
        if d.kind.is_timer() || d.kind == Kind::LogicOutput {
            out.extend(finding(cx, id, draws.remove(&id).unwrap_or_default()));
        }
    }
}

/// Who draws the pin's current: a load hung on the pin, or a BJT switch's base network.
enum Draw {
    Load(DeviceId, f64),
    Base {
        switch: DeviceId,
        resistor: Option<DeviceId>,
        amps: f64,
    },
}

impl Draw {
    fn amps(&self) -> f64 {
        match self {
            Draw::Load(_, a) | Draw::Base { amps: a, .. } => *a,
        }
    }
}

/// What draws from each output pin, for every driver at once (one pass over loads and
/// switches).
fn all_draws(cx: &RuleContext<'_>) -> BTreeMap<DeviceId, Vec<Draw>> {
    let mut by_out_net: BTreeMap<NetId, Vec<DeviceId>> = BTreeMap::new();
    for (id, d) in cx.circuit.devices().iter().enumerate() {
        if d.kind.is_timer() || d.kind == Kind::LogicOutput {
            if let Some(net) = d.pin(PinRole::Out) {
                by_out_net.entry(net).or_default().push(id);
            }
        }
    }
    let mut found: BTreeMap<DeviceId, Vec<Draw>> = BTreeMap::new();
    for load in &cx.analysis.loads {
        let Some(amps) = load
            .current_a
            .as_ref()
            .map(|r| r.max.abs().max(r.min.abs()))
        else {
            continue;
        };
        let mut drivers: Vec<DeviceId> = load.driven_by.into_iter().collect();
        if let Some(d) = cx.circuit.devices().get(load.device) {
            for pin in &d.pins {
                drivers.extend(by_out_net.get(&pin.net).into_iter().flatten().copied());
            }
        }
        drivers.sort_unstable();
        drivers.dedup();
        for driver in drivers {
            found
                .entry(driver)
                .or_default()
                .push(Draw::Load(load.device, amps));
        }
    }
    for sw in &cx.analysis.switches {
        let Some(driver) = sw.driver.as_ref() else {
            continue;
        };
        if !kind(cx, sw.device).is_some_and(Kind::is_bjt) {
            continue;
        }
        let Some(amps) = sw
            .base_current_a
            .as_ref()
            .map(|r| r.max.abs().max(r.min.abs()))
        else {
            continue;
        };
        let resistor = driver
            .network
            .iter()
            .copied()
            .find(|&n| kind(cx, n) == Some(Kind::Resistor));
        found.entry(driver.device).or_default().push(Draw::Base {
            switch: sw.device,
            resistor,
            amps,
        });
    }
    found
}

fn finding(cx: &RuleContext<'_>, id: DeviceId, draws: Vec<Draw>) -> Option<Finding> {
    let default = if kind(cx, id) == Some(Kind::LogicOutput) {
        0.02
    } else {
        0.2
    };
    let limit = rated_or(
        cx,
        id,
        "out_current_max",
        default,
        "default out_current_max (from memory)",
    );
    let computed: f64 = draws.iter().map(Draw::amps).sum();
    let (amps, state) = match timer_facts(cx, id).and_then(|t| t.output_current_a.as_ref()) {
        Some(r) => worst(r),
        None if computed > 0.0 => (computed, String::new()),
        None => return None,
    };
    if amps <= limit.value {
        return None;
    }
    let driver = name(cx, id);
    let biggest = draws.iter().max_by(|a, b| a.amps().total_cmp(&b.amps()));
    let into = match biggest {
        Some(Draw::Load(l, _)) => format!(" into {}", name(cx, *l)),
        Some(Draw::Base { switch, .. }) => format!(" into {}'s base", name(cx, *switch)),
        None => String::new(),
    };
    let when = if state.is_empty() {
        String::new()
    } else {
        format!(" ({state})")
    };
    let message = format!(
        "{driver}'s output would carry {}{into}{when}: above its {} rating, so the output stage \
         overheats and its level collapses",
        format_si(amps, "A"),
        format_si(limit.value, "A")
    );
    let primary = match biggest {
        Some(Draw::Load(l, _)) => *l,
        Some(Draw::Base {
            resistor: Some(r), ..
        }) => *r,
        Some(Draw::Base { switch, .. }) => *switch,
        None => id,
    };
    let mut f = finding_at(RULE, RULE.severity(), cx, primary, message)?;
    f = label(
        f,
        cx,
        id,
        &format!("{driver}'s output, rated {}", format_si(limit.value, "A")),
    );
    for d in &draws {
        match d {
            Draw::Load(l, a) => {
                f = label(
                    f,
                    cx,
                    *l,
                    &format!("draws {} from the pin", format_si(*a, "A")),
                );
            }
            Draw::Base {
                switch,
                resistor,
                amps,
            } => {
                f = label(
                    f,
                    cx,
                    *switch,
                    &format!("takes {} of base current", format_si(*amps, "A")),
                );
                if let Some(r) = resistor {
                    f = label(f, cx, *r, "sets the base current");
                }
            }
        }
    }
    let help = match biggest {
        Some(Draw::Load(l, _)) => format!(
            "drive {} through a switch: a logic-level N-channel MOSFET with its gate on \
             {driver}'s output through 100 Ω, and a flyback diode across {}",
            name(cx, *l),
            name(cx, *l)
        ),
        Some(Draw::Base {
            resistor: Some(r), ..
        }) => {
            let high = drive_level(cx, id).map(|l| l.high).unwrap_or(0.0);
            match round_up((high - VBE_ON_V) / limit.value, &E12).filter(|_| high > VBE_ON_V) {
                Some(ohm) => format!(
                    "raise {} to at least {} so the pin stays within {}; if the switch then gets \
                     too little base current, use a logic-level MOSFET instead",
                    name(cx, *r),
                    ohms(ohm),
                    format_si(limit.value, "A")
                ),
                None => format!(
                    "limit the base current below {}",
                    format_si(limit.value, "A")
                ),
            }
        }
        _ => format!(
            "buffer {driver}'s output with a transistor or gate driver that carries the current"
        ),
    };
    Some(
        f.with_help(help)
            .with_value("output_current", amps, "A", "computed")
            .with_value("out_current_max", limit.value, "A", limit.source),
    )
}

/// The largest magnitude of a signed current range (sourcing positive, sinking negative).
fn worst(r: &Range) -> (f64, String) {
    if r.max.abs() >= r.min.abs() {
        (r.max.abs(), r.max_state.clone())
    } else {
        (r.min.abs(), r.min_state.clone())
    }
}
