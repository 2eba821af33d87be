//! The JSON report: the whole run result for scripts, with non-finite numbers kept
//! apart from missing values.
//!
//! The derived `Serialize` of the result types would hand non-finite numbers to
//! serde_json, which writes them as `null`: a NaN result, an infinite one and an
//! unbounded headroom would all read the same as "no value". So this module mirrors the
//! result types field for field, with every `f64` going through [`Num`]: finite values
//! are JSON numbers (shortest form that reads back to the same f64), and the three
//! non-finite values are the strings `"NaN"`, `"inf"` and `"-inf"`. `null` only ever
//! means "absent" (`error` of a check that ran, `worst` when nothing moved, `changed`
//! when not compared with a golden).

use serde::ser::{SerializeSeq, Serializer};
use serde::Serialize;

use crate::compare::{NanPolicy, PointReport, Stats, Tolerance};
use crate::gate::{CheckResult, Comparison, Finding, IssueGroup, RunResult, Verdict};

use super::Timings;

/// The value of the top-level `format` field.
pub const FORMAT: &str = "shadegate-run";
/// The value of the top-level `version` field; raised when a field changes meaning or
/// goes away (new fields may appear without it).
pub const VERSION: u32 = 1;

/// The run as pretty-printed JSON:
///
/// ```text
/// { "format": "shadegate-run", "version": 1, "suite": "...",
///   "summary": { "checks", "passed", "failed", "errors", "exit_code", "points", "seconds" },
///   "checks": [ { "name", "shader", "function", "points", "verdict": "pass"|"fail"|"error",
///                 "error", "seconds", "findings": [..], "issues": [{ "kind", "message",
///                 "location", "count", "example" }],
///                 "comparisons": [ { "against",
///                   "tolerance": { "abs", "rel", "ulp", "nan", "reason", "describe" },
///                   "stats": { every field of compare::Stats (sum_sq as the
///                              exact sum's text form); points as
///                              { "index", "params", "got", "want", "component",
///                                "abs", "rel", "ulp" } } } ],
///                 "shard": { "index", "of", "first", "total" } (run --shard only),
///                 "albedo": { "over", "view", "roughness", "angles", "roughnesses",
///                             "albedo", "model", "reference", "note" }
///                           (an albedo property only) } ] }
/// ```
///
/// Every field of the result types appears under its own name. Non-finite numbers are
/// the strings `"NaN"`, `"inf"` and `"-inf"` (see the module doc).
pub fn json(run: &RunResult) -> String {
    json_with(run, Timings::Show)
}

/// [`json()`], with or without the `seconds` fields (without: same code, same bytes).
pub fn json_with(run: &RunResult, timings: Timings) -> String {
    let mut doc = Run {
        format: FORMAT,
        version: VERSION,
        suite: &run.suite,
        summary: Summary {
            checks: run.checks.len(),
            passed: run.passed(),
            failed: run.failed(),
            errors: run.errors(),
            exit_code: run.exit_code(),
            points: run.checks.iter().map(|c| c.points).sum(),
            seconds: Some(Num(run.checks.iter().map(|c| c.seconds).sum())),
        },
        checks: run.checks.iter().map(Check::from).collect(),
    };
    if timings == Timings::Omit {
        doc.summary.seconds = None;
        for c in &mut doc.checks {
            c.seconds = None;
        }
    }
    // Only strings, integers, finite floats and sequences of them: cannot fail.
    serde_json::to_string_pretty(&doc).expect("the JSON mirror of a run always serialises")
}

/// An f64 that survives JSON: finite as a number, otherwise `"NaN"`, `"inf"`, `"-inf"`.
#[derive(Clone, Copy)]
struct Num(f64);

impl Serialize for Num {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let x = self.0;
        if x.is_finite() {
            s.serialize_f64(x)
        } else if x.is_nan() {
            s.serialize_str("NaN")
        } else if x > 0.0 {
            s.serialize_str("inf")
        } else {
            s.serialize_str("-inf")
        }
    }
}

