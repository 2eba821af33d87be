//! Differential test: every function of tests/gpu/corpus_wgsl/ runs on the CPU
//! evaluator and on a WebGPU device over the same points (edge values, then
//! seeded random ones), and every result leaf is compared.
//!
//! Integer, bool, bit-manipulation and packing results must agree bit for
//! bit; values that are only moved must agree bit for bit; float results
//! must agree within the allowance written beside each case, derived from
//! the WGSL spec's accuracy rules ("Floating Point Accuracy": per-operation
//! bounds, reassociation and fusion allowed, subnormals may be flushed, the
//! sign of zero may be ignored) plus the CPU evaluator's own error. When a
//! case fails, the evaluator is presumed wrong until the spec says
//! otherwise.
//!
//! One test per case, named after the corpus function, so
//! `cargo test --features gpu --test gpu corpus::shifts` runs one.
//! Without an adapter every test prints a skip message and passes, unless
//! `SHADEGATE_REQUIRE_GPU=1`.
#![cfg(feature = "gpu")]

use crate::common as gpu_common;

use gpu_common::{check, rep, Allow, Case, Dom};

/// f32 unit roundoff bounds: a correctly rounded WGSL operation may return
/// either neighbour of the exact result ("correctly rounded", Floating Point
/// Accuracy), so its relative error is below one ULP, at most 2^-23 of the
/// value; the CPU rounds to nearest, at most 2^-24.
const EPS_DEVICE: f64 = 1.0 / 8_388_608.0;
const EPS_CPU: f64 = 1.0 / 16_777_216.0;

macro_rules! cases {
    ($($name:ident => $case:expr;)*) => {
        $(
            #[test]
            fn $name() {
                let case: Case = $case;
                assert_eq!(case.function, stringify!($name), "test name = corpus function");
                check(&case);
            }
        )*
    };
}

// ------------------------------------------------------------ integers

cases! {
    int_arith => Case::new("integers.wgsl", "int_arith", vec![Dom::I32, Dom::I32]);
    uint_arith => Case::new("integers.wgsl", "uint_arith", vec![Dom::U32, Dom::U32]);
    int_div_rem => Case::new("integers.wgsl", "int_div_rem", vec![Dom::I32, Dom::I32In(-40, 40)]);
    uint_div_rem => Case::new("integers.wgsl", "uint_div_rem", vec![Dom::U32, Dom::U32In(0, 70)]);
    shifts => Case::new("integers.wgsl", "shifts", vec![Dom::I32, Dom::U32, Dom::U32In(0, 100)]);
    int_compare => Case::new("integers.wgsl", "int_compare", vec![Dom::I32, Dom::I32]);
    int_builtins => Case::new("integers.wgsl", "int_builtins", vec![Dom::I32, Dom::I32]);
    bit_counts => Case::new("integers.wgsl", "bit_counts", vec![Dom::U32]);
    first_bits => Case::new("integers.wgsl", "first_bits", vec![Dom::U32, Dom::I32]);
    extract_insert => Case::new(
        "integers.wgsl",
        "extract_insert",
        vec![Dom::U32, Dom::U32, Dom::U32In(0, 40), Dom::U32In(0, 40)],
    );
    packed_int => Case::new(
        "integers.wgsl",
        "packed_int",
        [rep(Dom::I32In(-300, 300), 4), rep(Dom::U32In(0, 600), 4)].concat(),
    );
    unpacked_int => Case::new("integers.wgsl", "unpacked_int", vec![Dom::U32]);
    dot_packed => Case::new("integers.wgsl", "dot_packed", vec![Dom::U32, Dom::U32]);
    vector_int_ops => Case::new(
        "integers.wgsl",
        "vector_int_ops",
        [rep(Dom::I32, 3), rep(Dom::I32In(-9, 9), 3)].concat(),
    );
}

// ---------------------------------------------------------- conversions

