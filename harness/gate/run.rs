//! Running checks: inputs → evaluation (CPU or another back end) →
//! reference and golden comparisons → explanation, one way, for each check.

use std::collections::BTreeMap;
use std::path::Path;
use std::time::Instant;

use super::explain::{
    self, backend_agreement, failing_points, group_issues, Context, Evidence, Explainer, Reevaluate,
};
use super::inputs::{
    as_f64, evaluate, point_range, reference_arg_columns, reference_columns,
    reference_expr_columns, reference_fits, Build,
};
use super::oracle;
use super::result::{
    CheckResult, Comparison, Finding, FindingKind, IssueGroup, RunResult, ShardPart, Verdict,
};
use crate::compare::{self, Tolerance};
use crate::eval::ScalarKind;
use crate::golden;
use crate::reference::Model;
use crate::suite::{Check, Suite};
use crate::sweep::{Expr, Points};

/// Another back end for a check's function: given the check's [`Build`]
/// (shader, function, overrides, number model) and the CPU evaluator's
/// input columns, return the output columns it computes (in the evaluator's
/// encoding) and a label naming it (adapter, driver).
pub type Backend<'a> =
    &'a (dyn Fn(&Build, &[&[u32]]) -> Result<(Vec<Vec<u32>>, String), String> + Sync);

/// Run one check.
pub fn run_check(suite: &Suite, check: &Check) -> CheckResult {
    run_check_on(suite, check, None)
}

/// Run one check with the outputs of `backend` instead of the CPU
/// evaluator's: the reference comparison uses the back end's results, the
/// golden comparison (a record of the CPU evaluator) is replaced by a
/// back end versus CPU summary per output leaf.
pub fn run_check_on(suite: &Suite, check: &Check, backend: Option<Backend>) -> CheckResult {
    run_check_explained(suite, check, backend, explain::EXPLAINERS)
}

/// [`run_check_on`] with another table of explainers (to measure what the
/// diagnosis costs: `explain::WITHOUT_DIAGNOSIS`).
pub fn run_check_explained(
    suite: &Suite,
    check: &Check,
    backend: Option<Backend>,
    explainers: &[&dyn Explainer],
) -> CheckResult {
    let start = Instant::now();
    let range = point_range(check);
    let mut r = CheckResult {
        name: check.name.clone(),
        shader: check.shader_label(),
        function: check.function.clone(),
        points: range.len(),
        verdict: Verdict::Error,
        error: None,
        comparisons: Vec::new(),
        issues: Vec::new(),
        findings: Vec::new(),
        precision: None,
        seconds: 0.0,
        shard: check.shard.map(|s| ShardPart {
            index: s.index,
            of: s.of,
            first: range.start,
            total: check.sweep.len(),
        }),
    };
    match run_inner(suite, check, &mut r, backend, explainers) {
        Ok(()) => {
            let failed = r.comparisons.iter().any(|c| c.stats.failed > 0);
            r.verdict = if failed { Verdict::Fail } else { Verdict::Pass };
        }
        Err(e) => {
            r.verdict = Verdict::Error;
            r.error = Some(e);
        }
    }
    Finding::rank(&mut r.findings);
    r.seconds = start.elapsed().as_secs_f64();
    r
}

/// Re-evaluations of a check's reference model, for explainers.
struct ReferenceOf<'a> {
    check: &'a Check,
    model: &'static Model,
}

impl Reevaluate for ReferenceOf<'_> {
    fn reference_with(
        &self,
        args: &BTreeMap<String, Expr>,
        points: &Points,
    ) -> Result<Vec<Vec<f64>>, String> {
        reference_columns(self.check, self.model, points, args)
    }

    fn reference_args(&self, points: &Points) -> Result<Vec<Vec<f64>>, String> {
        reference_arg_columns(self.check, self.model, points, &self.check.reference_args)
    }
}

/// Nothing to re-evaluate (goldens, old versions).
struct NoReference;

impl Reevaluate for NoReference {
    fn reference_with(
        &self,
        _: &BTreeMap<String, Expr>,
        _: &Points,
    ) -> Result<Vec<Vec<f64>>, String> {
        Err("no reference model to re-evaluate".into())
    }

    fn reference_args(&self, _: &Points) -> Result<Vec<Vec<f64>>, String> {
        Err("no reference model".into())
    }
}

/// Tolerance lists must have one value or one per output component.
fn check_tolerance(
    suite: &Suite,
    check: &Check,
    tol: &Tolerance,
    key: &str,
    components: usize,
) -> Result<(), String> {
    for (name, list) in [("abs", &tol.abs), ("rel", &tol.rel), ("ulp", &tol.ulp)] {
        if let Some(v) = list {
            if v.len() != 1 && v.len() != components {
                return Err(format!(
                    "{}:{}: check `{}`: `{key}.{name}` lists {} values but `{}` returns {components} component(s); give one value or {components}",
                    suite.path.display(),
                    check.line,
                    check.name,
                    v.len(),
                    check.function
                ));
            }
        }
    }
    Ok(())
}

