//! The suite file (`shadegate.toml`): a list of checks, each binding a WGSL
//! function, a sweep, argument expressions, a reference model and/or golden
//! dataset, and a tolerance with its written reason.
//!
//! ```toml
//! [[check]]
//! name = "ggx_ndf"
//! shader = "shaders/terrace_brdf.wgsl"
//! function = "d_ggx"
//! reference = "ggx_ndf"                 # a model of `shadegate models`
//! golden = true                         # goldens/<name>.csv (or a path)
//! args = { alpha = "roughness * roughness" }
//! reference_args = { alpha = "roughness * roughness" }
//!
//! [check.sweep]
//! n_dot_h = { linear = [0.0, 1.0, 256] }
//! roughness = { edges = [0.0, 1.0] }
//! v = { direction = { theta = { linear = [0, 89, 16] }, phi = { list = [0, 90] } } }
//!
//! [check.random]
//! count = 1000
//! seed = 7
//!
//! [check.tolerance]
//! rel = 1e-5
//! ulp = 8
//! reason = "f32 rounding of a dozen operations"
//! ```
//!
//! Arguments without an expression take the sweep parameter of the same
//! name. Every problem is reported with the file, line and key.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::Deserialize;
use toml::Spanned;

use crate::compare::{NanPolicy, Tolerance};
use crate::limits::{Limit, Limits};
use crate::sweep::{Domain, Expr, Random, Sweep};
use crate::wgsl::Diagnostic;

mod textures;
pub use textures::{SamplerBinding, TableBinding, TableSource, Textures};

/// The number model a check evaluates with.
pub use crate::eval::Arithmetic;

/// One check, validated.
#[derive(Clone, Debug)]
pub struct Check {
    pub name: String,
    /// As written in the suite (relative to the suite's folder).
    pub shader: PathBuf,
    pub function: String,
    pub overrides: BTreeMap<String, f64>,
    pub arithmetic: Arithmetic,
    pub sweep: Sweep,
    /// Expression per function argument name (missing ones default to the
    /// sweep parameter of the same name).
    pub args: BTreeMap<String, Expr>,
    pub reference: Option<&'static crate::reference::Model>,
    pub reference_args: BTreeMap<String, Expr>,
    /// Path of the golden dataset, relative to the suite's folder (inside
    /// it unless [`Options::golden_outside`] allowed otherwise).
    pub golden: Option<PathBuf>,
    pub tolerance: Tolerance,
    pub golden_tolerance: Tolerance,
    /// A second WGSL function whose result is the expected value.
    pub twin: Option<Twin>,
    /// A property the function's results must keep.
    pub property: Option<PropertyCheck>,
    /// Line of the check in the suite file (for messages).
    pub line: u32,
    /// Byte span of each `args` entry in the suite text (for
    /// [`Suite::check_args`]).
    pub args_at: BTreeMap<String, std::ops::Range<usize>>,
    /// Byte span of the `golden` key's value in the suite text.
    pub golden_at: Option<std::ops::Range<usize>>,
    /// Look-up tables and samplers bound to the shader's texture and sampler
    /// variables (`[check.textures.X]`, `[check.samplers.X]`).
    pub textures: Textures,
}

/// The other side of a twin check: a second WGSL function (an `f16` port, a
/// fast approximation) evaluated at the same points, with its own argument
/// mapping; its result is the expected value under the check's tolerance.
#[derive(Clone, Debug)]
pub struct Twin {
    /// As written (relative to the suite's folder); `None`: the check's shader.
    pub shader: Option<PathBuf>,
    pub function: String,
    /// Expression per argument of the twin (missing ones default to the sweep
    /// parameter of the same name).
    pub args: BTreeMap<String, Expr>,
    /// Line of the `twin` key.
    pub line: u32,
}

/// A property check on the check's own function.
#[derive(Clone, Debug)]
pub struct PropertyCheck {
    pub property: Property,
    /// Line of the `property` key.
    pub line: u32,
}

/// What a [`PropertyCheck`] asks of the function.
#[derive(Clone, Debug, PartialEq)]
pub enum Property {
    /// Every result component lies in [min, max] (either may be open); NaN
    /// lies in no range.
    Range { min: Option<f64>, max: Option<f64> },
    /// Every result component is finite.
    Finite,
    /// Swapping the arguments `a` and `b` leaves the result unchanged.
    Reciprocity { a: String, b: String },
    /// Rotating the `rotate` arguments (directions) by `angle` degrees about
    /// the argument `about` (the normal; +z when `None`) leaves the result
    /// unchanged: an isotropic model.
    Isotropy {
        rotate: Vec<String>,
        about: Option<String>,
        angle: f64,
    },
    /// The check's function encodes; `decode` (of `shader`, or the check's
    /// shader) applied to its result gives back its arguments.
    RoundTrip {
        decode: String,
        shader: Option<PathBuf>,
    },
}