cases! {
    float_to_int => Case::new("conversions.wgsl", "float_to_int", vec![Dom::F32Finite]);
    int_to_float => Case::new("conversions.wgsl", "int_to_float", vec![Dom::I32, Dom::U32]).allow(
        Allow::ulps(1.5),
        "an integer with more than 24 significant bits converts to either neighbouring f32 \
         (Floating Point Conversion): 1 ULP on the device, 0.5 on the CPU (nearest)",
    );
    bool_conversions => Case::new("conversions.wgsl", "bool_conversions", vec![Dom::F32Finite, Dom::I32])
        .allow(
            Allow::EXACT_VALUE,
            "bool and u32 results exact; a comparison may see a subnormal input flushed to \
             zero (Floating Point Accuracy: comparisons are in its table), so a point also \
             passes when it matches the CPU fed the flushed input",
        );
    bitcasts => Case::new("conversions.wgsl", "bitcasts", [vec![Dom::F32Finite], rep(Dom::I32, 2)].concat());
}

// ------------------------------------------------------------- vectors

cases! {
    swizzles => Case::new("vectors.wgsl", "swizzles", rep(Dom::F32Finite, 4));
    swizzle_store => Case::new("vectors.wgsl", "swizzle_store", [rep(Dom::I32, 4), vec![Dom::U32]].concat());
    vec_index => Case::new("vectors.wgsl", "vec_index", [rep(Dom::U32, 4), vec![Dom::U32]].concat());
    select_vec => Case::new(
        "vectors.wgsl",
        "select_vec",
        [rep(Dom::F32Finite, 6), rep(Dom::Bool, 4)].concat(),
    );
}

// ------------------------------------------------------------ matrices

const SMALL_INTS: &str = "inputs are integers of magnitude <= 16: every product and partial sum \
     is an integer below 2^24, exact in f32 whatever the order of evaluation or fusion; only the \
     sign of a zero sum may differ (the spec lets it be ignored)";

cases! {
    mat_vec => Case::new("matrices.wgsl", "mat_vec", rep(Dom::F32Ints(-16, 16), 12))
        .allow(Allow::EXACT_VALUE, SMALL_INTS);
    vec_mat => Case::new("matrices.wgsl", "vec_mat", rep(Dom::F32Ints(-16, 16), 9))
        .allow(Allow::EXACT_VALUE, SMALL_INTS);
    mat_mat => Case::new("matrices.wgsl", "mat_mat", rep(Dom::F32Ints(-16, 16), 14))
        .allow(Allow::EXACT_VALUE, SMALL_INTS);
    transpose_scale => Case::new("matrices.wgsl", "transpose_scale", rep(Dom::F32Ints(-16, 16), 9))
        .allow(Allow::EXACT_VALUE, SMALL_INTS);
    mat_column => Case::new(
        "matrices.wgsl",
        "mat_column",
        [rep(Dom::F32Ints(-16, 16), 6), vec![Dom::I32In(-2, 4)]].concat(),
    )
    .allow(Allow::EXACT_VALUE, SMALL_INTS);
    mat_add => Case::new("matrices.wgsl", "mat_add", rep(Dom::F32Ints(-16, 16), 8))
        .allow(Allow::EXACT_VALUE, SMALL_INTS);
    dot_cross => Case::new("matrices.wgsl", "dot_cross", rep(Dom::F32Ints(-16, 16), 6))
        .allow(Allow::EXACT_VALUE, SMALL_INTS);
}

// ----------------------------------------------------------- control flow

cases! {
    collatz => Case::new("control.wgsl", "collatz", vec![Dom::U32In(0, 100_000)]);
    switch_select => Case::new("control.wgsl", "switch_select", vec![Dom::I32]);
    loop_continue => Case::new("control.wgsl", "loop_continue", vec![Dom::I32In(-10, 80)]);
    continuing_break_if => Case::new("control.wgsl", "continuing_break_if", vec![Dom::U32]);
    nested_return => Case::new("control.wgsl", "nested_return", vec![Dom::I32In(-20, 20), Dom::I32In(-20, 20)]);
    logic => Case::new("control.wgsl", "logic", rep(Dom::Bool, 3));
    float_branch => Case::new("control.wgsl", "float_branch", vec![Dom::F32Mag(1e-3, 1e30, true), Dom::F32Mag(1e-3, 1e30, true)])
        .allow(
            Allow::EXACT_VALUE,
            "floor, halving (exact for normal values) and small integer counts: every result is \
             exactly representable, so a correctly rounded operation must return it",
        );
}

// ------------------------------------------------------------- pointers

