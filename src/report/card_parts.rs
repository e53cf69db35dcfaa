//! The parts of a finding's card in `--format cards` that kickback draws itself: the heading
//! (the element and where it is first, then the severity and the rule), the message, the
//! numbers as an aligned table with their sources, and the fix set apart at the end. The
//! netlist lines between them are drawn by miette in the frame of [`theme`].

use crate::diagnostic::{Finding, Quantity, Severity};
use crate::units::format_quantity;
use miette::{GraphicalTheme, ThemeCharacters, ThemeStyles};

/// How a card is drawn: colour, box-drawing characters, width.
#[derive(Clone, Copy, Debug)]
pub struct Look {
    pub color: bool,
    pub unicode: bool,
    pub width: usize,
}

pub const RED_BOLD: &str = "1;31";
pub const YELLOW_BOLD: &str = "1;33";
pub const GREEN_BOLD: &str = "1;32";
const CYAN_BOLD: &str = "1;36";
const BOLD: &str = "1";
const DIM: &str = "2";

/// `text` in an ANSI style when colour is on.
pub fn paint(look: Look, code: &str, text: &str) -> String {
    if look.color {
        format!("\u{1b}[{code}m{text}\u{1b}[0m")
    } else {
        text.to_string()
    }
}

fn severity_style(severity: Severity) -> &'static str {
    match severity {
        Severity::Error => RED_BOLD,
        Severity::Warning => YELLOW_BOLD,
        Severity::Note => CYAN_BOLD,
    }
}

/// The mark that opens a card: one shape per severity, so it reads without colour too.
fn mark(severity: Severity, unicode: bool) -> &'static str {
    match (severity, unicode) {
        (Severity::Error, true) => "■",
        (Severity::Warning, true) => "▲",
        (Severity::Note, true) => "●",
        (Severity::Error, false) => "X",
        (Severity::Warning, false) => "!",
        (Severity::Note, false) => "o",
    }
}

/// `■ MST at doser.cir:33:1 — error (gate-underdrive)`: what and where first, then how bad and
/// which rule. `place` is `file:line:col`, the form terminals and editors open at.
pub fn heading(finding: &Finding, place: &str, look: Look) -> String {
    let who = finding
        .instance_path
        .as_deref()
        .or(finding.element.as_deref());
    let dash = if look.unicode { "—" } else { "-" };
    let style = severity_style(finding.severity);
    let mut line = format!(
        "{} ",
        paint(look, style, mark(finding.severity, look.unicode))
    );
    match who {
        Some(who) => line.push_str(&format!("{} at {place}", paint(look, BOLD, who))),
        None => line.push_str(&paint(look, BOLD, place)),
    }
    line.push_str(&format!(
        " {dash} {} ({})\n",
        paint(look, style, finding.severity.as_str()),
        finding.rule
    ));
    line
}

/// The message, wrapped and indented under the heading.
pub fn message(text: &str, look: Look) -> String {
    wrap(text, "  ", "  ", look.width)
}

/// The numbers behind a finding as a table: name, value, source, in aligned columns.
pub fn numbers(values: &[Quantity], look: Look) -> String {
    if values.is_empty() {
        return String::new();
    }
    let rows: Vec<[String; 3]> = values
        .iter()
        .map(|q| {
            [
                q.name.clone(),
                format_quantity(q.value, &q.unit, !look.unicode),
                q.source.clone(),
            ]
        })
        .collect();
    let header = ["number", "value", "source"];
    let [w0, w1, _] = super::column_widths(header, &rows);
    let pad = |text: &str, to: usize| {
        let fill = to.saturating_sub(text.chars().count());
        format!("{text}{}", " ".repeat(fill))
    };
    let mut out = String::new();
    let head = format!(
        "    {}  {}  {}",
        pad(header[0], w0),
        pad(header[1], w1),
        header[2]
    );
    out.push_str(&paint(look, DIM, head.trim_end()));
    out.push('\n');
    for [name, value, source] in &rows {
        let line = format!("    {}  {}  {source}", pad(name, w0), pad(value, w1));
        out.push_str(line.trim_end());
        out.push('\n');
    }
    out
}

/// The fix, set apart: `  fix ▸ ...`, wrapped under itself.
pub fn fix(help: &str, look: Look) -> String {
    let arrow = if look.unicode { "▸" } else { ">" };
    let lead = format!("  fix {arrow} ");
    let painted = format!("  {} {arrow} ", paint(look, GREEN_BOLD, "fix"));
    let text = wrap(help, &lead, &" ".repeat(lead.chars().count()), look.width);
    text.replacen(&lead, &painted, 1)
}

