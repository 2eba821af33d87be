//! The shadow executor and the `f64` number model: a second, safe executor of
//! the same verified [`Code`] that carries beside every slot's 32-bit lane
//! value (the *working* value) an f64 *shadow*.
//!
//! Two modes, one interpreter:
//!
//! - [`Mode::Shadow`]: working values come from the same lane kernels the
//!   normal executor calls (so they are bit for bit what [`Program::eval`]
//!   computes; [`Shadow::run`] checks that at every point), and each float
//!   operation is computed again in binary64 on the shadows of its operands
//!   ([`f64_op`]). Control flow, indices and integers follow the working
//!   values; where an f64 comparison (or float→integer conversion, `step`)
//!   disagrees with the working one, the point *diverges* there and the
//!   observer is told.
//! - [`Mode::Values`]: every value is the f64 one; an operation whose site is
//!   not marked exact rounds its f64 result to its working type (f32 or f16)
//!   after computing it. Control flow, comparisons and conversions follow
//!   these values. With every site exact this is the `f64` number model
//!   (`Program::eval_f64`); with some sites exact it is the "line taken
//!   exactly" re-run of the precision attribution.
//!
//! The f64 semantics of each operation ([`f64_op`]) follow its WGSL
//! definition in binary64: `+ - * /`, `sqrt`, `fma` correctly rounded in f64;
//! transcendentals from the `libm` crate's f64 functions (a port of the musl
//! / FreeBSD msun routines; measured against mpmath on the evaluator's
//! accuracy corpus in `tests/eval/f64_model.rs`); built-ins defined by a
//! formula (`mix`, `smoothstep`, `%`, `fract`, `degrees`) by that formula in
//! f64; `pow` keeps the evaluator's reading (negative base → NaN) with libm's
//! f64 `pow`. A conversion to `f16` is the identity in f64 (the f64 model has
//! no f16); `quantizeToF16` keeps its meaning (round to f16). Operations that
//! read and write several slots per lane (packing, `frexp`, `modf`, f16
//! bitcasts) run on the working values and restart the shadow from their
//! results; so does a read of a bound look-up table (`Op::Texture`), which
//! is data, like an input.

// Lane loops index several columns (working, shadow, masks) in lockstep, as
// the executor's do; an iterator per column would hide that.
#![allow(clippy::needless_range_loop)]

use super::exec::Verified;
use super::ir::{At, Case, Op, Slot, PER_LANE_MAX};
use super::lanes::{Kernel, Lanes, Opcode, LANES};
use super::ty::ScalarKind;
use super::{to_external, to_lane};

/// An f64 column: one shadow per lane.
type Shadows = [f64; LANES];

/// What the shadow executor computes.
#[derive(Clone, Copy)]
pub(crate) enum Mode<'a> {
    /// Working values by the lane kernels, shadows in f64 beside them.
    Shadow,
    /// f64 values; `exact[at]` says whether the operation at site `at` keeps
    /// its f64 result (true) or rounds it to its working type (false).
    Values { exact: &'a [bool] },
}

/// One float operation at one live point, as the shadow executor saw it.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Event {
    pub at: At,
    pub op: Opcode,
    /// The result is rounded to binary16 in the working arithmetic.
    pub half: bool,
    pub lane: usize,
    pub arity: usize,
    /// Working operands (as floats; meaningful for float operands only).
    pub args_w: [f64; 4],
    /// Working result.
    pub w: f64,
    /// Shadow result: the operation in f64 on the shadow operands.
    pub s: f64,
    /// The operation in f64 on the working operands: `w - local` is the
    /// error this operation alone introduced.
    pub local: f64,
}

/// What an analysis wants to hear while the shadow executor runs.
pub(crate) trait Observe {
    /// A float-result operation ran at a live point.
    fn kernel(&mut self, e: &Event);
    /// At site `at`, the f64 comparison or conversion disagreed with the
    /// working one for this lane.
    fn diverge(&mut self, at: At, lane: usize);
}

/// An observer that hears nothing (the `f64` number model).
pub(crate) struct Deaf;
impl Observe for Deaf {
    fn kernel(&mut self, _: &Event) {}
    fn diverge(&mut self, _: At, _: usize) {}
}

