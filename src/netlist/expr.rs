//! Expressions in `{...}`, `'...'` and bare `name=value` form, evaluated as they are parsed
//! (no tree, so a long chain `1+1+…` costs no stack). The branch a condition does not take is
//! parsed in "dead" mode: checked for syntax, never evaluated, so `x>0 ? 1/x : 0` is fine.

use super::flat::Num;
use super::value::{number_prefix, Overflow};
use nom::branch::alt;
use nom::bytes::complete::{tag, take_while, take_while1};
use nom::combinator::recognize;
use nom::sequence::pair;
use nom::IResult;

/// Nesting allowed for parentheses, operators, function calls and parameter look-ups together.
pub const MAX_DEPTH: usize = 256;

#[derive(Clone, Debug, PartialEq)]
pub enum ExprError {
    /// The text is not an expression; the message says what was expected.
    Syntax(String),
    /// The expression is well formed but has no usable value (undefined name, division by
    /// zero, overflow, cycle).
    Invalid(String),
    /// A parameter this depends on already failed and has its own finding.
    Reported,
}

/// A user function from `.func`.
pub struct UserFunc<'f> {
    pub args: &'f [&'f str],
    pub body: &'f str,
}

/// Where names are looked up.
pub trait Env {
    /// `None`: no such parameter here or in any enclosing scope.
    fn param(&self, name: &str, depth: usize) -> Option<Result<Num, ExprError>>;
    fn function(&self, name: &str) -> Option<UserFunc<'_>>;
}

/// How unknown function names are treated.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Mode {
    /// `.param` and element values: an unknown function is an error.
    Param,
    /// `B` sources and `E`/`G` `value=` forms: simulators offer many more functions
    /// (`ddt`, `table`, `delay`...); they make the value `Varies`.
    Behavioural,
}

/// User-function calls one evaluation may make (functions calling each other twice per
/// level would otherwise take exponential time).
pub const MAX_CALLS: u32 = 100_000;

/// Evaluates `text` in `env`. `depth` is the nesting already used by the caller.
pub fn eval(text: &str, env: &dyn Env, mode: Mode, depth: usize) -> Result<Num, ExprError> {
    let calls = std::cell::Cell::new(0);
    eval_counted(text, env, mode, depth, &calls)
}

fn eval_counted(
    text: &str,
    env: &dyn Env,
    mode: Mode,
    depth: usize,
    calls: &std::cell::Cell<u32>,
) -> Result<Num, ExprError> {
    let mut p = Parser {
        rest: text,
        env,
        mode,
        depth,
        calls,
    };
    p.skip_ws();
    if p.rest.is_empty() {
        return Err(ExprError::Syntax(
            "expected an expression, found nothing".into(),
        ));
    }
    let value = p.ternary(true)?;
    p.skip_ws();
    if let Some(c) = p.rest.chars().next() {
        return Err(ExprError::Syntax(format!(
            "unexpected `{}` after the end of the expression",
            snippet(p.rest, c)
        )));
    }
    Ok(value)
}

fn snippet(rest: &str, first: char) -> String {
    let word: String = rest
        .chars()
        .take_while(|c| c.is_alphanumeric() || *c == '_')
        .take(20)
        .collect();
    if word.is_empty() {
        first.to_string()
    } else {
        word
    }
}

#[derive(Clone, Copy, PartialEq, Eq, Debug)]
enum Op {
    Or,
    And,
    Eq,
    Ne,
    Lt,
    Le,
    Gt,
    Ge,
    Add,
    Sub,
    Mul,
    Div,
    Rem,
}

impl Op {
    fn precedence(self) -> u8 {
        match self {
            Op::Or => 1,
            Op::And => 2,
            Op::Eq | Op::Ne => 3,
            Op::Lt | Op::Le | Op::Gt | Op::Ge => 4,
            Op::Add | Op::Sub => 5,
            Op::Mul | Op::Div | Op::Rem => 6,
        }
    }
}

