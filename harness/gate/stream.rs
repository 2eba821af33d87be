//! The streamed check. A check's points flow one way through the stages in
//! segments of bounded size: points → argument columns → evaluation (the CPU
//! evaluator or another back end) → the reference, twin, property and golden
//! columns → statistics. Only the statistics ([`Stats::absorb`]), the issue
//! groups, the findings that hold for the whole check and a bounded sample
//! of failing points outlive a segment, so memory stays flat in the point
//! count.
//!
//! Explanation comes after, from the statistics and one re-evaluation it
//! asks for: the *evidence* points (every point of the check when it has at
//! most the `evidence_points` limit, otherwise an even sample of half that
//! many points plus, per failing comparison, up to half that many of its
//! failing points chosen by a hash of their index) are evaluated again and handed to the explainers
//! with the whole check's statistics. A passing check is never evaluated
//! twice.
//!
//! Everything a check builds once (the shader, the compiled function, its
//! twin or decoder, which parameters round to `f16`, the golden record) is a
//! [`Prepared`].

use std::borrow::Cow;
use std::collections::{BTreeMap, BinaryHeap};
use std::ops::Range;
use std::path::PathBuf;
use std::sync::Arc;

use rayon::prelude::*;

use super::explain::{
    self, backend_agreement, failing_points, group_issues, Context, Evidence, Explainer, Reevaluate,
};
use super::inputs::{
    as_f64, build_of, evaluate_at_keeping, main_args, point_range, points_at, points_in_grid,
    reference_arg_columns, reference_columns, reference_columns_sharing, reference_expr_columns,
    reference_fits, Build, Evaluated,
};
use super::oracle::{self, Other};
use super::result::{AlbedoTable, CheckResult, Comparison, Finding, FindingKind, IssueGroup};
use super::run::Backend;
use crate::compare::{self, Stats, Tolerance};
use crate::eval::{Program, ScalarKind};
use crate::golden;
use crate::reference::Model;
use crate::scratch;
use crate::suite::{Check, Suite};
use crate::sweep::{Expr, Grid, Points};

/// Points per segment on the CPU (divided by the evaluations each point
/// costs: a hemisphere property's quadrature directions).
pub const SEGMENT: usize = 1 << 12;
/// Segments per core in a wave of pass 1 (see [`run_prepared`]).
const WAVE: usize = 8;
/// Points per segment on another back end (one dispatch each).
pub const BACKEND_SEGMENT: usize = 1 << 20;

/// What a check builds once, before any point is evaluated.
pub struct Prepared<'a> {
    pub suite: &'a Suite,
    pub check: &'a Check,
    build: Arc<Build>,
    pub program: Arc<Program>,
    /// The hash of `build`'s shader source (which a golden records),
    /// computed once: hashing the source is not free, and segments are many.
    shader_hash: String,
    /// The sweep's grid values, computed once for every segment.
    grid: Grid,
    args: Cow<'a, BTreeMap<String, Expr>>,
    /// Sweep parameters rounded to `f16` for both sides, and the finding
    /// that says so.
    half: Vec<usize>,
    rounded: Option<FindingKind>,
    twin: Option<Other>,
    decoder: Option<Other>,
    /// Evaluations of the function per point (quadrature directions).
    per_point: usize,
    /// Another version of the function, compared with this one bit for
    /// bit under the check's `golden_tolerance` (`shadegate compare`).
    versus: Option<Versus<'a>>,
}

/// The other side of a comparison of two versions: prepared as a check of
/// its own (its files, its function, its rounding of `f16` parameters) and
/// the label of its comparison.
struct Versus<'a> {
    prep: Box<Prepared<'a>>,
    against: String,
}

