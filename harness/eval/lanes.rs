//! Lane kernels: each WGSL scalar operation as a tight loop over one batch of
//! lanes. Lowering names each operation by its [`Opcode`] (and whether it is
//! the f16 version); [`Opcode::kernel`] maps that pair to one monomorphised
//! loop, which the executor calls through a plain function pointer per batch,
//! so the per-lane work has no dispatch and vectorises where the operation
//! allows.

use std::marker::PhantomData;

use crate::arith;
use crate::arith::nan_first;
pub use crate::widths::Width;
use crate::widths::{at_widths, Chosen, Runs};

/// Lanes per batch. Every slot holds one column of this many 32-bit patterns.
#[cfg(not(miri))]
pub const LANES: usize = 128;
/// Lanes per batch under Miri: few, so the executor's tests run in minutes
/// there; the code paths (full, ragged, bound batches) are the same.
#[cfg(miri)]
pub const LANES: usize = 4;
pub type Lanes = [u32; LANES];

pub type K1 = fn(&mut Lanes, &Lanes);
pub type K2 = fn(&mut Lanes, &Lanes, &Lanes);
pub type K3 = fn(&mut Lanes, &Lanes, &Lanes, &Lanes);
pub type K4 = fn(&mut Lanes, &Lanes, &Lanes, &Lanes, &Lanes);

/// One monomorphised loop over a batch with its arity: what
/// [`Opcode::kernel`] gives for an (opcode, f16) pair.
#[derive(Clone, Copy)]
pub(crate) enum Kernel {
    Unary(K1),
    Binary(K2),
    Ternary(K3),
    Quaternary(K4),
}

impl Kernel {
    /// How many operand slots the kernel reads.
    pub fn arity(self) -> usize {
        match self {
            Kernel::Unary(_) => 1,
            Kernel::Binary(_) => 2,
            Kernel::Ternary(_) => 3,
            Kernel::Quaternary(_) => 4,
        }
    }
}

/// A lane holding a binary16 value as the f32 that holds it exactly: the
/// declared result of an operation that already rounds to f16 itself, so it
/// has no separate f16 form (see [`Opcode::has_half`]).
type Half = f32;

/// An f32 result of a fused chain of operations (`FMulAdd`, ...): rounded
/// to f32 after each operation of the chain, so it has no f16 form (its
/// f16 version would have to round the intermediate to binary16 too), and
/// fusion never applies to f16 code.
type Single = f32;

/// A value that lives in a lane as 32 bits. f16 values live as the f32 that
/// holds them exactly (see `arith`).
pub trait Lane: Copy {
    fn get(bits: u32) -> Self;
    fn put(self) -> u32;
}

impl Lane for f32 {
    #[inline(always)]
    fn get(bits: u32) -> f32 {
        f32::from_bits(bits)
    }
    #[inline(always)]
    fn put(self) -> u32 {
        self.to_bits()
    }
}
impl Lane for u32 {
    #[inline(always)]
    fn get(bits: u32) -> u32 {
        bits
    }
    #[inline(always)]
    fn put(self) -> u32 {
        self
    }
}
impl Lane for i32 {
    #[inline(always)]
    fn get(bits: u32) -> i32 {
        bits as i32
    }
    #[inline(always)]
    fn put(self) -> u32 {
        self as u32
    }
}
impl Lane for bool {
    #[inline(always)]
    fn get(bits: u32) -> bool {
        bits != 0
    }
    #[inline(always)]
    fn put(self) -> u32 {
        u32::from(self)
    }
}

pub trait Op1 {
    fn f(a: u32) -> u32;
}
pub trait Op2 {
    fn f(a: u32, b: u32) -> u32;
}
pub trait Op3 {
    fn f(a: u32, b: u32, c: u32) -> u32;
}
pub trait Op4 {
    fn f(a: u32, b: u32, c: u32, d: u32) -> u32;
}

