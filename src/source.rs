//! Source files and byte spans. Every statement, element and finding points back into a file
//! through a [`Span`]; [`SourceMap`] turns spans into 1-based lines and columns.

use std::path::PathBuf;

/// Index of a file in a [`SourceMap`].
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct FileId(pub u32);

/// A byte range `start..end` in one file's text.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct Span {
    pub file: FileId,
    pub start: u32,
    pub end: u32,
}

impl Span {
    pub fn new(file: FileId, start: usize, end: usize) -> Self {
        Span {
            file,
            start: start as u32,
            end: end.max(start) as u32,
        }
    }

    pub fn len(&self) -> usize {
        (self.end - self.start) as usize
    }

    pub fn is_empty(&self) -> bool {
        self.end == self.start
    }

    /// The smallest span covering both (same file assumed).
    pub fn to(self, other: Span) -> Span {
        Span {
            file: self.file,
            start: self.start.min(other.start),
            end: self.end.max(other.end),
        }
    }
}

/// One loaded file. `text` is always valid UTF-8: files that are not are decoded byte-for-char
/// (so a legacy 0xB5 micro sign becomes `µ`), and spans index into this decoded text.
#[derive(Debug, Clone)]
pub struct SourceFile {
    pub path: PathBuf,
    /// The path as it should be shown to the user (relative where it was given relative).
    pub name: String,
    pub text: String,
    line_starts: Vec<u32>,
}

impl SourceFile {
    pub fn new(path: PathBuf, name: String, text: String) -> Self {
        let mut line_starts = vec![0u32];
        for (i, b) in text.bytes().enumerate() {
            if b == b'\n' {
                line_starts.push(i as u32 + 1);
            }
        }
        SourceFile {
            path,
            name,
            text,
            line_starts,
        }
    }

    /// 1-based line and column (column counted in characters) of a byte offset.
    pub fn line_col(&self, offset: u32) -> (usize, usize) {
        let offset = offset.min(self.text.len() as u32);
        let line = match self.line_starts.binary_search(&offset) {
            Ok(i) => i,
            Err(i) => i - 1,
        };
        let start = self.line_starts[line] as usize;
        let mut end = offset as usize;
        while end > start && !self.text.is_char_boundary(end) {
            end -= 1;
        }
        let col = self.text[start..end].chars().count() + 1;
        (line + 1, col)
    }

    /// Byte range of the 1-based line `line`, without its line break.
    pub fn line_span(&self, line: usize) -> Option<(usize, usize)> {
        let start = *self.line_starts.get(line.checked_sub(1)?)? as usize;
        let end = self
            .line_starts
            .get(line)
            .map(|&s| s as usize)
            .unwrap_or(self.text.len());
        let text = &self.text[start..end];
        let trimmed = text.trim_end_matches(['\n', '\r']);
        Some((start, start + trimmed.len()))
    }

    pub fn line_count(&self) -> usize {
        self.line_starts.len()
    }
}

/// All files read for one check: the top netlist and everything it includes.
#[derive(Debug, Default, Clone)]
pub struct SourceMap {
    files: Vec<SourceFile>,
}

impl SourceMap {
    pub fn new() -> Self {
        Self::default()
    }

    pub fn add(&mut self, path: PathBuf, name: String, text: String) -> FileId {
        let id = FileId(self.files.len() as u32);
        self.files.push(SourceFile::new(path, name, text));
        id
    }

    pub fn get(&self, id: FileId) -> Option<&SourceFile> {
        self.files.get(id.0 as usize)
    }

    pub fn files(&self) -> impl Iterator<Item = (FileId, &SourceFile)> {
        self.files
            .iter()
            .enumerate()
            .map(|(i, f)| (FileId(i as u32), f))
    }

    /// Text covered by a span ("" when the span does not fit the file).
    pub fn snippet(&self, span: Span) -> &str {
        self.get(span.file)
            .and_then(|f| f.text.get(span.start as usize..span.end as usize))
            .unwrap_or("")
    }

    /// File name, start line/column and end line/column (all 1-based) of a span.
    pub fn locate(&self, span: Span) -> Location {
        match self.get(span.file) {
            Some(f) => {
                let (line, column) = f.line_col(span.start);
                let (end_line, end_column) = f.line_col(span.end);
                Location {
                    file: f.name.clone(),
                    line,
                    column,
                    end_line,
                    end_column,
                }
            }
            None => Location {
                file: String::new(),
                line: 1,
                column: 1,
                end_line: 1,
                end_column: 1,
            },
        }
    }
}

/// A span resolved to a file name and 1-based positions.
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord)]
pub struct Location {
    pub file: String,
    pub line: usize,
    pub column: usize,
    pub end_line: usize,
    pub end_column: usize,
}

/// What a path that is not a regular file is, in words: `a folder`, `a FIFO`...
pub fn file_kind(meta: &std::fs::Metadata) -> &'static str {
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        let kind = meta.file_type();
        if kind.is_fifo() {
            return "a FIFO";
        }
        if kind.is_socket() {
            return "a socket";
        }
        if kind.is_block_device() || kind.is_char_device() {
            return "a device";
        }
    }
    if meta.is_dir() {
        "a folder"
    } else if meta.is_file() {
        "a regular file"
    } else {
        "another kind of entry"
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_and_column_are_one_based() {
        let mut map = SourceMap::new();
        let id = map.add("a.cir".into(), "a.cir".into(), "title\nR1 a b 1k\n".into());
        let loc = map.locate(Span::new(id, 6, 8));
        assert_eq!(
            (loc.line, loc.column, loc.end_line, loc.end_column),
            (2, 1, 2, 3)
        );
        assert_eq!(map.snippet(Span::new(id, 6, 8)), "R1");
    }
}
