//! Diagnostics, in one place: [`Diagnostic`] (a problem located in a file, rendered
//! compiler-style: `file:line:col: error: message`, the source line, a caret) and the one
//! way a byte offset becomes a line and column ([`line_col`], [`LineIndex`] for many
//! offsets in one text). The WGSL loader, the suite parser, goldens and table files all
//! build their errors here; `crate::wgsl::Diagnostic` is the same type.

use std::fmt;
use std::path::{Path, PathBuf};

/// A problem located in a source file, rendered the way a compiler shows it.
#[derive(Debug, Clone)]
pub struct Diagnostic {
    pub file: PathBuf,
    /// 1-based line; 0 when the problem has no position (e.g. an unreadable file).
    pub line: u32,
    /// 1-based column in bytes; 0 when unknown.
    pub column: u32,
    pub message: String,
    /// Full text: `file:line:col: error: message`, then the source line and a caret.
    pub rendered: String,
}

impl Diagnostic {
    /// A diagnostic at a byte span of `source`.
    pub fn at_span(
        file: &Path,
        source: &str,
        span: naga::Span,
        message: impl Into<String>,
    ) -> Self {
        let message = message.into();
        if !span.is_defined() || source.is_empty() {
            return Self::without_position(file, message);
        }
        let loc = span.location(source);
        Self::at_location(
            file,
            source,
            loc.line_number,
            loc.line_position,
            loc.length,
            message,
        )
    }

    /// A diagnostic at a 1-based line and column, underlining `length` bytes.
    pub fn at_location(
        file: &Path,
        source: &str,
        line: u32,
        column: u32,
        length: u32,
        message: impl Into<String>,
    ) -> Self {
        let message = message.into();
        let text = source
            .lines()
            .nth(line.saturating_sub(1) as usize)
            .unwrap_or("");
        let gutter = line.to_string();
        let pad = " ".repeat(gutter.len());
        let start = column.saturating_sub(1) as usize;
        let visible = text.len().saturating_sub(start).max(1);
        let carets = "^".repeat((length as usize).clamp(1, visible));
        let rendered = format!(
            "{}:{}:{}: error: {}\n{pad} |\n{gutter} | {}\n{pad} | {}{}\n",
            file.display(),
            line,
            column,
            message,
            text,
            " ".repeat(start),
            carets
        );
        Diagnostic {
            file: file.to_path_buf(),
            line,
            column,
            message,
            rendered,
        }
    }

    /// A diagnostic about a whole file (cannot be read, function not found, ...).
    pub fn without_position(file: &Path, message: impl Into<String>) -> Self {
        let message = message.into();
        let rendered = format!("{}: error: {}\n", file.display(), message);
        Diagnostic {
            file: file.to_path_buf(),
            line: 0,
            column: 0,
            message,
            rendered,
        }
    }
}

impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.rendered.trim_end())
    }
}

impl std::error::Error for Diagnostic {}

/// Line and column (1-based) of byte `offset` in `text`.
pub fn line_col(text: &str, offset: usize) -> (u32, u32) {
    LineIndex::new(text).line_col(text, offset)
}

/// The start of every line of a text, so a byte offset finds its line by
/// binary search: locating every check of a large suite stays linear.
pub struct LineIndex {
    starts: Vec<usize>,
}

impl LineIndex {
    /// The line starts of `text` (one linear pass).
    pub fn new(text: &str) -> LineIndex {
        let mut starts = vec![0];
        starts.extend(text.match_indices('\n').map(|(i, _)| i + 1));
        LineIndex { starts }
    }

    /// Line and column (1-based, the column in bytes) of byte `offset` of `text`, the text
    /// this index was made from; an offset past the end is the end.
    pub fn line_col(&self, text: &str, offset: usize) -> (u32, u32) {
        let offset = offset.min(text.len());
        let line = self.starts.partition_point(|&s| s <= offset);
        let col = offset - self.starts[line - 1] + 1;
        (line as u32, col as u32)
    }

    /// Byte offset of the start of 1-based `line`.
    pub fn start(&self, line: u32) -> usize {
        self.starts[(line.max(1) as usize - 1).min(self.starts.len() - 1)]
    }
}