impl Property {
    /// Short label, e.g. `result in [0, 1]`, `reciprocity v <-> l`.
    pub fn label(&self) -> String {
        use crate::sweep::fmt_num;
        match self {
            Property::Range {
                min: Some(a),
                max: Some(b),
            } => format!("result in [{}, {}]", fmt_num(*a), fmt_num(*b)),
            Property::Range { min: Some(a), .. } => format!("result >= {}", fmt_num(*a)),
            Property::Range { max: Some(b), .. } => format!("result <= {}", fmt_num(*b)),
            Property::Range { .. } => "result in any range".to_string(),
            Property::Finite => "result finite".to_string(),
            Property::Reciprocity { a, b } => format!("reciprocity {a} <-> {b}"),
            Property::Isotropy {
                rotate,
                about,
                angle,
            } => format!(
                "isotropy: {} rotated {}° about {}",
                rotate.join(", "),
                fmt_num(*angle),
                about.as_deref().unwrap_or("+z")
            ),
            Property::RoundTrip { decode, .. } => format!("round trip through {decode}"),
        }
    }
}

/// A parsed suite file.
#[derive(Clone, Debug)]
pub struct Suite {
    pub path: PathBuf,
    /// Folder the relative paths of the suite are resolved against.
    pub root: PathBuf,
    pub checks: Vec<Check>,
    /// The limits of this run: the defaults, raised or lowered by the
    /// suite's `[limits]` table.
    pub limits: Limits,
    /// Whether golden paths may leave the suite's folder.
    pub golden_outside: bool,
    /// The suite text, for located errors found after parsing.
    pub text: String,
}

/// How a suite is read.
#[derive(Clone, Copy, Debug, Default)]
pub struct Options {
    /// Allow golden paths that are absolute or climb out of the suite's
    /// folder with `..` (the CLI's `--golden-outside`). Off by default: a
    /// golden is written only inside the project.
    pub golden_outside: bool,
}

impl Suite {
    /// A located error about the suite text at byte span `span`.
    pub fn error_at(&self, span: std::ops::Range<usize>, msg: impl Into<String>) -> Diagnostic {
        let lines = LineIndex::new(&self.text);
        Ctx {
            path: &self.path,
            text: &self.text,
            lines: &lines,
        }
        .err(span, msg)
    }

