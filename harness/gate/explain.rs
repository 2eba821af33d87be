//! Explaining a comparison: typed [`Finding`]s from the comparison's
//! statistics and columns, plus the re-evaluations an explainer asks for
//! through [`Reevaluate`] (never by calling back into the runner).
//!
//! Every explainer is one entry of [`EXPLAINERS`]: a value implementing
//! [`Explainer`]. The hypothesis search (`HypothesisSearch`, over
//! `diagnose::CATALOGUE`) and the call-graph attribution (`CallGraph`) are
//! two such entries; the runner and the renderers do not change when one is
//! added.

use std::collections::BTreeMap;

use super::inputs::{reference_arg_columns, reference_columns, Evaluated};
use super::result::{Confined, Finding, FindingKind, IssueGroup, Remap};
use crate::compare::{self, Stats, Tolerance};
use crate::diagnose::{self, callgraph};
use crate::eval::{LaneIssue, ScalarKind};
use crate::reference::Model;
use crate::suite::{Check, Suite};
use crate::sweep::{Expr, Points};
use crate::wgsl::Shader;

/// What an explainer sees of one comparison.
pub struct Evidence<'a> {
    pub check: &'a Check,
    /// The comparison's label, copied into each finding.
    pub against: &'a str,
    /// The whole comparison's statistics.
    pub stats: &'a Stats,
    /// The evidence points: every point of the check, or a sample of a
    /// large one (`gate::stream`).
    pub points: &'a Points,
    /// Computed and expected columns, one per output component.
    pub got: &'a [Vec<f64>],
    pub want: &'a [Vec<f64>],
    pub tolerance: &'a Tolerance,
    /// f16 ULPs.
    pub half: bool,
    /// Indices (into `points`, `got`, `want`) of the failing points, in
    /// sweep order. Shares of failing points are taken of these: for a
    /// check with more points than the explainers see, `points` is a
    /// sample and `stats` (the whole check's) counts more failing points.
    pub failing: &'a [usize],
    /// The evaluator's per-point issues, grouped (for source sites).
    pub issues: &'a [IssueGroup],
    /// The reference model, when the comparison is against one.
    pub model: Option<&'static Model>,
    /// The suite and the check's evaluation, for explainers that evaluate
    /// other functions of the shader; `None` for goldens and old versions.
    pub context: Option<Context<'a>>,
}

/// The suite a check belongs to and its evaluation.
#[derive(Clone, Copy)]
pub struct Context<'a> {
    pub suite: &'a Suite,
    pub evaluated: &'a Evaluated,
}

/// Re-evaluations an explainer may ask for.
pub trait Reevaluate {
    /// The reference model with other argument expressions, at `points`.
    fn reference_with(
        &self,
        args: &BTreeMap<String, Expr>,
        points: &Points,
    ) -> Result<Vec<Vec<f64>>, String>;

    /// The reference model's flattened argument columns at `points` (a vec3
    /// parameter is three columns), as the check binds them.
    fn reference_args(&self, points: &Points) -> Result<Vec<Vec<f64>>, String>;
}

/// One source of findings.
pub trait Explainer: Sync {
    fn explain(&self, evidence: &Evidence, reevaluate: &dyn Reevaluate) -> Vec<Finding>;
}

/// The explainers, run in this order on every failing comparison (ties in
/// rank keep this order, so a hypothesis that explains every failing point
/// comes before a locality that covers them all).
pub const EXPLAINERS: &[&dyn Explainer] = &[
    &HypothesisSearch,
    &CallGraph,
    &NonFinite,
    &ConstantFactor,
    &Locality,
    &RemapSearch,
];

/// [`EXPLAINERS`] without the diagnosis (hypothesis search and call-graph
/// attribution), for measuring what the diagnosis costs.
pub const WITHOUT_DIAGNOSIS: &[&dyn Explainer] =
    &[&NonFinite, &ConstantFactor, &Locality, &RemapSearch];

/// Explain a failing comparison (nothing for a passing one), ranked.
pub fn explain(evidence: &Evidence, reevaluate: &dyn Reevaluate) -> Vec<Finding> {
    explain_with(EXPLAINERS, evidence, reevaluate)
}

