//! Building a check's inputs: the sweep's points (rounded to f32 once), the
//! function's argument columns, the program built from the check (the one
//! place a check's shader, function, overrides and number model become a
//! [`Build`] every back end receives), the CPU evaluation, and the reference
//! model's expected columns.
//!
//! Sweep parameter values are rounded to f32 once, before anything else, so
//! the function and the reference see the same parameter values; argument
//! expressions are then evaluated in f64 (for the reference) and rounded to the
//! argument's type (for the function).

use std::borrow::Cow;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::sync::Arc;

use rayon::prelude::*;

use crate::eval::{f64_to_bits, Arithmetic, LaneIssue, Program, ScalarKind};
use crate::limits::Limits;
use crate::reference::{Model, ParamKind};
use crate::scratch;
use crate::suite::{Check, Suite};
use crate::sweep::{expr::BoundExpr, Expr, Points, Value};
use crate::wgsl::Shader;

/// Everything a back end needs to build a check's function: the loaded
/// shader, the function's name, the pipeline-overridable constants and the
/// number model. Made only by [`build_of`], so no back end can miss a part.
pub struct Build {
    pub shader: Shader,
    pub function: String,
    pub overrides: BTreeMap<String, f64>,
    pub arithmetic: Arithmetic,
    /// The run's limits (the suite's `[limits]` table over the defaults):
    /// program size, slots and the per-point step budget reach the evaluator here.
    pub limits: Limits,
    /// Look-up tables and samplers bound to the shader's texture and sampler
    /// variables (empty for most checks).
    pub textures: crate::table::Bindings,
    /// Where the check binds them (`suite:line`), for a back end that
    /// cannot (the GPU back end refuses such checks: CPU only).
    pub textures_at: Option<String>,
}

/// The check's texture bindings, resolved (table files read, model grids
/// computed), and where the suite gives them. With `shader`, every binding
/// must name a texture or sampler variable it declares.
pub fn bindings_of(
    suite: &Suite,
    check: &Check,
    shader: Option<&Shader>,
) -> Result<(crate::table::Bindings, Option<String>), String> {
    let t = &check.textures;
    if t.is_empty() {
        return Ok((crate::table::Bindings::default(), None));
    }
    if let Some(sh) = shader {
        let declared: Vec<_> = sh
            .module
            .global_variables
            .iter()
            .filter(|(_, g)| g.space == naga::AddressSpace::Handle)
            .map(|(_, g)| {
                (
                    g.name.clone(),
                    g.binding.as_ref().map(|b| (b.group, b.binding)),
                )
            })
            .collect();
        t.check_declared(suite, &check.name, &declared)
            .map_err(|d| d.rendered)?;
    }
    let bindings = t.resolve(suite).map_err(|d| d.rendered)?;
    let first = t
        .tables
        .iter()
        .map(|b| b.at.start)
        .chain(t.samplers.iter().map(|b| b.at.start))
        .min()
        .unwrap_or(0);
    let line = crate::suite::line_col(&suite.text, first).0;
    Ok((bindings, Some(format!("{}:{line}", suite.path.display()))))
}