/// One comparison: statistics, then its explanation.
#[allow(clippy::too_many_arguments)]
fn comparison(
    check: &Check,
    against: String,
    got: &[Vec<f64>],
    want: &[Vec<f64>],
    tolerance: &Tolerance,
    half: bool,
    points: &Points,
    issues: &[IssueGroup],
    model: Option<&'static Model>,
    changed: Option<usize>,
    context: Option<Context>,
    explainers: &[&dyn Explainer],
) -> (Comparison, Vec<Finding>) {
    let describe = |i: usize| points.describe(i);
    let mut stats = compare::compare(got, want, tolerance, half, &describe);
    stats.changed = changed;
    // A shard's points are numbered from its first point in the sweep.
    let first = point_range(check).start;
    for p in stats
        .worst
        .iter_mut()
        .chain(&mut stats.first_failures)
        .chain(&mut stats.first_nonfinite)
    {
        p.index += first;
    }
    let failing = if stats.failed > 0 {
        failing_points(got, want, tolerance, half)
    } else {
        Vec::new()
    };
    let evidence = Evidence {
        check,
        against: &against,
        stats: &stats,
        points,
        got,
        want,
        tolerance,
        half,
        failing: &failing,
        issues,
        model,
        context,
    };
    let findings = match model {
        Some(model) => explain::explain_with(explainers, &evidence, &ReferenceOf { check, model }),
        None => explain::explain_with(explainers, &evidence, &NoReference),
    };
    (
        Comparison {
            against,
            tolerance: tolerance.clone(),
            stats,
        },
        findings,
    )
}

fn run_inner(
    suite: &Suite,
    check: &Check,
    r: &mut CheckResult,
    backend: Option<Backend>,
    explainers: &[&dyn Explainer],
) -> Result<(), String> {
    let mut ev = evaluate(suite, check, None)?;
    if let Some(b) = backend {
        let refs: Vec<&[u32]> = ev.input_columns.iter().map(|c| &c[..]).collect();
        let (cols, label) = b(&ev.build, &refs)?;
        if cols.len() != ev.outputs.len() || cols.iter().any(|c| c.len() != ev.points.len) {
            return Err(format!(
                "check `{}`: {label} returned {} column(s) of {} point(s); expected {} of {}",
                check.name,
                cols.len(),
                cols.first().map_or(0, Vec::len),
                ev.outputs.len(),
                ev.points.len
            ));
        }
        r.findings.push(Finding {
            against: String::new(),
            explains: None,
            kind: FindingKind::EvaluatedOn { backend: label },
        });
        r.findings.extend(backend_agreement(
            &ev.outputs,
            &ev.output_columns,
            &cols,
            &ev.points,
        ));
        ev.output_columns = cols;
    }
    let half = ev.outputs.iter().any(|(_, k)| *k == ScalarKind::F16);
    let got = as_f64(&ev.output_columns, &ev.outputs);
    r.issues = group_issues(&ev.issues, &ev.build.shader, &check.shaders, &ev.points);
    if let Some(model) = check.reference {
        let got = super::args::reference_view(&ev.program, &got, model.outputs);
        reference_fits(check, model, got.len())?;
        check_tolerance(suite, check, &check.tolerance, "tolerance", got.len())?;
        let want = reference_columns(check, model, &ev.points, &check.reference_args)?;
        let (c, findings) = comparison(
            check,
            format!("reference {}", model.name),
            got,
            &want,
            &check.tolerance,
            half,
            &ev.points,
            &r.issues,
            Some(model),
            None,
            Some(Context {
                suite,
                evaluated: &ev,
            }),
            explainers,
        );
        r.comparisons.push(c);
        r.findings.extend(findings);
    }
    if let Some(expr) = &check.reference_expr {
        let width = super::args::width_of(expr, &ev.points).unwrap_or(got.len());
        let got = super::args::reference_view(&ev.program, &got, width);
        check_tolerance(suite, check, &check.tolerance, "tolerance", got.len())?;
        let want = reference_expr_columns(check, expr, &ev.points, got.len())?;
        // No decomposition of an expression to search: the statistics and
        // the locality explainers only.
        let (c, findings) = comparison(
            check,
            format!("reference {}", expr.text),
            got,
            &want,
            &check.tolerance,
            half,
            &ev.points,
            &r.issues,
            None,
            None,
            None,
            explainers,
        );
        r.comparisons.push(c);
        r.findings.extend(findings);
    }
    if let Some(kind) = ev.rounded.take() {
        r.findings.push(Finding {
            against: String::new(),
            explains: None,
            kind,
        });
    }
    // Twins and properties: their second evaluations (the twin, the swapped
    // arguments, the decoder) run on the CPU evaluator.
    let mut sides = Vec::new();
    if let Some(twin) = &check.twin {
        sides.push(oracle::twin_sides(suite, check, twin, &ev, &got)?);
    }
    if let Some(pc) = &check.property {
        sides.push(oracle::property_sides(suite, check, pc, &ev, &got)?);
    }
    for s in sides {
        check_tolerance(suite, check, &check.tolerance, "tolerance", s.got.len())?;
        let (c, findings) = comparison(
            check,
            s.against,
            &s.got,
            &s.want,
            &check.tolerance,
            s.half,
            &ev.points,
            &r.issues,
            None,
            None,
            None,
            explainers,
        );
        r.comparisons.push(c);
        r.findings.extend(findings);
    }
    if let (Some(gpath), None) = (&check.golden, backend) {
        let range = point_range(check);
        check_tolerance(
            suite,
            check,
            &check.golden_tolerance,
            "golden_tolerance",
            got.len(),
        )?;
        let path = suite.resolve(gpath);
        let mut g = golden::read_with(&path, &suite.limits).map_err(|d| d.rendered)?;
        let shader = check.shader_label();
        let sweep = check.sweep.to_string();
        golden::check_identity(
            &path,
            &g,
            &golden::Identity {
                check: &check.name,
                shader: &shader,
                function: &check.function,
                sweep: &sweep,
                points: check.sweep.len(),
                inputs: &ev.inputs,
                outputs: &ev.outputs,
                input_columns: &ev.input_columns,
                first: range.start,
            },
        )
        .map_err(|d| d.rendered)?;
        // A shard compares its own points of the record.
        for col in &mut g.output_columns {
            col.truncate(range.end);
            col.drain(..range.start);
        }
        let against = format!("golden {}", gpath.display());
        if g.header.shader_hash != ev.shader_hash {
            r.findings.push(Finding {
                against: against.clone(),
                explains: None,
                kind: FindingKind::ShaderChanged {
                    recorded: g.header.shader_hash.clone(),
                    current: ev.shader_hash.clone(),
                },
            });
        }
        let want = as_f64(&g.output_columns, &g.outputs);
        let changed = compare::changed_bits(&ev.output_columns, &g.output_columns);
        let (c, findings) = comparison(
            check,
            against,
            &got,
            &want,
            &check.golden_tolerance,
            half,
            &ev.points,
            &r.issues,
            None,
            Some(changed),
            None,
            explainers,
        );
        r.comparisons.push(c);
        r.findings.extend(findings);
    }
    Ok(())
}

