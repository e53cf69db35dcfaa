//! `--format lines`: `path:line:col: severity rule-id — message`, one finding per line. The
//! `path:line:col: ` prefix is the GNU convention that editors, terminals and quickfix lists
//! parse; the rest of the line is kickback's own: the severity as the first word (so those
//! lists can tell errors from warnings), the rule, then the message after a dash.

use super::ordered;
use crate::diagnostic::Severity;
use crate::outcome::FileReport;

/// One line per finding at or above `min_severity`, in file, line, column order.
pub fn render(reports: &[FileReport], min_severity: Severity) -> String {
    let mut out = String::new();
    for entry in ordered(reports) {
        let finding = entry.finding;
        if finding.severity < min_severity {
            continue;
        }
        let loc = &entry.location;
        out.push_str(&format!(
            "{}:{}:{}: {} {} — {}\n",
            loc.file,
            loc.line,
            loc.column,
            finding.severity,
            finding.rule,
            one_line(&finding.message)
        ));
    }
    out
}

/// A message on one line, whatever it holds, so that each finding stays one line.
fn one_line(message: &str) -> String {
    message.split_whitespace().collect::<Vec<_>>().join(" ")
}
