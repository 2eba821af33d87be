//! Splitting a run across parallel jobs and joining the results: `run
//! --shard K/N` evaluates shard K of every check's sweep ([`sharded`],
//! [`crate::sweep::Shard`]), and `shadegate merge` reads the N JSON reports
//! back ([`read_report`]) and combines them ([`merge`]) into the report a
//! single run gives.
//!
//! What merges exactly, and how: counts add; maxima take the largest; the
//! worst point is chosen across shards by the rule `compare::compare` uses
//! point by point (larger badness, ties to the larger ULP then absolute
//! error, else the earlier point); the first failing and non-finite points
//! are the shards' lists in shard order, cut to `compare::LISTED`; the RMS
//! comes from the shards' exact sums of squares (`compare::ExactSum`), so it
//! has the same bits; issue groups add their counts and keep the first
//! shard's example; the verdict and exit code follow from the merged numbers.
//! The non-finite finding is recomputed from the merged counts. The other
//! findings explain one shard's failing points (the hypothesis search, the
//! range of the failures, a constant factor) and cannot be recomputed
//! without every point: the merged report keeps each distinct one once, in
//! shard order. Run a failing check alone for its whole-sweep explanation.

use std::collections::BTreeMap;

use serde::Deserialize;

use super::result::{
    AlbedoTable, CheckResult, Comparison, Finding, FindingKind, IssueGroup, RunResult, ShardPart,
    Verdict,
};
use crate::compare::{ExactSum, NanPolicy, PointReport, Stats, Tolerance};
use crate::suite::Suite;
use crate::sweep::Shard;

/// The suite with every check limited to `shard` of its sweep.
pub fn sharded(suite: &Suite, shard: Shard) -> Suite {
    let mut s = suite.clone();
    for c in &mut s.checks {
        c.shard = Some(shard);
    }
    s
}

/// An f64 as the JSON report writes it: a number, or `"NaN"`, `"inf"`, `"-inf"`.
#[derive(Deserialize)]
#[serde(untagged)]
enum Num {
    N(f64),
    S(String),
}

impl Num {
    fn get(&self) -> Result<f64, String> {
        match self {
            Num::N(x) => Ok(*x),
            Num::S(s) => match s.as_str() {
                "NaN" => Ok(f64::NAN),
                "inf" => Ok(f64::INFINITY),
                "-inf" => Ok(f64::NEG_INFINITY),
                _ => Err(format!("`{s}` is not a number")),
            },
        }
    }
}

fn nums(v: &[Num]) -> Result<Vec<f64>, String> {
    v.iter().map(Num::get).collect()
}

#[derive(Deserialize)]
struct RunDoc {
    format: String,
    version: u32,
    suite: String,
    checks: Vec<CheckDoc>,
}

#[derive(Deserialize)]
struct CheckDoc {
    name: String,
    shader: String,
    function: String,
    points: usize,
    verdict: Verdict,
    error: Option<String>,
    seconds: Option<Num>,
    comparisons: Vec<ComparedDoc>,
    issues: Vec<IssueGroup>,
    findings: Vec<serde_json::Value>,
    precision: Option<serde_json::Value>,
    shard: Option<ShardPart>,
    #[serde(default)]
    albedo: Option<AlbedoDoc>,
}

#[derive(Deserialize)]
struct AlbedoDoc {
    over: String,
    view: String,
    roughness: Option<String>,
    angles: Vec<Num>,
    roughnesses: Vec<Num>,
    albedo: Vec<Vec<Num>>,
    model: String,
    reference: Option<Vec<Vec<Num>>>,
    note: Option<String>,
}

impl AlbedoDoc {
    fn get(&self) -> Result<AlbedoTable, String> {
        let rows = |m: &[Vec<Num>]| m.iter().map(|r| nums(r)).collect::<Result<Vec<_>, _>>();
        let t = AlbedoTable {
            over: self.over.clone(),
            view: self.view.clone(),
            roughness: self.roughness.clone(),
            angles: nums(&self.angles)?,
            roughnesses: nums(&self.roughnesses)?,
            albedo: rows(&self.albedo)?,
            model: self.model.clone(),
            reference: self.reference.as_deref().map(rows).transpose()?,
            note: self.note.clone(),
        };
        let shape = |m: &[Vec<f64>]| {
            m.len() == t.angles.len() && m.iter().all(|r| r.len() == t.roughnesses.len())
        };
        if !shape(&t.albedo) || !t.reference.as_deref().is_none_or(shape) {
            return Err(format!(
                "the albedo table is not {} rows of {} cells",
                t.angles.len(),
                t.roughnesses.len()
            ));
        }
        Ok(t)
    }
}

