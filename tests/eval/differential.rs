//! Differential property tests: every basic operator, bit built-in and
//! conversion of WGSL, as a one-line WGSL function, is evaluated over random
//! batches of inputs and compared bit for bit with plain Rust written here
//! from the definitions in the W3C WGSL specification (editor's draft;
//! sections named beside each reference) and IEEE 754. Rust's `f32` `+ - * /`,
//! `sqrt`, `mul_add`, `floor`, `ceil`, `trunc` and `round_ties_even` are the
//! correctly rounded IEEE 754 binary32 operations, and `as` from integers to
//! f32 rounds to nearest even, so they serve as the exact reference.
//!
//! The inputs mix arbitrary bit patterns (so NaNs, infinities and subnormals
//! appear as often as they do among all f32 values) with edge values: the
//! conversion bounds, signed zeros, the smallest subnormal, integer extremes
//! and small shift counts. A reference answers `None` where the spec leaves
//! the result indeterminate (e.g. float -> int of NaN); those lanes are not
//! compared. NaN results match any NaN (payloads are not specified).
//!
//! The second half checks batch behaviour: a point's result and issues must
//! not depend on which other points share its batch, on batch or chunk
//! boundaries, or on `eval` (parallel) versus `eval_serial`.
//!
//! tests/eval/exprtree.rs composes operators into random expression trees;
//! this file covers each operator alone over a wider input distribution.

use std::collections::BTreeMap;
use std::sync::OnceLock;

use proptest::prelude::*;
use shadegate::eval::{LaneIssue, Program};
use shadegate::wgsl::Shader;

// ------------------------------------------------------------------ cases

/// Leaf kinds of a case's inputs.
#[derive(Clone, Copy, Debug)]
enum In {
    F,
    I,
    U,
    B,
}

type Reference = fn(&[u32]) -> Vec<Option<u32>>;

struct Case {
    name: &'static str,
    /// WGSL parameter list, result type and returned expression.
    params: &'static str,
    result: &'static str,
    expr: &'static str,
    ins: &'static [In],
    reference: Reference,
}

impl Case {
    fn wgsl(&self) -> String {
        format!(
            "fn {}({}) -> {} {{ return {}; }}",
            self.name, self.params, self.result, self.expr
        )
    }
}

fn f(b: u32) -> f32 {
    f32::from_bits(b)
}
fn fo(x: f32) -> Vec<Option<u32>> {
    vec![Some(x.to_bits())]
}
fn io(x: i32) -> Vec<Option<u32>> {
    vec![Some(x as u32)]
}
fn uo(x: u32) -> Vec<Option<u32>> {
    vec![Some(x)]
}
fn bo(x: bool) -> Vec<Option<u32>> {
    vec![Some(u32::from(x))]
}

/// "#min-float-builtin": e2 if e2 < e1, else e1.
fn wmin(a: f32, b: f32) -> f32 {
    if b < a {
        b
    } else {
        a
    }
}
/// "#max-float-builtin": e2 if e1 < e2, else e1.
fn wmax(a: f32, b: f32) -> f32 {
    if a < b {
        b
    } else {
        a
    }
}

const FF: &[In] = &[In::F, In::F];
const F1: &[In] = &[In::F];
const F3: &[In] = &[In::F, In::F, In::F];
const II: &[In] = &[In::I, In::I];
const I1: &[In] = &[In::I];
const UU: &[In] = &[In::U, In::U];
const U1: &[In] = &[In::U];
const IU: &[In] = &[In::I, In::U];

macro_rules! case {
    ($name:literal, $params:literal, $result:literal, $expr:literal, $ins:expr, $r:expr) => {
        Case {
            name: $name,
            params: $params,
            result: $result,
            expr: $expr,
            ins: $ins,
            reference: $r,
        }
    };
}

