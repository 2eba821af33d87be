//! The regression gate: runs the checks of a suite. For each check it
//! evaluates the WGSL function over the sweep on the CPU, evaluates the
//! reference model in f64 and/or reads the golden dataset, compares, and
//! explains where and why the numbers moved.
//!
//! Sweep parameter values are rounded to f32 once, before anything else, so
//! the function and the reference see the same parameter values; argument
//! expressions are then evaluated in f64 (for the reference) and rounded to the
//! argument's type (for the function).

pub mod result;

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::time::Instant;

use rayon::prelude::*;

pub use result::{CheckResult, Comparison, IssueGroup, RunResult, Verdict};

use crate::compare::{self, Stats, Tolerance};
use crate::eval::{bits_to_f64, f64_to_bits, LaneIssue, Program, ScalarKind, Ty};
use crate::golden::{self, Golden, Header};
use crate::reference::{Model, ParamKind};
use crate::suite::{Check, Suite};
use crate::sweep::{expr::BoundExpr, Expr, Points, Value};
use crate::wgsl::{Diagnostic, Shader};

/// The function evaluated over a check's sweep.
pub struct Evaluated {
    pub points: Points,
    pub program: Program,
    pub shader_hash: String,
    pub inputs: Vec<(String, ScalarKind)>,
    pub outputs: Vec<(String, ScalarKind)>,
    pub input_columns: Vec<Vec<u32>>,
    pub output_columns: Vec<Vec<u32>>,
    pub issues: Vec<LaneIssue>,
}

/// Generate the sweep with every value rounded to f32.
pub fn points_of(check: &Check) -> Points {
    let mut p = check.sweep.points();
    for cols in &mut p.columns {
        for col in cols.iter_mut() {
            for x in col.iter_mut() {
                *x = f64::from(*x as f32);
            }
        }
    }
    p
}

fn example(points: &Points) -> Vec<Value> {
    points
        .widths
        .iter()
        .map(|&w| {
            if w == 1 {
                Value::S(0.5)
            } else {
                Value::V([0.0, 0.6, 0.8])
            }
        })
        .collect()
}

