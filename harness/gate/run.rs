//! Running checks: each check is one streamed pass (inputs → evaluation on
//! the CPU or another back end → reference, twin, property and golden
//! comparisons → statistics) and, when it fails, its explanation
//! ([`super::stream`]); and comparing two versions of a function.

use std::path::{Path, PathBuf};
use std::time::Instant;

use super::explain::{self, Explainer};
use super::inputs::{files_with, point_range, Build};
use super::result::{CheckResult, Finding, RunResult, ShardPart, Verdict};
use super::stream::{self, Progress};
use crate::suite::{Check, Suite};

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
///
/// The two run as one stream ([`stream::run_prepared`]): segment by
/// segment, the new version's outputs are judged against the old one's
/// under the check's `golden_tolerance`, so memory stays flat in the point
/// count; a failing comparison is explained from its evidence points.
pub fn compare_functions(
    suite: &Suite,
    check: &Check,
    old: (&Path, &str),
    new: (&Path, &str),
) -> Result<CheckResult, String> {
    let start = Instant::now();
    let [old_files, new_files] = &files_with(suite, check, &[old.0, new.0])?[..] else {
        unreachable!("one list of files per version")
    };
    // Each version alone, with none of the check's own oracles.
    let side = |function: &str, files: &[PathBuf]| Check {
        function: function.to_string(),
        shaders: files.to_vec(),
        reference: None,
        reference_expr: None,
        golden: None,
        twin: None,
        property: None,
        shard: None,
        ..check.clone()
    };
    let (old_check, new_check) = (side(old.1, old_files), side(new.1, new_files));
    let same_function = old.1 == new.1;
    let (old, new) = (old.0, new.0);
    let against = if same_function {
        format!("old version {}", old.display())
    } else {
        format!("{} in {}", old_check.function, old.display())
    };
    let old_prep = stream::Prepared::new(suite, &old_check, Some(old_files))?;
    let prep = stream::Prepared::new(suite, &new_check, Some(new_files))?.versus(old_prep, against);
    let mut r = CheckResult {
        name: check.name.clone(),
        shader: format!("{} → {}", old.display(), new.display()),
        function: if same_function {
            check.function.clone()
        } else {
            format!("{} → {}", old_check.function, new_check.function)
        },
        points: check.sweep.len(),
        verdict: Verdict::Error,
        error: None,
        comparisons: Vec::new(),
        issues: Vec::new(),
        findings: Vec::new(),
        precision: None,
        seconds: 0.0,
        albedo: None,
        shard: None,
    };
    stream::run_prepared(&prep, &mut r, None, explain::EXPLAINERS, None)?;
    r.verdict = if r.comparisons.iter().any(|c| c.stats.failed > 0) {
        Verdict::Fail
    } else {
        Verdict::Pass
    };
    Finding::rank(&mut r.findings);
    r.seconds = start.elapsed().as_secs_f64();
    Ok(r)
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