#[derive(Deserialize)]
struct ComparedDoc {
    against: String,
    tolerance: TolDoc,
    stats: StatsDoc,
}

#[derive(Deserialize)]
struct TolDoc {
    abs: Option<Vec<Num>>,
    rel: Option<Vec<Num>>,
    ulp: Option<Vec<Num>>,
    nan: NanPolicy,
    reason: String,
}

#[derive(Deserialize)]
struct StatsDoc {
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
    worst: Option<PointDoc>,
    first_failures: Vec<PointDoc>,
    nonfinite: usize,
    first_nonfinite: Vec<PointDoc>,
    changed: Option<usize>,
    components: usize,
    sum_sq: String,
}

#[derive(Deserialize)]
struct PointDoc {
    index: usize,
    params: String,
    got: Vec<Num>,
    want: Vec<Num>,
    component: usize,
    abs: Num,
    rel: Num,
    ulp: Num,
    near_zero: bool,
}

impl PointDoc {
    fn get(&self) -> Result<PointReport, String> {
        Ok(PointReport {
            index: self.index,
            params: self.params.clone(),
            got: nums(&self.got)?,
            want: nums(&self.want)?,
            component: self.component,
            abs: self.abs.get()?,
            rel: self.rel.get()?,
            ulp: self.ulp.get()?,
            near_zero: self.near_zero,
        })
    }
}

impl StatsDoc {
    fn get(&self) -> Result<Stats, String> {
        let points = |v: &[PointDoc]| v.iter().map(PointDoc::get).collect::<Result<Vec<_>, _>>();
        Ok(Stats {
            points: self.points,
            skipped: self.skipped,
            failed: self.failed,
            fail_share: self.fail_share.get()?,
            max_abs: self.max_abs.get()?,
            max_rel: self.max_rel.get()?,
            max_ulp: self.max_ulp.get()?,
            rms_abs: self.rms_abs.get()?,
            worst_badness: self.worst_badness.get()?,
            headroom: self.headroom.get()?,
            stale_tolerance: self.stale_tolerance,
            worst: self.worst.as_ref().map(PointDoc::get).transpose()?,
            first_failures: points(&self.first_failures)?,
            nonfinite: self.nonfinite,
            first_nonfinite: points(&self.first_nonfinite)?,
            changed: self.changed,
            components: self.components,
            sum_sq: ExactSum::from_text(&self.sum_sq)
                .ok_or_else(|| format!("`sum_sq` `{}` is not an exact sum", self.sum_sq))?,
        })
    }
}

/// Read a JSON run report (`run --format json`) back into a [`RunResult`].
/// `file` names it in errors, which give the line and column where the
/// JSON parser placed the problem.
pub fn read_report(file: &str, text: &str) -> Result<RunResult, String> {
    let doc: RunDoc = serde_json::from_str(text).map_err(|e| {
        format!(
            "{file}:{}:{}: not a shadegate JSON run report: {e}",
            e.line(),
            e.column()
        )
    })?;
    if doc.format != crate::report::JSON_FORMAT || doc.version != crate::report::JSON_VERSION {
        return Err(format!(
            "{file}:1:1: format `{}` version {}, but this shadegate reads `{}` version {}",
            doc.format,
            doc.version,
            crate::report::JSON_FORMAT,
            crate::report::JSON_VERSION
        ));
    }
    let mut checks = Vec::new();
    for c in doc.checks {
        let at = |m: String| format!("{file}: check `{}`: {m}", c.name);
        let comparisons = c
            .comparisons
            .iter()
            .map(|k| {
                let t = &k.tolerance;
                let opt = |v: &Option<Vec<Num>>| v.as_deref().map(nums).transpose();
                Ok(Comparison {
                    against: k.against.clone(),
                    tolerance: Tolerance {
                        abs: opt(&t.abs)?,
                        rel: opt(&t.rel)?,
                        ulp: opt(&t.ulp)?,
                        nan: t.nan,
                        reason: t.reason.clone(),
                    },
                    stats: k.stats.get()?,
                })
            })
            .collect::<Result<Vec<_>, String>>()
            .map_err(at)?;
        let findings = c
            .findings
            .iter()
            .map(|f| {
                let mut f = f.clone();
                if let Some(o) = f.as_object_mut() {
                    // The sentence is rendered again from the evidence.
                    o.remove("message");
                }
                serde_json::from_value::<Finding>(f).map_err(|e| format!("a finding: {e}"))
            })
            .collect::<Result<Vec<_>, String>>()
            .map_err(at)?;
        if c.precision.is_some() {
            return Err(at(
                "carries a precision analysis, which shards cannot merge; run `--precision` without `--shard`".into(),
            ));
        }
        checks.push(CheckResult {
            name: c.name.clone(),
            shader: c.shader,
            function: c.function,
            points: c.points,
            verdict: c.verdict,
            error: c.error,
            comparisons,
            issues: c.issues,
            findings,
            precision: None,
            seconds: c.seconds.map_or(Ok(0.0), |s| s.get()).map_err(at)?,
            shard: c.shard,
            albedo: c.albedo.as_ref().map(|a| a.get().map_err(at)).transpose()?,
        });
    }
    Ok(RunResult {
        suite: doc.suite,
        checks,
    })
}