/// Bind an argument: its expression, or the sweep parameter of the same name.
fn bind_arg(
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

/// Evaluate bound expressions at every point into f64 columns (one per
/// component), in parallel.
fn columns(exprs: &[BoundExpr], points: &Points) -> Result<Vec<Vec<f64>>, String> {
    let width: usize = exprs.iter().map(|e| e.width).sum();
    let mut cols = vec![vec![0.0; points.len]; width];
    let mut c0 = 0;
    for e in exprs {
        if let Some(p) = e.var {
            for k in 0..e.width {
                cols[c0 + k].copy_from_slice(&points.columns[p][k]);
            }
        } else {
            const CH: usize = 4096;
            let mut outs: Vec<&mut [f64]> = cols[c0..c0 + e.width]
                .iter_mut()
                .map(|c| &mut c[..])
                .collect();
            let mut chunks: Vec<Vec<&mut [f64]>> = Vec::new();
            while !outs.is_empty() && !outs[0].is_empty() {
                let mut head = Vec::new();
                let mut tail = Vec::new();
                for o in outs {
                    let n = CH.min(o.len());
                    let (h, t) = o.split_at_mut(n);
                    head.push(h);
                    tail.push(t);
                }
                chunks.push(head);
                outs = tail;
            }
            chunks.into_par_iter().enumerate().try_for_each(
                |(k, mut ch)| -> Result<(), String> {
                    let mut vals = vec![Value::S(0.0); points.names.len()];
                    for j in 0..ch[0].len() {
                        let i = k * CH + j;
                        for (p, v) in vals.iter_mut().enumerate() {
                            *v = points.value(p, i);
                        }
                        let comps = e.eval(&vals)?.components();
                        for (c, x) in comps.into_iter().enumerate() {
                            ch[c][j] = x;
                        }
                    }
                    Ok(())
                },
            )?;
        }
        c0 += e.width;
    }
    Ok(cols)
}

/// Load the shader, compile the function and evaluate it over the sweep.
pub fn evaluate(
    suite: &Suite,
    check: &Check,
    shader_path: Option<&Path>,
) -> Result<Evaluated, String> {
    let path = shader_path
        .map(Path::to_path_buf)
        .unwrap_or_else(|| suite.resolve(&check.shader));
    let shader = Shader::load(&path).map_err(|d| d.rendered)?;
    let program =
        Program::compile_with(&shader, &check.function, &check.overrides, check.arithmetic)
            .map_err(|d| d.rendered)?;
    let points = points_of(check);
    let mut bound = Vec::new();
    let mut kinds = Vec::new();
    for (name, ty) in program.params() {
        let b = bind_arg(&check.args, name, &points, "argument")
            .map_err(|m| format!("check `{}`: {m}", check.name))?;
        let leaves = ty.leaves();
        let fits = matches!(ty, Ty::Scalar(_) | Ty::Vector(3, _)) && leaves.len() == b.width;
        if !fits {
            return Err(format!(
                "check `{}`: argument `{name}` has type {ty} but its expression gives {} value(s); only scalars and vec3 can be fed from a sweep",
                check.name, b.width
            ));
        }
        kinds.extend(leaves);
        bound.push(b);
    }
    let f64_cols = columns(&bound, &points)?;
    let input_columns: Vec<Vec<u32>> = f64_cols
        .par_iter()
        .zip(kinds.par_iter())
        .map(|(c, &k)| c.iter().map(|&x| f64_to_bits(k, x)).collect())
        .collect();
    let refs: Vec<&[u32]> = input_columns.iter().map(|c| &c[..]).collect();
    let mut output_columns = Vec::new();
    let issues = program
        .try_eval(&refs, &mut output_columns)
        .map_err(|m| format!("check `{}`: {m}", check.name))?;
    Ok(Evaluated {
        shader_hash: shader.content_hash(),
        inputs: program.input_leaves(),
        outputs: program.output_leaves(),
        points,
        program,
        input_columns,
        output_columns,
        issues,
    })
}

/// Evaluate the reference model of a check at every point.
pub fn reference_columns(
    check: &Check,
    model: &Model,
    points: &Points,
    ref_args: &BTreeMap<String, Expr>,
) -> Result<Vec<Vec<f64>>, String> {
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
    let args = columns(&bound, points)?;
    let n = points.len;
    let mut out = vec![vec![0.0; n]; model.outputs];
    const CH: usize = 4096;
    let results: Vec<Vec<f64>> = (0..n.div_ceil(CH))
        .into_par_iter()
        .map(|k| {
            let (s, e) = (k * CH, ((k + 1) * CH).min(n));
            let mut a = vec![0.0; args.len()];
            let mut o = vec![0.0; model.outputs];
            let mut flat = Vec::with_capacity((e - s) * model.outputs);
            for i in s..e {
                for (j, c) in args.iter().enumerate() {
                    a[j] = c[i];
                }
                (model.eval)(&a, &mut o);
                flat.extend_from_slice(&o);
            }
            flat
        })
        .collect();
    for (k, flat) in results.iter().enumerate() {
        for (j, vals) in flat.chunks(model.outputs).enumerate() {
            for (c, &v) in vals.iter().enumerate() {
                out[c][k * CH + j] = v;
            }
        }
    }
    Ok(out)
}

fn as_f64(cols: &[Vec<u32>], kinds: &[(String, ScalarKind)]) -> Vec<Vec<f64>> {
    cols.par_iter()
        .zip(kinds.par_iter())
        .map(|(c, (_, k))| c.iter().map(|&b| bits_to_f64(*k, b)).collect())
        .collect()
}

fn group_issues(issues: &[LaneIssue], shader: &Path, points: &Points) -> Vec<IssueGroup> {
    let mut groups: Vec<IssueGroup> = Vec::new();
    for i in issues {
        let location = if i.line > 0 {
            format!("{}:{}:{}", shader.display(), i.line, i.column)
        } else {
            shader.display().to_string()
        };
        let kind = serde_json::to_value(i.kind)
            .ok()
            .and_then(|v| v.as_str().map(str::to_string))
            .unwrap_or_default();
        match groups
            .iter_mut()
            .find(|g| g.kind == kind && g.message == i.message && g.location == location)
        {
            Some(g) => g.count += 1,
            None => groups.push(IssueGroup {
                kind,
                message: i.message.clone(),
                location,
                count: 1,
                example: format!(
                    "{} (function inputs: {})",
                    points.describe(i.point),
                    i.inputs
                ),
            }),
        }
    }
    groups
}

/// Where the failing points lie, per sweep parameter, when that is narrower
/// than the swept range.
fn locality(points: &Points, failing: &[usize], what: &str) -> Vec<String> {
    let mut out = Vec::new();
    if failing.is_empty() || failing.len() == points.len {
        return out;
    }
    for (p, name) in points.names.iter().enumerate() {
        // Directions are judged by their z component, the cosine to the normal.
        let (col, label) = if points.widths[p] == 1 {
            (&points.columns[p][0], name.clone())
        } else {
            (&points.columns[p][2], format!("{name}.z"))
        };
        let range = |idx: &mut dyn Iterator<Item = f64>| {
            idx.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
                (a.min(x), b.max(x))
            })
        };
        let (lo, hi) = range(&mut col.iter().copied());
        let (flo, fhi) = range(&mut failing.iter().map(|&i| col[i]));
        if hi > lo && (fhi - flo) < 0.5 * (hi - lo) {
            out.push(format!(
                "{what} have {label} in [{}, {}] (swept [{}, {}])",
                crate::sweep::fmt_num(flo),
                crate::sweep::fmt_num(fhi),
                crate::sweep::fmt_num(lo),
                crate::sweep::fmt_num(hi)
            ));
        }
    }
    out
}

