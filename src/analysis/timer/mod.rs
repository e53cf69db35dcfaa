//! 555-family timers: configuration, thresholds, phase times, frequency and duty over pot
//! travel and supply corners, discharge-pin current, monostable triggering.

use super::facts::TimerFacts;
use super::states::Context;
use crate::diagnostic::Finding;

pub fn analyze(cx: &Context<'_>) -> (Vec<TimerFacts>, Vec<Finding>) {
    let _ = cx;
    (Vec::new(), Vec::new())
}