fn float_cases() -> Vec<Case> {
    vec![
        case!("f_add", "a: f32, b: f32", "f32", "a + b", FF, |x| fo(f(
            x[0]
        ) + f(
            x[1]
        ))),
        case!("f_sub", "a: f32, b: f32", "f32", "a - b", FF, |x| fo(f(
            x[0]
        ) - f(
            x[1]
        ))),
        case!("f_mul", "a: f32, b: f32", "f32", "a * b", FF, |x| fo(f(
            x[0]
        ) * f(
            x[1]
        ))),
        case!("f_div", "a: f32, b: f32", "f32", "a / b", FF, |x| fo(f(
            x[0]
        ) / f(
            x[1]
        ))),
        // "Arithmetic Expressions": float % is e1 - e2 * trunc(e1 / e2).
        case!("f_rem", "a: f32, b: f32", "f32", "a % b", FF, |x| {
            let (a, b) = (f(x[0]), f(x[1]));
            fo(a - b * (a / b).trunc())
        }),
        case!("f_neg", "a: f32", "f32", "-a", F1, |x| fo(-f(x[0]))),
        case!(
            "f_abs",
            "a: f32",
            "f32",
            "abs(a)",
            F1,
            |x| fo(f(x[0]).abs())
        ),
        case!("f_min", "a: f32, b: f32", "f32", "min(a, b)", FF, |x| fo(
            wmin(f(x[0]), f(x[1]))
        )),
        case!("f_max", "a: f32, b: f32", "f32", "max(a, b)", FF, |x| fo(
            wmax(f(x[0]), f(x[1]))
        )),
        // "#clamp": min(max(e, low), high).
        case!(
            "f_clamp",
            "a: f32, b: f32, c: f32",
            "f32",
            "clamp(a, b, c)",
            F3,
            |x| { fo(wmin(wmax(f(x[0]), f(x[1])), f(x[2]))) }
        ),
        case!("f_saturate", "a: f32", "f32", "saturate(a)", F1, |x| fo(
            wmin(wmax(f(x[0]), 0.0), 1.0)
        )),
        case!("f_floor", "a: f32", "f32", "floor(a)", F1, |x| fo(
            f(x[0]).floor()
        )),
        case!("f_ceil", "a: f32", "f32", "ceil(a)", F1, |x| fo(
            f(x[0]).ceil()
        )),
        case!("f_trunc", "a: f32", "f32", "trunc(a)", F1, |x| fo(
            f(x[0]).trunc()
        )),
        // "#round-builtin": ties to even.
        case!("f_round", "a: f32", "f32", "round(a)", F1, |x| fo(
            f(x[0]).round_ties_even()
        )),
        // "#fract-builtin": e - floor(e).
        case!("f_fract", "a: f32", "f32", "fract(a)", F1, |x| fo(
            f(x[0]) - f(x[0]).floor()
        )),
        case!("f_sqrt", "a: f32", "f32", "sqrt(a)", F1, |x| fo(
            f(x[0]).sqrt()
        )),
        // "#fma-builtin" allows fused or unfused; the evaluator documents fused.
        case!(
            "f_fma",
            "a: f32, b: f32, c: f32",
            "f32",
            "fma(a, b, c)",
            F3,
            |x| { fo(f(x[0]).mul_add(f(x[1]), f(x[2]))) }
        ),
        // "#sign-builtin": 1, 0, -1; a NaN argument is indeterminate.
        case!("f_sign", "a: f32", "f32", "sign(a)", F1, |x| {
            let a = f(x[0]);
            let s = if a > 0.0 {
                1.0
            } else if a < 0.0 {
                -1.0
            } else {
                0.0
            };
            vec![(!a.is_nan()).then(|| f32::to_bits(s))]
        }),
        // "#step-builtin": 1.0 if edge <= x else 0.0.
        case!("f_step", "a: f32, b: f32", "f32", "step(a, b)", FF, |x| {
            fo(if f(x[0]) <= f(x[1]) { 1.0 } else { 0.0 })
        }),
        case!(
            "f_select",
            "a: f32, b: f32, c: bool",
            "f32",
            "select(a, b, c)",
            &[In::F, In::F, In::B],
            |x| { uo(if x[2] != 0 { x[1] } else { x[0] }) }
        ),
        case!("f_lt", "a: f32, b: f32", "bool", "a < b", FF, |x| bo(f(
            x[0]
        ) < f(
            x[1]
        ))),
        case!("f_le", "a: f32, b: f32", "bool", "a <= b", FF, |x| bo(f(
            x[0]
        )
            <= f(x[1]))),
        case!("f_eq", "a: f32, b: f32", "bool", "a == b", FF, |x| bo(f(
            x[0]
        )
            == f(x[1]))),
        case!("f_ne", "a: f32, b: f32", "bool", "a != b", FF, |x| bo(f(
            x[0]
        )
            != f(x[1]))),
        case!("f_gt", "a: f32, b: f32", "bool", "a > b", FF, |x| bo(f(
            x[0]
        ) > f(
            x[1]
        ))),
        case!("f_ge", "a: f32, b: f32", "bool", "a >= b", FF, |x| bo(f(
            x[0]
        )
            >= f(x[1]))),
    ]
}

