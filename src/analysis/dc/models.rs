//! Device equations: current and its partial derivatives at given terminal voltages, plus the
//! step limits that keep Newton–Raphson inside the range where the equations behave.

use super::network::{BjtParams, BjtPolarity, DiodeParams, MosParams, MosPolarity};

/// Junction current beyond which the exponential continues along its tangent line. No part
/// in this domain survives a kiloampere, and stopping there keeps a junction wired straight
/// across a supply at a huge but finite current whose arithmetic still cancels cleanly.
const JUNCTION_CEILING: f64 = 1e3;
/// Largest exponent evaluated as an exponential whatever the scale current.
const EXP_LIMIT: f64 = 80.0;

/// The exponent `V/(N·Vt)` at which a junction with scale current `is` reaches
/// [`JUNCTION_CEILING`].
pub(crate) fn knee(is: f64) -> f64 {
    (JUNCTION_CEILING / is).ln().clamp(1.0, EXP_LIMIT)
}

/// `exp(x)` and its derivative, continued linearly beyond `limit`.
fn exp_guarded(x: f64, limit: f64) -> (f64, f64) {
    if x > limit {
        let e = limit.exp();
        (e * (1.0 + (x - limit)), e)
    } else {
        let e = x.exp();
        (e, e)
    }
}

/// Current and small-signal conductance of a two-terminal device at one voltage.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Branch {
    pub current: f64,
    pub conductance: f64,
}

/// The intrinsic junction of a diode (no series resistance) including `gmin` in parallel.
/// Forward: Shockley. Reverse breakdown: `−IBV·exp(−(V+BV)/(N·Vt))`, offset so that the
/// branch carries nothing at 0 V.
pub(crate) fn diode_junction(v: f64, p: &DiodeParams, vt: f64, gmin: f64) -> Branch {
    let nvt = p.n * vt;
    let (e, de) = exp_guarded(v / nvt, knee(p.is));
    let mut current = p.is * (e - 1.0) + gmin * v;
    let mut conductance = p.is * de / nvt + gmin;
    if let Some(bv) = p.bv {
        let (eb, deb) = exp_guarded(-(v + bv) / nvt, knee(p.ibv));
        let offset = (-bv / nvt).exp();
        current -= p.ibv * (eb - offset);
        conductance += p.ibv * deb / nvt;
    }
    Branch {
        current,
        conductance,
    }
}

/// Junction voltage above which an exponential junction's current runs away fastest per volt
/// of Newton step; the limiter starts acting above it.
fn critical_voltage(is: f64, nvt: f64) -> f64 {
    nvt * (nvt / (std::f64::consts::SQRT_2 * is)).ln()
}

/// Logarithmic step limit for a forward-biased pn junction: a step that would raise the
/// junction voltage by many thermal voltages is shortened to the voltage whose current the
/// present linearisation predicts. `is` is the junction's scale current. Returns the limited
/// voltage and whether it changed.
pub(crate) fn limit_junction(v_new: f64, v_old: f64, nvt: f64, is: f64) -> (f64, bool) {
    // Beyond the exponential's linear continuation the model is a plain conductance and
    // Newton needs no help.
    let linear_from = knee(is) * nvt;
    if v_old >= linear_from && v_new >= linear_from {
        return (v_new, false);
    }
    let v_crit = critical_voltage(is, nvt);
    if v_new > v_crit && (v_new - v_old).abs() > 2.0 * nvt {
        let limited = if v_old > 0.0 {
            let arg = 1.0 + (v_new - v_old) / nvt;
            if arg > 0.0 {
                v_old + nvt * arg.ln()
            } else {
                v_crit
            }
        } else {
            nvt * (v_new / nvt).ln()
        };
        (limited, true)
    } else {
        (v_new, false)
    }
}

/// Junction limiting for a diode, applied to the breakdown branch too (mirrored about −BV).
pub(crate) fn limit_diode(v_new: f64, v_old: f64, p: &DiodeParams, vt: f64) -> (f64, bool) {
    let nvt = p.n * vt;
    if let Some(bv) = p.bv {
        if v_new < (10.0 * nvt - bv).min(0.0) {
            let (mirrored, hit) = limit_junction(-(v_new + bv), -(v_old + bv), nvt, p.ibv);
            return if hit {
                (-(mirrored + bv), true)
            } else {
                (v_new, false)
            };
        }
    }
    limit_junction(v_new, v_old, nvt, p.is)
}

