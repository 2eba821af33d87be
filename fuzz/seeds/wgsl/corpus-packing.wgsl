// Data packing built-ins.

fn pack_norm(v: vec4<f32>) -> vec4<u32> {
    return vec4<u32>(pack4x8snorm(v), pack4x8unorm(v), pack2x16snorm(v.xy), pack2x16unorm(v.zw));
}

fn pack_half(v: vec2<f32>) -> u32 {
    return pack2x16float(v);
}

struct Unpacked {
    s8: vec4<f32>,
    u8: vec4<f32>,
    s16: vec2<f32>,
    u16: vec2<f32>,
}

fn unpack_norm(a: u32) -> Unpacked {
    return Unpacked(unpack4x8snorm(a), unpack4x8unorm(a), unpack2x16snorm(a), unpack2x16unorm(a));
}

fn unpack_half(a: u32) -> vec2<f32> {
    return unpack2x16float(a);
}