fn int_cases() -> Vec<Case> {
    vec![
        // "Integer Types": concrete integer arithmetic wraps modulo 2^32.
        case!("i_add", "a: i32, b: i32", "i32", "a + b", II, |x| io((x[0]
            as i32)
            .wrapping_add(x[1] as i32))),
        case!("i_sub", "a: i32, b: i32", "i32", "a - b", II, |x| io((x[0]
            as i32)
            .wrapping_sub(x[1] as i32))),
        case!("i_mul", "a: i32, b: i32", "i32", "a * b", II, |x| io((x[0]
            as i32)
            .wrapping_mul(x[1] as i32))),
        // "Arithmetic Expressions": e1 / 0 = e1, MIN / -1 = e1; e1 % 0 = 0,
        // MIN % -1 = 0; otherwise truncating division.
        case!("i_div", "a: i32, b: i32", "i32", "a / b", II, |x| {
            let (a, b) = (x[0] as i32, x[1] as i32);
            io(if b == 0 || (a == i32::MIN && b == -1) {
                a
            } else {
                a / b
            })
        }),
        case!("i_rem", "a: i32, b: i32", "i32", "a % b", II, |x| {
            let (a, b) = (x[0] as i32, x[1] as i32);
            io(if b == 0 || (a == i32::MIN && b == -1) {
                0
            } else {
                a % b
            })
        }),
        case!("i_neg", "a: i32", "i32", "-a", I1, |x| io(
            0i32.wrapping_sub(x[0] as i32)
        )),
        case!("i_abs", "a: i32", "i32", "abs(a)", I1, |x| {
            let a = x[0] as i32;
            io(if a == i32::MIN { a } else { a.abs() })
        }),
        case!("i_sign", "a: i32", "i32", "sign(a)", I1, |x| io((x[0]
            as i32)
            .signum())),
        case!("i_min", "a: i32, b: i32", "i32", "min(a, b)", II, |x| io(
            (x[0] as i32).min(x[1] as i32)
        )),
        case!("i_max", "a: i32, b: i32", "i32", "max(a, b)", II, |x| io(
            (x[0] as i32).max(x[1] as i32)
        )),
        case!(
            "i_clamp",
            "a: i32, b: i32, c: i32",
            "i32",
            "clamp(a, b, c)",
            &[In::I, In::I, In::I],
            |x| { io((x[0] as i32).max(x[1] as i32).min(x[2] as i32)) }
        ),
        // "Bit Expressions": shift counts modulo 32; >> on i32 is arithmetic.
        case!("i_shl", "a: i32, b: u32", "i32", "a << b", IU, |x| uo(
            x[0] << (x[1] % 32)
        )),
        case!("i_shr", "a: i32, b: u32", "i32", "a >> b", IU, |x| io(
            (x[0] as i32) >> (x[1] % 32)
        )),
        case!("i_and", "a: i32, b: i32", "i32", "a & b", II, |x| uo(
            x[0] & x[1]
        )),
        case!("i_or", "a: i32, b: i32", "i32", "a | b", II, |x| uo(
            x[0] | x[1]
        )),
        case!("i_xor", "a: i32, b: i32", "i32", "a ^ b", II, |x| uo(
            x[0] ^ x[1]
        )),
        case!("i_not", "a: i32", "i32", "~a", I1, |x| uo(!x[0])),
        case!("i_lt", "a: i32, b: i32", "bool", "a < b", II, |x| bo((x[0]
            as i32)
            < (x[1] as i32))),
        case!("i_ge", "a: i32, b: i32", "bool", "a >= b", II, |x| bo(
            (x[0] as i32) >= (x[1] as i32)
        )),
        case!("u_add", "a: u32, b: u32", "u32", "a + b", UU, |x| uo(
            x[0].wrapping_add(x[1])
        )),
        case!("u_sub", "a: u32, b: u32", "u32", "a - b", UU, |x| uo(
            x[0].wrapping_sub(x[1])
        )),
        case!("u_mul", "a: u32, b: u32", "u32", "a * b", UU, |x| uo(
            x[0].wrapping_mul(x[1])
        )),
        case!("u_div", "a: u32, b: u32", "u32", "a / b", UU, |x| uo(
            // "Arithmetic Expressions": e1 / 0 is e1.
            x[0].checked_div(x[1]).unwrap_or(x[0])
        )),
        case!("u_rem", "a: u32, b: u32", "u32", "a % b", UU, |x| uo(
            if x[1] == 0 { 0 } else { x[0] % x[1] }
        )),
        case!("u_shl", "a: u32, b: u32", "u32", "a << b", UU, |x| uo(
            x[0] << (x[1] % 32)
        )),
        case!("u_shr", "a: u32, b: u32", "u32", "a >> b", UU, |x| uo(
            x[0] >> (x[1] % 32)
        )),
        case!("u_min", "a: u32, b: u32", "u32", "min(a, b)", UU, |x| uo(x
            [0]
        .min(x[1]))),
        case!("u_max", "a: u32, b: u32", "u32", "max(a, b)", UU, |x| uo(x
            [0]
        .max(x[1]))),
        case!("u_lt", "a: u32, b: u32", "bool", "a < b", UU, |x| bo(
            x[0] < x[1]
        )),
        case!("u_ne", "a: u32, b: u32", "bool", "a != b", UU, |x| bo(
            x[0] != x[1]
        )),
        case!(
            "b_and",
            "a: bool, b: bool",
            "bool",
            "a && b",
            &[In::B, In::B],
            |x| bo(x[0] & x[1] != 0)
        ),
        case!(
            "b_or",
            "a: bool, b: bool",
            "bool",
            "a || b",
            &[In::B, In::B],
            |x| bo((x[0] | x[1]) != 0)
        ),
        case!(
            "b_not",
            "a: bool",
            "bool",
            "!a",
            &[In::B],
            |x| bo(x[0] == 0)
        ),
    ]
}

