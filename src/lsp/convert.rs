//! Between kickback's byte spans and the protocol's positions (lines and UTF-16 columns, both
//! from 0), and between file paths and `file:` URIs.

use crate::source::{SourceFile, SourceMap, Span};
use lsp_types::{Position, Range, Uri};
use std::path::{Path, PathBuf};
use std::str::FromStr;

/// The protocol position of a byte offset in a file.
pub fn position(file: &SourceFile, offset: u32) -> Position {
    let (line, _) = file.line_col(offset);
    let (start, _) = file.line_span(line).unwrap_or((0, 0));
    let mut end = (offset as usize).clamp(start, file.text.len());
    while end > start && !file.text.is_char_boundary(end) {
        end -= 1;
    }
    let character: usize = file
        .text
        .get(start..end)
        .unwrap_or("")
        .chars()
        .map(char::len_utf16)
        .sum();
    Position {
        line: saturating_u32(line.saturating_sub(1)),
        character: saturating_u32(character),
    }
}

/// The byte offset of a protocol position (clamped to the line's end, and to the file's).
pub fn offset(file: &SourceFile, at: Position) -> usize {
    let Some((start, end)) = file.line_span(at.line as usize + 1) else {
        return file.text.len();
    };
    let mut units = 0usize;
    for (i, c) in file.text.get(start..end).unwrap_or("").char_indices() {
        if units >= at.character as usize {
            return start + i;
        }
        units += c.len_utf16();
    }
    end
}

/// The protocol range of a span (an empty range at the file's start when the span is unknown).
pub fn range(sources: &SourceMap, span: Span) -> Range {
    match sources.get(span.file) {
        Some(file) => Range {
            start: position(file, span.start),
            end: position(file, span.end),
        },
        None => Range::default(),
    }
}

fn saturating_u32(n: usize) -> u32 {
    u32::try_from(n).unwrap_or(u32::MAX)
}

/// The file a `file:` URI names; other schemes (an unsaved buffer) become a name in the
/// current folder, so that its includes resolve from there.
pub fn path_of(uri: &Uri) -> PathBuf {
    if let Some(path) = url::Url::parse(uri.as_str())
        .ok()
        .filter(|u| u.scheme() == "file")
        .and_then(|u| u.to_file_path().ok())
    {
        return path;
    }
    let last = uri
        .as_str()
        .rsplit(['/', ':'])
        .find(|s| !s.is_empty())
        .unwrap_or("buffer.cir");
    std::env::current_dir().unwrap_or_default().join(last)
}

/// The `file:` URI of a path (made absolute against the current folder).
pub fn uri_of(path: &Path) -> Option<Uri> {
    let absolute = if path.is_absolute() {
        path.to_path_buf()
    } else {
        std::env::current_dir().ok()?.join(path)
    };
    let url = url::Url::from_file_path(absolute).ok()?;
    Uri::from_str(url.as_str()).ok()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn columns_count_utf16_units() {
        let file = SourceFile::new("a".into(), "a".into(), "t\nR1 a b 1µ 𝜇x\n".into());
        let at = file.text.find('x').unwrap() as u32;
        // `R1 a b 1µ ` is 10 characters; `𝜇` is two UTF-16 units.
        assert_eq!(position(&file, at), Position::new(1, 12));
        assert_eq!(offset(&file, Position::new(1, 12)), at as usize);
        assert_eq!(offset(&file, Position::new(1, 99)), file.text.len() - 1);
        assert_eq!(offset(&file, Position::new(9, 0)), file.text.len());
    }

    #[test]
    fn paths_and_uris_round_trip() {
        let uri = uri_of(Path::new("/tmp/a b/deck.cir")).unwrap();
        assert_eq!(uri.as_str(), "file:///tmp/a%20b/deck.cir");
        assert_eq!(path_of(&uri), PathBuf::from("/tmp/a b/deck.cir"));
    }
}
