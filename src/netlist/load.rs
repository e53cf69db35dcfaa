//! Reading files and walking their statements into definitions: the top level and one entry
//! per `.subckt`, with `.include`/`.lib` spliced in where they stand. Include policy lives
//! here: paths relative to the including file, cycles, nesting depth, size, and refusal of
//! anything outside the top netlist's folder tree (checked before a file is opened).

use super::conditional::{Branches, ConditionParams};
use super::dialect;
use super::flat::MissingInclude;
use super::include_path::{display_name, normalize, sections_equal};
use super::lex::{lex, Dot, Head, Lexed, TokKind};
use super::library::{self, Shape};
use super::stmt::StmtView;
use super::text::decode;
use super::Limits;
use crate::diagnostic::{Finding, Severity};
use crate::source::{FileId, SourceMap, Span};
use std::collections::HashMap;
use std::path::{Path, PathBuf};

/// A statement: index into [`Loaded::files`] and into that file's statements.
pub type StmtRef = (u32, u32);

/// One definition before names are resolved: the top level (index 0) or a `.subckt`.
#[derive(Debug, Default)]
pub struct DefBuild {
    pub parent: Option<usize>,
    pub header: Option<StmtRef>,
    pub elements: Vec<StmtRef>,
    pub models: Vec<StmtRef>,
    pub params: Vec<StmtRef>,
    pub funcs: Vec<StmtRef>,
    /// `.step param NAME ...` cards, which define NAME.
    pub steps: Vec<StmtRef>,
    pub children: Vec<usize>,
}

#[derive(Debug, Default)]
pub struct Loaded {
    pub files: Vec<Lexed>,
    pub defs: Vec<DefBuild>,
    pub globals: Vec<StmtRef>,
    pub titles: Vec<StmtRef>,
    pub missing: Vec<MissingInclude>,
    pub findings: Vec<Finding>,
    /// Set when the top file is of another netlist family; nothing else is read.
    pub foreign: bool,
    /// Set when the top file holds only definitions (a library checked on its own).
    pub library: bool,
    /// Statements the includes held when they passed `max_elements`; nothing more is read.
    pub statements_over_limit: Option<u64>,
}

/// Where the top file lives, for resolving and policing includes.
pub struct Origin {
    /// Canonical path of the top file.
    pub canonical: PathBuf,
    /// Canonical folder whose tree includes must stay in.
    pub root: PathBuf,
}

struct FileInfo {
    canonical: Option<PathBuf>,
    /// Display name as registered in the source map.
    name: String,
}

pub struct Loader<'s> {
    sources: &'s mut SourceMap,
    limits: &'s Limits,
    origin: Option<Origin>,
    out: Loaded,
    info: Vec<FileInfo>,
    by_path: HashMap<PathBuf, usize>,
    /// Include chain: (file, section) pairs being walked.
    chain: Vec<(usize, Option<String>)>,
    def_stack: Vec<usize>,
    depth_reported: bool,
    /// Statements walked so far, counting a file again each time it is included.
    walked: u64,
    /// Top-level `.param` values seen so far, for `.if` conditions.
    condition_params: ConditionParams,
    /// Where each (including file, path as written) leads.
    resolved: HashMap<(usize, String), Target>,
    /// Statements each (file, lowercase section) brings in with its own includes.
    costs: HashMap<(usize, Option<String>), u64>,
}

/// What an include leads to.
#[derive(Clone, Debug)]
enum Target {
    /// Index into [`Loaded::files`].
    File(usize),
    /// No such file: the models and subcircuits it would define are reported as missing.
    Missing,
    /// Not read, with why (the text follows the include's name).
    Refused(String),
}

impl<'s> Loader<'s> {
    /// `origin` is `None` when includes are not followed (text given directly).
    pub fn new(sources: &'s mut SourceMap, limits: &'s Limits, origin: Option<Origin>) -> Self {
        Loader {
            sources,
            limits,
            origin,
            out: Loaded::default(),
            info: Vec::new(),
            by_path: HashMap::new(),
            chain: Vec::new(),
            def_stack: vec![0],
            depth_reported: false,
            walked: 0,
            condition_params: ConditionParams::default(),
            resolved: HashMap::new(),
            costs: HashMap::new(),
        }
    }