/// [`explain`] with another table of explainers.
pub fn explain_with(
    explainers: &[&dyn Explainer],
    evidence: &Evidence,
    reevaluate: &dyn Reevaluate,
) -> Vec<Finding> {
    if evidence.stats.failed == 0 {
        return Vec::new();
    }
    let mut out: Vec<Finding> = explainers
        .iter()
        .flat_map(|e| e.explain(evidence, reevaluate))
        .collect();
    // A constant factor everywhere makes "where the errors are largest"
    // only mirror where the values are largest.
    if out
        .iter()
        .any(|f| matches!(f.kind, FindingKind::ConstantFactor { .. }))
    {
        out.retain(|f| {
            !matches!(
                f.kind,
                FindingKind::Confined {
                    which: Confined::LargestErrors,
                    ..
                }
            )
        });
    }
    // So does it when one hypothesis explains every failing point; and the
    // remap probe only repeats what the search names.
    if out.iter().any(|f| {
        matches!(f.kind, FindingKind::BehavesLike { explained, kept, .. }
            if explained == 1.0 && kept == 1.0)
    }) {
        out.retain(|f| {
            !matches!(
                f.kind,
                FindingKind::Confined {
                    which: Confined::LargestErrors,
                    ..
                } | FindingKind::Remap { .. }
            )
        });
    }
    Finding::rank(&mut out);
    out
}

/// Indices of the points of `got` that fail `tol` against `want`.
pub fn failing_points(
    got: &[Vec<f64>],
    want: &[Vec<f64>],
    tol: &Tolerance,
    half: bool,
) -> Vec<usize> {
    let n = got.first().map_or(0, |c| c.len());
    (0..n)
        .filter(|&i| compare::assess(got, want, i, tol, half).fails())
        .collect()
}

fn finding(evidence: &Evidence, explains: f64, kind: FindingKind) -> Finding {
    Finding {
        against: evidence.against.to_string(),
        explains: Some(explains),
        kind,
    }
}

fn share(part: usize, of: usize) -> f64 {
    part as f64 / of.max(1) as f64
}

/// NaN or infinity where a finite value is expected, with the site the
/// evaluator traced.
struct NonFinite;

impl Explainer for NonFinite {
    fn explain(&self, ev: &Evidence, _: &dyn Reevaluate) -> Vec<Finding> {
        if ev.stats.nonfinite == 0 {
            return Vec::new();
        }
        let site = ev
            .issues
            .iter()
            .find(|g| g.kind == "non_finite")
            .map(|g| g.location.clone());
        vec![finding(
            ev,
            share(ev.stats.nonfinite, ev.stats.failed),
            FindingKind::NonFinite {
                points: ev.stats.nonfinite,
                site,
            },
        )]
    }
}

/// The same factor between result and expected value on every failing point.
struct ConstantFactor;

impl Explainer for ConstantFactor {
    fn explain(&self, ev: &Evidence, _: &dyn Reevaluate) -> Vec<Finding> {
        compare::constant_factor(ev.got, ev.want, ev.failing)
            .map(|f| {
                finding(
                    ev,
                    share(f.points, ev.failing.len()),
                    FindingKind::ConstantFactor {
                        factor: f.factor,
                        named: f.named.map(str::to_string),
                    },
                )
            })
            .into_iter()
            .collect()
    }
}

/// Where the failing points lie; when they lie everywhere, where the worst
/// ones lie.
struct Locality;

impl Explainer for Locality {
    fn explain(&self, ev: &Evidence, _: &dyn Reevaluate) -> Vec<Finding> {
        let all = confined(ev.points, ev.failing);
        if !all.is_empty() {
            return all
                .into_iter()
                .map(|k| finding(ev, 1.0, k(Confined::Failures)))
                .collect();
        }
        // By how far over the tolerance a point is (not by relative error,
        // which is meaningless where the expected value is near zero).
        let mut by_badness: Vec<(f64, usize)> = ev
            .failing
            .iter()
            .map(|&i| {
                let b = compare::assess(ev.got, ev.want, i, ev.tolerance, ev.half).badness;
                (b, i)
            })
            .collect();
        by_badness.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)));
        let top: Vec<usize> = by_badness
            .iter()
            .take((ev.failing.len() / 100).max(10))
            .map(|x| x.1)
            .collect();
        let explained = share(top.len(), ev.failing.len());
        confined(ev.points, &top)
            .into_iter()
            .map(|k| finding(ev, explained, k(Confined::LargestErrors)))
            .collect()
    }
}

