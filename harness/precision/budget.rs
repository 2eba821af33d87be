//! The precision budget of a function that computes in f16: how much of a
//! check's tolerance each line's rounding uses up, and the sweep inputs where
//! the f16 result misses the tolerance against a reference (an f32 twin, or
//! the function's own f64 values), with the line that dominates there.
//!
//! A point's *use* of the tolerance is the comparison's badness
//! (`compare::assess`: the error over the tolerance, the smallest ratio of
//! the abs/rel/ULP bounds given, above 1 fails), capped at [`USE_CAP`] (a
//! non-finite result counts the cap) so that an overflow does not swamp
//! every mean. Per line, the use is attributed like the shares
//! (`shares.rs`: Shapley values over orders of making lines exact, in the
//! emulated working arithmetic), per point: the lines' parts at a point add
//! up to its use less what is left with every line exact (against a twin:
//! the twin's own difference from the function's f64 values, which no line
//! of the f16 function explains).

use serde::Serialize;

use crate::compare::{assess, Tolerance};

/// An f64 as JSON: a number when finite, else `"inf"`, `"-inf"` or `"NaN"`
/// (the convention of the run's JSON report).
fn num<S: serde::Serializer>(x: &f64, s: S) -> Result<S::Ok, S::Error> {
    if x.is_finite() {
        s.serialize_f64(*x)
    } else if x.is_nan() {
        s.serialize_str("NaN")
    } else if *x > 0.0 {
        s.serialize_str("inf")
    } else {
        s.serialize_str("-inf")
    }
}

/// A point's use of the tolerance is capped here (times the tolerance).
pub const USE_CAP: f64 = 100.0;

/// What an f16 function's budget is measured against.
#[derive(Clone, Debug)]
pub struct BudgetSpec {
    /// The check's tolerance.
    pub tolerance: Tolerance,
    /// The expected values at every point of the sweep, one column per output
    /// leaf (a twin's values); `None`: the function's own f64 values.
    pub reference: Option<Vec<Vec<f64>>>,
    /// What the reference is, for the report (`twin d_ggx_f32`).
    pub against: String,
}

/// The measured budget.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Budget {
    /// `twin NAME` or `f64 values of the function`.
    pub against: String,
    /// The tolerance, as `compare::Tolerance::describe` writes it.
    pub tolerance: String,
    /// Points of the sweep, and those where the working (f16) result misses
    /// the tolerance.
    pub points: usize,
    pub failing: usize,
    /// Largest use of the tolerance over the sweep (uncapped; infinite for a
    /// non-finite result).
    #[serde(serialize_with = "num")]
    pub max_use: f64,
    /// The worst failing points, worst first.
    pub misses: Vec<Miss>,
    /// Mean use (capped) over the share points in the emulated working
    /// arithmetic, and what is left of it with every line exact.
    pub mean_use: f64,
    pub reference_part: f64,
    /// Per line with float operations, in source order.
    pub lines: Vec<LineBudget>,
}

/// One line's part of the tolerance.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct LineBudget {
    pub line: u32,
    /// Mean part of the tolerance used over the share points (1 = all of it).
    pub mean: f64,
    /// Largest part at one point (share points and misses), and where.
    pub max: f64,
    pub max_point: usize,
    pub max_inputs: String,
}

/// A point where the f16 result misses the tolerance.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Miss {
    pub point: usize,
    pub inputs: String,
    /// Error over the tolerance (infinite for a non-finite result).
    #[serde(serialize_with = "num")]
    pub used: f64,
    /// The output component judged worst, its working and expected values.
    pub component: usize,
    #[serde(serialize_with = "num")]
    pub got: f64,
    #[serde(serialize_with = "num")]
    pub want: f64,
    /// The line whose part of the (capped) use is largest here, and that
    /// part.
    pub line: Option<u32>,
    pub line_part: f64,
}