/// Test "the shader uses a different remap of parameter p" hypotheses: with
/// p → sqrt(p) or p → p² in the reference arguments, does (nearly) every
/// point pass?
fn remap_hypotheses(
    check: &Check,
    model: &Model,
    points: &Points,
    got: &[Vec<f64>],
    half: bool,
) -> Vec<String> {
    let mut out = Vec::new();
    // Subsample for speed: at most ~20k points.
    let stride = (points.len / 20_000).max(1);
    let idx: Vec<usize> = (0..points.len).step_by(stride).collect();
    let sub = Points {
        names: points.names.clone(),
        widths: points.widths.clone(),
        columns: points
            .columns
            .iter()
            .map(|cs| {
                cs.iter()
                    .map(|c| idx.iter().map(|&i| c[i]).collect())
                    .collect()
            })
            .collect(),
        len: idx.len(),
    };
    let got_sub: Vec<Vec<f64>> = got
        .iter()
        .map(|c| idx.iter().map(|&i| c[i]).collect())
        .collect();
    let used: Vec<String> = model
        .params
        .iter()
        .flat_map(|p| {
            check
                .reference_args
                .get(p.name)
                .map_or_else(|| vec![p.name.to_string()], |e| e.variables())
        })
        .collect();
    for (p, name) in points.names.iter().enumerate() {
        if points.widths[p] != 1 || !used.contains(name) {
            continue;
        }
        for (with, meaning) in [
            (format!("sqrt({name})"), format!("the shader seems to skip one squaring of `{name}` (e.g. alpha = {name} instead of {name}²)")),
            (format!("{name} * {name}"), format!("the shader seems to square `{name}` once more than the reference (a remap applied twice?)")),
        ] {
            let w = Expr::parse(&with).expect("hypothesis parses");
            let mut args = BTreeMap::new();
            for mp in model.params {
                let e = check.reference_args.get(mp.name).cloned().unwrap_or_else(|| Expr::parse(mp.name).expect("name"));
                args.insert(mp.name.to_string(), e.substitute(name, &w));
            }
            let Ok(want) = reference_columns(check, model, &sub, &args) else { continue };
            let s = compare::compare(&got_sub, &want, &check.tolerance, half, &|_| String::new());
            if s.failed as f64 <= 0.001 * sub.len as f64 {
                out.push(format!("with `{name}` replaced by `{with}` in the reference arguments, {:.1} % of points pass: {meaning}", 100.0 * (1.0 - s.fail_share)));
            }
        }
    }
    out
}

fn failing_points(got: &[Vec<f64>], want: &[Vec<f64>], tol: &Tolerance, half: bool) -> Vec<usize> {
    let n = got.first().map_or(0, |c| c.len());
    (0..n)
        .filter(|&i| compare::assess(got, want, i, tol, half).fails())
        .collect()
}