/// How an operation reads and writes in f64.
#[derive(Clone, Copy)]
enum Sem {
    /// Integer or boolean operands and result: the lane kernel alone.
    Bits,
    /// Float operands, float result.
    F1(fn(f64) -> f64),
    F2(fn(f64, f64) -> f64),
    F3(fn(f64, f64, f64) -> f64),
    /// Float operands, integer or boolean result (comparisons, conversions).
    Test1(fn(f64) -> u32),
    Test2(fn(f64, f64) -> u32),
    /// Integer operand, float result (`i32`/`u32`/`bool` to float).
    FromBits(fn(u32) -> f64),
    /// `ldexp(float, i32)`.
    Ldexp,
    /// `select(f, t, cond)`: moves a value of any type.
    Select,
}

/// WGSL `min`/`max` reading (`arith::fmin`, `arith::fmax`) in f64.
fn min64(a: f64, b: f64) -> f64 {
    if b < a {
        b
    } else {
        a
    }
}
fn max64(a: f64, b: f64) -> f64 {
    if a < b {
        b
    } else {
        a
    }
}
fn clamp64(e: f64, lo: f64, hi: f64) -> f64 {
    min64(max64(e, lo), hi)
}
/// f64 → i32 as `arith::f_to_i32` does for f32: NaN → 0, saturating.
fn to_i32(x: f64) -> u32 {
    if x.is_nan() {
        0
    } else {
        (x.clamp(-2147483648.0, 2147483520.0) as i32) as u32
    }
}
fn to_u32(x: f64) -> u32 {
    if x.is_nan() {
        0
    } else {
        x.clamp(0.0, 4294967040.0) as u32
    }
}