cases! {
    pointer_args => Case::new("pointers.wgsl", "pointer_args", vec![Dom::I32, Dom::I32]);
    pointer_array => Case::new("pointers.wgsl", "pointer_array", [rep(Dom::I32, 4), vec![Dom::U32]].concat());
    pointer_struct => Case::new(
        "pointers.wgsl",
        "pointer_struct",
        [rep(Dom::F32Finite, 4), vec![Dom::U32, Dom::Bool, Dom::U32]].concat(),
    );
    private_var => Case::new("pointers.wgsl", "private_var", vec![Dom::I32]);
}

// -------------------------------------------------------------- packing

cases! {
    pack_norm => {
        let mut c = Case::new("packing.wgsl", "pack_norm", rep(Dom::F32In(-1.5, 1.5), 4)).per_point(
            |x| (!pack_tie(x)).then_some(Allow::BITS),
            "each packed integer is floor(0.5 + s * clamp(e)) with the product and the sum \
             correctly rounded (Data Packing Built-in Functions, Floating Point Accuracy: \
             either neighbour), so where s * e lies within an f32 ULP of a half-integer two \
             integers are right; both back ends must give one of the allowed ones. Points \
             where the f32 product is exactly a half-integer are checked by \
             pack_norm_ties",
        );
        c.spec_set = Some(pack_norm_allowed);
        // The edge values +-0.5 are ties for every packer (checked by
        // pack_norm_ties), so about one point in nine is left out here.
        c.min_compared = 0.8;
        c
    };
    pack_half => {
        let mut c = Case::new("packing.wgsl", "pack_half", rep(Dom::F32In(-65504.0, 65504.0), 2)).allow(
            Allow::ulps(1.5),
            "pack2x16float rounds each f32 to f16 correctly (Floating Point Accuracy: either \
             neighbour, 1 f16 ULP); the CPU rounds to nearest (0.5); intermediates of pack \
             built-ins may be flushed",
        );
        c.f16_pairs = true;
        c
    };
    unpack_norm => Case::new("packing.wgsl", "unpack_norm", vec![Dom::U32]).allow(
        Allow::ulps(3.5),
        "unpack4x8snorm/unorm and unpack2x16snorm/unorm: 3 ULP on the device (Floating Point \
         Accuracy), correctly rounded division on the CPU (0.5)",
    );
    unpack_half => Case::new("packing.wgsl", "unpack_half", vec![Dom::U32F16Pair]).allow(
        Allow::EXACT_VALUE,
        "every finite f16 is an f32, so unpack2x16float is exact; its intermediate may be \
         flushed (Floating Point Accuracy), so an f16 subnormal may come out as zero",
    );
}

// ---------------------------------------------------------------- floats

fn log2_allow(x: &[f64]) -> Option<Allow> {
    // log2: absolute error 2^-21 on [0.5, 2], else 3 ULP (Floating Point
    // Accuracy); the CPU's libm log2f adds at most 1 ULP.
    let a = if (0.5..=2.0).contains(&x[0]) {
        Allow {
            abs: 2f64.powi(-21),
            ..Allow::ulps(1.0)
        }
    } else {
        Allow::ulps(4.0)
    };
    Some(a)
}

fn exp2_allow(x: &[f64]) -> Option<Allow> {
    // exp2: 3 + 2|x| ULP (Floating Point Accuracy) plus 1 ULP for the CPU's
    // libm exp2f.
    Some(Allow::ulps(3.0 + 2.0 * x[0].abs() + 1.0))
}