/// Bit `i` of `x`.
fn bit(x: u32, i: u32) -> u32 {
    (x >> i) & 1
}

/// "#extractBits-unsigned-builtin", bit by bit: o = min(offset, 32),
/// c = min(count, 32 - o), result bit i = bit o + i of e for i < c.
fn extract_u(e: u32, offset: u32, count: u32) -> u32 {
    let o = offset.min(32);
    let c = count.min(32 - o);
    (0..c).fold(0, |r, i| r | (bit(e, o + i) << i))
}

fn bit_cases() -> Vec<Case> {
    vec![
        case!("n_ones", "a: u32", "u32", "countOneBits(a)", U1, |x| uo((0
            ..32)
            .map(|i| bit(x[0], i))
            .sum())),
        case!("n_clz", "a: u32", "u32", "countLeadingZeros(a)", U1, |x| {
            uo((0..32).rev().take_while(|&i| bit(x[0], i) == 0).count() as u32)
        }),
        case!("n_ctz", "a: i32", "i32", "countTrailingZeros(a)", I1, |x| {
            uo((0..32).take_while(|&i| bit(x[0], i) == 0).count() as u32)
        }),
        case!("n_rev", "a: u32", "u32", "reverseBits(a)", U1, |x| {
            uo((0..32).fold(0, |r, i| r | (bit(x[0], 31 - i) << i)))
        }),
        // "#firstLeadingBit-unsigned-builtin": T(-1) for 0, else the top 1 bit.
        case!("n_flb_u", "a: u32", "u32", "firstLeadingBit(a)", U1, |x| {
            uo((0..32)
                .rev()
                .find(|&i| bit(x[0], i) == 1)
                .unwrap_or(u32::MAX))
        }),
        // "#firstLeadingBit-signed-builtin": -1 for 0 and -1, else the top bit
        // that differs from the sign bit.
        case!("n_flb_i", "a: i32", "i32", "firstLeadingBit(a)", I1, |x| {
            let s = bit(x[0], 31);
            io((0..31)
                .rev()
                .find(|&i| bit(x[0], i) != s)
                .map_or(-1, |i| i as i32))
        }),
        // "#firstTrailingBit-builtin": T(-1) for 0, else the lowest 1 bit.
        case!("n_ftb", "a: u32", "u32", "firstTrailingBit(a)", U1, |x| {
            uo((0..32).find(|&i| bit(x[0], i) == 1).unwrap_or(u32::MAX))
        }),
        case!(
            "n_ext_u",
            "e: u32, o: u32, c: u32",
            "u32",
            "extractBits(e, o, c)",
            &[In::U, In::U, In::U],
            |x| { uo(extract_u(x[0], x[1], x[2])) }
        ),
        // "#extractBits-signed-builtin": bits at and above c copy bit c - 1.
        case!(
            "n_ext_i",
            "e: i32, o: u32, c: u32",
            "i32",
            "extractBits(e, o, c)",
            &[In::I, In::U, In::U],
            |x| {
                let o = x[1].min(32);
                let c = x[2].min(32 - o);
                let low = extract_u(x[0], x[1], x[2]);
                if c == 0 {
                    return uo(0);
                }
                let s = bit(low, c - 1);
                uo((c..32).fold(low, |r, i| r | (s << i)))
            }
        ),
        // "#insertBits-builtin": bits o..o+c-1 from newbits' low bits.
        case!(
            "n_ins",
            "e: u32, n: u32, o: u32, c: u32",
            "u32",
            "insertBits(e, n, o, c)",
            &[In::U, In::U, In::U, In::U],
            |x| {
                let o = x[2].min(32);
                let c = x[3].min(32 - o);
                uo((0..32).fold(0, |r, i| {
                    let b = if i >= o && i < o + c {
                        bit(x[1], i - o)
                    } else {
                        bit(x[0], i)
                    };
                    r | (b << i)
                }))
            }
        ),
    ]
}

