//! The spec-bound number model: every floating-point operation whose WGSL
//! accuracy is not "correctly rounded" has its result moved, deterministically
//! and pseudo-randomly per point, anywhere within the error the WGSL spec
//! allows for it (W3C WGSL, "Floating Point Accuracy"). A check that passes
//! under this model passes on any conforming GPU as far as those operations go;
//! the exact model shows what a correctly rounded device computes.
//!
//! The bounds used, per operation (f32; f16 where it differs):
//! - `x / y`: 2.5 ULP → results move up to 2 ULP from the correctly rounded
//!   value (which is itself within 0.5 ULP of the exact quotient).
//! - `exp`, `exp2`: 3 + 2·|x| ULP (f16: 1 + 2·|x|); |x| is recovered from the
//!   result as |ln r| or |log2 r|.
//! - `pow(x, y)`: inherited from `exp2(y · log2(x))`; we use the exp2 bound at
//!   `y · log2(x) = log2(r)`, which ignores the log2 error the spec would add
//!   on top (so this model is, if anything, milder than the spec).
//! - `log`, `log2`: absolute 2^-21 on [0.5, 2] (f16: 2^-7), 3 ULP outside.
//! - `sin`, `cos`: absolute 2^-11 on [-π, π] (f16: 2^-7); outside that range
//!   the spec gives no bound and the result is left exact.
//! - `inverseSqrt`: 2 ULP; `sqrt` (inherited from `1 / inverseSqrt`): 4.5 ULP
//!   (2 ULP, then a 2.5 ULP division).
//! - `atan`, `atan2`: 4096 ULP (f16: 5 ULP).
//! - `acos`, `asin`: absolute 6.77e-5 / 6.81e-5 (f16: 3.91e-3); `tanh`
//!   absolute 1.0e-5.
//! - everything else (+ - * and the correctly rounded built-ins; `tan`,
//!   hyperbolics and the other inherited bounds) stays exact.
//!
//! A move by k ULP from a correctly rounded result r stays within k + 0.5 ULP
//! of the exact value, so a bound of B ULP allows |k| ≤ ⌊B − 0.5⌋.

use naga::MathFunction as MF;

use super::ir::Slot;

/// Which bound an operation's result may move within.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Bound {
    /// A fixed number of ULP.
    Ulp(f32),
    /// `base + 2·|x|` ULP with |x| = |ln r| (`exp`) or |log2 r| (`exp2`, `pow`).
    ExpLike { base: f32, log2: bool },
    /// Absolute error `abs` while the argument lies in `lo..=hi`; `outside` ULP
    /// (or exact, when `None`) elsewhere.
    AbsInRange {
        abs: f32,
        lo: f32,
        hi: f32,
        outside: Option<f32>,
    },
    /// Absolute error `abs` everywhere.
    Abs(f32),
}

/// The spec's accuracy bound of a float built-in, for the spec-bound number
/// model (the table and its sources are in this module's documentation); `None` when the
/// built-in is correctly rounded or its bound is only inherited.
pub(crate) fn spec_bound(fun: MF, f16: bool) -> Option<Bound> {
    use std::f32::consts::PI;
    Some(match fun {
        MF::Exp => Bound::ExpLike {
            base: if f16 { 1.0 } else { 3.0 },
            log2: false,
        },
        MF::Exp2 | MF::Pow => Bound::ExpLike {
            base: if f16 { 1.0 } else { 3.0 },
            log2: true,
        },
        MF::Log | MF::Log2 => Bound::AbsInRange {
            abs: if f16 { 2f32.powi(-7) } else { 2f32.powi(-21) },
            lo: 0.5,
            hi: 2.0,
            outside: Some(3.0),
        },
        MF::Sin | MF::Cos => Bound::AbsInRange {
            abs: if f16 { 2f32.powi(-7) } else { 2f32.powi(-11) },
            lo: -PI,
            hi: PI,
            outside: None,
        },
        MF::InverseSqrt => Bound::Ulp(2.0),
        // Inherited from 1.0 / inverseSqrt(x): 2 ULP, then a 2.5 ULP division,
        // about 4.5 ULP of the result (more at the bottom of a binade; the
        // model stays on the mild side).
        MF::Sqrt => Bound::Ulp(4.5),
        MF::Atan | MF::Atan2 => Bound::Ulp(if f16 { 5.0 } else { 4096.0 }),
        MF::Acos => Bound::Abs(if f16 { 3.91e-3 } else { 6.77e-5 }),
        MF::Asin => Bound::Abs(if f16 { 3.91e-3 } else { 6.81e-5 }),
        MF::Tanh => Bound::Abs(1.0e-5),
        _ => return None,
    })
}

/// One perturbation: applied in place to `dst` right after the kernel that
/// wrote it (destinations are fresh, so nothing has read it yet).
#[derive(Clone, Copy, Debug)]
pub struct Perturb {
    pub dst: Slot,
    /// The operation's (first) argument, for range-dependent bounds.
    pub arg: Slot,
    pub bound: Bound,
    pub half: bool,
    /// Distinguishes operation sites so they move independently.
    pub site: u32,
}

