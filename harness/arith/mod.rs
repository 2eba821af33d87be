//! Scalar semantics of WGSL operations and built-ins, one function per rule.
//!
//! Every function here follows the W3C WGSL specification (section numbers of
//! the 2024+ Candidate Recommendation drafts are given where a rule is subtle).
//! Transcendental functions come from the pure-Rust `libm` crate so results are
//! bit-identical on every platform; the platform's own `f32::sin` etc. are never
//! used. f16 values are carried as the f32 holding the exact half value; every
//! f16 operation is computed in f32 and rounded with [`round_f16`], which is
//! correctly rounded for + - * / sqrt because f32 has at least 2·11+2 bits of
//! precision (double rounding is innocuous, Figueroa 1995).

use half::f16;

/// Round an f32 to the nearest f16 value (ties to even), returned as f32.
#[inline(always)]
pub fn round_f16(x: f32) -> f32 {
    f16::from_f32(x).to_f32()
}

/// The 16-bit pattern of an f16 value carried as f32.
#[inline(always)]
pub fn f16_bits(x: f32) -> u16 {
    f16::from_f32(x).to_bits()
}

/// The f32 carrying the f16 with bit pattern `b`.
#[inline(always)]
pub fn f16_from_bits(b: u16) -> f32 {
    f16::from_bits(b).to_f32()
}

// ---------------------------------------------------------------- floats

/// WGSL `min(e1, e2)`, literally as the spec defines it ("Numeric Built-in
/// Functions", min): `e2` if `e2 < e1`, else `e1`. A NaN `e1` therefore
/// propagates (and a NaN `e2` does not): NaN operands give an indeterminate
/// value on a GPU, and keeping the spec's formula lets a NaN that reaches a
/// `clamp` surface instead of being silently clamped away.
#[inline(always)]
pub fn fmin(a: f32, b: f32) -> f32 {
    if b < a {
        b
    } else {
        a
    }
}

/// WGSL `max(e1, e2)` = `e2` if `e1 < e2`, else `e1` (same section).
#[inline(always)]
pub fn fmax(a: f32, b: f32) -> f32 {
    if a < b {
        b
    } else {
        a
    }
}

/// WGSL `clamp(e, low, high)` for floats = `min(max(e, low), high)` (17.5).
/// Never panics, unlike `f32::clamp`.
#[inline(always)]
pub fn fclamp(e: f32, lo: f32, hi: f32) -> f32 {
    fmin(fmax(e, lo), hi)
}

#[inline(always)]
pub fn saturate(e: f32) -> f32 {
    fclamp(e, 0.0, 1.0)
}

/// WGSL `sign`: 1.0, -1.0 or 0.0 (zero keeps no sign; NaN maps to 0).
#[inline(always)]
pub fn fsign(e: f32) -> f32 {
    if e > 0.0 {
        1.0
    } else if e < 0.0 {
        -1.0
    } else {
        0.0
    }
}

/// WGSL `fract(e)` is defined as `e - floor(e)` (17.5), which differs from
/// `f32::fract` for negative inputs.
#[inline(always)]
pub fn fract(e: f32) -> f32 {
    e - libm::floorf(e)
}

/// WGSL `round`: to nearest, ties to even.
#[inline(always)]
pub fn round_even(e: f32) -> f32 {
    libm::rintf(e)
}

/// WGSL `step(edge, x)` = 1.0 if edge <= x, else 0.0.
#[inline(always)]
pub fn step(edge: f32, x: f32) -> f32 {
    if edge <= x {
        1.0
    } else {
        0.0
    }
}

/// WGSL `smoothstep(low, high, x)`: t = clamp((x - low) / (high - low), 0, 1);
/// t * t * (3.0 - 2.0 * t), evaluated in exactly that order.
#[inline(always)]
pub fn smoothstep(lo: f32, hi: f32, x: f32) -> f32 {
    let t = fclamp((x - lo) / (hi - lo), 0.0, 1.0);
    t * t * (3.0 - 2.0 * t)
}

/// WGSL `mix(e1, e2, e3)` = e1 * (1 - e3) + e2 * e3 (17.5, "mix"), with
/// the NaN of each step the one that step gives in this order
/// ([`nan_first`]): left to the compiler, which may swap the operands of `*`
/// and `+`, the evaluator's AVX2 and AVX-512 kernels returned different NaNs
/// where several operands were NaNs.
#[inline(always)]
pub fn mix(a: f32, b: f32, t: f32) -> f32 {
    let p = nan_first(a, a * (1.0 - t));
    let q = nan_first(b, b * t);
    nan_first(p, p + q)
}

