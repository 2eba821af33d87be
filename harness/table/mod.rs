//! Look-up tables that stand in for textures: a 2D grid of f32 texels (1 to 4
//! channels), the sampler state WebGPU gives a `sampler`, and the results WGSL
//! defines for `textureSampleLevel`, `textureSample` and `textureLoad` on a
//! `texture_2d<f32>` bound to such a table ([`sample`]).
//!
//! A table comes from a data file in the plain text format [`parse`] reads
//! (see README "Look-up tables in place of textures") or from a function
//! evaluated at texel centres ([`Table::from_fn`]; the suite uses it for the
//! registry's models). Layout: texel `(x, y)` is `data[(y * width + x) *
//! channels + c]`; row `y = 0` is the first row of the file and the one at
//! texture coordinate `v` in `[0, 1/height)` (WebGPU puts texel `(0, 0)` at
//! the origin of texture coordinates).
//!
//! This module knows nothing of the evaluator or the suite: the evaluator
//! samples a table per lane through [`sample`], the suite builds tables.

pub mod sample;

use std::path::Path;
use std::sync::Arc;

use crate::diagnostic::Diagnostic;
use crate::limits::{Limit, Limits};

pub use sample::{Address, Filter, Sampler};

/// A 2D table of f32 texels with 1 to 4 channels.
#[derive(Clone, Debug, PartialEq)]
pub struct Table {
    width: u32,
    height: u32,
    channels: u32,
    data: Vec<f32>,
}

impl Table {
    /// A table from its texels, row by row (`y = 0` first), `channels` values
    /// per texel. `None` when a size is zero, `channels` is not 1 to 4, or
    /// `data` has the wrong length.
    pub fn new(width: u32, height: u32, channels: u32, data: Vec<f32>) -> Option<Table> {
        let n = (width as usize)
            .checked_mul(height as usize)?
            .checked_mul(channels as usize)?;
        if width == 0 || height == 0 || !(1..=4).contains(&channels) || data.len() != n {
            return None;
        }
        Some(Table {
            width,
            height,
            channels,
            data,
        })
    }

    /// A `width × height` table whose texel `(x, y)` holds `f(u, v)` rounded
    /// to f32, at the texel centre `u = (x + ½) / width`, `v = (y + ½) /
    /// height` (the texture coordinates that sample the texel exactly).
    /// `f` writes `channels` values.
    pub fn from_fn(
        width: u32,
        height: u32,
        channels: u32,
        f: impl Fn(f64, f64, &mut [f64]),
    ) -> Option<Table> {
        let mut data = Vec::with_capacity(width as usize * height as usize * channels as usize);
        let mut out = vec![0.0; channels as usize];
        for y in 0..height {
            for x in 0..width {
                let u = (f64::from(x) + 0.5) / f64::from(width);
                let v = (f64::from(y) + 0.5) / f64::from(height);
                f(u, v, &mut out);
                data.extend(out.iter().map(|&c| c as f32));
            }
        }
        Table::new(width, height, channels, data)
    }

    pub fn width(&self) -> u32 {
        self.width
    }

    pub fn height(&self) -> u32 {
        self.height
    }

    pub fn channels(&self) -> u32 {
        self.channels
    }

    /// The stored values, row by row.
    pub fn data(&self) -> &[f32] {
        &self.data
    }

    /// Texel `(x, y)` (in range) as the `vec4<f32>` a shader reads: channels
    /// the table lacks read as green 0, blue 0, alpha 1 (WebGPU, "Texel
    /// formats": an `r32float` texel reads `(r, 0, 0, 1)`, `rg32float`
    /// `(r, g, 0, 1)`).
    pub fn texel(&self, x: u32, y: u32) -> [f32; 4] {
        let c = self.channels as usize;
        let at = (y as usize * self.width as usize + x as usize) * c;
        let mut t = [0.0, 0.0, 0.0, 1.0];
        t[..c].copy_from_slice(&self.data[at..at + c]);
        t
    }

