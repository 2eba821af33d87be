//! Positions in the suite text: byte offsets to lines and columns, the line
//! of a key inside a table, and located diagnostics.

use std::path::Path;

use crate::diagnostic::Diagnostic;

pub use crate::diagnostic::line_col;
pub(super) use crate::diagnostic::LineIndex;

pub(super) struct Ctx<'a> {
    pub(super) path: &'a Path,
    pub(super) text: &'a str,
    pub(super) lines: &'a LineIndex,
}

impl Ctx<'_> {
    pub(super) fn err(&self, span: std::ops::Range<usize>, msg: impl Into<String>) -> Diagnostic {
        let mut start = span.start.min(self.text.len());
        while !self.text.is_char_boundary(start) {
            start -= 1;
        }
        let mut end = span.end.clamp(start, self.text.len());
        while !self.text.is_char_boundary(end) {
            end -= 1;
        }
        let (line, col) = self.lines.line_col(self.text, start);
        let len = self.text[start..end]
            .lines()
            .next()
            .map_or(1, |l| l.len().max(1));
        Diagnostic::at_location(self.path, self.text, line, col, len as u32, msg)
    }

    pub(super) fn line(&self, offset: usize) -> u32 {
        self.lines.line_col(self.text, offset).0
    }
}

/// The span of the line inside `table` (a byte range of `text`) that defines `key`
/// (`key = ...`, `"key" = ...` or `key.sub = ...`); the whole table when not found.
pub(super) fn key_in(
    text: &str,
    table: std::ops::Range<usize>,
    key: &str,
) -> std::ops::Range<usize> {
    let body = &text[table.start.min(text.len())..table.end.min(text.len())];
    let mut offset = table.start;
    for line in body.split_inclusive('\n') {
        let t = line.trim_start();
        let rest = t
            .strip_prefix(key)
            .or_else(|| t.strip_prefix(&format!("\"{key}\"")))
            .or_else(|| t.strip_prefix(&format!("'{key}'")));
        if let Some(rest) = rest {
            let rest = rest.trim_start();
            if rest.starts_with('=') || rest.starts_with('.') {
                let start = offset + (line.len() - t.len());
                return start..offset + line.trim_end().len();
            }
        }
        offset += line.len();
    }
    table
}