fn findings_for(
    stats: &Stats,
    got: &[Vec<f64>],
    want: &[Vec<f64>],
    tol: &Tolerance,
    half: bool,
    points: &Points,
) -> (Vec<String>, Vec<usize>) {
    let mut f = Vec::new();
    if stats.failed == 0 {
        return (f, Vec::new());
    }
    let failing = failing_points(got, want, tol, half);
    if stats.nonfinite > 0 {
        f.push(format!(
            "{} point(s) give NaN or infinity where the expected value is finite",
            stats.nonfinite
        ));
    }
    let factor = compare::constant_factor(got, want, &failing);
    let has_factor = factor.is_some();
    f.extend(factor);
    let local = locality(points, &failing, "all failing points");
    // With a constant factor everywhere, where the error is largest only
    // mirrors where the values are largest: say nothing more.
    if local.is_empty() && !has_factor {
        // Failures are everywhere: say where they are worst instead.
        let mut by_error: Vec<(f64, usize)> = failing
            .iter()
            .map(|&i| {
                let e = (0..got.len())
                    .map(|c| {
                        let (g, w) = (got[c][i], want[c][i]);
                        if g.is_finite() {
                            (g - w).abs() / w.abs().max(1e-30)
                        } else {
                            f64::INFINITY
                        }
                    })
                    .fold(0.0, f64::max);
                (e, i)
            })
            .collect();
        by_error.sort_by(|a, b| b.0.total_cmp(&a.0));
        let top: Vec<usize> = by_error
            .iter()
            .take((failing.len() / 100).max(10))
            .map(|x| x.1)
            .collect();
        f.extend(locality(
            points,
            &top,
            "the largest relative errors (top 1 % of failures)",
        ));
    }
    f.extend(local);
    (f, failing)
}

/// Another back end for a check's function: given the CPU evaluation, return
/// the output columns it computes for the same inputs (in the evaluator's
/// encoding) and a label naming it (adapter, driver).
pub type Backend<'a> = &'a (dyn Fn(&Evaluated) -> Result<(Vec<Vec<u32>>, String), String> + Sync);

/// Run one check.
pub fn run_check(suite: &Suite, check: &Check) -> CheckResult {
    run_check_on(suite, check, None)
}

/// Run one check with the outputs of `backend` instead of the CPU
/// evaluator's: the reference comparison uses the back end's results, the
/// golden comparison (a record of the CPU evaluator) is replaced by a
/// back end versus CPU summary per output leaf.
pub fn run_check_on(suite: &Suite, check: &Check, backend: Option<Backend>) -> CheckResult {
    let t = Instant::now();
    let mut r = CheckResult {
        name: check.name.clone(),
        shader: check.shader.display().to_string(),
        function: check.function.clone(),
        points: check.sweep.len(),
        verdict: Verdict::Error,
        error: None,
        comparisons: Vec::new(),
        issues: Vec::new(),
        findings: Vec::new(),
        seconds: 0.0,
    };
    match run_inner(suite, check, &mut r, backend) {
        Ok(()) => {
            let failed = r.comparisons.iter().any(|c| c.stats.failed > 0);
            r.verdict = if failed { Verdict::Fail } else { Verdict::Pass };
        }
        Err(e) => {
            r.verdict = Verdict::Error;
            r.error = Some(e);
        }
    }
    r.seconds = t.elapsed().as_secs_f64();
    r
}

