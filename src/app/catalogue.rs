//! `kickback rules` and `kickback explain`: the rule registry and pages, for a person.

use crate::rules::{self, RuleInfo, REGISTRY};

/// Said after every page: what a clean check is and is not.
pub const CAUTION: &str = "Caution: kickback is a review aid, not a sign-off. A clean check does \
not make a design safe; motor drives store energy in their inductance and batteries deliver \
large fault currents. Follow local electrical codes and licensed practice for anything above \
safe extra-low voltage, and above all for anything mains-powered.";

/// ID, default severity and summary of every rule, in aligned columns.
pub fn table(registry: &[RuleInfo]) -> String {
    let header = ("RULE", "DEFAULT", "SUMMARY");
    let id_width = registry
        .iter()
        .map(|r| r.id.len())
        .chain([header.0.len()])
        .max()
        .unwrap_or(0);
    let severity_width = registry
        .iter()
        .map(|r| r.default_severity.as_str().len())
        .chain([header.1.len()])
        .max()
        .unwrap_or(0);
    let mut out = String::new();
    let mut row = |id: &str, severity: &str, summary: &str| {
        let line = format!("{id:<id_width$}  {severity:<severity_width$}  {summary}");
        out.push_str(line.trim_end());
        out.push('\n');
    };
    row(header.0, header.1, header.2);
    for rule in registry {
        row(rule.id, rule.default_severity.as_str(), rule.summary);
    }
    out
}

/// The page of a rule followed by the caution, or the closest IDs when there is no such rule.
pub fn explain(id: &str) -> Result<String, Vec<&'static str>> {
    match rules::find(id) {
        Some(rule) => {
            let mut page = rule.page.trim_end().to_string();
            page.push_str("\n\n---\n\n");
            page.push_str(CAUTION);
            page.push('\n');
            Ok(page)
        }
        None => Err(closest(id, REGISTRY)),
    }
}

/// Up to three rule IDs that look like `id` (a typo, a missing hyphen, a part of the name).
pub fn closest(id: &str, registry: &[RuleInfo]) -> Vec<&'static str> {
    let wanted = id.to_ascii_lowercase();
    let mut scored: Vec<(f64, &'static str)> = registry
        .iter()
        .filter_map(|rule| {
            let similarity = strsim::jaro_winkler(&wanted, rule.id);
            let contains = wanted.len() >= 3 && rule.id.contains(wanted.as_str());
            (similarity >= 0.8 || contains).then_some((similarity, rule.id))
        })
        .collect();
    scored.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(b.1)));
    scored.into_iter().take(3).map(|(_, id)| id).collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diagnostic::Severity;

    fn rule(id: &'static str, default_severity: Severity, summary: &'static str) -> RuleInfo {
        RuleInfo {
            id,
            default_severity,
            summary,
            page: "",
            check: None,
        }
    }

    fn sample() -> Vec<RuleInfo> {
        vec![
            rule("flyback-missing", Severity::Error, "No freewheel path"),
            rule("flyback-reversed", Severity::Error, "Diode shorts the rail"),
            rule("pwm-audible", Severity::Note, "Audible switching"),
        ]
    }

    #[test]
    fn table_aligns_columns() {
        let text = table(&sample());
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines[0], "RULE              DEFAULT  SUMMARY");
        assert_eq!(lines[1], "flyback-missing   error    No freewheel path");
        assert_eq!(lines[3], "pwm-audible       note     Audible switching");
    }

    #[test]
    fn near_misses_are_suggested() {
        let rules = sample();
        assert_eq!(closest("flyback-misssing", &rules)[0], "flyback-missing");
        assert_eq!(
            closest("flyback", &rules),
            ["flyback-missing", "flyback-reversed"]
        );
        assert!(closest("zzz", &rules).is_empty());
    }
}
