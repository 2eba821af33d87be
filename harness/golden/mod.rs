//! Golden datasets: one CSV file per check holding the function's inputs and
//! outputs, written so every value reads back bit-exact.
//!
//! ```text
//! # shadegate golden dataset, format 1
//! # check: ggx_ndf
//! # shader: shaders/terrace_brdf.wgsl
//! # function: d_ggx
//! # shader-hash: 5f0c2d0e9a1b7c33
//! # sweep: n_dot_h = linear(0.0, 1.0, 64); roughness = edges(0.0, 1.0)
//! # points: 448
//! n_dot_h:f32,alpha:f32,result:f32
//! 0.0,0.0,NaN
//! ...
//! # end
//! ```
//!
//! f32 and f16 values are written as the shortest decimal that reads back to
//! the same value; NaNs other than the canonical quiet NaN as `nan:0x…` with
//! their bits. The trailing `# end` line proves the file is complete. Lines
//! may end in a line feed or a carriage return and a line feed; a header
//! value is one line of printable text (no control characters), which both
//! the reader and the writer check. Only
//! [`write()`] creates these files; it refuses when the `CI` environment
//! variable is set and writes a temporary file that is then renamed.
//!
//! A golden path ending in `.golden` is written in the compact format of
//! [`compact`] instead (outputs compressed in blocks, inputs checked by a
//! hash), with a readable summary beside it ([`summary`], `<name>.golden.txt`).
//! [`open`] reads either format into a [`Record`] that gives any point range
//! of the outputs and checks the inputs of a range.

pub mod compact;
pub mod summary;

use std::io::Write as _;
use std::ops::Range;
use std::path::{Path, PathBuf};

use crate::diagnostic::Diagnostic;
use crate::limits::{Limit, Limits};
use crate::values::{format_exact, parse_exact, ScalarKind};

const MAGIC: &str = "# shadegate golden dataset, format 1";

/// The identity of a golden: what it was recorded from.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Header {
    pub check: String,
    pub shader: String,
    pub function: String,
    pub shader_hash: String,
    pub sweep: String,
    pub points: usize,
}

/// The keys of the identity lines ([`Header::lines`]), in order.
pub(crate) const IDENTITY_KEYS: [&str; 6] = [
    "check",
    "shader",
    "function",
    "shader-hash",
    "sweep",
    "points",
];

/// The values of the header lines `# KEY: value`, one per key of `keys` in
/// order, from the second line of `lines` on (the first is the magic line).
/// A missing or different line is the error: its 1-based line number and
/// what was expected there. So is a value with a control character in it
/// ([`control_char`]): `str::lines` takes one carriage return before each
/// line feed as part of the line ending, so such a value would not read back
/// as it was written.
pub(crate) fn header_fields(lines: &[&str], keys: &[&str]) -> Result<Vec<String>, (usize, String)> {
    keys.iter()
        .enumerate()
        .map(|(i, key)| {
            let line = lines.get(i + 1).copied().unwrap_or("");
            let prefix = format!("# {key}: ");
            let value = line.strip_prefix(&prefix).ok_or_else(|| {
                (
                    i + 2,
                    format!("expected the header line `{prefix}…`, found `{line}`"),
                )
            })?;
            if let Some((col, c)) = control_char(value) {
                return Err((
                    i + 2,
                    format!(
                        "the `{key}` value has the control character U+{:04X} at character {}; header values are one line of printable text",
                        c as u32,
                        prefix.chars().count() + col
                    ),
                ));
            }
            Ok(value.to_string())
        })
        .collect()
}

/// The first control character of `value` (a carriage return, a line feed,
/// a tab, …) with its 1-based position in characters, if it has one. A header
/// value holding one cannot be written as the one line [`Header::lines`]
/// gives it and read back the same.
pub(crate) fn control_char(value: &str) -> Option<(usize, char)> {
    value
        .chars()
        .enumerate()
        .find(|(_, c)| c.is_control())
        .map(|(i, c)| (i + 1, c))
}

impl Header {
    /// The identity lines every golden file starts with after its magic
    /// line (CSV, compact, and the compact golden's summary alike):
    /// `# check: …` to `# points: …`, each ending in a newline.
    pub fn lines(&self) -> String {
        format!(
            "# check: {}\n# shader: {}\n# function: {}\n# shader-hash: {}\n# sweep: {}\n# points: {}\n",
            self.check, self.shader, self.function, self.shader_hash, self.sweep, self.points
        )
    }

    /// Why this header cannot be written as a golden's header lines, if it
    /// cannot: the first field with a control character in it (see
    /// `header_fields`, which refuses such a value when reading).
    pub fn unwritable(&self) -> Option<String> {
        let fields = [
            ("check", &self.check),
            ("shader", &self.shader),
            ("function", &self.function),
            ("shader-hash", &self.shader_hash),
            ("sweep", &self.sweep),
        ];
        fields.iter().find_map(|(key, value)| {
            control_char(value).map(|(col, c)| {
                format!(
                    "its `{key}` header value {value:?} has the control character U+{:04X} at character {col}; a golden's header values are one line of printable text",
                    c as u32
                )
            })
        })
    }

    /// The header read back from the values of those lines (check, shader,
    /// function, shader hash, sweep; in that order) and the point count.
    pub(crate) fn from_fields(fields: &[String], points: usize) -> Header {
        Header {
            check: fields[0].clone(),
            shader: fields[1].clone(),
            function: fields[2].clone(),
            shader_hash: fields[3].clone(),
            sweep: fields[4].clone(),
            points,
        }
    }
}

