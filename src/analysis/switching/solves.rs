//! The states a sub-network is solved in, solved once and shared by every switch, load and
//! passive in it.
//!
//! A component with at most [`FULL_INPUTS`] switching inputs and at most one pot gets every
//! state [`Context::states`] enumerates (each corner × every input combination × the wiper
//! grid) when that makes at most [`MAX_STATES`]. Larger ones get a reduced set: every combination of the *key* inputs (those that
//! drive the switches being looked at, up to [`FULL_INPUTS`]; beyond that all-low, all-high
//! and each alone) × the other inputs all low and all high × each pot at its ends with the
//! others at mid travel. Either way at most [`MAX_STATES`] states are solved per component;
//! the enumeration order keeps all corners and the key inputs first, so a cut drops the
//! rarer combinations.

use crate::analysis::dc::DcError;
use crate::analysis::partition::Component;
use crate::analysis::states::{Context, Corner, Solved, State};
use crate::circuit::{DeviceId, Kind, UnknownPart};
use crate::diagnostic::{Finding, Severity};
use std::collections::BTreeMap;

/// Inputs up to which every combination is solved.
pub const FULL_INPUTS: usize = 4;
/// States solved per component at most.
pub const MAX_STATES: usize = 192;

pub struct SolvedState {
    pub state: State,
    /// `V12 at min, VSTIR high`.
    pub label: String,
    pub solved: Option<Solved>,
}

pub struct ComponentSolves {
    pub component: usize,
    pub inputs: Vec<DeviceId>,
    pub states: Vec<SolvedState>,
    /// The first failure, with the state it happened in.
    pub failure: Option<(String, DcError)>,
}

impl ComponentSolves {
    pub fn ok(&self) -> impl Iterator<Item = (&SolvedState, &Solved)> {
        self.states
            .iter()
            .filter_map(|s| s.solved.as_ref().map(|solved| (s, solved)))
    }
}

/// The states to solve a component in (see the module notes).
pub fn states_for(
    cx: &Context<'_>,
    component: &Component,
    key_inputs: &[DeviceId],
    wiper_grid: &[f64],
) -> Vec<State> {
    let inputs = cx.inputs(component);
    let pots = cx.pots(component);
    if inputs.len() <= FULL_INPUTS && pots.len() <= 1 {
        let all = cx.states(component, wiper_grid);
        if all.len() <= MAX_STATES {
            return all;
        }
    }
    let mut states = reduced_states(cx, &inputs, &pots, key_inputs);
    states.truncate(MAX_STATES);
    states
}

fn reduced_states(
    cx: &Context<'_>,
    inputs: &[DeviceId],
    pots: &[DeviceId],
    key_inputs: &[DeviceId],
) -> Vec<State> {
    let keys: Vec<DeviceId> = inputs
        .iter()
        .copied()
        .filter(|d| key_inputs.contains(d))
        .collect();
    let others: Vec<DeviceId> = inputs
        .iter()
        .copied()
        .filter(|d| !keys.contains(d))
        .collect();
    let mut key_levels: Vec<Vec<DeviceId>> = Vec::new();
    if keys.len() <= FULL_INPUTS {
        for mask in 0u32..(1 << keys.len()) {
            key_levels.push(
                keys.iter()
                    .enumerate()
                    .filter(|(i, _)| mask & (1 << i) != 0)
                    .map(|(_, &d)| d)
                    .collect(),
            );
        }
    } else {
        key_levels.push(Vec::new());
        key_levels.push(keys.clone());
        for &k in &keys {
            key_levels.push(vec![k]);
            key_levels.push(keys.iter().copied().filter(|&d| d != k).collect());
        }
    }
    let other_levels: Vec<Vec<DeviceId>> = if others.is_empty() {
        vec![Vec::new()]
    } else {
        vec![Vec::new(), others.clone()]
    };
    let mid: BTreeMap<DeviceId, f64> = pots.iter().map(|&p| (p, 0.5)).collect();
    let mut wiper_sets = vec![mid.clone()];
    for &pot in pots {
        for x in [0.0, 1.0] {
            let mut set = mid.clone();
            set.insert(pot, x);
            wiper_sets.push(set);
        }
    }
    let corners: &[Corner] = if cx.supplies.iter().any(|s| s.min != s.max) {
        &Corner::ALL
    } else {
        &[Corner::Nominal]
    };
    let mut states = Vec::new();
    for wipers in &wiper_sets {
        for &corner in corners {
            for keys in &key_levels {
                for others in &other_levels {
                    let mut high: Vec<DeviceId> =
                        keys.iter().chain(others.iter()).copied().collect();
                    high.sort_unstable();
                    states.push(State {
                        corner,
                        high,
                        wipers: wipers.clone(),
                    });
                }
            }
        }
    }
    states
}