/// Round to binary16 (ties to even) in f64, written out here; `None` outside
/// binary16's finite range, where the spec makes the result indeterminate.
fn to_f16(x: f32) -> Option<f32> {
    let x = f64::from(x);
    if x.is_nan() || x.abs() > 65504.0 {
        return None;
    }
    if x == 0.0 {
        return Some(x as f32);
    }
    let e = x.abs().log2().floor().max(-14.0);
    let q = 2f64.powf(e - 10.0);
    Some(((x / q).round_ties_even() * q) as f32)
}

fn conversion_cases() -> Vec<Case> {
    vec![
        // "Floating Point Conversion": clamp to the source-type values closest
        // to the integer range, then truncate; NaN is indeterminate.
        case!("c_f_i", "a: f32", "i32", "i32(a)", F1, |x| {
            let a = f(x[0]);
            let r = if a <= -2147483648.0 {
                i32::MIN
            } else if a >= 2147483520.0 {
                2147483520
            } else {
                a.trunc() as i32
            };
            vec![(!a.is_nan()).then_some(r as u32)]
        }),
        case!("c_f_u", "a: f32", "u32", "u32(a)", F1, |x| {
            let a = f(x[0]);
            let r = if a <= 0.0 {
                0
            } else if a >= 4294967040.0 {
                4294967040
            } else {
                a.trunc() as u32
            };
            vec![(!a.is_nan()).then_some(r)]
        }),
        case!("c_i_f", "a: i32", "f32", "f32(a)", I1, |x| fo(
            x[0] as i32 as f32
        )),
        case!("c_u_f", "a: u32", "f32", "f32(a)", U1, |x| fo(x[0] as f32)),
        case!("c_i_u", "a: i32", "u32", "u32(a)", I1, |x| uo(x[0])),
        case!("c_f_b", "a: f32", "bool", "bool(a)", F1, |x| bo(
            f(x[0]) != 0.0
        )),
        case!("c_u_b", "a: u32", "bool", "bool(a)", U1, |x| bo(x[0] != 0)),
        case!("c_b_f", "a: bool", "f32", "f32(a)", &[In::B], |x| fo(
            if x[0] != 0 { 1.0 } else { 0.0 }
        )),
        case!("c_bc_f_u", "a: f32", "u32", "bitcast<u32>(a)", F1, |x| uo(
            x[0]
        )),
        case!("c_bc_u_f", "a: u32", "f32", "bitcast<f32>(a)", U1, |x| uo(
            x[0]
        )),
        case!("c_bc_i_f", "a: i32", "f32", "bitcast<f32>(a)", I1, |x| uo(
            x[0]
        )),
        // "#quantizeToF16-builtin": through binary16 and back.
        case!("c_quantize", "a: f32", "f32", "quantizeToF16(a)", F1, |x| {
            vec![to_f16(f(x[0])).map(f32::to_bits)]
        }),
        case!("c_f_h_f", "a: f32", "f32", "f32(f16(a))", F1, |x| vec![
            to_f16(f(x[0])).map(f32::to_bits)
        ]),
    ]
}

