// Integer semantics: wrapping arithmetic, division and remainder special
// cases, shifts, comparisons, integer built-ins, bit manipulation and the
// packed 8-bit integer built-ins. Every result must match bit for bit.

fn int_arith(a: i32, b: i32) -> vec4<i32> {
    return vec4<i32>(a + b, a - b, a * b, -a);
}

fn uint_arith(a: u32, b: u32) -> vec4<u32> {
    return vec4<u32>(a + b, a - b, a * b, ~a);
}

fn int_div_rem(a: i32, b: i32) -> vec2<i32> {
    return vec2<i32>(a / b, a % b);
}

fn uint_div_rem(a: u32, b: u32) -> vec2<u32> {
    return vec2<u32>(a / b, a % b);
}

fn shifts(a: i32, u: u32, s: u32) -> vec4<u32> {
    return vec4<u32>(bitcast<u32>(a << s), bitcast<u32>(a >> s), u << s, u >> s);
}

fn int_compare(a: i32, b: i32) -> vec4<bool> {
    return vec4<bool>(a < b, a <= b, a == b, bitcast<u32>(a) < bitcast<u32>(b));
}

fn int_builtins(a: i32, b: i32) -> vec4<i32> {
    return vec4<i32>(abs(a), min(a, b), max(a, b), sign(a) + 4 * clamp(a, -3, 5));
}

fn bit_counts(a: u32) -> vec4<u32> {
    return vec4<u32>(countOneBits(a), countLeadingZeros(a), countTrailingZeros(a), reverseBits(a));
}

fn first_bits(a: u32, b: i32) -> vec4<u32> {
    return vec4<u32>(
        firstLeadingBit(a),
        firstTrailingBit(a),
        bitcast<u32>(firstLeadingBit(b)),
        bitcast<u32>(firstTrailingBit(b)),
    );
}

fn extract_insert(e: u32, n: u32, offset: u32, count: u32) -> vec3<u32> {
    return vec3<u32>(
        extractBits(e, offset, count),
        bitcast<u32>(extractBits(bitcast<i32>(e), offset, count)),
        insertBits(e, n, offset, count),
    );
}

fn packed_int(a: vec4<i32>, b: vec4<u32>) -> vec4<u32> {
    return vec4<u32>(pack4xI8(a), pack4xU8(b), pack4xI8Clamp(a), pack4xU8Clamp(b));
}

struct Unpacked {
    signed: vec4<i32>,
    unsigned: vec4<u32>,
}

fn unpacked_int(a: u32) -> Unpacked {
    return Unpacked(unpack4xI8(a), unpack4xU8(a));
}

fn dot_packed(a: u32, b: u32) -> vec2<u32> {
    return vec2<u32>(bitcast<u32>(dot4I8Packed(a, b)), dot4U8Packed(a, b));
}

fn vector_int_ops(a: vec3<i32>, b: vec3<i32>) -> vec3<i32> {
    return a * b + a / b - (a % b);
}
