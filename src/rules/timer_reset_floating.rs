//! `timer-reset-floating`: a 555's RESET is on a net of its own, or reaches nothing that holds
//! it (only a capacitor, a push-button, a diode). See `rules/timer-reset-floating.md`.
//!
//! RESET is held when its resistive network reaches a rail, ground, a voltage source, or an
//! output (another timer, a transistor, a logic output: a controller that drives RESET on
//! purpose is not a wiring mistake).

use super::support::hygiene::{finding_at, net_name, shown, Tracer};
use super::Rule;
use super::RuleContext;
use crate::circuit::{Kind, PinRole};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "timer-reset-floating",
    default_severity: Severity::Warning,
    grades: &[Severity::Warning],
    summary: "A timer's reset pin is left floating",
    page: include_str!("../../rules/timer-reset-floating.md"),
    check: Some(check),
};

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    if !cx.circuit.devices().iter().any(|d| d.kind.is_timer()) {
        return;
    }
    let tracer = Tracer::new(cx);
    for device in cx.circuit.devices().iter().filter(|d| d.kind.is_timer()) {
        let (Some(reset), Some(vcc)) = (device.pin(PinRole::Reset), device.pin(PinRole::Vcc))
        else {
            continue;
        };
        if reset == vcc {
            continue;
        }
        let Some(element) = cx.netlist.elements.get(device.element) else {
            continue;
        };
        let r = net_name(cx, reset);
        let v = net_name(cx, vcc);
        let alone = tracer.index.degree(reset) <= 1;
        let finding = if alone {
            finding_at(
                RULE,
                RULE.severity(),
                element,
                format!(
                    "RESET of {} (net `{r}`) connects to nothing: a floating RESET picks up noise \
                     and stops or restarts the timer at random",
                    element.path
                ),
            )
        } else {
            let trace = tracer.trace(reset, &[]);
            if trace.is_driven() || !trace.may_float.is_empty() {
                continue;
            }
            let reached: Vec<String> = trace
                .blocked
                .iter()
                .take(4)
                .map(|&b| shown(cx, b))
                .collect();
            let mut f = finding_at(
                RULE,
                RULE.severity(),
                element,
                format!(
                    "RESET of {} (net `{r}`) is tied to nothing that holds it{}: it floats, picks \
                     up noise and stops or restarts the timer at random",
                    element.path,
                    if reached.is_empty() {
                        String::new()
                    } else {
                        format!(" (only {})", reached.join(", "))
                    }
                ),
            );
            for &b in trace.blocked.iter().take(4) {
                if let Some(e) = cx
                    .circuit
                    .devices()
                    .get(b)
                    .and_then(|d| cx.netlist.elements.get(d.element))
                {
                    f = f.with_label(e.span, format!("{} does not hold RESET at a level", e.path));
                }
            }
            f
        };
        let pull = format!("RRST_{}", element.name);
        let kind_note = if device.kind == Kind::Timer555Cmos {
            "CMOS inputs float higher still"
        } else {
            "the bipolar input needs a defined level too"
        };
        out.push(finding.with_help(format!(
            "tie RESET to VCC: connect `{r}` to `{v}`, or fit a pull-up `{pull} {r} {v} 10k` if \
             something must pull it low (common practice; {kind_note})"
        )));
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rules::support::hygiene::testkit::Deck;

    #[test]
    fn reset_on_vcc_is_quiet() {
        assert!(Deck::fan().run(check).is_empty());
    }

    #[test]
    fn reset_to_a_capacitor_only_fires_and_a_pull_up_fixes_it() {
        let mut d = Deck::fan();
        let rst = d.net("rst");
        let u1 = d
            .parts
            .devices()
            .iter()
            .position(|x| x.kind.is_timer())
            .unwrap();
        d.device_mut(u1).pins[3].net = rst;
        d.c("CRST", "rst", "0", 1e-6);
        let found = d.run(check);
        assert_eq!(found.len(), 1, "{found:?}");
        assert!(found[0].message.contains("only CRST"));
        d.r("RRST", "rst", "v12", "10k", 10e3);
        assert!(d.run(check).is_empty());
    }
}