/// `r`, the result of an operation whose first operand is `a`, with the NaN
/// that operation gives when `a` is a NaN: `a` quietened. On x86-64 an
/// arithmetic instruction returns its first NaN operand, quietened (the
/// architecture's NaN rule, stated here from memory and checked on each
/// machine by the tests in `eval/fuse.rs` and `eval/native.rs`); but the
/// compiler may swap the operands of `+` and `*` (the baseline's
/// two-operand SSE2 code did), which would change which NaN comes out when
/// both are NaNs, so the evaluator's kernels say it with this. Where `a` is
/// no NaN, either order gives the same bits.
#[inline(always)]
pub fn nan_first(a: f32, r: f32) -> f32 {
    if a.is_nan() {
        f32::from_bits(a.to_bits() | 0x0040_0000)
    } else {
        r
    }
}

/// WGSL `pow(e1, e2)`. The spec inherits its accuracy from
/// `exp2(e2 * log2(e1))` ("Floating Point Accuracy"), so a negative base has
/// no defined result: we return NaN there, as GPUs do, rather than IEEE's sign
/// rules for integral exponents. For finite positive bases the result is
/// computed in f64 and rounded once, which is within 1 ULP of the correctly
/// rounded value: small integral exponents (the `pow(x, 5.0)` of Schlick's
/// Fresnel) by repeated multiplication, others as `exp2(e2 · log2(e1))` with
/// libm's f64 functions. Zero, infinite and NaN operands take libm's `powf`
/// (IEEE 754 `pow` special cases).
#[inline]
pub fn pow(a: f32, b: f32) -> f32 {
    if a < 0.0 {
        return f32::NAN;
    }
    if !(a > 0.0 && a.is_finite() && b.is_finite()) {
        return libm::powf(a, b);
    }
    let x = f64::from(a);
    if b.abs() <= 32.0 && b == (b as i32) as f32 {
        let mut n = b.abs() as u32;
        let (mut base, mut acc) = (x, 1.0f64);
        while n > 0 {
            if n & 1 == 1 {
                acc *= base;
            }
            base *= base;
            n >>= 1;
        }
        return (if b < 0.0 { 1.0 / acc } else { acc }) as f32;
    }
    libm::exp2(f64::from(b) * libm::log2(x)) as f32
}

/// `inverseSqrt`: computed in f64 and rounded once, so it is correctly
/// rounded in practice (1 / sqrt in f32 rounds twice and can be 1 ULP off;
/// the spec allows 2 ULP).
#[inline(always)]
pub fn inverse_sqrt(e: f32) -> f32 {
    (1.0 / libm::sqrt(f64::from(e))) as f32
}

/// The constant of `degrees`: the spec inherits it from
/// `x * 57.295779513082322865` ("Floating Point Accuracy"), the literal
/// rounded to the working type. Note `180.0 / PI` in f32 is one ULP lower
/// (57.295776), which is why the literal is spelt out.
#[allow(clippy::excessive_precision)] // the spec's literal, digit for digit
pub const DEGREES_PER_RADIAN: f64 = 57.295_779_513_082_322_865;
/// The constant of `radians`: `x * 0.017453292519943295474` (same section).
#[allow(clippy::excessive_precision)] // the spec's literal, digit for digit
pub const RADIANS_PER_DEGREE: f64 = 0.017_453_292_519_943_295_474;

#[inline(always)]
pub fn degrees(e: f32) -> f32 {
    e * DEGREES_PER_RADIAN as f32
}

#[inline(always)]
pub fn radians(e: f32) -> f32 {
    e * RADIANS_PER_DEGREE as f32
}

// ---------------------------------------------------------------- f16 formulas
//
// The spec defines these built-ins by an expression evaluated in the working
// type ("Floating Point Accuracy": "inherited from"); for f16 every step of
// that expression is an f16 operation and rounds to binary16. Computing the
// whole expression in f32 and rounding once would be more accurate but is
// not what the formula gives (e.g. mix(0.8315h, 1.006h, 0.06555h)). Inputs
// are f16 values carried as f32; each `round_f16` below ends one f16
// operation (correctly rounded, see the module docs).

/// f16 `e1 % e2` = `e1 - e2 * trunc(e1 / e2)`, four f16 operations.
#[inline(always)]
pub fn frem_f16(a: f32, b: f32) -> f32 {
    let q = libm::truncf(round_f16(a / b));
    round_f16(a - round_f16(b * q))
}