/// The width the kernels run at, for the whole process.
static CHOSEN: Chosen = Chosen::new();

/// Use the kernels compiled for `width` (`None`: the widest this machine
/// runs, the default). Process-wide; a test hook, since every width gives the
/// same bits (tests compare them).
///
/// # Panics
/// When this machine does not run `width`.
pub fn set_width(width: Option<Width>) {
    let at = match width {
        None => Runs::best(),
        Some(w) => Runs::new(w).unwrap_or_else(|| {
            panic!(
                "this machine does not run {w:?} instructions (widest: {:?})",
                Width::best()
            )
        }),
    };
    CHOSEN.set(at);
}

// Each kernel exists three times: for the baseline target and, on x86-64,
// compiled with AVX2 and with AVX-512 enabled ([`at_widths!`]), run at the
// width chosen for the process. IEEE operations give the same bits at any
// vector width, so the choice never changes a result (tests compare every
// width the machine runs).
macro_rules! kernel {
    ($name:ident, $at:ident, $tr:ident, ($($arg:ident),*)) => {
        pub fn $name<T: $tr>(d: &mut Lanes, $($arg: &Lanes),*) {
            $at::<T>(CHOSEN.get(), d, $($arg),*)
        }

        at_widths! {
            #[inline(always)]
            fn $at<T: $tr>(at: Runs, d: &mut Lanes $(, $arg: &Lanes)*) {
                for i in 0..LANES {
                    d[i] = T::f($($arg[i]),*);
                }
            }
        }
    };
}

kernel!(run1, run1_at, Op1, (a));
kernel!(run2, run2_at, Op2, (a, b));
kernel!(run3, run3_at, Op3, (a, b, c));
kernel!(run4, run4_at, Op4, (a, b, c, e));

/// The f16 version of a float operation: computed in f32, rounded to half.
pub struct HalfOf<T>(PhantomData<T>);
impl<T: Op1> Op1 for HalfOf<T> {
    #[inline(always)]
    fn f(a: u32) -> u32 {
        arith::round_f16(f32::from_bits(T::f(a))).to_bits()
    }
}
impl<T: Op2> Op2 for HalfOf<T> {
    #[inline(always)]
    fn f(a: u32, b: u32) -> u32 {
        arith::round_f16(f32::from_bits(T::f(a, b))).to_bits()
    }
}
impl<T: Op3> Op3 for HalfOf<T> {
    #[inline(always)]
    fn f(a: u32, b: u32, c: u32) -> u32 {
        arith::round_f16(f32::from_bits(T::f(a, b, c))).to_bits()
    }
}

// The operation structs (one per opcode, implementing `Op1`..`Op4`) and the
// `Opcode` enum, from one table. Lane types are written as plain names (`f32`,
// `u32`, `i32`, `bool`, `Half`) so the table can tell which operations have
// an f16 form: exactly those whose result is declared `f32`.
macro_rules! lane_op {
    ($name:ident, $tr:ident, ($($x:ident: $t:ident),*) -> $r:ident $body:block, ($($a:ident),*)) => {
        pub struct $name;
        impl $tr for $name {
            #[inline(always)]
            fn f($($a: u32),*) -> u32 {
                $(let $x = <$t as Lane>::get($a);)*
                let r: $r = $body;
                Lane::put(r)
            }
        }
    };
}

/// `Some(kernel of HalfOf<op>)` when the result lane is `f32`, else `None`.
macro_rules! half_form {
    (f32, $run:ident, $variant:ident, $name:ident) => {
        Some(Kernel::$variant($run::<HalfOf<$name>>))
    };
    ($other:ident, $run:ident, $variant:ident, $name:ident) => {
        None
    };
}