/// Solves a component in each of its states.
pub fn solve_component(
    cx: &Context<'_>,
    index: usize,
    key_inputs: &[DeviceId],
    wiper_grid: &[f64],
) -> Option<ComponentSolves> {
    let component = cx.partition.components.get(index)?;
    let inputs = cx.inputs(component);
    let mut failure = None;
    let states = states_for(cx, component, key_inputs, wiper_grid)
        .into_iter()
        .map(|state| {
            let mut label = state.describe(cx, &inputs);
            let solved = match cx.solve(component, &state) {
                Ok(s) => {
                    // How the state was solved is part of its numbers' provenance.
                    for note in &s.notes {
                        label = format!("{label}; {note}");
                    }
                    Some(s)
                }
                Err(e) => {
                    if failure.is_none() {
                        failure = Some((label.clone(), e));
                    }
                    None
                }
            };
            SolvedState {
                state,
                label,
                solved,
            }
        })
        .collect();
    Some(ComponentSolves {
        component: index,
        inputs,
        states,
        failure,
    })
}

/// A `solve-failed` finding on `device`'s line for a component that failed in some state.
pub fn failure_finding(
    cx: &Context<'_>,
    solves: &ComponentSolves,
    device: DeviceId,
) -> Option<Finding> {
    let (label, error) = solves.failure.as_ref()?;
    let d = cx.circuit.devices().get(device)?;
    let element = cx.netlist.elements.get(d.element)?;
    // Every case is a note: the engine could not judge these nets, which says nothing against
    // the circuit. The note says what was skipped and what would let it be judged.
    let mut help = "the checks that need this sub-network's voltages and currents (gate drive, \
                    dissipation, load stress) were skipped for it; if the circuit simulates, a \
                    simpler model of the parts on these nets, or a resistance where a net has no \
                    DC path, lets kickback judge it";
    let message = match error {
        // The solve itself succeeded, but means nothing: say what to add.
        DcError::Implausible { cause } => {
            help = "add what the note names, or waive the rule for this element with a reason";
            format!(
                "the sub-network around {} has no trustworthy DC state (`{label}`): {cause}",
                element.path
            )
        }
        DcError::TooLarge { unknowns, limit } => {
            help = "split the netlist into the channels a review looks at, or check this part \
                    with a smaller deck that holds only its own stage";
            format!(
                "the sub-network around {} has {unknowns} unknowns, more than the {limit} the DC engine solves; its voltages, currents and dissipation are not checked",
                element.path
            )
        }
        _ => match unmodelled_beside(cx, solves.component) {
            // Not a fault of the circuit: a part the engine leaves open holds these nets.
            Some(part) => {
                help = "give the part a model the engine knows (a resistor for a closed \
                        switch, a diode or transistor model), or waive the rule for this \
                        element with a reason";
                format!(
                    "the sub-network around {} has no DC state kickback can judge (`{label}`): \
                     it hangs on {part}, which the DC engine does not model, so its voltages, \
                     currents and dissipation are not checked",
                    element.path
                )
            }
            None => format!(
                "no DC operating point for the sub-network around {} in the state `{label}`: {error}",
                element.path
            ),
        },
    };
    Some(
        Finding::new("solve-failed", Severity::Note, element.span, message)
            .with_element(element.name.clone(), element.instance_path())
            .with_help(help),
    )
}

/// The first part beside the component that the DC engine leaves open although it conducts in
/// the circuit (a voltage- or current-controlled switch, a JFET, a code-model device), named
/// with what it is.
fn unmodelled_beside(cx: &Context<'_>, component: usize) -> Option<String> {
    let component = cx.partition.components.get(component)?;
    component.nets.iter().find_map(|&net| {
        cx.circuit.devices_on(net).iter().find_map(|&(d, _)| {
            let device = cx.circuit.devices().get(d)?;
            let what = match device.kind {
                Kind::Switch => "a controlled switch",
                Kind::Jfet => "a JFET",
                _ if cx.circuit.unknown_part(d) == Some(UnknownPart::CodeModel) => {
                    "a code-model device"
                }
                _ => return None,
            };
            let element = cx.netlist.elements.get(device.element)?;
            Some(format!("{} ({what})", element.path))
        })
    })
}
