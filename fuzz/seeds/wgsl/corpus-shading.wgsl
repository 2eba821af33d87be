// Shading-style float math for the replay differential test. Each function
// has a float result whose bound is derived in tests/replay_corpus.rs.

const PI: f32 = 3.14159265358979;

// GGX / Trowbridge-Reitz normal distribution, in source order.
fn ggx_d(n_dot_h: f32, alpha: f32) -> f32 {
    let a2 = alpha * alpha;
    let d = n_dot_h * n_dot_h * (a2 - 1.0) + 1.0;
    return a2 / (PI * d * d);
}

// Schlick's Fresnel approximation with pow(x, 5.0).
fn schlick_pow(f0: f32, cos_theta: f32) -> f32 {
    return f0 + (1.0 - f0) * pow(1.0 - cos_theta, 5.0);
}