    /// Lexes and walks the top file (already in the source map).
    pub fn run(mut self, top: FileId) -> Loaded {
        let Some(file) = self.sources.get(top) else {
            return self.out;
        };
        let mut lexed = lex(top, &file.text, true);
        let name = file.name.clone();
        let shape = library::shape(&name, &lexed, &file.text);
        if shape == Shape::Library {
            lexed = lex(top, &file.text, false);
        }
        self.out.library = shape != Shape::Deck;
        if let Some(finding) = dialect::detect(&lexed, &file.text) {
            self.out.findings.push(finding);
            self.out.files.push(lexed);
            self.out.foreign = true;
            return self.out;
        }
        let canonical = self.origin.as_ref().map(|o| o.canonical.clone());
        if let Some(c) = &canonical {
            self.by_path.insert(c.clone(), 0);
        }
        self.info.push(FileInfo { canonical, name });
        self.take_lexed(lexed);
        self.out.defs.push(DefBuild::default());
        self.chain.push((0, None));
        let count = self.out.files[0].stmts.len();
        self.walk(0, 0, count);
        self.chain.pop();
        while self.def_stack.len() > 1 {
            if let Some(def) = self.def_stack.pop() {
                if let Some(span) = self.header_span(def) {
                    self.out.findings.push(Finding::new(
                        "syntax",
                        Severity::Error,
                        span,
                        "this `.subckt` is never closed: expected `.ends` before the end of the deck",
                    ));
                }
            }
        }
        self.out
    }

    fn take_lexed(&mut self, mut lexed: Lexed) -> usize {
        self.skip_long_statements(&mut lexed);
        self.out.findings.append(&mut lexed.findings);
        self.out.files.push(lexed);
        self.out.files.len() - 1
    }

    /// A statement longer than the limit is reported and then skipped, so that no later stage
    /// spends time on it; comments do not count, so a long comment line is harmless.
    fn skip_long_statements(&mut self, lexed: &mut Lexed) {
        let limit = self.limits.max_statement_bytes;
        let mut skipped = Vec::new();
        for (index, stmt) in lexed.stmts.iter().enumerate() {
            let code: u64 = lexed
                .segs_of(stmt)
                .iter()
                .map(|&(start, end)| u64::from(end.saturating_sub(start)))
                .sum();
            if code > limit {
                skipped.push((index, code, lexed.span(stmt.start, stmt.start)));
            }
        }
        for (index, code, span) in skipped {
            if let Some(stmt) = lexed.stmts.get_mut(index) {
                stmt.head = Head::Dot(Dot::Other);
            }
            lexed.findings.push(Finding::new(
                "syntax",
                Severity::Error,
                span,
                format!(
                    "this statement is {code} bytes long with its continuation lines, above the statement length limit of {limit} bytes (--max-statement-bytes); it is skipped"
                ),
            ));
        }
    }

    fn header_span(&self, def: usize) -> Option<Span> {
        let (f, s) = self.out.defs.get(def)?.header?;
        let file = self.out.files.get(f as usize)?;
        let stmt = file.stmts.get(s as usize)?;
        Some(file.span(stmt.start, stmt.end))
    }

    fn stmt_span(&self, file: usize, stmt: usize) -> Span {
        let lexed = &self.out.files[file];
        let s = &lexed.stmts[stmt];
        lexed.span(s.start, s.end)
    }

    fn current(&mut self) -> &mut DefBuild {
        let def = self.def_stack.last().copied().unwrap_or(0);
        &mut self.out.defs[def]
    }

