//! An exact sum of non-negative f64 values, so that a statistic built from a
//! sum (the RMS error) does not depend on the order the points were added in:
//! a check run whole, in chunks on several threads, or as shards merged
//! afterwards gives the same bits.
//!
//! Every finite f64 is an integer multiple of 2⁻¹⁰⁷⁴ (the smallest
//! subnormal), below 2¹⁰²⁴. The sum is kept as that integer, in 34 limbs of
//! 64 bits (2,176 bits: 2,098 for the range plus 78 bits of room for carries,
//! more than 2⁶⁴ additions can need), and rounded to the nearest f64 (ties to
//! even) only when read. Infinity and NaN are kept as flags beside it.

use serde::{Serialize, Serializer};

const LIMBS: usize = 34;

/// The exact sum of the non-negative values added to it.
#[derive(Clone, PartialEq, Eq, Debug)]
pub struct ExactSum {
    limbs: [u64; LIMBS],
    /// An infinite value was added.
    inf: bool,
    /// A NaN (or a negative value, which this sum does not take) was added.
    nan: bool,
}

impl Default for ExactSum {
    fn default() -> ExactSum {
        ExactSum {
            limbs: [0; LIMBS],
            inf: false,
            nan: false,
        }
    }
}

impl ExactSum {
    /// Add one value (`x ≥ 0`; a negative one makes the sum NaN).
    pub fn add(&mut self, x: f64) {
        match split(x) {
            Part::Nan => self.nan = true,
            Part::Inf => self.inf = true,
            Part::Finite(m, shift) => self.add_scaled(m, shift),
        }
    }

    /// Add `m · 2^shift · 2⁻¹⁰⁷⁴` (`shift` below 2047).
    fn add_scaled(&mut self, m: u64, shift: usize) {
        if m == 0 {
            return;
        }
        let wide = u128::from(m) << (shift % 64);
        self.add_at(shift / 64, wide as u64);
        self.add_at(shift / 64 + 1, (wide >> 64) as u64);
    }

    /// Add `v` at limb `k`, carrying upwards.
    fn add_at(&mut self, mut k: usize, mut v: u64) {
        while v != 0 {
            let (s, carry) = self.limbs[k].overflowing_add(v);
            self.limbs[k] = s;
            v = u64::from(carry);
            k += 1;
        }
    }

    /// Add another exact sum (a chunk's, a shard's).
    pub fn merge(&mut self, other: &ExactSum) {
        self.inf |= other.inf;
        self.nan |= other.nan;
        for k in 0..LIMBS {
            self.add_at(k, other.limbs[k]);
        }
    }

    fn bit(&self, i: usize) -> bool {
        (self.limbs[i / 64] >> (i % 64)) & 1 == 1
    }

    /// The sum rounded to the nearest f64 (ties to even): ∞ past the f64
    /// range or when an infinity was added, NaN when a NaN was.
    pub fn value(&self) -> f64 {
        if self.nan {
            return f64::NAN;
        }
        if self.inf {
            return f64::INFINITY;
        }
        let Some(top) = (0..LIMBS * 64).rev().find(|&i| self.bit(i)) else {
            return 0.0;
        };
        if top <= 52 {
            // Fits in the significand: an exact multiple of the smallest subnormal.
            return self.limbs[0] as f64 * f64::from_bits(1);
        }
        let lo = top - 52;
        let mut m: u64 = (0..53).fold(0, |acc, j| acc | (u64::from(self.bit(lo + j)) << j));
        let guard = self.bit(lo - 1);
        let sticky = (0..lo - 1).any(|i| self.bit(i));
        let mut e = lo as i64 - 1074; // value = m · 2^e
        if guard && (sticky || m & 1 == 1) {
            m += 1;
            if m == 1u64 << 53 {
                m >>= 1;
                e += 1;
            }
        }
        // m has 53 bits, so m · 2^e overflows when e + 52 > 1023.
        if e + 52 > 1023 {
            return f64::INFINITY;
        }
        m as f64 * pow2(e)
    }

    /// A lossless text form (`nan`, `inf`, or `limb:hex` pairs of the nonzero
    /// limbs, lowest first; empty for zero), for shard reports that are merged
    /// later.
    pub fn to_text(&self) -> String {
        if self.nan {
            return "nan".into();
        }
        if self.inf {
            return "inf".into();
        }
        self.limbs
            .iter()
            .enumerate()
            .filter(|(_, l)| **l != 0)
            .map(|(k, l)| format!("{k}:{l:x}"))
            .collect::<Vec<_>>()
            .join(",")
    }

