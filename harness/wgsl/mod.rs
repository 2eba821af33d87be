//! Loading WGSL: parse with naga, validate, and turn every problem into a
//! [`Diagnostic`] that names the file, line and column and shows the source.

use std::fmt;
use std::path::{Path, PathBuf};

use naga::valid::{Capabilities, ModuleInfo, ValidationFlags, Validator};

use crate::diagnostic::line_col;
pub use crate::diagnostic::Diagnostic;
use crate::limits::{Limit, Limits};

/// A parsed and validated WGSL module together with its source text.
///
/// A shader may be made of several files, concatenated in order (WGSL has
/// no include): `source` is then their concatenation, `parts` says where
/// each file's text lies in it, and `path` reads `a.wgsl + b.wgsl`. Every
/// diagnostic and every reported line goes through `parts` back to its
/// own file and line ([`Shader::diagnostic`], [`Shader::place`]).
pub struct Shader {
    pub path: PathBuf,
    pub source: String,
    pub module: naga::Module,
    pub info: ModuleInfo,
    /// The files of `source`, in order (one for a single file).
    pub parts: Vec<Part>,
}

/// One file of a [`Shader`]'s source: its path, where its text starts in
/// the concatenated source and how long it is, and the line of the
/// concatenation its first line is.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Part {
    pub path: PathBuf,
    pub start: usize,
    pub len: usize,
    pub first_line: u32,
}

impl fmt::Debug for Shader {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.debug_struct("Shader")
            .field("path", &self.path)
            .finish_non_exhaustive()
    }
}

impl Shader {
    /// Read, parse and validate a WGSL file under the default limits.
    pub fn load(path: &Path) -> Result<Shader, Diagnostic> {
        Self::load_with(path, &Limits::default())
    }

    /// Read, parse and validate a WGSL file under `limits`.
    pub fn load_with(path: &Path, limits: &Limits) -> Result<Shader, Diagnostic> {
        let source = std::fs::read_to_string(path).map_err(|e| {
            Diagnostic::without_position(path, format!("cannot read WGSL file: {e}"))
        })?;
        Self::from_source_with(path, source, limits)
    }

    /// Read several WGSL files, concatenate them in order (each ends with a
    /// line break), then parse and validate the whole under `limits`. One
    /// file is [`Shader::load_with`].
    pub fn load_files_with(paths: &[PathBuf], limits: &Limits) -> Result<Shader, Diagnostic> {
        if let [one] = paths {
            return Self::load_with(one, limits);
        }
        let mut source = String::new();
        let mut parts = Vec::new();
        for path in paths {
            let text = std::fs::read_to_string(path).map_err(|e| {
                Diagnostic::without_position(path, format!("cannot read WGSL file: {e}"))
            })?;
            let first_line = source.matches('\n').count() as u32 + 1;
            parts.push(Part {
                path: path.clone(),
                start: source.len(),
                len: text.len(),
                first_line,
            });
            source.push_str(&text);
            if !text.ends_with('\n') {
                source.push('\n');
            }
        }
        let label: Vec<String> = paths.iter().map(|p| p.display().to_string()).collect();
        Self::build(PathBuf::from(label.join(" + ")), source, parts, limits)
    }

    /// Parse and validate WGSL source text under the default limits; `path`
    /// is used in diagnostics only.
    pub fn from_source(path: impl Into<PathBuf>, source: String) -> Result<Shader, Diagnostic> {
        Self::from_source_with(path, source, &Limits::default())
    }

    /// Parse and validate WGSL source text. Expressions nested deeper than
    /// the `expression_depth` limit (see [`nesting`]) are refused with a
    /// located error first; naga then runs on a thread with a fixed
    /// [`FRONT_END_STACK`] stack, which that limit's ceiling keeps far from
    /// full.
    pub fn from_source_with(
        path: impl Into<PathBuf>,
        source: String,
        limits: &Limits,
    ) -> Result<Shader, Diagnostic> {
        let path = path.into();
        let parts = vec![Part {
            path: path.clone(),
            start: 0,
            len: source.len(),
            first_line: 1,
        }];
        Self::build(path, source, parts, limits)
    }

