//! The review page: `kickback report --format html` (one self-contained file: a summary of
//! every stage, a timing diagram per timer, one PWM period per switch, and each finding with
//! the circuit around its element) and `--format markdown` (the findings and the key numbers
//! per stage, for a job summary or a pull-request comment).
//!
//! Everything drawn comes from the facts ([`Analysis`]) and the waveforms the analysis sampled
//! ([`Waveforms`]); this module lays out and draws, it computes no physics. Every string that
//! comes from the netlist is escaped: the template escapes what it prints, and the SVG writers
//! here escape what they embed.

mod charts;
pub mod markdown;
mod model;
mod neighbourhood;

use crate::analysis::{Analysis, Waveforms};
use crate::circuit::Circuit;
use crate::netlist::FlatNetlist;
use crate::outcome::FileReport;
use askama::Template;

/// The program's version, for the page's footer.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");

/// What a review page shows of one netlist.
pub struct Review<'a> {
    pub report: &'a FileReport,
    pub netlist: &'a FlatNetlist,
    pub circuit: &'a Circuit,
    pub analysis: &'a Analysis,
    pub waveforms: &'a Waveforms,
}

/// `kickback report --format html`: one HTML document.
pub fn render_html(review: &Review<'_>) -> String {
    let page = model::page(review, true);
    page.render().unwrap_or_else(|e| {
        format!(
            "<!DOCTYPE html><title>kickback</title><p>{}</p>\n",
            escape(&e.to_string())
        )
    })
}

/// Escapes text for HTML and SVG content and attribute values.
pub(crate) fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c if c.is_control() && c != '\n' && c != '\t' => out.push('\u{fffd}'),
            c => out.push(c),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::escape;

    #[test]
    fn markup_in_names_is_escaped() {
        assert_eq!(
            escape("<script>\"a\" & 'b'</script>"),
            "&lt;script&gt;&quot;a&quot; &amp; &#39;b&#39;&lt;/script&gt;"
        );
    }
}
