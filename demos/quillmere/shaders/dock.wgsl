// Quillmere dock: planks and their wear. This file has no lighting of its
// own: it is checked together with harbour.wgsl (listed first in the suite's
// `shader`), whose stone_lit it calls.

struct Material {
    base: vec3<f32>,
    roughness: f32,
}

// A lit dock plank: its base colour times the harbour's Lambert term.
fn dock_plank(m: Material, n_dot_l: f32) -> vec3<f32> {
    return m.base * stone_lit(n_dot_l);
}

// How worn a plank is after `age` years, written through a pointer (the
// renderer's batch code calls it with a `var` of its own).
fn plank_wear(age: f32, wear: ptr<function, f32>) {
    *wear = 1.0 - exp(-age / 12.0);
}