/// Per point: the use of the tolerance, capped at [`USE_CAP`].
pub(super) fn uses(got: &[Vec<f64>], want: &[Vec<f64>], tol: &Tolerance, half: bool) -> Vec<f64> {
    let n = got.first().map_or(0, Vec::len);
    (0..n)
        .map(|p| {
            let b = assess(got, want, p, tol, half).badness;
            if b.is_nan() {
                USE_CAP
            } else {
                b.min(USE_CAP)
            }
        })
        .collect()
}

/// The failing points of the working result: how many, the largest use, and
/// the `worst` worst (ties go to the earlier point), as (point, use,
/// component).
pub(super) fn failing(
    got: &[Vec<f64>],
    want: &[Vec<f64>],
    tol: &Tolerance,
    half: bool,
    worst: usize,
) -> (usize, f64, Vec<(usize, f64, usize)>) {
    let n = got.first().map_or(0, Vec::len);
    let mut fails = Vec::new();
    let mut max: f64 = 0.0;
    for p in 0..n {
        let a = assess(got, want, p, tol, half);
        max = max.max(a.badness);
        if a.fails() {
            fails.push((p, a.badness, a.component));
        }
    }
    let count = fails.len();
    fails.sort_by(|x, y| y.1.total_cmp(&x.1).then(x.0.cmp(&y.0)));
    fails.truncate(worst);
    (count, max, fails)
}

/// What [`assemble`] reads from the analysis.
pub(super) struct Parts<'a> {
    pub attribution: Option<&'a super::shares::Attribution>,
    /// The lines, in the attribution's order.
    pub lines: &'a [u32],
    /// Sweep index of each share point; the first `sample` are the random
    /// sample, the rest the misses.
    pub chosen: &'a [usize],
    pub sample: usize,
    /// Index among the share points of each of the worst failing points.
    pub miss_at: &'a [usize],
    pub working: &'a [Vec<f64>],
    pub want: &'a [Vec<f64>],
}

/// The budget from the failing points and the attribution's second metric
/// (the use of the tolerance).
pub(super) fn assemble(
    spec: &BudgetSpec,
    parts: &Parts<'_>,
    (failing, max_use, worst): (usize, f64, Vec<(usize, f64, usize)>),
    points: usize,
    describe: &dyn Fn(usize) -> String,
) -> Budget {
    let t = parts.attribution.filter(|t| t.none.len() > 1);
    let ns = parts.sample;
    let mean = |v: &[f64]| {
        if ns == 0 {
            0.0
        } else {
            v[..ns].iter().sum::<f64>() / ns as f64
        }
    };
    let lines = parts
        .lines
        .iter()
        .enumerate()
        .map(|(l, &line)| {
            let (mut max, mut at) = (0.0, 0);
            let mut mean_part = 0.0;
            if let Some(t) = t {
                mean_part = mean(&t.phi[1][l]);
                for (i, &v) in t.phi[1][l].iter().enumerate() {
                    if v > max {
                        (max, at) = (v, i);
                    }
                }
            }
            let point = parts.chosen.get(at).copied().unwrap_or(0);
            LineBudget {
                line,
                mean: mean_part,
                max,
                max_point: point,
                max_inputs: describe(point),
            }
        })
        .collect();
    let misses = worst
        .iter()
        .enumerate()
        .map(|(i, &(p, used, c))| {
            let idx = parts.miss_at[i];
            let dominant = t.and_then(|t| {
                (0..parts.lines.len())
                    .map(|l| (l, t.phi[1][l][idx]))
                    .max_by(|a, b| a.1.total_cmp(&b.1))
            });
            Miss {
                point: p,
                inputs: describe(p),
                used,
                component: c,
                got: parts.working[c][p],
                want: parts.want[c][p],
                line: dominant.map(|(l, _)| parts.lines[l]),
                line_part: dominant.map_or(0.0, |d| d.1),
            }
        })
        .collect();
    Budget {
        against: spec.against.clone(),
        tolerance: spec.tolerance.describe(),
        points,
        failing,
        max_use,
        misses,
        mean_use: t.map_or(0.0, |t| mean(&t.none[1])),
        reference_part: t.map_or(0.0, |t| mean(&t.all[1])),
        lines,
    }
}