fn vector_cases() -> Vec<Case> {
    const F8: &[In] = &[In::F, In::F, In::F, In::F, In::F, In::F, In::F, In::F];
    const I8: &[In] = &[In::I, In::I, In::I, In::I, In::I, In::I, In::I, In::I];
    fn each(x: &[u32], g: impl Fn(u32, u32) -> u32) -> Vec<Option<u32>> {
        (0..4).map(|i| Some(g(x[i], x[i + 4]))).collect()
    }
    vec![
        case!(
            "v_add",
            "a: vec4<f32>, b: vec4<f32>",
            "vec4<f32>",
            "a + b",
            F8,
            |x| { each(x, |a, b| (f(a) + f(b)).to_bits()) }
        ),
        case!(
            "v_div",
            "a: vec4<f32>, b: vec4<f32>",
            "vec4<f32>",
            "a / b",
            F8,
            |x| { each(x, |a, b| (f(a) / f(b)).to_bits()) }
        ),
        case!(
            "v_min",
            "a: vec4<f32>, b: vec4<f32>",
            "vec4<f32>",
            "min(a, b)",
            F8,
            |x| { each(x, |a, b| wmin(f(a), f(b)).to_bits()) }
        ),
        // vec * scalar and scalar + vec broadcast the scalar (naga keeps the
        // scalar for *, and splats it for +).
        case!(
            "v_scale",
            "a: vec4<f32>, s: f32",
            "vec4<f32>",
            "a * s + s",
            &[In::F, In::F, In::F, In::F, In::F],
            |x| {
                (0..4)
                    .map(|i| Some((f(x[i]) * f(x[4]) + f(x[4])).to_bits()))
                    .collect()
            }
        ),
        case!(
            "v_i_div",
            "a: vec4<i32>, b: vec4<i32>",
            "vec4<i32>",
            "a / b",
            I8,
            |x| {
                each(x, |a, b| {
                    let (a, b) = (a as i32, b as i32);
                    (if b == 0 || (a == i32::MIN && b == -1) {
                        a
                    } else {
                        a / b
                    }) as u32
                })
            }
        ),
        case!(
            "v_i_shl",
            "a: vec4<i32>, b: vec4<u32>",
            "vec4<i32>",
            "a << b",
            &[In::I, In::I, In::I, In::I, In::U, In::U, In::U, In::U],
            |x| { each(x, |a, b| a << (b % 32)) }
        ),
        case!(
            "v_cmp",
            "a: vec4<f32>, b: vec4<f32>",
            "vec4<bool>",
            "a <= b",
            F8,
            |x| { each(x, |a, b| u32::from(f(a) <= f(b))) }
        ),
    ]
}

// ------------------------------------------------------------------ running

struct Compiled {
    case: Case,
    program: Program,
}

fn compile(cases: Vec<Case>) -> Vec<Compiled> {
    let src: String = std::iter::once("enable f16;".to_string())
        .chain(cases.iter().map(Case::wgsl))
        .collect::<Vec<_>>()
        .join("\n");
    let sh = Shader::from_source("differential.wgsl", src).unwrap_or_else(|e| panic!("{e}"));
    cases
        .into_iter()
        .map(|case| {
            let program = Program::compile(&sh, case.name, &BTreeMap::new())
                .unwrap_or_else(|e| panic!("{e}"));
            assert_eq!(
                program.input_leaves().len(),
                case.ins.len(),
                "{}",
                case.name
            );
            Compiled { case, program }
        })
        .collect()
}

fn group(which: usize) -> &'static [Compiled] {
    static GROUPS: OnceLock<Vec<Vec<Compiled>>> = OnceLock::new();
    &GROUPS.get_or_init(|| {
        vec![
            compile(float_cases()),
            compile(int_cases()),
            compile(bit_cases()),
            compile(conversion_cases()),
            compile(vector_cases()),
        ]
    })[which]
}

/// Input bit patterns: arbitrary words (every f32 class in its natural
/// proportion), small integers (shift counts, bit offsets), and edge values.
fn word() -> impl Strategy<Value = u32> {
    const EDGES: &[u32] = &[
        0x0000_0000, // +0
        0x8000_0000, // -0, and i32::MIN
        0x0000_0001, // smallest subnormal
        0x807F_FFFF, // largest negative subnormal
        0x0080_0000, // smallest normal
        0x3F80_0000, // 1.0
        0xBF80_0000, // -1.0
        0x3F00_0000, // 0.5
        0x4020_0000, // 2.5 (a rounding tie)
        0xC020_0000, // -2.5
        0x4B80_0000, // 2^24
        0x7F7F_FFFF, // f32::MAX
        0x7F80_0000, // +inf
        0xFF80_0000, // -inf
        0x7FC0_0000, // NaN
        0xFFFF_FFFF, // NaN, and -1 / u32::MAX
        0x4EFF_FFFF, // 2147483520, the i32 conversion bound
        0x4F00_0000, // 2^31
        0xCF00_0000, // -2^31
        0x4F7F_FFFF, // 4294967040, the u32 conversion bound
        0x4F80_0000, // 2^32
        0x477F_E000, // 65504, f16 MAX
        0x477F_F000, // 65520, where f16 rounding overflows
        0x3380_0000, // 2^-24, f16's smallest subnormal
        0x7FFF_FFFF, // i32::MAX
        31,
        32,
        33,
    ];
    prop_oneof![
        3 => any::<u32>(),
        2 => 0u32..64,
        3 => proptest::sample::select(EDGES),
        2 => (-1.0e6f32..1.0e6f32).prop_map(f32::to_bits),
        2 => (-4.0f32..4.0).prop_map(f32::to_bits),
    ]
}

