// Functions whose rounding behaviour is analysed by hand in
// tests/eval/precision.rs. Line numbers matter to the tests.
enable f16;

const PI_H: f16 = 3.140625h;

// GGX distribution, textbook form, in f16: sin² formed as 1 - (n·h)².
fn ggx_textbook_f16(n: vec3<f16>, h: vec3<f16>, alpha: f16) -> f16 {
    let a2 = alpha * alpha;
    let n_dot_h = dot(n, h);
    let c2 = n_dot_h * n_dot_h;
    let s2 = 1.0h - c2;
    let d = c2 * a2 + s2;
    return a2 / (PI_H * d * d);
}

// The same distribution with sin² from a cross product (no cancellation),
// clamped to the largest finite f16.
fn ggx_cross_f16(n: vec3<f16>, h: vec3<f16>, alpha: f16) -> f16 {
    let nxh = cross(n, h);
    let a = dot(n, h) * alpha;
    let k = alpha / (dot(nxh, nxh) + a * a);
    let d = k * k * (1.0h / PI_H);
    return min(d, 65504.0h);
}

// Benign cancellation: the operands are exact inputs, so the difference is
// exact (Sterbenz) however many leading bits cancel.
fn benign(x: f32, y: f32) -> f32 {
    let d = x - y;
    return d * 2.0;
}

// Catastrophic in f32: x² rounds, then 1 - x² cancels near x = 1.
fn one_minus_square(x: f32) -> f32 {
    let x2 = x * x;
    return 1.0 - x2;
}

// The cure for it: (1 - x)(1 + x), no cancellation of rounded values.
fn one_minus_square_factored(x: f32) -> f32 {
    return (1.0 - x) * (1.0 + x);
}

// Subnormal results in f16: a product below 2^-14.
fn tiny_product_f16(x: f16, y: f16) -> f16 {
    let p = x * y;
    return p * 1024.0h;
}

// An amplifier: pow with an integral exponent multiplies the relative
// error of its rounded base by the exponent.
fn pow_amplifier(x: f32) -> f32 {
    let y = x * 1.0000001;
    return pow(y, 8.0);
}

// Two roundings that mostly undo each other: `x * 3` rounds, and the
// division by 3 often rounds back to x.
fn times_three_over_three(x: f32) -> f32 {
    let y = x * 3.0;
    return y / 3.0;
}

// An f16 port of the GGX distribution's peak (h = n), 1 / (pi alpha^2) with
// alpha = roughness^2, and its f32 twin: the f16 result overflows for
// roughness below about 0.047, and alpha^2 is subnormal in f16 below about
// 0.088.
fn ggx_peak_f16(roughness: f16) -> f16 {
    let alpha = roughness * roughness;
    let a2 = alpha * alpha;
    return 1.0h / (PI_H * a2);
}

fn ggx_peak_f32(roughness: f32) -> f32 {
    let alpha = roughness * roughness;
    let a2 = alpha * alpha;
    return 1.0 / (3.140625 * a2);
}