/// The f64 semantics of `op` (see the module doc).
fn sem(op: Opcode) -> Sem {
    use Opcode as O;
    use Sem::*;
    match op {
        O::FNeg => F1(|x| -x),
        O::FAbs => F1(libm::fabs),
        O::FSqrt => F1(libm::sqrt),
        O::FInvSqrt => F1(|x| 1.0 / libm::sqrt(x)),
        O::FSin => F1(libm::sin),
        O::FCos => F1(libm::cos),
        O::FTan => F1(libm::tan),
        O::FAsin => F1(libm::asin),
        O::FAcos => F1(libm::acos),
        O::FAtan => F1(libm::atan),
        O::FSinh => F1(libm::sinh),
        O::FCosh => F1(libm::cosh),
        O::FTanh => F1(libm::tanh),
        O::FAsinh => F1(libm::asinh),
        O::FAcosh => F1(libm::acosh),
        O::FAtanh => F1(libm::atanh),
        O::FExp => F1(libm::exp),
        O::FExp2 => F1(libm::exp2),
        O::FLog => F1(libm::log),
        O::FLog2 => F1(libm::log2),
        O::FCeil => F1(libm::ceil),
        O::FFloor => F1(libm::floor),
        O::FRound => F1(libm::rint),
        O::FTrunc => F1(libm::trunc),
        O::FFract => F1(|x| x - libm::floor(x)),
        O::FSign => F1(|x| {
            if x > 0.0 {
                1.0
            } else if x < 0.0 {
                -1.0
            } else {
                0.0
            }
        }),
        O::FSaturate => F1(|x| clamp64(x, 0.0, 1.0)),
        O::FDegrees | O::HDegrees => F1(|x| x * (180.0 / std::f64::consts::PI)),
        O::FRadians | O::HRadians => F1(|x| x * (std::f64::consts::PI / 180.0)),
        O::FQuantize16 => F1(|x| half::f16::from_f64(x).to_f64()),
        // A conversion to f16 has nothing to do in f64.
        O::FToH => F1(|x| x),
        O::FIsNan => Test1(|x| u32::from(x.is_nan())),
        O::FIsInf => Test1(|x| u32::from(x.is_infinite())),
        O::FToB => Test1(|x| u32::from(x != 0.0)),
        O::FToI => Test1(to_i32),
        O::FToU => Test1(to_u32),
        O::IToF => FromBits(|b| f64::from(b as i32)),
        O::UToF => FromBits(f64::from),
        O::BToF => FromBits(|b| if b != 0 { 1.0 } else { 0.0 }),
        O::FAdd => F2(|a, b| a + b),
        O::FSub => F2(|a, b| a - b),
        O::FMul => F2(|a, b| a * b),
        O::FDiv => F2(|a, b| a / b),
        // WGSL `%` on floats: e1 - e2 * trunc(e1 / e2).
        O::FRem | O::HRem => F2(|a, b| a - b * libm::trunc(a / b)),
        O::FMin => F2(min64),
        O::FMax => F2(max64),
        O::FPow => F2(|a, b| if a < 0.0 { f64::NAN } else { libm::pow(a, b) }),
        O::FAtan2 => F2(libm::atan2),
        O::FStep => F2(|e, x| if e <= x { 1.0 } else { 0.0 }),
        O::FLdexp => Ldexp,
        O::FEq => Test2(|a, b| u32::from(a == b)),
        O::FNe => Test2(|a, b| u32::from(a != b)),
        O::FLt => Test2(|a, b| u32::from(a < b)),
        O::FLe => Test2(|a, b| u32::from(a <= b)),
        O::FGt => Test2(|a, b| u32::from(a > b)),
        O::FGe => Test2(|a, b| u32::from(a >= b)),
        O::FClamp => F3(clamp64),
        O::FMix | O::HMix => F3(|a, b, t| a * (1.0 - t) + b * t),
        O::FSmooth | O::HSmooth => F3(|lo, hi, x| {
            let t = clamp64((x - lo) / (hi - lo), 0.0, 1.0);
            t * t * (3.0 - 2.0 * t)
        }),
        O::FFma | O::HFma => F3(libm::fma),
        // Fused chains (chosen by `fuse` for the executor's code only: the
        // shadow executor runs the lowered code, one op per operation, so
        // these are here for the match to be whole and are never met).
        O::FSq => F1(|x| x * x),
        O::FOneMinus => F1(|x| 1.0 - x),
        O::FMulAdd => F3(|x, y, z| x * y + z),
        O::FAddMul => F3(|z, x, y| z + x * y),
        O::FMulSub => F3(|x, y, z| x * y - z),
        O::FSubMul => F3(|z, x, y| z - x * y),
        O::FMulMul => F3(|x, y, z| x * y * z),
        O::FMulBy => F3(|z, x, y| z * (x * y)),
        O::FDivBy => F3(|z, x, y| z / (x * y)),
        O::FDiffMul => F3(|x, y, z| (x - y) * z),
        O::Select => Select,
        O::IToB
        | O::BToI
        | O::INeg
        | O::IAbs
        | O::ISign
        | O::UNot
        | O::BNot
        | O::UCountOnes
        | O::UClz
        | O::UCtz
        | O::UReverse
        | O::UFirstLeading
        | O::IFirstLeading
        | O::UFirstTrailing
        | O::IAdd
        | O::ISub
        | O::IMul
        | O::SDiv
        | O::SRem
        | O::UDiv
        | O::URem
        | O::SMin
        | O::SMax
        | O::UMin
        | O::UMax
        | O::UAnd
        | O::UOr
        | O::UXor
        | O::UShl
        | O::UShr
        | O::SShr
        | O::IEq
        | O::INe
        | O::SLt
        | O::SLe
        | O::SGt
        | O::SGe
        | O::ULt
        | O::ULe
        | O::UGt
        | O::UGe
        | O::IDot4I8
        | O::IDot4U8
        | O::SClamp
        | O::UClamp
        | O::UExtract
        | O::SExtract
        | O::UInsert => Bits,
    }
}

/// Whether `op` (with the kernel's `half` flag) rounds its result to f16 in
/// the working arithmetic.
pub(crate) fn rounds_to_half(op: Opcode, half: bool) -> bool {
    use Opcode as O;
    half || matches!(
        op,
        O::HMix | O::HSmooth | O::HFma | O::HRem | O::HDegrees | O::HRadians | O::FToH
    )
}

/// Whether `op` produces a float from float operands (what the precision
/// analysis measures).
pub(crate) fn is_float_op(op: Opcode) -> bool {
    matches!(sem(op), Sem::F1(_) | Sem::F2(_) | Sem::F3(_) | Sem::Ldexp)
}