/// A slice of f64, each through [`Num`].
struct Nums<'a>(&'a [f64]);

impl Serialize for Nums<'_> {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut seq = s.serialize_seq(Some(self.0.len()))?;
        for x in self.0 {
            seq.serialize_element(&Num(*x))?;
        }
        seq.end()
    }
}

#[derive(Serialize)]
struct Run<'a> {
    format: &'static str,
    version: u32,
    suite: &'a str,
    summary: Summary,
    checks: Vec<Check<'a>>,
}

#[derive(Serialize)]
struct Summary {
    checks: usize,
    passed: usize,
    failed: usize,
    errors: usize,
    exit_code: i32,
    points: usize,
    #[serde(skip_serializing_if = "Option::is_none")]
    seconds: Option<Num>,
}

#[derive(Serialize)]
struct Check<'a> {
    name: &'a str,
    shader: &'a str,
    function: &'a str,
    points: usize,
    verdict: Verdict,
    error: Option<&'a str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    seconds: Option<Num>,
    comparisons: Vec<Compared<'a>>,
    // IssueGroup holds no float: its derived form is already exact.
    issues: &'a [IssueGroup],
    findings: Vec<Found<'a>>,
    /// Non-finite numbers in it are written as null.
    #[serde(skip_serializing_if = "Option::is_none")]
    precision: Option<&'a crate::precision::Analysis>,
    /// Which share of the sweep a shard's result covers (`run --shard`).
    #[serde(skip_serializing_if = "Option::is_none")]
    shard: Option<crate::gate::ShardPart>,
    /// An albedo property's table (`gate::AlbedoTable`).
    #[serde(skip_serializing_if = "Option::is_none")]
    albedo: Option<Albedo<'a>>,
}

/// [`crate::gate::AlbedoTable`], field for field, its numbers through [`Num`]
/// (an empty cell is `"NaN"`).
#[derive(Serialize)]
struct Albedo<'a> {
    over: &'a str,
    view: &'a str,
    roughness: Option<&'a str>,
    angles: Nums<'a>,
    roughnesses: Nums<'a>,
    albedo: Vec<Nums<'a>>,
    model: &'a str,
    reference: Option<Vec<Nums<'a>>>,
    note: Option<&'a str>,
}

impl<'a> From<&'a crate::gate::AlbedoTable> for Albedo<'a> {
    fn from(t: &'a crate::gate::AlbedoTable) -> Albedo<'a> {
        let rows = |m: &'a [Vec<f64>]| m.iter().map(|r| Nums(r)).collect();
        Albedo {
            over: &t.over,
            view: &t.view,
            roughness: t.roughness.as_deref(),
            angles: Nums(&t.angles),
            roughnesses: Nums(&t.roughnesses),
            albedo: rows(&t.albedo),
            model: &t.model,
            reference: t.reference.as_deref().map(rows),
            note: t.note.as_deref(),
        }
    }
}

impl<'a> From<&'a CheckResult> for Check<'a> {
    fn from(c: &'a CheckResult) -> Check<'a> {
        Check {
            name: &c.name,
            shader: &c.shader,
            function: &c.function,
            points: c.points,
            verdict: c.verdict,
            error: c.error.as_deref(),
            seconds: Some(Num(c.seconds)),
            comparisons: c.comparisons.iter().map(Compared::from).collect(),
            issues: &c.issues,
            precision: c.precision.as_ref(),
            shard: c.shard,
            albedo: c.albedo.as_ref().map(Albedo::from),
            findings: c
                .findings
                .iter()
                .map(|f| Found {
                    message: super::format::finding(f),
                    finding: f,
                })
                .collect(),
        }
    }
}

/// A finding: its typed evidence, and the sentence the text report shows.
/// (Its numbers are finite by construction: factors, shares and ranges.)
#[derive(Serialize)]
struct Found<'a> {
    #[serde(flatten)]
    finding: &'a Finding,
    message: String,
}

#[derive(Serialize)]
struct Compared<'a> {
    against: &'a str,
    tolerance: Tol<'a>,
    stats: St<'a>,
}

