// Matrix layout and products. The test feeds integers of magnitude <= 16, so
// every product and partial sum is an integer far below 2^24: exactly
// representable, whatever order or fusion the driver picks.

fn mat_vec(m: mat3x3<f32>, v: vec3<f32>) -> vec3<f32> {
    return m * v;
}

fn vec_mat(v: vec3<f32>, m: mat2x3<f32>) -> vec2<f32> {
    return v * m;
}

fn mat_mat(a: mat2x3<f32>, b: mat4x2<f32>) -> mat4x3<f32> {
    return a * b;
}

fn transpose_scale(m: mat2x4<f32>, s: f32) -> mat4x2<f32> {
    return transpose(m) * s;
}

fn mat_column(m: mat3x2<f32>, i: i32) -> vec2<f32> {
    return m[clamp(i, 0, 2)] + m[2 - clamp(i, 0, 2)].yx;
}

fn mat_add(a: mat2x2<f32>, b: mat2x2<f32>) -> mat2x2<f32> {
    return a + b - a * 2.0;
}

fn dot_cross(a: vec3<f32>, b: vec3<f32>) -> vec4<f32> {
    return vec4<f32>(cross(a, b), dot(a, b));
}