/// f16 `mix(e1, e2, e3)` = `e1 * (1 - e3) + e2 * e3`, each step in f16.
#[inline(always)]
pub fn mix_f16(a: f32, b: f32, t: f32) -> f32 {
    round_f16(round_f16(a * round_f16(1.0 - t)) + round_f16(b * t))
}

/// f16 `smoothstep`: `t = clamp((x - lo) / (hi - lo), 0, 1)`, then
/// `t * t * (3 - 2 * t)`, each step in f16.
#[inline(always)]
pub fn smoothstep_f16(lo: f32, hi: f32, x: f32) -> f32 {
    let t = fclamp(round_f16(round_f16(x - lo) / round_f16(hi - lo)), 0.0, 1.0);
    round_f16(round_f16(t * t) * round_f16(3.0 - round_f16(2.0 * t)))
}

/// f16 `degrees`: `x * 57.295779513082322865` with the constant as f16
/// (57.28125) and one f16 multiplication.
#[inline(always)]
pub fn degrees_f16(e: f32) -> f32 {
    round_f16(e * f16::from_f64(DEGREES_PER_RADIAN).to_f32())
}

/// f16 `radians`: `x * 0.017453292519943295474`, the constant as f16.
#[inline(always)]
pub fn radians_f16(e: f32) -> f32 {
    round_f16(e * f16::from_f64(RADIANS_PER_DEGREE).to_f32())
}

/// WGSL floating-point remainder: `e1 - e2 * trunc(e1 / e2)` (8.7, "%" on floats).
#[inline(always)]
pub fn frem(a: f32, b: f32) -> f32 {
    a - b * libm::truncf(a / b)
}

/// `ldexp(e1, e2)` = e1 · 2^e2.
#[inline(always)]
pub fn ldexp(e: f32, exp: i32) -> f32 {
    libm::scalbnf(e, exp)
}

/// `frexp`: (fract, exp) with |fract| in [0.5, 1) and e = fract · 2^exp; zero
/// gives (0, 0).
#[inline(always)]
pub fn frexp(e: f32) -> (f32, i32) {
    libm::frexpf(e)
}

/// `modf`: (fract, whole) with the same sign as e.
#[inline(always)]
pub fn modf(e: f32) -> (f32, f32) {
    let whole = libm::truncf(e);
    (e - whole, whole)
}

/// `quantizeToF16` for an f32 value.
#[inline(always)]
pub fn quantize_to_f16(e: f32) -> f32 {
    round_f16(e)
}

// ---------------------------------------------------------------- conversions

/// f32/f16 to i32, saturating (section 15.7.6 "Conversion of floating point to
/// integer"): the bounds are the extreme f32 values representable in i32,
/// -2^31 and 2147483520 (see `naga::proc::min_max_float_representable_by`).
/// NaN converts to 0 (the spec leaves it indeterminate).
#[inline(always)]
pub fn f_to_i32(e: f32) -> i32 {
    if e.is_nan() {
        0
    } else {
        e.clamp(-2147483648.0, 2147483520.0) as i32
    }
}

/// f32/f16 to u32, saturating to [0, 4294967040].
#[inline(always)]
pub fn f_to_u32(e: f32) -> u32 {
    if e.is_nan() {
        0
    } else {
        e.clamp(0.0, 4294967040.0) as u32
    }
}

// ---------------------------------------------------------------- integers

/// i32 `/`: division by zero yields e1, and MIN / -1 yields MIN (8.7,
/// "Arithmetic Expressions", concrete integer division).
#[inline(always)]
pub fn idiv(a: i32, b: i32) -> i32 {
    if b == 0 {
        a
    } else {
        a.wrapping_div(b)
    }
}

/// i32 `%`: remainder by zero and MIN % -1 yield 0.
#[inline(always)]
pub fn irem(a: i32, b: i32) -> i32 {
    if b == 0 {
        0
    } else {
        a.wrapping_rem(b)
    }
}

#[inline(always)]
pub fn udiv(a: u32, b: u32) -> u32 {
    a.checked_div(b).unwrap_or(a)
}

#[inline(always)]
pub fn urem(a: u32, b: u32) -> u32 {
    if b == 0 {
        0
    } else {
        a % b
    }
}

/// `sign` on i32.
#[inline(always)]
pub fn isign(e: i32) -> i32 {
    e.signum()
}