impl<'a> Prepared<'a> {
    /// Load the shader, compile the function (and its twin or decoder) and
    /// check the argument names; `files` replace the check's own (see
    /// [`super::inputs::files_with`]).
    pub fn new(
        suite: &'a Suite,
        check: &'a Check,
        files: Option<&[PathBuf]>,
    ) -> Result<Prepared<'a>, String> {
        let build = build_of(suite, check, files)?;
        let program = build.program()?;
        suite
            .check_args(check, program.params().iter().map(|(n, _)| n.as_str()))
            .map_err(|d| d.rendered)?;
        let twin = oracle::twin_of(suite, check)?;
        let decoder = oracle::decoder_of(suite, check)?;
        let names = check.sweep.points_in(0..0);
        let (half, rounded) = oracle::half_params(check, &program, twin.as_ref(), &names);
        let args = main_args(check);
        // Arguments that do not fit their parameters are the suite's error,
        // at the line of the `args` key.
        super::args::located(suite, check, &program, &args, &names)?;
        let per_point = match &check.property {
            Some(pc) => oracle::evaluations_per_point(suite, check, pc, point_range(check).len())?,
            None => 1,
        };
        // The whole sweep is evaluated: a large one compiles native code
        // at its first segment (`Program::announce`).
        program.announce(point_range(check).len().saturating_mul(per_point));
        Ok(Prepared {
            suite,
            check,
            shader_hash: build.shader.content_hash(),
            build: Arc::new(build),
            program: Arc::new(program),
            grid: check.sweep.grid_f32(),
            args,
            half,
            rounded,
            twin,
            decoder,
            per_point,
            versus: None,
        })
    }

    /// This check compared with `old`, another version of its function over
    /// the same sweep, instead of with its oracles (the caller clears them).
    pub fn versus(mut self, old: Prepared<'a>, against: String) -> Prepared<'a> {
        self.versus = Some(Versus {
            prep: Box::new(old),
            against,
        });
        self
    }

    /// The check's function evaluated at `points` (values already rounded
    /// to f32; the parameters an `f16` side takes are rounded to `f16` here).
    pub fn evaluate(&self, points: Points) -> Result<Evaluated, String> {
        self.evaluate_with(points, false)
    }

    /// [`Prepared::evaluate`], keeping the computed argument columns
    /// ([`Evaluated::arg_columns`]) for the reference of a segment.
    pub fn evaluate_keeping_args(&self, points: Points) -> Result<Evaluated, String> {
        self.evaluate_with(points, true)
    }

    fn evaluate_with(&self, mut points: Points, keep_args: bool) -> Result<Evaluated, String> {
        oracle::round_half(&mut points, &self.half);
        let mut ev = evaluate_at_keeping(
            self.check,
            self.build.clone(),
            self.program.clone(),
            &self.args,
            points,
            keep_args,
        )?;
        ev.rounded = self.rounded.clone();
        Ok(ev)
    }

    /// Points per segment.
    fn segment(&self, backend: bool) -> usize {
        let n = if backend { BACKEND_SEGMENT } else { SEGMENT };
        (n / self.per_point).max(1)
    }
}

/// The golden record of a check, read once.
struct GoldenSource {
    path: PathBuf,
    against: String,
    g: golden::Record,
}

impl GoldenSource {
    /// The recorded output columns at the points of `span`.
    fn outputs(&self, span: Span) -> Result<Vec<Vec<u32>>, String> {
        let read = |r: Range<usize>| self.g.read_outputs(r).map_err(|d| d.rendered);
        match span {
            Span::Range(a, b) => read(a..b),
            Span::At(ix) => {
                let mut cols = vec![Vec::with_capacity(ix.len()); self.g.outputs.len()];
                for run in crate::sweep::runs(ix) {
                    for (col, part) in cols.iter_mut().zip(read(run)?) {
                        col.extend(part);
                    }
                }
                Ok(cols)
            }
        }
    }
}

/// Which of the sweep's points a set of columns holds.
#[derive(Clone, Copy)]
enum Span<'p> {
    /// A range of the sweep (a segment).
    Range(usize, usize),
    /// Ascending indices (the evidence of a large check).
    At(&'p [usize]),
}

impl Span<'_> {
    /// The span's points of `prep`'s check, ranges from its grid.
    fn points(&self, prep: &Prepared) -> Points {
        match *self {
            Span::Range(a, b) => points_in_grid(prep.check, &prep.grid, a..b),
            Span::At(ix) => points_at(prep.check, ix),
        }
    }
}