/// Terminal currents of a bipolar transistor and their derivatives with respect to V(b)−V(e)
/// and V(b)−V(c).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct BjtEval {
    /// Current into the collector.
    pub ic: f64,
    /// Current into the base.
    pub ib: f64,
    pub dic_dvbe: f64,
    pub dic_dvbc: f64,
    pub dib_dvbe: f64,
    pub dib_dvbc: f64,
    /// Forward and reverse junction diffusion currents (NPN sense), for region decisions.
    pub forward: f64,
    pub reverse: f64,
}

/// Sign that maps a device's terminal voltages and currents to the N-channel / NPN sense.
pub(crate) fn bjt_sign(p: &BjtParams) -> f64 {
    match p.polarity {
        BjtPolarity::Npn => 1.0,
        BjtPolarity::Pnp => -1.0,
    }
}

/// Ebers–Moll transport model: with `If = IS(exp(Vbe/NVt)−1)` and `Ir = IS(exp(Vbc/NVt)−1)`,
/// `Ic = If − Ir·(1 + 1/βR)` and `Ib = If/βF + Ir/βR`; `gmin` sits across both junctions.
/// `vbe`, `vbc` are actual terminal differences; PNP devices are mirrored.
pub(crate) fn bjt(vbe: f64, vbc: f64, p: &BjtParams, vt: f64, gmin: f64) -> BjtEval {
    let sign = bjt_sign(p);
    let nvt = p.n * vt;
    let limit = knee(p.is);
    let (ef, def) = exp_guarded(sign * vbe / nvt, limit);
    let (er, der) = exp_guarded(sign * vbc / nvt, limit);
    let forward = p.is * (ef - 1.0);
    let reverse = p.is * (er - 1.0);
    let gf = p.is * def / nvt;
    let gr = p.is * der / nvt;
    let rev_factor = 1.0 + 1.0 / p.beta_r;
    // Mirroring a PNP negates currents and voltages together, so derivatives keep their sign.
    BjtEval {
        ic: sign * (forward - reverse * rev_factor) - gmin * vbc,
        ib: sign * (forward / p.beta_f + reverse / p.beta_r) + gmin * (vbe + vbc),
        dic_dvbe: gf,
        dic_dvbc: -gr * rev_factor - gmin,
        dib_dvbe: gf / p.beta_f + gmin,
        dib_dvbc: gr / p.beta_r + gmin,
        forward,
        reverse,
    }
}

/// Drain current of a MOSFET and its derivatives with respect to V(g)−V(s) and V(d)−V(s).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct MosEval {
    /// Current into the drain.
    pub id: f64,
    pub did_dvgs: f64,
    pub did_dvds: f64,
    pub region: MosRegion,
}

/// Operating region of a MOSFET channel.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum MosRegion {
    /// Gate-source voltage below threshold: no channel.
    Cutoff,
    /// Pinched-off channel: current set by the gate.
    Saturation,
    /// Channel acts as a gate-controlled resistance.
    Triode,
}

pub(crate) fn mos_sign(p: &MosParams) -> f64 {
    match p.polarity {
        MosPolarity::N => 1.0,
        MosPolarity::P => -1.0,
    }
}

/// Shichman–Hodges square law for an N channel with `vds ≥ 0`: `(id, ∂id/∂vgs, ∂id/∂vds)`.
/// The `(1 + λ·Vds)` factor multiplies the triode expression as well as the saturation one so
/// that the current is continuous at the boundary; with λ = 0 both are the textbook forms.
fn square_law(vgs: f64, vds: f64, p: &MosParams) -> (f64, f64, f64, MosRegion) {
    let vov = vgs - p.vto;
    if vov <= 0.0 {
        return (0.0, 0.0, 0.0, MosRegion::Cutoff);
    }
    let clm = 1.0 + p.lambda * vds;
    if vds >= vov {
        let core = 0.5 * p.k * vov * vov;
        (
            core * clm,
            p.k * vov * clm,
            core * p.lambda,
            MosRegion::Saturation,
        )
    } else {
        let core = p.k * (vov * vds - 0.5 * vds * vds);
        let gm = p.k * vds * clm;
        let gds = p.k * (vov - vds) * clm + core * p.lambda;
        (core * clm, gm, gds, MosRegion::Triode)
    }
}