macro_rules! lane_ops {
    (
        unary { $($n1:ident ($x1:ident: $t1:ident) -> $r1:ident $b1:block)* }
        binary { $($n2:ident ($x2:ident: $t2:ident, $y2:ident: $u2:ident) -> $r2:ident $b2:block)* }
        ternary {
            $($n3:ident ($x3:ident: $t3:ident, $y3:ident: $u3:ident, $z3:ident: $v3:ident)
                -> $r3:ident $b3:block)*
        }
        quaternary {
            $($n4:ident ($x4:ident: $t4:ident, $y4:ident: $u4:ident, $z4:ident: $v4:ident,
                $w4:ident: $s4:ident) -> $r4:ident $b4:block)*
        }
    ) => {
        $(lane_op!($n1, Op1, ($x1: $t1) -> $r1 $b1, (a));)*
        $(lane_op!($n2, Op2, ($x2: $t2, $y2: $u2) -> $r2 $b2, (a, b));)*
        $(lane_op!($n3, Op3, ($x3: $t3, $y3: $u3, $z3: $v3) -> $r3 $b3, (a, b, c));)*
        $(lane_op!($n4, Op4, ($x4: $t4, $y4: $u4, $z4: $v4, $w4: $s4) -> $r4 $b4, (a, b, c, d));)*

        /// One scalar lane operation: what an [`Op::Kernel`](super::ir::Op::Kernel)
        /// computes. One variant per operation struct of this module, with
        /// the same name.
        #[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
        pub(crate) enum Opcode {
            $($n1,)* $($n2,)* $($n3,)* $($n4,)*
        }

        impl Opcode {
            /// How many operand slots the operation reads.
            pub fn arity(self) -> usize {
                match self {
                    $(Opcode::$n1 => 1,)*
                    $(Opcode::$n2 => 2,)*
                    $(Opcode::$n3 => 3,)*
                    $(Opcode::$n4 => 4,)*
                }
            }

            /// The operation's name, as spelled in this module (`"FAdd"`).
            pub fn name(self) -> &'static str {
                match self {
                    $(Opcode::$n1 => stringify!($n1),)*
                    $(Opcode::$n2 => stringify!($n2),)*
                    $(Opcode::$n3 => stringify!($n3),)*
                    $(Opcode::$n4 => stringify!($n4),)*
                }
            }

            /// The kernel of the f16 version (computed in f32, the result
            /// rounded to binary16: `HalfOf<op>`), or `None` for an operation that
            /// has no f16 form.
            fn half_kernel(self) -> Option<Kernel> {
                match self {
                    $(Opcode::$n1 => half_form!($r1, run1, Unary, $n1),)*
                    $(Opcode::$n2 => half_form!($r2, run2, Binary, $n2),)*
                    $(Opcode::$n3 => half_form!($r3, run3, Ternary, $n3),)*
                    $(Opcode::$n4 => half_form!($r4, run4, Quaternary, $n4),)*
                }
            }

            /// The f32-only kernel of the operation.
            fn plain_kernel(self) -> Kernel {
                match self {
                    $(Opcode::$n1 => Kernel::Unary(run1::<$n1>),)*
                    $(Opcode::$n2 => Kernel::Binary(run2::<$n2>),)*
                    $(Opcode::$n3 => Kernel::Ternary(run3::<$n3>),)*
                    $(Opcode::$n4 => Kernel::Quaternary(run4::<$n4>),)*
                }
            }
        }
    };
}

impl Opcode {
    /// Whether the operation has an f16 version (`half` in
    /// [`Opcode::kernel`]): a float operation whose result is an f32 that
    /// rounding to binary16 changes. Operations that already round to f16
    /// themselves (`HMix`, `FToH`, ...) and those with an integer or boolean
    /// result have none.
    pub fn has_half(self) -> bool {
        self.half_kernel().is_some()
    }

