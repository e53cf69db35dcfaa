//! A deterministic bound on the work of one analysis: a number of DC solve requests, counted
//! whether the memo answers them or not, so that where the bound falls never depends on what
//! was solved before, on thread timing or on the machine's speed.
//!
//! An analysis opens a [`Scope`] on its thread; every solve through
//! [`crate::analysis::states::Context`] charges it, and once it is spent the solves of that
//! analysis fail with [`DcError::WorkBound`] instead of running. The analysis then reports the
//! bound in a `solve-failed` finding ([`Scope::exhausted`]). Without an open scope nothing is
//! counted.
//!
//! Each solve is itself bounded (at most [`crate::analysis::dc::DENSE_LIMIT`] unknowns and
//! `SolveOptions::max_total_iterations` Newton iterations), so a bounded number of solves
//! bounds the analysis.

use super::dc::DcError;
use std::cell::Cell;

/// Solves one timer's analysis may request: its discharge pin, both phases over every corner
/// and the pot sweep, and the wiper refinements. The timers of the rule fixtures, the demo
/// and the generated boards need 130–730; the bound leaves room for several pots and steering
/// diodes while keeping a pathological timing network (dozens of pots) to seconds.
pub const TIMER_SOLVES: usize = 20_000;

#[derive(Clone, Copy, Debug)]
struct Meter {
    left: usize,
    limit: usize,
    exhausted: bool,
}

thread_local! {
    static METER: Cell<Option<Meter>> = const { Cell::new(None) };
}

/// An open budget on this thread; the previous one (if any) comes back when it is dropped.
pub struct Scope {
    previous: Option<Meter>,
}

impl Scope {
    /// Opens a budget of `limit` solves on this thread.
    pub fn open(limit: usize) -> Self {
        let meter = Meter {
            left: limit,
            limit,
            exhausted: false,
        };
        Scope {
            previous: METER.with(|m| m.replace(Some(meter))),
        }
    }

    /// Solves charged so far.
    pub fn spent(&self) -> usize {
        METER.with(|m| m.get().map_or(0, |meter| meter.limit - meter.left))
    }

    /// The bound, when a solve was refused for want of budget.
    pub fn exhausted(&self) -> Option<usize> {
        METER.with(|m| {
            m.get()
                .filter(|meter| meter.exhausted)
                .map(|meter| meter.limit)
        })
    }
}

impl Drop for Scope {
    fn drop(&mut self) {
        METER.with(|m| m.set(self.previous));
    }
}

/// Charges one solve to the open budget.
///
/// # Errors
/// [`DcError::WorkBound`] once the budget is spent.
pub fn charge() -> Result<(), DcError> {
    METER.with(|m| match m.get() {
        None => Ok(()),
        Some(mut meter) => {
            let result = if meter.left == 0 {
                meter.exhausted = true;
                Err(DcError::WorkBound { limit: meter.limit })
            } else {
                meter.left -= 1;
                Ok(())
            };
            m.set(Some(meter));
            result
        }
    })
}