/// A golden dataset in the evaluator's column encoding.
#[derive(Clone, Debug, PartialEq)]
pub struct Golden {
    pub header: Header,
    /// (leaf name, kind) of inputs then outputs.
    pub inputs: Vec<(String, ScalarKind)>,
    pub outputs: Vec<(String, ScalarKind)>,
    pub input_columns: Vec<Vec<u32>>,
    pub output_columns: Vec<Vec<u32>>,
}

/// Whether recording is refused here (the `CI` variable is set).
pub fn refused_in_ci() -> bool {
    std::env::var_os("CI").is_some_and(|v| !v.is_empty())
}

/// The text of a golden dataset (see the module doc for the format).
pub fn render(g: &Golden) -> String {
    let mut text = String::new();
    text.push_str(MAGIC);
    text.push('\n');
    text.push_str(&g.header.lines());
    let cols: Vec<String> = g
        .inputs
        .iter()
        .chain(&g.outputs)
        .map(|(n, k)| format!("{n}:{}", k.wgsl()))
        .collect();
    text.push_str(&cols.join(","));
    text.push('\n');
    let kinds: Vec<ScalarKind> = g.inputs.iter().chain(&g.outputs).map(|c| c.1).collect();
    let all: Vec<&Vec<u32>> = g.input_columns.iter().chain(&g.output_columns).collect();
    for i in 0..g.header.points {
        let row: Vec<String> = all
            .iter()
            .zip(&kinds)
            .map(|(c, k)| format_exact(*k, c[i]))
            .collect();
        text.push_str(&row.join(","));
        text.push('\n');
    }
    text.push_str("# end\n");
    text
}

/// The prefix of temporary files: outside the golden pattern (`*.csv`) and
/// ignored by the repository's `.gitignore`, so neither `git add goldens/*.csv`
/// nor `git add goldens/` picks up what a killed `record` left behind.
pub const TMP_PREFIX: &str = ".shadegate-tmp-";

/// Refuses a golden whose header could not be read back as written
/// ([`Header::unwritable`]), naming `path`, the check and why.
fn writable(path: &Path, g: &Golden) -> Result<(), String> {
    match g.header.unwritable() {
        None => Ok(()),
        Some(why) => Err(format!(
            "{}: cannot record check `{}`: {why}",
            path.display(),
            g.header.check.escape_debug()
        )),
    }
}

/// Write a golden dataset atomically (temporary file, then rename), in the
/// format its extension chooses ([`Format::of`]), with no check of where
/// `path` lies and no summary; see [`write_in`] for the one `record` uses.
pub fn write(path: &Path, g: &Golden) -> Result<(), String> {
    writable(path, g)?;
    if refused_in_ci() {
        return Err(format!(
            "{}: refusing to record goldens because the CI environment variable is set; record them locally and commit them",
            path.display()
        ));
    }
    if let Some(dir) = path.parent() {
        std::fs::create_dir_all(dir)
            .map_err(|e| format!("{}: cannot create folder: {e}", dir.display()))?;
    }
    match Format::of(path) {
        Format::Csv => replace(path, &render(g)),
        Format::Compact => replace_bytes(path, &compact::render(g, compact::BLOCK_POINTS)),
    }
}

/// Write the golden of check `g.header.check` to `root.join(rel)`, where
/// `root` is the suite's folder. Refuses (with the path and the reason):
/// under `CI`; a path that leaves `root` through `..`, an absolute path or a
/// symbolic link unless `outside` is set; an existing file that is not a
/// golden of this same check (the suite file, a shader, another check's
/// golden, anything else). The file is replaced only by a rename of a
/// complete temporary file, so a failed or killed write leaves the old
/// golden intact.
pub fn write_in(root: &Path, rel: &Path, g: &Golden, outside: bool) -> Result<Written, String> {
    writable(rel, g)?;
    let compact = Format::of(rel) == Format::Compact;
    let bytes = if compact {
        compact::render(g, compact::BLOCK_POINTS)
    } else {
        render(g).into_bytes()
    };
    let magic = if compact { compact::MAGIC } else { MAGIC };
    // Both places are checked before either file is written.
    let path = place(root, rel, &g.header.check, magic, outside)?;
    let summary = if compact {
        let rel = summary::path_of(rel);
        Some(place(root, &rel, &g.header.check, summary::MAGIC, outside)?)
    } else {
        None
    };
    replace_bytes(&path, &bytes)?;
    if let Some(spath) = &summary {
        replace(spath, &summary::render(g, &path, bytes.len() as u64))?;
    }
    Ok(Written {
        path,
        bytes: bytes.len() as u64,
        summary,
    })
}

/// What [`write_in`] wrote.
#[derive(Clone, Debug)]
pub struct Written {
    /// The golden's path.
    pub path: PathBuf,
    /// The golden's size in bytes.
    pub bytes: u64,
    /// The readable summary beside a compact golden.
    pub summary: Option<PathBuf>,
}

/// The two golden formats; a golden's path chooses by its extension.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    /// `.csv`: every input and output as text (this module's doc).
    Csv,
    /// `.golden`: [`compact`].
    Compact,
}

impl Format {
    /// The format of a golden at `path`: compact for `.golden`, else CSV.
    pub fn of(path: &Path) -> Format {
        if path.extension().and_then(|e| e.to_str()) == Some(compact::EXTENSION) {
            Format::Compact
        } else {
            Format::Csv
        }
    }
}