    fn build(
        path: PathBuf,
        source: String,
        parts: Vec<Part>,
        limits: &Limits,
    ) -> Result<Shader, Diagnostic> {
        let map = SourceMap {
            source: &source,
            parts: &parts,
        };
        if let Some(deep) = nesting(&source, limits.expression_depth) {
            let l = Limit::ExpressionDepth;
            return Err(map.diagnostic(
                naga::Span::new(deep.offset as u32, deep.offset as u32 + 1),
                format!(
                    "this expression is nested deeper than {} levels (operators chained in one expression count as levels too; the `{l}` limit); split it into `let` steps, or {}",
                    limits.expression_depth,
                    l.how_to_raise()
                ),
            ));
        }
        let (module, info) = std::thread::scope(|scope| {
            std::thread::Builder::new()
                .name("naga front end".into())
                .stack_size(FRONT_END_STACK)
                .spawn_scoped(scope, || front_end(&path, &source, &map))
                .map_err(|e| {
                    Diagnostic::without_position(
                        &path,
                        format!("cannot start the WGSL front end: {e}"),
                    )
                })?
                .join()
                .unwrap_or_else(|panic| std::panic::resume_unwind(panic))
        })?;
        Ok(Shader {
            path,
            source,
            module,
            info,
            parts,
        })
    }
}

/// A concatenated source and its files: byte offsets and lines of the
/// whole back to each file's own.
struct SourceMap<'a> {
    source: &'a str,
    parts: &'a [Part],
}

impl SourceMap<'_> {
    /// The file holding byte `offset` of the whole source.
    fn part_at(&self, offset: usize) -> &Part {
        let i = self.parts.partition_point(|p| p.start <= offset);
        &self.parts[i.saturating_sub(1)]
    }

    /// A diagnostic at `span` of the whole source, in its own file.
    fn diagnostic(&self, span: naga::Span, message: impl Into<String>) -> Diagnostic {
        let Some(range) = span.to_range() else {
            return Diagnostic::without_position(&self.parts[0].path, message);
        };
        let part = self.part_at(range.start);
        let text = &self.source[part.start..part.start + part.len];
        let start = (range.start - part.start).min(text.len());
        let end = (range.end.saturating_sub(part.start)).clamp(start, text.len());
        Diagnostic::at_span(
            &part.path,
            text,
            naga::Span::new(start as u32, end as u32),
            message,
        )
    }

    /// `file:line:col` of a span of the whole source.
    fn place(&self, span: naga::Span) -> String {
        let d = self.diagnostic(span, "");
        format!("{}:{}:{}", d.file.display(), d.line, d.column)
    }

    fn single(&self) -> bool {
        self.parts.len() == 1
    }
}

/// Stack of the thread naga's parser and validator run on.
pub const FRONT_END_STACK: usize = 256 << 20;

