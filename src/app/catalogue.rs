//! `kickback rules` and `kickback explain`: the rule registry and pages, for a person.

use crate::config::{Config, RuleLevel};
use crate::diagnostic::Severity;
use crate::rules::{self, Rule, REGISTRY};

/// Said after every page: what a clean check is and is not.
pub const CAUTION: &str = "Caution: kickback is a review aid, not a sign-off. A clean check does \
not make a design safe; motor drives store energy in their inductance and batteries deliver \
large fault currents. Follow local electrical codes and licensed practice for anything above \
safe extra-low voltage, and above all for anything mains-powered.";

/// The severities a rule can give, worst first, joined by `/` (`error/warning`).
fn grades(rule: &Rule) -> String {
    let mut grades: Vec<Severity> = rule.grades.to_vec();
    if !grades.contains(&rule.default_severity) {
        grades.push(rule.default_severity);
    }
    grades.sort_unstable_by(|a, b| b.cmp(a));
    grades.dedup();
    grades
        .iter()
        .map(|s| s.as_str())
        .collect::<Vec<_>>()
        .join("/")
}

/// What the configuration makes of a rule: its own grading (`as graded`), one fixed level
/// (`[rules]` sets one) or `off`.
fn in_effect(rule: &Rule, config: Option<&Config>) -> String {
    match config.and_then(|c| c.rule_level(rule.id)) {
        Some(RuleLevel::Off) => "off".to_string(),
        Some(RuleLevel::Set(level)) => format!("{level} (config)"),
        None => "as graded".to_string(),
    }
}

/// Every rule: its ID, the severities it can give, what the configuration in effect makes of
/// it and its summary, in aligned columns.
pub fn table(registry: &[&Rule], config: Option<&Config>) -> String {
    let header = ["RULE", "GIVES", "IN EFFECT", "SUMMARY"];
    let rows: Vec<[String; 4]> = registry
        .iter()
        .map(|rule| {
            [
                rule.id.to_string(),
                grades(rule),
                in_effect(rule, config),
                rule.summary.to_string(),
            ]
        })
        .collect();
    let [w0, w1, w2, _] = crate::report::column_widths(header, &rows);
    let mut out = String::new();
    let mut row = |cells: [&str; 4]| {
        let line = format!(
            "{:<w0$}  {:<w1$}  {:<w2$}  {}",
            cells[0], cells[1], cells[2], cells[3]
        );
        out.push_str(line.trim_end());
        out.push('\n');
    };
    row(header);
    for r in &rows {
        row([&r[0], &r[1], &r[2], &r[3]]);
    }
    if let Some(config) = config.filter(|c| !c.files.is_empty()) {
        let files: Vec<String> = config
            .files
            .iter()
            .map(|p| p.display().to_string())
            .collect();
        out.push_str(&format!("\nIN EFFECT read from {}\n", files.join(", ")));
    }
    out
}

/// Every rule as JSON for a program: `version`, the configuration files read (`configs`,
/// outermost first) and
/// `rules`, each with `id`, `default` (its usual severity), `gives` (every severity it can give,
/// worst first), `in_effect` (`as-graded`, `off`, or the one level the configuration or the
/// command line sets) and `summary`.
pub fn json(registry: &[&Rule], config: Option<&Config>) -> String {
    let rules: Vec<serde_json::Value> = registry
        .iter()
        .map(|rule| {
            let in_effect = match config.and_then(|c| c.rule_level(rule.id)) {
                Some(RuleLevel::Off) => "off".to_string(),
                Some(RuleLevel::Set(level)) => level.as_str().to_string(),
                None => "as-graded".to_string(),
            };
            serde_json::json!({
                "id": rule.id,
                "default": rule.default_severity.as_str(),
                "gives": grades(rule).split('/').collect::<Vec<_>>(),
                "in_effect": in_effect,
                "summary": rule.summary,
            })
        })
        .collect();
    let document = serde_json::json!({
        "version": 1,
        "configs": config
            .map(|c| c.files.iter().map(|p| p.display().to_string()).collect::<Vec<_>>())
            .unwrap_or_default(),
        "rules": rules,
    });
    let mut text = serde_json::to_string_pretty(&document).unwrap_or_default();
    text.push('\n');
    text
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
pub fn closest(id: &str, registry: &[&Rule]) -> Vec<&'static str> {
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
    use std::path::Path;

    const FLYBACK_MISSING: Rule = Rule {
        id: "flyback-missing",
        default_severity: Severity::Error,
        grades: &[Severity::Error],
        summary: "No freewheel path",
        page: "",
        check: None,
    };
    const FLYBACK_REVERSED: Rule = Rule {
        id: "flyback-reversed",
        default_severity: Severity::Error,
        grades: &[Severity::Error],
        summary: "Diode shorts the rail",
        page: "",
        check: None,
    };
    const SHOOT_THROUGH: Rule = Rule {
        id: "shoot-through",
        default_severity: Severity::Error,
        grades: &[Severity::Error, Severity::Warning],
        summary: "Both switches conduct",
        page: "",
        check: None,
    };
    const PWM_AUDIBLE: Rule = Rule {
        id: "pwm-audible",
        default_severity: Severity::Note,
        grades: &[Severity::Note],
        summary: "Audible switching",
        page: "",
        check: None,
    };

    fn sample() -> Vec<&'static Rule> {
        vec![
            &FLYBACK_MISSING,
            &FLYBACK_REVERSED,
            &SHOOT_THROUGH,
            &PWM_AUDIBLE,
        ]
    }

    #[test]
    fn table_aligns_columns_and_shows_every_grade() {
        let text = table(&sample(), None);
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(
            lines[0],
            "RULE              GIVES          IN EFFECT  SUMMARY"
        );
        assert_eq!(
            lines[1],
            "flyback-missing   error          as graded  No freewheel path"
        );
        assert_eq!(
            lines[3],
            "shoot-through     error/warning  as graded  Both switches conduct"
        );
        assert_eq!(
            lines[4],
            "pwm-audible       note           as graded  Audible switching"
        );
    }

    #[test]
    fn table_shows_the_levels_the_config_sets_whatever_their_case() {
        let config = Config::parse(
            "[rules]\nShoot-Through = \"warning\"\npwm-audible = \"off\"\n",
            Path::new("kickback.toml"),
        )
        .unwrap();
        let text = table(&sample(), Some(&config));
        assert!(text.contains("shoot-through     error/warning  warning (config)"));
        assert!(text.contains("pwm-audible       note           off"));
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
