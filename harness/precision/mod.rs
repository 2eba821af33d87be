//! Precision analysis: which line of a WGSL function loses the bits.
//!
//! [`analyse`] evaluates a compiled function over a sweep twice at once with
//! the evaluator's shadow executor (`eval::shadow`): in its own arithmetic
//! (f32/f16, bit for bit what [`Program::eval`] computes, checked at every
//! point) and, beside every float operation, the same operation in binary64
//! on the f64 shadows of its operands. From that it measures, per WGSL line
//! and operation:
//!
//! - the **local rounding error**: the working result against the operation
//!   computed in f64 on the *working* operands, in ULP of the working type
//!   (what this operation alone added);
//! - **cancellation** of `+`/`-`: log2 of the larger operand's magnitude over
//!   the result's, the bits of the operands' leading digits that cancelled
//!   (the rounding errors already in the operands grow by that factor
//!   relative to the result);
//! - the **error carried** to the operation's result: working against shadow,
//!   relative and in ULP;
//! - **overflow** (working result infinite from finite operands where the f64
//!   result is finite) and whether a later operation (a `min`, `clamp`)
//!   turned the infinity back into a finite result, so the overflow is
//!   *hidden*; **underflow**: f64 result below the working type's smallest
//!   normal (f16: 2^-14) that came out subnormal or flushed to zero;
//! - **amplifiers**: `pow` with an integral exponent n ≥ 2 (multiplies its
//!   base's relative error by n) and division by a small denominator (its
//!   absolute error over its size becomes the quotient's relative error);
//! - points where an f64 comparison **diverges** from the working one.
//!
//! Each line's **share** of the final error is measured, not estimated,
//! and adds up by construction (`shares.rs`): the share points (the sweep,
//! or a random sample of [`Options::share_points`] of it) are
//! re-run in an emulated working arithmetic (every operation in f64, rounded
//! to its working type unless its line is exact); lines are made exact one
//! by one in several orders, each line's drop of the mean relative error
//! (against the f64 model) averaged over the orders: its Shapley value. The
//! shares of every order add up to the emulated error less what rounds on no
//! line (reported as unattributed, 0 for a function whose every rounding
//! operation has a line); the margin is two standard errors of the
//! estimates over random orders (0 when every order is run). Each line's
//! error *alone* (what disappears when only that line is exact) is kept
//! beside it: it does not add up, and shows where lines interact.
//!
//! For a function that computes in **f16**, given a tolerance
//! ([`BudgetSpec`]: the check's, against its twin or the f64 values),
//! `budget.rs` reports how much of the tolerance each line uses up and the
//! sweep inputs where the f16 result misses it, with the line that
//! dominates there.
//!
//! **Hints** name known cures with the evidence that triggered them and are
//! never applied: `1 - x*x` as `(1 - x) * (1 + x)`, `1 - (n·h)²` from a cross
//! product, reordering a product that overflows f16, clamping a small
//! denominator. When a rewritten twin of the function is given, its measured
//! error on the same sweep is reported beside the original's (the gain).

mod budget;
mod hints;
mod observe;
mod report;
mod shares;

use serde::Serialize;

pub use budget::{Budget, BudgetSpec, LineBudget, Miss, USE_CAP};
pub use observe::ulp;
pub use report::{summary, text};
pub use shares::ENUMERATE_UP_TO;

use crate::eval::lanes::LANES;
use crate::eval::shadow::Mode;
use crate::eval::{Program, ScalarKind};
use observe::{min_normal, rel, Acc, Collector};