/// Parse and validate with naga, every problem a located diagnostic.
fn front_end(
    path: &Path,
    source: &str,
    map: &SourceMap,
) -> Result<(naga::Module, ModuleInfo), Diagnostic> {
    {
        let module = naga::front::wgsl::parse_str(source).map_err(|e| {
            if !map.single() {
                // naga's rendering would number the lines of the
                // concatenation: place the error and each label in its file.
                let span = e
                    .labels()
                    .map(|(s, _)| s)
                    .find(|s| s.is_defined())
                    .unwrap_or_else(|| {
                        let at = deepest(source) as u32;
                        naga::Span::new(at, at + 1)
                    });
                let mut d = map.diagnostic(span, e.message());
                for (s, label) in e.labels() {
                    if s.is_defined() && !label.is_empty() {
                        d.rendered
                            .push_str(&format!("{}: note: {label}\n", map.place(s)));
                    }
                }
                return d;
            }
            // naga reports its parser's recursion limit without a position:
            // point at the most deeply nested place instead.
            let (line, column, length) = e
                .location(source)
                .map(|l| (l.line_number, l.line_position, l.length))
                .unwrap_or_else(|| {
                    let at = deepest(source);
                    let (l, c) = line_col(source, at);
                    (l, c, 1)
                });
            let mut d = Diagnostic::at_location(path, source, line, column, length, e.message());
            // naga's own rendering carries its labels and notes; keep it below ours.
            d.rendered = e.emit_to_string_with_path(source, &path.display().to_string());
            d.rendered = format!("{}:{}:{}: {}", path.display(), line, column, d.rendered);
            d
        })?;
        // f16 is only accepted when the source enables it; the capability itself
        // is always granted so that `enable f16;` validates.
        let caps = Capabilities::SHADER_FLOAT16 | Capabilities::SHADER_FLOAT16_IN_FLOAT32;
        let info = Validator::new(ValidationFlags::all(), caps)
            .validate(&module)
            .map_err(|e| {
                let span = e
                    .spans()
                    .map(|(s, _)| *s)
                    .find(|s| s.is_defined())
                    .unwrap_or_default();
                let mut message = e.as_inner().to_string();
                let mut src: &dyn std::error::Error = e.as_inner();
                while let Some(next) = src.source() {
                    message.push_str(": ");
                    message.push_str(&next.to_string());
                    src = next;
                }
                let mut d = map.diagnostic(span, format!("validation failed: {message}"));
                if map.single() {
                    let naga_text = e.emit_to_string_with_path(source, &path.display().to_string());
                    d.rendered = format!("{}\n{}", d.rendered, naga_text);
                } else {
                    for (s, label) in e.spans() {
                        if s.is_defined() && !label.is_empty() {
                            d.rendered
                                .push_str(&format!("{}: note: {label}\n", map.place(*s)));
                        }
                    }
                }
                d
            })?;
        Ok((module, info))
    }
}

impl Shader {
    /// Hex digest (FNV-1a, 64 bit) of the source text: a cheap identity for
    /// golden-file headers, not a security measure.
    pub fn content_hash(&self) -> String {
        content_hash(&self.source)
    }

    /// Names of all functions in the module, in source order (entry points last).
    pub fn function_names(&self) -> Vec<String> {
        let mut names: Vec<String> = self
            .module
            .functions
            .iter()
            .filter_map(|(_, f)| f.name.clone())
            .collect();
        names.extend(self.module.entry_points.iter().map(|e| e.name.clone()));
        names
    }

    /// Line and column of a span, (0, 0) when undefined.
    pub fn line_col(&self, span: naga::Span) -> (u32, u32) {
        if !span.is_defined() {
            return (0, 0);
        }
        let loc = span.location(&self.source);
        (loc.line_number, loc.line_position)
    }

    /// A diagnostic at `span` of this shader, in the file the span lies in.
    pub fn diagnostic(&self, span: naga::Span, message: impl Into<String>) -> Diagnostic {
        if self.parts.len() <= 1 {
            return Diagnostic::at_span(&self.path, &self.source, span, message);
        }
        self.map().diagnostic(span, message)
    }

    fn map(&self) -> SourceMap<'_> {
        SourceMap {
            source: &self.source,
            parts: &self.parts,
        }
    }

    /// The file and its own line of `line` of the (concatenated) source,
    /// as [`Shader::line_col`] and the evaluator's sites number lines.
    pub fn place(&self, line: u32) -> (&Path, u32) {
        let i = self.parts.partition_point(|p| p.first_line <= line);
        match self.parts.get(i.wrapping_sub(1)) {
            Some(p) => (&p.path, line - p.first_line + 1),
            None => (&self.path, line),
        }
    }

    /// `file:line:column` of a line and column of the (concatenated)
    /// source; just `file` for line 0 (no position).
    pub fn location(&self, line: u32, column: u32) -> String {
        self.location_named(line, column, &[])
    }

    /// [`Shader::location`] with each file named as in `names` (one per
    /// part, e.g. as the suite writes them) instead of its loaded path;
    /// loaded paths when the counts differ.
    pub fn location_named(&self, line: u32, column: u32, names: &[PathBuf]) -> String {
        let named = names.len() == self.parts.len();
        if line == 0 {
            if named {
                let all: Vec<String> = names.iter().map(|p| p.display().to_string()).collect();
                return all.join(" + ");
            }
            return self.path.display().to_string();
        }
        let i = self.parts.partition_point(|p| p.first_line <= line);
        let Some(part) = self.parts.get(i.wrapping_sub(1)) else {
            return format!("{}:{line}:{column}", self.path.display());
        };
        let file = if named { &names[i - 1] } else { &part.path };
        format!("{}:{}:{column}", file.display(), line - part.first_line + 1)
    }
}