/// The files of a check with each of `versions` standing in for one of them
/// (comparing two versions of a file; evaluating or analysing one function
/// of the check's files), one list per version. A check of one file is
/// replaced whole. In a check of several, the versions replace the file
/// that the first of them is (the same file), or else the file that has the
/// same name as the first of them that has one; a version that is neither is
/// an error naming the check's files.
pub fn files_with(
    suite: &Suite,
    check: &Check,
    versions: &[&Path],
) -> Result<Vec<Vec<PathBuf>>, String> {
    let own: Vec<PathBuf> = check.shaders.iter().map(|p| suite.resolve(p)).collect();
    if own.len() < 2 {
        return Ok(versions.iter().map(|v| vec![v.to_path_buf()]).collect());
    }
    let same = |a: &Path, b: &Path| match (a.canonicalize(), b.canonicalize()) {
        (Ok(a), Ok(b)) => a == b,
        _ => false,
    };
    let by_path = versions
        .iter()
        .find_map(|v| own.iter().position(|o| same(o, v)));
    let by_name = || {
        versions.iter().find_map(|v| {
            let name = v.file_name()?;
            own.iter().position(|o| o.file_name() == Some(name))
        })
    };
    let Some(slot) = by_path.or_else(by_name) else {
        let listed: Vec<String> = own.iter().map(|p| p.display().to_string()).collect();
        let given: Vec<String> = versions.iter().map(|p| p.display().to_string()).collect();
        return Err(format!(
            "check `{}` is made of {}: {} must be one of them, or a version of one with the same file name",
            check.name,
            listed.join(" + "),
            given.join(" and ")
        ));
    };
    Ok(versions
        .iter()
        .map(|v| {
            let mut files = own.clone();
            files[slot] = v.to_path_buf();
            files
        })
        .collect())
}

/// The [`Build`] of a check, from its own files or from `files` instead (see
/// [`files_with`]).
pub fn build_of(suite: &Suite, check: &Check, files: Option<&[PathBuf]>) -> Result<Build, String> {
    let paths: Vec<PathBuf> = match files {
        Some(f) => f.to_vec(),
        None => check.shaders.iter().map(|p| suite.resolve(p)).collect(),
    };
    let shader = Shader::load_files_with(&paths, &suite.limits).map_err(|d| d.rendered)?;
    let (textures, textures_at) = bindings_of(suite, check, Some(&shader))?;
    Ok(Build {
        shader,
        function: check.function.clone(),
        overrides: check.overrides.clone(),
        arithmetic: check.arithmetic,
        limits: suite.limits,
        textures,
        textures_at,
    })
}

impl Build {
    /// Compile the function for the CPU evaluator.
    pub fn program(&self) -> Result<Program, String> {
        Program::compile_bound(
            &self.shader,
            &self.function,
            &self.overrides,
            self.arithmetic,
            &self.limits,
            &self.textures,
        )
        .map_err(|d| d.rendered)
    }
}

/// The function evaluated over a check's sweep.
pub struct Evaluated {
    /// Shared by every segment of a check ([`super::stream`]): built and
    /// compiled once.
    pub build: Arc<Build>,
    pub points: Points,
    pub program: Arc<Program>,
    /// The program's leaves ([`Program::leaves`]), shared by every segment.
    pub inputs: crate::eval::Leaves,
    pub outputs: crate::eval::Leaves,
    pub input_columns: Vec<Vec<u32>>,
    /// The f64 columns of the argument expressions that are not a plain
    /// sweep parameter, kept for the reference arguments of the same
    /// expression ([`reference_columns_sharing`]) by a streamed check's
    /// segment (`stream::Prepared::evaluate_keeping_args`); empty otherwise,
    /// so a whole-sweep evaluation holds no more than its input and output
    /// columns.
    pub arg_columns: ArgColumns,
    pub output_columns: Vec<Vec<u32>>,
    pub issues: Vec<LaneIssue>,
    /// Parameters rounded to `f16` for both sides of a twin check.
    pub rounded: Option<super::result::FindingKind>,
}

impl Evaluated {
    /// The hash of the shader's source, as a golden records it.
    pub fn shader_hash(&self) -> String {
        self.build.shader.content_hash()
    }
}

/// Argument expressions evaluated over a span of points, with their f64
/// columns.
pub type ArgColumns = Vec<(BoundExpr, Vec<Vec<f64>>)>;

/// The indices of the sweep's points this run of the check evaluates: all,
/// or its shard's share ([`Check::shard`]).
pub fn point_range(check: &Check) -> std::ops::Range<usize> {
    let n = check.sweep.len();
    check.shard.map_or(0..n, |s| s.range(n))
}

/// Generate the sweep (the check's shard of it, when it has one) with every
/// value rounded to f32.
pub fn points_of(check: &Check) -> Points {
    points_in(check, point_range(check))
}

