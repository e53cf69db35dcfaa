//! The built-in functions of expressions: the common math set of SPICE dialects plus
//! `if`, `limit`, `u` and `uramp`, and the statistical spreads some simulators offer for
//! Monte-Carlo runs (`mc`, `gauss`, `agauss`, `flat`, `aunif`, ...), taken at their nominal
//! value: a check judges the design as drawn.

use super::expr::{finite, flag, truth, ExprError, Mode};
use super::flat::Num;

pub(super) fn builtin(name: &str, args: &[Num], mode: Mode) -> Result<Num, ExprError> {
    let lname = name.to_ascii_lowercase();
    let arity = match lname.as_str() {
        "abs" | "sqrt" | "exp" | "log" | "ln" | "log10" | "sin" | "cos" | "tan" | "asin"
        | "acos" | "atan" | "sinh" | "cosh" | "tanh" | "floor" | "ceil" | "int" | "round"
        | "sgn" | "sign" | "u" | "uramp" => Some(1),
        "pow" | "pwr" | "atan2" | "hypot" => Some(2),
        "limit" | "if" => Some(3),
        // A spread around a nominal value: `mc(10k, 0.01)`, `gauss(1, 0.05, 3)`.
        "mc" | "gauss" | "agauss" | "aunif" | "unif" | "flat" | "gauss_tol" => None,
        "min" | "max" => None,
        _ => {
            return match mode {
                Mode::Behavioural => Ok(Num::Varies),
                Mode::Param => Err(ExprError::Invalid(format!(
                    "`{name}` is not a known function"
                ))),
            }
        }
    };
    match arity {
        Some(n) if n != args.len() => {
            return Err(ExprError::Syntax(format!(
                "`{name}` takes {n} argument{}, found {}",
                if n == 1 { "" } else { "s" },
                args.len()
            )))
        }
        None if args.is_empty() => {
            return Err(ExprError::Syntax(format!(
                "`{name}` takes at least one argument"
            )))
        }
        _ => {}
    }
    let mut known = Vec::with_capacity(args.len());
    for a in args {
        match a {
            Num::Known(v) => known.push(*v),
            Num::Varies if lname == "if" => known.push(f64::NAN),
            Num::Varies => return Ok(Num::Varies),
        }
    }
    let arg = |i: usize| known.get(i).copied().unwrap_or(0.0);
    let x = arg(0);
    let v = match lname.as_str() {
        "if" => {
            if x.is_nan() {
                return Ok(Num::Varies);
            }
            let pick = if truth(x) { arg(1) } else { arg(2) };
            if pick.is_nan() {
                return Ok(Num::Varies);
            }
            pick
        }
        "abs" => x.abs(),
        "sqrt" if x < 0.0 => {
            return Err(ExprError::Invalid(format!(
                "sqrt of a negative number ({x})"
            )))
        }
        "sqrt" => x.sqrt(),
        "exp" => x.exp(),
        "log" | "ln" | "log10" if x <= 0.0 => {
            return Err(ExprError::Invalid(format!(
                "{lname} of zero or a negative number ({x})"
            )))
        }
        "log" | "ln" => x.ln(),
        "log10" => x.log10(),
        "sin" => x.sin(),
        "cos" => x.cos(),
        "tan" => x.tan(),
        "asin" => x.asin(),
        "acos" => x.acos(),
        "atan" => x.atan(),
        "sinh" => x.sinh(),
        "cosh" => x.cosh(),
        "tanh" => x.tanh(),
        "floor" => x.floor(),
        "ceil" => x.ceil(),
        "int" => x.trunc(),
        "round" => x.round(),
        "sgn" | "sign" => {
            if x > 0.0 {
                1.0
            } else if x < 0.0 {
                -1.0
            } else {
                0.0
            }
        }
        "u" => flag(x > 0.0),
        "uramp" => x.max(0.0),
        "pow" => x.powf(arg(1)),
        "pwr" => x.signum() * x.abs().powf(arg(1)),
        "atan2" => x.atan2(arg(1)),
        "hypot" => x.hypot(arg(1)),
        "limit" => {
            let (lo, hi) = (arg(1).min(arg(2)), arg(1).max(arg(2)));
            x.clamp(lo, hi)
        }
        // The nominal value; `flat(x)` alone is a spread around zero of width x.
        "flat" if known.len() == 1 => 0.0,
        "mc" | "gauss" | "agauss" | "aunif" | "unif" | "flat" | "gauss_tol" => x,
        "min" => known.iter().copied().fold(f64::INFINITY, f64::min),
        _ => known.iter().copied().fold(f64::NEG_INFINITY, f64::max),
    };
    finite(v, &format!("`{name}`"))
}