    /// Write the table in the data file format [`parse`] reads (values in
    /// Rust's shortest round-trip form, so a file written and read gives the
    /// same bits).
    pub fn to_text(&self) -> String {
        let mut s = format!(
            "width,height,channels\n{},{},{}\n",
            self.width, self.height, self.channels
        );
        for t in self.data.chunks(self.channels as usize) {
            let row: Vec<String> = t.iter().map(|v| format!("{v:?}")).collect();
            s.push_str(&row.join(","));
            s.push('\n');
        }
        s
    }
}

/// The WGSL module-scope variable a binding is for: by name, or by its
/// `@group(g) @binding(b)` attributes.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Resource {
    Name(String),
    Binding { group: u32, binding: u32 },
}

impl Resource {
    /// Whether this names the variable `name` declared with `binding`.
    pub fn matches(&self, name: Option<&str>, binding: Option<(u32, u32)>) -> bool {
        match self {
            Resource::Name(n) => name == Some(n.as_str()),
            Resource::Binding { group, binding: b } => binding == Some((*group, *b)),
        }
    }
}

impl std::fmt::Display for Resource {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Resource::Name(n) => write!(f, "`{n}`"),
            Resource::Binding { group, binding } => {
                write!(f, "`@group({group}) @binding({binding})`")
            }
        }
    }
}

/// What a texture or sampler variable is bound to.
#[derive(Clone, Debug, PartialEq)]
pub enum Bound {
    Table(Arc<Table>),
    Sampler(Sampler),
}

/// The tables and samplers a check binds to a shader's `texture_2d<f32>` and
/// `sampler` variables; what the evaluator reads where WGSL samples or loads.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Bindings {
    pub entries: Vec<(Resource, Bound)>,
}

impl Bindings {
    /// No bindings: every texture access is refused as not supported.
    pub const NONE: Bindings = Bindings {
        entries: Vec::new(),
    };

    /// The binding of the variable `name` declared with `binding` (the first
    /// entry that names it).
    pub fn find(&self, name: Option<&str>, binding: Option<(u32, u32)>) -> Option<&Bound> {
        self.entries
            .iter()
            .find(|(r, _)| r.matches(name, binding))
            .map(|(_, b)| b)
    }

    pub fn is_empty(&self) -> bool {
        self.entries.is_empty()
    }
}

/// Read a table file: at most [`Limits::table_texels`] texels, and the file
/// read only up to the bytes such a table can take.
pub fn load(path: &Path, limits: &Limits) -> Result<Table, Diagnostic> {
    let cap = max_bytes(limits);
    let meta = std::fs::metadata(path)
        .map_err(|e| Diagnostic::without_position(path, format!("cannot read table file: {e}")))?;
    if meta.len() > cap {
        return Err(Diagnostic::without_position(
            path,
            format!(
                "the table file has {} bytes, more than a table of the `{}` limit of {} texels \
                 can take ({cap} bytes); {}",
                meta.len(),
                Limit::TableTexels,
                limits.table_texels,
                Limit::TableTexels.how_to_raise()
            ),
        ));
    }
    let text = std::fs::read_to_string(path)
        .map_err(|e| Diagnostic::without_position(path, format!("cannot read table file: {e}")))?;
    parse(path, &text, limits)
}

/// Bytes a table file of [`Limits::table_texels`] texels may take: a header,
/// then per texel four values of at most 64 characters each with their
/// separators.
fn max_bytes(limits: &Limits) -> u64 {
    4096u64.saturating_add(limits.table_texels.saturating_mul(4 * 65 + 2))
}