/// The points of `range` (indices in the whole sweep), every value rounded
/// to f32.
pub fn points_in(check: &Check, range: std::ops::Range<usize>) -> Points {
    points_in_grid(check, &check.sweep.grid_f32(), range)
}

/// [`points_in`] with the sweep's grid values computed beforehand
/// ([`crate::sweep::Sweep::grid`]).
pub fn points_in_grid(
    check: &Check,
    grid: &crate::sweep::Grid,
    range: std::ops::Range<usize>,
) -> Points {
    assert!(grid.is_f32(), "a check's points come from its f32 grid");
    check.sweep.points_in_grid(grid, range)
}

/// The points at `indices` (ascending, in the whole sweep), every value
/// rounded to f32: a check's evidence when it has too many points to keep.
pub fn points_at(check: &Check, indices: &[usize]) -> Points {
    let mut points = check.sweep.points_at(indices);
    points.round_to_f32();
    points
}

use super::args::example;

/// Bind an argument: its expression, or the sweep parameter of the same name.
pub(crate) fn bind_arg(
    exprs: &BTreeMap<String, Expr>,
    name: &str,
    points: &Points,
    what: &str,
) -> Result<BoundExpr, String> {
    let e = match exprs.get(name) {
        Some(e) => e.clone(),
        None if points.names.iter().any(|n| n == name) => Expr::parse(name).expect("a name parses"),
        None => {
            return Err(format!(
                "{what} `{name}` has no expression and no sweep parameter of that name (sweep: {})",
                points.names.join(", ")
            ))
        }
    };
    e.bind(&points.names, &example(points))
        .map_err(|m| format!("{what} `{name}`: {m}"))
}

/// Points per chunk when argument and reference columns are filled in parallel.
const CHUNK: usize = 4096;

/// Evaluate bound expressions at every point into f64 columns (one per
/// component): a range of at most [`CHUNK`] points (a streamed check's
/// segment) on the calling thread, a larger one in parallel chunks.
/// A sweep parameter's own column is borrowed, not copied, and so are the
/// columns of an expression that `shared` holds evaluated over these points
/// (bound the same way: [`BoundExpr::same_as`]).
fn columns<'p>(
    exprs: &[BoundExpr],
    points: &'p Points,
    shared: &'p [(BoundExpr, Vec<Vec<f64>>)],
) -> Result<Vec<Cow<'p, [f64]>>, String> {
    let n = points.len;
    let mut cols = Vec::with_capacity(exprs.iter().map(|e| e.width).sum());
    for e in exprs {
        if let Some(p) = e.var {
            cols.extend(points.columns[p].iter().map(|c| Cow::Borrowed(&c[..])));
        } else if let Some((_, c)) = shared.iter().find(|(s, _)| s.same_as(e)) {
            cols.extend(c.iter().map(|c| Cow::Borrowed(&c[..])));
        } else if n <= CHUNK {
            cols.extend(expr_columns(e, points, 0..n)?.into_iter().map(Cow::Owned));
        } else {
            let parts = (0..n.div_ceil(CHUNK))
                .into_par_iter()
                .map(|k| expr_columns(e, points, k * CHUNK..((k + 1) * CHUNK).min(n)))
                .collect::<Result<Vec<_>, String>>()?;
            for c in 0..e.width {
                let mut col = scratch::column(n);
                for part in &parts {
                    col.extend_from_slice(&part[c]);
                }
                cols.push(Cow::Owned(col));
            }
            for part in parts {
                scratch::recycle_all(part);
            }
        }
    }
    Ok(cols)
}

/// Hand back the columns [`columns`] made (the borrowed ones stay).
fn recycle(cols: Vec<Cow<'_, [f64]>>) {
    for c in cols {
        if let Cow::Owned(v) = c {
            scratch::recycle(v);
        }
    }
}