/// The judged side of a comparison.
enum Got {
    /// The first `k` columns of the function's outputs
    /// ([`Materialised::got`]), shared by the comparisons that judge them.
    Outputs(usize),
    /// Columns of its own (a twin's or a property's).
    Own(Vec<Vec<f64>>),
}

/// One comparison's columns over a span of points, before judging.
struct Side {
    against: String,
    tolerance: Tolerance,
    got: Got,
    want: Vec<Vec<f64>>,
    half: bool,
    model: Option<&'static Model>,
    changed: Option<usize>,
    /// The call-graph explainer may evaluate the shader's other functions.
    context: bool,
    /// An albedo property's table over this span's points.
    albedo: Option<AlbedoTable>,
}

impl Side {
    /// The function's outputs (`got`, in the evaluator's encoding `mine`)
    /// judged against other outputs of a function under the check's
    /// `golden_tolerance`, with the points whose bits changed counted: a
    /// golden's recorded outputs, or another version's.
    fn outputs(
        against: String,
        check: &Check,
        got: usize,
        mine: &[Vec<u32>],
        (other, kinds): (&[Vec<u32>], &[(String, ScalarKind)]),
        half: bool,
    ) -> Side {
        Side {
            against,
            tolerance: check.golden_tolerance.clone(),
            got: Got::Outputs(got),
            want: as_f64(other, kinds),
            half,
            model: None,
            changed: Some(compare::changed_bits(mine, other)),
            context: false,
            albedo: None,
        }
    }
}

/// Every comparison of a check over one span of points.
struct Materialised {
    ev: Evaluated,
    /// The function's outputs as f64, which the comparisons of
    /// [`Got::Outputs`] judge.
    got: Vec<Vec<f64>>,
    sides: Vec<Side>,
    /// Findings about the whole check rather than one comparison (the back
    /// end used, its agreement with the CPU, rounded inputs, a changed
    /// shader), in report order.
    findings: Vec<Finding>,
}

