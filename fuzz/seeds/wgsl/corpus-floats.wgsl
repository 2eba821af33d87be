// Float built-ins, each alone, so its WGSL accuracy bound applies directly.

fn exact_builtins(x: f32, y: f32) -> array<f32, 10> {
    return array<f32, 10>(
        abs(x), floor(x), ceil(x), trunc(x), round(x), sign(x),
        min(x, y), max(x, y), step(x, y), saturate(x),
    );
}

fn fract_f(x: f32) -> f32 {
    return fract(x);
}

fn divide(x: f32, y: f32) -> f32 {
    return x / y;
}

fn sqrt_f(x: f32) -> f32 {
    return sqrt(x);
}

fn inverse_sqrt_f(x: f32) -> f32 {
    return inverseSqrt(x);
}

fn exp2_f(x: f32) -> f32 {
    return exp2(x);
}

fn log2_f(x: f32) -> f32 {
    return log2(x);
}

fn sin_cos(x: f32) -> vec2<f32> {
    return vec2<f32>(sin(x), cos(x));
}
