//! The column encoding: how every part of the tool (the evaluator's API, goldens, the GPU
//! back end, the CSV point tables) holds one scalar leaf of one point. One `u32` per point
//! per leaf, holding the value's bit pattern: f32 bits, f16 as its 16-bit pattern in the
//! low half, i32 two's complement, u32 itself, bool 0 or 1. [`f64_to_bits`] and
//! [`bits_to_f64`] convert from and to f64.

use super::ScalarKind;
use crate::widths::{at_widths, Runs};

/// Encode an f64 as the lane bit pattern of `kind`, rounding to nearest.
/// Integers saturate; bool is `v != 0`.
pub fn f64_to_bits(kind: ScalarKind, v: f64) -> u32 {
    match kind {
        ScalarKind::F32 => (v as f32).to_bits(),
        ScalarKind::F16 => u32::from(half::f16::from_f64(v).to_bits()),
        ScalarKind::I32 => (v as i32) as u32,
        ScalarKind::U32 => v as u32,
        ScalarKind::Bool => u32::from(v != 0.0),
    }
}

/// Append [`f64_to_bits`] of every value of `src` to `dst`, with the kind
/// chosen once for the column (so the f32 loop is vector instructions, of
/// the widest set this machine runs).
pub fn extend_bits(kind: ScalarKind, src: &[f64], dst: &mut Vec<u32>) {
    match kind {
        ScalarKind::F32 => f32_bits(Runs::best(), src, dst),
        _ => dst.extend(src.iter().map(|&v| f64_to_bits(kind, v))),
    }
}

/// Append [`bits_to_f64`] of every pattern of `src` to `dst`, with the kind
/// chosen once for the column.
pub fn extend_f64(kind: ScalarKind, src: &[u32], dst: &mut Vec<f64>) {
    match kind {
        ScalarKind::F32 => f32_values(Runs::best(), src, dst),
        _ => dst.extend(src.iter().map(|&b| bits_to_f64(kind, b))),
    }
}

at_widths! {
    /// [`f64_to_bits`] to f32 of every value of `src`, appended to `dst`, at `at`: the
    /// same IEEE conversion at any width, so the same bits (tested).
    fn f32_bits(at: Runs, src: &[f64], dst: &mut Vec<u32>) {
        dst.extend(src.iter().map(|&v| f64_to_bits(ScalarKind::F32, v)));
    }
}

at_widths! {
    /// [`bits_to_f64`] of every f32 pattern of `src`, appended to `dst`, at `at`.
    fn f32_values(at: Runs, src: &[u32], dst: &mut Vec<f64>) {
        dst.extend(src.iter().map(|&b| bits_to_f64(ScalarKind::F32, b)));
    }
}

/// Decode a lane bit pattern of `kind` as f64 (exactly).
pub fn bits_to_f64(kind: ScalarKind, bits: u32) -> f64 {
    match kind {
        ScalarKind::F32 => f64::from(f32::from_bits(bits)),
        ScalarKind::F16 => half::f16::from_bits(bits as u16).to_f64(),
        ScalarKind::I32 => f64::from(bits as i32),
        ScalarKind::U32 => f64::from(bits),
        ScalarKind::Bool => f64::from(u8::from(bits != 0)),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn column_conversions_are_the_per_value_ones() {
        // Specials, rounding cases, out-of-range integers and every kind:
        // the column forms must give each value's own conversion, bit for bit.
        let values = [
            0.0,
            -0.0,
            1.0,
            -1.5,
            0.1,
            1.0 + f64::EPSILON,
            f64::from(f32::MAX) * 2.0,
            f64::MIN_POSITIVE,
            65504.0,
            65520.0,
            3e9,
            -3e9,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::NAN,
            -f64::NAN,
        ];
        let kinds = [
            ScalarKind::F32,
            ScalarKind::F16,
            ScalarKind::I32,
            ScalarKind::U32,
            ScalarKind::Bool,
        ];
        // Enough values for the vector loops' bodies and a ragged end.
        let values: Vec<f64> = values.iter().copied().cycle().take(16 * 7 + 3).collect();
        for k in kinds {
            let mut bits = vec![7];
            extend_bits(k, &values, &mut bits);
            let one: Vec<u32> = values.iter().map(|&v| f64_to_bits(k, v)).collect();
            assert_eq!(bits[1..], one[..], "{k:?}");
            let mut back = vec![7.0];
            extend_f64(k, &bits[1..], &mut back);
            let one: Vec<u64> = bits[1..]
                .iter()
                .map(|&b| bits_to_f64(k, b).to_bits())
                .collect();
            let got: Vec<u64> = back[1..].iter().map(|x| x.to_bits()).collect();
            assert_eq!(got, one, "{k:?}");
        }
        // The f32 loops at every width this machine runs.
        let bits: Vec<u32> = values
            .iter()
            .map(|&v| f64_to_bits(ScalarKind::F32, v))
            .collect();
        let back: Vec<u64> = bits
            .iter()
            .map(|&b| bits_to_f64(ScalarKind::F32, b).to_bits())
            .collect();
        for w in Runs::all() {
            let mut b = Vec::new();
            f32_bits(w, &values, &mut b);
            assert_eq!(b, bits, "{w:?}");
            let mut x = Vec::new();
            f32_values(w, &bits, &mut x);
            assert_eq!(
                x.iter().map(|x| x.to_bits()).collect::<Vec<_>>(),
                back,
                "{w:?}"
            );
        }
    }
}
