//! `kickback report --format markdown`: the findings table and the key numbers per stage, for
//! a CI job summary or a pull-request comment. The same content as the HTML page, without the
//! drawings.

use super::model::{self, Figure, Page};
use super::Review;
use std::fmt::Write;

/// Escapes text for a Markdown table cell or paragraph: no markup, no raw HTML, one line.
fn md(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '|' | '\\' | '`' | '*' | '_' | '[' | ']' | '#' | '~' | '!' => {
                out.push('\\');
                out.push(c);
            }
            '\n' | '\r' | '\t' => out.push(' '),
            c if c.is_control() => out.push('\u{fffd}'),
            c => out.push(c),
        }
    }
    out
}

/// `kickback report --format markdown`.
pub fn render_markdown(review: &Review<'_>) -> String {
    let page = model::page(review, false);
    let mut out = String::new();
    let _ = writeln!(out, "# kickback review: {}\n", md(&page.file));
    if !page.title.is_empty() {
        let _ = writeln!(out, "{}\n", md(&page.title));
    }
    let _ = writeln!(out, "**{}**\n", md(&page.summary));
    let _ = writeln!(
        out,
        "> A review aid, not a sign-off. Follow local electrical codes and licensed practice, above all for anything on mains.\n"
    );
    if !page.failure.is_empty() {
        let _ = writeln!(
            out,
            "This netlist could not be checked: {}\n",
            md(&page.failure)
        );
    }
    findings(&mut out, &page);
    stages(&mut out, &page);
    for f in page.timers.iter().chain(&page.switches) {
        figure(&mut out, f);
    }
    out
}

fn findings(out: &mut String, page: &Page) {
    let _ = writeln!(out, "## Findings\n");
    if page.findings.is_empty() {
        let _ = writeln!(out, "No findings.\n");
        return;
    }
    let _ = writeln!(out, "| severity | rule | where | message | fix |");
    let _ = writeln!(out, "|---|---|---|---|---|");
    for f in &page.findings {
        let mark = match f.severity {
            "error" => "■ error",
            "warning" => "▲ warning",
            _ => "● note",
        };
        let _ = writeln!(
            out,
            "| {mark} | {} | {} | {} | {} |",
            md(&f.rule),
            md(&f.location),
            md(&f.message),
            md(&f.help)
        );
    }
    out.push('\n');
}

fn stages(out: &mut String, page: &Page) {
    if page.stages.is_empty() {
        return;
    }
    let _ = writeln!(out, "## Stages\n");
    let _ = writeln!(out, "| element | kind | taken for | verdict |");
    let _ = writeln!(out, "|---|---|---|---|");
    for s in &page.stages {
        let _ = writeln!(
            out,
            "| {} | {} | {} | {} |",
            md(&s.element),
            md(&s.kind),
            md(&s.taken_for),
            md(&s.verdict)
        );
    }
    out.push('\n');
}

fn figure(out: &mut String, f: &Figure) {
    let _ = writeln!(out, "### {}\n", md(&f.heading));
    if !f.note.is_empty() {
        let _ = writeln!(out, "{}\n", md(&f.note));
    }
    let _ = writeln!(out, "| quantity | value | from |");
    let _ = writeln!(out, "|---|---|---|");
    for n in &f.numbers {
        let value = if n.over {
            format!("{} (over the limit)", n.value)
        } else {
            n.value.clone()
        };
        let _ = writeln!(
            out,
            "| {} | {} | {} |",
            md(&n.name),
            md(&value),
            md(&n.source)
        );
    }
    out.push('\n');
}