/// The frame miette draws the netlist lines in: heavy rules, the file's place between two
/// tees, and no severity icon (the card's heading carries the severity).
pub fn theme(look: Look) -> GraphicalTheme {
    let characters = if look.unicode {
        ThemeCharacters {
            hbar: '━',
            vbar: '┃',
            xbar: '╋',
            vbar_break: '┇',
            uarrow: '▲',
            rarrow: '▸',
            ltop: '┏',
            mtop: '┳',
            rtop: '┓',
            lbot: '┗',
            rbot: '┛',
            mbot: '┻',
            lbox: '┫',
            rbox: '┣',
            lcross: '┣',
            rcross: '┫',
            underbar: '┳',
            underline: '━',
            error: String::new(),
            warning: String::new(),
            advice: String::new(),
        }
    } else {
        ThemeCharacters {
            hbar: '-',
            vbar: '|',
            xbar: '+',
            vbar_break: ':',
            uarrow: '^',
            rarrow: '>',
            ltop: '+',
            mtop: '+',
            rtop: '+',
            lbot: '+',
            rbot: '+',
            mbot: '+',
            lbox: '[',
            rbox: ']',
            lcross: '|',
            rcross: '|',
            underbar: '+',
            underline: '=',
            error: String::new(),
            warning: String::new(),
            advice: String::new(),
        }
    };
    let styles = if look.color {
        ThemeStyles::ansi()
    } else {
        ThemeStyles::none()
    };
    GraphicalTheme { characters, styles }
}

/// miette's rendering of a card's snippet in the card's own frame: without the line it writes
/// for the (empty) message above the frame, and with a plain top rule wherever miette would
/// name the file and place in brackets (the card's heading already names them, and an
/// "also in" line names another file).
pub fn frame_only(rendered: &str) -> String {
    let mut lines = rendered.split_inclusive('\n').peekable();
    while lines.peek().is_some_and(|line| is_blank(line)) {
        lines.next();
    }
    let mut out = String::new();
    for line in lines {
        match plain_top(line) {
            Some(top) => out.push_str(&top),
            None => out.push_str(line),
        }
    }
    out
}

/// A line that shows nothing: blanks, and colour codes around nothing (miette styles the empty
/// message line when colour is on).
fn is_blank(line: &str) -> bool {
    let mut rest = line;
    while let Some(at) = rest.find('\u{1b}') {
        if !rest[..at].trim().is_empty() {
            return false;
        }
        let code = &rest[at + 1..];
        let Some(end) = code.find(|c: char| c.is_ascii_alphabetic()) else {
            return false;
        };
        rest = &code[end + 1..];
    }
    rest.trim().is_empty()
}

/// A frame's top line, `   ┏━[file:line:col]`, as a plain rule `   ┏━━━━`; `None` for any
/// other line.
fn plain_top(line: &str) -> Option<String> {
    let rest = line.trim_start();
    let lead = &line[..line.len() - rest.len()];
    let mut chars = rest.chars();
    let (corner, rule) = (chars.next()?, chars.next()?);
    if chars.next()? != '[' || corner == rule || corner.is_alphanumeric() || rule.is_whitespace() {
        return None;
    }
    let mut top = format!("{lead}{corner}");
    top.extend(std::iter::repeat_n(rule, 4));
    top.push('\n');
    Some(top)
}

/// Words of `text` in lines of at most `width` columns, the first after `first`, the rest
/// after `rest`; paragraphs (line breaks in `text`) are kept. A word longer than a line
/// stands on a line of its own.
pub fn wrap(text: &str, first: &str, rest: &str, width: usize) -> String {
    let mut out = String::new();
    let mut indent = first;
    for paragraph in text.lines() {
        let mut line = indent.to_string();
        let mut empty = true;
        for word in paragraph.split_whitespace() {
            let used = line.chars().count();
            if !empty && used + 1 + word.chars().count() > width {
                out.push_str(line.trim_end());
                out.push('\n');
                line = rest.to_string();
                empty = true;
            }
            if !empty {
                line.push(' ');
            }
            line.push_str(word);
            empty = false;
        }
        out.push_str(line.trim_end());
        out.push('\n');
        indent = rest;
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wrapping_keeps_words_whole_and_indents() {
        let text = wrap("one two three four five", "> ", "  ", 10);
        assert_eq!(text, "> one two\n  three\n  four\n  five\n");
        assert_eq!(
            wrap("averyveryverylongword x", "", "", 5),
            "averyveryverylongword\nx\n"
        );
        assert_eq!(wrap("a\nb", "- ", "  ", 80), "- a\n  b\n");
    }

    #[test]
    fn the_frame_loses_only_its_leading_blank_lines() {
        assert_eq!(
            frame_only("   \n\n  ┏━[a.cir:3:1]\n 3 ┃ R1\n\n  ┗━\n  ┏━[a.cir:9:1]\n 9 ┃ R[2]\n"),
            "  ┏━━━━\n 3 ┃ R1\n\n  ┗━\n  ┏━━━━\n 9 ┃ R[2]\n"
        );
        assert_eq!(frame_only("\n  ┏━━━━\n  ┗━\n"), "  ┏━━━━\n  ┗━\n");
        // With colour, miette's empty message line is colour codes around nothing.
        assert_eq!(
            frame_only("  \u{1b}[31m\u{1b}[0m \n   ┏━[a.cir:1:1]\n"),
            "   ┏━━━━\n"
        );
    }
}
