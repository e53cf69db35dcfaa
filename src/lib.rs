//! kickback checks SPICE netlists of PWM motor drives before a board is ordered.
//!
//! Data flows one way: [`netlist`] (text → flattened elements) → [`circuit`] (graph of nets and
//! devices with part knowledge) → [`analysis`] (electrical facts) → [`rules`] (findings) →
//! [`report`] (rendering). [`check`] runs the pipeline for one file and hands its
//! [`outcome`] to the renderers.

pub mod analysis;
pub mod app;
pub mod check;
pub mod circuit;
pub mod config;
pub mod diagnostic;
pub mod lsp;
pub mod netlist;
pub mod outcome;
pub mod report;
pub mod rules;
pub mod source;
pub mod units;
pub mod vocabulary;
