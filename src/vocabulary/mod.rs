//! The words the configuration and the circuit share: part kinds and pin roles, each kind's
//! port names and package order, rating names and name globs. A leaf: it depends on nothing in
//! the crate, so `config` and `circuit` can both use it without using each other.

pub mod glob;
pub mod kind;
pub mod layouts;
pub mod ratings;
pub mod roles;

pub use kind::{Kind, PinRole};
