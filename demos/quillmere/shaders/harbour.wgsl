// Quillmere: the shading library of an invented harbour-town game (wet
// cobbles, tarred rope, brass lamps). Demo data for shadegate; every function
// here is judged by the suite beside it, with no wrapper functions.
enable f16;

const PI: f32 = 3.14159265358979;

// Diffuse of the harbour stone, lit: Lambert times the cosine.
fn stone_lit(n_dot_l: f32) -> f32 {
    return max(n_dot_l, 0.0) / PI;
}

// GGX normal distribution from the half vector (normal +z).
fn cobble_ndf(h: vec3<f32>, alpha: f32) -> f32 {
    let a2 = alpha * alpha;
    let c = h.z;
    let s2 = max(1.0 - c * c, 0.0);
    let d = s2 + c * c * a2;
    return a2 / (PI * d * d);
}

// The same NDF from a cosine and a perceptual roughness.
fn cobble_ndf_roughness(n_dot_h: f32, roughness: f32) -> f32 {
    return cobble_ndf(vec3<f32>(sqrt(max(1.0 - n_dot_h * n_dot_h, 0.0)), 0.0, n_dot_h), roughness * roughness);
}

// The f16 port of the NDF for the lamp-lit wet cobbles.
fn cobble_ndf_f16(n_dot_h: f16, alpha: f16) -> f16 {
    let a2 = alpha * alpha;
    let d = n_dot_h * n_dot_h * (a2 - 1.0h) + 1.0h;
    return a2 / (3.140625h * d * d);
}

// Specular lobe of wet cobbles: GGX D times height-correlated Smith V (F = 1).
fn cobble_specular(v: vec3<f32>, l: vec3<f32>, alpha: f32) -> f32 {
    let h = normalize(v + l);
    let a2 = alpha * alpha;
    let nv = max(v.z, 1e-4);
    let nl = max(l.z, 1e-4);
    let gv = nl * sqrt(nv * nv * (1.0 - a2) + a2);
    let gl = nv * sqrt(nl * nl * (1.0 - a2) + a2);
    return cobble_ndf(h, alpha) * 0.5 / (gv + gl);
}

// Masking of the cobbles' microfacets seen from v: Smith's G1 for GGX.
fn cobble_masking(v: vec3<f32>, alpha: f32) -> f32 {
    let a2 = alpha * alpha;
    let c = max(v.z, 1e-4);
    return 2.0 * c / (c + sqrt(a2 + (1.0 - a2) * c * c));
}

// Schlick Fresnel of the brass lamp glass.
fn lamp_fresnel(v_dot_h: f32, f0: f32) -> f32 {
    let m = 1.0 - v_dot_h;
    let m2 = m * m;
    return f0 + (1.0 - f0) * m2 * m2 * m;
}

// sRGB transfer of the harbour's colour grading (IEC 61966-2-1).
fn srgb_encode(c: f32) -> f32 {
    if (c <= 0.0031308) { return 12.92 * c; }
    return 1.055 * pow(c, 1.0 / 2.4) - 0.055;
}
fn srgb_decode(e: f32) -> f32 {
    if (e <= 0.04045) { return e / 12.92; }
    return pow((e + 0.055) / 1.055, 2.4);
}

// Tone curve of the fog-lit night scenes (a fitted filmic curve).
fn fog_tone(x: f32) -> f32 {
    return saturate(x * (2.51 * x + 0.03) / (x * (2.43 * x + 0.59) + 0.14));
}
