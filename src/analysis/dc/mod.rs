//! The DC engine: modified nodal analysis with Newton–Raphson for nonlinear devices.