/// `x` rounded to the working type (f16 when `half`, else f32), as f64.
pub(crate) fn round_to(x: f64, half: bool) -> f64 {
    if half {
        half::f16::from_f64(x).to_f64()
    } else {
        x as f32 as f64
    }
}

/// The f64 result of `op` on `args` (float operands from `f`, integer ones
/// from `b`). Integer results come back as `Err(bits)`.
fn apply(sem: Sem, f: &[f64; 4], b: &[u32; 4]) -> Result<f64, u32> {
    match sem {
        Sem::F1(g) => Ok(g(f[0])),
        Sem::F2(g) => Ok(g(f[0], f[1])),
        Sem::F3(g) => Ok(g(f[0], f[1], f[2])),
        Sem::Test1(g) => Err(g(f[0])),
        Sem::Test2(g) => Err(g(f[0], f[1])),
        Sem::FromBits(g) => Ok(g(b[0])),
        Sem::Ldexp => Ok(libm::scalbn(f[0], b[1] as i32)),
        Sem::Select | Sem::Bits => unreachable!("moves and integer operations have no f64 form"),
    }
}

/// Working bits of a float lane value, as f64.
#[inline]
fn wf(bits: u32) -> f64 {
    f64::from(f32::from_bits(bits))
}

/// One thread's shadow machine for one verified program.
pub(crate) struct Shadow<'a> {
    code: &'a Verified,
    w: Vec<Lanes>,
    s: Vec<Shadows>,
    steps: [u64; LANES],
    abandoned: [bool; LANES],
    step_budget: u64,
    seed: u64,
    has_perturb: bool,
    /// Events waiting for a perturbation of their result (spec-bound code).
    pending: Vec<(Slot, Event)>,
}

/// One batch's results: per output leaf, the working column (external
/// encoding) and the shadow (or f64-model) column. A point that ran out of
/// steps is NaN (floats) or 0 in the working column, as in the evaluator,
/// and NaN in the shadow.
pub(crate) struct BatchOut {
    pub working: Vec<Vec<u32>>,
    pub shadow: Vec<Vec<f64>>,
}

fn has_perturb(ops: &[Op]) -> bool {
    ops.iter().any(|op| match op {
        Op::Perturb(_) => true,
        Op::If { accept, reject, .. } => has_perturb(accept) || has_perturb(reject),
        Op::Loop {
            body, continuing, ..
        } => has_perturb(body) || has_perturb(continuing),
        Op::Switch { cases, .. } => cases.iter().any(|c: &Case| has_perturb(&c.body)),
        _ => false,
    })
}