/// What the analysis measured over one sweep.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Analysis {
    pub function: String,
    /// The files of a shader made of several (see [`Options::files`]).
    pub files: Vec<(String, u32)>,
    pub points: usize,
    /// The final error over the sweep, against the f64 shadow.
    pub final_error: FinalError,
    /// Lines with float operations, in source order.
    pub lines: Vec<Line>,
    /// Mean final relative error (each point's capped at 1) of the emulated
    /// working arithmetic against the f64 model over the share points: the
    /// base of the shares.
    pub emulated_mean_rel: f64,
    /// Part of that error left with every line exact (rounding on no line):
    /// the shares add up to 1 minus this, exactly.
    pub unattributed: f64,
    /// Two standard errors of the share estimates over random orders (the
    /// largest over the lines); 0 when every order was run.
    pub share_margin: f64,
    /// Points the shares were measured on (at most
    /// [`Options::share_points`], plus a budget's misses), orders run,
    /// whether those were all orders, and re-runs of the share points (the
    /// cost).
    pub share_points: usize,
    pub share_orders: usize,
    pub share_exhaustive: bool,
    pub share_runs: usize,
    /// For a function computing in f16 with a tolerance: the budget.
    pub budget: Option<Budget>,
    pub hints: Vec<Hint>,
    /// Cancellation (bits) from which an evaluation is counted and reported.
    pub cancel_bits: f64,
    /// Working values that differed from the normal evaluator's (none, unless
    /// the shadow executor is wrong).
    pub internal_errors: Vec<String>,
}

#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct FinalError {
    /// Largest error in ULP of the output's type.
    pub max_ulp: f64,
    pub mean_ulp: f64,
    /// Mean relative error against the f64 model, each point's capped at 1
    /// (see the shares).
    pub mean_rel: f64,
    /// Largest relative error.
    pub max_rel: f64,
    pub worst_point: usize,
    pub worst_inputs: String,
    /// Points whose working result is not finite while the f64 one is.
    pub nonfinite: usize,
}

/// One source line's operations and its share of the final error.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Line {
    pub line: u32,
    pub text: String,
    /// The line's share of the emulated mean final error: its drop when
    /// the line is made exact, averaged over orders (a Shapley value; may be
    /// negative: rounding that cancelled other rounding).
    pub share: f64,
    /// Standard error of the share over random orders (0 when every order
    /// was run).
    pub share_error: f64,
    /// Part of the emulated error that vanishes when only this line is
    /// exact (does not add up over the lines where they interact).
    pub alone: f64,
    pub ops: Vec<OpStats>,
}

/// One operation (one site: inlined calls give a site per call) over the
/// sweep.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct OpStats {
    pub line: u32,
    pub column: u32,
    /// The operation: `FSub`, `FMul`, ... and `f16` when it rounds to half.
    pub op: String,
    pub half: bool,
    /// Live evaluations over the sweep.
    pub count: usize,
    pub max_local_ulp: f64,
    pub mean_local_ulp: f64,
    /// Largest cancellation (bits) and where: add/sub only.
    pub max_cancel_bits: f64,
    pub cancel_point: Option<Worst>,
    /// Evaluations that cancelled [`Analysis::cancel_bits`] bits or more.
    pub cancellations: usize,
    /// Largest relative error carried in the result (working vs f64).
    pub max_carried_rel: f64,
    pub carried_point: Option<Worst>,
    pub overflow: Option<Overflow>,
    pub underflow: Option<Underflow>,
    pub amplifier: Option<Amplifier>,
    pub divergences: usize,
    pub divergence_point: Option<usize>,
}

