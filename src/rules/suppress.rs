//! Suppression comments and `[rules]` severity overrides, applied after every rule has run.
//! Nothing disappears without a trace: each silenced finding is counted.

use super::REGISTRY;
use crate::config::{Config, RuleLevel};
use crate::diagnostic::{Finding, Severity};
use crate::netlist::{FlatNetlist, Suppression};
use crate::source::SourceMap;

/// Findings that remain, and how many were silenced.
#[derive(Debug, Default)]
pub struct Outcome {
    pub findings: Vec<Finding>,
    pub suppressed: usize,
}

/// Applies suppression comments, then the config's per-rule levels.
pub fn apply(
    findings: Vec<Finding>,
    netlist: &FlatNetlist,
    sources: &SourceMap,
    config: &Config,
) -> Outcome {
    let mut outcome = Outcome::default();
    let mut extra = Vec::new();
    let valid: Vec<&Suppression> = netlist
        .suppressions
        .iter()
        .filter(|s| is_valid(s, &mut extra))
        .collect();
    let mut used = vec![false; valid.len()];
    // By file and target line, so each finding looks only at the comments on its own lines.
    let mut by_line: std::collections::BTreeMap<(crate::source::FileId, usize), Vec<usize>> =
        std::collections::BTreeMap::new();
    for (i, s) in valid.iter().enumerate() {
        by_line.entry((s.file, s.target_line)).or_default().push(i);
    }
    for finding in findings {
        let (line, end_line) = {
            let loc = sources.locate(finding.span);
            (loc.line, loc.end_line.max(loc.line))
        };
        let file = finding.span.file;
        let hit = by_line
            .range((file, line)..=(file, end_line))
            .flat_map(|(_, ids)| ids.iter().copied())
            .find(|&i| {
                valid[i]
                    .rules
                    .iter()
                    .any(|r| r.eq_ignore_ascii_case(&finding.rule))
            });
        match hit {
            Some(i) => {
                used[i] = true;
                outcome.suppressed += 1;
            }
            None => outcome.findings.push(finding),
        }
    }
    for (s, _) in valid.iter().zip(&used).filter(|(_, used)| !**used) {
        extra.push(
            Finding::new(
                "suppression-unused",
                Severity::Warning,
                s.span,
                format!(
                    "this suppression of {} silenced nothing on line {}",
                    s.rules.join(", "),
                    s.target_line
                ),
            )
            .with_help(
                "remove the comment, or move it onto the element's line or the line above it",
            ),
        );
    }
    outcome.findings.extend(extra);
    let mut kept = Vec::with_capacity(outcome.findings.len());
    for mut finding in std::mem::take(&mut outcome.findings) {
        match config.rule_level(&finding.rule) {
            Some(RuleLevel::Off) => outcome.suppressed += 1,
            Some(RuleLevel::Set(level)) => {
                finding.severity = level;
                kept.push(finding);
            }
            None => kept.push(finding),
        }
    }
    outcome.findings = kept;
    outcome
}

/// A suppression must name known rules and give a reason; otherwise it is itself a finding.
/// One in the earlier form is honoured, with a note that gives the current form.
fn is_valid(s: &Suppression, out: &mut Vec<Finding>) -> bool {
    let mut ok = true;
    if s.earlier_form {
        out.push(
            Finding::new(
                "suppression-invalid",
                Severity::Note,
                s.span,
                "this suppression is in the earlier form `kickback: allow ... -- ...`, which is \
                 read until the next release",
            )
            .with_help(format!(
                "rewrite it as `kickback waive {} because {}`",
                if s.rules.is_empty() {
                    "<rule-id>".to_string()
                } else {
                    s.rules.join(", ")
                },
                s.reason.as_deref().unwrap_or("<reason>")
            )),
        );
    }
    for rule in &s.rules {
        if super::find(rule).is_none() {
            let near = closest_rules(rule);
            let mut f = Finding::new(
                "suppression-invalid",
                Severity::Warning,
                s.span,
                format!("`{rule}` is not a kickback rule, so this suppression does nothing"),
            );
            if !near.is_empty() {
                f = f.with_help(format!("did you mean {}?", near.join(" or ")));
            }
            out.push(f);
            ok = false;
        }
    }
    if s.rules.is_empty() {
        out.push(
            Finding::new(
                "suppression-invalid",
                Severity::Warning,
                s.span,
                "this suppression names no rule",
            )
            .with_help(
                "write `* kickback waive <rule-id> because <reason>` on the line above the \
                 element",
            ),
        );
        ok = false;
    }
    if s.reason.as_deref().is_none_or(|r| r.trim().is_empty()) {
        out.push(
            Finding::new(
                "suppression-invalid",
                Severity::Warning,
                s.span,
                "a suppression needs a reason after `because`, so the next reviewer knows why",
            )
            .with_help(format!(
                "write `* kickback waive {} because <why this is safe here>`",
                s.rules.join(", ")
            )),
        );
        ok = false;
    }
    ok
}

/// Rule IDs within a small edit distance of `id`, closest first.
pub fn closest_rules(id: &str) -> Vec<&'static str> {
    let mut scored: Vec<(usize, &'static str)> = REGISTRY
        .iter()
        .map(|r| (strsim::levenshtein(&id.to_ascii_lowercase(), r.id), r.id))
        .filter(|(d, _)| *d <= 3.max(id.len() / 3))
        .collect();
    scored.sort();
    scored.into_iter().take(3).map(|(_, id)| id).collect()
}