    /// Read [`ExactSum::to_text`] back; `None` when it is not that form.
    pub fn from_text(s: &str) -> Option<ExactSum> {
        let mut e = ExactSum::default();
        match s {
            "nan" => e.nan = true,
            "inf" => e.inf = true,
            "" => {}
            _ => {
                for part in s.split(',') {
                    let (k, hex) = part.split_once(':')?;
                    let k: usize = k.parse().ok()?;
                    if k >= LIMBS || e.limbs[k] != 0 {
                        return None;
                    }
                    e.limbs[k] = u64::from_str_radix(hex, 16).ok()?;
                }
            }
        }
        Some(e)
    }
}

/// What an added value is to an exact sum.
enum Part {
    /// NaN, or a negative value (which the sum does not take).
    Nan,
    Inf,
    /// `x = m · 2^shift · 2⁻¹⁰⁷⁴`, `m` below 2⁵³ and `shift` below 2046.
    Finite(u64, usize),
}

#[inline(always)]
fn split(x: f64) -> Part {
    if x.is_nan() || x < 0.0 {
        return Part::Nan;
    }
    if x.is_infinite() {
        return Part::Inf;
    }
    let bits = x.to_bits();
    let exp = (bits >> 52) & 0x7ff;
    let frac = bits & ((1u64 << 52) - 1);
    if exp == 0 {
        Part::Finite(frac, 0)
    } else {
        Part::Finite(frac | (1u64 << 52), exp as usize - 1)
    }
}

/// Values on their way into an [`ExactSum`], cheaper to add one at a time:
/// the significands of values with the same exponent are summed in one
/// 64-bit integer per exponent, which holds the sum of 2¹¹ significands
/// (each below 2⁵³) without overflow, and every `BIN_ADDS` additions (and
/// in [`Bins::flush`]) the bins are added to the sum's limbs. Exact, like
/// the sum itself: what reaches the limbs is the same integer.
pub struct Bins {
    bins: Box<[u64; 2046]>,
    /// The exponents whose bin is not 0.
    touched: Vec<u16>,
    adds: usize,
    inf: bool,
    nan: bool,
}

/// Additions between two flushes of [`Bins`]: each bin then holds at most
/// this many significands below 2⁵³, a sum below 2⁶⁴.
const BIN_ADDS: usize = 1 << 11;

impl Default for Bins {
    fn default() -> Bins {
        Bins {
            bins: Box::new([0; 2046]),
            touched: Vec::new(),
            adds: 0,
            inf: false,
            nan: false,
        }
    }
}

impl Bins {
    /// Add one value (`x ≥ 0`; a negative one makes the sum NaN), as
    /// [`ExactSum::add`] does; `into` receives the bins when they are full.
    #[inline]
    pub fn add(&mut self, x: f64, into: &mut ExactSum) {
        let (m, shift) = match split(x) {
            Part::Nan => {
                self.nan = true;
                return;
            }
            Part::Inf => {
                self.inf = true;
                return;
            }
            Part::Finite(m, shift) => (m, shift),
        };
        let bin = &mut self.bins[shift];
        if *bin == 0 {
            if m == 0 {
                return;
            }
            self.touched.push(shift as u16);
        }
        *bin += m;
        self.adds += 1;
        if self.adds == BIN_ADDS {
            self.flush(into);
        }
    }

    /// Add everything held to `into` and empty the bins.
    pub fn flush(&mut self, into: &mut ExactSum) {
        into.inf |= std::mem::take(&mut self.inf);
        into.nan |= std::mem::take(&mut self.nan);
        for shift in self.touched.drain(..) {
            let m = std::mem::take(&mut self.bins[usize::from(shift)]);
            into.add_scaled(m, usize::from(shift));
        }
        self.adds = 0;
    }
}

/// 2^e for -1074 ≤ e ≤ 1023, exactly.
fn pow2(e: i64) -> f64 {
    if e >= -1022 {
        f64::from_bits(((e + 1023) as u64) << 52)
    } else {
        f64::from_bits(1u64 << (e + 1074))
    }
}

impl Serialize for ExactSum {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(&self.to_text())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sweep::Rng;

    fn sum_of(xs: &[f64]) -> f64 {
        let mut s = ExactSum::default();
        for &x in xs {
            s.add(x);
        }
        s.value()
    }

    #[test]
    fn small_integers_and_halves_are_exact() {
        assert_eq!(sum_of(&[]), 0.0);
        assert_eq!(sum_of(&[1.0, 2.0, 3.5]), 6.5);
        assert_eq!(sum_of(&[f64::from_bits(1); 3]), f64::from_bits(3));
        assert_eq!(sum_of(&[f64::MAX, f64::MAX]), f64::INFINITY);
        assert_eq!(sum_of(&[f64::MAX]), f64::MAX);
        assert!(sum_of(&[1.0, f64::NAN]).is_nan());
        assert_eq!(sum_of(&[1.0, f64::INFINITY]), f64::INFINITY);
    }