/// Compare two versions of a WGSL file over a check's sweep.
pub fn compare_versions(
    suite: &Suite,
    check: &Check,
    old: &Path,
    new: &Path,
) -> Result<CheckResult, String> {
    compare_functions(suite, check, (old, &check.function), (new, &check.function))
}

/// [`compare_versions`] of two functions, each named with its file: an `f16`
/// port against its `f32` original, a fast form against the exact one. Both
/// take the check's sweep and argument expressions.
pub fn compare_functions(
    suite: &Suite,
    check: &Check,
    old: (&Path, &str),
    new: (&Path, &str),
) -> Result<CheckResult, String> {
    let start = Instant::now();
    let side = |function: &str| Check {
        function: function.to_string(),
        twin: None,
        property: None,
        ..check.clone()
    };
    let (old_check, new_check) = (side(old.1), side(new.1));
    let same_function = old.1 == new.1;
    let (old, new) = (old.0, new.0);
    let a = evaluate(suite, &old_check, Some(old))?;
    let b = evaluate(suite, &new_check, Some(new))?;
    if a.outputs.len() != b.outputs.len() || (same_function && a.outputs != b.outputs) {
        return Err(format!(
            "the two versions return different types ({:?} vs {:?})",
            a.outputs, b.outputs
        ));
    }
    let half = a
        .outputs
        .iter()
        .chain(&b.outputs)
        .any(|(_, k)| *k == ScalarKind::F16);
    let (ga, gb) = (
        as_f64(&a.output_columns, &a.outputs),
        as_f64(&b.output_columns, &b.outputs),
    );
    check_tolerance(
        suite,
        check,
        &check.golden_tolerance,
        "golden_tolerance",
        gb.len(),
    )?;
    let issues = group_issues(&b.issues, &b.build.shader, &[new.to_path_buf()], &b.points);
    let changed = compare::changed_bits(&a.output_columns, &b.output_columns);
    let (c, mut findings) = comparison(
        check,
        if same_function {
            format!("old version {}", old.display())
        } else {
            format!("{} in {}", old_check.function, old.display())
        },
        &gb,
        &ga,
        &check.golden_tolerance,
        half,
        &b.points,
        &issues,
        None,
        Some(changed),
        None,
        explain::EXPLAINERS,
    );
    Finding::rank(&mut findings);
    let verdict = if c.stats.failed > 0 {
        Verdict::Fail
    } else {
        Verdict::Pass
    };
    Ok(CheckResult {
        name: check.name.clone(),
        shader: format!("{} → {}", old.display(), new.display()),
        function: if same_function {
            check.function.clone()
        } else {
            format!("{} → {}", old_check.function, new_check.function)
        },
        points: b.points.len,
        verdict,
        error: None,
        comparisons: vec![c],
        issues,
        findings,
        precision: None,
        seconds: start.elapsed().as_secs_f64(),
        shard: None,
    })
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
