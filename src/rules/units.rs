//! Numbers in messages: the rules write them through the one SI formatter ([`crate::units`]).

pub use crate::units::{format_si, percent, sig3};

/// Names in running text: `R1`, `R1 and R2`, `R1, R2 and R3`.
pub fn list(names: &[String]) -> String {
    match names {
        [] => String::new(),
        [one] => one.clone(),
        [rest @ .., last] => format!("{} and {last}", rest.join(", ")),
    }
}