/// SplitMix64 finaliser: a well-mixed hash of the point, site and seed.
fn mix(mut z: u64) -> u64 {
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

/// The smaller of the two gaps around `r` (f32, or f16 when `half`): a
/// conservative ULP where `r` sits on a power of two.
fn ulp(r: f32, half: bool) -> f64 {
    let x = f64::from(r);
    let up = (f64::from(step(r, 1, half)) - x).abs();
    let down = (x - f64::from(step(r, -1, half))).abs();
    up.min(down)
}

/// Move `r` by `k` representable steps (f32 or f16), across zero if needed.
pub fn step(r: f32, k: i64, half: bool) -> f32 {
    if half {
        let b = half::f16::from_f32(r).to_bits() as i16;
        let key = if b < 0 {
            i16::MIN as i64 - b as i64
        } else {
            b as i64
        } + k;
        let key = key.clamp(-0x7bff, 0x7bff); // stay finite
        let bits = if key < 0 {
            (i16::MIN as i64 - key) as u16
        } else {
            key as u16
        };
        half::f16::from_bits(bits).to_f32()
    } else {
        let b = r.to_bits() as i32;
        let key = if b < 0 {
            i32::MIN as i64 - b as i64
        } else {
            b as i64
        } + k;
        let key = key.clamp(-0x7f7f_ffff, 0x7f7f_ffff);
        let bits = if key < 0 {
            (i32::MIN as i64 - key) as u32
        } else {
            key as u32
        };
        f32::from_bits(bits)
    }
}

/// How far (absolutely) result `r` of argument `x` may move. The base result
/// is within 1 ULP of the exact value (correctly rounded operations, libm's
/// functions), so 1 ULP of each bound is kept in reserve.
pub fn allowed(bound: Bound, r: f32, x: f32, half: bool) -> f64 {
    let u = ulp(r, half);
    let ulps = |b: f32| (f64::from(b) - 1.0).max(0.0) * u;
    let abs = |a: f32| (f64::from(a) - u).max(0.0);
    match bound {
        Bound::Ulp(b) => ulps(b),
        Bound::ExpLike { base, log2 } => {
            let m = if log2 { r.abs().log2() } else { r.abs().ln() }.abs();
            if m.is_finite() {
                ulps(base + 2.0 * m)
            } else {
                0.0
            }
        }
        Bound::AbsInRange {
            abs: a,
            lo,
            hi,
            outside,
        } => {
            if (lo..=hi).contains(&x) {
                abs(a)
            } else {
                outside.map_or(0.0, ulps)
            }
        }
        Bound::Abs(a) => abs(a),
    }
}

/// Largest move in representable steps for result `r` of argument `x`
/// (used by the tests of the bound table).
#[cfg(test)]
pub fn max_steps(bound: Bound, r: f32, x: f32, half: bool) -> i64 {
    (allowed(bound, r, x, half) / ulp(r, half))
        .floor()
        .clamp(0.0, 1e9) as i64
}

impl Perturb {
    /// Apply to one batch: `d` is the destination column, `a` the argument's.
    pub fn apply(&self, d: &mut [u32], a: &[u32], seed: u64) {
        for (lane, r_bits) in d.iter_mut().enumerate() {
            let r = f32::from_bits(*r_bits);
            if !r.is_finite() {
                continue;
            }
            let x = f32::from_bits(a[lane]);
            let limit = allowed(self.bound, r, x, self.half);
            let m = (limit / ulp(r, self.half)).floor().clamp(0.0, 1e9) as i64;
            if m == 0 {
                continue;
            }
            let h = mix(seed
                ^ (u64::from(self.site) << 40)
                ^ (u64::from(a[lane]) << 8)
                ^ u64::from(*r_bits));
            let mut k = (h % (2 * m as u64 + 1)) as i64 - m;
            // Steps grow past a power of two: shrink until within the limit.
            let mut moved = step(r, k, self.half);
            while k != 0 && (f64::from(moved) - f64::from(r)).abs() > limit {
                k /= 2;
                moved = step(r, k, self.half);
            }
            *r_bits = moved.to_bits();
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn steps_walk_representable_values_across_zero() {
        assert_eq!(step(1.0, 1, false), f32::from_bits(1.0f32.to_bits() + 1));
        assert_eq!(step(0.0, -1, false), -f32::from_bits(1));
        assert_eq!(step(-f32::from_bits(1), 2, false), f32::from_bits(1));
        assert_eq!(step(1.0, 1, true), 1.0 + 1.0 / 1024.0);
        assert_eq!(step(f32::MAX, 5, false), f32::MAX);
    }

    #[test]
    fn bounds_follow_the_spec_table() {
        // 2.5 ULP division → 1.5 ULP of room → 1 step; exp at x = 10 →
        // 3 + 20 = 23 ULP → 22 ULP of room (1 kept for libm's own error).
        assert_eq!(max_steps(Bound::Ulp(2.5), 1.5, 0.0, false), 1);
        let e10 = 10f32.exp();
        assert_eq!(
            max_steps(
                Bound::ExpLike {
                    base: 3.0,
                    log2: false
                },
                e10,
                10.0,
                false
            ),
            22
        );
        // sin: 2^-11 absolute near 0.75 is 2^-11 / 2^-24 = 8192 ULP, less the
        // reserved one; outside [-π, π] exact.
        let sin = Bound::AbsInRange {
            abs: 2f32.powi(-11),
            lo: -std::f32::consts::PI,
            hi: std::f32::consts::PI,
            outside: None,
        };
        assert_eq!(max_steps(sin, 0.75, 1.0, false), 8191);
        assert_eq!(max_steps(sin, 0.75, 10.0, false), 0);
    }
}
