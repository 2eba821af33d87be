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

mod check;
mod domain;
mod locate;
mod property;
mod raw;
mod tolerance;

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use crate::compare::Tolerance;
use crate::diagnostic::Diagnostic;
use crate::limits::{Limit, Limits};
use crate::sweep::{Expr, Sweep};

use check::convert;
use domain::limits_of;
pub use locate::line_col;
use locate::{Ctx, LineIndex};
pub use property::{Masking, Property, PropertyCheck};
use raw::RawSuite;
mod textures;
pub use textures::{SamplerBinding, TableBinding, TableSource, Textures};

/// The number model a check evaluates with.
pub use crate::eval::Arithmetic;

/// One check, validated.
#[derive(Clone, Debug)]
pub struct Check {
    pub name: String,
    /// As written in the suite (relative to the suite's folder); the first
    /// file when `shader` lists several.
    pub shader: PathBuf,
    /// Every file of `shader`, in order (one for a single file): they are
    /// concatenated before naga sees them (WGSL has no include).
    pub shaders: Vec<PathBuf>,
    pub function: String,
    pub overrides: BTreeMap<String, f64>,
    pub arithmetic: Arithmetic,
    pub sweep: Sweep,
    /// Expression per function argument name (missing ones default to the
    /// sweep parameter of the same name).
    pub args: BTreeMap<String, Expr>,
    /// The reference when `reference` names one model.
    pub reference: Option<&'static crate::reference::Model>,
    /// The reference when `reference` is an expression (models called with
    /// every argument filled, variables all sweep parameters).
    pub reference_expr: Option<Expr>,
    /// Expressions of the model's parameters: `reference_args` as written,
    /// plus an `args` entry of the same name where `reference_args` has none.
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
    /// The share of the sweep's points this run evaluates (`run --shard`):
    /// not from the suite file, `None` (every point) unless a run sets it.
    pub shard: Option<crate::sweep::Shard>,
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
    /// `arithmetic = "f64"`: the twin is evaluated in the `f64` number model
    /// (`Program::eval_f64`), an oracle free of rounding.
    pub f64: bool,
    /// Line of the `twin` key.
    pub line: u32,
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

impl Check {
    /// Whether the check has a reference (a model or an expression).
    pub fn has_reference(&self) -> bool {
        self.reference.is_some() || self.reference_expr.is_some()
    }
}

impl Check {
    /// The check's shader as reports and golden headers name it: the file,
    /// or the files joined by ` + ` in order.
    pub fn shader_label(&self) -> String {
        let names: Vec<String> = self
            .shaders
            .iter()
            .map(|p| p.display().to_string())
            .collect();
        names.join(" + ")
    }
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
    /// (`params`), or a part of one (`m.base`, `xf[1]`: the rest of the path
    /// is checked against the parameter's type when it is bound): a typo such
    /// as `roughnes` would otherwise be ignored and the argument silently fed
    /// from the sweep.
    pub fn check_args<'a>(
        &self,
        check: &Check,
        params: impl IntoIterator<Item = &'a str> + Clone,
    ) -> Result<(), Diagnostic> {
        for (arg, span) in &check.args_at {
            let root = arg.split(['.', '[']).next().unwrap_or(arg);
            if !params.clone().into_iter().any(|p| p == root) {
                let have: Vec<&str> = params.clone().into_iter().collect();
                return Err(self.error_at(
                    span.clone(),
                    format!(
                        "key `args.{arg}`: `{}` has no parameter `{root}` (has: {})",
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
    // would replace that file with golden data.
    let suite_name = path.file_name().map(PathBuf::from);
    let mut shaders: std::collections::HashMap<PathBuf, &str> = Default::default();
    for c in &checks {
        for f in &c.shaders {
            shaders.entry(normalize(f)).or_insert(&c.name);
        }
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
                    "key `golden`: `{}` is {what}; recording would replace it with golden data",
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