fn points() -> impl Strategy<Value = Vec<[u32; 8]>> {
    // Up to 300 points: several batches of 128, a ragged last one.
    proptest::collection::vec(proptest::array::uniform8(word()), 1..300)
}

fn same(got: u32, want: u32, float: bool) -> bool {
    got == want || (float && f32::from_bits(got).is_nan() && f32::from_bits(want).is_nan())
}

/// Evaluate every case of `cases` over `pts`; Err names the first mismatch
/// with its WGSL so that proptest's shrunk report is self-contained.
fn check_group(cases: &[Compiled], pts: &[[u32; 8]]) -> Result<(), TestCaseError> {
    for c in cases {
        let cols: Vec<Vec<u32>> = c
            .case
            .ins
            .iter()
            .enumerate()
            .map(|(i, k)| {
                pts.iter()
                    .map(|p| if matches!(k, In::B) { p[i] & 1 } else { p[i] })
                    .collect()
            })
            .collect();
        let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
        let mut out = Vec::new();
        c.program.eval(&refs, &mut out);
        let floats: Vec<bool> = c
            .program
            .output_leaves()
            .iter()
            .map(|(_, k)| k.is_float())
            .collect();
        for (n, p) in pts.iter().enumerate() {
            let args: Vec<u32> = cols.iter().map(|c| c[n]).collect();
            let want = (c.case.reference)(&args);
            for (j, w) in want.iter().enumerate() {
                let Some(w) = *w else { continue };
                let g = out[j][n];
                prop_assert!(
                    same(g, w, floats[j]),
                    "{}\n  inputs (bits) {:08x?}\n  output {j}: got {g:#010x} ({}), want {w:#010x} ({})",
                    c.case.wgsl(),
                    &p[..c.case.ins.len()],
                    f32::from_bits(g),
                    f32::from_bits(w)
                );
            }
        }
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 256, ..ProptestConfig::default() })]

    #[test]
    fn float_operators_match_ieee_binary32(pts in points()) {
        check_group(group(0), &pts)?;
    }

    #[test]
    fn integer_and_bool_operators_match_wrapping_semantics(pts in points()) {
        check_group(group(1), &pts)?;
    }

    #[test]
    fn bit_built_ins_match_their_bitwise_definitions(pts in points()) {
        check_group(group(2), &pts)?;
    }

    #[test]
    fn conversions_and_bitcasts_match_the_spec(pts in points()) {
        check_group(group(3), &pts)?;
    }

    #[test]
    fn vector_operators_are_component_wise(pts in points()) {
        check_group(group(4), &pts)?;
    }
}

// ------------------------------------------------------------------ batch behaviour

/// Control flow that differs per point: early return (with a NaN issue),
/// a data-dependent loop with dynamic indexing (negative i gives
/// out-of-bounds issues), and a loop that may exceed the step budget.
const MIXED: &str = r#"
fn mixed(x: f32, i: i32, n: u32) -> vec3<f32> {
    if x < -100.0 {
        return vec3(sqrt(x), -1.0, 0.0);
    }
    var table = array<f32, 5>(1.0, -2.0, 3.0, -4.0, 5.0);
    var acc = 0.0;
    for (var k = 0u; k < n % 37u; k++) {
        acc += table[(i + i32(k)) % 5];
        if acc > 20.0 { break; }
    }
    var v = n | 1u;
    var steps = 0u;
    while v != 1u {
        if v % 2u == 0u { v = v / 2u; } else { v = 3u * v + 1u; }
        steps++;
    }
    return vec3(acc * x, f32(n % 37u), f32(steps));
}
"#;

fn mixed_program() -> Program {
    let sh = Shader::from_source("mixed.wgsl", MIXED.to_string()).unwrap();
    let mut p = Program::compile(&sh, "mixed", &BTreeMap::new()).unwrap();
    p.set_step_budget(300);
    p
}

fn mixed_inputs(n: usize, seed: u64) -> Vec<Vec<u32>> {
    // A fixed linear congruential stream (Knuth's MMIX constants): the test
    // needs varied, reproducible points, not statistical quality.
    let mut s = seed;
    let mut next = move || {
        s = s
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (s >> 32) as u32
    };
    let mut cols = vec![
        Vec::with_capacity(n),
        Vec::with_capacity(n),
        Vec::with_capacity(n),
    ];
    for _ in 0..n {
        let x = (next() % 4000) as f32 / 10.0 - 200.0;
        cols[0].push(x.to_bits());
        cols[1].push((next() % 21) as i32 as u32 ^ if next() % 4 == 0 { 0xFFFF_FFF0 } else { 0 });
        cols[2].push(next());
    }
    cols
}