    fn walk(&mut self, file: usize, from: usize, to: usize) {
        let mut i = from;
        let mut branches = Branches::default();
        while i < to && self.out.statements_over_limit.is_none() {
            let Some(stmt) = self.out.files[file].stmts.get(i).copied() else {
                break;
            };
            let at: StmtRef = (file as u32, i as u32);
            if let Head::Dot(card @ (Dot::If | Dot::Elseif | Dot::Else | Dot::Endif)) = stmt.head {
                branches.step(card, || self.condition(file, i));
                i += 1;
                continue;
            }
            if !branches.active() {
                i += 1;
                continue;
            }
            match stmt.head {
                Head::Element(_) | Head::Invalid => self.current().elements.push(at),
                Head::Dot(Dot::Subckt) => self.open_subckt(at),
                Head::Dot(Dot::Ends) => {
                    if self.def_stack.len() > 1 {
                        self.def_stack.pop();
                    } else {
                        self.out.findings.push(Finding::new(
                            "syntax",
                            Severity::Error,
                            self.stmt_span(file, i),
                            "`.ends` with no `.subckt` open before it",
                        ));
                    }
                }
                Head::Dot(Dot::Model) => self.current().models.push(at),
                Head::Dot(Dot::Param) => {
                    if self.def_stack.len() == 1 {
                        self.remember_params(file, i);
                    }
                    self.current().params.push(at)
                }
                Head::Dot(Dot::Step) => self.current().steps.push(at),
                Head::Dot(Dot::Func) => self.current().funcs.push(at),
                Head::Dot(Dot::Global) => self.out.globals.push(at),
                Head::Dot(Dot::Title) => self.out.titles.push(at),
                Head::Dot(Dot::Include) => match self.argument(file, i, 1) {
                    Some(path) => self.include(file, i, &path, None),
                    None => self.out.findings.push(Finding::new(
                        "syntax",
                        Severity::Error,
                        self.stmt_span(file, i),
                        "expected a file name after `.include`",
                    )),
                },
                Head::Dot(Dot::Lib) => {
                    if let Some(&end) = self.out.files[file].section_end.get(&i) {
                        // A section definition: read only when a `.lib FILE SECTION` asks for it.
                        i = end + 1;
                        continue;
                    }
                    match (self.argument(file, i, 1), self.argument(file, i, 2)) {
                        (Some(path), section) => self.include(file, i, &path, section),
                        (None, _) => self.out.findings.push(Finding::new(
                            "syntax",
                            Severity::Error,
                            self.stmt_span(file, i),
                            "expected a file name (and a section name) after `.lib`",
                        )),
                    }
                }
                Head::Dot(
                    Dot::Endl | Dot::Other | Dot::If | Dot::Elseif | Dot::Else | Dot::Endif,
                ) => {}
            }
            i += 1;
        }
    }

    /// The value of an `.if`/`.elseif` condition when it is a constant.
    fn condition(&self, file: usize, stmt: usize) -> Option<bool> {
        let lexed = self.out.files.get(file)?;
        let text = &self.sources.get(lexed.file)?.text;
        let view = StmtView::new(lexed, text, stmt)?;
        if view.toks.len() < 2 {
            return None;
        }
        let condition = view.text_between(1, view.toks.len() - 1);
        self.condition_params.evaluate(&condition)
    }

    /// Records a top-level `.param` card's values for later `.if` conditions.
    fn remember_params(&mut self, file: usize, stmt: usize) {
        let Some(lexed) = self.out.files.get(file) else {
            return;
        };
        let Some(source) = self.sources.get(lexed.file) else {
            return;
        };
        let Some(view) = StmtView::new(lexed, &source.text, stmt) else {
            return;
        };
        for item in view.items(1, view.toks.len(), true) {
            if let Some(a) = super::deck::assign(&view, item) {
                self.condition_params.define(a.name, &a.text);
            }
        }
    }

    fn open_subckt(&mut self, at: StmtRef) {
        let parent = self.def_stack.last().copied().unwrap_or(0);
        let id = self.out.defs.len();
        self.out.defs.push(DefBuild {
            parent: Some(parent),
            header: Some(at),
            ..DefBuild::default()
        });
        self.out.defs[parent].children.push(id);
        self.def_stack.push(id);
        if self.def_stack.len() > self.limits.max_depth + 1 && !self.depth_reported {
            self.depth_reported = true;
            self.out.findings.push(Finding::new(
                "syntax",
                Severity::Error,
                self.stmt_span(at.0 as usize, at.1 as usize),
                format!(
                    "subcircuit definitions are nested more than {} levels deep here (--max-depth)",
                    self.limits.max_depth
                ),
            ));
        }
    }

    /// The `n`-th argument of a statement as text: a quoted string without its quotes, or a
    /// plain word (for the first argument of `.include`, the rest of the line).
    fn argument(&self, file: usize, stmt: usize, n: usize) -> Option<String> {
        let lexed = &self.out.files[file];
        let s = lexed.stmts.get(stmt)?;
        let toks = lexed.toks_of(s);
        let text = &self.sources.get(lexed.file)?.text;
        let tok = toks.get(n)?;
        let raw = text.get(tok.start as usize..tok.end as usize)?;
        match tok.kind {
            TokKind::Str | TokKind::Quote if raw.len() >= 2 => {
                // The opening quote is one byte; a string left open at the end of the line has
                // no closing one, and its last character may be wider than a byte.
                let inner = raw.get(1..).unwrap_or("");
                let inner = inner.strip_suffix(['"', '\'']).unwrap_or(inner);
                Some(inner.to_string())
            }
            TokKind::Word
                if n == 1
                    && toks.len() > 2
                    && lexed.stmts[stmt].head == Head::Dot(Dot::Include) =>
            {
                // An unquoted path with characters that split words (`parts(v2).lib`).
                let end = toks.last().map_or(tok.end, |t| t.end);
                text.get(tok.start as usize..end as usize)
                    .map(|t| t.trim().to_string())
            }
            TokKind::Word => Some(raw.to_string()),
            _ => None,
        }
    }

