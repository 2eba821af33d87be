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
//! The **share** of the final error each line explains is measured, not
//! estimated: the sweep is re-run in an emulated working arithmetic (every
//! operation in f64, rounded to its working type) once as is and once per
//! line with that line's operations taken exactly (their f64 results fed
//! forward); the share is the part of the mean final error (ULP of the
//! output's type, against the f64 model) that disappears. Shares need not
//! add up to one (errors interact; the emulation rounds transcendentals from
//! f64 rather than calling the f32 routines): the report states the margin.
//!
//! **Hints** name known cures with the evidence that triggered them and are
//! never applied: `1 - x*x` as `(1 - x) * (1 + x)`, `1 - (n·h)²` from a cross
//! product, reordering a product that overflows f16, clamping a small
//! denominator. When a rewritten twin of the function is given, its measured
//! error on the same sweep is reported beside the original's (the gain).

use serde::Serialize;

use crate::eval::ir::{At, Op, Slot};
use crate::eval::lanes::{Opcode, LANES};
use crate::eval::shadow::{self, Event, Mode, Observe};
use crate::eval::{Program, ScalarKind};

/// What the analysis measured over one sweep.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Analysis {
    pub function: String,
    pub points: usize,
    /// The final error over the sweep, against the f64 shadow.
    pub final_error: FinalError,
    /// Lines with float operations, in source order.
    pub lines: Vec<Line>,
    /// Mean final relative error (each point's capped at 1) of the emulated
    /// working arithmetic against the f64 model: the base of the shares.
    pub emulated_mean_rel: f64,
    /// |Σ shares − 1|: how far the shares are from explaining the emulated
    /// error exactly.
    pub share_margin: f64,
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
    /// Part of the emulated mean final error that vanishes when this line's
    /// operations are exact (may be negative: rounding that cancelled other
    /// rounding).
    pub share: f64,
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
    /// Measure shares (one extra run per line).
    pub shares: bool,
}

impl Default for Options {
    fn default() -> Options {
        Options {
            cancel_bits: 4.0,
            shares: true,
        }
    }
}

/// Spacing of the working type's numbers around `x` (f16 or f32).
pub fn ulp(x: f64, half: bool) -> f64 {
    let (min_exp, mant, max) = if half {
        (-14, 10, 65504.0)
    } else {
        (-126, 23, f32::MAX as f64)
    };
    let a = x.abs().min(max);
    // The binary exponent of `a` from its bits (every value here is far
    // above f64's subnormal range or clamped to the working type's).
    let e = if a == 0.0 || !a.is_finite() {
        min_exp
    } else {
        (((a.to_bits() >> 52) & 0x7ff) as i32 - 1023).max(min_exp)
    };
    f64::from_bits(((e - mant + 1023) as u64) << 52)
}

fn min_normal(half: bool) -> f64 {
    if half {
        2f64.powi(-14)
    } else {
        f64::from(f32::MIN_POSITIVE)
    }
}

/// Unit roundoff of the working type (half its ULP at 1).
fn eps(half: bool) -> f64 {
    if half {
        2f64.powi(-11)
    } else {
        2f64.powi(-24)
    }
}

fn precision_bits(half: bool) -> f64 {
    if half {
        11.0
    } else {
        24.0
    }
}

#[derive(Default)]
struct Acc {
    count: usize,
    sum_local: f64,
    max_local: f64,
    max_cancel: f64,
    cancel_at: Option<(usize, f64, Vec<f64>)>,
    cancellations: usize,
    max_carried: f64,
    carried_at: Option<(usize, f64, Vec<f64>)>,
    overflow: usize,
    overflow_at: Option<(usize, f64, Vec<f64>)>,
    hidden: usize,
    hidden_by: Option<At>,
    subnormal: usize,
    flushed: usize,
    underflow_at: Option<(usize, f64, Vec<f64>)>,
    amp_kind: Option<String>,
    /// pow: the exponent; division: the smallest denominator.
    amp_factor: f64,
    /// Largest relative error of the result where the amplifier acts, and
    /// where.
    amp_rel: f64,
    amp_at: Option<(usize, f64, Vec<f64>)>,
    divergences: usize,
    divergence_at: Option<usize>,
    op: Option<(Opcode, bool)>,
}

