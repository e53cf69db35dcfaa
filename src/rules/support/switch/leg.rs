//! A bridge leg's two switches: which can still conduct while the other is on. Both
//! `shoot-through` and `gate-cannot-turn-off` ask.

use super::{in_conduction_sense, kind, rated_or};
use crate::analysis::SwitchFacts;
use crate::circuit::{DeviceId, Rated};
use crate::rules::RuleContext;

/// The conduction threshold to use for "can it conduct": the lowest the part's threshold goes.
pub fn threshold_min(cx: &RuleContext<'_>, id: DeviceId) -> Rated {
    match kind(cx, id) {
        Some(k) if k.is_bjt() => Rated {
            value: 0.5,
            source: "silicon base-emitter junction, from memory".into(),
        },
        _ => rated_or(
            cx,
            id,
            "vgs_th_min",
            2.0,
            "default vgs_th_min (common practice)",
        ),
    }
}

/// For a leg whose gates share one drive: the switch that still conducts at the drive level
/// that turns the other on, with its off-state drive in the conduction sense.
pub fn conducts_with_partner(
    cx: &RuleContext<'_>,
    sw: &SwitchFacts,
    partner: &SwitchFacts,
) -> Option<(f64, String)> {
    let same_polarity =
        kind(cx, sw.device).map(super::polarity) == kind(cx, partner.device).map(super::polarity);
    if same_polarity || !shared(sw, partner) {
        return None;
    }
    let k = kind(cx, sw.device)?;
    let off = in_conduction_sense(sw.vgs_off_v.as_ref()?, k);
    (off.strongest >= threshold_min(cx, sw.device).value)
        .then_some((off.strongest, off.strongest_state))
}

pub fn shared(a: &SwitchFacts, b: &SwitchFacts) -> bool {
    let named = |x: &SwitchFacts, y: &SwitchFacts| {
        x.driver
            .as_ref()
            .is_some_and(|d| d.shared_with.contains(&y.device))
    };
    let same_driver = match (&a.driver, &b.driver) {
        (Some(x), Some(y)) => x.device == y.device && x.network.is_empty() == y.network.is_empty(),
        _ => false,
    };
    named(a, b) || named(b, a) || same_driver
}