/// Tolerance lists must have one value or one per output component.
pub(super) fn check_tolerance(
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

impl Prepared<'_> {
    /// Evaluate the function and every comparison's columns over `span`.
    /// `verify_golden`: check the golden's recorded inputs against these
    /// (pass 1 checks every point once; the evidence needs no second look).
    fn materialise(
        &self,
        span: Span,
        backend: Option<Backend>,
        golden: Option<&GoldenSource>,
        verify_golden: bool,
    ) -> Result<Materialised, String> {
        let (suite, check) = (self.suite, self.check);
        let mut ev = self.evaluate_keeping_args(span.points(self))?;
        let mut findings = Vec::new();
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
            findings.push(Finding {
                against: String::new(),
                explains: None,
                kind: FindingKind::EvaluatedOn { backend: label },
            });
            findings.extend(backend_agreement(
                &ev.outputs,
                &ev.output_columns,
                &cols,
                &ev.points,
            ));
            ev.output_columns = cols;
        }
        let half = ev.outputs.iter().any(|(_, k)| *k == ScalarKind::F16);
        let got = as_f64(&ev.output_columns, &ev.outputs);
        let mut sides = Vec::new();
        if let Some(model) = check.reference {
            // A reference that gives the return value alone judges it
            // without the out-pointers' values.
            let got = super::args::reference_view(&ev.program, &got, model.outputs);
            reference_fits(check, model, got.len())?;
            check_tolerance(suite, check, &check.tolerance, "tolerance", got.len())?;
            sides.push(Side {
                against: format!("reference {}", model.name),
                tolerance: check.tolerance.clone(),
                got: Got::Outputs(got.len()),
                want: reference_columns_sharing(
                    check,
                    model,
                    &ev.points,
                    &check.reference_args,
                    &ev.arg_columns,
                )?,
                half,
                model: Some(model),
                changed: None,
                context: true,
                albedo: None,
            });
        }
        if let Some(expr) = &check.reference_expr {
            let width = super::args::width_of(expr, &ev.points).unwrap_or(got.len());
            let got = super::args::reference_view(&ev.program, &got, width);
            check_tolerance(suite, check, &check.tolerance, "tolerance", got.len())?;
            // No decomposition of an expression to search: the statistics
            // and the locality explainers only.
            sides.push(Side {
                against: format!("reference {}", expr.text),
                tolerance: check.tolerance.clone(),
                got: Got::Outputs(got.len()),
                want: reference_expr_columns(check, expr, &ev.points, got.len())?,
                half,
                model: None,
                changed: None,
                context: false,
                albedo: None,
            });
        }
        if let Some(kind) = ev.rounded.take() {
            findings.push(Finding {
                against: String::new(),
                explains: None,
                kind,
            });
        }
        // Twins and properties: their second evaluations (the twin, the
        // swapped arguments, the decoder) run on the CPU evaluator.
        let mut oracles = Vec::new();
        if let (Some(twin), Some(other)) = (&check.twin, &self.twin) {
            oracles.push(oracle::twin_sides(suite, check, twin, other, &ev, &got)?);
        }
        if let Some(pc) = &check.property {
            oracles.push(oracle::property_sides(
                suite,
                check,
                pc,
                self.decoder.as_ref(),
                &ev,
                &got,
            )?);
        }
        for s in oracles {
            check_tolerance(suite, check, &check.tolerance, "tolerance", s.got.len())?;
            sides.push(Side {
                against: s.against,
                tolerance: check.tolerance.clone(),
                got: Got::Own(s.got),
                want: s.want,
                half: s.half,
                model: None,
                changed: None,
                context: false,
                albedo: s.albedo,
            });
        }
        if let Some(v) = &self.versus {
            let old = v.prep.evaluate(span.points(&v.prep))?;
            let same_function = v.prep.check.function == check.function;
            if old.outputs.len() != ev.outputs.len() || (same_function && old.outputs != ev.outputs)
            {
                return Err(format!(
                    "the two versions return different types ({:?} vs {:?})",
                    old.outputs, ev.outputs
                ));
            }
            check_tolerance(
                suite,
                check,
                &check.golden_tolerance,
                "golden_tolerance",
                got.len(),
            )?;
            sides.push(Side::outputs(
                v.against.clone(),
                check,
                got.len(),
                &ev.output_columns,
                (&old.output_columns, &old.outputs),
                half || old.outputs.iter().any(|(_, k)| *k == ScalarKind::F16),
            ));
            // Its columns go back to the pool as the segment's own do.
            for p in old.points.columns {
                scratch::recycle_all(p);
            }
            scratch::recycle_all(old.input_columns);
            for (_, cols) in old.arg_columns {
                scratch::recycle_all(cols);
            }
            scratch::recycle_all(old.output_columns);
        }
        if let Some(gs) = golden {
            check_tolerance(
                suite,
                check,
                &check.golden_tolerance,
                "golden_tolerance",
                got.len(),
            )?;
            if verify_golden {
                let Span::Range(first, _) = span else {
                    unreachable!("pass 1 runs over ranges")
                };
                let shader = check.shader_label();
                let sweep = check.sweep.to_string();
                golden::check_identity(
                    &gs.path,
                    &gs.g,
                    &golden::Identity {
                        check: &check.name,
                        shader: &shader,
                        function: &check.function,
                        sweep: &sweep,
                        points: check.sweep.len(),
                        inputs: &ev.inputs,
                        outputs: &ev.outputs,
                        input_columns: &ev.input_columns,
                        first,
                    },
                )
                .map_err(|d| d.rendered)?;
            }
            let recorded = gs.outputs(span)?;
            if gs.g.header.shader_hash != self.shader_hash {
                findings.push(Finding {
                    against: gs.against.clone(),
                    explains: None,
                    kind: FindingKind::ShaderChanged {
                        recorded: gs.g.header.shader_hash.clone(),
                        current: self.shader_hash.clone(),
                    },
                });
            }
            sides.push(Side::outputs(
                gs.against.clone(),
                check,
                got.len(),
                &ev.output_columns,
                (&recorded, &gs.g.outputs),
                half,
            ));
        }
        Ok(Materialised {
            ev,
            got,
            sides,
            findings,
        })
    }
}