/// Columns as owned vectors.
fn owned(cols: Vec<Cow<'_, [f64]>>) -> Vec<Vec<f64>> {
    cols.into_iter().map(Cow::into_owned).collect()
}

/// One expression's columns over `range`: the whole range at once where the
/// expression allows ([`crate::sweep::columns::eval_range`]), else point by
/// point.
fn expr_columns(
    e: &BoundExpr,
    points: &Points,
    range: std::ops::Range<usize>,
) -> Result<Vec<Vec<f64>>, String> {
    if let Some(cols) = crate::sweep::columns::eval_range(e, points, range.clone()) {
        return Ok(cols);
    }
    let mut out: Vec<Vec<f64>> = (0..e.width).map(|_| scratch::column(range.len())).collect();
    let mut vals = vec![Value::S(0.0); points.names.len()];
    for i in range {
        for (p, v) in vals.iter_mut().enumerate() {
            *v = points.value(p, i);
        }
        match e.eval(&vals)? {
            Value::S(x) => out[0].push(x),
            Value::V(v) => {
                for (c, x) in v.into_iter().enumerate() {
                    out[c].push(x);
                }
            }
        }
    }
    Ok(out)
}

/// Load the shader, compile the function and evaluate it over the sweep.
///
/// A function without arguments is evaluated once and its result stands
/// for every point of the sweep: with no inputs it computes the same value
/// at each (WGSL functions have no state that outlives a call), so the
/// output columns have one row per point like any other check's.
pub fn evaluate(
    suite: &Suite,
    check: &Check,
    files: Option<&[PathBuf]>,
) -> Result<Evaluated, String> {
    let prepared = super::stream::Prepared::new(suite, check, files)?;
    prepared.evaluate(points_of(check))
}

/// The argument expressions of a check's own evaluation: `check.args`, except
/// that a hemisphere property's direction (a quadrature variable, not a sweep
/// parameter) stands at the normal, +z, there.
pub(crate) fn main_args(check: &Check) -> std::borrow::Cow<'_, BTreeMap<String, Expr>> {
    let Some(crate::suite::PropertyCheck {
        property: crate::suite::Property::Hemisphere { over, .. },
        ..
    }) = &check.property
    else {
        return std::borrow::Cow::Borrowed(&check.args);
    };
    let normal = Expr::parse("vec3(0, 0, 1)").expect("a vector parses");
    let mut args: BTreeMap<String, Expr> = check
        .args
        .iter()
        .map(|(k, e)| (k.clone(), e.substitute(over, &normal)))
        .collect();
    args.entry(over.clone()).or_insert(normal);
    std::borrow::Cow::Owned(args)
}

/// Evaluate a built function at `points`, its arguments bound by `args`
/// (missing ones take the sweep parameter of the same name). [`evaluate`]
/// for the check's own function; twins and properties for the others.
pub fn evaluate_at(
    check: &Check,
    build: Arc<Build>,
    program: Arc<Program>,
    args: &BTreeMap<String, Expr>,
    points: Points,
) -> Result<Evaluated, String> {
    evaluate_at_keeping(check, build, program, args, points, false)
}

