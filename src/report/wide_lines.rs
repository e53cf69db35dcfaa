//! Wide lines, shown as a window around the span. A line thousands of columns wide (a line
//! indented by 16,384 tabs, ten thousand nodes on one element) cannot be drawn whole: miette
//! pads its underlines to the label's column with a formatting width, which stops at 65,535
//! and is an internal error past it, and every finding on such a line would print the whole
//! line again. Here each line a finding involves is cut to [`WINDOW`] bytes around its label,
//! with `…` where text was left out; the line and column shown are still the real ones.
//!
//! Only findings that touch a line wider than [`WIDE`] bytes are drawn this way; every other
//! finding keeps its context lines as [`NetlistSource`] gives them.

use super::source_window::NetlistSource;
use crate::source::SourceFile;
use miette::{MietteError, MietteSpanContents, SourceCode, SourceSpan, SpanContents};

/// A line wider than this is shown as a window.
pub(super) const WIDE: usize = 400;
/// Bytes of a wide line shown, from a little before the label.
const WINDOW: usize = 160;
/// Bytes kept before the label's start, so its neighbours can be read.
const LEAD: usize = 40;
const ELLIPSIS: &str = "…";

/// The text a finding's snippet reads: the file itself, or the windows of its wide lines.
#[derive(Debug)]
pub(super) enum SnippetSource<'a> {
    Lines(NetlistSource<'a>),
    Clipped(ClippedSource),
}

impl SourceCode for SnippetSource<'_> {
    fn read_span<'b>(
        &'b self,
        span: &SourceSpan,
        before: usize,
        after: usize,
    ) -> Result<Box<dyn SpanContents<'b> + 'b>, MietteError> {
        match self {
            SnippetSource::Lines(source) => source.read_span(span, before, after),
            SnippetSource::Clipped(source) => source.read_span(span, before, after),
        }
    }
}

/// Whether any of `spans` (offsets into `file`) lies on a line wider than [`WIDE`], or next
/// to one (the renderer shows a line of context on each side).
pub(super) fn touches_wide_line(file: &SourceFile, spans: &[SourceSpan]) -> bool {
    spans.iter().any(|span| {
        let (first, _) = file.line_col(offset32(span.offset()));
        let (last, _) = file.line_col(offset32(span.offset().saturating_add(span.len())));
        (first.saturating_sub(1)..=last.saturating_add(1)).any(|line| {
            file.line_span(line)
                .is_some_and(|(start, end)| end - start > WIDE)
        })
    })
}

fn offset32(offset: usize) -> u32 {
    u32::try_from(offset).unwrap_or(u32::MAX)
}

/// One line of the file as shown: `text` starts at byte `start` of the clipped text.
#[derive(Debug)]
struct Segment {
    /// 0-based line number in the file.
    line: usize,
    /// Where the segment starts in the clipped text.
    start: usize,
    /// Its length in the clipped text, without the line break.
    len: usize,
    /// Bytes of the real line left out before the window, less the ellipsis that stands for
    /// them: added to a column read in the clipped text gives the real column.
    shift: isize,
}

/// The lines a finding involves, each cut to a window around its first label, one after the
/// other; each keeps its own line number, so lines far apart are shown apart.
#[derive(Debug)]
pub(super) struct ClippedSource {
    name: String,
    text: String,
    segments: Vec<Segment>,
}

