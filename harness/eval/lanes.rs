//! Lane kernels: each WGSL scalar operation as a tight loop over one batch of
//! lanes. The compiler picks a monomorphised kernel per (operation, type) once;
//! the executor calls it through a plain function pointer per batch, so the
//! per-lane work has no dispatch and vectorises where the operation allows.

use std::marker::PhantomData;

use crate::arith;

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

static BASELINE_ONLY: std::sync::atomic::AtomicBool = std::sync::atomic::AtomicBool::new(false);

/// Use only the baseline kernels (tests prove the wide ones give the same bits).
pub fn set_baseline_only(on: bool) {
    BASELINE_ONLY.store(on, std::sync::atomic::Ordering::Relaxed);
}

/// Whether the wider vector instructions may be used (checked once, cached by std).
#[inline(always)]
fn wide() -> bool {
    if BASELINE_ONLY.load(std::sync::atomic::Ordering::Relaxed) {
        return false;
    }
    #[cfg(target_arch = "x86_64")]
    {
        std::arch::is_x86_feature_detected!("avx2")
    }
    #[cfg(not(target_arch = "x86_64"))]
    {
        false
    }
}

// Each kernel exists twice: for the baseline target and, on x86-64, compiled
// with AVX2 enabled and chosen at run time. IEEE operations give the same bits
// at any vector width, so the choice never changes a result.
macro_rules! kernel {
    ($name:ident, $wide:ident, $tr:ident, ($($arg:ident),*)) => {
        pub fn $name<T: $tr>(d: &mut Lanes, $($arg: &Lanes),*) {
            #[cfg(target_arch = "x86_64")]
            if wide() {
                // SAFETY: AVX2 support was just checked.
                unsafe { $wide::<T>(d, $($arg),*) };
                return;
            }
            for i in 0..LANES {
                d[i] = T::f($($arg[i]),*);
            }
        }

        #[cfg(target_arch = "x86_64")]
        #[target_feature(enable = "avx2")]
        unsafe fn $wide<T: $tr>(d: &mut Lanes, $($arg: &Lanes),*) {
            for i in 0..LANES {
                d[i] = T::f($($arg[i]),*);
            }
        }
    };
}

kernel!(run1, run1_avx2, Op1, (a));
kernel!(run2, run2_avx2, Op2, (a, b));
kernel!(run3, run3_avx2, Op3, (a, b, c));
kernel!(run4, run4_avx2, Op4, (a, b, c, e));

/// The f16 version of a float operation: computed in f32, rounded to half.
pub struct H<T>(PhantomData<T>);
impl<T: Op1> Op1 for H<T> {
    #[inline(always)]
    fn f(a: u32) -> u32 {
        arith::round_f16(f32::from_bits(T::f(a))).to_bits()
    }
}
impl<T: Op2> Op2 for H<T> {
    #[inline(always)]
    fn f(a: u32, b: u32) -> u32 {
        arith::round_f16(f32::from_bits(T::f(a, b))).to_bits()
    }
}
impl<T: Op3> Op3 for H<T> {
    #[inline(always)]
    fn f(a: u32, b: u32, c: u32) -> u32 {
        arith::round_f16(f32::from_bits(T::f(a, b, c))).to_bits()
    }
}

macro_rules! op1 {
    ($($name:ident ($x:ident: $t:ty) -> $r:ty $body:block)*) => {$(
        pub struct $name;
        impl Op1 for $name {
            #[inline(always)]
            fn f(a: u32) -> u32 {
                let $x = <$t as Lane>::get(a);
                let r: $r = $body;
                Lane::put(r)
            }
        }
    )*};
}
macro_rules! op2 {
    ($($name:ident ($x:ident: $t:ty, $y:ident: $u:ty) -> $r:ty $body:block)*) => {$(
        pub struct $name;
        impl Op2 for $name {
            #[inline(always)]
            fn f(a: u32, b: u32) -> u32 {
                let $x = <$t as Lane>::get(a);
                let $y = <$u as Lane>::get(b);
                let r: $r = $body;
                Lane::put(r)
            }
        }
    )*};
}
macro_rules! op3 {
    ($($name:ident ($x:ident: $t:ty, $y:ident: $u:ty, $z:ident: $v:ty) -> $r:ty $body:block)*) => {$(
        pub struct $name;
        impl Op3 for $name {
            #[inline(always)]
            fn f(a: u32, b: u32, c: u32) -> u32 {
                let $x = <$t as Lane>::get(a);
                let $y = <$u as Lane>::get(b);
                let $z = <$v as Lane>::get(c);
                let r: $r = $body;
                Lane::put(r)
            }
        }
    )*};
}