fn run_inner(
    suite: &Suite,
    check: &Check,
    r: &mut CheckResult,
    backend: Option<Backend>,
) -> Result<(), String> {
    let mut ev = evaluate(suite, check, None)?;
    if let Some(b) = backend {
        let (cols, label) = b(&ev)?;
        r.findings.push(format!("evaluated on {label}"));
        for leaf in device_summary(&ev, &cols) {
            r.findings.push(leaf);
        }
        ev.output_columns = cols;
    }
    let half = ev.outputs.iter().any(|(_, k)| *k == ScalarKind::F16);
    let got = as_f64(&ev.output_columns, &ev.outputs);
    r.issues = group_issues(&ev.issues, &check.shader, &ev.points);
    let describe = |i: usize| ev.points.describe(i);
    if let Some(model) = check.reference {
        if model.outputs != got.len() {
            return Err(format!(
                "check `{}`: `{}` returns {} value(s) but reference `{}` gives {}",
                check.name,
                check.function,
                got.len(),
                model.name,
                model.outputs
            ));
        }
        let want = reference_columns(check, model, &ev.points, &check.reference_args)?;
        let stats = compare::compare(&got, &want, &check.tolerance, half, &describe);
        let (findings, _) = findings_for(&stats, &got, &want, &check.tolerance, half, &ev.points);
        r.findings.extend(findings);
        if stats.failed > 0 {
            r.findings
                .extend(remap_hypotheses(check, model, &ev.points, &got, half));
        }
        r.comparisons.push(Comparison {
            against: format!("reference {}", model.name),
            tolerance: check.tolerance.clone(),
            stats,
        });
    }
    if let (Some(gpath), None) = (&check.golden, backend) {
        let path = suite.resolve(gpath);
        let g = golden::read(&path).map_err(|d| d.rendered)?;
        check_header(&path, &g, check, &ev)?;
        if g.header.shader_hash != ev.shader_hash {
            r.findings.push(format!(
                "the shader changed since the golden was recorded (hash {} → {})",
                g.header.shader_hash, ev.shader_hash
            ));
        }
        let want = as_f64(&g.output_columns, &g.outputs);
        let mut stats = compare::compare(&got, &want, &check.golden_tolerance, half, &describe);
        stats.changed = Some(compare::changed_bits(&ev.output_columns, &g.output_columns));
        let (findings, _) = findings_for(
            &stats,
            &got,
            &want,
            &check.golden_tolerance,
            half,
            &ev.points,
        );
        r.findings.extend(
            findings
                .into_iter()
                .map(|f| format!("against the golden: {f}")),
        );
        r.comparisons.push(Comparison {
            against: format!("golden {}", gpath.display()),
            tolerance: check.golden_tolerance.clone(),
            stats,
        });
    }
    Ok(())
}

fn check_header(path: &Path, g: &Golden, check: &Check, ev: &Evaluated) -> Result<(), String> {
    let h = &g.header;
    let shader = check.shader.display().to_string();
    let sweep = check.sweep.to_string();
    let mismatch = |line: u32, what: &str, found: &str, want: &str| {
        Err(Diagnostic::at_location(
            path,
            &std::fs::read_to_string(path).unwrap_or_default(),
            line,
            1,
            1,
            format!("golden {what} is `{found}` but the check has `{want}`; re-record with `shadegate record {}`", check.name),
        )
        .rendered)
    };
    if h.check != check.name {
        return mismatch(2, "check", &h.check, &check.name);
    }
    if h.shader != shader {
        return mismatch(3, "shader", &h.shader, &shader);
    }
    if h.function != check.function {
        return mismatch(4, "function", &h.function, &check.function);
    }
    if h.sweep != sweep {
        return mismatch(6, "sweep", &h.sweep, &sweep);
    }
    if g.inputs != ev.inputs || g.outputs != ev.outputs {
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
            &cols(&[ev.inputs.clone(), ev.outputs.clone()].concat()),
        );
    }
    if let Some(i) = (0..h.points).find(|&i| {
        g.input_columns
            .iter()
            .zip(&ev.input_columns)
            .any(|(a, b)| a[i] != b[i])
    }) {
        return Err(Diagnostic::at_location(
            path,
            &std::fs::read_to_string(path).unwrap_or_default(),
            (9 + i) as u32,
            1,
            1,
            format!("the golden's inputs differ from the check's at point {i} (the argument expressions changed?); re-record with `shadegate record {}`", check.name),
        )
        .rendered);
    }
    Ok(())
}

/// Record the golden dataset of a check (refused under `CI`).
pub fn record(suite: &Suite, check: &Check) -> Result<PathBuf, String> {
    let Some(gpath) = &check.golden else {
        return Err(format!(
            "check `{}` has no `golden` dataset to record",
            check.name
        ));
    };
    if golden::refused_in_ci() {
        return Err("refusing to record goldens because the CI environment variable is set; record them locally and commit them".into());
    }
    let ev = evaluate(suite, check, None)?;
    let path = suite.resolve(gpath);
    let g = Golden {
        header: Header {
            check: check.name.clone(),
            shader: check.shader.display().to_string(),
            function: check.function.clone(),
            shader_hash: ev.shader_hash.clone(),
            sweep: check.sweep.to_string(),
            points: ev.points.len,
        },
        inputs: ev.inputs,
        outputs: ev.outputs,
        input_columns: ev.input_columns,
        output_columns: ev.output_columns,
    };
    golden::write(&path, &g)?;
    Ok(path)
}

