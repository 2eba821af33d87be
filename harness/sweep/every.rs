//! Exhaustive domains: every value of a binary floating-point format (binary16 or
//! binary32, IEEE 754-2019 §3.4) in a closed range, in increasing order. Values are
//! numbered by their *ordinal*: 0 is zero, k > 0 the k-th value above it (the bit
//! pattern of its magnitude, since a format's finite magnitudes increase with their
//! bit patterns), −k its negative. So a range's size is a difference of ordinals,
//! known without listing it, and the k-th value is computed directly. Negative zero
//! is the same point as zero and is not listed twice.

use std::fmt;

/// The format a domain lists every value of.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    F16,
    F32,
}

impl Format {
    /// The ordinal of the largest finite value (its bit pattern).
    pub fn max_ordinal(self) -> i64 {
        match self {
            Format::F16 => 0x7bff,
            Format::F32 => 0x7f7f_ffff,
        }
    }

    /// The value with ordinal `k` (|k| at most [`Format::max_ordinal`]), exactly.
    pub fn value(self, k: i64) -> f64 {
        let m = k.unsigned_abs();
        let v = match self {
            Format::F16 => f16_magnitude(m as u16),
            Format::F32 => f64::from(f32::from_bits(m as u32)),
        };
        if k < 0 {
            -v
        } else {
            v
        }
    }

    /// The ordinals of the first and last value in [lo, hi], `None` when the range
    /// holds none. Bounds outside the format's finite range are clamped to it.
    pub fn span(self, lo: f64, hi: f64) -> Option<(i64, i64)> {
        let max = self.max_ordinal();
        // First ordinal whose value is >= lo; first whose value is > hi.
        let first = partition(-max, max + 1, |k| self.value(k) < lo);
        let end = partition(-max, max + 1, |k| self.value(k) <= hi);
        (first < end).then(|| (first, end - 1))
    }

    /// Number of values in [lo, hi].
    pub fn count(self, lo: f64, hi: f64) -> u64 {
        self.span(lo, hi).map_or(0, |(a, b)| (b - a + 1) as u64)
    }

    pub fn name(self) -> &'static str {
        match self {
            Format::F16 => "f16",
            Format::F32 => "f32",
        }
    }
}

impl fmt::Display for Format {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// The first `k` in [a, b) for which `below(k)` is false (`below` holds on a
/// prefix of the range), or `b`.
fn partition(mut a: i64, mut b: i64, below: impl Fn(i64) -> bool) -> i64 {
    while a < b {
        let mid = a + (b - a) / 2;
        if below(mid) {
            a = mid + 1;
        } else {
            b = mid;
        }
    }
    a
}

/// The binary16 magnitude with bit pattern `bits` (sign bit clear, finite):
/// subnormals are m · 2⁻²⁴, normals (1024 + m) · 2^(e − 25).
fn f16_magnitude(bits: u16) -> f64 {
    let e = i32::from(bits >> 10 & 0x1f);
    let m = f64::from(bits & 0x3ff);
    if e == 0 {
        m * 2f64.powi(-24)
    } else {
        (1024.0 + m) * 2f64.powi(e - 25)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn binary16_counts_and_values_match_the_format() {
        // IEEE 754 binary16: 2 × 31 × 1024 − 2048 = 61,440 nonzero finite values
        // besides the 2 × 1023 subnormals, i.e. 2 × 0x7bff nonzero values and zero.
        assert_eq!(
            Format::F16.count(f64::NEG_INFINITY, f64::INFINITY),
            2 * 0x7bff + 1
        );
        assert_eq!(Format::F16.value(0x7bff), 65504.0); // largest finite binary16
        assert_eq!(Format::F16.value(1), 2f64.powi(-24)); // smallest subnormal
        assert_eq!(Format::F16.value(0x3c00), 1.0);
        assert_eq!(Format::F16.value(-0x3c00), -1.0);
        // [0, 1]: zero, the 1023 subnormals, 14 binades of 1024 normals, and 1.0.
        assert_eq!(Format::F16.count(0.0, 1.0), 1 + 1023 + 14 * 1024 + 1);
        // Every value agrees with the `half` crate's conversion of its bits.
        for b in 0..=0x7bffu16 {
            assert_eq!(
                Format::F16.value(i64::from(b)),
                half::f16::from_bits(b).to_f64(),
                "{b:#x}"
            );
        }
    }

    #[test]
    fn binary32_ranges_are_counted_without_listing_them() {
        // [1, 2]: the 2^23 values of one binade and 2.0.
        assert_eq!(Format::F32.count(1.0, 2.0), (1 << 23) + 1);
        assert_eq!(Format::F32.value(0x3f80_0000), 1.0);
        // Bounds between two values: f32(0.1) = 0.100000001490116… lies above 0.1,
        // so [0.1, 0.1] holds no f32 value and [0.1, 1] starts at f32(0.1).
        assert_eq!(Format::F32.span(0.1, 0.1), None);
        let (a, _) = Format::F32.span(0.1, 1.0).unwrap();
        assert_eq!(a, i64::from(0.1f32.to_bits()));
        assert_eq!(Format::F32.count(-1.0, 1.0), 2 * 0x3f80_0000 + 1);
    }
}