    /// The monomorphised loop of the operation: `run2::<FAdd>`, or
    /// `run2::<HalfOf<FAdd>>` when `half`. The verifier rejects `half` for an
    /// operation without an f16 form ([`Opcode::has_half`]); asking for one
    /// here anyway panics.
    pub fn kernel(self, half: bool) -> Kernel {
        if half {
            match self.half_kernel() {
                Some(k) => k,
                None => panic!("{} has no f16 form", self.name()),
            }
        } else {
            self.plain_kernel()
        }
    }
}

lane_ops! {
unary {
    FNeg(x: f32) -> f32 { -x }
    FAbs(x: f32) -> f32 { libm::fabsf(x) }
    FSqrt(x: f32) -> f32 { libm::sqrtf(x) }
    FInvSqrt(x: f32) -> f32 { arith::inverse_sqrt(x) }
    FSin(x: f32) -> f32 { libm::sinf(x) }
    FCos(x: f32) -> f32 { libm::cosf(x) }
    FTan(x: f32) -> f32 { libm::tanf(x) }
    FAsin(x: f32) -> f32 { libm::asinf(x) }
    FAcos(x: f32) -> f32 { libm::acosf(x) }
    FAtan(x: f32) -> f32 { libm::atanf(x) }
    FSinh(x: f32) -> f32 { libm::sinhf(x) }
    FCosh(x: f32) -> f32 { libm::coshf(x) }
    FTanh(x: f32) -> f32 { libm::tanhf(x) }
    FAsinh(x: f32) -> f32 { libm::asinhf(x) }
    FAcosh(x: f32) -> f32 { libm::acoshf(x) }
    FAtanh(x: f32) -> f32 { libm::atanhf(x) }
    FExp(x: f32) -> f32 { libm::expf(x) }
    FExp2(x: f32) -> f32 { libm::exp2f(x) }
    FLog(x: f32) -> f32 { libm::logf(x) }
    FLog2(x: f32) -> f32 { libm::log2f(x) }
    FCeil(x: f32) -> f32 { libm::ceilf(x) }
    FFloor(x: f32) -> f32 { libm::floorf(x) }
    FRound(x: f32) -> f32 { arith::round_even(x) }
    FTrunc(x: f32) -> f32 { libm::truncf(x) }
    FFract(x: f32) -> f32 { arith::fract(x) }
    FSign(x: f32) -> f32 { arith::fsign(x) }
    FSaturate(x: f32) -> f32 { arith::saturate(x) }
    FDegrees(x: f32) -> f32 { arith::degrees(x) }
    FRadians(x: f32) -> f32 { arith::radians(x) }
    HDegrees(x: f32) -> Half { arith::degrees_f16(x) }
    HRadians(x: f32) -> Half { arith::radians_f16(x) }
    FQuantize16(x: f32) -> Half { arith::quantize_to_f16(x) }
    FIsNan(x: f32) -> bool { x.is_nan() }
    FIsInf(x: f32) -> bool { x.is_infinite() }
    // conversions
    FToI(x: f32) -> i32 { arith::f_to_i32(x) }
    FToU(x: f32) -> u32 { arith::f_to_u32(x) }
    FToB(x: f32) -> bool { x != 0.0 }
    FToH(x: f32) -> Half { arith::round_f16(x) }
    IToF(x: i32) -> f32 { x as f32 }
    UToF(x: u32) -> f32 { x as f32 }
    BToF(x: bool) -> f32 { if x { 1.0 } else { 0.0 } }
    IToB(x: u32) -> bool { x != 0 }
    BToI(x: bool) -> u32 { u32::from(x) }
    // f16 <-> 32-bit bit patterns for bitcast of vec2<f16>
    // integer unary
    INeg(x: i32) -> i32 { x.wrapping_neg() }
    IAbs(x: i32) -> i32 { arith::iabs(x) }
    ISign(x: i32) -> i32 { arith::isign(x) }
    UNot(x: u32) -> u32 { !x }
    BNot(x: bool) -> bool { !x }
    UCountOnes(x: u32) -> u32 { x.count_ones() }
    UClz(x: u32) -> u32 { x.leading_zeros() }
    UCtz(x: u32) -> u32 { x.trailing_zeros() }
    UReverse(x: u32) -> u32 { x.reverse_bits() }
    UFirstLeading(x: u32) -> u32 { arith::first_leading_bit_u(x) }
    IFirstLeading(x: i32) -> i32 { arith::first_leading_bit_i(x) }
    UFirstTrailing(x: u32) -> u32 { arith::first_trailing_bit(x) }
    // Chosen by `fuse` (never by lowering): the same bits as the plain ops.
    FSq(x: f32) -> Single { x * x }
    FOneMinus(x: f32) -> Single { 1.0 - x }
}

binary {
    // `nan_first`: where both operands are NaNs, the first, as the
    // three-operand AVX forms give it; the baseline's two-operand SSE2 code
    // may swap the operands of `+` and `*` and returned the second.
    FAdd(x: f32, y: f32) -> f32 { nan_first(x, x + y) }
    FSub(x: f32, y: f32) -> f32 { nan_first(x, x - y) }
    FMul(x: f32, y: f32) -> f32 { nan_first(x, x * y) }
    FDiv(x: f32, y: f32) -> f32 { x / y }
    FRem(x: f32, y: f32) -> f32 { arith::frem(x, y) }
    HRem(x: f32, y: f32) -> Half { arith::frem_f16(x, y) }
    FMin(x: f32, y: f32) -> f32 { arith::fmin(x, y) }
    FMax(x: f32, y: f32) -> f32 { arith::fmax(x, y) }
    FPow(x: f32, y: f32) -> f32 { arith::pow(x, y) }
    FAtan2(x: f32, y: f32) -> f32 { libm::atan2f(x, y) }
    FStep(x: f32, y: f32) -> f32 { arith::step(x, y) }
    FLdexp(x: f32, y: i32) -> f32 { arith::ldexp(x, y) }
    FEq(x: f32, y: f32) -> bool { x == y }
    FNe(x: f32, y: f32) -> bool { x != y }
    FLt(x: f32, y: f32) -> bool { x < y }
    FLe(x: f32, y: f32) -> bool { x <= y }
    FGt(x: f32, y: f32) -> bool { x > y }
    FGe(x: f32, y: f32) -> bool { x >= y }
    IAdd(x: u32, y: u32) -> u32 { x.wrapping_add(y) }
    ISub(x: u32, y: u32) -> u32 { x.wrapping_sub(y) }
    IMul(x: u32, y: u32) -> u32 { x.wrapping_mul(y) }
    SDiv(x: i32, y: i32) -> i32 { arith::idiv(x, y) }
    SRem(x: i32, y: i32) -> i32 { arith::irem(x, y) }
    UDiv(x: u32, y: u32) -> u32 { arith::udiv(x, y) }
    URem(x: u32, y: u32) -> u32 { arith::urem(x, y) }
    SMin(x: i32, y: i32) -> i32 { x.min(y) }
    SMax(x: i32, y: i32) -> i32 { x.max(y) }
    UMin(x: u32, y: u32) -> u32 { x.min(y) }
    UMax(x: u32, y: u32) -> u32 { x.max(y) }
    UAnd(x: u32, y: u32) -> u32 { x & y }
    UOr(x: u32, y: u32) -> u32 { x | y }
    UXor(x: u32, y: u32) -> u32 { x ^ y }
    // Shift amounts are taken modulo the bit width (8.9 "Bit Expressions").
    UShl(x: u32, y: u32) -> u32 { x << (y & 31) }
    UShr(x: u32, y: u32) -> u32 { x >> (y & 31) }
    SShr(x: i32, y: u32) -> i32 { x >> (y & 31) }
    IEq(x: u32, y: u32) -> bool { x == y }
    INe(x: u32, y: u32) -> bool { x != y }
    SLt(x: i32, y: i32) -> bool { x < y }
    SLe(x: i32, y: i32) -> bool { x <= y }
    SGt(x: i32, y: i32) -> bool { x > y }
    SGe(x: i32, y: i32) -> bool { x >= y }
    ULt(x: u32, y: u32) -> bool { x < y }
    ULe(x: u32, y: u32) -> bool { x <= y }
    UGt(x: u32, y: u32) -> bool { x > y }
    UGe(x: u32, y: u32) -> bool { x >= y }
    IDot4I8(x: u32, y: u32) -> i32 { arith::dot4i8packed(x, y) }
    IDot4U8(x: u32, y: u32) -> u32 { arith::dot4u8packed(x, y) }
}

ternary {
    FClamp(x: f32, lo: f32, hi: f32) -> f32 { arith::fclamp(x, lo, hi) }
    FMix(x: f32, y: f32, t: f32) -> f32 { arith::mix(x, y, t) }
    FSmooth(lo: f32, hi: f32, x: f32) -> f32 { arith::smoothstep(lo, hi, x) }
    // f16 formula built-ins: every step rounded to binary16 (see `arith`).
    HMix(x: f32, y: f32, t: f32) -> Half { arith::mix_f16(x, y, t) }
    HSmooth(lo: f32, hi: f32, x: f32) -> Half { arith::smoothstep_f16(lo, hi, x) }
    FFma(x: f32, y: f32, z: f32) -> f32 { libm::fmaf(x, y, z) }
    SClamp(x: i32, lo: i32, hi: i32) -> i32 { x.max(lo).min(hi) }
    UClamp(x: u32, lo: u32, hi: u32) -> u32 { x.max(lo).min(hi) }
    UExtract(x: u32, o: u32, c: u32) -> u32 { arith::extract_bits_u(x, o, c) }
    SExtract(x: i32, o: u32, c: u32) -> i32 { arith::extract_bits_i(x, o, c) }
    // fma for f16: the exact product of two halves fits in f32, and f64 holds
    // the sum exactly enough that one rounding to f16 follows.
    HFma(x: f32, y: f32, z: f32) -> Half {
        half::f16::from_f64(f64::from(x) * f64::from(y) + f64::from(z)).to_f32()
    }
    // Fused chains, chosen by `fuse` (never by lowering): two operations in
    // one pass over the lanes, each rounded to f32 as the plain ops round
    // them (never one rounding like `fma`), and each NaN result the one the
    // plain op gives (`nan_first`), so every bit is the same.
    FMulAdd(x: f32, y: f32, z: f32) -> Single { let t = nan_first(x, x * y); nan_first(t, t + z) }
    FAddMul(z: f32, x: f32, y: f32) -> Single { let t = nan_first(x, x * y); nan_first(z, z + t) }
    FMulSub(x: f32, y: f32, z: f32) -> Single { let t = nan_first(x, x * y); nan_first(t, t - z) }
    FSubMul(z: f32, x: f32, y: f32) -> Single { let t = nan_first(x, x * y); nan_first(z, z - t) }
    FMulMul(x: f32, y: f32, z: f32) -> Single { let t = nan_first(x, x * y); nan_first(t, t * z) }
    FMulBy(z: f32, x: f32, y: f32) -> Single { let t = nan_first(x, x * y); nan_first(z, z * t) }
    FDivBy(z: f32, x: f32, y: f32) -> Single { let t = nan_first(x, x * y); z / t }
    FDiffMul(x: f32, y: f32, z: f32) -> Single { let t = nan_first(x, x - y); nan_first(t, t * z) }
    // select(f, t, cond): bit patterns, so it serves every type.
    Select(f: u32, t: u32, c: bool) -> u32 { if c { t } else { f } }
}

quaternary {
    UInsert(e: u32, n: u32, o: u32, c: u32) -> u32 { arith::insert_bits(e, n, o, c) }
}
}