cases! {
    exact_builtins => Case::new("floats.wgsl", "exact_builtins", vec![Dom::F32Finite, Dom::F32Finite]).allow(
        Allow::EXACT_VALUE,
        "abs, floor, ceil, trunc, round, sign, min, max, step, saturate are correctly rounded \
         and their exact results are representable, so they must be exact; inputs and outputs \
         may be flushed and the sign of zero ignored (Floating Point Accuracy)",
    );
    fract_f => Case::new("floats.wgsl", "fract_f", vec![Dom::F32In(-1000.0, 1000.0)]).allow(
        Allow::ulps(1.5),
        "fract is inherited from x - floor(x): floor is exact, the subtraction correctly \
         rounded (1 ULP on the device, 0.5 on the CPU)",
    );
    divide => Case::new("floats.wgsl", "divide", vec![Dom::F32Mag(1e-18, 1e18, true), Dom::F32Mag(1e-18, 1e18, true)])
        .allow(
            Allow::ulps(3.0),
            "x / y: 2.5 ULP for |y| in [2^-126, 2^126] (Floating Point Accuracy), correctly \
             rounded on the CPU (0.5)",
        );
    sqrt_f => Case::new("floats.wgsl", "sqrt_f", vec![Dom::F32Mag(1e-30, 1e30, false)]).allow(
        Allow {
            rel: 4.5 * EPS_DEVICE * 1.001 + EPS_CPU,
            ..Allow::ulps(0.0)
        },
        "sqrt is inherited from 1.0 / inverseSqrt(x): 2 ULP then 2.5 ULP, at most \
         (2 + 2.5) * 2^-23 relative (plus second-order terms, 0.1 %); the CPU is correctly \
         rounded (2^-24)",
    );
    inverse_sqrt_f => Case::new("floats.wgsl", "inverse_sqrt_f", vec![Dom::F32Mag(1e-30, 1e30, false)])
        .allow(
            Allow::ulps(2.5),
            "inverseSqrt: 2 ULP (Floating Point Accuracy); the CPU rounds the f64 result once \
             (0.5)",
        );
    exp2_f => Case::new("floats.wgsl", "exp2_f", vec![Dom::F32In(-20.0, 20.0)]).per_point(
        exp2_allow,
        "exp2: 3 + 2|x| ULP (Floating Point Accuracy) plus 1 ULP for the CPU's libm exp2f",
    );
    log2_f => Case::new("floats.wgsl", "log2_f", vec![Dom::F32Mag(1e-12, 1e12, false)]).per_point(
        log2_allow,
        "log2: absolute 2^-21 on [0.5, 2], 3 ULP elsewhere (Floating Point Accuracy), plus \
         1 ULP for the CPU's libm log2f",
    );
    sin_cos => Case::new("floats.wgsl", "sin_cos", vec![Dom::F32In(-std::f32::consts::PI, std::f32::consts::PI)])
        .allow(
            Allow {
                abs: 2f64.powi(-11),
                ..Allow::ulps(1.0)
            },
            "sin, cos: absolute error 2^-11 on [-pi, pi] (Floating Point Accuracy), plus 1 ULP \
             for the CPU's libm sinf/cosf",
        );
}

// ----------------------------------------------------------------- f16

cases! {
    half_add_mul => Case::new("half.wgsl", "half_add_mul", rep(Dom::F16In(-64.0, 64.0), 2)).allow(
        Allow::ulps(1.5),
        "f16 + - * are correctly rounded (1 f16 ULP on the device); the CPU rounds to nearest \
         (0.5); subnormal results may be flushed",
    );
    half_div => Case::new("half.wgsl", "half_div", vec![Dom::F16In(-64.0, 64.0), Dom::F16In(-64.0, 64.0)])
        .per_point(
            |x| {
                // The bound holds for |y| in [2^-14, 2^14] only.
                (x[1].abs() >= 2f64.powi(-14)).then_some(Allow::ulps(3.0))
            },
            "f16 x / y: 2.5 ULP for |y| in [2^-14, 2^14] (Floating Point Accuracy), correctly \
             rounded on the CPU (0.5)",
        );
    half_from_f32 => Case::new("half.wgsl", "half_from_f32", vec![Dom::F32In(-65504.0, 65504.0)]).allow(
        Allow::ulps(1.5),
        "f32 to f16 gives either neighbour (Floating Point Conversion): 1 f16 ULP, the CPU \
         rounds to nearest (0.5)",
    );
    half_to_f32 => Case::new("half.wgsl", "half_to_f32", rep(Dom::F16Finite, 2));
    half_mat_vec => Case::new("half.wgsl", "half_mat_vec", rep(Dom::F16Ints(-12, 12), 6))
        .allow(
            Allow::EXACT_VALUE,
            "inputs are integers of magnitude <= 12: every product and sum is an integer \
             below 2^11, exact in f16 whatever the order or fusion",
        );
}

// -------------------------------------------------------------- shading