/// [`evaluate_at`], keeping the computed argument columns in
/// [`Evaluated::arg_columns`] when `keep_args`.
pub(crate) fn evaluate_at_keeping(
    check: &Check,
    build: Arc<Build>,
    program: Arc<Program>,
    args: &BTreeMap<String, Expr>,
    points: Points,
    keep_args: bool,
) -> Result<Evaluated, String> {
    let inputs = super::args::bind(
        &build.function,
        program.params(),
        program.out_params(),
        args,
        &points,
    )
    .map_err(|e| format!("check `{}`: {e}", check.name))?;
    let (input_columns, arg_columns) = input_columns(&inputs, &program, &points, keep_args)?;
    let refs: Vec<&[u32]> = input_columns.iter().map(|c| &c[..]).collect();
    let (inputs, outputs) = program.leaves();
    // Every value is written by the evaluation (see `Program::eval`).
    let mut output_columns: Vec<Vec<u32>> = (0..outputs.len())
        .map(|_| scratch::to_overwrite(points.len, 0))
        .collect();
    let mut issues = program
        .try_eval(&refs, &mut output_columns)
        .map_err(|m| format!("check `{}`: {m}", check.name))?;
    if input_columns.is_empty() {
        // One evaluation (see the doc): its result and its issues hold at
        // every point.
        for col in &mut output_columns {
            let v = col.first().copied().unwrap_or(0);
            *col = vec![v; points.len];
        }
        issues = (0..points.len)
            .flat_map(|p| {
                issues.iter().map(move |i| LaneIssue {
                    point: p,
                    ..i.clone()
                })
            })
            .collect();
    }
    Ok(Evaluated {
        inputs,
        outputs,
        build,
        points,
        program,
        input_columns,
        arg_columns,
        output_columns,
        issues,
        rounded: None,
    })
}

/// The function's input columns (one per input leaf, in its encoding) from
/// bound arguments, and, when `keep`, the f64 columns of the computed ones.
fn input_columns(
    inputs: &super::args::Inputs,
    program: &Program,
    points: &Points,
    keep: bool,
) -> Result<(Vec<Vec<u32>>, ArgColumns), String> {
    let f64_cols = columns(&inputs.exprs, points, &[])?;
    let kinds = program.input_kinds();
    let cols = inputs
        .leaves
        .iter()
        .zip(kinds)
        .map(|(leaf, &k)| match *leaf {
            super::args::Leaf::Column(c) => {
                let mut col = scratch::column(points.len);
                crate::values::encoding::extend_bits(k, &f64_cols[c], &mut col);
                col
            }
            super::args::Leaf::Zero => scratch::filled(points.len, f64_to_bits(k, 0.0)),
        })
        .collect();
    if !keep {
        recycle(f64_cols);
        return Ok((cols, Vec::new()));
    }
    // Keep what was computed; the parameters' own columns were borrowed.
    let mut kept = Vec::new();
    let mut f64_cols = f64_cols.into_iter();
    for e in &inputs.exprs {
        let cols: Vec<Cow<[f64]>> = f64_cols.by_ref().take(e.width).collect();
        if e.var.is_none() {
            kept.push((e.clone(), owned(cols)));
        }
    }
    Ok((cols, kept))
}

/// Evaluate the reference model of a check at every point.
pub fn reference_columns(
    check: &Check,
    model: &Model,
    points: &Points,
    ref_args: &BTreeMap<String, Expr>,
) -> Result<Vec<Vec<f64>>, String> {
    reference_columns_sharing(check, model, points, ref_args, &[])
}

/// [`reference_columns`], taking the columns of an argument expression
/// from `shared` where it holds the same expression evaluated over the
/// same points (the function's own arguments: [`Evaluated::arg_columns`]).
pub fn reference_columns_sharing(
    check: &Check,
    model: &Model,
    points: &Points,
    ref_args: &BTreeMap<String, Expr>,
    shared: &[(BoundExpr, Vec<Vec<f64>>)],
) -> Result<Vec<Vec<f64>>, String> {
    let args = reference_args(check, model, points, ref_args, shared)?;
    let n = points.len;
    // Every value is written below, by the column form or point by point.
    let mut out: Vec<Vec<f64>> = (0..model.outputs)
        .map(|_| scratch::to_overwrite(n, 0.0))
        .collect();
    let column_form = crate::reference::columns::find(model.name);
    let fill = |start: usize, outs: &mut [&mut [f64]]| {
        if let Some(f) = column_form {
            let cols: Vec<&[f64]> = args.iter().map(|c| &c[start..]).collect();
            f(&cols, outs);
            return;
        }
        let mut point_args = vec![0.0; args.len()];
        let mut values = vec![0.0; model.outputs];
        for j in 0..outs.first().map_or(0, |o| o.len()) {
            for (a, c) in point_args.iter_mut().zip(&args) {
                *a = c[start + j];
            }
            (model.eval)(&point_args, &mut values);
            for (o, &v) in outs.iter_mut().zip(&values) {
                o[j] = v;
            }
        }
    };
    if n <= CHUNK {
        let mut outs: Vec<&mut [f64]> = out.iter_mut().map(|c| &mut c[..]).collect();
        fill(0, &mut outs);
    } else {
        // Chunk k of every output column, filled in parallel.
        let mut chunks: Vec<Vec<&mut [f64]>> = (0..n.div_ceil(CHUNK)).map(|_| Vec::new()).collect();
        for col in out.iter_mut() {
            for (k, part) in col.chunks_mut(CHUNK).enumerate() {
                chunks[k].push(part);
            }
        }
        chunks
            .into_par_iter()
            .enumerate()
            .for_each(|(k, mut outs)| fill(k * CHUNK, &mut outs));
    }
    recycle(args);
    Ok(out)
}