    fn refuse(&mut self, span: Span, message: String) {
        self.out.findings.push(Finding::new(
            "include-refused",
            Severity::Error,
            span,
            message,
        ));
    }

    fn include(&mut self, from: usize, stmt: usize, written: &str, section: Option<String>) {
        let span = self.stmt_span(from, stmt);
        let shown = match &section {
            Some(s) => format!("{written} (section {s})"),
            None => written.to_string(),
        };
        let missing = MissingInclude {
            path: shown.clone(),
            span,
        };
        if self.origin.is_none() {
            self.out.missing.push(missing);
            return;
        }
        if self.chain.len() > self.limits.max_depth {
            self.refuse(
                span,
                format!(
                    "`{shown}` is not read: includes are nested more than {} levels deep (--max-depth)",
                    self.limits.max_depth
                ),
            );
            return;
        }
        let file = match self.resolve(from, written) {
            Target::File(file) => file,
            Target::Missing => {
                self.out.missing.push(missing);
                return;
            }
            Target::Refused(why) => {
                self.refuse(span, format!("`{shown}` {why}"));
                return;
            }
        };
        if let Some(pos) = self
            .chain
            .iter()
            .position(|(f, s)| *f == file && sections_equal(s.as_deref(), section.as_deref()))
        {
            let mut names: Vec<String> = self.chain[pos..]
                .iter()
                .map(|(f, _)| self.info[*f].name.clone())
                .collect();
            names.push(self.info[file].name.clone());
            self.out.findings.push(Finding::new(
                "include-cycle",
                Severity::Error,
                span,
                format!("include cycle: {}", names.join(" → ")),
            ));
            return;
        }
        let Some((start, end)) = self.range(file, section.as_deref()) else {
            self.out.missing.push(missing);
            return;
        };
        // One file included over and over costs its statements each time: bound the total
        // before anything is walked, from what the include would bring in with everything it
        // includes in turn, so a deck that would pass the limit is refused at once.
        let mut stack = self.chain.clone();
        let adds = self.expanded(file, section.as_deref(), &mut stack);
        if self.walked.saturating_add(adds) > self.limits.max_elements {
            self.out
                .statements_over_limit
                .get_or_insert(self.walked.saturating_add(adds));
            return;
        }
        self.walked = self.walked.saturating_add(end.saturating_sub(start) as u64);
        self.chain.push((file, section));
        self.walk(file, start, end);
        self.chain.pop();
    }

    /// The statements of `file` an include of `section` (or of the whole file) walks.
    fn range(&self, file: usize, section: Option<&str>) -> Option<(usize, usize)> {
        match section {
            None => Some((0, self.out.files[file].stmts.len())),
            Some(name) => self.out.files[file]
                .sections
                .get(&name.to_ascii_lowercase())
                .map(|&(h, e)| (h + 1, e)),
        }
    }

    /// Statements an include of `file` (`section`) brings in, counting what it includes in
    /// turn, each time it is included; `.if` branches are all counted, so this is an upper
    /// bound. Each (file, section) is worked out once; a cycle adds nothing (the walk reports
    /// it). `stack` holds the includes being counted.
    fn expanded(
        &mut self,
        file: usize,
        section: Option<&str>,
        stack: &mut Vec<(usize, Option<String>)>,
    ) -> u64 {
        let key = (file, section.map(str::to_ascii_lowercase));
        if let Some(&cost) = self.costs.get(&key) {
            return cost;
        }
        let Some((start, end)) = self.range(file, section) else {
            return 0;
        };
        let mut total = end.saturating_sub(start) as u64;
        if stack.len() > self.limits.max_depth {
            return total;
        }
        stack.push(key.clone());
        let mut i = start;
        while i < end && total <= self.limits.max_elements {
            let head = self.out.files[file].stmts.get(i).map(|s| s.head);
            let nested = match head {
                Some(Head::Dot(Dot::Include)) => self.argument(file, i, 1).map(|p| (p, None)),
                Some(Head::Dot(Dot::Lib)) => {
                    if let Some(&section_end) = self.out.files[file].section_end.get(&i) {
                        i = section_end + 1;
                        continue;
                    }
                    self.argument(file, i, 1)
                        .map(|p| (p, self.argument(file, i, 2)))
                }
                _ => None,
            };
            if let Some((written, nested_section)) = nested {
                if let Target::File(target) = self.resolve(file, &written) {
                    let looped = stack.iter().any(|(f, s)| {
                        *f == target && sections_equal(s.as_deref(), nested_section.as_deref())
                    });
                    if !looped {
                        let cost = self.expanded(target, nested_section.as_deref(), stack);
                        total = total.saturating_add(cost);
                    }
                }
            }
            i += 1;
        }
        stack.pop();
        self.costs.insert(key, total);
        total
    }