/// `abs` on i32 wraps: abs(MIN) = MIN.
#[inline(always)]
pub fn iabs(e: i32) -> i32 {
    e.wrapping_abs()
}

/// `firstLeadingBit` on u32: index of the most significant 1 bit, or
/// 0xFFFFFFFF for zero.
#[inline(always)]
pub fn first_leading_bit_u(e: u32) -> u32 {
    if e == 0 {
        u32::MAX
    } else {
        31 - e.leading_zeros()
    }
}

/// `firstLeadingBit` on i32: for negative values the most significant 0 bit,
/// for positive the most significant 1 bit, -1 for 0 and -1.
#[inline(always)]
pub fn first_leading_bit_i(e: i32) -> i32 {
    let x = if e < 0 { !(e as u32) } else { e as u32 };
    if x == 0 {
        -1
    } else {
        (31 - x.leading_zeros()) as i32
    }
}

/// `firstTrailingBit`: index of the least significant 1 bit, all ones for zero.
#[inline(always)]
pub fn first_trailing_bit(e: u32) -> u32 {
    if e == 0 {
        u32::MAX
    } else {
        e.trailing_zeros()
    }
}

/// `extractBits(e, offset, count)` for u32 (17.7): o = min(offset, 32),
/// c = min(count, 32 - o); zero when c == 0.
#[inline(always)]
pub fn extract_bits_u(e: u32, offset: u32, count: u32) -> u32 {
    let o = offset.min(32);
    let c = count.min(32 - o);
    if c == 0 {
        0
    } else if c == 32 {
        e
    } else {
        (e >> o) & ((1u32 << c) - 1)
    }
}

/// `extractBits` for i32: the extracted field is sign-extended from bit c-1.
#[inline(always)]
pub fn extract_bits_i(e: i32, offset: u32, count: u32) -> i32 {
    let o = offset.min(32);
    let c = count.min(32 - o);
    if c == 0 {
        0
    } else if c == 32 {
        e
    } else {
        let field = ((e as u32) >> o) & ((1u32 << c) - 1);
        let shift = 32 - c;
        ((field << shift) as i32) >> shift
    }
}

/// `insertBits(e, newbits, offset, count)` (17.7).
#[inline(always)]
pub fn insert_bits(e: u32, newbits: u32, offset: u32, count: u32) -> u32 {
    let o = offset.min(32);
    let c = count.min(32 - o);
    if c == 0 {
        return e;
    }
    let mask = if c == 32 {
        u32::MAX
    } else {
        ((1u32 << c) - 1) << o
    };
    (e & !mask) | ((newbits << o) & mask)
}

// ---------------------------------------------------------------- packing

/// `pack4x8snorm`: each component is round(clamp(e, -1, 1) · 127) in 8 bits,
/// component 0 in the low byte (17.9).
pub fn pack4x8snorm(v: [f32; 4]) -> u32 {
    let mut r = 0u32;
    for (i, &e) in v.iter().enumerate() {
        let q = libm::floorf(0.5 + 127.0 * fclamp(e, -1.0, 1.0)) as i32;
        r |= ((q as u32) & 0xff) << (8 * i);
    }
    r
}

/// `pack4x8unorm`: round(clamp(e, 0, 1) · 255) per byte.
pub fn pack4x8unorm(v: [f32; 4]) -> u32 {
    let mut r = 0u32;
    for (i, &e) in v.iter().enumerate() {
        let q = libm::floorf(0.5 + 255.0 * fclamp(e, 0.0, 1.0)) as u32;
        r |= (q & 0xff) << (8 * i);
    }
    r
}

/// `pack2x16snorm`: round(clamp(e, -1, 1) · 32767) per half.
pub fn pack2x16snorm(v: [f32; 2]) -> u32 {
    let mut r = 0u32;
    for (i, &e) in v.iter().enumerate() {
        let q = libm::floorf(0.5 + 32767.0 * fclamp(e, -1.0, 1.0)) as i32;
        r |= ((q as u32) & 0xffff) << (16 * i);
    }
    r
}

/// `pack2x16unorm`: round(clamp(e, 0, 1) · 65535) per half.
pub fn pack2x16unorm(v: [f32; 2]) -> u32 {
    let mut r = 0u32;
    for (i, &e) in v.iter().enumerate() {
        let q = libm::floorf(0.5 + 65535.0 * fclamp(e, 0.0, 1.0)) as u32;
        r |= (q & 0xffff) << (16 * i);
    }
    r
}