/// Collects events per site over a sweep.
struct Collector {
    acc: Vec<Acc>,
    cancel_bits: f64,
    start: usize,
    /// Per lane of the current batch: sites that overflowed, and the first
    /// operation that took an infinite operand to a finite result after.
    overflowed: Vec<Vec<At>>,
    absorbed: Vec<Option<At>>,
}

fn rel(w: f64, s: f64) -> f64 {
    if w == s {
        0.0
    } else if s == 0.0 {
        f64::INFINITY
    } else {
        ((w - s) / s).abs()
    }
}

impl Observe for Collector {
    fn kernel(&mut self, e: &Event) {
        if !shadow::is_float_op(e.op) {
            return;
        }
        let point = self.start + e.lane;
        let operands = || e.args_w[..e.arity].to_vec();
        let a = &mut self.acc[e.at as usize];
        a.op = Some((e.op, e.half));
        a.count += 1;
        if e.w.is_finite() && e.local.is_finite() {
            let l = (e.w - e.local).abs() / ulp(e.local, e.half);
            a.sum_local += l;
            a.max_local = a.max_local.max(l);
        }
        let finite_in = e.args_w[..e.arity].iter().all(|x| x.is_finite());
        // Cancellation in + and -.
        if matches!(e.op, Opcode::FAdd | Opcode::FSub) && finite_in {
            let m = e.args_w[0].abs().max(e.args_w[1].abs());
            if m > 0.0 {
                let bits = if e.w == 0.0 {
                    precision_bits(e.half)
                } else {
                    (m / e.w.abs()).log2().max(0.0)
                };
                if bits >= self.cancel_bits {
                    a.cancellations += 1;
                }
                if bits > a.max_cancel {
                    a.max_cancel = bits;
                    a.cancel_at = Some((point, bits, operands()));
                }
            }
        }
        if e.w.is_finite() && e.s.is_finite() {
            let r = rel(e.w, e.s);
            if r > a.max_carried {
                a.max_carried = r;
                a.carried_at = Some((point, r, operands()));
            }
        }
        // Overflow: from finite operands to infinity where f64 stays finite.
        if e.w.is_infinite() && finite_in && e.local.is_finite() {
            a.overflow += 1;
            if a.overflow_at.is_none() {
                a.overflow_at = Some((point, e.local, operands()));
            }
            self.overflowed[e.lane].push(e.at);
        }
        if e.w.is_finite()
            && !finite_in
            && !self.overflowed[e.lane].is_empty()
            && self.absorbed[e.lane].is_none()
        {
            self.absorbed[e.lane] = Some(e.at);
        }
        // Underflow.
        let a = &mut self.acc[e.at as usize];
        if e.local != 0.0 && e.local.abs() < min_normal(e.half) && e.local.is_finite() {
            if e.w == 0.0 {
                a.flushed += 1;
            } else {
                a.subnormal += 1;
            }
            if a.underflow_at.is_none() {
                a.underflow_at = Some((point, e.local, operands()));
            }
        }
        // Amplifiers.
        let ro = rel(e.w, e.s);
        match e.op {
            Opcode::FPow => {
                let n = e.args_w[1];
                if n == n.trunc() && n.abs() >= 2.0 && ro.is_finite() {
                    // rel(result) ≈ |n| · rel(base) + pow's own rounding.
                    a.amp_kind = Some(format!("pow with integral exponent {n}"));
                    a.amp_factor = a.amp_factor.max(n.abs());
                    if a.amp_at.is_none() || ro > a.amp_rel {
                        a.amp_rel = ro;
                        a.amp_at = Some((point, ro, operands()));
                    }
                }
            }
            Opcode::FDiv => {
                let den = e.args_w[1];
                if den != 0.0 && den.abs() < 0.125 && ro.is_finite() {
                    a.amp_kind = Some("division by a small denominator".into());
                    if a.amp_at.is_none() || den.abs() < a.amp_factor {
                        a.amp_factor = den.abs();
                    }
                    if a.amp_at.is_none() || ro > a.amp_rel {
                        a.amp_rel = ro;
                        a.amp_at = Some((point, ro, operands()));
                    }
                }
            }
            _ => {}
        }
    }

