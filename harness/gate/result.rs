//! What running a check produces; the report formats read only these types.

use serde::Serialize;

use crate::compare::{Stats, Tolerance};

/// Outcome of one check.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    Pass,
    Fail,
    /// The check could not run (bad shader, missing golden, ...): see `error`.
    Error,
}

/// Per-point evaluator issues of one kind and source site, grouped.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct IssueGroup {
    /// `out_of_bounds`, `step_budget` or `non_finite`.
    pub kind: String,
    /// e.g. "result is not finite although every input is; first NaN/Inf produced by sqrt".
    pub message: String,
    /// `shaders/x.wgsl:42:17`, or the file alone when unknown.
    pub location: String,
    pub count: usize,
    /// The first point's sweep parameters and the function's inputs.
    pub example: String,
}

/// One comparison of a check (against the reference model or the golden).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Comparison {
    /// `reference <model>` or `golden <path>`.
    pub against: String,
    pub tolerance: Tolerance,
    pub stats: Stats,
}

/// Everything known about one check after it ran.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CheckResult {
    pub name: String,
    pub shader: String,
    pub function: String,
    pub points: usize,
    pub verdict: Verdict,
    /// Why the check could not run (verdict `Error`).
    pub error: Option<String>,
    pub comparisons: Vec<Comparison>,
    pub issues: Vec<IssueGroup>,
    /// Plain-language explanations of where and why the numbers moved.
    pub findings: Vec<String>,
    pub seconds: f64,
}

/// A whole run.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct RunResult {
    pub suite: String,
    pub checks: Vec<CheckResult>,
}

impl RunResult {
    pub fn passed(&self) -> usize {
        self.checks
            .iter()
            .filter(|c| c.verdict == Verdict::Pass)
            .count()
    }

    pub fn failed(&self) -> usize {
        self.checks
            .iter()
            .filter(|c| c.verdict == Verdict::Fail)
            .count()
    }

    pub fn errors(&self) -> usize {
        self.checks
            .iter()
            .filter(|c| c.verdict == Verdict::Error)
            .count()
    }

    /// The CLI's exit code: 0 all pass, 1 a check failed, 2 a check could not run.
    pub fn exit_code(&self) -> i32 {
        if self.errors() > 0 {
            2
        } else if self.failed() > 0 {
            1
        } else {
            0
        }
    }
}