/// Compare two versions of a WGSL file over a check's sweep.
pub fn compare_versions(
    suite: &Suite,
    check: &Check,
    old: &Path,
    new: &Path,
) -> Result<CheckResult, String> {
    let t = Instant::now();
    let a = evaluate(suite, check, Some(old))?;
    let b = evaluate(suite, check, Some(new))?;
    if a.outputs != b.outputs {
        return Err(format!(
            "the two versions return different types ({:?} vs {:?})",
            a.outputs, b.outputs
        ));
    }
    let half = b.outputs.iter().any(|(_, k)| *k == ScalarKind::F16);
    let (ga, gb) = (
        as_f64(&a.output_columns, &a.outputs),
        as_f64(&b.output_columns, &b.outputs),
    );
    let describe = |i: usize| b.points.describe(i);
    let mut stats = compare::compare(&gb, &ga, &check.golden_tolerance, half, &describe);
    stats.changed = Some(compare::changed_bits(&a.output_columns, &b.output_columns));
    let (findings, _) = findings_for(&stats, &gb, &ga, &check.golden_tolerance, half, &b.points);
    let verdict = if stats.failed > 0 {
        Verdict::Fail
    } else {
        Verdict::Pass
    };
    Ok(CheckResult {
        name: check.name.clone(),
        shader: format!("{} → {}", old.display(), new.display()),
        function: check.function.clone(),
        points: b.points.len,
        verdict,
        error: None,
        comparisons: vec![Comparison {
            against: format!("old version {}", old.display()),
            tolerance: check.golden_tolerance.clone(),
            stats,
        }],
        issues: group_issues(&b.issues, new, &b.points),
        findings,
        seconds: t.elapsed().as_secs_f64(),
    })
}

/// Per output leaf: how the back end's results compare with the CPU
/// evaluator's (share bit-identical, share within 2 ULP, worst distance).
fn device_summary(ev: &Evaluated, cols: &[Vec<u32>]) -> Vec<String> {
    let n = ev.points.len;
    ev.outputs
        .iter()
        .enumerate()
        .map(|(j, (name, k))| {
            let (mut exact, mut two, mut worst, mut at) = (0usize, 0usize, 0u64, 0usize);
            for (i, (&a, &b)) in ev.output_columns[j].iter().zip(&cols[j]).enumerate() {
                let d = match k {
                    ScalarKind::F32 => crate::arith::ulp_distance_f32(f32::from_bits(a), f32::from_bits(b)),
                    ScalarKind::F16 => crate::arith::ulp_distance_f16(
                        half::f16::from_bits(a as u16).to_f32(),
                        half::f16::from_bits(b as u16).to_f32(),
                    ),
                    _ => u64::from(a != b),
                };
                exact += usize::from(a == b);
                two += usize::from(d <= 2);
                if d > worst {
                    (worst, at) = (d, i);
                }
            }
            let share = |x: usize| 100.0 * x as f64 / n.max(1) as f64;
            let worst_text = match worst {
                0 => "every point bit-identical".to_string(),
                u64::MAX => format!("worst NaN against a number at {}", ev.points.describe(at)),
                w => format!("worst {w} ULP at {}", ev.points.describe(at)),
            };
            format!("device vs CPU evaluator, {name}: {:.1} % bit-identical, {:.1} % within 2 ULP, {worst_text}", share(exact), share(two))
        })
        .collect()
}

/// Run every check whose name contains `filter` (all when `None`).
pub fn run(
    suite: &Suite,
    filter: Option<&str>,
    progress: impl FnMut(usize, usize, &str),
) -> RunResult {
    run_on(suite, filter, progress, None)
}

/// [`run`] on another back end (see [`run_check_on`]).
pub fn run_on(
    suite: &Suite,
    filter: Option<&str>,
    mut progress: impl FnMut(usize, usize, &str),
    backend: Option<Backend>,
) -> RunResult {
    let selected: Vec<&Check> = suite
        .checks
        .iter()
        .filter(|c| filter.is_none_or(|f| c.name.contains(f)))
        .collect();
    let total = selected.len();
    let checks = selected
        .iter()
        .enumerate()
        .map(|(i, c)| {
            progress(i + 1, total, &c.name);
            run_check_on(suite, c, backend)
        })
        .collect();
    RunResult {
        suite: suite.path.display().to_string(),
        checks,
    }
}