type ConfinedKind = Box<dyn Fn(Confined) -> FindingKind>;

/// Per sweep parameter, the range of `selected` points when it is narrower
/// than half the swept range.
fn confined(points: &Points, selected: &[usize]) -> Vec<ConfinedKind> {
    let mut out: Vec<ConfinedKind> = Vec::new();
    if selected.is_empty() || selected.len() == points.len {
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
        let (swept_lo, swept_hi) = range(&mut col.iter().copied());
        let (lo, hi) = range(&mut selected.iter().map(|&i| col[i]));
        if swept_hi > swept_lo && (hi - lo) < 0.5 * (swept_hi - swept_lo) {
            out.push(Box::new(move |which| FindingKind::Confined {
                which,
                parameter: label.clone(),
                lo,
                hi,
                swept_lo,
                swept_hi,
            }));
        }
    }
    out
}

/// "The shader uses a different remap of parameter p": with p → sqrt(p) or
/// p → p² in the reference arguments, do (nearly) all points pass?
struct RemapSearch;

impl Explainer for RemapSearch {
    fn explain(&self, ev: &Evidence, reevaluate: &dyn Reevaluate) -> Vec<Finding> {
        let Some(model) = ev.model else {
            return Vec::new();
        };
        let points = ev.points;
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
        let got_sub: Vec<Vec<f64>> = ev
            .got
            .iter()
            .map(|c| idx.iter().map(|&i| c[i]).collect())
            .collect();
        let check = ev.check;
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
        let mut out = Vec::new();
        for (p, name) in points.names.iter().enumerate() {
            if points.widths[p] != 1 || !used.contains(name) {
                continue;
            }
            for (with, meaning) in [
                (format!("sqrt({name})"), Remap::SquaringSkipped),
                (format!("{name} * {name}"), Remap::SquaredTwice),
            ] {
                let replacement = Expr::parse(&with).expect("hypothesis parses");
                let mut args = BTreeMap::new();
                for mp in model.params {
                    let e = check
                        .reference_args
                        .get(mp.name)
                        .cloned()
                        .unwrap_or_else(|| Expr::parse(mp.name).expect("name"));
                    args.insert(mp.name.to_string(), e.substitute(name, &replacement));
                }
                let Ok(want) = reevaluate.reference_with(&args, &sub) else {
                    continue;
                };
                let s =
                    compare::compare(&got_sub, &want, ev.tolerance, ev.half, &|_| String::new());
                if s.failed as f64 <= 0.001 * sub.len as f64 {
                    let passing = 1.0 - s.fail_share;
                    out.push(finding(
                        ev,
                        passing,
                        FindingKind::Remap {
                            parameter: name.clone(),
                            replaced_by: with,
                            meaning,
                            passing,
                        },
                    ));
                }
            }
        }
        out
    }
}

/// Whether `got` passes `tol` against `want` at one point (one value per
/// output component).
fn passes_at(got: &[f64], want: &[f64], tol: &Tolerance, half: bool) -> bool {
    let g: Vec<Vec<f64>> = got.iter().map(|&x| vec![x]).collect();
    let w: Vec<Vec<f64>> = want.iter().map(|&x| vec![x]).collect();
    !compare::assess(&g, &w, 0, tol, half).fails()
}

/// How many fits of the search a comparison reports at most.
const MAX_FITS: usize = 3;

/// "Behaves like <reference> with <change>": the hypothesis search of
/// `diagnose::search` over the catalogue, for a check whose reference model
/// has a decomposition into terms. Partial fits are reported with their
/// share; at most [`MAX_FITS`], best first.
struct HypothesisSearch;