/// One shard's report and the file it came from.
pub struct Part {
    pub file: String,
    pub run: RunResult,
}

/// Combine the reports of shards 1..N of one run into the report of the
/// whole (see the module doc for what merges how). Every part must be a
/// shard report of the same suite, N of them with each K once, with the
/// same checks in the same order; each error names the file.
pub fn merge(parts: &[Part]) -> Result<RunResult, String> {
    let first = parts.first().ok_or("merge needs the shard reports")?;
    // Each file's shard: all its checks must agree on it.
    let mut shard_of = Vec::new();
    for p in parts {
        let mut shard: Option<Shard> = None;
        for c in &p.run.checks {
            let Some(sp) = c.shard else {
                return Err(format!(
                    "{}: check `{}` has no `shard`: not a report of `run --shard K/N`",
                    p.file, c.name
                ));
            };
            let s = Shard {
                index: sp.index,
                of: sp.of,
            };
            if shard.is_some_and(|x| x != s) {
                return Err(format!(
                    "{}: check `{}` is shard {s} but the file's first check is shard {}",
                    p.file,
                    c.name,
                    shard.expect("set")
                ));
            }
            shard = Some(s);
        }
        let Some(s) = shard else {
            return Err(format!("{}: the report has no checks", p.file));
        };
        shard_of.push(s);
    }
    let n = shard_of[0].of;
    let mut by_index: BTreeMap<usize, usize> = BTreeMap::new();
    for (i, (p, s)) in parts.iter().zip(&shard_of).enumerate() {
        if s.of != n {
            return Err(format!(
                "{}: shard {s}, but {} is a shard of {n}: the files come from different splits",
                p.file, first.file
            ));
        }
        if p.run.suite != first.run.suite {
            return Err(format!(
                "{}: a run of suite `{}`, but {} is a run of `{}`",
                p.file, p.run.suite, first.file, first.run.suite
            ));
        }
        if let Some(&j) = by_index.get(&s.index) {
            return Err(format!(
                "{}: shard {s} again (also {})",
                p.file, parts[j].file
            ));
        }
        by_index.insert(s.index, i);
    }
    if let Some(k) = (1..=n).find(|k| !by_index.contains_key(k)) {
        return Err(format!(
            "shard {k}/{n} is missing: give the reports of all {n} shards (got {})",
            parts
                .iter()
                .map(|p| p.file.as_str())
                .collect::<Vec<_>>()
                .join(", ")
        ));
    }
    // Shards in order 1..N.
    let ordered: Vec<&Part> = by_index.values().map(|&i| &parts[i]).collect();
    let names: Vec<&str> = ordered[0]
        .run
        .checks
        .iter()
        .map(|c| c.name.as_str())
        .collect();
    for p in &ordered {
        let these: Vec<&str> = p.run.checks.iter().map(|c| c.name.as_str()).collect();
        if these != names {
            return Err(format!(
                "{}: checks {} but {} has {}: the shards ran different checks",
                p.file,
                these.join(", "),
                ordered[0].file,
                names.join(", ")
            ));
        }
    }
    let mut checks = Vec::new();
    for (i, _) in names.iter().enumerate() {
        let shards: Vec<(&str, &CheckResult)> = ordered
            .iter()
            .map(|p| (p.file.as_str(), &p.run.checks[i]))
            .collect();
        checks.push(merge_check(&shards)?);
    }
    Ok(RunResult {
        suite: first.run.suite.clone(),
        checks,
    })
}

/// The albedo tables of a check's shards joined as the stream joins its
/// segments' ([`AlbedoTable::absorb`]: the larger albedo per cell); none
/// when a shard with points has none (the table grew past its size limit
/// there, so it does for the whole) or when the union does.
fn merged_albedo(shards: &[(&str, &CheckResult)]) -> Option<AlbedoTable> {
    let mut whole: Option<AlbedoTable> = None;
    for (_, c) in shards.iter().filter(|(_, c)| c.points > 0) {
        let t = c.albedo.clone()?;
        match &mut whole {
            None => whole = Some(t),
            Some(w) => {
                if !w.absorb(t) {
                    return None;
                }
            }
        }
    }
    whole
}