/// GGX D = a2 / (pi d^2), d = nh^2 (a2 - 1) + 1, a2 = alpha^2 (shading.wgsl).
///
/// Standard model of floating-point arithmetic (every operation's relative
/// error below eps; Higham, "Accuracy and Stability of Numerical
/// Algorithms", ch. 2-3): however the driver reassociates or fuses the five
/// operations of d (Floating Point Accuracy allows both), the error of d is
/// at most gamma_5 * T with T = nh^2 (a2 + 1) + 1 the sum of the magnitudes
/// of its terms. D squares d (relative error doubled) and adds three
/// roundings and the division (2.5 ULP on the device). Device and CPU each
/// stay within their bound of the exact value, so their distance stays
/// within the sum, relative to D computed in f64.
fn ggx_allow(x: &[f64]) -> Option<Allow> {
    let (nh, alpha) = (x[0], x[1]);
    let a2 = alpha * alpha;
    let d = nh * nh * (a2 - 1.0) + 1.0;
    let t = nh * nh * (a2 + 1.0) + 1.0;
    let rel = |eps: f64, div: f64| {
        let g5 = 5.0 * eps / (1.0 - 5.0 * eps);
        2.0 * g5 * t / d + 3.0 * eps + div
    };
    let r = rel(EPS_DEVICE, 2.5 * EPS_DEVICE) + rel(EPS_CPU, EPS_CPU);
    // Second-order terms: below 1 % of the bound while it is under 10 %.
    (r < 0.1).then_some(Allow {
        rel: r * 1.01,
        ..Allow::ulps(0.0)
    })
}

/// Schlick F = f0 + (1 - f0) pow(1 - c, 5) (shading.wgsl).
///
/// pow is inherited from exp2(5 * log2(b)), b = 1 - c (Floating Point
/// Accuracy): log2's error (absolute 2^-21 on [0.5, 2], 3 ULP elsewhere)
/// times 5, plus the product's rounding, becomes a relative error of
/// ln 2 times that in exp2, which adds its own 3 + 2|y| ULP; b's own
/// rounding is raised to the 5th power (5 eps). The CPU computes b^5 in f64
/// and rounds once. The sum f0 + q of two non-negative terms adds one
/// rounding and weighs q's error by q / F.
fn schlick_allow(x: &[f64]) -> Option<Allow> {
    let (f0, c) = (x[0], x[1]);
    let b = 1.0 - c;
    if b <= 0.0 {
        return None;
    }
    let l = b.log2();
    let y = 5.0 * l;
    let abs_l = if b >= 0.5 {
        2f64.powi(-21)
    } else {
        3.0 * EPS_DEVICE * l.abs()
    };
    let e = EPS_DEVICE;
    let rel_p_dev =
        std::f64::consts::LN_2 * (5.0 * abs_l + e * y.abs()) + (3.0 + 2.0 * y.abs()) * e + 5.0 * e;
    let rel_p_cpu = EPS_CPU + 5.0 * EPS_CPU;
    let q = (1.0 - f0) * b.powi(5);
    let f = f0 + q;
    let rel = |rel_p: f64, eps: f64| (rel_p + 2.0 * eps) * q / f + eps;
    Some(Allow {
        rel: (rel(rel_p_dev, e) + rel(rel_p_cpu, EPS_CPU)) * 1.01,
        ..Allow::ulps(0.0)
    })
}

cases! {
    ggx_d => Case::new("shading.wgsl", "ggx_d", vec![Dom::F32In(0.0, 1.0), Dom::F32In(0.02, 1.0)]).per_point(
        ggx_allow,
        "per-point bound from the standard model of floating-point arithmetic with the \
         spec's reassociation and fusion; grows with the conditioning T / d near n.h -> 1",
    );
    schlick_pow => Case::new("shading.wgsl", "schlick_pow", vec![Dom::F32In(0.02, 1.0), Dom::F32In(0.0, 0.99999)])
        .per_point(
            schlick_allow,
            "per-point bound: pow inherited from exp2(5 log2(1 - c)) (Floating Point \
             Accuracy), weighed by its share of F",
        );
}