/// Where an expression of WGSL source nests too deeply.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct TooDeep {
    /// Byte offset of the token that went past the limit.
    pub offset: usize,
}

/// One linear pass over WGSL text that bounds the height of every
/// expression tree before naga builds it: each open bracket is a level, and
/// so is each operator in a chain (`x + x + x` is a tree as tall as it is
/// long). The count of a bracket level restarts at `,` (a sibling
/// argument) and every bracket level restarts at `;`, `{` and `}`. The
/// estimate is an upper bound on the real height (it may overcount, e.g.
/// `<` of a type); the first place where it passes `limit` is returned.
/// Comments are skipped.
pub fn nesting(source: &str, limit: u32) -> Option<TooDeep> {
    let mut over = None;
    scan(source, |offset, depth| {
        if depth > limit && over.is_none() {
            over = Some(TooDeep { offset });
        }
    });
    over
}

/// Byte offset of the most deeply nested place (by [`nesting`]'s measure).
fn deepest(source: &str) -> usize {
    let (mut best, mut at) = (0, 0);
    scan(source, |offset, depth| {
        if depth > best {
            (best, at) = (depth, offset);
        }
    });
    at
}

fn scan(source: &str, mut visit: impl FnMut(usize, u32)) {
    let b = source.as_bytes();
    // Per open bracket level: operators counted since the level's last `,`.
    let mut levels: Vec<u32> = vec![0];
    let mut total: u32 = 0;
    let mut i = 0;
    while i < b.len() {
        let c = b[i];
        match c {
            b'/' if b.get(i + 1) == Some(&b'/') => {
                while i < b.len() && b[i] != b'\n' {
                    i += 1;
                }
                continue;
            }
            b'/' if b.get(i + 1) == Some(&b'*') => {
                // Block comments nest in WGSL.
                let mut open = 0u32;
                while i < b.len() {
                    if b[i] == b'/' && b.get(i + 1) == Some(&b'*') {
                        open += 1;
                        i += 2;
                    } else if b[i] == b'*' && b.get(i + 1) == Some(&b'/') {
                        open -= 1;
                        i += 2;
                        if open == 0 {
                            break;
                        }
                    } else {
                        i += 1;
                    }
                }
                continue;
            }
            b'(' | b'[' => {
                levels.push(0);
                total += 1;
                visit(i, total);
            }
            b')' | b']' if levels.len() > 1 => {
                total -= 1 + levels.pop().unwrap_or(0);
            }
            b',' => {
                let top = levels.last_mut().expect("level 0 stays");
                total -= *top;
                *top = 0;
            }
            b';' | b'{' | b'}' => {
                levels.truncate(1);
                levels[0] = 0;
                total = 0;
            }
            b'+' | b'-' | b'*' | b'/' | b'%' | b'&' | b'|' | b'^' | b'<' | b'>' | b'!' | b'~'
            | b'=' => {
                // A compound operator (`<=`, `&&`, `>>`) counts once.
                let prev = if i > 0 { b[i - 1] } else { b' ' };
                let compound = matches!(
                    (prev, c),
                    (b'<', b'<' | b'=')
                        | (b'>', b'>' | b'=')
                        | (b'&', b'&')
                        | (b'|', b'|')
                        | (b'=' | b'!', b'=')
                        | (b'-', b'>')
                );
                if !compound && c != b'=' {
                    *levels.last_mut().expect("level 0 stays") += 1;
                    total += 1;
                    visit(i, total);
                }
            }
            _ => {}
        }
        i += 1;
    }
}

/// FNV-1a 64-bit digest of `text`, as 16 hex digits.
pub fn content_hash(text: &str) -> String {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in text.bytes() {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    format!("{h:016x}")
}