/// MOSFET drain current at actual terminal differences, with `gmin` from drain to source.
/// Drain and source swap roles when the channel voltage reverses; P devices are mirrored.
pub(crate) fn mosfet(vgs: f64, vds: f64, p: &MosParams, gmin: f64) -> MosEval {
    let sign = mos_sign(p);
    let (ngs, nds) = (sign * vgs, sign * vds);
    let (id, did_dvgs, did_dvds, region) = if nds >= 0.0 {
        square_law(ngs, nds, p)
    } else {
        // Reversed channel: the drain terminal acts as the source.
        let (i, gm, gds, region) = square_law(ngs - nds, -nds, p);
        (-i, -gm, gm + gds, region)
    };
    MosEval {
        id: sign * id + gmin * vds,
        did_dvgs,
        did_dvds: did_dvds + gmin,
        region,
    }
}

/// Step limit for a MOSFET's controlling voltage (N sense): a device turning on stops just
/// above threshold first, and large swings are cut to about twice the present overdrive.
/// Returns `v_new` untouched, and false, when no limit acts.
fn limit_gate(v_new: f64, v_old: f64, vto: f64) -> (f64, bool) {
    let max_step = 2.0 * (v_old - vto).abs() + 2.0;
    let step = v_new - v_old;
    let limited = if v_old < vto {
        if v_new > vto + 0.5 {
            Some((vto + 0.5).max(v_old))
        } else {
            (step < -max_step).then_some(v_old - max_step)
        }
    } else if v_new < vto - 0.5 {
        Some(vto - 0.5)
    } else {
        (step.abs() > max_step).then(|| v_old + max_step.copysign(step))
    };
    limited.map_or((v_new, false), |v| (v, true))
}

/// Step limit for the drain-source voltage (N sense): rises are held to a few volts at a time
/// so the device passes through the regions instead of jumping over them.
fn limit_channel(v_new: f64, v_old: f64) -> (f64, bool) {
    let bound = if v_old >= 3.5 {
        if v_new > v_old {
            v_new.min(3.0 * v_old + 2.0)
        } else if v_new < 3.5 {
            v_new.max(2.0)
        } else {
            v_new
        }
    } else if v_new > v_old {
        v_new.min(4.0)
    } else {
        v_new.max(-0.5)
    };
    (bound, bound != v_new)
}

/// Limits a MOSFET's new `(vgs, vds)` against the previous linearisation point. Returns the
/// limited pair and whether anything changed (the new pair itself when nothing did).
pub(crate) fn limit_mosfet(new: (f64, f64), old: (f64, f64), p: &MosParams) -> ((f64, f64), bool) {
    let sign = mos_sign(p);
    let (ngs, nds) = (sign * new.0, sign * new.1);
    let (ogs, ods) = (sign * old.0, sign * old.1);
    let (lgs, lds) = if ods >= 0.0 {
        let (lgs, hit_gate) = limit_gate(ngs, ogs, p.vto);
        let (lds, hit_channel) = limit_channel(nds, ods);
        if !(hit_gate || hit_channel) {
            return (new, false);
        }
        (lgs, lds)
    } else {
        // Reversed channel: the gate-drain voltage controls it and the mirrored channel
        // voltage is limited.
        let (lgd, hit_gate) = limit_gate(ngs - nds, ogs - ods, p.vto);
        let (lsd, hit_channel) = limit_channel(-nds, -ods);
        if !(hit_gate || hit_channel) {
            return (new, false);
        }
        (lgd - lsd, -lsd)
    };
    ((sign * lgs, sign * lds), true)
}

/// Sharpness of the current-limited resistor's knee; higher is sharper.
const LIMIT_KNEE: f64 = 8.0;

/// `I = (V/R)/(1 + |V/(R·Ilim)|^p)^(1/p)` and its derivative `(1/R)(1 + s)^(−(1+p)/p)`, written
/// in a form that cannot overflow for any finite voltage. `gmin` sits in parallel.
pub(crate) fn current_limited(v: f64, ohms: f64, i_limit: f64, gmin: f64) -> Branch {
    let u = v / (ohms * i_limit);
    let au = u.abs();
    let (current, conductance) = if au <= 1.0 {
        let s = au.powf(LIMIT_KNEE);
        let scale = (1.0 + s).powf(-1.0 / LIMIT_KNEE);
        let g = (1.0 + s).powf(-(1.0 + LIMIT_KNEE) / LIMIT_KNEE) / ohms;
        (i_limit * u * scale, g)
    } else {
        let t = au.powf(-LIMIT_KNEE);
        let scale = (1.0 + t).powf(-1.0 / LIMIT_KNEE);
        let g =
            au.powf(-(1.0 + LIMIT_KNEE)) * (1.0 + t).powf(-(1.0 + LIMIT_KNEE) / LIMIT_KNEE) / ohms;
        (i_limit * u.signum() * scale, g)
    };
    Branch {
        current: current + gmin * v,
        conductance: conductance + gmin,
    }
}