/// The packers of `pack_norm`, per result leaf: scale, signed, bits per
/// field, input components.
const PACKERS: [(f64, bool, u32, &[usize]); 4] = [
    (127.0, true, 8, &[0, 1, 2, 3]),
    (255.0, false, 8, &[0, 1, 2, 3]),
    (32767.0, true, 16, &[0, 1]),
    (65535.0, false, 16, &[2, 3]),
];

/// The f32 product `s * clamp(e)` of one packed field, as f64.
fn packed_product(scale: f64, signed: bool, e: f64) -> f64 {
    let e = e.clamp(if signed { -1.0 } else { 0.0 }, 1.0);
    f64::from(scale as f32 * e as f32)
}

/// Whether the f32 product of some field of point `v` is a half-integer:
/// there rounding half-way upwards (the spec's floor(0.5 + x)) and a
/// driver's other half-way rules part.
fn pack_tie(v: &[f64]) -> bool {
    PACKERS.iter().any(|&(scale, signed, _, comps)| {
        comps.iter().any(|&c| {
            let t = packed_product(scale, signed, v[c]);
            t - t.floor() == 0.5
        })
    })
}

/// pack4x8snorm/unorm and pack2x16snorm/unorm where the f32 product is
/// exactly half-way between two integers. WGSL ("Data Packing Built-in
/// Functions") defines each field as floor(0.5 + s * clamp(e)), which
/// rounds half-way cases upwards: pack4x8snorm(-0.5) holds -63. The CPU
/// evaluator must give a value the spec allows. The device must give either
/// one of those or the half-to-even rounding of the product (what Mesa
/// 22.3's software driver computes for naga's SPIR-V `PackSnorm4x8` and
/// friends, whose half-way direction SPIR-V leaves to the implementation);
/// how many fields took the second reading is printed.
#[test]
fn pack_norm_ties() {
    use shadegate::eval::Program;
    use std::collections::BTreeMap;
    let Some(dev) = gpu_common::device() else {
        return;
    };
    let shader = gpu_common::load("packing.wgsl");
    let program =
        Program::compile(&shader, "pack_norm", &BTreeMap::new()).unwrap_or_else(|d| panic!("{d}"));
    // (k + 0.5) / s for every scale, both signs: whichever of these rounds so
    // that the f32 product is exactly a half-integer is a tie point.
    let mut values = vec![-0.5f32, 0.5];
    for &(scale, _, _, _) in &PACKERS {
        for k in (0..scale as i64).step_by(((scale as i64) / 300).max(1) as usize) {
            let e = ((k as f64 + 0.5) / scale) as f32;
            values.extend([e, -e]);
        }
    }
    let mut points: Vec<[f64; 4]> = Vec::new();
    for (i, &x) in values.iter().enumerate() {
        let p = [0, 1, 2, 3].map(|j| f64::from(values[(i + j * 7) % values.len()]));
        let p = [f64::from(x), p[1], p[2], p[3]];
        if pack_tie(&p) {
            points.push(p);
        }
    }
    assert!(points.len() > 200, "only {} tie points", points.len());
    let cols_owned: Vec<Vec<u32>> = (0..4)
        .map(|c| points.iter().map(|p| (p[c] as f32).to_bits()).collect())
        .collect();
    let cols: Vec<&[u32]> = cols_owned.iter().map(|c| c.as_slice()).collect();
    let mut cpu = Vec::new();
    program.eval(&cols, &mut cpu);
    let gpu = dev
        .eval(&shader, "pack_norm", &BTreeMap::new(), &cols)
        .unwrap_or_else(|e| panic!("{e}"));
    let (mut fields, mut half_even) = (0, 0);
    for (i, p) in points.iter().enumerate() {
        for (leaf, &(scale, signed, width, comps)) in PACKERS.iter().enumerate() {
            for (f, &c) in comps.iter().enumerate() {
                let t = packed_product(scale, signed, p[c]);
                let allowed =
                    packed_allowed(scale, p[c].clamp(if signed { -1.0 } else { 0.0 }, 1.0));
                let field = |w: u32| {
                    let raw = (w >> (width * f as u32)) & ((1u32 << width) - 1);
                    let neg = signed && raw >> (width - 1) == 1;
                    i64::from(raw) - if neg { 1i64 << width } else { 0 }
                };
                let (c_v, g_v) = (field(cpu[leaf][i]), field(gpu[leaf][i]));
                assert!(
                    allowed.contains(&c_v),
                    "CPU leaf {leaf} field {f} at e = {}: {c_v}, the spec allows {allowed:?}",
                    p[c]
                );
                let even = t.round_ties_even() as i64;
                assert!(
                    allowed.contains(&g_v) || g_v == even,
                    "device leaf {leaf} field {f} at e = {}: {g_v}, the spec allows {allowed:?}",
                    p[c]
                );
                fields += 1;
                half_even += usize::from(!allowed.contains(&g_v));
            }
        }
    }
    println!(
        "pack*norm at {} tie points ({fields} fields) on {}: {half_even} fields rounded \
         half-to-even instead of the spec's floor(0.5 + x)",
        points.len(),
        dev.adapter().name
    );
}