// Float unary (f32; wrap in H<> for f16).
op1! {
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
    HDegrees(x: f32) -> f32 { arith::degrees_f16(x) }
    HRadians(x: f32) -> f32 { arith::radians_f16(x) }
    FQuantize16(x: f32) -> f32 { arith::quantize_to_f16(x) }
    FIsNan(x: f32) -> bool { x.is_nan() }
    FIsInf(x: f32) -> bool { x.is_infinite() }
    // conversions
    FToI(x: f32) -> i32 { arith::f_to_i32(x) }
    FToU(x: f32) -> u32 { arith::f_to_u32(x) }
    FToB(x: f32) -> bool { x != 0.0 }
    FToH(x: f32) -> f32 { arith::round_f16(x) }
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
}

op2! {
    FAdd(x: f32, y: f32) -> f32 { x + y }
    FSub(x: f32, y: f32) -> f32 { x - y }
    FMul(x: f32, y: f32) -> f32 { x * y }
    FDiv(x: f32, y: f32) -> f32 { x / y }
    FRem(x: f32, y: f32) -> f32 { arith::frem(x, y) }
    HRem(x: f32, y: f32) -> f32 { arith::frem_f16(x, y) }
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

op3! {
    FClamp(x: f32, lo: f32, hi: f32) -> f32 { arith::fclamp(x, lo, hi) }
    FMix(x: f32, y: f32, t: f32) -> f32 { arith::mix(x, y, t) }
    FSmooth(lo: f32, hi: f32, x: f32) -> f32 { arith::smoothstep(lo, hi, x) }
    // f16 formula built-ins: every step rounded to binary16 (see `arith`).
    HMix(x: f32, y: f32, t: f32) -> f32 { arith::mix_f16(x, y, t) }
    HSmooth(lo: f32, hi: f32, x: f32) -> f32 { arith::smoothstep_f16(lo, hi, x) }
    FFma(x: f32, y: f32, z: f32) -> f32 { libm::fmaf(x, y, z) }
    SClamp(x: i32, lo: i32, hi: i32) -> i32 { x.max(lo).min(hi) }
    UClamp(x: u32, lo: u32, hi: u32) -> u32 { x.max(lo).min(hi) }
    UExtract(x: u32, o: u32, c: u32) -> u32 { arith::extract_bits_u(x, o, c) }
    SExtract(x: i32, o: u32, c: u32) -> i32 { arith::extract_bits_i(x, o, c) }
    // select(f, t, cond): bit patterns, so it serves every type.
    Select(f: u32, t: u32, c: bool) -> u32 { if c { t } else { f } }
}

pub struct UInsert;
impl Op4 for UInsert {
    #[inline(always)]
    fn f(e: u32, n: u32, o: u32, c: u32) -> u32 {
        arith::insert_bits(e, n, o, c)
    }
}

/// fma for f16: the exact product of two halves fits in f32, and f64 holds the
/// sum exactly enough that one rounding to f16 follows.
pub struct HFma;
impl Op3 for HFma {
    #[inline(always)]
    fn f(a: u32, b: u32, c: u32) -> u32 {
        let v = f64::from(f32::from_bits(a)) * f64::from(f32::from_bits(b))
            + f64::from(f32::from_bits(c));
        half::f16::from_f64(v).to_f32().to_bits()
    }
}