impl Materialised {
    /// The columns `side` judges.
    fn got_of<'s>(&'s self, side: &'s Side) -> &'s [Vec<f64>] {
        match &side.got {
            Got::Outputs(k) => &self.got[..*k],
            Got::Own(cols) => cols,
        }
    }

    /// Hand the segment's columns back for the next segment
    /// ([`crate::scratch`]); the findings stay.
    fn recycle(&mut self) {
        let ev = &mut self.ev;
        for p in std::mem::take(&mut ev.points.columns) {
            scratch::recycle_all(p);
        }
        scratch::recycle_all(std::mem::take(&mut ev.input_columns));
        for (_, cols) in std::mem::take(&mut ev.arg_columns) {
            scratch::recycle_all(cols);
        }
        scratch::recycle_all(std::mem::take(&mut ev.output_columns));
        scratch::recycle_all(std::mem::take(&mut self.got));
        for side in std::mem::take(&mut self.sides) {
            if let Got::Own(got) = side.got {
                scratch::recycle_all(got);
            }
            scratch::recycle_all(side.want);
        }
    }
}

/// Label, tolerance, model and whether the call graph may be searched: what
/// pass 2 needs of a comparison.
type Label = (String, Tolerance, Option<&'static Model>, bool);

/// What pass 1 keeps of one segment.
struct Part {
    start: usize,
    end: usize,
    issues: Vec<IssueGroup>,
    findings: Vec<Finding>,
    /// Per comparison: its label and statistics (point indices in the sweep).
    sides: Vec<(Label, Stats)>,
    /// Per comparison: the sweep indices of its failing points (only for a
    /// check above the `evidence_points` limit, to sample from).
    failing: Vec<Vec<usize>>,
    /// An albedo property's table over the segment's points.
    albedo: Option<AlbedoTable>,
}

impl Prepared<'_> {
    /// Pass 1 over the segment `start..end`: its statistics and issues.
    fn part(
        &self,
        start: usize,
        end: usize,
        backend: Option<Backend>,
        golden: Option<&GoldenSource>,
        large: bool,
    ) -> Result<Part, String> {
        let mut m = self.materialise(Span::Range(start, end), backend, golden, true)?;
        let describe = |i: usize| m.ev.points.describe(i);
        let mut sides = Vec::new();
        let mut failing = Vec::new();
        let albedo = m.sides.iter().find_map(|s| s.albedo.clone());
        for side in &m.sides {
            let mut s = compare::compare(
                m.got_of(side),
                &side.want,
                &side.tolerance,
                side.half,
                &describe,
            );
            s.changed = side.changed;
            s.offset(start);
            failing.push(if large && s.failed > 0 {
                failing_points(m.got_of(side), &side.want, &side.tolerance, side.half)
                    .into_iter()
                    .map(|i| start + i)
                    .collect()
            } else {
                Vec::new()
            });
            let label = (
                side.against.clone(),
                side.tolerance.clone(),
                side.model,
                side.context,
            );
            sides.push((label, s));
        }
        let issues = group_issues(
            &m.ev.issues,
            &m.ev.build.shader,
            &self.check.shaders,
            &m.ev.points,
        );
        m.recycle();
        Ok(Part {
            start,
            end,
            issues,
            findings: m.findings,
            sides,
            failing,
            albedo,
        })
    }
}

/// The failing points of one comparison kept as evidence: the `size` with
/// the smallest hash of their sweep index. The choice depends on neither
/// the order nor the grouping in which points arrive, so segments and
/// shards keep the same ones.
struct FailingSample {
    size: usize,
    kept: BinaryHeap<(u64, usize)>,
}

impl FailingSample {
    fn new(size: usize) -> FailingSample {
        FailingSample {
            size,
            kept: BinaryHeap::new(),
        }
    }