impl<'a> Shadow<'a> {
    pub fn new(code: &'a Verified, step_budget: u64, seed: u64) -> Shadow<'a> {
        let mut w = vec![[0u32; LANES]; code.slot_count];
        let mut s = vec![[0f64; LANES]; code.slot_count];
        for &(slot, bits) in &code.consts {
            w[slot as usize] = [bits; LANES];
            s[slot as usize] = [wf(bits); LANES];
        }
        Shadow {
            code,
            w,
            s,
            steps: [0; LANES],
            abandoned: [false; LANES],
            step_budget,
            seed,
            has_perturb: has_perturb(&code.ops),
            pending: Vec::new(),
        }
    }

    /// Run one batch: `ins[i]` holds `len` ≤ [`LANES`] values of input leaf
    /// i in the column encoding.
    pub fn run(
        &mut self,
        ins: &[&[u32]],
        len: usize,
        mode: Mode,
        obs: &mut dyn Observe,
    ) -> BatchOut {
        assert!(len <= LANES);
        let code = self.code;
        let kinds: Vec<ScalarKind> = code.params.iter().flat_map(|(_, t)| t.leaves()).collect();
        for ((&slot, &k), col) in code.input_slots.iter().zip(&kinds).zip(ins) {
            let mut lanes = [0u32; LANES];
            for lane in 0..len {
                lanes[lane] = to_lane(k, col[lane]);
            }
            self.w[slot as usize] = lanes;
            self.s[slot as usize] = lanes.map(wf);
        }
        let mut root = [0u32; LANES];
        root[..len].fill(1);
        self.w[code.root_mask as usize] = root;
        self.steps = [0; LANES];
        self.abandoned = [false; LANES];
        self.exec(&code.ops, mode, obs);
        self.flush(obs);
        let out_kinds = code.output_kinds();
        let mut out = BatchOut {
            working: Vec::new(),
            shadow: Vec::new(),
        };
        for (&slot, &k) in code.output_slots.iter().zip(&out_kinds) {
            let w = &self.w[slot as usize];
            let s = &self.s[slot as usize];
            let mut wc = Vec::with_capacity(len);
            let mut sc = Vec::with_capacity(len);
            for lane in 0..len {
                if self.abandoned[lane] {
                    wc.push(if k.is_float() {
                        to_external(k, f32::NAN.to_bits())
                    } else {
                        0
                    });
                    sc.push(f64::NAN);
                    continue;
                }
                wc.push(to_external(k, w[lane]));
                sc.push(match k {
                    ScalarKind::F32 | ScalarKind::F16 => s[lane],
                    ScalarKind::I32 => f64::from(w[lane] as i32),
                    ScalarKind::U32 => f64::from(w[lane]),
                    ScalarKind::Bool => f64::from(u32::from(w[lane] != 0)),
                });
            }
            out.working.push(wc);
            out.shadow.push(sc);
        }
        out
    }

    fn any(&self, m: Slot) -> bool {
        self.w[m as usize].iter().any(|&x| x != 0)
    }

    fn flush(&mut self, obs: &mut dyn Observe) {
        for (dst, mut e) in self.pending.drain(..) {
            e.w = wf(self.w[dst as usize][e.lane]);
            obs.kernel(&e);
        }
    }

    fn exec(&mut self, ops: &[Op], mode: Mode, obs: &mut dyn Observe) {
        for op in ops {
            if self.has_perturb && !matches!(op, Op::Kernel { .. } | Op::Perturb(_)) {
                self.flush(obs);
            }
            self.step(op, mode, obs);
        }
    }

    #[allow(clippy::too_many_arguments)]
    fn kernel(
        &mut self,
        op: Opcode,
        half: bool,
        dst: Slot,
        args: [Slot; 4],
        at: At,
        mode: Mode,
        obs: &mut dyn Observe,
    ) {
        let code = self.code;
        let arity = op.arity();
        let live = self.w[code.sites[at as usize].mask as usize];
        let (d, a) = (dst as usize, args.map(|x| x as usize));
        let sem = sem(op);
        let shadow_mode = matches!(mode, Mode::Shadow);
        // Working values: the lane kernel (shadow mode, and integer
        // operations in both modes).
        if shadow_mode || matches!(sem, Sem::Bits | Sem::Select) {
            let k = op.kernel(half);
            let (x, y, z, u) = (self.w[a[0]], self.w[a[1]], self.w[a[2]], self.w[a[3]]);
            let out = &mut self.w[d];
            match k {
                Kernel::Unary(k) => k(out, &x),
                Kernel::Binary(k) => k(out, &x, &y),
                Kernel::Ternary(k) => k(out, &x, &y, &z),
                Kernel::Quaternary(k) => k(out, &x, &y, &z, &u),
            }
        }
        match sem {
            Sem::Bits => {
                self.s[d] = self.w[d].map(wf);
                return;
            }
            Sem::Select => {
                let c = self.w[a[2]];
                for lane in 0..LANES {
                    self.s[d][lane] = if c[lane] != 0 {
                        self.s[a[1]][lane]
                    } else {
                        self.s[a[0]][lane]
                    };
                    if !shadow_mode {
                        self.w[d][lane] = if c[lane] != 0 {
                            self.w[a[1]][lane]
                        } else {
                            self.w[a[0]][lane]
                        };
                    }
                }
                return;
            }
            _ => {}
        }
        let rounds_half = rounds_to_half(op, half);
        let keep = match mode {
            Mode::Shadow => true,
            Mode::Values { exact } => exact.get(at as usize).copied().unwrap_or(false),
        };
        for lane in 0..LANES {
            let mut fs = [0.0; 4];
            let mut bs = [0u32; 4];
            for i in 0..arity {
                fs[i] = self.s[a[i]][lane];
                bs[i] = self.w[a[i]][lane];
            }
            match apply(sem, &fs, &bs) {
                Ok(v) => {
                    if shadow_mode {
                        self.s[d][lane] = v;
                        if live[lane] != 0 {
                            let mut fw = [0.0; 4];
                            for i in 0..arity {
                                fw[i] = wf(bs[i]);
                            }
                            let local = apply(sem, &fw, &bs).unwrap_or(f64::NAN);
                            let e = Event {
                                at,
                                op,
                                half: rounds_half,
                                lane,
                                arity,
                                args_w: fw,
                                w: wf(self.w[d][lane]),
                                s: v,
                                local,
                            };
                            if self.has_perturb {
                                self.pending.push((dst, e));
                            } else {
                                obs.kernel(&e);
                            }
                            // A discontinuous float operation can diverge.
                            if op == Opcode::FStep && wf(self.w[d][lane]) != v {
                                obs.diverge(at, lane);
                            }
                        }
                    } else {
                        let v = if keep { v } else { round_to(v, rounds_half) };
                        self.s[d][lane] = v;
                        self.w[d][lane] = (v as f32).to_bits();
                    }
                }
                Err(bits) => {
                    if shadow_mode {
                        if live[lane] != 0 && bits != self.w[d][lane] {
                            obs.diverge(at, lane);
                        }
                    } else {
                        self.w[d][lane] = bits;
                    }
                    self.s[d][lane] = wf(self.w[d][lane]);
                }
            }
        }
    }

    fn step(&mut self, op: &Op, mode: Mode, obs: &mut dyn Observe) {
        match *op {
            Op::Fill { dst, bits } => {
                self.w[dst as usize] = [bits; LANES];
                self.s[dst as usize] = [wf(bits); LANES];
            }
            Op::Copy { dst, src } => {
                self.w[dst as usize] = self.w[src as usize];
                self.s[dst as usize] = self.s[src as usize];
            }
            Op::Enter { mask, parent } => self.w[mask as usize] = self.w[parent as usize],
            Op::Kernel {
                op,
                half,
                dst,
                args,
                at,
            } => self.kernel(op, half, dst, args, at, mode, obs),
            Op::PerLane {
                f,
                ref dst,
                ref args,
            } => {
                let mut a = [0u32; PER_LANE_MAX];
                let mut o = [0u32; PER_LANE_MAX];
                for lane in 0..LANES {
                    for (i, &s) in args.iter().enumerate() {
                        a[i] = self.w[s as usize][lane];
                    }
                    f(&a[..args.len()], &mut o[..dst.len()]);
                    for (i, &s) in dst.iter().enumerate() {
                        self.w[s as usize][lane] = o[i];
                        self.s[s as usize][lane] = wf(o[i]);
                    }
                }
            }
            Op::MaskedCopy { dst, src, mask } => {
                let m = self.w[mask as usize];
                for lane in 0..LANES {
                    if m[lane] != 0 {
                        self.w[dst as usize][lane] = self.w[src as usize][lane];
                        self.s[dst as usize][lane] = self.s[src as usize][lane];
                    }
                }
            }
            Op::Gather {
                ref dst,
                ref src,
                offset,
            } => {
                let off = self.w[offset as usize];
                for (j, &d) in dst.iter().enumerate() {
                    for lane in 0..LANES {
                        let s = src[off[lane] as usize + j] as usize;
                        self.w[d as usize][lane] = self.w[s][lane];
                        self.s[d as usize][lane] = self.s[s][lane];
                    }
                }
            }
            Op::Scatter {
                ref dst,
                ref src,
                offset,
                mask,
            } => {
                let off = self.w[offset as usize];
                let m = self.w[mask as usize];
                for (j, &s) in src.iter().enumerate() {
                    for lane in 0..LANES {
                        if m[lane] != 0 {
                            let (v, sv) = (self.w[s as usize][lane], self.s[s as usize][lane]);
                            let d = dst[off[lane] as usize + j] as usize;
                            self.w[d][lane] = v;
                            self.s[d][lane] = sv;
                        }
                    }
                }
            }
            Op::CheckIndex { dst, idx, len, .. } => {
                let ix = self.w[idx as usize];
                for lane in 0..LANES {
                    self.w[dst as usize][lane] = if ix[lane] < len { ix[lane] } else { 0 };
                }
            }
            Op::If {
                cond,
                parent,
                then_mask,
                else_mask,
                ref accept,
                ref reject,
            } => {
                let c = self.w[cond as usize];
                let pm = self.w[parent as usize];
                for i in 0..LANES {
                    self.w[then_mask as usize][i] = pm[i] & c[i];
                    self.w[else_mask as usize][i] = pm[i] & (c[i] ^ 1);
                }
                if self.any(then_mask) {
                    self.exec(accept, mode, obs);
                }
                if self.any(else_mask) {
                    self.exec(reject, mode, obs);
                }
            }
            Op::Loop {
                parent,
                lmask,
                imask,
                ref body,
                ref continuing,
                break_if,
                ref kill,
                ..
            } => {
                self.w[lmask as usize] = self.w[parent as usize];
                while self.any(lmask) {
                    let live = self.w[lmask as usize];
                    let mut out = [0u32; LANES];
                    for lane in 0..LANES {
                        self.steps[lane] += u64::from(live[lane]);
                        if live[lane] != 0 && self.steps[lane] > self.step_budget {
                            out[lane] = 1;
                            self.abandoned[lane] = true;
                        }
                    }
                    if out.iter().any(|&o| o != 0) {
                        for &m in kill.iter() {
                            for i in 0..LANES {
                                self.w[m as usize][i] &= out[i] ^ 1;
                            }
                        }
                        if !self.any(lmask) {
                            break;
                        }
                    }
                    self.w[imask as usize] = self.w[lmask as usize];
                    self.exec(body, mode, obs);
                    if self.any(lmask) {
                        self.exec(continuing, mode, obs);
                        if let Some(b) = break_if {
                            let c = self.w[b as usize];
                            for i in 0..LANES {
                                self.w[lmask as usize][i] &= c[i] ^ 1;
                            }
                        }
                    }
                }
            }
            Op::Switch {
                sel,
                parent,
                smask,
                ref cases,
            } => {
                self.w[smask as usize] = self.w[parent as usize];
                let s = self.w[sel as usize];
                let mut carried = [0u32; LANES];
                for case in cases {
                    let sm = self.w[smask as usize];
                    let mut cm = [0u32; LANES];
                    for i in 0..LANES {
                        let hit = if case.default {
                            !cases.iter().any(|c| !c.default && c.values.contains(&s[i]))
                        } else {
                            case.values.contains(&s[i])
                        };
                        cm[i] = (sm[i] & u32::from(hit)) | (carried[i] & sm[i]);
                    }
                    self.w[case.mask as usize] = cm;
                    carried = if case.fall_through { cm } else { [0; LANES] };
                    if self.any(case.mask) {
                        self.exec(&case.body, mode, obs);
                    }
                }
            }
            Op::Perturb(ref pt) => {
                // The spec-bound model moves working values only; the f64
                // model has no error to move within.
                if matches!(mode, Mode::Shadow) {
                    let a = self.w[pt.arg as usize];
                    pt.apply(&mut self.w[pt.dst as usize], &a, self.seed);
                }
            }
            Op::Texture(ref t) => {
                // A table read is data, like an input: it runs on the working
                // coordinates (in the f64 model those are its values rounded to
                // f32) and its texels restart the shadow exactly. Out-of-bounds
                // loads are reported by the normal evaluation, not here.
                let out = t.run(|s| self.w[s as usize], &mut Vec::new());
                for (&d, o) in t.dst.iter().zip(&out) {
                    self.w[d as usize] = *o;
                    self.s[d as usize] = o.map(wf);
                }
            }
            Op::Exit { current, ref masks } => {
                let cur = self.w[current as usize];
                for &m in masks.iter() {
                    for i in 0..LANES {
                        self.w[m as usize][i] &= cur[i] ^ 1;
                    }
                }
            }
        }
    }
}
