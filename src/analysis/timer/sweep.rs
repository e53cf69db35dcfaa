//! States over supply corners and pot travel, and ranges that remember the state of each
//! extreme. Wipers are searched, not just sampled: where a grid's extreme lies inside a pot's
//! travel, a golden-section search refines it.

use crate::analysis::facts::Range;
use crate::analysis::states::{Context, Corner, State};
use crate::circuit::DeviceId;
use std::collections::BTreeMap;

/// Grid step over a pot's travel.
const STEPS: usize = 20;

/// One sampled state, and the pot whose travel it samples (others at mid travel).
#[derive(Clone, Debug)]
pub struct Point {
    pub state: State,
    pub swept: Option<DeviceId>,
}

/// The supply corners worth solving.
pub fn corners(cx: &Context<'_>) -> &'static [Corner] {
    if cx.supplies.iter().any(|s| s.min != s.max) {
        &Corner::ALL
    } else {
        &[Corner::Nominal]
    }
}

/// Every corner × (each pot over its grid with the others at mid travel, and every pot at
/// either end for up to three pots), with the inputs in `high` high.
pub fn points(cx: &Context<'_>, pots: &[DeviceId], high: &[DeviceId]) -> Vec<Point> {
    let mut sets: Vec<(BTreeMap<DeviceId, f64>, Option<DeviceId>)> = Vec::new();
    if pots.is_empty() {
        sets.push((BTreeMap::new(), None));
    }
    for &pot in pots {
        for i in 0..=STEPS {
            let mut set: BTreeMap<DeviceId, f64> = pots.iter().map(|&p| (p, 0.5)).collect();
            set.insert(pot, i as f64 / STEPS as f64);
            sets.push((set, Some(pot)));
        }
    }
    if (2..=3).contains(&pots.len()) {
        for mask in 0u32..(1 << pots.len()) {
            let set: BTreeMap<DeviceId, f64> = pots
                .iter()
                .enumerate()
                .map(|(i, &p)| (p, if mask & (1 << i) != 0 { 1.0 } else { 0.0 }))
                .collect();
            if !sets.iter().any(|(s, _)| *s == set) {
                sets.push((set, None));
            }
        }
    }
    let mut high = high.to_vec();
    high.sort_unstable();
    high.dedup();
    let mut out = Vec::new();
    for &corner in corners(cx) {
        for (wipers, swept) in &sets {
            out.push(Point {
                state: State {
                    corner,
                    high: high.clone(),
                    wipers: wipers.clone(),
                },
                swept: *swept,
            });
        }
    }
    out
}

/// The state with a different input level set (the timer high or low for one phase).
pub fn with_level(state: &State, device: DeviceId, high: bool) -> State {
    let mut s = state.clone();
    s.high.retain(|&d| d != device);
    if high {
        s.high.push(device);
        s.high.sort_unstable();
    }
    s
}

/// Range of a quantity over sampled points, with each extreme refined by a golden-section
/// search along the swept pot when the grid puts it inside the travel.
pub fn range(
    points: &[Point],
    values: &[Option<f64>],
    eval: &dyn Fn(&State) -> Option<f64>,
    describe: &dyn Fn(&State) -> String,
) -> Option<Range> {
    let mut best_min: Option<(usize, f64)> = None;
    let mut best_max: Option<(usize, f64)> = None;
    for (i, v) in values.iter().enumerate() {
        let Some(v) = *v else { continue };
        if !v.is_finite() {
            continue;
        }
        if best_min.is_none_or(|(_, m)| v < m) {
            best_min = Some((i, v));
        }
        if best_max.is_none_or(|(_, m)| v > m) {
            best_max = Some((i, v));
        }
    }
    let (imin, vmin) = best_min?;
    let (imax, vmax) = best_max?;
    let (smin, vmin) = refine(&points[imin], vmin, eval, false);
    let (smax, vmax) = refine(&points[imax], vmax, eval, true);
    Some(Range {
        min: vmin,
        max: vmax,
        min_state: describe(&smin),
        max_state: describe(&smax),
    })
}

fn refine(
    point: &Point,
    value: f64,
    eval: &dyn Fn(&State) -> Option<f64>,
    maximize: bool,
) -> (State, f64) {
    let start = (point.state.clone(), value);
    let Some(pot) = point.swept else {
        return start;
    };
    let x0 = point.state.wiper(pot);
    if x0 <= 0.0 || x0 >= 1.0 {
        return start;
    }
    let sign = if maximize { 1.0 } else { -1.0 };
    let at = |x: f64| -> Option<(State, f64)> {
        let mut s = point.state.clone();
        s.wipers.insert(pot, x);
        let v = eval(&s)?;
        v.is_finite().then_some((s, v))
    };
    let step = 1.0 / STEPS as f64;
    let (mut lo, mut hi) = ((x0 - step).max(0.0), (x0 + step).min(1.0));
    let phi = 0.5 * (5f64.sqrt() - 1.0);
    let mut best = start;
    for _ in 0..16 {
        let a = hi - phi * (hi - lo);
        let b = lo + phi * (hi - lo);
        let (Some(fa), Some(fb)) = (at(a), at(b)) else {
            break;
        };
        for candidate in [&fa, &fb] {
            if sign * candidate.1 > sign * best.1 {
                best = candidate.clone();
            }
        }
        if sign * fa.1 >= sign * fb.1 {
            hi = b;
        } else {
            lo = a;
        }
    }
    best
}