fn binary_op(input: &str) -> IResult<&str, Op, ()> {
    let (rest, text) = alt((
        tag("||"),
        tag("&&"),
        tag("=="),
        tag("!="),
        tag("<>"),
        tag("<="),
        tag(">="),
        tag("|"),
        tag("&"),
        tag("<"),
        tag(">"),
        tag("+"),
        tag("-"),
        tag("*"),
        tag("/"),
        tag("%"),
    ))(input)?;
    // `**` is the power operator, handled above multiplication.
    if text == "*" && rest.starts_with('*') {
        return Err(nom::Err::Error(()));
    }
    let op = match text {
        "||" | "|" => Op::Or,
        "&&" | "&" => Op::And,
        "==" => Op::Eq,
        "!=" | "<>" => Op::Ne,
        "<=" => Op::Le,
        ">=" => Op::Ge,
        "<" => Op::Lt,
        ">" => Op::Gt,
        "+" => Op::Add,
        "-" => Op::Sub,
        "*" => Op::Mul,
        "/" => Op::Div,
        _ => Op::Rem,
    };
    Ok((rest, op))
}

fn identifier(input: &str) -> IResult<&str, &str, ()> {
    recognize(pair(
        take_while1(|c: char| c.is_ascii_alphabetic() || c == '_'),
        take_while(|c: char| c.is_ascii_alphanumeric() || matches!(c, '_' | '.' | '$')),
    ))(input)
}

pub(super) fn truth(v: f64) -> bool {
    v != 0.0
}

pub(super) fn flag(b: bool) -> f64 {
    if b {
        1.0
    } else {
        0.0
    }
}

pub(super) fn finite(v: f64, what: &str) -> Result<Num, ExprError> {
    if v.is_finite() {
        Ok(Num::Known(v))
    } else {
        Err(ExprError::Invalid(format!(
            "{what} does not give a finite number"
        )))
    }
}

/// Names that stand for quantities that change during a simulation.
fn is_dependent(name: &str) -> bool {
    ["time", "temp", "temper", "hertz", "freq", "tnom"]
        .iter()
        .any(|n| name.eq_ignore_ascii_case(n))
}

/// Names of probe functions whose argument is a node or element, not an expression.
fn is_probe(name: &str) -> bool {
    [
        "v", "i", "vm", "vp", "vr", "vi", "vdb", "im", "ip", "ir", "ii", "idb",
    ]
    .iter()
    .any(|n| name.eq_ignore_ascii_case(n))
}

struct Parser<'t, 'e> {
    rest: &'t str,
    env: &'e dyn Env,
    mode: Mode,
    depth: usize,
    calls: &'e std::cell::Cell<u32>,
}

