//! What the rules share: naming parts and nets, building a finding on an
//! element's line with its labels, reading a part's ratings with their provenance, and the
//! wording of states and ranges. A helper here never depends on a rule (`tests/architecture.rs`
//! checks); a topology question belongs in `circuit/`, an electrical quantity in `analysis/`.
//!
//! - `hygiene`: the netlist-hygiene rules' pieces (the drive trace behind `gate-floating`,
//!   `timer-reset-floating`, `pwm-audible` and `supply-unreferenced`; the 555 timing networks
//!   `value-suspicious` reads) and the hand-built deck their unit tests use;
//! - `switch`: the switching and stress rules' pieces (a switch's rail, load and drive as the
//!   facts give them, a bridge leg's partner, standard rating steps);
//! - `timer`: the timer rules' pieces (names, ratings, state wording, the part that sets a
//!   one-shot's pulse).

pub mod hygiene;
pub mod switch;
pub mod timer;