fn eval_cols(p: &Program, cols: &[Vec<u32>], serial: bool) -> (Vec<Vec<u32>>, Vec<LaneIssue>) {
    let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
    let mut out = Vec::new();
    let issues = if serial {
        p.eval_serial(&refs, &mut out)
    } else {
        p.eval(&refs, &mut out)
    };
    (out, issues)
}

/// Issues as (point, kind, message, line, column, inputs), for comparison.
fn keyed(issues: &[LaneIssue], offset: usize) -> Vec<String> {
    issues
        .iter()
        .map(|i| {
            format!(
                "{} {:?} {} {}:{} {}",
                i.point + offset,
                i.kind,
                i.message,
                i.line,
                i.column,
                i.inputs
            )
        })
        .collect()
}

#[test]
fn a_point_gives_the_same_result_alone_as_in_a_batch() {
    let p = mixed_program();
    let n = 1000; // not a multiple of 128: the last batch is ragged
    let cols = mixed_inputs(n, 7);
    let (all, all_issues) = eval_cols(&p, &cols, false);
    assert!(
        !all_issues.is_empty(),
        "the inputs should exercise the issue paths"
    );
    let mut one_by_one = Vec::new();
    for k in 0..n {
        let single: Vec<Vec<u32>> = cols.iter().map(|c| vec![c[k]]).collect();
        let (out, issues) = eval_cols(&p, &single, false);
        for (j, col) in out.iter().enumerate() {
            assert_eq!(col[0], all[j][k], "point {k}, output {j}");
        }
        one_by_one.extend(keyed(&issues, k));
    }
    assert_eq!(keyed(&all_issues, 0), one_by_one);
}

#[test]
fn reordering_points_reorders_results() {
    let p = mixed_program();
    let n = 515;
    let cols = mixed_inputs(n, 11);
    let (fwd, _) = eval_cols(&p, &cols, false);
    let rev_cols: Vec<Vec<u32>> = cols
        .iter()
        .map(|c| c.iter().rev().copied().collect())
        .collect();
    let (rev, _) = eval_cols(&p, &rev_cols, false);
    for j in 0..fwd.len() {
        let back: Vec<u32> = rev[j].iter().rev().copied().collect();
        assert_eq!(fwd[j], back, "output {j}");
    }
}

#[test]
fn parallel_eval_equals_serial_eval_across_chunks() {
    let p = mixed_program();
    // Two full parallel chunks (32 batches of 128 each) and a ragged rest.
    let n = 2 * 4096 + 77;
    let cols = mixed_inputs(n, 3);
    let (par, par_issues) = eval_cols(&p, &cols, false);
    let (ser, ser_issues) = eval_cols(&p, &cols, true);
    assert_eq!(par, ser);
    assert_eq!(keyed(&par_issues, 0), keyed(&ser_issues, 0));
    let sorted = par_issues.windows(2).all(|w| w[0].point <= w[1].point);
    assert!(sorted, "issues are sorted by point");
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 32, ..ProptestConfig::default() })]

    /// Splitting a batch anywhere and evaluating the pieces separately gives
    /// the same results and issues as one call.
    #[test]
    fn batch_boundaries_do_not_change_results(n in 1usize..700, seed in any::<u64>(), cuts in proptest::collection::vec(0usize..700, 0..4)) {
        let p = mixed_program();
        let cols = mixed_inputs(n, seed);
        let (whole, whole_issues) = eval_cols(&p, &cols, false);
        let mut cuts: Vec<usize> = cuts.into_iter().map(|c| c % n).chain([0, n]).collect();
        cuts.sort_unstable();
        cuts.dedup();
        let mut pieces: Vec<Vec<u32>> = vec![Vec::new(); whole.len()];
        let mut piece_issues = Vec::new();
        for w in cuts.windows(2) {
            let part: Vec<Vec<u32>> = cols.iter().map(|c| c[w[0]..w[1]].to_vec()).collect();
            let (out, issues) = eval_cols(&p, &part, false);
            for (j, col) in out.into_iter().enumerate() {
                pieces[j].extend(col);
            }
            piece_issues.extend(keyed(&issues, w[0]));
        }
        prop_assert_eq!(&whole, &pieces);
        prop_assert_eq!(keyed(&whole_issues, 0), piece_issues);
    }
}