impl<'t> Parser<'t, '_> {
    fn skip_ws(&mut self) {
        self.rest = self.rest.trim_start_matches(|c: char| c.is_whitespace());
    }

    fn eat(&mut self, s: &str) -> bool {
        self.skip_ws();
        if let Some(r) = self.rest.strip_prefix(s) {
            self.rest = r;
            true
        } else {
            false
        }
    }

    fn enter(&mut self) -> Result<(), ExprError> {
        self.depth += 1;
        if self.depth > MAX_DEPTH {
            Err(ExprError::Invalid(format!(
                "the expression is nested more than {MAX_DEPTH} levels deep (parentheses, operators, functions and parameters together)"
            )))
        } else {
            Ok(())
        }
    }

    fn found(&self) -> String {
        match self.rest.chars().next() {
            None => "the end of the expression".into(),
            Some(c) => format!("`{}`", snippet(self.rest, c)),
        }
    }

    fn ternary(&mut self, live: bool) -> Result<Num, ExprError> {
        self.enter()?;
        let cond = self.binary(0, live)?;
        let out = if self.eat("?") {
            let (take_a, take_b) = match cond {
                Num::Known(c) => (live && truth(c), live && !truth(c)),
                Num::Varies => (live, live),
            };
            let a = self.ternary(take_a)?;
            if !self.eat(":") {
                return Err(ExprError::Syntax(format!(
                    "expected `:` of a `c ? a : b` expression, found {}",
                    self.found()
                )));
            }
            let b = self.ternary(take_b)?;
            match cond {
                Num::Known(c) if truth(c) => a,
                Num::Known(_) => b,
                Num::Varies => Num::Varies,
            }
        } else {
            cond
        };
        self.depth -= 1;
        Ok(out)
    }

    fn binary(&mut self, min_prec: u8, live: bool) -> Result<Num, ExprError> {
        let mut lhs = self.unary(live)?;
        loop {
            self.skip_ws();
            let Ok((after, op)) = binary_op(self.rest) else {
                break;
            };
            let prec = op.precedence();
            if prec <= min_prec {
                break;
            }
            self.rest = after;
            self.enter()?;
            let rhs = self.binary(prec, live)?;
            self.depth -= 1;
            lhs = if live { apply(op, lhs, rhs)? } else { lhs };
        }
        Ok(lhs)
    }

    fn unary(&mut self, live: bool) -> Result<Num, ExprError> {
        self.skip_ws();
        let sign = match self.rest.chars().next() {
            Some('-') => Some('-'),
            Some('+') => Some('+'),
            Some('!') if !self.rest.starts_with("!=") => Some('!'),
            _ => None,
        };
        let Some(sign) = sign else {
            return self.power(live);
        };
        self.rest = &self.rest[1..];
        self.enter()?;
        let v = self.unary(live)?;
        self.depth -= 1;
        Ok(match (sign, v) {
            (_, Num::Varies) => Num::Varies,
            ('-', Num::Known(x)) => Num::Known(-x),
            ('!', Num::Known(x)) => Num::Known(flag(!truth(x))),
            (_, known) => known,
        })
    }

    fn power(&mut self, live: bool) -> Result<Num, ExprError> {
        let base = self.primary(live)?;
        if self.eat("**") || self.eat("^") {
            self.enter()?;
            let exp = self.unary(live)?;
            self.depth -= 1;
            if !live {
                return Ok(base);
            }
            return match (base, exp) {
                (Num::Known(b), Num::Known(e)) => finite(b.powf(e), "the power"),
                _ => Ok(Num::Varies),
            };
        }
        Ok(base)
    }

    fn primary(&mut self, live: bool) -> Result<Num, ExprError> {
        self.skip_ws();
        let Some(c) = self.rest.chars().next() else {
            return Err(ExprError::Syntax(
                "expected a number, a name or `(`, found the end of the expression".into(),
            ));
        };
        if c == '(' {
            self.rest = &self.rest[1..];
            let v = self.ternary(live)?;
            if !self.eat(")") {
                return Err(ExprError::Syntax(format!(
                    "expected `)`, found {}",
                    self.found()
                )));
            }
            return Ok(v);
        }
        if c.is_ascii_digit()
            || (c == '.' && self.rest[1..].starts_with(|d: char| d.is_ascii_digit()))
        {
            let Some((value, rest)) = number_prefix(self.rest) else {
                return Err(ExprError::Syntax(format!(
                    "expected a number, found {}",
                    self.found()
                )));
            };
            self.rest = rest;
            return match value {
                Ok(v) => Ok(Num::Known(v)),
                Err(Overflow) if live => Err(ExprError::Invalid(
                    "a number in the expression is too large to represent".into(),
                )),
                Err(Overflow) => Ok(Num::Varies),
            };
        }
        let Ok((after, name)) = identifier(self.rest) else {
            return Err(ExprError::Syntax(format!(
                "expected a number, a name or `(`, found {}",
                self.found()
            )));
        };
        self.rest = after;
        let save = self.rest;
        self.skip_ws();
        if self.rest.starts_with('(') {
            return self.call(name, live);
        }
        self.rest = save;
        if !live {
            return Ok(Num::Known(0.0));
        }
        if let Some(v) = self.env.param(name, self.depth) {
            return v;
        }
        if is_dependent(name) {
            return Ok(Num::Varies);
        }
        if name.eq_ignore_ascii_case("pi") {
            return Ok(Num::Known(std::f64::consts::PI));
        }
        if name.eq_ignore_ascii_case("e") {
            return Ok(Num::Known(std::f64::consts::E));
        }
        Err(ExprError::Invalid(format!(
            "parameter `{name}` is not defined"
        )))
    }

    /// `self.rest` starts at the `(` after `name`.
    fn call(&mut self, name: &str, live: bool) -> Result<Num, ExprError> {
        self.rest = &self.rest[1..];
        if is_probe(name) {
            return self.probe(name);
        }
        self.enter()?;
        let is_if = name.eq_ignore_ascii_case("if");
        let mut args: Vec<Num> = Vec::new();
        self.skip_ws();
        if !self.rest.starts_with(')') {
            loop {
                let arg_live = if is_if && !args.is_empty() {
                    match args.first() {
                        Some(Num::Known(c)) => live && (truth(*c) == (args.len() == 1)),
                        _ => live,
                    }
                } else {
                    live
                };
                args.push(self.ternary(arg_live)?);
                if self.eat(",") {
                    continue;
                }
                break;
            }
        }
        if !self.eat(")") {
            return Err(ExprError::Syntax(format!(
                "expected `,` or `)` in the arguments of `{name}`, found {}",
                self.found()
            )));
        }
        self.depth -= 1;
        if !live {
            return Ok(Num::Known(0.0));
        }
        if let Some(f) = self.env.function(name) {
            if f.args.len() != args.len() {
                return Err(ExprError::Syntax(format!(
                    "`{name}` takes {} arguments, found {}",
                    f.args.len(),
                    args.len()
                )));
            }
            let local = ArgEnv {
                names: f.args,
                values: &args,
                outer: self.env,
            };
            self.calls.set(self.calls.get() + 1);
            if self.calls.get() > MAX_CALLS {
                return Err(ExprError::Invalid(format!(
                    "evaluating this expression calls user functions more than {MAX_CALLS} times"
                )));
            }
            return eval_counted(f.body, &local, self.mode, self.depth + 1, self.calls);
        }
        super::functions::builtin(name, &args, self.mode)
    }

    /// `V(node)`, `V(a,b)`, `I(V1)`: the argument is a node or element name, possibly with
    /// characters that are operators elsewhere (`V(+V)`, `V(N$3)`).
    fn probe(&mut self, name: &str) -> Result<Num, ExprError> {
        match self.rest.find(')') {
            Some(i) if !self.rest[..i].trim().is_empty() => {
                self.rest = &self.rest[i + 1..];
                Ok(Num::Varies)
            }
            Some(_) => Err(ExprError::Syntax(format!(
                "expected a node or element name inside `{name}( )`"
            ))),
            None => Err(ExprError::Syntax(format!("`{name}(` is never closed"))),
        }
    }
}