/// One check from its shards, in shard order.
fn merge_check(shards: &[(&str, &CheckResult)]) -> Result<CheckResult, String> {
    let (file0, c0) = shards[0];
    let mut next = 0;
    for (file, c) in shards {
        let sp = c.shard.expect("merge checked every check has a shard");
        let want = Shard {
            index: sp.index,
            of: sp.of,
        }
        .range(sp.total);
        let total0 = c0.shard.expect("checked").total;
        if sp.total != total0
            || sp.first != want.start
            || c.points != want.len()
            || want.start != next
        {
            return Err(format!(
                "{file}: check `{}`: shard {}/{} covers points {}..{} of {}, but the split of {} points (as in {file0}) gives it {}..{}",
                c.name,
                sp.index,
                sp.of,
                sp.first,
                sp.first + c.points,
                sp.total,
                total0,
                want.start,
                want.end
            ));
        }
        next = want.end;
        if c.shader != c0.shader || c.function != c0.function {
            return Err(format!(
                "{file}: check `{}` evaluates {} in {}, but {file0} has {} in {}",
                c.name, c.function, c.shader, c0.function, c0.shader
            ));
        }
    }
    let mut r = CheckResult {
        name: c0.name.clone(),
        shader: c0.shader.clone(),
        function: c0.function.clone(),
        points: shards.iter().map(|(_, c)| c.points).sum(),
        verdict: Verdict::Pass,
        error: None,
        comparisons: Vec::new(),
        issues: Vec::new(),
        findings: Vec::new(),
        precision: None,
        seconds: shards.iter().map(|(_, c)| c.seconds).sum(),
        shard: None,
        albedo: None,
    };
    r.albedo = merged_albedo(shards);
    if let Some((file, c)) = shards.iter().find(|(_, c)| c.verdict == Verdict::Error) {
        r.verdict = Verdict::Error;
        r.error = Some(format!(
            "{file}: {}",
            c.error.as_deref().unwrap_or("the shard could not run")
        ));
        return Ok(r);
    }
    // Comparisons: the same list, tolerance for tolerance, in every shard.
    for (file, c) in shards {
        let same = c.comparisons.len() == c0.comparisons.len()
            && c.comparisons
                .iter()
                .zip(&c0.comparisons)
                .all(|(a, b)| a.against == b.against && a.tolerance == b.tolerance);
        if !same {
            return Err(format!(
                "{file}: check `{}` compares against {} but {file0} against {}",
                c.name,
                list(&c.comparisons),
                list(&c0.comparisons)
            ));
        }
    }
    for (k, c) in c0.comparisons.iter().enumerate() {
        let parts: Vec<&Stats> = shards
            .iter()
            .map(|(_, s)| &s.comparisons[k].stats)
            .collect();
        r.comparisons.push(Comparison {
            against: c.against.clone(),
            tolerance: c.tolerance.clone(),
            stats: merge_stats(&parts, &c.tolerance),
        });
    }
    for (_, c) in shards {
        for g in &c.issues {
            match r
                .issues
                .iter_mut()
                .find(|h| h.kind == g.kind && h.message == g.message && h.location == g.location)
            {
                Some(h) => h.count += g.count,
                None => r.issues.push(g.clone()),
            }
        }
    }
    // Findings: the non-finite one from the merged counts, the others once each.
    for (_, c) in shards {
        for f in &c.findings {
            if matches!(f.kind, FindingKind::NonFinite { .. }) || r.findings.contains(f) {
                continue;
            }
            r.findings.push(f.clone());
        }
    }
    let site = r
        .issues
        .iter()
        .find(|g| g.kind == "non_finite")
        .map(|g| g.location.clone());
    for c in &r.comparisons {
        if c.stats.nonfinite > 0 {
            r.findings.push(Finding {
                against: c.against.clone(),
                explains: Some(c.stats.nonfinite as f64 / c.stats.failed.max(1) as f64),
                kind: FindingKind::NonFinite {
                    points: c.stats.nonfinite,
                    site: site.clone(),
                },
            });
        }
    }
    Finding::rank(&mut r.findings);
    let failed = r.comparisons.iter().any(|c| c.stats.failed > 0);
    r.verdict = if failed { Verdict::Fail } else { Verdict::Pass };
    Ok(r)
}

fn list(c: &[Comparison]) -> String {
    if c.is_empty() {
        return "nothing".into();
    }
    c.iter()
        .map(|k| format!("{} ({})", k.against, k.tolerance.describe()))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The statistics of the whole from those of its shards, in shard order.
fn merge_stats(parts: &[&Stats], tol: &Tolerance) -> Stats {
    let mut s = parts[0].clone();
    for p in &parts[1..] {
        s.absorb(p);
    }
    s.finish(tol);
    s
}