/// `pack2x16float`: each component converted to f16 (round to nearest even).
pub fn pack2x16float(v: [f32; 2]) -> u32 {
    u32::from(f16_bits(v[0])) | (u32::from(f16_bits(v[1])) << 16)
}

/// `unpack4x8snorm`: max(q / 127, -1) per byte.
pub fn unpack4x8snorm(e: u32) -> [f32; 4] {
    std::array::from_fn(|i| fmax(f32::from((e >> (8 * i)) as u8 as i8) / 127.0, -1.0))
}

pub fn unpack4x8unorm(e: u32) -> [f32; 4] {
    std::array::from_fn(|i| f32::from((e >> (8 * i)) as u8) / 255.0)
}

pub fn unpack2x16snorm(e: u32) -> [f32; 2] {
    std::array::from_fn(|i| fmax(f32::from((e >> (16 * i)) as u16 as i16) / 32767.0, -1.0))
}

pub fn unpack2x16unorm(e: u32) -> [f32; 2] {
    std::array::from_fn(|i| f32::from((e >> (16 * i)) as u16) / 65535.0)
}

pub fn unpack2x16float(e: u32) -> [f32; 2] {
    [f16_from_bits(e as u16), f16_from_bits((e >> 16) as u16)]
}

/// `pack4xI8`: the low 8 bits of each i32 component.
pub fn pack4xi8(v: [i32; 4]) -> u32 {
    v.iter()
        .enumerate()
        .fold(0, |r, (i, &e)| r | (((e as u32) & 0xff) << (8 * i)))
}

pub fn pack4xu8(v: [u32; 4]) -> u32 {
    v.iter()
        .enumerate()
        .fold(0, |r, (i, &e)| r | ((e & 0xff) << (8 * i)))
}

/// `pack4xI8Clamp`: each component clamped to [-128, 127] first.
pub fn pack4xi8_clamp(v: [i32; 4]) -> u32 {
    pack4xi8(v.map(|e| e.clamp(-128, 127)))
}

pub fn pack4xu8_clamp(v: [u32; 4]) -> u32 {
    pack4xu8(v.map(|e| e.min(255)))
}

/// `unpack4xI8`: each byte sign-extended.
pub fn unpack4xi8(e: u32) -> [i32; 4] {
    std::array::from_fn(|i| i32::from((e >> (8 * i)) as u8 as i8))
}

pub fn unpack4xu8(e: u32) -> [u32; 4] {
    std::array::from_fn(|i| (e >> (8 * i)) & 0xff)
}

/// `dot4I8Packed`: dot product of the sign-extended bytes (wrapping i32).
pub fn dot4i8packed(a: u32, b: u32) -> i32 {
    let (x, y) = (unpack4xi8(a), unpack4xi8(b));
    (0..4).fold(0i32, |s, i| s.wrapping_add(x[i].wrapping_mul(y[i])))
}

pub fn dot4u8packed(a: u32, b: u32) -> u32 {
    let (x, y) = (unpack4xu8(a), unpack4xu8(b));
    (0..4).fold(0u32, |s, i| s.wrapping_add(x[i].wrapping_mul(y[i])))
}

/// Distance in units in the last place between two f32 values, counted along
/// the ordered bit patterns (+0 and -0 are 0 apart). NaN vs anything: u64::MAX.
pub fn ulp_distance_f32(a: f32, b: f32) -> u64 {
    if a.is_nan() || b.is_nan() {
        return if a.is_nan() && b.is_nan() {
            0
        } else {
            u64::MAX
        };
    }
    fn key(x: f32) -> i64 {
        let b = x.to_bits() as i32;
        i64::from(if b < 0 { i32::MIN - b } else { b })
    }
    key(a).abs_diff(key(b))
}

/// ULP distance between two f16 values (carried as f32).
pub fn ulp_distance_f16(a: f32, b: f32) -> u64 {
    if a.is_nan() || b.is_nan() {
        return if a.is_nan() && b.is_nan() {
            0
        } else {
            u64::MAX
        };
    }
    fn key(x: f32) -> i64 {
        let b = f16_bits(x) as i16;
        i64::from(if b < 0 {
            i16::MIN as i32 - b as i32
        } else {
            b as i32
        })
    }
    key(a).abs_diff(key(b))
}

#[cfg(test)]
mod tests {
    use super::*;

