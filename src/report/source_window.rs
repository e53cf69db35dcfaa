//! A netlist's text as miette reads it, cut to the lines around each span. miette's own
//! reader for a `str` walks the text from its first byte to the span on every call, which
//! made a report with thousands of findings in a large file cost findings × file size; here
//! each read looks only at a window of whole lines around the span and shifts the line
//! numbers by the lines before the window.
//!
//! One thing differs on purpose: the line count. miette's reader returns the number of lines
//! from the start of the file, so its renderer took any two labels of a finding as
//! overlapping and printed every line between them — a finding on line 50,000 labelled at the
//! supply on line 2 printed 50,000 lines. Here the count is the lines the snippet covers, so
//! labels far apart get a snippet each, as the renderer intends.

use crate::source::SourceFile;
use miette::{MietteError, MietteSpanContents, SourceCode, SourceSpan, SpanContents};

/// A netlist's text under its display name, borrowed from the source map.
#[derive(Debug)]
pub(super) struct NetlistSource<'a> {
    pub name: &'a str,
    pub file: &'a SourceFile,
    /// The text holds a `\r` that no `\n` follows: miette counts it as a line break and the
    /// source map does not, so such a text is read whole, as miette would.
    pub lone_cr: bool,
}

impl<'a> NetlistSource<'a> {
    pub fn new(name: &'a str, file: &'a SourceFile, lone_cr: bool) -> Self {
        NetlistSource {
            name,
            file,
            lone_cr,
        }
    }
}

/// Whether `text` has a carriage return that does not start a CRLF pair.
pub(super) fn has_lone_cr(text: &str) -> bool {
    let bytes = text.as_bytes();
    bytes
        .iter()
        .enumerate()
        .any(|(i, &b)| b == b'\r' && bytes.get(i + 1) != Some(&b'\n'))
}

/// Byte offset where 1-based line `line` starts, or the end of the text past the last line.
fn line_start(file: &SourceFile, line: usize) -> usize {
    file.line_span(line)
        .map_or(file.text.len(), |(start, _)| start)
}

/// Lines that `data` covers, the last one counted whether or not a line break ends it.
fn covered_lines(data: &[u8]) -> usize {
    let breaks = data.iter().filter(|&&b| b == b'\n').count();
    breaks + usize::from(!data.is_empty() && !data.ends_with(b"\n"))
}

impl SourceCode for NetlistSource<'_> {
    fn read_span<'b>(
        &'b self,
        span: &SourceSpan,
        context_lines_before: usize,
        context_lines_after: usize,
    ) -> Result<Box<dyn SpanContents<'b> + 'b>, MietteError> {
        let text = self.file.text.as_str();
        let (window, lines_before) = if self.lone_cr {
            (0..text.len(), 0)
        } else {
            // One line more than miette keeps on each side, so its scan of the window sees the
            // same line starts as a scan of the whole text would.
            let offset = |at: usize| at.min(text.len()) as u32;
            let (first, _) = self.file.line_col(offset(span.offset()));
            let (last, _) = self.file.line_col(offset(span.offset() + span.len()));
            let from = first.saturating_sub(context_lines_before + 1).max(1);
            let to = last.saturating_add(context_lines_after + 2);
            (
                line_start(self.file, from)..line_start(self.file, to),
                from - 1,
            )
        };
        let (slice, base, lines_before) = match text.get(window.clone()) {
            Some(slice) => (slice, window.start, lines_before),
            None => (text, 0, 0),
        };
        let local: SourceSpan = (span.offset().saturating_sub(base), span.len()).into();
        let inner = slice.read_span(&local, context_lines_before, context_lines_after)?;
        let at: SourceSpan = (inner.span().offset() + base, inner.span().len()).into();
        Ok(Box::new(MietteSpanContents::new_named(
            self.name.to_string(),
            inner.data(),
            at,
            inner.line() + lines_before,
            inner.column(),
            covered_lines(inner.data()),
        )))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::path::PathBuf;

    /// The windowed read must give what miette's whole-text read gives, for every span, every
    /// amount of context and every kind of line break.
    fn same_as_whole_text(text: &str) {
        let file = SourceFile::new(PathBuf::from("a.cir"), "a.cir".into(), text.into());
        let source = NetlistSource::new("a.cir", &file, has_lone_cr(text));
        let boundaries: Vec<usize> = (0..=text.len())
            .filter(|&i| text.is_char_boundary(i))
            .collect();
        for &start in &boundaries {
            for &end in boundaries.iter().filter(|&&e| e >= start).take(12) {
                for (before, after) in [(0, 0), (1, 1), (2, 3), (5, 0)] {
                    let span: SourceSpan = (start, end - start).into();
                    let ours = source.read_span(&span, before, after);
                    let whole = text.read_span(&span, before, after);
                    match (ours, whole) {
                        (Ok(a), Ok(b)) => {
                            let what = format!("span {start}..{end}, context {before}/{after}");
                            assert_eq!(a.data(), b.data(), "{what}");
                            assert_eq!(a.span(), b.span(), "{what}");
                            assert_eq!(a.line(), b.line(), "{what}");
                            assert_eq!(a.column(), b.column(), "{what}");
                            assert_eq!(a.line_count(), covered_lines(b.data()), "{what}");
                        }
                        (Err(_), Err(_)) => {}
                        (a, b) => panic!("span {start}..{end}: {:?} vs {:?}", a.is_ok(), b.is_ok()),
                    }
                }
            }
        }
    }

    #[test]
    fn windowed_reads_match_whole_text_reads() {
        let lines: String = (0..12)
            .map(|i| format!("R{i} n{i} n{} 1k\n", i + 1))
            .collect();
        same_as_whole_text(&lines);
        same_as_whole_text(&lines.replace('\n', "\r\n"));
        same_as_whole_text(&format!("title\n\n\nR1 a b µ1\n* end{}", "\n".repeat(4)));
        same_as_whole_text("no line break at all");
        same_as_whole_text("old\rmac\rbreaks\r\nmixed\n");
    }
}