    /// Every `args` key of `check` must name a parameter of its function
    /// (`params`): a typo such as `roughnes` would otherwise be ignored and
    /// the argument silently fed from the sweep.
    pub fn check_args<'a>(
        &self,
        check: &Check,
        params: impl IntoIterator<Item = &'a str> + Clone,
    ) -> Result<(), Diagnostic> {
        for (arg, span) in &check.args_at {
            if !params.clone().into_iter().any(|p| p == arg) {
                let have: Vec<&str> = params.clone().into_iter().collect();
                return Err(self.error_at(
                    span.clone(),
                    format!(
                        "key `args.{arg}`: `{}` has no parameter `{arg}` (has: {})",
                        check.function,
                        have.join(", ")
                    ),
                ));
            }
        }
        Ok(())
    }

    /// A path of the suite resolved against its folder.
    pub fn resolve(&self, p: &Path) -> PathBuf {
        if p.is_absolute() {
            p.to_path_buf()
        } else {
            self.root.join(p)
        }
    }
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSuite {
    #[serde(default)]
    check: Vec<Spanned<RawCheck>>,
    limits: Option<Spanned<toml::Table>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCheck {
    name: Spanned<String>,
    shader: Spanned<String>,
    function: Spanned<String>,
    #[serde(default)]
    overrides: BTreeMap<String, f64>,
    arithmetic: Option<Spanned<String>>,
    seed: Option<u64>,
    reference: Option<Spanned<String>>,
    golden: Option<Spanned<toml::Value>>,
    #[serde(default)]
    args: BTreeMap<Spanned<String>, Spanned<String>>,
    #[serde(default)]
    reference_args: BTreeMap<Spanned<String>, Spanned<String>>,
    sweep: Spanned<toml::Table>,
    random: Option<Spanned<RawRandom>>,
    tolerance: Option<Spanned<RawTolerance>>,
    golden_tolerance: Option<Spanned<RawTolerance>>,
    twin: Option<Spanned<RawTwin>>,
    property: Option<Spanned<toml::Table>>,
    textures: textures::Raw,
    samplers: textures::Raw,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawTwin {
    function: Spanned<String>,
    shader: Option<Spanned<String>>,
    #[serde(default)]
    args: BTreeMap<Spanned<String>, Spanned<String>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRandom {
    count: Spanned<u64>,
    seed: u64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawTolerance {
    abs: Option<OneOrMany>,
    rel: Option<OneOrMany>,
    ulp: Option<OneOrMany>,
    nan: Option<Spanned<String>>,
    reason: Option<Spanned<String>>,
}

#[derive(Deserialize)]
#[serde(untagged)]
enum OneOrMany {
    One(f64),
    Many(Vec<f64>),
}

impl OneOrMany {
    fn vec(self) -> Vec<f64> {
        match self {
            OneOrMany::One(x) => vec![x],
            OneOrMany::Many(v) => v,
        }
    }
}

/// Line and column (1-based) of byte `offset` in `text`.
pub fn line_col(text: &str, offset: usize) -> (u32, u32) {
    LineIndex::new(text).line_col(text, offset)
}

/// The start of every line of a text, so a byte offset finds its line by
/// binary search: locating every check of a large suite stays linear.
struct LineIndex {
    starts: Vec<usize>,
}

impl LineIndex {
    fn new(text: &str) -> LineIndex {
        let mut starts = vec![0];
        starts.extend(text.match_indices('\n').map(|(i, _)| i + 1));
        LineIndex { starts }
    }

    fn line_col(&self, text: &str, offset: usize) -> (u32, u32) {
        let offset = offset.min(text.len());
        let line = self.starts.partition_point(|&s| s <= offset);
        let col = offset - self.starts[line - 1] + 1;
        (line as u32, col as u32)
    }

    /// Byte offset of the start of 1-based `line`.
    fn start(&self, line: u32) -> usize {
        self.starts[(line.max(1) as usize - 1).min(self.starts.len() - 1)]
    }
}

struct Ctx<'a> {
    path: &'a Path,
    text: &'a str,
    lines: &'a LineIndex,
}

impl Ctx<'_> {
    fn err(&self, span: std::ops::Range<usize>, msg: impl Into<String>) -> Diagnostic {
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

    fn line(&self, offset: usize) -> u32 {
        self.lines.line_col(self.text, offset).0
    }
}

/// Read and validate a suite file.
pub fn load(path: &Path) -> Result<Suite, Diagnostic> {
    load_with(path, Options::default())
}

/// [`load`] with options.
pub fn load_with(path: &Path, options: Options) -> Result<Suite, Diagnostic> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| Diagnostic::without_position(path, format!("cannot read suite file: {e}")))?;
    parse_with(path, &text, options)
}

/// Parse and validate suite text; `path` names it in diagnostics and anchors
/// its relative paths.
pub fn parse(path: &Path, text: &str) -> Result<Suite, Diagnostic> {
    parse_with(path, text, Options::default())
}

/// [`parse`] with options.
pub fn parse_with(path: &Path, text: &str, options: Options) -> Result<Suite, Diagnostic> {
    let lines = LineIndex::new(text);
    let cx = Ctx {
        path,
        text,
        lines: &lines,
    };
    let raw: RawSuite = toml::from_str(text).map_err(|e| {
        let span = e.span().unwrap_or(0..0);
        cx.err(span, e.message().trim().to_string())
    })?;
    let limits = match &raw.limits {
        Some(t) => limits_of(&cx, t)?,
        None => Limits::default(),
    };
    if raw.check.len() as u64 > limits.checks_per_suite {
        let l = Limit::ChecksPerSuite;
        let over = &raw.check[limits.checks_per_suite as usize];
        return Err(cx.err(
            over.span().start..over.span().start,
            format!(
                "the suite has {} checks, more than the `{l}` limit of {}; {}",
                raw.check.len(),
                limits.checks_per_suite,
                l.how_to_raise()
            ),
        ));
    }
    let mut checks: Vec<Check> = Vec::new();
    let mut by_name: std::collections::HashMap<String, u32> = Default::default();
    let mut by_golden: std::collections::HashMap<PathBuf, u32> = Default::default();
    for rc in raw.check {
        let span = rc.span();
        let check = convert(&cx, rc.into_inner(), span, &limits, options)?;
        if let Some(prev) = by_name.get(&check.name) {
            return Err(cx.err(
                lines.start(check.line)..lines.start(check.line),
                format!(
                    "duplicate check name `{}` (first defined on line {prev})",
                    check.name
                ),
            ));
        }
        by_name.insert(check.name.clone(), check.line);
        if let (Some(g), Some(at)) = (&check.golden, &check.golden_at) {
            let key = normalize(g);
            if let Some(prev) = by_golden.get(&key) {
                return Err(cx.err(
                    at.clone(),
                    format!(
                        "key `golden`: `{}` is also the golden of the check on line {prev}; each check records its own",
                        g.display()
                    ),
                ));
            }
            by_golden.insert(key, check.line);
        }
        checks.push(check);
    }
    // A golden may not name the suite file or a shader of the suite: record
    // would replace that file with CSV.
    let suite_name = path.file_name().map(PathBuf::from);
    let mut shaders: std::collections::HashMap<PathBuf, &str> = Default::default();
    for c in &checks {
        shaders.entry(normalize(&c.shader)).or_insert(&c.name);
    }
    for c in &checks {
        let (Some(g), Some(at)) = (&c.golden, &c.golden_at) else {
            continue;
        };
        let g = normalize(g);
        let clash = if Some(&g) == suite_name.as_ref() {
            Some("the suite file itself".to_string())
        } else {
            shaders
                .get(&g)
                .map(|name| format!("the shader of check `{name}`"))
        };
        if let Some(what) = clash {
            return Err(cx.err(
                at.clone(),
                format!(
                    "key `golden`: `{}` is {what}; recording would replace it with CSV",
                    g.display()
                ),
            ));
        }
    }
    if checks.is_empty() {
        return Err(cx.err(0..0, "the suite has no `[[check]]` entries"));
    }
    let root = path.parent().map(Path::to_path_buf).unwrap_or_default();
    Ok(Suite {
        path: path.to_path_buf(),
        root,
        checks,
        limits,
        golden_outside: options.golden_outside,
        text: text.to_string(),
    })
}

/// A path with `.` components dropped (lexically; `..` is kept).
fn normalize(p: &Path) -> PathBuf {
    p.components()
        .filter(|c| !matches!(c, std::path::Component::CurDir))
        .collect()
}

/// The `[limits]` table: each key a [`Limit::key`], each value a positive
/// whole number.
fn limits_of(cx: &Ctx, t: &Spanned<toml::Table>) -> Result<Limits, Diagnostic> {
    let mut limits = Limits::default();
    for (key, value) in t.get_ref() {
        let at = key_in(cx.text, t.span(), key);
        let Some(l) = Limit::ALL.iter().copied().find(|l| l.key() == key) else {
            let keys: Vec<_> = Limit::ALL.iter().map(|l| l.key()).collect();
            return Err(cx.err(
                at,
                format!(
                    "key `limits.{key}`: no such limit (limits: {})",
                    keys.join(", ")
                ),
            ));
        };
        let v = match value {
            toml::Value::Integer(i) if *i > 0 => *i as u64,
            other => {
                return Err(cx.err(
                    at,
                    format!("key `limits.{key}`: expected a positive whole number, found {other}"),
                ))
            }
        };
        limits
            .set(l, v)
            .map_err(|m| cx.err(at, format!("key `limits.{key}`: {m}")))?;
    }
    Ok(limits)
}

/// The span of the line inside `table` (a byte range of `text`) that defines `key`
/// (`key = ...`, `"key" = ...` or `key.sub = ...`); the whole table when not found.
fn key_in(text: &str, table: std::ops::Range<usize>, key: &str) -> std::ops::Range<usize> {
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

fn convert(
    cx: &Ctx,
    rc: RawCheck,
    span: std::ops::Range<usize>,
    limits: &Limits,
    options: Options,
) -> Result<Check, Diagnostic> {
    let line = cx.line(rc.name.span().start);
    let name = rc.name.get_ref().clone();
    if name.is_empty()
        || !name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
    {
        return Err(cx.err(
            rc.name.span(),
            "key `name`: expected letters, digits, `_` or `-` (it names the golden file)",
        ));
    }
    let arithmetic = match rc
        .arithmetic
        .as_ref()
        .map(|a| (a.get_ref().as_str(), a.span()))
    {
        None | Some(("exact", _)) => Arithmetic::Exact,
        Some(("spec-bounds", _)) => Arithmetic::SpecBounds {
            seed: rc.seed.unwrap_or(1),
        },
        Some((other, s)) => {
            return Err(cx.err(
                s,
                format!(
                    "key `arithmetic`: expected \"exact\" or \"spec-bounds\", found \"{other}\""
                ),
            ))
        }
    };
    let reference = match &rc.reference {
        None => None,
        Some(r) => Some(crate::reference::find(r.get_ref()).ok_or_else(|| {
            cx.err(
                r.span(),
                format!(
                    "key `reference`: no reference model named `{}` (see `shadegate models`)",
                    r.get_ref()
                ),
            )
        })?),
    };
    let golden = match &rc.golden {
        None => None,
        Some(g) => match g.get_ref() {
            toml::Value::Boolean(true) => Some(PathBuf::from(format!("goldens/{name}.csv"))),
            toml::Value::Boolean(false) => None,
            toml::Value::String(p) => {
                golden_path_ok(p, options)
                    .map_err(|m| cx.err(g.span(), format!("key `golden`: {m}")))?;
                Some(PathBuf::from(p))
            }
            _ => {
                return Err(cx.err(
                    g.span(),
                    "key `golden`: expected true, false or a path string",
                ))
            }
        },
    };
    let golden_at = golden.as_ref().and(rc.golden.as_ref()).map(|g| g.span());
    if reference.is_none() && golden.is_none() && rc.twin.is_none() && rc.property.is_none() {
        return Err(cx.err(
            span.start..span.start,
            format!(
                "check `{name}`: give a `reference` model, a `golden` dataset, a `twin` or a `property`"
            ),
        ));
    }
    let sweep_span = rc.sweep.span();
    let mut params = Vec::new();
    for (key, value) in rc.sweep.get_ref() {
        // The table keeps the file's order (toml's `preserve_order`), which the grid and
        // golden headers depend on; its values carry no spans, so find the key's line.
        let at = key_in(cx.text, sweep_span.clone(), key);
        let d = domain(value, limits).map_err(|m| cx.err(at, format!("key `sweep.{key}`: {m}")))?;
        params.push((key.clone(), d));
    }
    let random = match rc.random {
        None => None,
        Some(r) => {
            let r = r.into_inner();
            if *r.count.get_ref() > limits.points_per_check {
                return Err(cx.err(
                    r.count.span(),
                    format!(
                        "key `random.count`: {}",
                        too_many(*r.count.get_ref(), limits)
                    ),
                ));
            }
            Some(Random {
                count: *r.count.get_ref() as usize,
                seed: r.seed,
            })
        }
    };
    if params.is_empty() {
        return Err(cx.err(
            sweep_span,
            format!("check `{name}`: the sweep has no parameters"),
        ));
    }
    if random.is_none() && params.iter().any(|(_, d)| d.count() == 0) {
        return Err(cx.err(
            sweep_span,
            format!("check `{name}`: a parameter has no values and there are no random points"),
        ));
    }
    let sweep = Sweep { params, random };
    // Every domain's count is within the limit (checked above), but their
    // product may not be, or may not even fit in 64 bits.
    match sweep.checked_len() {
        Some(0) => {
            return Err(cx.err(
                sweep_span,
                format!("check `{name}`: the sweep has no points (a check of nothing would pass)"),
            ))
        }
        Some(n) if n <= limits.points_per_check => {}
        n => {
            let count = n.map_or_else(|| "more than 2^64".to_string(), |n| n.to_string());
            return Err(cx.err(
                sweep_span,
                format!(
                    "check `{name}`: the sweep has {count} points, {}",
                    over_points(limits)
                ),
            ));
        }
    }
    let names: Vec<String> = sweep.params.iter().map(|(n, _)| n.clone()).collect();
    let exprs = |table: &BTreeMap<Spanned<String>, Spanned<String>>,
                 key: &str|
     -> Result<BTreeMap<String, Expr>, Diagnostic> {
        let mut out = BTreeMap::new();
        for (arg, text) in table {
            let arg = arg.get_ref();
            let e = Expr::parse_with(text.get_ref(), limits.expression_depth).map_err(|e| {
                let s = text.span();
                cx.err(
                    s.start + 1 + e.offset..s.end,
                    format!("key `{key}.{arg}`: {}", e.message),
                )
            })?;
            if let Some(v) = e.variables().into_iter().find(|v| !names.contains(v)) {
                return Err(cx.err(
                    text.span(),
                    format!(
                        "key `{key}.{arg}`: `{v}` is not a sweep parameter (have: {})",
                        names.join(", ")
                    ),
                ));
            }
            out.insert(arg.clone(), e);
        }
        Ok(out)
    };
    let args = exprs(&rc.args, "args")?;
    let args_at = rc
        .args
        .keys()
        .map(|k| (k.get_ref().clone(), k.span()))
        .collect();
    let reference_args = exprs(&rc.reference_args, "reference_args")?;
    if let Some(m) = reference {
        for p in m.params {
            if !reference_args.contains_key(p.name) && !names.iter().any(|n| n == p.name) {
                return Err(cx.err(
                    span.start..span.start,
                    format!(
                        "check `{name}`: reference `{}` needs `{}`; add it to `reference_args` or the sweep",
                        m.name, p.name
                    ),
                ));
            }
        }
        if let Some(k) = reference_args
            .keys()
            .find(|k| !m.params.iter().any(|p| p.name == k.as_str()))
        {
            let known: Vec<_> = m.params.iter().map(|p| p.name).collect();
            return Err(cx.err(
                span.start..span.start,
                format!(
                    "key `reference_args.{k}`: `{}` has no parameter `{k}` (has: {})",
                    m.name,
                    known.join(", ")
                ),
            ));
        }
    }
    let twin = match rc.twin {
        None => None,
        Some(t) => {
            let line = line_col(cx.text, t.span().start).0;
            let t = t.into_inner();
            Some(Twin {
                shader: t.shader.map(|s| PathBuf::from(s.into_inner())),
                function: t.function.into_inner(),
                args: exprs(&t.args, "twin.args")?,
                line,
            })
        }
    };
    let property = match rc.property {
        None => None,
        Some(p) => Some(property_of(cx, &p)?),
    };
    let bounded = matches!(
        property,
        Some(PropertyCheck {
            property: Property::Range { .. } | Property::Finite,
            ..
        })
    );
    let tolerance = match rc.tolerance {
        Some(t) => tolerance_of(cx, t, "tolerance")?,
        None if reference.is_some() => {
            return Err(cx.err(span.start..span.start, format!("check `{name}`: a check against a reference needs a `[check.tolerance]` with a `reason`")))
        }
        None if twin.is_some() || (property.is_some() && !bounded) => {
            return Err(cx.err(span.start..span.start, format!("check `{name}`: a twin or a reciprocity, isotropy or round-trip property needs a `[check.tolerance]` with a `reason`")))
        }
        None if bounded => Tolerance {
            abs: Some(vec![0.0]),
            ..Tolerance::exact("a bound admits no slack: any result outside it breaks the property")
        },
        None => Tolerance::exact("goldens are this evaluator's own output"),
    };
    let golden_tolerance = match rc.golden_tolerance {
        Some(t) => tolerance_of(cx, t, "golden_tolerance")?,
        None => Tolerance::exact("a golden is a bit-exact record of this evaluator's output"),
    };
    let textures = textures::parse(cx, rc.textures, rc.samplers, limits)?;
    Ok(Check {
        name,
        shader: PathBuf::from(rc.shader.get_ref()),
        function: rc.function.get_ref().clone(),
        overrides: rc.overrides,
        arithmetic,
        sweep,
        args,
        reference,
        reference_args,
        golden,
        tolerance,
        golden_tolerance,
        twin,
        property,
        line,
        args_at,
        golden_at,
        textures,
    })
}

/// The end of the message of a sweep over the points limit.
fn over_points(limits: &Limits) -> String {
    let l = Limit::PointsPerCheck;
    format!(
        "more than the `{l}` limit of {}; {}",
        limits.points_per_check,
        l.how_to_raise()
    )
}

fn too_many(n: u64, limits: &Limits) -> String {
    format!("{n} points is {}", over_points(limits))
}

/// A golden path written in the suite must stay inside the suite's folder
/// (relative, no `..`) unless `options` allow otherwise, and must be a
/// `.csv` file, so `record` can never replace the suite, a shader or a file
/// outside the project.
fn golden_path_ok(p: &str, options: Options) -> Result<(), String> {
    use std::path::Component;
    let path = Path::new(p);
    if p.is_empty() || path.file_name().is_none() {
        return Err(format!("`{p}` is not a file path"));
    }
    if path.extension().and_then(|e| e.to_str()) != Some("csv") {
        return Err(format!(
            "`{p}` does not end in `.csv`; goldens are CSV files"
        ));
    }
    if !options.golden_outside {
        if path.is_absolute()
            || path
                .components()
                .any(|c| matches!(c, Component::Prefix(_) | Component::RootDir))
        {
            return Err(format!(
                "`{p}` is an absolute path; goldens live inside the suite's folder (pass --golden-outside to allow it)"
            ));
        }
        if path.components().any(|c| matches!(c, Component::ParentDir)) {
            return Err(format!(
                "`{p}` climbs out with `..`; goldens live inside the suite's folder (pass --golden-outside to allow it)"
            ));
        }
    }
    Ok(())
}

/// The `property` table of a check: `kind` and the keys of that kind.
fn property_of(cx: &Ctx, p: &Spanned<toml::Table>) -> Result<PropertyCheck, Diagnostic> {
    let span = p.span();
    let line = line_col(cx.text, span.start).0;
    let t = p.get_ref();
    let at = |key: &str| key_in(cx.text, span.clone(), key);
    let string = |key: &str| -> Result<Option<String>, Diagnostic> {
        match t.get(key) {
            None => Ok(None),
            Some(toml::Value::String(s)) if !s.is_empty() => Ok(Some(s.clone())),
            Some(v) => Err(cx.err(
                at(key),
                format!(
                    "key `property.{key}`: expected a non-empty string, found {}",
                    v.type_str()
                ),
            )),
        }
    };
    let kind = string("kind")?.ok_or_else(|| {
        cx.err(
            span.clone(),
            "key `property.kind` is missing (expected \"range\", \"finite\", \"reciprocity\", \"isotropy\" or \"round_trip\")",
        )
    })?;
    let allowed: &[&str] = match kind.as_str() {
        "range" => &["kind", "min", "max"],
        "finite" => &["kind"],
        "reciprocity" => &["kind", "swap"],
        "isotropy" => &["kind", "rotate", "about", "angle"],
        "round_trip" => &["kind", "decode", "shader"],
        other => {
            return Err(cx.err(
                at("kind"),
                format!(
                    "key `property.kind`: unknown property \"{other}\" (expected \"range\", \"finite\", \"reciprocity\", \"isotropy\" or \"round_trip\")"
                ),
            ))
        }
    };
    if let Some(k) = t.keys().find(|k| !allowed.contains(&k.as_str())) {
        return Err(cx.err(
            at(k),
            format!(
                "key `property.{k}`: a `{kind}` property has no key `{k}` (has: {})",
                allowed.join(", ")
            ),
        ));
    }
    let property = match kind.as_str() {
        "range" => {
            let bound = |key: &str| -> Result<Option<f64>, Diagnostic> {
                t.get(key)
                    .map(|v| match num(v) {
                        Ok(x) if !x.is_nan() => Ok(x),
                        Ok(_) => Err(cx.err(at(key), format!("key `property.{key}`: NaN is no bound"))),
                        Err(m) => Err(cx.err(at(key), format!("key `property.{key}`: {m}"))),
                    })
                    .transpose()
            };
            let (min, max) = (bound("min")?, bound("max")?);
            if min.is_none() && max.is_none() {
                return Err(cx.err(
                    span.clone(),
                    "a `range` property needs `min`, `max` or both",
                ));
            }
            if let (Some(a), Some(b)) = (min, max) {
                if a > b {
                    return Err(cx.err(
                        span.clone(),
                        format!("a `range` property needs min <= max, found [{a}, {b}]"),
                    ));
                }
            }
            Property::Range { min, max }
        }
        "finite" => Property::Finite,
        "reciprocity" => {
            let names: Vec<String> = match t.get("swap") {
                Some(toml::Value::Array(a)) => a
                    .iter()
                    .filter_map(|v| v.as_str().map(str::to_string))
                    .collect(),
                _ => Vec::new(),
            };
            if names.len() != 2
                || t.get("swap").and_then(|v| v.as_array()).map(Vec::len) != Some(2)
                || names[0] == names[1]
            {
                return Err(cx.err(
                    at("swap"),
                    "key `property.swap`: expected two different argument names, e.g. swap = [\"v\", \"l\"]",
                ));
            }
            Property::Reciprocity {
                a: names[0].clone(),
                b: names[1].clone(),
            }
        }
        "isotropy" => {
            let rotate: Vec<String> = match t.get("rotate") {
                Some(toml::Value::Array(a)) if !a.is_empty() && a.iter().all(|v| v.is_str()) => {
                    a.iter().filter_map(|v| v.as_str().map(str::to_string)).collect()
                }
                _ => {
                    return Err(cx.err(
                        at("rotate"),
                        "key `property.rotate`: expected the direction arguments to rotate, e.g. rotate = [\"v\", \"l\"]",
                    ))
                }
            };
            let angle = match t.get("angle") {
                None => 30.0,
                Some(v) => match num(v) {
                    Ok(x) if x.is_finite() => x,
                    Ok(_) => {
                        return Err(cx.err(at("angle"), "key `property.angle`: expected a finite number of degrees"))
                    }
                    Err(m) => return Err(cx.err(at("angle"), format!("key `property.angle`: {m}"))),
                },
            };
            Property::Isotropy {
                rotate,
                about: string("about")?,
                angle,
            }
        }
        _ => Property::RoundTrip {
            decode: string("decode")?.ok_or_else(|| {
                cx.err(
                    span.clone(),
                    "a `round_trip` property needs `decode`, the function that undoes the check's function",
                )
            })?,
            shader: string("shader")?.map(PathBuf::from),
        },
    };
    Ok(PropertyCheck { property, line })
}

fn tolerance_of(cx: &Ctx, t: Spanned<RawTolerance>, key: &str) -> Result<Tolerance, Diagnostic> {
    let span = t.span();
    let t = t.into_inner();
    let reason = match t.reason {
        Some(r) if !r.get_ref().trim().is_empty() => r.into_inner(),
        Some(r) => {
            return Err(cx.err(
                r.span(),
                format!(
                    "key `{key}.reason`: the reason is empty; say why this much error is accepted"
                ),
            ))
        }
        None => {
            return Err(cx.err(
                span,
                format!("key `{key}.reason` is missing: every tolerance needs a written reason"),
            ))
        }
    };
    let nan = match t.nan.as_ref().map(|n| (n.get_ref().as_str(), n.span())) {
        None | Some(("match", _)) => NanPolicy::Match,
        Some(("skip", _)) => NanPolicy::Skip,
        Some((o, s)) => {
            return Err(cx.err(
                s,
                format!("key `{key}.nan`: expected \"match\" or \"skip\", found \"{o}\""),
            ))
        }
    };
    let tol = Tolerance {
        abs: t.abs.map(OneOrMany::vec),
        rel: t.rel.map(OneOrMany::vec),
        ulp: t.ulp.map(OneOrMany::vec),
        nan,
        reason,
    };
    if tol.abs.is_none() && tol.rel.is_none() && tol.ulp.is_none() {
        return Err(cx.err(
            span,
            format!("key `{key}`: give at least one of `abs`, `rel`, `ulp`"),
        ));
    }
    for v in [&tol.abs, &tol.rel, &tol.ulp].into_iter().flatten() {
        if v.is_empty() || v.iter().any(|x| x.is_nan() || *x < 0.0) {
            return Err(cx.err(
                span,
                format!("key `{key}`: bounds must be non-negative numbers"),
            ));
        }
    }
    Ok(tol)
}

fn num(v: &toml::Value) -> Result<f64, String> {
    match v {
        toml::Value::Float(x) => Ok(*x),
        toml::Value::Integer(i) => Ok(*i as f64),
        other => Err(format!("expected a number, found {}", other.type_str())),
    }
}

fn nums(v: &toml::Value, n: Option<usize>, what: &str) -> Result<Vec<f64>, String> {
    let toml::Value::Array(a) = v else {
        return Err(format!("`{what}` expects an array"));
    };
    if let Some(n) = n {
        if a.len() != n {
            return Err(format!("`{what}` expects {n} numbers, found {}", a.len()));
        }
    }
    a.iter().map(num).collect()
}

fn domain(v: &toml::Value, limits: &Limits) -> Result<Domain, String> {
    let toml::Value::Table(t) = v else {
        return Err("expected a table such as { linear = [0.0, 1.0, 64] }".into());
    };
    if t.len() != 1 {
        return Err("expected exactly one of `linear`, `log`, `list`, `edges`, `direction`".into());
    }
    let (kind, val) = t.iter().next().expect("one entry");
    // Checked before anything is allocated: a count of 1e30 is an error,
    // not a saturated cast.
    let count = |x: f64| -> Result<usize, String> {
        if !(x >= 0.0 && x.fract() == 0.0) {
            Err(format!("the point count must be a whole number, found {x}"))
        } else if x > limits.points_per_check as f64 {
            Err(format!("a count of {x} is {}", over_points(limits)))
        } else {
            Ok(x as usize)
        }
    };
    // Bounds must be finite: NaN or infinite bounds make every point NaN.
    let finite = |a: &[f64], what: &str| -> Result<(), String> {
        match a.iter().find(|x| !x.is_finite()) {
            Some(x) => Err(format!("`{what}` needs finite bounds, found {x}")),
            None => Ok(()),
        }
    };
    Ok(match kind.as_str() {
        "linear" => {
            let a = nums(val, Some(3), "linear = [low, high, count]")?;
            finite(&a[..2], "linear")?;
            Domain::Linear {
                lo: a[0],
                hi: a[1],
                n: count(a[2])?,
            }
        }
        "log" => {
            let a = nums(val, Some(3), "log = [low, high, count]")?;
            finite(&a[..2], "log")?;
            if !(a[0] > 0.0 && a[1] > 0.0) {
                return Err("`log` needs positive bounds".into());
            }
            Domain::Log {
                lo: a[0],
                hi: a[1],
                n: count(a[2])?,
            }
        }
        "list" => {
            let a = nums(val, None, "list")?;
            if a.is_empty() {
                return Err("`list` is empty".into());
            }
            if a.len() as u64 > limits.points_per_check {
                return Err(format!(
                    "a list of {} values is {}",
                    a.len(),
                    over_points(limits)
                ));
            }
            Domain::List(a)
        }
        "edges" => {
            let a = nums(val, Some(2), "edges = [low, high]")?;
            finite(&a, "edges")?;
            if a[0] >= a[1] {
                return Err("`edges` needs low < high".into());
            }
            Domain::Edges { lo: a[0], hi: a[1] }
        }
        "direction" => {
            let toml::Value::Table(d) = val else {
                return Err("`direction` expects { theta = ..., phi = ... }".into());
            };
            if let Some(k) = d.keys().find(|k| *k != "theta" && *k != "phi") {
                return Err(format!(
                    "unknown key `{k}` in `direction` (expected `theta`, `phi`)"
                ));
            }
            let part = |k: &str| -> Result<Box<Domain>, String> {
                let v = d
                    .get(k)
                    .ok_or(format!("`direction` needs `{k}` (degrees)"))?;
                let inner = domain(v, limits).map_err(|m| format!("{k}: {m}"))?;
                if inner.width() != 1 {
                    return Err(format!("{k}: must be a scalar domain"));
                }
                Ok(Box::new(inner))
            };
            Domain::Direction {
                theta: part("theta")?,
                phi: part("phi")?,
            }
        }
        other => {
            return Err(format!(
                "unknown domain `{other}` (expected `linear`, `log`, `list`, `edges`, `direction`)"
            ))
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const GOOD: &str = r#"
[[check]]
name = "ndf"
shader = "a.wgsl"
function = "d_ggx"
reference = "ggx_ndf"
reference_args = { alpha = "roughness * roughness" }
args = { alpha = "roughness * roughness" }

[check.sweep]
n_dot_h = { linear = [0.0, 1.0, 4] }
roughness = { edges = [0.0, 1.0] }

[check.tolerance]
rel = 1e-5
reason = "f32 rounding"
"#;

    fn err(text: &str) -> Diagnostic {
        parse(Path::new("s.toml"), text).unwrap_err()
    }

    #[test]
    fn a_good_suite_parses() {
        let s = parse(Path::new("dir/s.toml"), GOOD).unwrap();
        assert_eq!(s.checks.len(), 1);
        let c = &s.checks[0];
        // File order, not alphabetical: n_dot_h before roughness here, so
        // check the reverse too.
        assert_eq!(c.sweep.params[0].0, "n_dot_h");
        let swapped = GOOD.replace(
            "n_dot_h = { linear = [0.0, 1.0, 4] }\nroughness = { edges = [0.0, 1.0] }",
            "roughness = { edges = [0.0, 1.0] }\nn_dot_h = { linear = [0.0, 1.0, 4] }",
        );
        let s2 = parse(Path::new("dir/s.toml"), &swapped).unwrap();
        assert_eq!(s2.checks[0].sweep.params[0].0, "roughness");
        assert_eq!(c.sweep.params.len(), 2);
        assert_eq!(c.line, 3);
        assert_eq!(s.resolve(&c.shader), PathBuf::from("dir/a.wgsl"));
    }

    #[test]
    fn unknown_keys_are_errors_with_line() {
        let d = err(&GOOD.replace("function = ", "fucntion = \"x\"\nfunction = "));
        assert!(
            d.message.contains("unknown field `fucntion`"),
            "{}",
            d.rendered
        );
        assert_eq!(d.line, 5);
    }

    #[test]
    fn a_tolerance_without_reason_is_an_error() {
        let d = err(&GOOD.replace("reason = \"f32 rounding\"\n", ""));
        assert!(
            d.message.contains("`tolerance.reason` is missing"),
            "{}",
            d.rendered
        );
        assert_eq!(d.line, 14, "{}", d.rendered);
    }

    #[test]
    fn bad_domains_models_and_expressions_are_located() {
        let d = err(&GOOD.replace("{ linear = [0.0, 1.0, 4] }", "{ linear = [0.0, 1.0] }"));
        assert!(
            d.message.contains("sweep.n_dot_h") && d.message.contains("expects 3 numbers"),
            "{}",
            d.rendered
        );
        let d = err(&GOOD.replace("\"ggx_ndf\"", "\"ggx\""));
        assert!(
            d.message.contains("no reference model named `ggx`"),
            "{}",
            d.rendered
        );
        assert_eq!(d.line, 6);
        let d = err(&GOOD.replace(
            "args = { alpha = \"roughness * roughness\" }",
            "args = { alpha = \"roughness * * 2\" }",
        ));
        assert!(d.message.contains("key `args.alpha`"), "{}", d.rendered);
        let d = err(&GOOD.replace(
            "args = { alpha = \"roughness * roughness\" }",
            "args = { alpha = \"rough * 2\" }",
        ));
        assert!(
            d.message.contains("`rough` is not a sweep parameter"),
            "{}",
            d.rendered
        );
    }

    #[test]
    fn type_errors_name_the_key() {
        let d = err(&GOOD.replace("rel = 1e-5", "rel = \"small\""));
        assert!(d.rendered.contains("s.toml:"), "{}", d.rendered);
        assert!(d.line >= 14, "{}", d.rendered);
    }
}