    // Values below follow the WGSL spec's definitions (sections named per fn).
    #[test]
    fn integer_division_special_cases_follow_the_spec() {
        assert_eq!(idiv(7, 0), 7);
        assert_eq!(idiv(i32::MIN, -1), i32::MIN);
        assert_eq!(irem(7, 0), 0);
        assert_eq!(irem(i32::MIN, -1), 0);
        assert_eq!(idiv(-7, 2), -3); // truncating division
        assert_eq!(irem(-7, 2), -1);
        assert_eq!(udiv(9, 0), 9);
        assert_eq!(urem(9, 0), 0);
    }

    #[test]
    fn float_to_int_saturates_at_spec_bounds() {
        assert_eq!(f_to_i32(3.0e9), 2147483520);
        assert_eq!(f_to_i32(-3.0e9), i32::MIN);
        assert_eq!(f_to_u32(-1.0), 0);
        assert_eq!(f_to_u32(5.0e9), 4294967040);
        assert_eq!(f_to_i32(-2.7), -2);
        assert_eq!(f_to_i32(f32::NAN), 0);
    }

    #[test]
    fn bit_field_rules() {
        assert_eq!(extract_bits_u(0xF0, 4, 4), 0xF);
        assert_eq!(extract_bits_i(0xF0, 4, 4), -1);
        assert_eq!(extract_bits_u(0xFFFF_FFFF, 40, 4), 0);
        assert_eq!(extract_bits_u(0x1234_5678, 0, 32), 0x1234_5678);
        assert_eq!(insert_bits(0, 0xF, 28, 8), 0xF000_0000);
        assert_eq!(first_leading_bit_i(-1), -1);
        assert_eq!(first_leading_bit_i(-2), 0);
        assert_eq!(first_leading_bit_u(0), u32::MAX);
        assert_eq!(first_leading_bit_u(1 << 20), 20);
    }

    #[test]
    fn fract_and_round_match_wgsl_not_rust_std() {
        assert_eq!(fract(-0.25), 0.75);
        assert_eq!(round_even(2.5), 2.0);
        assert_eq!(round_even(3.5), 4.0);
        assert_eq!(round_even(-0.5), -0.0);
        assert_eq!(fsign(-0.0), 0.0);
    }

    #[test]
    fn packing_roundtrips() {
        assert_eq!(pack4x8unorm([0.0, 1.0, 0.5, 2.0]), 0xFF80_FF00);
        assert_eq!(
            unpack4x8snorm(pack4x8snorm([-1.0, 1.0, 0.0, 0.5])),
            [-1.0, 1.0, 0.0, 64.0 / 127.0]
        );
        assert_eq!(unpack2x16float(pack2x16float([1.5, -2.0])), [1.5, -2.0]);
        assert_eq!(unpack4xi8(pack4xi8([-1, 2, -128, 127])), [-1, 2, -128, 127]);
        assert_eq!(
            dot4i8packed(pack4xi8([1, -2, 3, -4]), pack4xi8([5, 6, 7, 8])),
            5 - 12 + 21 - 32
        );
    }

    /// Reference: libm's `powf` (a port of a correctly rounded-in-practice
    /// implementation, < 1 ULP); our f64 route must stay within 1 ULP of it.
    #[test]
    fn pow_is_within_one_ulp_of_libm() {
        let mut worst = 0;
        for i in 1..20_000u32 {
            let x = i as f32 / 997.0;
            for y in [
                0.5f32, 1.0, 2.0, 2.2, 5.0, -1.0, -3.0, 16.0, 31.0, 0.4545, 100.0, 1e-3,
            ] {
                let d = ulp_distance_f32(pow(x, y), libm::powf(x, y));
                worst = worst.max(d);
            }
        }
        assert!(worst <= 1, "worst {worst} ULP");
        assert!(pow(-2.0, 2.0).is_nan());
        assert_eq!(pow(0.0, 2.0), 0.0);
        assert_eq!(pow(0.0, 0.0), 1.0);
        assert_eq!(pow(2.0, 0.0), 1.0);
        assert_eq!(pow(f32::INFINITY, 2.0), f32::INFINITY);
    }

    #[test]
    fn ulp_distance_counts_across_zero() {
        assert_eq!(ulp_distance_f32(0.0, -0.0), 0);
        assert_eq!(
            ulp_distance_f32(1.0, f32::from_bits(1.0f32.to_bits() + 3)),
            3
        );
        assert_eq!(ulp_distance_f32(f32::from_bits(1), -f32::from_bits(1)), 2);
        assert_eq!(ulp_distance_f16(1.0, 1.0 + 1.0 / 1024.0), 1);
    }
}