/// The checks of [`write_in`] for one file: refused under `CI`, inside the
/// suite's folder, no link, only over a file of this check whose first line
/// is `magic`; stale temporary files cleared.
fn place(
    root: &Path,
    rel: &Path,
    check: &str,
    magic: &str,
    outside: bool,
) -> Result<PathBuf, String> {
    let path = if rel.is_absolute() {
        rel.to_path_buf()
    } else {
        root.join(rel)
    };
    if refused_in_ci() {
        return Err(format!(
            "{}: refusing to record goldens because the CI environment variable is set; record them locally and commit them",
            path.display()
        ));
    }
    if !outside {
        inside(root, rel)?;
    }
    if let Some(dir) = path.parent() {
        std::fs::create_dir_all(dir)
            .map_err(|e| format!("{}: cannot create folder: {e}", dir.display()))?;
        if !outside {
            // The folders exist now: resolve links and look again.
            inside(root, rel)?;
        }
    }
    match std::fs::symlink_metadata(&path) {
        Ok(m) if m.file_type().is_symlink() => {
            return Err(format!(
                "{}: refusing to record over a symbolic link",
                path.display()
            ))
        }
        Ok(m) if !m.is_file() => {
            return Err(format!("{}: exists and is not a file", path.display()))
        }
        Ok(_) => own_golden(&path, check, magic)?,
        Err(_) => {}
    }
    clear_stale(&path);
    Ok(path)
}

/// `root.join(rel)` lies inside `root`: `rel` is relative without `..`, and
/// the deepest existing folder on its way resolves (links followed) inside
/// the resolved `root`.
fn inside(root: &Path, rel: &Path) -> Result<(), String> {
    use std::path::Component;
    let shown = root.join(rel);
    if rel
        .components()
        .any(|c| !matches!(c, Component::Normal(_) | Component::CurDir))
    {
        return Err(format!(
            "{}: refusing to record a golden outside the suite's folder (pass --golden-outside to allow it)",
            shown.display()
        ));
    }
    let base = if root.as_os_str().is_empty() {
        Path::new(".")
    } else {
        root
    };
    let real_root = base
        .canonicalize()
        .map_err(|e| format!("{}: cannot resolve the suite's folder: {e}", base.display()))?;
    let mut deepest = base.to_path_buf();
    let parent = rel.parent().unwrap_or(Path::new(""));
    for c in parent.components() {
        let next = deepest.join(c);
        if !next.exists() {
            break;
        }
        deepest = next;
    }
    let real = deepest
        .canonicalize()
        .map_err(|e| format!("{}: cannot resolve: {e}", deepest.display()))?;
    if !real.starts_with(&real_root) {
        return Err(format!(
            "{}: refusing to record a golden outside the suite's folder: `{}` leads to {} (pass --golden-outside to allow it)",
            shown.display(),
            deepest.display(),
            real.display()
        ));
    }
    Ok(())
}

/// An existing file at `path` may be replaced only when it is a golden (or
/// summary) of the same check: its first line is `magic` and its `# check:`
/// line names `check`. Only the first two lines are read.
fn own_golden(path: &Path, check: &str, magic: &str) -> Result<(), String> {
    use std::io::{BufRead, Read};
    let f = std::fs::File::open(path)
        .map_err(|e| format!("{}: cannot read the existing file: {e}", path.display()))?;
    let mut head = String::new();
    let mut r = std::io::BufReader::new(f.take(4096));
    let mut ok = false;
    if r.read_line(&mut head).is_ok() && head.trim_end() == magic {
        head.clear();
        ok = r.read_line(&mut head).is_ok() && head.trim_end() == format!("# check: {check}");
    }
    if ok {
        Ok(())
    } else {
        Err(format!(
            "{}: refusing to replace a file that is not the golden of check `{check}`; choose another `golden` path",
            path.display()
        ))
    }
}

/// Remove temporary files of this golden left by a killed `record`.
fn clear_stale(path: &Path) {
    let (Some(dir), Some(name)) = (path.parent(), path.file_name()) else {
        return;
    };
    let prefix = format!("{TMP_PREFIX}{}-", name.to_string_lossy());
    let dir = if dir.as_os_str().is_empty() {
        Path::new(".")
    } else {
        dir
    };
    if let Ok(entries) = std::fs::read_dir(dir) {
        for e in entries.flatten() {
            let n = e.file_name();
            let n = n.to_string_lossy();
            if n.strip_prefix(&prefix)
                .is_some_and(|pid| pid.bytes().all(|b| b.is_ascii_digit()))
            {
                let _ = std::fs::remove_file(e.path());
            }
        }
    }
}

/// Removes the temporary file when dropped, unless it was renamed into
/// place: every failure path (including a panic) cleans up.
struct TmpGuard(Option<PathBuf>);

impl Drop for TmpGuard {
    fn drop(&mut self) {
        if let Some(p) = self.0.take() {
            let _ = std::fs::remove_file(p);
        }
    }
}

/// Replace `path` with `text` through a temporary file in the same folder:
/// the file is either the old one or the complete new one, and the temporary
/// file is removed on every failure. The building block of [`write()`] and
/// [`write_in()`], without their refusal under `CI` (which is the record
/// command's policy, not the file system's).
pub fn replace(path: &Path, text: &str) -> Result<(), String> {
    replace_bytes(path, text.as_bytes())
}

/// [`replace`] for bytes (a compact golden).
pub fn replace_bytes(path: &Path, bytes: &[u8]) -> Result<(), String> {
    let tmp = tmp_path(path);
    let mut guard = TmpGuard(Some(tmp.clone()));
    let mut f = std::fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(&tmp)
        .map_err(|e| format!("{}: cannot write: {e}", tmp.display()))?;
    f.write_all(bytes)
        .and_then(|_| f.sync_all())
        .map_err(|e| format!("{}: cannot write: {e}", tmp.display()))?;
    drop(f);
    std::fs::rename(&tmp, path)
        .map_err(|e| format!("{}: cannot rename into place: {e}", path.display()))?;
    guard.0 = None;
    Ok(())
}

