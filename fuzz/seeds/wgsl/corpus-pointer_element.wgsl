// A pointer to an array element passed to a function. Valid WGSL that the
// CPU evaluator runs; naga 30's SPIR-V writer panics on it ("Expression [..]
// is not cached"), so the replay must report it as an error naming the
// function instead of crashing.

fn bump(p: ptr<function, i32>, d: i32) {
    *p += d;
}

fn pointer_to_element(v: array<i32, 4>, k: u32) -> array<i32, 4> {
    var a = v;
    bump(&a[k & 3u], 10);
    return a;
}
