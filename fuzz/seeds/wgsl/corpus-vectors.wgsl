// Swizzles, vector construction and indexing: moves only, so every bit must
// survive.

fn swizzles(v: vec4<f32>) -> vec4<f32> {
    let a = v.wzyx;
    let b = vec4<f32>(v.xy, v.zz);
    return vec4<f32>(a.x, b.w, a.yz).yxwz;
}

fn swizzle_store(v: vec3<i32>, s: i32, k: u32) -> vec3<i32> {
    var w = v;
    w.y = s;
    w[k % 3u] += 1;
    w = w.zxy;
    return w;
}

fn vec_index(v: vec4<u32>, i: u32) -> u32 {
    return v[i & 3u];
}

fn select_vec(a: vec3<f32>, b: vec3<f32>, c: vec3<bool>, s: bool) -> vec4<f32> {
    let m = select(a, b, c);
    return vec4<f32>(m.xy, select(a.z, b.z, s), select(m.x, m.y, c.z && s));
}