/// A reference expression evaluated at every point (f64, one column per
/// component); it must give as many values as the function returns
/// (`outputs`).
pub fn reference_expr_columns(
    check: &Check,
    expr: &Expr,
    points: &Points,
    outputs: usize,
) -> Result<Vec<Vec<f64>>, String> {
    let b = expr
        .bind(&points.names, &example(points))
        .map_err(|m| format!("check `{}`: reference `{}`: {m}", check.name, expr.text))?;
    if b.width != outputs {
        return Err(format!(
            "check `{}`: `{}` returns {outputs} value(s) but reference `{}` gives {}",
            check.name, check.function, expr.text, b.width
        ));
    }
    columns(&[b], points, &[]).map(owned)
}

/// A reference model must give as many values as the function returns;
/// otherwise the check cannot be compared and this says why.
pub fn reference_fits(check: &Check, model: &Model, outputs: usize) -> Result<(), String> {
    if model.outputs == outputs {
        return Ok(());
    }
    Err(format!(
        "check `{}`: `{}` returns {} value(s) but reference `{}` gives {}",
        check.name, check.function, outputs, model.name, model.outputs
    ))
}

/// Output columns in the evaluator's encoding as f64 columns.
pub fn as_f64(cols: &[Vec<u32>], kinds: &[(String, ScalarKind)]) -> Vec<Vec<f64>> {
    cols.iter()
        .zip(kinds)
        .map(|(c, (_, k))| {
            let mut col = scratch::column(c.len());
            crate::values::encoding::extend_f64(*k, c, &mut col);
            col
        })
        .collect()
}

/// The reference model's flattened argument columns at `points` (a vec3
/// parameter is three columns), as `ref_args` binds them.
pub fn reference_arg_columns(
    check: &Check,
    model: &Model,
    points: &Points,
    ref_args: &BTreeMap<String, Expr>,
) -> Result<Vec<Vec<f64>>, String> {
    reference_args(check, model, points, ref_args, &[]).map(owned)
}

/// [`reference_arg_columns`], borrowing the sweep parameters' own columns.
fn reference_args<'p>(
    check: &Check,
    model: &Model,
    points: &'p Points,
    ref_args: &BTreeMap<String, Expr>,
    shared: &'p [(BoundExpr, Vec<Vec<f64>>)],
) -> Result<Vec<Cow<'p, [f64]>>, String> {
    let mut bound = Vec::new();
    for p in model.params {
        let b = bind_arg(ref_args, p.name, points, "reference parameter")
            .map_err(|m| format!("check `{}`: {m}", check.name))?;
        let want = match p.kind {
            ParamKind::Scalar => 1,
            ParamKind::Vec3 => 3,
        };
        if b.width != want {
            return Err(format!(
                "check `{}`: reference parameter `{}` of `{}` takes {want} value(s), its expression gives {}",
                check.name, p.name, model.name, b.width
            ));
        }
        bound.push(b);
    }
    columns(&bound, points, shared)
}
