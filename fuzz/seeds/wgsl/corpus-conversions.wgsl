// Value conversions and bit reinterpretation.

// Float to integer saturates at the largest source-type value that the
// target holds (WGSL "Floating Point Conversion").
fn float_to_int(x: f32) -> vec2<u32> {
    return vec2<u32>(bitcast<u32>(i32(x)), u32(x));
}

fn int_to_float(i: i32, u: u32) -> vec2<f32> {
    return vec2<f32>(f32(i), f32(u));
}

fn bool_conversions(x: f32, i: i32) -> vec4<u32> {
    return vec4<u32>(u32(bool(x)), u32(bool(i)), u32(x > 0.0), bitcast<u32>(f32(x < 0.0)));
}

fn bitcasts(x: f32, v: vec2<i32>) -> vec3<u32> {
    let f = bitcast<vec2<f32>>(v);
    return vec3<u32>(bitcast<u32>(x), bitcast<u32>(f.y), bitcast<u32>(bitcast<i32>(f.x)));
}
