enable f16;

// f16 arithmetic and conversions.

fn half_add_mul(a: f16, b: f16) -> vec3<f16> {
    return vec3<f16>(a + b, a - b, a * b);
}

fn half_div(a: f16, b: f16) -> f16 {
    return a / b;
}

fn half_from_f32(x: f32) -> f16 {
    return f16(x);
}

fn half_to_f32(h: vec2<f16>) -> vec2<f32> {
    return vec2<f32>(h);
}

// Small integers: every product and sum is exact in f16 (below 2^11).
fn half_mat_vec(m: mat2x2<f16>, v: vec2<f16>) -> vec2<f16> {
    return m * v;
}
