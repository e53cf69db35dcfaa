//! Parameter scopes and the finding sink. A scope is one instance of a definition: the values
//! its `X` line passed, the definition's defaults and local `.param`s (evaluated lazily, once,
//! in this scope), then the scope of the instance that placed it, up to the global `.param`s.

use super::deck::{Assign, Def, MAX_SCOPE_WALK};
use super::expr::{self, Env, ExprError, Mode, UserFunc};
use super::flat::Num;
use super::text::Caseless;
use super::value::{parse_number, Overflow};
use crate::diagnostic::{Finding, Severity};
use crate::source::Span;
use std::cell::RefCell;
use std::collections::{HashMap, HashSet};

/// Findings, each reported once even when an instance repeats it.
#[derive(Default)]
pub struct Sink<'a> {
    findings: RefCell<Vec<Finding>>,
    seen: RefCell<HashSet<(Span, String)>>,
    /// Parameters being evaluated, innermost last (for naming cycles).
    stack: RefCell<Vec<&'a str>>,
}

impl<'a> Sink<'a> {
    pub fn report(&self, finding: Finding) {
        let key = (finding.span, finding.message.clone());
        if self.seen.borrow_mut().insert(key) {
            self.findings.borrow_mut().push(finding);
        }
    }

    pub fn report_all(&self, findings: Vec<Finding>) {
        for f in findings {
            self.report(f);
        }
    }

    pub fn take(&self) -> Vec<Finding> {
        std::mem::take(&mut *self.findings.borrow_mut())
    }

    /// Reports an expression failure and gives the value to use instead.
    pub fn fail(
        &self,
        err: ExprError,
        span: Span,
        context: &str,
        decorate: &dyn Fn(Finding) -> Finding,
    ) -> Num {
        let (rule, message) = match err {
            ExprError::Invalid(m) => ("parameter-invalid", m),
            ExprError::Syntax(m) => ("syntax", m),
            ExprError::Reported => return Num::Varies,
        };
        self.report(decorate(Finding::new(
            rule,
            Severity::Error,
            span,
            format!("{context}: {message}"),
        )));
        Num::Varies
    }
}

#[derive(Clone)]
enum Slot {
    Busy,
    Done(Result<Num, ExprError>),
}

pub struct Scope<'p, 'a> {
    defs: &'p [Def<'a>],
    def: usize,
    parent: Option<&'p Scope<'p, 'a>>,
    overrides: Vec<(&'a str, Num)>,
    memo: RefCell<HashMap<Caseless<'a>, Slot>>,
    sink: &'p Sink<'a>,
}

impl<'p, 'a> Scope<'p, 'a> {
    pub fn new(
        defs: &'p [Def<'a>],
        def: usize,
        parent: Option<&'p Scope<'p, 'a>>,
        overrides: Vec<(&'a str, Num)>,
        sink: &'p Sink<'a>,
    ) -> Self {
        Scope {
            defs,
            def,
            parent,
            overrides,
            memo: RefCell::new(HashMap::new()),
            sink,
        }
    }

    pub fn sink(&self) -> &'p Sink<'a> {
        self.sink
    }

    /// Evaluates a value's text (plain numbers without the expression machinery).
    pub fn eval(&self, text: &str, mode: Mode) -> Result<Num, ExprError> {
        match parse_number(text) {
            Some(Ok(v)) => Ok(Num::Known(v)),
            Some(Err(Overflow)) => Err(ExprError::Invalid(format!(
                "`{text}` is too large to represent"
            ))),
            None => expr::eval(text, self, mode, 0),
        }
    }

    /// Value of one of this definition's own parameters (defaults and local `.param`s).
    pub fn own(&self, assign: &Assign<'a>) -> Result<Num, ExprError> {
        if let Some((_, v)) = self
            .overrides
            .iter()
            .find(|(n, _)| n.eq_ignore_ascii_case(assign.name))
        {
            return Ok(*v);
        }
        self.evaluate(assign, 0)
    }

    /// Evaluates every parameter of the definition, so errors in unused ones are reported too.
    pub fn check_all(&self) {
        let Some(def) = self.defs.get(self.def) else {
            return;
        };
        for a in def.defaults.iter().chain(def.locals.values()) {
            let _ = self.own(a);
        }
    }

    fn evaluate(&self, assign: &Assign<'a>, depth: usize) -> Result<Num, ExprError> {
        let key = Caseless(assign.name);
        let slot = self.memo.borrow().get(&key).cloned();
        match slot {
            Some(Slot::Done(r)) => return r,
            Some(Slot::Busy) => {
                let stack = self.sink.stack.borrow();
                let from = stack
                    .iter()
                    .rposition(|n| n.eq_ignore_ascii_case(assign.name))
                    .unwrap_or(0);
                let mut chain: Vec<&str> = stack[from..].to_vec();
                chain.push(assign.name);
                return Err(ExprError::Invalid(format!(
                    "parameter cycle: {}",
                    chain.join(" → ")
                )));
            }
            None => {}
        }
        self.memo.borrow_mut().insert(key, Slot::Busy);
        self.sink.stack.borrow_mut().push(assign.name);
        let result = match parse_number(&assign.text) {
            Some(Ok(v)) => Ok(Num::Known(v)),
            _ => expr::eval(&assign.text, self, Mode::Param, depth + 1),
        };
        self.sink.stack.borrow_mut().pop();
        let stored = match result {
            Ok(v) => Ok(v),
            Err(ExprError::Reported) => Err(ExprError::Reported),
            Err(err) => {
                let context = format!("parameter `{}`", assign.name);
                self.sink.fail(err, assign.span, &context, &|f| f);
                Err(ExprError::Reported)
            }
        };
        self.memo
            .borrow_mut()
            .insert(key, Slot::Done(stored.clone()));
        stored
    }

    fn find_assign(&self, name: &str) -> Option<&'p Assign<'a>> {
        let def = self.defs.get(self.def)?;
        def.locals.get(name).or_else(|| {
            def.default_index
                .get(name)
                .and_then(|&i| def.defaults.get(i))
        })
    }
}

impl Env for Scope<'_, '_> {
    fn param(&self, name: &str, depth: usize) -> Option<Result<Num, ExprError>> {
        if let Some((_, v)) = self
            .overrides
            .iter()
            .find(|(n, _)| n.eq_ignore_ascii_case(name))
        {
            return Some(Ok(*v));
        }
        if let Some(assign) = self.find_assign(name) {
            return Some(self.evaluate(assign, depth));
        }
        self.parent.and_then(|p| p.param(name, depth))
    }

    fn function(&self, name: &str) -> Option<UserFunc<'_>> {
        let mut def = Some(self.def);
        for _ in 0..MAX_SCOPE_WALK {
            let entry = self.defs.get(def?)?;
            if let Some(f) = entry.funcs.get(name) {
                return Some(UserFunc {
                    args: &f.args,
                    body: &f.body,
                });
            }
            def = entry.parent;
        }
        None
    }
}

/// Chooses `Num::Varies` for failed values without a finding (behavioural expressions).
pub fn quiet(result: Result<Num, ExprError>) -> Num {
    result.unwrap_or(Num::Varies)
}

pub fn syntax(span: Span, message: impl Into<String>) -> Finding {
    Finding::new("syntax", Severity::Error, span, message)
}