/// `<folder>/.shadegate-tmp-<file name>-<pid>`: a hidden name that never
/// ends in `.csv`.
pub fn tmp_path(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    path.with_file_name(format!("{TMP_PREFIX}{name}-{}", std::process::id()))
}

/// Read a golden dataset under the default limits; see [`read_with`].
pub fn read(path: &Path) -> Result<Golden, Diagnostic> {
    read_with(path, &Limits::default())
}

/// Read a golden dataset; every problem names the file and line. A file
/// larger than the `golden_bytes` limit is refused after reading at most
/// one byte more than the limit.
pub fn read_with(path: &Path, limits: &Limits) -> Result<Golden, Diagnostic> {
    use std::io::Read;
    let cannot = |e: std::io::Error| {
        Diagnostic::without_position(
            path,
            format!("cannot read golden dataset: {e} (record it with `shadegate record`)"),
        )
    };
    let f = std::fs::File::open(path).map_err(cannot)?;
    let mut bytes = Vec::new();
    f.take(limits.golden_bytes.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(cannot)?;
    if bytes.len() as u64 > limits.golden_bytes {
        let first = bytes.split(|&b| b == b'\n').next().unwrap_or(&[]);
        let first = String::from_utf8_lossy(first);
        let l = Limit::GoldenBytes;
        return Err(Diagnostic::at_location(
            path,
            &first,
            1,
            1,
            1,
            format!(
                "the golden dataset is larger than the `{l}` limit of {} bytes; {}",
                limits.golden_bytes,
                l.how_to_raise()
            ),
        ));
    }
    let text = String::from_utf8(bytes).map_err(|e| {
        let good = &e.as_bytes()[..e.utf8_error().valid_up_to()];
        let line = good.iter().filter(|&&b| b == b'\n').count() as u32 + 1;
        let text = String::from_utf8_lossy(e.as_bytes());
        Diagnostic::at_location(
            path,
            &text,
            line,
            1,
            1,
            "the golden dataset is not UTF-8 text",
        )
    })?;
    parse_with(path, &text, limits)
}

/// Parse golden text under the default limits; see [`parse_with`].
pub fn parse(path: &Path, text: &str) -> Result<Golden, Diagnostic> {
    parse_with(path, text, &Limits::default())
}

/// Parse golden text (see [`read_with`]). The header's point count is
/// checked against the `points_per_check` limit and never used to reserve
/// more memory than the text's own lines justify.
pub fn parse_with(path: &Path, text: &str, limits: &Limits) -> Result<Golden, Diagnostic> {
    let err =
        |line: usize, msg: String| Diagnostic::at_location(path, text, line as u32, 1, 1, msg);
    let lines: Vec<&str> = text.lines().collect();
    if lines.first() != Some(&MAGIC) {
        return Err(err(
            1,
            format!("not a shadegate golden dataset (expected the first line `{MAGIC}`)"),
        ));
    }
    let fields = header_fields(&lines, &IDENTITY_KEYS).map_err(|(line, m)| err(line, m))?;
    let points: u64 = fields[5]
        .parse()
        .map_err(|_| err(7, format!("`{}` is not a point count", fields[5])))?;
    if points > limits.points_per_check {
        let l = Limit::PointsPerCheck;
        return Err(err(
            7,
            format!(
                "the header claims {points} points, more than the `{l}` limit of {}; {}",
                limits.points_per_check,
                l.how_to_raise()
            ),
        ));
    }
    let points = points as usize;
    let header = Header::from_fields(&fields, points);
    let names_line = lines.get(7).copied().unwrap_or("");
    let mut cols = Vec::new();
    for c in names_line.split(',') {
        let (name, kind) = c
            .rsplit_once(':')
            .ok_or_else(|| err(8, format!("column `{c}` lacks its type (`name:f32`)")))?;
        let kind = ScalarKind::parse(kind)
            .ok_or_else(|| err(8, format!("column `{c}`: unknown type `{kind}`")))?;
        cols.push((name.to_string(), kind));
    }
    let split = cols
        .iter()
        .position(|(n, _)| n == "result" || n.starts_with("result.") || n.starts_with("result["));
    let Some(split) = split else {
        return Err(err(8, "no `result` column".into()));
    };
    // Reserve no more rows than the file has lines: the header's count is a
    // claim, the lines are the evidence.
    let rows = points
        .min(lines.len().saturating_sub(8))
        .min(text.len() / cols.len().max(1));
    let mut columns: Vec<Vec<u32>> = vec![Vec::with_capacity(rows); cols.len()];
    let mut row = 0;
    let mut ended = false;
    for (i, line) in lines.iter().enumerate().skip(8) {
        let lno = i + 1;
        if *line == "# end" {
            ended = true;
            if i + 1 != lines.len() {
                return Err(err(lno + 1, "text after `# end`".into()));
            }
            break;
        }
        let vals: Vec<&str> = line.split(',').collect();
        if vals.len() != cols.len() {
            return Err(err(
                lno,
                format!("expected {} values, found {}", cols.len(), vals.len()),
            ));
        }
        for (c, (v, (_, k))) in vals.iter().zip(&cols).enumerate() {
            columns[c].push(
                parse_exact(*k, v.trim())
                    .map_err(|m| err(lno, format!("column `{}`: {m}", cols[c].0)))?,
            );
        }
        row += 1;
    }
    if !ended {
        return Err(err(
            lines.len(),
            format!("truncated: no `# end` line after {row} of {points} points"),
        ));
    }
    if row != points {
        return Err(err(
            lines.len(),
            format!("the header says {points} points but the file has {row}"),
        ));
    }
    let output_columns = columns.split_off(split);
    let outputs = cols.split_off(split);
    Ok(Golden {
        header,
        inputs: cols,
        outputs,
        input_columns: columns,
        output_columns,
    })
}

/// A golden opened for comparison, in either format: its identity, and its
/// output columns read a point range at a time.
#[derive(Debug)]
pub struct Record {
    pub path: PathBuf,
    pub header: Header,
    /// (leaf name, kind) of the inputs and of the outputs.
    pub inputs: Vec<(String, ScalarKind)>,
    pub outputs: Vec<(String, ScalarKind)>,
    body: Body,
}

#[derive(Debug)]
enum Body {
    /// A CSV golden, parsed whole.
    Csv {
        input_columns: Vec<Vec<u32>>,
        output_columns: Vec<Vec<u32>>,
    },
    /// A compact golden: header and index read, blocks on demand.
    Compact(compact::Blocks),
}

/// Open the golden at `path` in the format its first line names (a CSV
/// golden is read whole; a compact one only up to its index). Every problem
/// names the file and the line or block.
pub fn open(path: &Path, limits: &Limits) -> Result<Record, Diagnostic> {
    use std::io::Read;
    let mut first = [0u8; 64];
    let n = std::fs::File::open(path)
        .and_then(|f| f.take(first.len() as u64).read(&mut first))
        .unwrap_or(0);
    if first[..n].starts_with(compact::MAGIC.as_bytes()) {
        compact::open(path, limits).map(|parts| Record::compact(path, parts))
    } else {
        Ok(Record::from_csv(path, read_with(path, limits)?))
    }
}

/// Read a compact golden held in memory (as [`open`] would read the file
/// `path`).
pub fn parse_compact(path: &Path, bytes: Vec<u8>, limits: &Limits) -> Result<Record, Diagnostic> {
    compact::parse(path, bytes, limits).map(|parts| Record::compact(path, parts))
}

impl Record {
    /// A record of a compact golden read from `path`: what `compact::open`
    /// and `compact::parse` give.
    fn compact(path: &Path, (header, inputs, outputs, blocks): compact::Opened) -> Record {
        Record {
            path: path.to_path_buf(),
            header,
            inputs,
            outputs,
            body: Body::Compact(blocks),
        }
    }

    /// A record of a CSV golden read from `path`.
    pub fn from_csv(path: &Path, g: Golden) -> Record {
        Record {
            path: path.to_path_buf(),
            header: g.header,
            inputs: g.inputs,
            outputs: g.outputs,
            body: Body::Csv {
                input_columns: g.input_columns,
                output_columns: g.output_columns,
            },
        }
    }

    /// The golden's format.
    pub fn format(&self) -> Format {
        match self.body {
            Body::Csv { .. } => Format::Csv,
            Body::Compact(_) => Format::Compact,
        }
    }

    /// Points recorded.
    pub fn len(&self) -> usize {
        match &self.body {
            Body::Csv { output_columns, .. } => {
                output_columns.first().map_or(self.header.points, Vec::len)
            }
            Body::Compact(_) => self.header.points,
        }
    }

    /// Whether the golden holds no points.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    fn range_err(&self, range: &Range<usize>) -> Diagnostic {
        Diagnostic::without_position(
            &self.path,
            format!(
                "points {}..{} asked for, but the golden holds {} points",
                range.start,
                range.end,
                self.len()
            ),
        )
    }

    /// The output columns of points `range` (column `c`, element `i` is
    /// point `range.start + i`), bit-exact. A compact golden decodes only
    /// the blocks holding them.
    pub fn read_outputs(&self, range: Range<usize>) -> Result<Vec<Vec<u32>>, Diagnostic> {
        match &self.body {
            Body::Csv { output_columns, .. } => {
                if range.start > range.end || range.end > self.len() {
                    return Err(self.range_err(&range));
                }
                Ok(output_columns
                    .iter()
                    .map(|c| c[range.clone()].to_vec())
                    .collect())
            }
            Body::Compact(b) => b.read_outputs(range),
        }
    }

    /// Check the check's input columns of points `range` against the
    /// golden's: a CSV golden compares every value, a compact one the hash
    /// of every block wholly inside `range`. Returns the number of points
    /// it could not check (those of a compact golden's blocks that `range`
    /// cuts: 0 when the range is the whole golden or ends on block bounds).
    /// A difference names the golden's line (CSV) or block (compact).
    pub fn check_inputs(
        &self,
        range: Range<usize>,
        input_columns: &[Vec<u32>],
    ) -> Result<usize, Diagnostic> {
        let rerecord = format!("re-record with `shadegate record {}`", self.header.check);
        match &self.body {
            Body::Csv {
                input_columns: mine,
                ..
            } => {
                if range.start > range.end
                    || range.end > self.len()
                    || input_columns.len() != mine.len()
                    || input_columns.iter().any(|c| c.len() != range.len())
                {
                    return Err(self.range_err(&range));
                }
                let differs = |i: usize| {
                    mine.iter()
                        .zip(input_columns)
                        .any(|(a, b)| a[range.start + i] != b[i])
                };
                if let Some(i) = (0..range.len()).find(|&i| differs(i)) {
                    let text = std::fs::read_to_string(&self.path).unwrap_or_default();
                    let p = range.start + i;
                    return Err(Diagnostic::at_location(
                        &self.path,
                        &text,
                        (9 + p) as u32,
                        1,
                        1,
                        format!("the golden's inputs differ from the check's at point {p} (the argument expressions changed?); {rerecord}"),
                    ));
                }
                Ok(0)
            }
            Body::Compact(b) => b.check_inputs(range, input_columns),
        }
    }
}

