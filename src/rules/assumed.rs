//! Findings that rest on an assumed number. A rule marks the number its verdict turns on
//! ([`Finding::with_deciding_value`]); where that number is only a default
//! ([`Provenance::Assumed`]) and the rule has not shown that the verdict holds over the number's
//! whole plausible range ([`Finding::holding_over_range`]), the finding becomes a note that
//! names the assumption and the rating that would settle it. One place decides, for every rule.

use super::units::format_si;
use crate::diagnostic::{Finding, Severity};

/// Demotes every finding whose verdict rests on an assumed number (see the module notes).
pub fn settle(findings: &mut [Finding]) {
    for f in findings.iter_mut() {
        if f.severity == Severity::Note || f.holds_at == Some(f.severity) {
            continue;
        }
        let Some(q) = f.resting_on_assumption() else {
            continue;
        };
        let (name, value, unit, source) =
            (q.name.clone(), q.value, q.unit.clone(), q.source.clone());
        let part = f
            .instance_path
            .clone()
            .or_else(|| f.element.clone())
            .unwrap_or_else(|| "the part".into());
        let settled = f.holds_at.unwrap_or(Severity::Note);
        f.message = if settled == Severity::Note {
            format!(
                "{}; but this rests on an assumed {name} of {} ({source}), so it is a note until \
                 the part's rating is stated: add `{name} = …` for {part} to confirm",
                f.message,
                format_si(value, &unit)
            )
        } else {
            format!(
                "{}; this rests on an assumed {name} of {} ({source}): with the largest {name} \
                 such a part plausibly has it is still a {settled}, so it is reported as one \
                 until the part's rating is stated: add `{name} = …` for {part} to settle it",
                f.message,
                format_si(value, &unit)
            )
        };
        f.severity = settled;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::source::{FileId, Span};

    fn finding() -> Finding {
        Finding::new(
            "r",
            Severity::Error,
            Span::new(FileId(0), 0, 1),
            "R1 runs hot",
        )
        .with_element("R1", None)
    }

    #[test]
    fn an_assumed_deciding_rating_makes_a_note() {
        let mut all = vec![finding().with_deciding_value(
            "power_rating",
            0.25,
            "W",
            "built-in default for resistor (common practice)",
        )];
        settle(&mut all);
        assert_eq!(all[0].severity, Severity::Note);
        assert!(all[0].message.contains("add `power_rating = …` for R1"));
    }

    #[test]
    fn stated_ratings_and_robust_verdicts_keep_their_severity() {
        let stated =
            finding().with_deciding_value("power_rating", 0.25, "W", "from config [parts.R]");
        let robust = finding()
            .with_deciding_value("power_rating", 0.25, "W", "built-in default for resistor")
            .holding_over_range(true);
        let undecided = finding().with_value("power_rating", 0.25, "W", "built-in default");
        let mut all = vec![stated, robust, undecided];
        settle(&mut all);
        assert!(all.iter().all(|f| f.severity == Severity::Error));
    }

    #[test]
    fn an_error_that_is_a_warning_at_the_largest_plausible_rating_becomes_a_warning() {
        let mut all = vec![finding()
            .with_deciding_value("power_rating", 0.25, "W", "built-in default for resistor")
            .holding_at(Some(Severity::Warning))];
        settle(&mut all);
        assert_eq!(all[0].severity, Severity::Warning);
        assert!(
            all[0].message.contains("still a warning"),
            "{}",
            all[0].message
        );
    }
}
