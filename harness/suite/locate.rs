//! Positions in the suite text: byte offsets to lines and columns, the line
//! of a key inside a table, and located diagnostics.

use std::path::Path;

use crate::wgsl::Diagnostic;

/// Line and column (1-based) of byte `offset` in `text`.
pub fn line_col(text: &str, offset: usize) -> (u32, u32) {
    LineIndex::new(text).line_col(text, offset)
}

/// The start of every line of a text, so a byte offset finds its line by
/// binary search: locating every check of a large suite stays linear.
pub(super) struct LineIndex {
    pub(super) starts: Vec<usize>,
}

impl LineIndex {
    pub(super) fn new(text: &str) -> LineIndex {
        let mut starts = vec![0];
        starts.extend(text.match_indices('\n').map(|(i, _)| i + 1));
        LineIndex { starts }
    }

    pub(super) fn line_col(&self, text: &str, offset: usize) -> (u32, u32) {
        let offset = offset.min(text.len());
        let line = self.starts.partition_point(|&s| s <= offset);
        let col = offset - self.starts[line - 1] + 1;
        (line as u32, col as u32)
    }

    /// Byte offset of the start of 1-based `line`.
    pub(super) fn start(&self, line: u32) -> usize {
        self.starts[(line.max(1) as usize - 1).min(self.starts.len() - 1)]
    }
}

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