/// Parse the text of a table file (`path` names it in errors).
///
/// The format, strictly: lines starting with `#` and blank lines are
/// skipped anywhere; the first other line is exactly `width,height,channels`;
/// the next gives the three as positive integers (channels 1 to 4); then one
/// line per texel, row `y = 0` first and `x` fastest within a row, each with
/// `channels` comma-separated finite decimal numbers (rounded once to f32).
/// Anything else (a missing or extra texel or value, spaces, a non-finite
/// number) is an error naming the file, line and column.
pub fn parse(path: &Path, text: &str, limits: &Limits) -> Result<Table, Diagnostic> {
    let err = |line: usize, col: usize, msg: String| {
        let l = text.lines().nth(line - 1).unwrap_or("");
        Diagnostic::at_location(
            path,
            text,
            line as u32,
            col as u32,
            l.len().saturating_sub(col - 1).max(1) as u32,
            msg,
        )
    };
    let mut lines = text
        .lines()
        .enumerate()
        .map(|(i, l)| (i + 1, l.strip_suffix('\r').unwrap_or(l)))
        .filter(|(_, l)| !l.is_empty() && !l.starts_with('#'));
    let Some((n, head)) = lines.next() else {
        return Err(Diagnostic::without_position(
            path,
            "the table file is empty: expected the header line `width,height,channels`",
        ));
    };
    if head != "width,height,channels" {
        return Err(err(
            n,
            1,
            format!("expected the header line `width,height,channels`, found `{head}`"),
        ));
    }
    let Some((n, sizes)) = lines.next() else {
        return Err(err(
            n,
            1,
            "the header is not followed by the sizes line (e.g. `32,32,2`)".into(),
        ));
    };
    let mut dims = [0u32; 3];
    let mut col = 1;
    let parts: Vec<&str> = sizes.split(',').collect();
    if parts.len() != 3 {
        return Err(err(
            n,
            1,
            format!(
                "expected three sizes `width,height,channels`, found {} field(s)",
                parts.len()
            ),
        ));
    }
    for (i, (p, name)) in parts
        .iter()
        .zip(["width", "height", "channels"])
        .enumerate()
    {
        dims[i] = match p.parse::<u32>() {
            Ok(v) if v > 0 && p.bytes().all(|b| b.is_ascii_digit()) => v,
            _ => {
                return Err(err(
                    n,
                    col,
                    format!("{name}: expected a positive integer, found `{p}`"),
                ))
            }
        };
        col += p.len() + 1;
    }
    let [width, height, channels] = dims;
    if channels > 4 {
        let at = parts[0].len() + parts[1].len() + 3;
        return Err(err(
            n,
            at,
            format!("channels: a texture has 1 to 4 channels, found {channels}"),
        ));
    }
    let texels = u64::from(width) * u64::from(height);
    if texels > limits.table_texels {
        return Err(err(
            n,
            1,
            format!(
                "a {width} × {height} table has {texels} texels, more than the `{}` limit of {}; {}",
                Limit::TableTexels,
                limits.table_texels,
                Limit::TableTexels.how_to_raise()
            ),
        ));
    }
    let c = channels as usize;
    let mut data = Vec::with_capacity(texels as usize * c);
    let mut last = n;
    for (n, line) in lines {
        let index = (data.len() / c) as u64;
        if index == texels {
            return Err(err(
                n,
                1,
                format!("extra line: the header promises {width} × {height} = {texels} texels"),
            ));
        }
        let mut col = 1;
        let mut count = 0;
        for field in line.split(',') {
            count += 1;
            if count > c {
                return Err(err(
                    n,
                    col,
                    format!(
                        "texel ({}, {}) has more than {c} value(s)",
                        index % u64::from(width),
                        index / u64::from(width)
                    ),
                ));
            }
            let ok = !field.is_empty()
                && field
                    .bytes()
                    .all(|b| b.is_ascii_digit() || matches!(b, b'+' | b'-' | b'.' | b'e' | b'E'));
            match field.parse::<f32>() {
                Ok(v) if ok && v.is_finite() => data.push(v),
                _ => {
                    return Err(err(
                        n,
                        col,
                        format!("expected a finite decimal number, found `{field}`"),
                    ))
                }
            }
            col += field.len() + 1;
        }
        if count < c {
            return Err(err(
                n,
                col.saturating_sub(1).max(1),
                format!(
                    "texel ({}, {}) has {count} value(s), expected {c}",
                    index % u64::from(width),
                    index / u64::from(width)
                ),
            ));
        }
        last = n;
    }
    let have = (data.len() / c) as u64;
    if have < texels {
        return Err(err(
            last,
            1,
            format!(
                "the file ends after {have} texel(s); the header promises {width} × {height} = \
                 {texels}"
            ),
        ));
    }
    Ok(Table::new(width, height, channels, data).expect("sizes checked"))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p(text: &str) -> Result<Table, Diagnostic> {
        parse(Path::new("t.csv"), text, &Limits::default())
    }

    #[test]
    fn a_table_file_parses_and_round_trips() {
        let t = p("# a comment\nwidth,height,channels\n2,1,2\n0.5,1\n-2.5e-1,3\n").unwrap();
        assert_eq!((t.width(), t.height(), t.channels()), (2, 1, 2));
        assert_eq!(t.data(), &[0.5, 1.0, -0.25, 3.0]);
        assert_eq!(t.texel(1, 0), [-0.25, 3.0, 0.0, 1.0]);
        assert_eq!(p(&t.to_text()).unwrap(), t);
        let odd = Table::new(1, 1, 1, vec![0.1 + 1e-9]).unwrap();
        assert_eq!(p(&odd.to_text()).unwrap(), odd);
    }

    #[track_caller]
    fn bad(text: &str, line: u32, col: u32, words: &str) {
        let e = p(text).unwrap_err();
        assert_eq!((e.line, e.column), (line, col), "{}", e.rendered);
        assert!(e.message.contains(words), "{}", e.message);
        assert!(e.rendered.contains("t.csv"), "{}", e.rendered);
    }

    #[test]
    fn bad_table_files_are_located() {
        bad("w,h,c\n1,1,1\n0\n", 1, 1, "header line");
        bad("width,height,channels\n1,1\n", 2, 1, "three sizes");
        bad("width,height,channels\n1,x,1\n", 2, 3, "height");
        bad("width,height,channels\n1,0,1\n", 2, 3, "height");
        bad("width,height,channels\n1,1,5\n", 2, 5, "1 to 4 channels");
        bad(
            "width,height,channels\n2,1,2\n1,2\n3\n",
            4,
            2,
            "has 1 value(s), expected 2",
        );
        bad(
            "width,height,channels\n2,1,1\n1,2\n",
            3,
            3,
            "more than 1 value",
        );
        bad(
            "width,height,channels\n1,1,1\n nan\n",
            3,
            1,
            "finite decimal",
        );
        bad(
            "width,height,channels\n1,1,1\ninf\n",
            3,
            1,
            "finite decimal",
        );
        bad(
            "width,height,channels\n1,1,1\n1e39\n",
            3,
            1,
            "finite decimal",
        );
        bad("width,height,channels\n1,1,1\n1\n2\n", 4, 1, "extra line");
        bad(
            "width,height,channels\n2,2,1\n1\n2\n",
            4,
            1,
            "ends after 2 texel(s)",
        );
        let small = Limits {
            table_texels: 3,
            ..Limits::default()
        };
        let e = parse(Path::new("t.csv"), "width,height,channels\n2,2,1\n", &small).unwrap_err();
        assert!(e.message.contains("table_texels"), "{}", e.message);
    }

    #[test]
    fn from_fn_evaluates_at_texel_centres() {
        let t = Table::from_fn(4, 2, 2, |u, v, o| {
            o[0] = u;
            o[1] = v;
        })
        .unwrap();
        assert_eq!(t.texel(0, 0)[..2], [0.125, 0.25]);
        assert_eq!(t.texel(3, 1)[..2], [0.875, 0.75]);
    }
}
