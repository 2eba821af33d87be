//! The column encoding: how every part of the tool (the evaluator's API, goldens, the GPU
//! back end, the CSV point tables) holds one scalar leaf of one point. One `u32` per point
//! per leaf, holding the value's bit pattern: f32 bits, f16 as its 16-bit pattern in the
//! low half, i32 two's complement, u32 itself, bool 0 or 1. [`f64_to_bits`] and
//! [`bits_to_f64`] convert from and to f64.

use super::ScalarKind;

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