struct ArgEnv<'a> {
    names: &'a [&'a str],
    values: &'a [Num],
    outer: &'a dyn Env,
}

impl Env for ArgEnv<'_> {
    fn param(&self, name: &str, depth: usize) -> Option<Result<Num, ExprError>> {
        match self.names.iter().position(|n| n.eq_ignore_ascii_case(name)) {
            Some(i) => self.values.get(i).map(|v| Ok(*v)),
            None => self.outer.param(name, depth),
        }
    }

    fn function(&self, name: &str) -> Option<UserFunc<'_>> {
        self.outer.function(name)
    }
}

fn apply(op: Op, a: Num, b: Num) -> Result<Num, ExprError> {
    let (Num::Known(x), Num::Known(y)) = (a, b) else {
        return Ok(Num::Varies);
    };
    let v = match op {
        Op::Or => flag(truth(x) || truth(y)),
        Op::And => flag(truth(x) && truth(y)),
        Op::Eq => flag(x == y),
        Op::Ne => flag(x != y),
        Op::Lt => flag(x < y),
        Op::Le => flag(x <= y),
        Op::Gt => flag(x > y),
        Op::Ge => flag(x >= y),
        Op::Add => x + y,
        Op::Sub => x - y,
        Op::Mul => x * y,
        Op::Div | Op::Rem if y == 0.0 => {
            return Err(ExprError::Invalid("division by zero".into()));
        }
        Op::Div => x / y,
        Op::Rem => x % y,
    };
    finite(v, "the arithmetic")
}

#[cfg(test)]
mod tests {
    use super::*;