/// A point with its inputs and the measured value there.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Worst {
    pub point: usize,
    pub inputs: String,
    pub value: f64,
    /// Working operands at that point.
    pub operands: Vec<f64>,
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Overflow {
    /// Points where the working result overflowed (the f64 one is finite).
    pub count: usize,
    /// Of those, points whose final result is finite all the same.
    pub hidden: usize,
    /// The first operation (line, op) that turned the infinity into a finite
    /// value at the first hidden point.
    pub hidden_by: Option<(u32, String)>,
    pub first: Worst,
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Underflow {
    /// Points where the f64 result is below the smallest normal of the
    /// working type and the working one came out subnormal.
    pub subnormal: usize,
    /// ... or zero.
    pub flushed: usize,
    pub first: Worst,
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Amplifier {
    /// `pow with integral exponent n` or `division by a small denominator`.
    pub kind: String,
    /// For `pow`: the exponent n, the factor by which the base's relative
    /// error grows. For a division: the smallest denominator (|d| < 1/8).
    pub factor: f64,
    /// Largest relative error of the result where the amplifier acts.
    pub worst_rel: f64,
    pub point: Worst,
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Hint {
    pub line: u32,
    /// The cure, in words.
    pub cure: String,
    /// Why: the measured symptom.
    pub evidence: String,
    /// With a twin: mean relative error (each point's capped at 1) of the
    /// function as written and of the twin, both against the function's f64
    /// values.
    pub measured: Option<(f64, f64)>,
}

/// Points per worst list and other knobs.
#[derive(Clone, Debug)]
pub struct Options {
    /// Cancellation (bits) from which a subtraction is reported and hinted.
    pub cancel_bits: f64,
    /// Measure shares (re-runs of the share points, about
    /// `2 * share_pairs * lines`).
    pub shares: bool,
    /// Points the shares use at most (drawn at random from the sweep).
    pub share_points: usize,
    /// Antithetic pairs of random orders when there are more than
    /// [`ENUMERATE_UP_TO`] lines (fewer lines: every order).
    pub share_pairs: usize,
    /// Seed of the random orders.
    pub share_seed: u64,
    /// The f16 budget's tolerance and reference (used when the function
    /// computes in f16).
    pub budget: Option<BudgetSpec>,
    /// Failing points listed in the budget.
    pub misses: usize,
    /// The files of a shader made of several (path, the line of the
    /// concatenated source its first line is; `wgsl::Shader::parts`), so
    /// lines are reported in their own file; empty for one file.
    pub files: Vec<(String, u32)>,
}

/// How a report names line `line` of the analysed source: `line 12` for a
/// one-file shader, `b.wgsl:12` (the line in its own file) for several.
pub fn place(files: &[(String, u32)], line: u32) -> String {
    let i = files.partition_point(|(_, first)| *first <= line);
    match files.get(i.wrapping_sub(1)) {
        Some((path, first)) if files.len() > 1 => format!("{path}:{}", line - first + 1),
        _ => format!("line {line}"),
    }
}

/// [`place`] for a table column: `line   12` (the number right-aligned in
/// four places) for one file.
pub fn place_column(files: &[(String, u32)], line: u32) -> String {
    if files.len() > 1 {
        place(files, line)
    } else {
        format!("line {line:>4}")
    }
}

/// How a report names an operation at `line`, `column`: `12:14` for a
/// one-file shader, `b.wgsl:3:14` (the line in its own file) for several.
pub fn place_op(files: &[(String, u32)], line: u32, column: u32) -> String {
    if files.len() > 1 {
        format!("{}:{column}", place(files, line))
    } else {
        format!("{line}:{column}")
    }
}

/// [`Options::files`] of a loaded shader.
pub fn files_of(shader: &crate::wgsl::Shader) -> Vec<(String, u32)> {
    if shader.parts.len() < 2 {
        return Vec::new();
    }
    shader
        .parts
        .iter()
        .map(|p| (p.path.display().to_string(), p.first_line))
        .collect()
}

impl Default for Options {
    fn default() -> Options {
        Options {
            cancel_bits: 4.0,
            shares: true,
            share_points: 2048,
            share_pairs: 4,
            share_seed: 1,
            budget: None,
            misses: 5,
            files: Vec::new(),
        }
    }
}

/// Error of a working output against its f64 value, in ULP of `kind`.
fn err_ulp(w: f64, s: f64, kind: ScalarKind) -> f64 {
    match kind {
        ScalarKind::F32 | ScalarKind::F16 => {
            if w == s || (w.is_nan() && s.is_nan()) {
                0.0
            } else if !w.is_finite() || !s.is_finite() {
                f64::INFINITY
            } else {
                (w - s).abs() / ulp(s, kind == ScalarKind::F16)
            }
        }
        _ => {
            if w == s {
                0.0
            } else {
                f64::INFINITY
            }
        }
    }
}

/// Per point: the largest error over the output leaves (ULP).
fn point_errors(got: &[Vec<f64>], want: &[Vec<f64>], kinds: &[ScalarKind], n: usize) -> Vec<f64> {
    (0..n)
        .map(|i| {
            got.iter()
                .zip(want)
                .zip(kinds)
                .map(|((g, w), &k)| err_ulp(g[i], w[i], k))
                .fold(0.0, f64::max)
        })
        .collect()
}

/// Per point: the largest relative error over the float output leaves,
/// |got - want| / max(|want|, smallest normal), capped at 1 (a non-finite
/// result where `want` is finite counts 1). Points whose f64 value is not
/// finite count 0. Bounded, and over the same points in every run, so the
/// shares of one sweep compare.
fn capped_errors(got: &[Vec<f64>], want: &[Vec<f64>], kinds: &[ScalarKind], n: usize) -> Vec<f64> {
    (0..n)
        .map(|i| {
            got.iter()
                .zip(want)
                .zip(kinds)
                .map(|((g, w), &k)| {
                    let (g, w) = (g[i], w[i]);
                    if !w.is_finite() || g == w {
                        return 0.0;
                    }
                    if !g.is_finite() {
                        return 1.0;
                    }
                    let floor = min_normal(k == ScalarKind::F16);
                    ((g - w).abs() / w.abs().max(floor)).min(1.0)
                })
                .fold(0.0, f64::max)
        })
        .collect()
}

fn mean(v: &[f64]) -> f64 {
    if v.is_empty() {
        0.0
    } else {
        v.iter().sum::<f64>() / v.len() as f64
    }
}

/// Mean of the finite values (infinite ones are counted elsewhere).
fn mean_finite(v: &[f64]) -> f64 {
    let f: Vec<f64> = v.iter().copied().filter(|x| x.is_finite()).collect();
    if f.is_empty() {
        0.0
    } else {
        f.iter().sum::<f64>() / f.len() as f64
    }
}

/// Analyse `program` over the points of `inputs` (one column per input leaf,
/// the column encoding of [`Program::eval`]). `source` is the shader's text,
/// for the line excerpts; `twin` a rewritten form of the same function,
/// evaluated at the same points, whose error the hints report.
pub fn analyse(
    program: &Program,
    inputs: &[&[u32]],
    source: &str,
    twin: Option<&Program>,
    opts: &Options,
) -> Result<Analysis, String> {
    let n = program.check_inputs(inputs)?;
    let code = program.code();
    let leaves = program.output_leaves();
    let kinds: Vec<ScalarKind> = leaves.iter().map(|l| l.1).collect();
    // The normal evaluation, which the shadow's working values must equal.
    let mut normal = Vec::new();
    program.eval(inputs, &mut normal);

    let mut col = Collector {
        acc: (0..code.sites.len()).map(|_| Acc::default()).collect(),
        cancel_bits: opts.cancel_bits,
        start: 0,
        overflowed: vec![Vec::new(); LANES],
        absorbed: vec![None; LANES],
    };
    let mut working: Vec<Vec<f64>> = vec![Vec::with_capacity(n); kinds.len()];
    let mut shadowv: Vec<Vec<f64>> = vec![Vec::with_capacity(n); kinds.len()];
    let mut internal = Vec::new();
    let mut m = program.shadow_machine();
    let mut start = 0;
    while start < n {
        let len = LANES.min(n - start);
        let ins: Vec<&[u32]> = inputs.iter().map(|c| &c[start..start + len]).collect();
        col.start = start;
        for l in 0..LANES {
            col.overflowed[l].clear();
            col.absorbed[l] = None;
        }
        let out = m.run(&ins, len, Mode::Shadow, &mut col);
        for (j, (wc, sc)) in out.working.iter().zip(&out.shadow).enumerate() {
            for lane in 0..len {
                let p = start + lane;
                if wc[lane] != normal[j][p] && internal.len() < 10 {
                    internal.push(format!(
                        "internal error: the shadow executor's working value of `{}` at point {p} is {:#010x}, the evaluator's {:#010x}",
                        leaves[j].0, wc[lane], normal[j][p]
                    ));
                }
                working[j].push(crate::eval::bits_to_f64(kinds[j], wc[lane]));
                shadowv[j].push(sc[lane]);
            }
        }
        // Overflows whose point still ends finite were hidden.
        for lane in 0..len {
            if col.overflowed[lane].is_empty() {
                continue;
            }
            let finite = working.iter().all(|c| c[start + lane].is_finite());
            if finite {
                let by = col.absorbed[lane];
                for &at in &col.overflowed[lane] {
                    let a = &mut col.acc[at as usize];
                    a.hidden += 1;
                    if a.hidden_by.is_none() {
                        a.hidden_by = by;
                    }
                }
            }
        }
        start += len;
    }

    let describe = |p: usize| program.describe_point(inputs, p);
    let errs = point_errors(&working, &shadowv, &kinds, n);
    let mut fe = FinalError {
        mean_ulp: mean_finite(&errs),
        ..FinalError::default()
    };
    for (p, &e) in errs.iter().enumerate() {
        if !e.is_finite() {
            fe.nonfinite += 1;
            continue;
        }
        if e > fe.max_ulp {
            fe.max_ulp = e;
            fe.worst_point = p;
        }
        for (w, s) in working.iter().zip(&shadowv) {
            if s[p].is_finite() && w[p].is_finite() {
                fe.max_rel = fe.max_rel.max(rel(w[p], s[p]));
            }
        }
    }
    fe.worst_inputs = describe(fe.worst_point);

    // The lines with float operations.
    let sites = &code.sites;
    let mut line_nums: Vec<u32> = col
        .acc
        .iter()
        .enumerate()
        .filter(|(_, a)| a.count > 0 || a.divergences > 0)
        .map(|(i, _)| sites[i].line)
        .collect();
    line_nums.sort_unstable();
    line_nums.dedup();
    // The f64 model; without shares, the shadow stands for it (they differ
    // only where an f64 comparison would have taken the other branch).
    let truth = if opts.shares {
        program.eval_f64(inputs)
    } else {
        shadowv.clone()
    };

    // The f16 budget's failing points, found over the whole sweep.
    let computes_half = col.acc.iter().any(|a| a.op.is_some_and(|o| o.1));
    let out_half = kinds.contains(&ScalarKind::F16);
    let budget_spec = opts.budget.as_ref().filter(|_| computes_half);
    let want = match budget_spec.and_then(|b| b.reference.as_ref()) {
        Some(r) => {
            if r.len() != kinds.len() || r.iter().any(|c| c.len() != n) {
                return Err(format!(
                    "the budget's reference has {} column(s) of {} values; `{}` returns {} value(s) at {n} points",
                    r.len(),
                    r.first().map_or(0, Vec::len),
                    program.function(),
                    kinds.len()
                ));
            }
            r
        }
        None => &truth,
    };
    let fails =
        budget_spec.map(|b| budget::failing(&working, want, &b.tolerance, out_half, opts.misses));

    // Shares (and the budget's parts) on the share points: a random sample
    // of the sweep, then the misses.
    let sample = shares::sample(n, opts.share_points.max(1), opts.share_seed);
    let mut chosen = sample.clone();
    // Each miss's index among the share points (appended unless sampled).
    let mut miss_at = Vec::new();
    if let Some((_, _, worst)) = &fails {
        for &(p, _, _) in worst {
            match sample.binary_search(&p) {
                Ok(i) => miss_at.push(i),
                Err(_) => {
                    miss_at.push(chosen.len());
                    chosen.push(p);
                }
            }
        }
    }
    let sub_cols: Vec<Vec<u32>> = inputs
        .iter()
        .map(|c| chosen.iter().map(|&p| c[p]).collect())
        .collect();
    let sub_ins: Vec<&[u32]> = sub_cols.iter().map(|c| &c[..]).collect();
    let pick = |cols: &[Vec<f64>]| -> Vec<Vec<f64>> {
        cols.iter()
            .map(|c| chosen.iter().map(|&p| c[p]).collect())
            .collect()
    };
    let sub_truth = pick(&truth);
    let sub_want = pick(want);
    let metrics = |got: &[Vec<f64>]| {
        let m = chosen.len();
        let mut v = vec![capped_errors(got, &sub_truth, &kinds, m)];
        if let Some(b) = budget_spec {
            v.push(budget::uses(got, &sub_want, &b.tolerance, out_half));
        }
        v
    };
    let site_lines: Vec<u32> = sites.iter().map(|s| s.line).collect();
    let attribution = (opts.shares && !line_nums.is_empty()).then(|| {
        shares::attribute(
            program,
            &sub_ins,
            &site_lines,
            &line_nums,
            &metrics,
            shares::Plan {
                sample: sample.len(),
                pairs: opts.share_pairs,
                seed: opts.share_seed,
            },
        )
    });
    let ns = sample.len();
    let head_mean = |v: &[f64]| mean(&v[..ns]);
    let e_emul = attribution.as_ref().map_or(0.0, |t| head_mean(&t.none[0]));
    let k = line_nums.len();
    let (mut share, mut share_err, mut alone) = (vec![0.0; k], vec![0.0; k], vec![0.0; k]);
    let mut unattributed = 0.0;
    if let (Some(t), true) = (&attribution, e_emul > 0.0) {
        for l in 0..k {
            let (m, e) = shares::mean_and_error(&t.units[0][l]);
            share[l] = m / e_emul;
            share_err[l] = if t.exhaustive { 0.0 } else { e / e_emul };
            alone[l] = head_mean(&t.alone[0][l]) / e_emul;
        }
        unattributed = head_mean(&t.all[0]) / e_emul;
    }
    let margin = 2.0 * share_err.iter().copied().fold(0.0, f64::max);

    let worst = |w: &Option<(usize, f64, Vec<f64>)>| {
        w.as_ref().map(|(p, v, ops)| Worst {
            point: *p,
            inputs: describe(*p),
            value: *v,
            operands: ops.clone(),
        })
    };
    let src_lines: Vec<&str> = source.lines().collect();
    let mut lines = Vec::new();
    for (li, &ln) in line_nums.iter().enumerate() {
        let mut ops = Vec::new();
        for (i, a) in col.acc.iter().enumerate() {
            if sites[i].line != ln || (a.count == 0 && a.divergences == 0) {
                continue;
            }
            let (op, half) = a.op.map_or(("comparison", false), |(o, h)| (o.name(), h));
            ops.push(OpStats {
                line: ln,
                column: sites[i].column,
                op: op.to_string(),
                half,
                count: a.count,
                max_local_ulp: a.max_local,
                mean_local_ulp: a.sum_local / a.count.max(1) as f64,
                max_cancel_bits: a.max_cancel,
                cancel_point: worst(&a.cancel_at),
                cancellations: a.cancellations,
                max_carried_rel: a.max_carried,
                carried_point: worst(&a.carried_at),
                overflow: a.overflow_at.as_ref().map(|_| Overflow {
                    count: a.overflow,
                    hidden: a.hidden,
                    hidden_by: a.hidden_by.map(|at| {
                        let name = col.acc[at as usize]
                            .op
                            .map_or("", |o| o.0.name())
                            .to_string();
                        (sites[at as usize].line, name)
                    }),
                    first: worst(&a.overflow_at).expect("set with the count"),
                }),
                underflow: a.underflow_at.as_ref().map(|_| Underflow {
                    subnormal: a.subnormal,
                    flushed: a.flushed,
                    first: worst(&a.underflow_at).expect("set with the counts"),
                }),
                amplifier: a.amp_at.as_ref().map(|_| Amplifier {
                    kind: a.amp_kind.clone().unwrap_or_default(),
                    factor: a.amp_factor,
                    worst_rel: a.amp_rel,
                    point: worst(&a.amp_at).expect("set with the amplifier"),
                }),
                divergences: a.divergences,
                divergence_point: a.divergence_at,
            });
        }
        lines.push(Line {
            line: ln,
            text: src_lines
                .get(ln.saturating_sub(1) as usize)
                .map_or(String::new(), |s| s.trim().to_string()),
            share: share[li],
            share_error: share_err[li],
            alone: alone[li],
            ops,
        });
    }

    let budget = match (budget_spec, fails) {
        (Some(spec), Some((failing, max_use, worst))) => Some(budget::assemble(
            spec,
            &budget::Parts {
                attribution: attribution.as_ref(),
                lines: &line_nums,
                chosen: &chosen,
                sample: ns,
                miss_at: &miss_at,
                working: &working,
                want,
            },
            (failing, max_use, worst),
            n,
            &describe,
        )),
        _ => None,
    };
    let twin_error = match twin {
        Some(t) => Some(twin_error(t, inputs, &truth, &kinds)?),
        None => None,
    };
    let e_work = mean(&capped_errors(&working, &truth, &kinds, n));
    fe.mean_rel = e_work;
    let hints = hints::hints(program, &col.acc, opts, e_work, twin_error, &describe);
    Ok(Analysis {
        files: opts.files.clone(),
        function: program.function().to_string(),
        points: n,
        final_error: fe,
        lines,
        emulated_mean_rel: e_emul,
        unattributed,
        share_margin: margin,
        share_points: chosen.len(),
        share_orders: attribution.as_ref().map_or(0, |t| t.orders),
        share_exhaustive: attribution.as_ref().is_some_and(|t| t.exhaustive),
        share_runs: attribution.as_ref().map_or(0, |t| t.runs),
        budget,
        hints,
        cancel_bits: opts.cancel_bits,
        internal_errors: internal,
    })
}

/// Mean relative error (capped per point) of a twin's working evaluation
/// against the original's f64 values at the same points.
fn twin_error(
    twin: &Program,
    inputs: &[&[u32]],
    truth: &[Vec<f64>],
    kinds: &[ScalarKind],
) -> Result<f64, String> {
    let n = twin.check_inputs(inputs)?;
    let tk: Vec<ScalarKind> = twin.output_leaves().iter().map(|l| l.1).collect();
    if tk.len() != kinds.len() {
        return Err(format!(
            "the twin `{}` returns {} value(s), the function {}",
            twin.function(),
            tk.len(),
            kinds.len()
        ));
    }
    let mut out = Vec::new();
    twin.eval(inputs, &mut out);
    let got: Vec<Vec<f64>> = out
        .iter()
        .zip(&tk)
        .map(|(c, &k)| c.iter().map(|&b| crate::eval::bits_to_f64(k, b)).collect())
        .collect();
    Ok(mean(&capped_errors(&got, truth, kinds, n)))
}

/// The analysis of a suite check's function over the check's sweep (what
/// `run --precision` adds to each check).
pub fn of_check(
    suite: &crate::suite::Suite,
    check: &crate::suite::Check,
) -> Result<Analysis, String> {
    let ev = crate::gate::evaluate(suite, check, None)?;
    let cols: Vec<&[u32]> = ev.input_columns.iter().map(|c| &c[..]).collect();
    let opts = Options {
        budget: Some(budget_of_check(suite, check, &ev)?),
        files: files_of(&ev.build.shader),
        ..Options::default()
    };
    analyse(&ev.program, &cols, &ev.build.shader.source, None, &opts)
}

/// The f16 budget of a check: its tolerance, against its twin (evaluated at
/// the check's points, as the run does) or, without one, against the
/// function's own f64 values. `ev` is the check's evaluation
/// (`gate::evaluate`).
pub fn budget_of_check(
    suite: &crate::suite::Suite,
    check: &crate::suite::Check,
    ev: &crate::gate::Evaluated,
) -> Result<BudgetSpec, String> {
    let (reference, against) = match &check.twin {
        // A zero-argument function has one value; its twin is compared by
        // the run, not here.
        Some(t) if !ev.inputs.is_empty() => {
            let got = crate::gate::as_f64(&ev.output_columns, &ev.outputs);
            let twin = crate::gate::oracle::twin_of(suite, check)?.expect("the check has a twin");
            let sides = crate::gate::oracle::twin_sides(suite, check, t, &twin, ev, &got)?;
            (Some(sides.want), sides.against)
        }
        _ => (None, "the function's f64 values".to_string()),
    };
    Ok(BudgetSpec {
        tolerance: check.tolerance.clone(),
        reference,
        against,
    })
}