    fn diverge(&mut self, at: At, lane: usize) {
        let a = &mut self.acc[at as usize];
        a.divergences += 1;
        a.divergence_at.get_or_insert(self.start + lane);
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

    // Shares: emulated working arithmetic, whole and with one line exact.
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
    let e_emul = if opts.shares {
        let none_exact = vec![false; sites.len()];
        let emulated = program.eval_values(inputs, &none_exact);
        mean(&capped_errors(&emulated, &truth, &kinds, n))
    } else {
        0.0
    };
    let mut shares = Vec::new();
    for &ln in &line_nums {
        if !opts.shares || e_emul == 0.0 {
            shares.push(0.0);
            continue;
        }
        let exact: Vec<bool> = sites.iter().map(|s| s.line == ln).collect();
        let got = program.eval_values(inputs, &exact);
        let e = mean(&capped_errors(&got, &truth, &kinds, n));
        shares.push((e_emul - e) / e_emul);
    }
    let margin = if opts.shares && e_emul > 0.0 {
        (shares.iter().sum::<f64>() - 1.0).abs()
    } else {
        0.0
    };

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
            share: shares[li],
            ops,
        });
    }

    let twin_error = match twin {
        Some(t) => Some(twin_error(t, inputs, &truth, &kinds)?),
        None => None,
    };
    let e_work = mean(&capped_errors(&working, &truth, &kinds, n));
    fe.mean_rel = e_work;
    let hints = hints(program, &col.acc, opts, e_work, twin_error, &describe);
    Ok(Analysis {
        function: program.function().to_string(),
        points: n,
        final_error: fe,
        lines,
        emulated_mean_rel: e_emul,
        share_margin: margin,
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

/// The defining kernel of each slot written once by a kernel.
fn definitions(ops: &[Op], defs: &mut std::collections::HashMap<Slot, (Opcode, [Slot; 4])>) {
    for op in ops {
        match op {
            Op::Kernel { op, dst, args, .. } => {
                defs.insert(*dst, (*op, *args));
            }
            Op::If { accept, reject, .. } => {
                definitions(accept, defs);
                definitions(reject, defs);
            }
            Op::Loop {
                body, continuing, ..
            } => {
                definitions(body, defs);
                definitions(continuing, defs);
            }
            Op::Switch { cases, .. } => {
                for c in cases {
                    definitions(&c.body, defs);
                }
            }
            _ => {}
        }
    }
}

/// The site of each kernel op, to find an operation's operands.
fn kernel_sites(ops: &[Op], out: &mut Vec<(At, Opcode, [Slot; 4])>) {
    for op in ops {
        match op {
            Op::Kernel { op, args, at, .. } => out.push((*at, *op, *args)),
            Op::If { accept, reject, .. } => {
                kernel_sites(accept, out);
                kernel_sites(reject, out);
            }
            Op::Loop {
                body, continuing, ..
            } => {
                kernel_sites(body, out);
                kernel_sites(continuing, out);
            }
            Op::Switch { cases, .. } => {
                for c in cases {
                    kernel_sites(&c.body, out);
                }
            }
            _ => {}
        }
    }
}

/// Known cures, from the measured symptoms and the shape of the code.
fn hints(
    program: &Program,
    acc: &[Acc],
    opts: &Options,
    mean_rel: f64,
    twin: Option<f64>,
    describe: &dyn Fn(usize) -> String,
) -> Vec<Hint> {
    let code = program.code();
    let mut defs = std::collections::HashMap::new();
    definitions(&code.ops, &mut defs);
    let mut ks = Vec::new();
    kernel_sites(&code.ops, &mut ks);
    let one = |s: Slot| {
        code.consts
            .iter()
            .any(|&(c, b)| c == s && f32::from_bits(b) == 1.0)
    };
    let measured = twin.map(|t| (mean_rel, t));
    let mut out: Vec<Hint> = Vec::new();
    let mut push = |h: Hint| {
        if !out.iter().any(|o| o.line == h.line && o.cure == h.cure) {
            out.push(h);
        }
    };
    for &(at, op, args) in &ks {
        let a = &acc[at as usize];
        let line = code.sites[at as usize].line;
        if a.count == 0 {
            continue;
        }
        if op == Opcode::FSub && a.max_cancel >= opts.cancel_bits && one(args[0]) {
            if let Some(&(Opcode::FMul, [x, y, ..])) = defs.get(&args[1]) {
                if x == y {
                    let from_dot = matches!(defs.get(&x), Some((Opcode::FAdd, _)));
                    let p = a.cancel_at.as_ref().map(|c| c.0).unwrap_or(0);
                    let evidence = format!(
                        "`1 - x*x` on line {line} cancels up to {:.1} bits (at {}); {} of {} evaluations lose {} bits or more",
                        a.max_cancel,
                        describe(p),
                        a.cancellations,
                        a.count,
                        opts.cancel_bits
                    );
                    if from_dot {
                        push(Hint {
                            line,
                            cure: "x is a dot product of unit vectors: form 1 - (n·h)² as the squared length of the cross product, dot(c, c) with c = cross(n, h), which does not cancel".into(),
                            evidence: evidence.clone(),
                            measured,
                        });
                    }
                    push(Hint {
                        line,
                        cure: "write 1 - x*x as (1 - x) * (1 + x): 1 - x is exact near x = 1, so no bits cancel".into(),
                        evidence,
                        measured,
                    });
                }
            }
        }
        if let Some(o) = a.overflow_at.as_ref() {
            if a.op.is_some_and(|o| o.1) && matches!(op, Opcode::FMul | Opcode::FDiv | Opcode::FAdd)
            {
                push(Hint {
                    line,
                    cure: "reorder so intermediate values stay below 65504 in f16 (divide before multiplying, or scale the operands)".into(),
                    evidence: format!(
                        "{} on line {line} overflows f16 at {} of {} points (first at {}, f64 value {:.6e}){}",
                        op.name(),
                        a.overflow,
                        a.count,
                        describe(o.0),
                        o.1,
                        if a.hidden > 0 {
                            format!("; a later operation hides it at {} of them", a.hidden)
                        } else {
                            String::new()
                        }
                    ),
                    measured,
                });
            }
        }
        if let (Opcode::FDiv, Some(g), true) = (op, a.amp_at.as_ref(), a.amp_rel > 1e-2) {
            push(Hint {
                line,
                cure: "clamp the denominator away from zero (e.g. max(d, 1e-4)): a small denominator turns its absolute error into a large relative one".into(),
                evidence: format!(
                    "division on line {line} by denominators down to {:.3e}; the quotient's relative error there reaches {:.3e} (at {})",
                    a.amp_factor, a.amp_rel, describe(g.0)
                ),
                measured,
            });
        }
    }
    out
}

/// Plain-text rendering of an analysis.
pub fn text(a: &Analysis) -> String {
    use std::fmt::Write as _;
    let mut s = String::new();
    let fe = &a.final_error;
    let _ = writeln!(
        s,
        "precision of `{}` over {} points: final error max {:.1} ULP (relative {:.3e}) at {}, mean {:.2} ULP{}",
        a.function,
        a.points,
        fe.max_ulp,
        fe.max_rel,
        fe.worst_inputs,
        fe.mean_ulp,
        if fe.nonfinite > 0 {
            format!("; {} points not finite where f64 is", fe.nonfinite)
        } else {
            String::new()
        }
    );
    for e in &a.internal_errors {
        let _ = writeln!(s, "  {e}");
    }
    let _ = writeln!(
        s,
        "share of the mean relative error ({:.3e}, working arithmetic emulated in f64) that disappears when a line is taken exactly; shares add up to 1 within {:.3}",
        a.emulated_mean_rel, a.share_margin
    );
    let mut order: Vec<&Line> = a.lines.iter().collect();
    order.sort_by(|x, y| y.share.total_cmp(&x.share));
    for l in order {
        let local = l.ops.iter().map(|o| o.max_local_ulp).fold(0.0, f64::max);
        let carried = l.ops.iter().map(|o| o.max_carried_rel).fold(0.0, f64::max);
        let _ = writeln!(
            s,
            "  line {:>4}  share {:>6.1} %  {}\n             {} operations, local error max {:.2} ULP, carried relative error max {:.3e}",
            l.line,
            100.0 * l.share,
            l.text,
            l.ops.len(),
            local,
            carried
        );
        for o in &l.ops {
            let mut notes = Vec::new();
            if o.max_cancel_bits >= a.cancel_bits {
                let at = o
                    .cancel_point
                    .as_ref()
                    .map(|w| format!(" at {} (operands {:?})", w.inputs, w.operands))
                    .unwrap_or_default();
                notes.push(format!(
                    "cancels up to {:.1} bits{at}; {} evaluations lose {} bits or more{}",
                    o.max_cancel_bits,
                    o.cancellations,
                    a.cancel_bits,
                    if o.max_carried_rel == 0.0 {
                        " (benign: the operands are exact, so is the difference)"
                    } else {
                        ""
                    }
                ));
            }
            if let Some(ov) = &o.overflow {
                let hidden = match (&ov.hidden_by, ov.hidden) {
                    (_, 0) => String::new(),
                    (Some((l, op)), h) => format!(", hidden by {op} on line {l} at {h} points"),
                    (None, h) => format!(", hidden at {h} points"),
                };
                notes.push(format!(
                    "overflows at {} points (first at {}, f64 value {:.6e}){hidden}",
                    ov.count, ov.first.inputs, ov.first.value
                ));
            }
            if let Some(u) = &o.underflow {
                notes.push(format!(
                    "underflows at {} points ({} subnormal, {} flushed to zero; first at {}, f64 value {:.3e})",
                    u.subnormal + u.flushed,
                    u.subnormal,
                    u.flushed,
                    u.first.inputs,
                    u.first.value
                ));
            }
            if let Some(am) = o
                .amplifier
                .as_ref()
                .filter(|am| am.worst_rel > 16.0 * eps(o.half))
            {
                notes.push(if am.kind.starts_with("pow") {
                    format!(
                        "amplifier: {} multiplies its base's relative error by {}; the result's relative error reaches {:.3e} at {}",
                        am.kind, am.factor, am.worst_rel, am.point.inputs
                    )
                } else {
                    format!(
                        "amplifier: {}, down to {:.3e}; the quotient's relative error reaches {:.3e} at {}",
                        am.kind, am.factor, am.worst_rel, am.point.inputs
                    )
                });
            }
            if o.divergences > 0 {
                notes.push(format!(
                    "f64 comparison differs at {} points (first point {})",
                    o.divergences,
                    o.divergence_point.unwrap_or(0)
                ));
            }
            if notes.is_empty() {
                continue;
            }
            let _ = writeln!(
                s,
                "    {}:{} {}{} (local error max {:.2} ULP, carried relative error max {:.3e})\n      {}",
                o.line,
                o.column,
                o.op,
                if o.half { " f16" } else { "" },
                o.max_local_ulp,
                o.max_carried_rel,
                notes.join("\n      ")
            );
        }
    }
    for h in &a.hints {
        let _ = writeln!(
            s,
            "hint (line {}): {}\n  because {}",
            h.line, h.cure, h.evidence
        );
        if let Some((f, t)) = h.measured {
            let _ = writeln!(
                s,
                "  measured on this sweep: mean relative error {f:.3e} as written, {t:.3e} in the rewritten twin"
            );
        }
    }
    s
}

/// The analysis of a suite check's function over the check's sweep (what
/// `run --precision` adds to each check).
pub fn of_check(
    suite: &crate::suite::Suite,
    check: &crate::suite::Check,
) -> Result<Analysis, String> {
    let ev = crate::gate::evaluate(suite, check, None)?;
    let cols: Vec<&[u32]> = ev.input_columns.iter().map(|c| &c[..]).collect();
    analyse(
        &ev.program,
        &cols,
        &ev.build.shader.source,
        None,
        &Options::default(),
    )
}

/// A few report lines: the final error, the `top` lines by share, and every
/// operation whose cancellation carries error, hidden overflow or underflow,
/// and the hints.
pub fn summary(a: &Analysis, top: usize) -> Vec<String> {
    let fe = &a.final_error;
    let mut out = vec![format!(
        "precision: final error max {:.1} ULP, mean {:.2} ULP (mean relative {:.3e}){}",
        fe.max_ulp,
        fe.mean_ulp,
        fe.mean_rel,
        if fe.nonfinite > 0 {
            format!("; {} points not finite where f64 is", fe.nonfinite)
        } else {
            String::new()
        }
    )];
    out.extend(a.internal_errors.iter().cloned());
    let mut order: Vec<&Line> = a.lines.iter().filter(|l| l.share.abs() >= 0.005).collect();
    order.sort_by(|x, y| y.share.total_cmp(&x.share));
    if !order.is_empty() {
        out.push(format!(
            "  lines by share of the error (shares add up to 1 within {:.2}):",
            a.share_margin
        ));
    }
    for l in order.into_iter().take(top) {
        out.push(format!(
            "    line {:>4} {:>6.1} %  {}",
            l.line,
            100.0 * l.share,
            l.text
        ));
    }
    for o in a.lines.iter().flat_map(|l| &l.ops) {
        if o.max_cancel_bits >= a.cancel_bits && o.max_carried_rel > 16.0 * eps(o.half) {
            let at = o
                .cancel_point
                .as_ref()
                .map_or(String::new(), |w| format!(" at {}", w.inputs));
            out.push(format!(
                "  line {}: {} cancels up to {:.1} bits{at}",
                o.line, o.op, o.max_cancel_bits
            ));
        }
        if let Some(ov) = &o.overflow {
            out.push(format!(
                "  line {}: {} overflows at {} points{} (first at {})",
                o.line,
                o.op,
                ov.count,
                match &ov.hidden_by {
                    Some((l, op)) if ov.hidden > 0 =>
                        format!(", hidden by {op} on line {l} at {}", ov.hidden),
                    _ => String::new(),
                },
                ov.first.inputs
            ));
        }
        if let Some(u) = &o.underflow {
            out.push(format!(
                "  line {}: {} underflows at {} points ({} flushed to zero)",
                o.line,
                o.op,
                u.subnormal + u.flushed,
                u.flushed
            ));
        }
    }
    for h in &a.hints {
        out.push(format!("  hint (line {}): {}", h.line, h.cure));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ulp_is_the_spacing_of_the_working_type() {
        // IEEE 754 binary32: 2^-23 at 1, 2^-24 in [0.5, 1), 2^-149 below
        // 2^-126; binary16: 2^-10 at 1, 2^-24 below 2^-14.
        assert_eq!(ulp(1.0, false), 2f64.powi(-23));
        assert_eq!(ulp(-0.75, false), 2f64.powi(-24));
        assert_eq!(ulp(0.0, false), 2f64.powi(-149));
        assert_eq!(ulp(1e-40, false), 2f64.powi(-149));
        assert_eq!(ulp(3.0e38, false), 2f64.powi(127 - 23));
        assert_eq!(ulp(1.0, true), 2f64.powi(-10));
        assert_eq!(ulp(1e-6, true), 2f64.powi(-24));
        assert_eq!(ulp(65504.0, true), 32.0);
        assert_eq!(ulp(1e9, true), 32.0);
    }
}