/// What a golden must have been recorded from, for [`check_identity`].
pub struct Identity<'a> {
    pub check: &'a str,
    pub shader: &'a str,
    pub function: &'a str,
    pub sweep: &'a str,
    pub points: usize,
    pub inputs: &'a [(String, ScalarKind)],
    pub outputs: &'a [(String, ScalarKind)],
    /// The check's input columns at points `first..` of the sweep (all of
    /// them, or one shard's share: `run --shard`).
    pub input_columns: &'a [Vec<u32>],
    pub first: usize,
}

/// Check that the golden `g` (opened from `path`) was recorded from
/// `want`: its check, shader, function, sweep, point count, columns and the
/// input values of `want`'s points ([`Record::check_inputs`]). A mismatch
/// names the golden's line (or block) and the command that re-records it.
/// (A changed shader hash is not an error: it is what a golden compares.)
pub fn check_identity(path: &Path, g: &Record, want: &Identity) -> Result<(), Diagnostic> {
    let h = &g.header;
    let text = || {
        let mut t = String::new();
        use std::io::Read;
        // The header lines are all a located error shows.
        let _ = std::fs::File::open(path).map(|f| f.take(1 << 20).read_to_string(&mut t));
        t
    };
    let rerecord = format!("re-record with `shadegate record {}`", want.check);
    let mismatch = |line: u32, what: &str, found: &str, expected: &str| {
        Err(Diagnostic::at_location(
            path,
            &text(),
            line,
            1,
            1,
            format!("golden {what} is `{found}` but the check has `{expected}`; {rerecord}"),
        ))
    };
    if h.check != want.check {
        return mismatch(2, "check", &h.check, want.check);
    }
    if h.shader != want.shader {
        return mismatch(3, "shader", &h.shader, want.shader);
    }
    if h.function != want.function {
        return mismatch(4, "function", &h.function, want.function);
    }
    if h.sweep != want.sweep {
        return mismatch(6, "sweep", &h.sweep, want.sweep);
    }
    let rows = g.len();
    if h.points != want.points || rows != want.points {
        return mismatch(
            7,
            "point count",
            &format!("{} ({rows} rows)", h.points),
            &want.points.to_string(),
        );
    }
    if g.inputs != want.inputs || g.outputs != want.outputs {
        let cols = |v: &[(String, ScalarKind)]| {
            v.iter()
                .map(|(n, k)| format!("{n}:{}", k.wgsl()))
                .collect::<Vec<_>>()
                .join(",")
        };
        return mismatch(
            8,
            "column list",
            &cols(&[g.inputs.clone(), g.outputs.clone()].concat()),
            &cols(&[want.inputs.to_vec(), want.outputs.to_vec()].concat()),
        );
    }
    let n = want.input_columns.first().map_or(0, Vec::len);
    g.check_inputs(want.first..want.first + n, want.input_columns)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sample() -> Golden {
        Golden {
            header: Header {
                check: "c".into(),
                shader: "s.wgsl".into(),
                function: "f".into(),
                shader_hash: "00ff".into(),
                sweep: "x = list(1.0)".into(),
                points: 4,
            },
            inputs: vec![("x".into(), ScalarKind::F32), ("k".into(), ScalarKind::I32)],
            outputs: vec![("result".into(), ScalarKind::F32)],
            input_columns: vec![
                vec![
                    0.1f32.to_bits(),
                    f32::from_bits(1).to_bits(),
                    (-0.0f32).to_bits(),
                    3.0e38f32.to_bits(),
                ],
                vec![-5i32 as u32, 0, 7, i32::MIN as u32],
            ],
            output_columns: vec![vec![
                f32::NAN.to_bits(),
                0x7fc0_0123,
                f32::INFINITY.to_bits(),
                1.0f32.to_bits(),
            ]],
        }
    }

    #[test]
    fn values_round_trip_bit_exact() {
        let back = parse(Path::new("c.csv"), &render(&sample())).unwrap();
        assert_eq!(back, sample());
    }

    /// A golden whose lines end in a carriage return and a line feed (as a
    /// checkout that converts line endings leaves it) reads as the same
    /// dataset; a header value that itself ends in, or holds, a control
    /// character is an error at its line, since `str::lines` would take its
    /// last carriage return for part of the line ending and the value would
    /// not read back as written. The compact format's header reads the same
    /// way. (Found by the `golden` fuzz target: a shader value ending in
    /// carriage returns lost one each time it was written and read.)
    #[test]
    fn crlf_line_endings_read_and_control_characters_in_header_values_are_refused() {
        let path = Path::new("c.csv");
        let text = render(&sample());
        let crlf = text.replace('\n', "\r\n");
        assert_eq!(parse(path, &crlf).unwrap(), sample());
        for (from, to, line) in [
            ("# shader: s.wgsl\n", "# shader: s.wgsl\r\r\n", 3),
            ("# shader: s.wgsl\n", "# shader: s\r.wgsl\n", 3),
            ("# check: c\n", "# check: c\t\n", 2),
            (
                "# sweep: x = list(1.0)\n",
                "# sweep: x = list(1.0)\u{7}\n",
                6,
            ),
        ] {
            let bad = text.replacen(from, to, 1);
            assert_ne!(bad, text);
            let e = parse(path, &bad).unwrap_err();
            assert_eq!(e.line, line, "{e}");
            assert!(e.message.contains("control character U+"), "{e}");
            let compact = compact_of(&sample(), 64);
            let at = compact
                .windows(from.len())
                .position(|w| w == from.as_bytes())
                .unwrap();
            let mut b = compact.clone();
            b.splice(at..at + from.len(), to.bytes());
            let e = open_bytes(b).unwrap_err();
            assert_eq!(e.line, line, "{e}");
            assert!(e.message.contains("control character U+"), "{e}");
        }
        // The column is the value's: `# shader: s` is 11 characters.
        let e = parse(
            path,
            &text.replacen("# shader: s.wgsl\n", "# shader: s\r.wgsl\n", 1),
        )
        .unwrap_err();
        assert!(e.message.contains("U+000D at character 12"), "{e}");
    }

    /// A header that could not be read back as written is refused before
    /// anything is written, in either format, naming the field.
    #[test]
    fn a_header_value_with_a_control_character_is_not_written() {
        let dir = std::env::temp_dir().join(format!("shadegate-unwritable-{}", std::process::id()));
        let mut g = sample();
        g.header.shader = "lib.wgsl\r".into();
        for rel in ["c.csv", "c.golden"] {
            let e = write_in(&dir, Path::new(rel), &g, false).unwrap_err();
            assert!(e.contains("`shader` header value"), "{e}");
            assert!(e.contains("U+000D"), "{e}");
            assert!(!dir.join(rel).exists());
            let e = write(&dir.join(rel), &g).unwrap_err();
            assert!(e.contains("U+000D"), "{e}");
            assert!(!dir.join(rel).exists());
        }
        g.header.shader = "s.wgsl".into();
        g.header.check = "two\nlines".into();
        let e = write_in(&dir, Path::new("c.csv"), &g, false).unwrap_err();
        assert!(e.contains("cannot record check `two\\nlines`"), "{e}");
        assert!(e.contains("`check` header value"), "{e}");
        assert!(sample().header.unwritable().is_none());
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn corrupt_and_truncated_files_name_the_line() {
        let text = "# shadegate golden dataset, format 1\n# check: c\n# shader: s\n# function: f\n# shader-hash: 0\n# sweep: x\n# points: 2\nx:f32,result:f32\n1.0,2.0\n1.0,zz\n# end\n";
        let e = parse(Path::new("g.csv"), text).unwrap_err();
        assert_eq!(e.line, 10);
        assert!(e.message.contains("`zz` is not a valid f32"), "{e}");
        let e = parse(
            Path::new("g.csv"),
            &text.replace("1.0,zz\n# end\n", "1.0,3.0\n"),
        )
        .unwrap_err();
        assert!(e.message.contains("truncated"), "{e}");
        let e = parse(
            Path::new("g.csv"),
            &text.replace("# function: f", "# functoin: f"),
        )
        .unwrap_err();
        assert_eq!(e.line, 4);
    }

    /// Every column kind, with NaN payloads (quiet, signalling, negative),
    /// signed zeros, subnormals and infinities, over `n` points.
    fn every_kind(n: usize) -> Golden {
        let f32s = [
            0x7fc0_0123,
            0x7f80_0001,
            0xffc0_0001,
            (-0.0f32).to_bits(),
            1,
            f32::INFINITY.to_bits(),
            f32::NEG_INFINITY.to_bits(),
            0.1f32.to_bits(),
        ];
        let f16s = [0x7e01, 0x7c01, 0x8000, 0x0001, 0x7c00, 0x3c00, 0xfe00];
        let col = |f: &dyn Fn(usize) -> u32| (0..n).map(f).collect::<Vec<u32>>();
        Golden {
            header: Header {
                check: "kinds".into(),
                shader: "s.wgsl".into(),
                function: "f".into(),
                shader_hash: "00ff".into(),
                sweep: "x = linear(0.0, 1.0, N)".into(),
                points: n,
            },
            inputs: vec![("x".into(), ScalarKind::F32)],
            outputs: vec![
                ("result.a".into(), ScalarKind::F32),
                ("result.b".into(), ScalarKind::F16),
                ("result.c".into(), ScalarKind::I32),
                ("result.d".into(), ScalarKind::U32),
                ("result.e".into(), ScalarKind::Bool),
            ],
            input_columns: vec![col(&|i| (i as f32 / n as f32).to_bits())],
            output_columns: vec![
                col(&|i| {
                    if i % 3 == 0 {
                        f32s[i % f32s.len()]
                    } else {
                        (i as f32 * 0.37).sin().to_bits()
                    }
                }),
                col(&|i| f16s[i % f16s.len()]),
                col(&|i| (i as i32).wrapping_mul(-7919).wrapping_add(i32::MIN) as u32),
                col(&|i| u32::MAX - i as u32),
                col(&|i| u32::from(i % 5 == 0)),
            ],
        }
    }

    fn compact_of(g: &Golden, block: usize) -> Vec<u8> {
        compact::render(g, block)
    }

    fn open_bytes(bytes: Vec<u8>) -> Result<Record, Diagnostic> {
        parse_compact(Path::new("g.golden"), bytes, &Limits::default())
    }

    #[test]
    fn every_column_kind_round_trips_bit_exact_through_the_compact_format() {
        for (n, block) in [(1000, 64), (4096, 4096), (1, 7), (0, 16), (4097, 4096)] {
            let g = every_kind(n);
            let r = open_bytes(compact_of(&g, block)).unwrap_or_else(|d| panic!("{d}"));
            assert_eq!(r.header, g.header);
            assert_eq!(r.inputs, g.inputs);
            assert_eq!(r.outputs, g.outputs);
            assert_eq!(r.len(), n);
            assert_eq!(r.read_outputs(0..n).unwrap(), g.output_columns, "n {n}");
            assert_eq!(r.check_inputs(0..n, &g.input_columns).unwrap(), 0);
        }
    }

    #[test]
    fn range_reads_equal_slices_of_the_full_read() {
        let g = every_kind(1000);
        let r = open_bytes(compact_of(&g, 64)).unwrap();
        let all = r.read_outputs(0..1000).unwrap();
        let csv = Record::from_csv(Path::new("g.csv"), g.clone());
        for (a, b) in [
            (0, 0),
            (0, 1),
            (63, 65),
            (64, 128),
            (5, 999),
            (999, 1000),
            (100, 700),
        ] {
            let want: Vec<Vec<u32>> = all.iter().map(|c| c[a..b].to_vec()).collect();
            assert_eq!(r.read_outputs(a..b).unwrap(), want, "{a}..{b}");
            assert_eq!(csv.read_outputs(a..b).unwrap(), want, "csv {a}..{b}");
        }
        let e = r.read_outputs(990..1001).unwrap_err();
        assert!(e.message.contains("golden holds 1000 points"), "{e}");
        assert!(csv.read_outputs(990..1001).is_err());
    }

    #[test]
    fn a_changed_input_is_found_by_the_block_hash() {
        let g = every_kind(1000);
        let r = open_bytes(compact_of(&g, 64)).unwrap();
        let mut ins = g.input_columns.clone();
        ins[0][130] ^= 1;
        let e = r.check_inputs(0..1000, &ins).unwrap_err();
        assert!(e.message.contains("block 2 of 16 (points 128..192"), "{e}");
        assert!(e.message.contains("inputs differ"), "{e}");
        assert_eq!(e.line, 10);
        // A range that cuts blocks checks the whole ones inside it and says
        // how many points it could not check.
        let part: Vec<Vec<u32>> = g
            .input_columns
            .iter()
            .map(|c| c[100..300].to_vec())
            .collect();
        assert_eq!(r.check_inputs(100..300, &part).unwrap(), 28 + 44);
        let mut bad = part.clone();
        bad[0][50] ^= 1; // point 150, in block 2, wholly inside
        assert!(r.check_inputs(100..300, &bad).is_err());
        // The CSV form compares every value and names the line.
        let csv = Record::from_csv(Path::new("g.csv"), g.clone());
        let e = csv.check_inputs(0..1000, &ins).unwrap_err();
        assert!(e.message.contains("at point 130"), "{e}");
    }

    /// Where the blocks start in a compact golden's bytes.
    fn data_start(bytes: &[u8]) -> usize {
        let head = bytes.windows(8).position(|w| w == b"\n# data\n").unwrap() + 8;
        let blocks: usize = String::from_utf8_lossy(&bytes[..head])
            .lines()
            .find_map(|l| l.strip_prefix("# blocks: "))
            .unwrap()
            .parse()
            .unwrap();
        head + 20 * blocks
    }

    #[test]
    fn corrupt_truncated_and_oversized_compact_goldens_are_located_errors() {
        let g = every_kind(1000);
        let good = compact_of(&g, 64);
        let err = |bytes: Vec<u8>| -> Diagnostic {
            match open_bytes(bytes) {
                Err(d) => d,
                Ok(r) => r.read_outputs(0..r.len()).unwrap_err(),
            }
        };
        // A flipped byte inside block 0's compressed data.
        let mut b = good.clone();
        let at = data_start(&b) + 10;
        b[at] ^= 0x55;
        let e = err(b);
        assert!(e.message.contains("block 0 of 16"), "{e}");
        assert!(e.message.contains("corrupt"), "{e}");
        assert!(
            e.message
                .contains("re-record with `shadegate record kinds`"),
            "{e}"
        );
        // A wrong output hash in the index (entry 3).
        let mut b = good.clone();
        let at = data_start(&b) - 20 * 16 + 3 * 20 + 12;
        b[at] ^= 1;
        let e = err(b);
        assert!(
            e.message.contains("block 3 of 16") && e.message.contains("hash"),
            "{e}"
        );
        // Truncated anywhere: in the blocks, in the index, in the header.
        for cut in [good.len() - 1, data_start(&good) - 5, 40] {
            let e = err(good[..cut].to_vec());
            assert!(e.line >= 1, "{e}");
            assert!(
                e.message.contains("truncated") || e.message.contains("expected the header line"),
                "cut at {cut}: {e}"
            );
        }
        // Trailing bytes.
        let mut b = good.clone();
        b.push(0);
        assert!(err(b).message.contains("trailing bytes"));
        // Claims beyond the limits or the file: points, block size, blocks.
        let text = String::from_utf8_lossy(&good[..data_start(&good)]).into_owned();
        let with = |from: &str, to: &str| {
            let mut b = good.clone();
            let at = text.find(from).unwrap();
            b.splice(at..at + from.len(), to.bytes());
            b
        };
        let e = err(with("# points: 1000", "# points: 1000000000000000000"));
        assert_eq!(e.line, 7, "{e}");
        assert!(e.message.contains("`points_per_check` limit"), "{e}");
        let e = err(with("# block: 64", "# block: 0"));
        assert_eq!(e.line, 9, "{e}");
        let e = err(with("# block: 64", "# block: 99999999"));
        assert_eq!(e.line, 9, "{e}");
        let e = err(with("# blocks: 16", "# blocks: 17"));
        assert_eq!(e.line, 10, "{e}");
        let e = err(with("# points: 1000\n", "# points: 268435456\n"));
        assert_eq!(e.line, 10, "{e}");
        // A block that decodes to more than its points need: a length in
        // the index that swallows the next block makes it corrupt, not big.
        let mut b = good.clone();
        let at = data_start(&b) - 20 * 16;
        let len0 = u32::from_le_bytes(b[at..at + 4].try_into().unwrap());
        let len1 = u32::from_le_bytes(b[at + 20..at + 24].try_into().unwrap());
        b[at..at + 4].copy_from_slice(&(len0 + len1).to_le_bytes());
        b[at + 20..at + 24].copy_from_slice(&0u32.to_le_bytes());
        let e = err(b);
        assert!(
            e.message.contains("block 0 of 16") || e.message.contains("block 1 of 16"),
            "{e}"
        );
        // Not a compact golden at all.
        let e = err(b"# shadegate golden dataset, format 1\n".to_vec());
        assert_eq!(e.line, 1, "{e}");
    }
}