    #[test]
    fn rounds_to_nearest_even_where_naive_summation_loses_the_small_terms() {
        // 1 + 2⁻⁵³ is a tie between 1 and 1 + 2⁻⁵²: ties to even give 1.
        let h = 2f64.powi(-53);
        assert_eq!(sum_of(&[1.0, h]), 1.0);
        // Two of them are exactly 2⁻⁵²: the sum is the next f64 after 1,
        // which adding one at a time (1 + h + h = 1) misses.
        assert_eq!(1.0 + h + h, 1.0);
        assert_eq!(sum_of(&[1.0, h, h]), 1.0 + f64::EPSILON);
        // Just over the tie rounds up.
        assert_eq!(sum_of(&[1.0, h, 2f64.powi(-100)]), 1.0 + f64::EPSILON);
        // 1 + 3·2⁻⁵³ = 1 + 1.5 ulp: a tie between 1 + ulp (odd) and 1 + 2 ulp
        // (even): rounds to the even one.
        assert_eq!(sum_of(&[1.0, h, h, h]), 1.0 + 2.0 * f64::EPSILON);
    }

    #[test]
    fn order_and_grouping_do_not_change_the_bits() {
        // Squares of errors spanning 40 orders of magnitude, as a check's RMS
        // sees them; any order, any split into parts merged, same value.
        let mut rng = Rng::new(5);
        let xs: Vec<f64> = (0..10_000)
            .map(|_| {
                let m = rng.unit();
                m * m * 10f64.powi((rng.next() % 40) as i32 - 30)
            })
            .collect();
        let whole = sum_of(&xs);
        let mut rev = xs.clone();
        rev.reverse();
        assert_eq!(sum_of(&rev).to_bits(), whole.to_bits());
        let mut merged = ExactSum::default();
        for part in xs.chunks(777) {
            let mut p = ExactSum::default();
            for &x in part {
                p.add(x);
            }
            let back = ExactSum::from_text(&p.to_text()).expect("round trip");
            assert_eq!(back, p);
            merged.merge(&back);
        }
        assert_eq!(merged.value().to_bits(), whole.to_bits());
        // Against an independent exact sum: integers below 2⁵² times 2⁻⁴⁰,
        // summed exactly in i128 and rounded once (the Rust reference: an
        // integer-to-float `as` cast rounds to nearest, ties to even).
        let ints: Vec<i64> = (0..1000).map(|_| (rng.next() >> 12) as i64).collect();
        let exact: i128 = ints.iter().map(|&i| i128::from(i)).sum();
        let xs: Vec<f64> = ints.iter().map(|&i| i as f64 * 2f64.powi(-40)).collect();
        assert_eq!(sum_of(&xs), exact as f64 * 2f64.powi(-40));
    }

    #[test]
    fn bins_give_the_sum_of_adding_one_at_a_time() {
        // More values than one flush holds, piled on a few exponents (each
        // bin near its limit: significands of all ones), spread over the
        // whole range, and the specials; the limbs must be the same.
        let mut rng = Rng::new(9);
        let mut xs: Vec<f64> = (0..3 * BIN_ADDS + 17)
            .map(|i| match i % 5 {
                0 => f64::from_bits(0x3fef_ffff_ffff_ffff), // just under 1
                1 => f64::from_bits(rng.next() >> 1 & !(0x7ffu64 << 52) | 1), // subnormal
                2 => f64::from_bits((rng.next() >> 1) % 0x7fe0_0000_0000_0000),
                3 => 0.0,
                _ => f64::MAX,
            })
            .collect();
        let one_at_a_time = |xs: &[f64]| {
            let mut s = ExactSum::default();
            xs.iter().for_each(|&x| s.add(x));
            s
        };
        let binned = |xs: &[f64]| {
            let (mut s, mut b) = (ExactSum::default(), Bins::default());
            xs.iter().for_each(|&x| b.add(x, &mut s));
            b.flush(&mut s);
            s
        };
        assert_eq!(binned(&xs), one_at_a_time(&xs));
        assert_eq!(binned(&xs[..BIN_ADDS]), one_at_a_time(&xs[..BIN_ADDS]));
        // One bin filled to its limit: 2¹¹ significands of all ones.
        let full = vec![f64::MAX; BIN_ADDS + 1];
        assert_eq!(binned(&full), one_at_a_time(&full));
        for special in [f64::INFINITY, f64::NAN, -1.0] {
            xs[100] = special;
            assert_eq!(binned(&xs), one_at_a_time(&xs), "{special}");
        }
    }

    #[test]
    fn text_form_refuses_garbage() {
        for bad in ["x", "1", "1:zz", "99:1", "0:1,0:2"] {
            assert!(ExactSum::from_text(bad).is_none(), "{bad}");
        }
        assert_eq!(ExactSum::from_text("").unwrap().value(), 0.0);
        assert!(ExactSum::from_text("nan").unwrap().value().is_nan());
    }
}