/// A pointer to an array element passed to a function: the CPU evaluator
/// runs it; the device either runs it with the same results or, as with
/// naga 30, fails with an error that names the file and function (never a
/// crash of the whole run).
#[test]
fn pointer_to_element() {
    use shadegate::eval::Program;
    use shadegate::gpu::GpuError;
    use std::collections::BTreeMap;
    let Some(dev) = gpu_common::device() else {
        return;
    };
    let shader = gpu_common::load("pointer_element.wgsl");
    let program = Program::compile(&shader, "pointer_to_element", &BTreeMap::new())
        .unwrap_or_else(|d| panic!("{d}"));
    let cols_owned: Vec<Vec<u32>> =
        vec![vec![1, 2], vec![2, 3], vec![3, 4], vec![4, 5], vec![1, 6]];
    let cols: Vec<&[u32]> = cols_owned.iter().map(|c| c.as_slice()).collect();
    let mut cpu = Vec::new();
    program.eval(&cols, &mut cpu);
    assert_eq!((cpu[1][0], cpu[2][1]), (12, 14), "CPU: a[k & 3] += 10");
    match dev.eval(&shader, "pointer_to_element", &BTreeMap::new(), &cols) {
        Ok(gpu) => assert_eq!(gpu, cpu, "device and CPU differ"),
        Err(e @ GpuError::Pipeline { .. }) => {
            let text = e.to_string();
            assert!(
                text.contains("pointer_element.wgsl") && text.contains("`pointer_to_element`"),
                "{text}"
            );
            println!("known limitation, reported cleanly: {text}");
        }
        Err(e) => panic!("unexpected failure kind: {e}"),
    }
}

/// The f32 values a correctly rounded operation may return for the exact
/// value `x`: `x` itself when f32 holds it, else its two neighbours.
fn rounded_f32(x: f64) -> Vec<f64> {
    let n = x as f32;
    if f64::from(n) == x {
        return vec![x];
    }
    let (lo, hi) = if f64::from(n) < x {
        (n, n.next_up())
    } else {
        (n.next_down(), n)
    };
    vec![f64::from(lo), f64::from(hi)]
}

/// Integers the spec allows for floor(0.5 + s * e) with both operations
/// correctly rounded.
fn packed_allowed(s: f64, e: f64) -> Vec<i64> {
    let mut out = Vec::new();
    for t in rounded_f32(s * e) {
        for u in rounded_f32(0.5 + t) {
            out.push(u.floor() as i64);
        }
    }
    out
}

/// `pack_norm` results: leaf 0 pack4x8snorm(v), 1 pack4x8unorm(v),
/// 2 pack2x16snorm(v.xy), 3 pack2x16unorm(v.zw).
fn pack_norm_allowed(leaf: usize, v: &[f64], bits: u32) -> bool {
    let (scale, signed, width, comps) = PACKERS[leaf];
    comps.iter().enumerate().all(|(i, &c)| {
        let lo = if signed { -1.0 } else { 0.0 };
        let e = v[c].clamp(lo, 1.0);
        let field = (bits >> (width * i as u32)) & ((1u32 << width) - 1);
        let value = if signed {
            // two's complement of `width` bits
            i64::from(field)
                - if field >> (width - 1) == 1 {
                    1i64 << width
                } else {
                    0
                }
        } else {
            i64::from(field)
        };
        packed_allowed(scale, e).contains(&value)
    })
}