impl Explainer for HypothesisSearch {
    fn explain(&self, ev: &Evidence, reevaluate: &dyn Reevaluate) -> Vec<Finding> {
        let Some(model) = ev.model else {
            return Vec::new();
        };
        if diagnose::decomposition(model.name).is_none() {
            return Vec::new();
        }
        let Ok(args) = reevaluate.reference_args(ev.points) else {
            return Vec::new();
        };
        let a: Vec<&[f64]> = args.iter().map(Vec::as_slice).collect();
        let g: Vec<&[f64]> = ev.got.iter().map(Vec::as_slice).collect();
        let pass =
            |_: usize, got: &[f64], want: &[f64]| passes_at(got, want, ev.tolerance, ev.half);
        let Ok(fits) = diagnose::search(
            model.name,
            &a,
            &g,
            pass,
            ev.failing,
            &diagnose::Options::default(),
        ) else {
            return Vec::new();
        };
        // A full fit leaves nothing for partial ones to explain: report the
        // fits tied with it; without one, the best partial fits.
        let best = fits.first().map_or(0.0, diagnose::Fit::score);
        let full = fits.first().is_some_and(diagnose::Fit::is_full);
        fits.iter()
            .filter(|f| !full || f.score() == best)
            .take(MAX_FITS)
            .map(|f| {
                finding(
                    ev,
                    f.explained,
                    FindingKind::BehavesLike {
                        reference: model.name.to_string(),
                        hypothesis: f.hypothesis.id.to_string(),
                        term: f.hypothesis.term,
                        change: f.hypothesis.description.to_string(),
                        explained: f.explained,
                        kept: f.kept,
                        failing_tried: f.failing_tried,
                        passing_tried: f.passing_tried,
                    },
                )
            })
            .collect()
    }
}

/// Call-graph attribution: for every function the failing one calls that
/// another check of the suite (same shader) binds to a reference, capture
/// what each call receives and returns at the check's points
/// (`diagnose::callgraph::capture`) and judge it against the callee's
/// reference with the callee check's tolerance. A call that deviates on
/// failing points is reported, with the callee's own mistake when the
/// search names one at those arguments.
struct CallGraph;

impl Explainer for CallGraph {
    fn explain(&self, ev: &Evidence, _: &dyn Reevaluate) -> Vec<Finding> {
        let Some(cx) = ev.context else {
            return Vec::new();
        };
        let shader = &cx.evaluated.build.shader;
        let inputs: Vec<&[u32]> = cx
            .evaluated
            .input_columns
            .iter()
            .map(Vec::as_slice)
            .collect();
        let mut out = Vec::new();
        for other in &cx.suite.checks {
            if other.function == ev.check.function || other.shader != ev.check.shader {
                continue;
            }
            let Some(model) = other.reference else {
                continue;
            };
            let Ok(sites) = callgraph::call_sites(shader, &ev.check.function, &other.function)
            else {
                continue;
            };
            for site in sites {
                if let Some(kind) = attribute_call(ev, other, model, shader, &site, &inputs) {
                    let explains = match &kind {
                        FindingKind::CalleeDeviates {
                            deviating_failing, ..
                        } => share(*deviating_failing, ev.failing.len()),
                        _ => 0.0,
                    };
                    out.push(finding(ev, explains, kind));
                }
            }
        }
        out
    }
}