    /// Where an include written `written` in file `from` leads: containment is checked on the
    /// path as written and again after links are resolved, before anything is opened; each
    /// file is read once and each (file, path) pair resolved once.
    fn resolve(&mut self, from: usize, written: &str) -> Target {
        let key = (from, written.to_string());
        if let Some(target) = self.resolved.get(&key) {
            return target.clone();
        }
        let target = self.resolve_uncached(from, written);
        self.resolved.insert(key, target.clone());
        target
    }

    fn resolve_uncached(&mut self, from: usize, written: &str) -> Target {
        let Some(root) = self.origin.as_ref().map(|o| o.root.clone()) else {
            return Target::Missing;
        };
        let portable = written.replace('\\', "/");
        let from_dir = self.info[from]
            .canonical
            .as_ref()
            .and_then(|p| p.parent().map(Path::to_path_buf))
            .unwrap_or_else(|| root.clone());
        let candidate = normalize(&from_dir.join(&portable));
        let allow = self.limits.allow_outside_includes;
        if !allow && !candidate.starts_with(&root) {
            return Target::Refused(
                "is outside the netlist's folder tree and is not read (--allow-outside-includes reads it)".into(),
            );
        }
        let canonical = match std::fs::canonicalize(&candidate) {
            Ok(c) => c,
            // No such file (or a link to none): its models and subcircuits are reported missing.
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Target::Missing,
            // A link loop, a folder that cannot be entered: named, with the reason.
            Err(e) => return Target::Refused(format!("cannot be read: {e}")),
        };
        if !allow && !canonical.starts_with(&root) {
            return Target::Refused("leads outside the netlist's folder tree (through a link) and is not read (--allow-outside-includes reads it)".into());
        }
        match self.by_path.get(&canonical) {
            Some(&f) => Target::File(f),
            None => self.read(from, &portable, &canonical),
        }
    }

    /// Reads, registers and lexes an include that resolved to `canonical`.
    fn read(&mut self, from: usize, portable: &str, canonical: &Path) -> Target {
        let size = match std::fs::metadata(canonical) {
            Ok(m) if m.is_file() => m.len(),
            Ok(m) => {
                return Target::Refused(format!(
                    "is {}, not a regular file, and is not read",
                    crate::source::file_kind(&m)
                ))
            }
            Err(e) => return Target::Refused(format!("cannot be read: {e}")),
        };
        if size > self.limits.max_file_bytes {
            return Target::Refused(format!(
                "is {size} bytes, above the file size limit of {} bytes (--max-file-size), and is not read",
                self.limits.max_file_bytes
            ));
        }
        let bytes = match super::read_limited(canonical, self.limits.max_file_bytes) {
            Ok(Some(bytes)) => bytes,
            Ok(None) => {
                return Target::Refused(format!(
                    "is above the file size limit of {} bytes (--max-file-size) and is not read",
                    self.limits.max_file_bytes
                ))
            }
            Err(e) => return Target::Refused(format!("cannot be read: {e}")),
        };
        let name = display_name(&self.info[from].name, portable);
        let text = decode(bytes);
        let id = self.sources.add(PathBuf::from(&name), name.clone(), text);
        let file_text = self.sources.get(id).map(|f| f.text.as_str()).unwrap_or("");
        let lexed = lex(id, file_text, false);
        let foreign = dialect::detect(&lexed, file_text);
        let index = self.out.files.len();
        self.by_path.insert(canonical.to_path_buf(), index);
        self.info.push(FileInfo {
            canonical: Some(canonical.to_path_buf()),
            name,
        });
        match foreign {
            Some(finding) => {
                self.out.findings.push(finding);
                let mut empty = lexed;
                empty.stmts.clear();
                empty.sections.clear();
                empty.section_end.clear();
                empty.findings.clear();
                self.out.files.push(empty);
            }
            None => {
                self.take_lexed(lexed);
            }
        }
        Target::File(index)
    }
}
