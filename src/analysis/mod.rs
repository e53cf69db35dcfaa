//! Electrical facts computed from the circuit: DC states, timers, switch topology, gate drive
//! and stress. Each analysis answers a local question on a small sub-network
//! ([`partition`]); [`states`] enumerates states and corners and solves them with the [`dc`]
//! engine through the parts' behavioural stand-ins ([`stand_in`]).

pub mod budget;
pub mod dc;
pub mod facts;
pub mod freewheel_current;
pub mod part_values;
pub mod partition;
pub mod plausible;
mod solved;
pub mod stand_in;
pub mod states;
pub mod stress;
pub mod switching;
pub mod timer;
pub mod waveform;

pub use facts::*;

use crate::circuit::Circuit;
use crate::config::Config;
use crate::diagnostic::Finding;
use crate::netlist::FlatNetlist;

/// All facts about one circuit.
#[derive(Clone, Debug, Default)]
pub struct Analysis {
    pub supplies: Vec<SupplyFacts>,
    pub timers: Vec<TimerFacts>,
    pub switches: Vec<SwitchFacts>,
    pub loads: Vec<LoadFacts>,
    pub resistors: Vec<ResistorFacts>,
    pub capacitors: Vec<CapacitorFacts>,
}

/// Runs every analysis. Findings are analysis failures the user must see (non-convergence).
pub fn analyze(
    netlist: &FlatNetlist,
    circuit: &Circuit,
    config: &Config,
) -> (Analysis, Vec<Finding>) {
    let cx = states::Context::new(netlist, circuit, config);
    let mut findings = Vec::new();
    let supplies = cx
        .supplies
        .iter()
        .map(|s| SupplyFacts {
            device: s.device,
            nominal: s.nominal,
            min: s.min,
            max: s.max,
            source: s.source.clone(),
        })
        .collect();
    let (timers, f) = timer::analyze(&cx);
    findings.extend(f);
    let (switches, loads, f) = switching::analyze(&cx, &timers);
    findings.extend(f);
    let (resistors, capacitors, f) = stress::analyze(&cx, &timers, &switches);
    findings.extend(f);
    (
        Analysis {
            supplies,
            timers,
            switches,
            loads,
            resistors,
            capacitors,
        },
        findings,
    )
}