impl<'a> From<&'a Comparison> for Compared<'a> {
    fn from(k: &'a Comparison) -> Compared<'a> {
        Compared {
            against: &k.against,
            tolerance: Tol::from(&k.tolerance),
            stats: St::from(&k.stats),
        }
    }
}

#[derive(Serialize)]
struct Tol<'a> {
    abs: Option<Nums<'a>>,
    rel: Option<Nums<'a>>,
    ulp: Option<Nums<'a>>,
    nan: NanPolicy,
    reason: &'a str,
    /// The bounds in words, as the other reports write them.
    describe: String,
}

impl<'a> From<&'a Tolerance> for Tol<'a> {
    fn from(t: &'a Tolerance) -> Tol<'a> {
        Tol {
            abs: t.abs.as_deref().map(Nums),
            rel: t.rel.as_deref().map(Nums),
            ulp: t.ulp.as_deref().map(Nums),
            nan: t.nan,
            reason: &t.reason,
            describe: t.describe(),
        }
    }
}

#[derive(Serialize)]
struct St<'a> {
    points: usize,
    skipped: usize,
    failed: usize,
    fail_share: Num,
    max_abs: Num,
    max_rel: Num,
    max_ulp: Num,
    rms_abs: Num,
    worst_badness: Num,
    headroom: Num,
    stale_tolerance: bool,
    worst: Option<Point<'a>>,
    first_failures: Vec<Point<'a>>,
    nonfinite: usize,
    first_nonfinite: Vec<Point<'a>>,
    changed: Option<usize>,
    components: usize,
    /// The exact sum of squared errors, losslessly (`compare::ExactSum`),
    /// for merging shards.
    sum_sq: String,
}

impl<'a> From<&'a Stats> for St<'a> {
    fn from(s: &'a Stats) -> St<'a> {
        St {
            points: s.points,
            skipped: s.skipped,
            failed: s.failed,
            fail_share: Num(s.fail_share),
            max_abs: Num(s.max_abs),
            max_rel: Num(s.max_rel),
            max_ulp: Num(s.max_ulp),
            rms_abs: Num(s.rms_abs),
            worst_badness: Num(s.worst_badness),
            headroom: Num(s.headroom),
            stale_tolerance: s.stale_tolerance,
            worst: s.worst.as_ref().map(Point::from),
            first_failures: s.first_failures.iter().map(Point::from).collect(),
            nonfinite: s.nonfinite,
            first_nonfinite: s.first_nonfinite.iter().map(Point::from).collect(),
            changed: s.changed,
            components: s.components,
            sum_sq: s.sum_sq.to_text(),
        }
    }
}

#[derive(Serialize)]
struct Point<'a> {
    index: usize,
    params: &'a str,
    got: Nums<'a>,
    want: Nums<'a>,
    component: usize,
    abs: Num,
    rel: Num,
    ulp: Num,
    near_zero: bool,
}

impl<'a> From<&'a PointReport> for Point<'a> {
    fn from(p: &'a PointReport) -> Point<'a> {
        Point {
            index: p.index,
            params: &p.params,
            got: Nums(&p.got),
            want: Nums(&p.want),
            component: p.component,
            abs: Num(p.abs),
            rel: Num(p.rel),
            ulp: Num(p.ulp),
            near_zero: p.near_zero,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn non_finite_numbers_are_strings_finite_ones_numbers() {
        let j = |x: f64| serde_json::to_string(&Num(x)).unwrap();
        assert_eq!(j(f64::NAN), "\"NaN\"");
        assert_eq!(j(f64::INFINITY), "\"inf\"");
        assert_eq!(j(f64::NEG_INFINITY), "\"-inf\"");
        assert_eq!(j(0.1), "0.1");
        assert_eq!(j(-0.0), "-0.0");
        let v = [1.5, f64::NAN];
        assert_eq!(serde_json::to_string(&Nums(&v)).unwrap(), "[1.5,\"NaN\"]");
    }
}