/// One call site judged against the callee's check (see [`CallGraph`]);
/// `None` when it cannot be judged or does not deviate on failing points.
fn attribute_call(
    ev: &Evidence,
    callee_check: &Check,
    model: &'static Model,
    shader: &crate::wgsl::Shader,
    site: &callgraph::CallSite,
    inputs: &[&[u32]],
) -> Option<FindingKind> {
    let cap = callgraph::capture(shader, site, inputs).ok()?;
    let n = cap.reached.len();
    // The callee's arguments as points named by its parameters.
    let mut names: Vec<String> = Vec::new();
    let mut columns: Vec<Vec<Vec<f64>>> = Vec::new();
    for (leaf, col) in &cap.args {
        let param = leaf.split('.').next().unwrap_or(leaf).to_string();
        match names.iter().position(|x| *x == param) {
            Some(k) => columns[k].push(col.clone()),
            None => {
                names.push(param);
                columns.push(vec![col.clone()]);
            }
        }
    }
    let widths: Vec<usize> = columns.iter().map(Vec::len).collect();
    if widths.iter().any(|&w| w != 1 && w != 3) {
        return None;
    }
    let points = Points {
        names,
        widths,
        columns,
        len: n,
    };
    // The callee check binds its reference over its sweep's names; where a
    // reference argument is the same expression as a function argument, it
    // is that argument.
    let bound: BTreeMap<String, Expr> = callee_check
        .reference_args
        .iter()
        .map(|(k, e)| {
            let same = callee_check
                .args
                .iter()
                .find(|(_, a)| *a == e)
                .and_then(|(q, _)| Expr::parse(q).ok());
            (k.clone(), same.unwrap_or_else(|| e.clone()))
        })
        .collect();
    let want = reference_columns(callee_check, model, &points, &bound).ok()?;
    let got: Vec<Vec<f64>> = cap.result.iter().map(|(_, c)| c.clone()).collect();
    if got.len() != want.len() {
        return None;
    }
    let tol = &callee_check.tolerance;
    let deviating: Vec<usize> = (0..n)
        .filter(|&i| cap.reached[i] && compare::assess(&got, &want, i, tol, ev.half).fails())
        .collect();
    let failing_reached = ev.failing.iter().filter(|&&i| cap.reached[i]).count();
    let deviating_failing = ev
        .failing
        .iter()
        .filter(|i| deviating.binary_search(i).is_ok())
        .count();
    if deviating_failing == 0 {
        return None;
    }
    // Name the callee's mistake at the arguments it received.
    let behaves_like = reference_arg_columns(callee_check, model, &points, &bound)
        .ok()
        .and_then(|args| {
            let a: Vec<&[f64]> = args.iter().map(Vec::as_slice).collect();
            let g: Vec<&[f64]> = got.iter().map(Vec::as_slice).collect();
            let pass = |_: usize, g: &[f64], w: &[f64]| passes_at(g, w, tol, ev.half);
            let failing: Vec<usize> = deviating.clone();
            diagnose::search(
                model.name,
                &a,
                &g,
                pass,
                &failing,
                &diagnose::Options::default(),
            )
            .ok()
        })
        .and_then(|fits| fits.first().map(|f| f.hypothesis.description.to_string()));
    Some(FindingKind::CalleeDeviates {
        callee: site.callee.clone(),
        check: callee_check.name.clone(),
        reference: model.name.to_string(),
        line: site.line,
        column: site.column,
        failing_reached,
        deviating_failing,
        behaves_like,
    })
}

/// The evaluator's per-point issues grouped by kind, message and source site.
/// Each issue's place is its own file and line, also when the shader is
/// several files, each file named as in `names` (the suite's spelling; see
/// [`Shader::location_named`]).
pub fn group_issues(
    issues: &[LaneIssue],
    shader: &Shader,
    names: &[std::path::PathBuf],
    points: &Points,
) -> Vec<IssueGroup> {
    let mut groups: Vec<IssueGroup> = Vec::new();
    for i in issues {
        let location = shader.location_named(i.line, i.column, names);
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

/// Per output leaf: how another back end's results compare with the CPU
/// evaluator's (the one device-versus-CPU summary, from
/// [`compare::ulp::ulp_summary`]).
pub fn backend_agreement(
    outputs: &[(String, ScalarKind)],
    cpu: &[Vec<u32>],
    backend: &[Vec<u32>],
    points: &Points,
) -> Vec<Finding> {
    compare::ulp::ulp_summary(outputs, cpu, backend)
        .into_iter()
        .map(|leaf| Finding {
            against: String::new(),
            explains: None,
            kind: FindingKind::BackendAgreement {
                leaf: leaf.leaf,
                points: leaf.points,
                exact: leaf.exact,
                within_2: leaf.within_2,
                worst_ulp: (leaf.worst != u64::MAX).then_some(leaf.worst),
                worst_at: leaf.worst_point.map(|i| points.describe(i)),
            },
        })
        .collect()
}
