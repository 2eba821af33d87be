// ptr<function> arguments, arrays and structs passed by value, private
// variables. (A pointer to an array element passed to a function is in
// pointer_element.wgsl: the module that holds it does not reach the driver.)

fn swap_i(p: ptr<function, i32>, q: ptr<function, i32>) {
    let t = *p;
    *p = *q;
    *q = t;
}

fn bump(p: ptr<function, i32>, d: i32) {
    *p += d;
}

fn pointer_args(a: i32, b: i32) -> vec2<i32> {
    var x = a;
    var y = b;
    swap_i(&x, &y);
    bump(&x, 3);
    bump(&y, x);
    return vec2<i32>(x, y);
}

fn set_elem(p: ptr<function, array<i32, 4>>, i: u32, v: i32) {
    (*p)[i & 3u] = v;
}

fn pointer_array(v: array<i32, 4>, k: u32) -> array<i32, 4> {
    var a = v;
    set_elem(&a, k, a[0] + a[3]);
    set_elem(&a, k + 1u, a[(k + 1u) & 3u] + 10);
    return a;
}

struct Surface {
    albedo: vec3<f32>,
    roughness: f32,
    flags: u32,
    lit: bool,
}

fn tint(p: ptr<function, Surface>, k: u32) {
    (*p).albedo = (*p).albedo.zyx;
    (*p).flags |= 1u << (k & 31u);
    (*p).lit = !(*p).lit;
}

fn pointer_struct(s: Surface, k: u32) -> Surface {
    var t = s;
    tint(&t, k);
    let r = t.roughness;
    t.roughness = t.albedo.x;
    t.albedo.x = r;
    return t;
}

var<private> counter: i32 = 5;

fn next_count(d: i32) -> i32 {
    counter += d;
    return counter;
}

fn private_var(x: i32) -> i32 {
    let a = next_count(x);
    let b = next_count(2);
    return a * 1000 + b;
}