    struct NoParams;
    impl Env for NoParams {
        fn param(&self, name: &str, _: usize) -> Option<Result<Num, ExprError>> {
            match name {
                "a" => Some(Ok(Num::Known(2.0))),
                "rt" => Some(Ok(Num::Known(10e3))),
                _ => None,
            }
        }
        fn function(&self, _: &str) -> Option<UserFunc<'_>> {
            None
        }
    }

    fn ev(t: &str) -> Result<Num, ExprError> {
        eval(t, &NoParams, Mode::Param, 0)
    }

    fn k(t: &str) -> f64 {
        match ev(t) {
            Ok(Num::Known(v)) => v,
            other => panic!("{t}: {other:?}"),
        }
    }

    #[test]
    fn arithmetic_and_precedence() {
        assert_eq!(k("1+2*3"), 7.0);
        assert_eq!(k("(1+2)*3"), 9.0);
        assert_eq!(k("-2**2"), -4.0);
        assert_eq!(k("2^3^2"), 512.0);
        assert_eq!(k("2**-1"), 0.5);
        assert_eq!(k("10-4-3"), 3.0);
        assert_eq!(k("a*rt"), 20e3);
        assert_eq!(k("24V/0.1A"), 240.0);
        assert_eq!(k("1k*2"), 2000.0);
    }

    #[test]
    fn conditions_and_functions() {
        assert_eq!(k("a>1 ? 5 : 6"), 5.0);
        assert_eq!(k("a>1 && a<3"), 1.0);
        assert_eq!(k("!(a==2) || 0"), 0.0);
        assert_eq!(k("if(a>3, 1/0, 7)"), 7.0);
        assert_eq!(k("a>3 ? 1/0 : 7"), 7.0);
        assert_eq!(k("max(1, 5, 3) + min(4, 2)"), 7.0);
        assert_eq!(k("limit(12, 0, 5)"), 5.0);
        assert_eq!(k("tanh(0)"), 0.0);
        assert_eq!(k("sgn(-3)"), -1.0);
        assert_eq!(k("round(2.5) + floor(1.7) + ceil(1.2) + int(-1.5)"), 5.0);
        assert!((k("log10(1000)") - 3.0).abs() < 1e-12);
        assert!((k("pi") - std::f64::consts::PI).abs() < 1e-15);
    }

    #[test]
    fn dependent_terms_vary() {
        assert_eq!(ev("V(a)*2"), Ok(Num::Varies));
        assert_eq!(ev("I(V1)+time"), Ok(Num::Varies));
        assert_eq!(ev("if(V(+V)>1, 1, 2)"), Ok(Num::Varies));
        assert_eq!(ev("temp+1"), Ok(Num::Varies));
    }

    #[test]
    fn errors() {
        assert!(matches!(ev("1/0"), Err(ExprError::Invalid(_))));
        assert!(matches!(ev("nope+1"), Err(ExprError::Invalid(_))));
        assert!(matches!(ev("1e999"), Err(ExprError::Invalid(_))));
        assert!(matches!(ev("sqrt(-1)"), Err(ExprError::Invalid(_))));
        assert!(matches!(ev("1+"), Err(ExprError::Syntax(_))));
        assert!(matches!(ev("(1"), Err(ExprError::Syntax(_))));
        assert!(matches!(ev("foo(1)"), Err(ExprError::Invalid(_))));
        assert_eq!(
            eval("ddt(V(a))", &NoParams, Mode::Behavioural, 0),
            Ok(Num::Varies)
        );
    }

    struct Doubling;
    impl Env for Doubling {
        fn param(&self, _: &str, _: usize) -> Option<Result<Num, ExprError>> {
            None
        }
        fn function(&self, name: &str) -> Option<UserFunc<'_>> {
            const ARGS: &[&str] = &["x"];
            // f0(x) = f1(x)+f1(x), f1 = f2+f2, ... 60 levels: 2^60 calls if not cut off.
            let level: u32 = name.strip_prefix('f')?.parse().ok()?;
            let body: &'static str = if level >= 60 {
                "x"
            } else {
                Box::leak(format!("f{n}(x)+f{n}(x)", n = level + 1).into_boxed_str())
            };
            Some(UserFunc { args: ARGS, body })
        }
    }

    #[test]
    fn exponential_user_functions_are_cut_off() {
        let r = eval("f0(1)", &Doubling, Mode::Param, 0);
        assert!(matches!(r, Err(ExprError::Invalid(m)) if m.contains("user functions")));
    }

    #[test]
    fn deep_nesting_is_refused_not_overflowed() {
        let deep = format!("{}1{}", "(".repeat(100_000), ")".repeat(100_000));
        assert!(matches!(ev(&deep), Err(ExprError::Invalid(_))));
        let minus = format!("{}1", "-".repeat(100_000));
        assert!(matches!(ev(&minus), Err(ExprError::Invalid(_))));
        let long = vec!["1"; 100_000].join("+");
        assert_eq!(k(&long), 100_000.0);
    }
}