    fn add(&mut self, index: usize) {
        let key = (mix(index as u64), index);
        if self.kept.len() < self.size {
            self.kept.push(key);
        } else if self.kept.peek().is_some_and(|top| key < *top) {
            self.kept.pop();
            self.kept.push(key);
        }
    }
}

/// SplitMix64's finaliser: a fixed, well-mixed hash of a point index.
fn mix(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9e37_79b9_7f4a_7c15);
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

/// Merge one segment's issue groups into the check's (same kind, message
/// and site: counts add; the first example stays).
fn absorb_issues(into: &mut Vec<IssueGroup>, part: Vec<IssueGroup>) {
    for g in part {
        match into
            .iter_mut()
            .find(|h| h.kind == g.kind && h.message == g.message && h.location == g.location)
        {
            Some(h) => h.count += g.count,
            None => into.push(g),
        }
    }
}

/// Merge one segment's whole-check findings into the first segment's: the
/// back end's agreement adds up leaf by leaf (the first worst point stays
/// unless a later one is worse); the others hold for every segment alike.
fn absorb_findings(into: &mut [Finding], part: Vec<Finding>) {
    for f in part {
        let FindingKind::BackendAgreement {
            leaf,
            points,
            exact,
            within_2,
            worst_ulp,
            worst_at,
        } = f.kind
        else {
            continue;
        };
        let Some(FindingKind::BackendAgreement {
            points: p,
            exact: e,
            within_2: w,
            worst_ulp: wu,
            worst_at: wa,
            ..
        }) = into
            .iter_mut()
            .map(|g| &mut g.kind)
            .find(|k| matches!(k, FindingKind::BackendAgreement { leaf: l, .. } if *l == leaf))
        else {
            continue;
        };
        *p += points;
        *e += exact;
        *w += within_2;
        // `None` is a NaN against a number: the largest distance there is.
        let rank = |u: Option<u64>| u.unwrap_or(u64::MAX);
        if worst_at.is_some() && (wa.is_none() || rank(worst_ulp) > rank(*wu)) {
            *wu = worst_ulp;
            *wa = worst_at;
        }
    }
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

/// Nothing to re-evaluate (goldens, twins, properties, two versions of a
/// function).
pub(super) struct NoReference;

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

/// How far a long check has come: points done and the check's point count,
/// called after each segment.
pub type Progress<'a> = &'a (dyn Fn(usize, usize) + Sync);

/// Run a check into `r`: pass 1 over every segment, then, when a
/// comparison fails, the explanation of the evidence (see the module doc).
pub fn run_into(
    suite: &Suite,
    check: &Check,
    r: &mut CheckResult,
    backend: Option<Backend>,
    explainers: &[&dyn Explainer],
    progress: Option<Progress>,
) -> Result<(), String> {
    let prep = Prepared::new(suite, check, None)?;
    run_prepared(&prep, r, backend, explainers, progress)
}

/// [`run_into`] with the check already prepared (its files, or another
/// version to compare with: [`Prepared::versus`]).
pub fn run_prepared(
    prep: &Prepared,
    r: &mut CheckResult,
    backend: Option<Backend>,
    explainers: &[&dyn Explainer],
    progress: Option<Progress>,
) -> Result<(), String> {
    let (suite, check) = (prep.suite, prep.check);
    // A golden that cannot be read is the check's error, reported after
    // the other comparisons ran (their statistics stay in the result).
    let (golden, golden_error) = match (&check.golden, backend) {
        (Some(gpath), None) => {
            let path = suite.resolve(gpath);
            match golden::open(&path, &suite.limits) {
                Ok(g) => (
                    Some(GoldenSource {
                        path,
                        against: format!("golden {}", gpath.display()),
                        g,
                    }),
                    None,
                ),
                Err(d) => (None, Some(d.rendered)),
            }
        }
        _ => (None, None),
    };
    let range = point_range(check);
    let total = range.len();
    let evidence = usize::try_from(suite.limits.evidence_points).unwrap_or(usize::MAX);
    let large = total > evidence;
    let half_evidence = (evidence / 2).max(1);
    let step = prep.segment(backend.is_some());

    // Pass 1: statistics, segment by segment, a wave of segments at a time
    // on every core (one at a time on another back end), merged in order.
    // A wave is `WAVE` segments per core: the cores wait for each other at
    // its end, so a short wave leaves them idle (two per core cost 7 % of a
    // 1M-point check against eight), and a wave's parts, which the merge
    // keeps until its end, are small (statistics, issues, failing indices).
    let mut labels: Vec<Label> = Vec::new();
    let mut stats: Vec<Stats> = Vec::new();
    let mut samples: Vec<FailingSample> = Vec::new();
    let segments: Vec<(usize, usize)> = (range.start..range.end.max(range.start + 1))
        .step_by(step)
        .map(|a| (a, (a + step).min(range.end)))
        .collect();
    let wave = if backend.is_some() {
        1
    } else {
        WAVE * rayon::current_num_threads()
    };
    for group in segments.chunks(wave) {
        let parts: Vec<Result<Part, String>> = group
            .par_iter()
            .map(|&(a, b)| prep.part(a, b, backend, golden.as_ref(), large))
            .collect();
        for part in parts {
            let part = part?;
            if part.start == range.start {
                r.issues = part.issues;
                r.findings = part.findings;
                r.albedo = part.albedo;
            } else {
                absorb_issues(&mut r.issues, part.issues);
                absorb_findings(&mut r.findings, part.findings);
                if let (Some(table), Some(more)) = (&mut r.albedo, part.albedo) {
                    if !table.absorb(more) {
                        r.albedo = None;
                    }
                }
            }
            for (k, ((label, s), failing)) in part.sides.into_iter().zip(part.failing).enumerate() {
                if large && !failing.is_empty() {
                    if samples.len() <= k {
                        samples.resize_with(k + 1, || FailingSample::new(half_evidence));
                    }
                    for i in failing {
                        samples[k].add(i);
                    }
                }
                match stats.get_mut(k) {
                    Some(acc) => acc.absorb(&s),
                    None => {
                        labels.push(label);
                        stats.push(s);
                    }
                }
            }
            if let Some(p) = progress {
                p(part.end - range.start, total);
            }
        }
    }
    for ((against, tolerance, ..), mut s) in labels.iter().zip(stats) {
        s.finish(tolerance);
        r.comparisons.push(Comparison {
            against: against.clone(),
            tolerance: tolerance.clone(),
            stats: s,
        });
    }
    let done = golden_error.map_or(Ok(()), Err);
    if r.comparisons.iter().all(|c| c.stats.failed == 0) {
        return done;
    }

    // Pass 2: the evidence, evaluated again and explained.
    let sampled: Vec<usize>;
    let span = if large {
        let stride = total / half_evidence;
        let mut ix: Vec<usize> = (0..half_evidence)
            .map(|j| range.start + j * stride)
            .collect();
        for s in &samples {
            ix.extend(s.kept.iter().map(|&(_, i)| i));
        }
        ix.sort_unstable();
        ix.dedup();
        sampled = ix;
        Span::At(&sampled)
    } else {
        Span::Range(range.start, range.end)
    };
    let m = prep.materialise(span, backend, golden.as_ref(), false)?;
    for (k, side) in m.sides.iter().enumerate() {
        let (_, _, model, context) = labels[k];
        let got = m.got_of(side);
        let failing = failing_points(got, &side.want, &side.tolerance, side.half);
        let evidence = Evidence {
            check,
            against: &side.against,
            stats: &r.comparisons[k].stats,
            points: &m.ev.points,
            got,
            want: &side.want,
            tolerance: &side.tolerance,
            half: side.half,
            failing: &failing,
            issues: &r.issues,
            model,
            context: context.then_some(Context {
                suite,
                evaluated: &m.ev,
            }),
        };
        let found = match model {
            Some(model) => {
                explain::explain_with(explainers, &evidence, &ReferenceOf { check, model })
            }
            None => explain::explain_with(explainers, &evidence, &NoReference),
        };
        r.findings.extend(found);
    }
    done
}
