//! Running checks: each check is one streamed pass (inputs → evaluation on
//! the CPU or another back end → reference, twin, property and golden
//! comparisons → statistics) and, when it fails, its explanation
//! ([`super::stream`]); and comparing two versions of a function.

use std::path::Path;
use std::time::Instant;

use super::explain::{self, failing_points, group_issues, Evidence, Explainer};
use super::inputs::{as_f64, evaluate, files_with, point_range, Build};
use super::result::{CheckResult, Comparison, Finding, IssueGroup, RunResult, ShardPart, Verdict};
use super::stream::{self, check_tolerance, NoReference, Progress};
use crate::compare::{self, Tolerance};
use crate::eval::ScalarKind;
use crate::suite::{Check, Suite};
use crate::sweep::Points;

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
    run_check_with(suite, check, backend, explainers, None)
}

/// [`run_check_explained`] that reports its progress after each segment of
/// points (points done, points of the check), for long checks.
pub fn run_check_with(
    suite: &Suite,
    check: &Check,
    backend: Option<Backend>,
    explainers: &[&dyn Explainer],
    progress: Option<Progress>,
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
        albedo: None,
    };
    match stream::run_into(suite, check, &mut r, backend, explainers, progress) {
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

/// One comparison of two versions: statistics, then its explanation.
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
    changed: Option<usize>,
) -> (Comparison, Vec<Finding>) {
    let describe = |i: usize| points.describe(i);
    let mut stats = compare::compare(got, want, tolerance, half, &describe);
    stats.changed = changed;
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
        model: None,
        context: None,
    };
    let findings = explain::explain_with(explain::EXPLAINERS, &evidence, &NoReference);
    (
        Comparison {
            against,
            tolerance: tolerance.clone(),
            stats,
        },
        findings,
    )
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
    let [old_files, new_files] = &files_with(suite, check, &[old.0, new.0])?[..] else {
        unreachable!("one list of files per version")
    };
    let (old, new) = (old.0, new.0);
    let a = evaluate(suite, &old_check, Some(old_files))?;
    let b = evaluate(suite, &new_check, Some(new_files))?;
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
    let issues = group_issues(&b.issues, &b.build.shader, new_files, &b.points);
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
        Some(changed),
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
        albedo: None,
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
    progress: impl FnMut(usize, usize, &str),
    backend: Option<Backend>,
) -> RunResult {
    run_reporting(suite, filter, progress, None, backend)
}

/// [`run_on`] that also reports, within each check, the points done and
/// the check's point count after each segment (`points`), so a long check
/// can show its progress and an estimate of the time left.
pub fn run_reporting(
    suite: &Suite,
    filter: Option<&str>,
    mut progress: impl FnMut(usize, usize, &str),
    points: Option<Progress>,
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
            run_check_with(suite, c, backend, explain::EXPLAINERS, points)
        })
        .collect();
    RunResult {
        suite: suite.path.display().to_string(),
        checks,
    }
}
