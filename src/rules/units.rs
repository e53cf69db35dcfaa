//! Numbers in messages: the rules write them through the one SI formatter ([`crate::units`]).

pub use crate::units::{format_si, percent, sig3};