impl ClippedSource {
    /// The windows of the lines `spans` lie on (the `primary` span decides the window of its
    /// line, else the first span on it), and each span moved into the clipped text; a span whose start falls outside its
    /// line's window is `None` and is left out of the snippet.
    pub(super) fn new(
        name: &str,
        file: &SourceFile,
        spans: &[SourceSpan],
        primary: Option<usize>,
    ) -> (ClippedSource, Vec<Option<SourceSpan>>) {
        let text = file.text.as_str();
        // (line, window start, window end in the file), in order of first appearance.
        let mut windows: Vec<(usize, usize, usize)> = Vec::new();
        let anchors = primary.and_then(|i| spans.get(i)).into_iter().chain(spans);
        for span in anchors {
            let (line, _) = file.line_col(offset32(span.offset()));
            if windows.iter().any(|&(l, _, _)| l == line) {
                continue;
            }
            let Some((line_start, line_end)) = file.line_span(line) else {
                continue;
            };
            let at = span.offset().clamp(line_start, line_end);
            let from = floor_boundary(text, at.saturating_sub(LEAD).max(line_start));
            let to = floor_boundary(text, from.saturating_add(WINDOW).min(line_end)).max(from);
            windows.push((line, from, to));
        }
        windows.sort_unstable();
        let mut clipped = ClippedSource {
            name: name.to_string(),
            text: String::new(),
            segments: Vec::with_capacity(windows.len()),
        };
        for &(line, from, to) in &windows {
            let (line_start, line_end) = file.line_span(line).unwrap_or((from, to));
            let start = clipped.text.len();
            let mut shift = from as isize - line_start as isize;
            if from > line_start {
                clipped.text.push_str(ELLIPSIS);
                shift -= ELLIPSIS.len() as isize;
            }
            clipped.text.push_str(text.get(from..to).unwrap_or(""));
            if to < line_end {
                clipped.text.push_str(ELLIPSIS);
            }
            clipped.segments.push(Segment {
                line: line - 1,
                start,
                len: clipped.text.len() - start,
                shift,
            });
            clipped.text.push('\n');
        }
        let moved = spans
            .iter()
            .map(|span| {
                let (line, _) = file.line_col(offset32(span.offset()));
                let index = windows.iter().position(|&(l, _, _)| l == line)?;
                let (_, from, to) = windows[index];
                if span.offset() < from || span.offset() > to {
                    return None;
                }
                let segment = &clipped.segments[index];
                let line_start = file.line_span(line).map_or(from, |(s, _)| s);
                let head = if from > line_start { ELLIPSIS.len() } else { 0 };
                let start = segment.start + head + (span.offset() - from);
                let end = (span.offset() + span.len()).min(to);
                let len = end.saturating_sub(span.offset());
                Some(SourceSpan::from((start, len)))
            })
            .collect();
        (clipped, moved)
    }

    fn segment_at(&self, offset: usize) -> Option<&Segment> {
        let index = self
            .segments
            .partition_point(|segment| segment.start <= offset)
            .checked_sub(1)?;
        self.segments.get(index)
    }
}

impl SourceCode for ClippedSource {
    fn read_span<'b>(
        &'b self,
        span: &SourceSpan,
        before: usize,
        after: usize,
    ) -> Result<Box<dyn SpanContents<'b> + 'b>, MietteError> {
        let segment = self
            .segment_at(span.offset())
            .ok_or(MietteError::OutOfBounds)?;
        // The segment with its line break: the snippet never reaches into the next window.
        let end = (segment.start + segment.len + 1).min(self.text.len());
        let line = self
            .text
            .get(segment.start..end)
            .ok_or(MietteError::OutOfBounds)?;
        let local_start = span.offset().saturating_sub(segment.start).min(segment.len);
        let local_len = span.len().min(segment.len - local_start);
        let local: SourceSpan = (local_start, local_len).into();
        let inner = line.read_span(&local, before, after)?;
        let at: SourceSpan = (inner.span().offset() + segment.start, inner.span().len()).into();
        let column = if before == 0 {
            inner.column().saturating_add_signed(segment.shift)
        } else {
            inner.column()
        };
        Ok(Box::new(MietteSpanContents::new_named(
            self.name.clone(),
            inner.data(),
            at,
            segment.line,
            column,
            1,
        )))
    }
}

fn floor_boundary(text: &str, at: usize) -> usize {
    let mut at = at.min(text.len());
    while at > 0 && !text.is_char_boundary(at) {
        at -= 1;
    }
    at
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::path::PathBuf;

    #[test]
    fn a_window_keeps_the_real_line_and_column() {
        let text = format!("title\nV1 a 0 5\n{}R1 a far 1k\n.end\n", " ".repeat(5_000));
        let file = SourceFile::new(PathBuf::from("w.cir"), "w.cir".into(), text.clone());
        let at = text.find("far").unwrap();
        let span: SourceSpan = (at, 3).into();
        assert!(touches_wide_line(&file, &[span]));
        let (clipped, moved) = ClippedSource::new("w.cir", &file, &[span], Some(0));
        let moved = moved[0].expect("inside its window");
        let read = clipped.read_span(&moved, 0, 0).unwrap();
        assert_eq!(read.line(), 2, "0-based line 3");
        assert_eq!(
            read.column(),
            at - text.find("    ").unwrap(),
            "byte column"
        );
        assert_eq!(&clipped.text[moved.offset()..moved.offset() + 3], "far");
        assert!(clipped.text.len() < WINDOW + 10);
        // A short line far from the wide one is not clipped.
        let near_top: SourceSpan = (6, 2).into();
        assert!(!touches_wide_line(&file, &[(0, 2).into()]));
        assert!(
            touches_wide_line(&file, &[near_top]),
            "the wide line is context"
        );
    }
}
