// Brackenfold garden furniture: shading library of the material preview,
// PLANTED COPY. Realistic mistakes are planted here on purpose (five here, more
// below brdf) so the gate can show it names them (see tests/gate/planted.rs):
//   d_ggx               roughness not squared (alpha = roughness)
//   brdf                roughness squared twice (alpha = roughness^4)
//   v_smith_correlated  missing clamp: NaN at a grazing direction
//   f_schlick           wrong Fresnel exponent (4 instead of 5)
//   diffuse_lambert     missing 1/pi
// Everything else is identical to shaders/brackenfold/materials.wgsl.
//
// The preview shows the finishes of the (fictional) Brackenfold range under a
// sun-and-sky light rig: anodised aluminium frames, powder-coated steel chairs,
// oiled teak table tops and glazed ceramic planters. The lit view calls
// `brdf`, which is written out by hand for speed; the preview's debug views
// ("distribution", "visibility", "fresnel", "diffuse") call the single terms
// below it. Directions point away from the surface; inputs are unit vectors.

const PI: f32 = 3.14159265358979;
const INV_PI: f32 = 0.318309886183791;
// Dielectric reflectance at normal incidence (4 %, common practice for the
// metallic workflow).
const DIELECTRIC_F0: f32 = 0.04;
// Cosines are held at or above this in the visibility debug view: the
// textbook form G2 / (4 n.l n.v) is 0/0 at a grazing direction.
const MIN_COSINE: f32 = 1e-4;

// Perceptual roughness (what the material editor shows) to GGX alpha.
fn alpha_from_roughness(roughness: f32) -> f32 {
    return roughness * roughness;
}

// Metallic workflow: reflectance at normal incidence.
fn material_f0(base_color: vec3<f32>, metallic: f32) -> vec3<f32> {
    return mix(vec3<f32>(DIELECTRIC_F0), base_color, metallic);
}

// Debug view "distribution": GGX / Trowbridge-Reitz D from perceptual
// roughness. sin^2 is formed as (1 - c)(1 + c), which keeps its digits near
// c = 1, where narrow lobes live.
fn d_ggx(n_dot_h: f32, roughness: f32) -> f32 {
    let alpha = roughness; // planted: roughness not squared
    let a2 = alpha * alpha;
    let s2 = (1.0 - n_dot_h) * (1.0 + n_dot_h);
    let d = s2 + n_dot_h * n_dot_h * a2;
    return a2 / (PI * d * d);
}

// Smith Lambda for GGX from a cosine (Heitz 2014, eq. 72 in tangent form).
fn smith_lambda(cos_theta: f32, a2: f32) -> f32 {
    let c2 = cos_theta * cos_theta;
    let tan2 = (1.0 - c2) / c2;
    return 0.5 * (sqrt(1.0 + a2 * tan2) - 1.0);
}

// Debug view "visibility": height-correlated Smith G2 over 4 n.l n.v, in the
// textbook form. Both cosines are held at MIN_COSINE or above.
fn v_smith_correlated(n_dot_v: f32, n_dot_l: f32, roughness: f32) -> f32 {
    let nv = n_dot_v; // planted: missing clamp (0/0 at grazing)
    let nl = n_dot_l;
    let alpha = alpha_from_roughness(roughness);
    let a2 = alpha * alpha;
    let g2 = 1.0 / (1.0 + smith_lambda(nv, a2) + smith_lambda(nl, a2));
    return g2 / (4.0 * nv * nl);
}

// Debug view "fresnel": Schlick's approximation, F90 = 1.
fn f_schlick(v_dot_h: f32, f0: vec3<f32>) -> vec3<f32> {
    let w = pow(1.0 - v_dot_h, 4.0); // planted: wrong exponent
    return f0 + (vec3<f32>(1.0) - f0) * w;
}

// Debug view "diffuse": Lambert.
fn diffuse_lambert(diffuse_color: vec3<f32>) -> vec3<f32> {
    return diffuse_color; // planted: missing 1/pi
}

// Burley's diffuse for unit albedo (used by the teak and ceramic presets'
// rough-diffuse option).
fn diffuse_burley(n_dot_v: f32, n_dot_l: f32, l_dot_h: f32, roughness: f32) -> f32 {
    let fd90 = 0.5 + 2.0 * roughness * l_dot_h * l_dot_h;
    let light = 1.0 + (fd90 - 1.0) * pow(1.0 - n_dot_l, 5.0);
    let view = 1.0 + (fd90 - 1.0) * pow(1.0 - n_dot_v, 5.0);
    return light * view * INV_PI;
}

// The lit view: Cook-Torrance with GGX, height-correlated Smith visibility,
// Schlick Fresnel and Lambert diffuse, metallic workflow. Linear RGB, 1/sr,
// without the n.l cosine. Black below the horizon.
fn brdf(n: vec3<f32>, v: vec3<f32>, l: vec3<f32>, base_color: vec3<f32>, metallic: f32, roughness: f32) -> vec3<f32> {
    let n_dot_v = dot(n, v);
    let n_dot_l = dot(n, l);
    if (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return vec3<f32>(0.0);
    }
    let h = normalize(v + l);
    let n_dot_h = clamp(dot(n, h), 0.0, 1.0);
    let v_dot_h = clamp(dot(v, h), 0.0, 1.0);
    let alpha = alpha_from_roughness(roughness * roughness); // planted: squared twice
    let a2 = alpha * alpha;

    // GGX, with sin^2 of the half angle from |n x h|^2: exact to a few units
    // in the last place even where n.h rounds to 1.
    let nxh = cross(n, h);
    let dd = dot(nxh, nxh) + n_dot_h * n_dot_h * a2;
    let d = a2 / (PI * dd * dd);

    // Height-correlated Smith visibility, finite at grazing.
    let gv = n_dot_l * sqrt(n_dot_v * n_dot_v * (1.0 - a2) + a2);
    let gl = n_dot_v * sqrt(n_dot_l * n_dot_l * (1.0 - a2) + a2);
    let vis = 0.5 / (gv + gl);

    let f0 = material_f0(base_color, metallic);
    let f = f0 + (vec3<f32>(1.0) - f0) * pow(1.0 - v_dot_h, 5.0);
    let diffuse = (1.0 - metallic) * base_color * INV_PI;
    return diffuse + f * (d * vis);
}

// ---- More planted mistakes: one copy of `brdf` per finish of the range, each
// with one mistake (the original is shaders/brackenfold/materials.wgsl).

// Oiled teak table tops: planted: pi typed as 3.14 in the distribution.
fn brdf_teak(n: vec3<f32>, v: vec3<f32>, l: vec3<f32>, base_color: vec3<f32>, metallic: f32, roughness: f32) -> vec3<f32> {
    let n_dot_v = dot(n, v);
    let n_dot_l = dot(n, l);
    if (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return vec3<f32>(0.0);
    }
    let h = normalize(v + l);
    let n_dot_h = clamp(dot(n, h), 0.0, 1.0);
    let v_dot_h = clamp(dot(v, h), 0.0, 1.0);
    let alpha = alpha_from_roughness(roughness);
    let a2 = alpha * alpha;

    // GGX, with sin^2 of the half angle from |n x h|^2: exact to a few units
    // in the last place even where n.h rounds to 1.
    let nxh = cross(n, h);
    let dd = dot(nxh, nxh) + n_dot_h * n_dot_h * a2;
    let d = a2 / (3.14 * dd * dd);

    // Height-correlated Smith visibility, finite at grazing.
    let gv = n_dot_l * sqrt(n_dot_v * n_dot_v * (1.0 - a2) + a2);
    let gl = n_dot_v * sqrt(n_dot_l * n_dot_l * (1.0 - a2) + a2);
    let vis = 0.5 / (gv + gl);

    let f0 = material_f0(base_color, metallic);
    let f = f0 + (vec3<f32>(1.0) - f0) * pow(1.0 - v_dot_h, 5.0);
    let diffuse = (1.0 - metallic) * base_color * INV_PI;
    return diffuse + f * (d * vis);
}

// Powder-coated steel chairs: planted: the metallic blend inverted.
fn brdf_steel(n: vec3<f32>, v: vec3<f32>, l: vec3<f32>, base_color: vec3<f32>, metallic: f32, roughness: f32) -> vec3<f32> {
    let n_dot_v = dot(n, v);
    let n_dot_l = dot(n, l);
    if (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return vec3<f32>(0.0);
    }
    let h = normalize(v + l);
    let n_dot_h = clamp(dot(n, h), 0.0, 1.0);
    let v_dot_h = clamp(dot(v, h), 0.0, 1.0);
    let alpha = alpha_from_roughness(roughness);
    let a2 = alpha * alpha;

    // GGX, with sin^2 of the half angle from |n x h|^2: exact to a few units
    // in the last place even where n.h rounds to 1.
    let nxh = cross(n, h);
    let dd = dot(nxh, nxh) + n_dot_h * n_dot_h * a2;
    let d = a2 / (PI * dd * dd);

    // Height-correlated Smith visibility, finite at grazing.
    let gv = n_dot_l * sqrt(n_dot_v * n_dot_v * (1.0 - a2) + a2);
    let gl = n_dot_v * sqrt(n_dot_l * n_dot_l * (1.0 - a2) + a2);
    let vis = 0.5 / (gv + gl);

    let f0 = mix(base_color, vec3<f32>(DIELECTRIC_F0), metallic);
    let f = f0 + (vec3<f32>(1.0) - f0) * pow(1.0 - v_dot_h, 5.0);
    let diffuse = (1.0 - metallic) * base_color * INV_PI;
    return diffuse + f * (d * vis);
}

// Glazed ceramic planters: planted: a dielectric F0 of 2 % instead of 4 %.
fn brdf_ceramic(n: vec3<f32>, v: vec3<f32>, l: vec3<f32>, base_color: vec3<f32>, metallic: f32, roughness: f32) -> vec3<f32> {
    let n_dot_v = dot(n, v);
    let n_dot_l = dot(n, l);
    if (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return vec3<f32>(0.0);
    }
    let h = normalize(v + l);
    let n_dot_h = clamp(dot(n, h), 0.0, 1.0);
    let v_dot_h = clamp(dot(v, h), 0.0, 1.0);
    let alpha = alpha_from_roughness(roughness);
    let a2 = alpha * alpha;

    // GGX, with sin^2 of the half angle from |n x h|^2: exact to a few units
    // in the last place even where n.h rounds to 1.
    let nxh = cross(n, h);
    let dd = dot(nxh, nxh) + n_dot_h * n_dot_h * a2;
    let d = a2 / (PI * dd * dd);

    // Height-correlated Smith visibility, finite at grazing.
    let gv = n_dot_l * sqrt(n_dot_v * n_dot_v * (1.0 - a2) + a2);
    let gl = n_dot_v * sqrt(n_dot_l * n_dot_l * (1.0 - a2) + a2);
    let vis = 0.5 / (gv + gl);

    let f0 = mix(vec3<f32>(0.02), base_color, metallic);
    let f = f0 + (vec3<f32>(1.0) - f0) * pow(1.0 - v_dot_h, 5.0);
    let diffuse = (1.0 - metallic) * base_color * INV_PI;
    return diffuse + f * (d * vis);
}

// Outdoor cushion fabric: planted: diffuse colour kept for metals.
fn brdf_cushion(n: vec3<f32>, v: vec3<f32>, l: vec3<f32>, base_color: vec3<f32>, metallic: f32, roughness: f32) -> vec3<f32> {
    let n_dot_v = dot(n, v);
    let n_dot_l = dot(n, l);
    if (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return vec3<f32>(0.0);
    }
    let h = normalize(v + l);
    let n_dot_h = clamp(dot(n, h), 0.0, 1.0);
    let v_dot_h = clamp(dot(v, h), 0.0, 1.0);
    let alpha = alpha_from_roughness(roughness);
    let a2 = alpha * alpha;

    // GGX, with sin^2 of the half angle from |n x h|^2: exact to a few units
    // in the last place even where n.h rounds to 1.
    let nxh = cross(n, h);
    let dd = dot(nxh, nxh) + n_dot_h * n_dot_h * a2;
    let d = a2 / (PI * dd * dd);

    // Height-correlated Smith visibility, finite at grazing.
    let gv = n_dot_l * sqrt(n_dot_v * n_dot_v * (1.0 - a2) + a2);
    let gl = n_dot_v * sqrt(n_dot_l * n_dot_l * (1.0 - a2) + a2);
    let vis = 0.5 / (gv + gl);

    let f0 = material_f0(base_color, metallic);
    let f = f0 + (vec3<f32>(1.0) - f0) * pow(1.0 - v_dot_h, 5.0);
    let diffuse = base_color * INV_PI;
    return diffuse + f * (d * vis);
}

// Parasol canvas: planted: Fresnel evaluated at n.v instead of v.h.
fn brdf_parasol(n: vec3<f32>, v: vec3<f32>, l: vec3<f32>, base_color: vec3<f32>, metallic: f32, roughness: f32) -> vec3<f32> {
    let n_dot_v = dot(n, v);
    let n_dot_l = dot(n, l);
    if (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return vec3<f32>(0.0);
    }
    let h = normalize(v + l);
    let n_dot_h = clamp(dot(n, h), 0.0, 1.0);
    let v_dot_h = clamp(dot(v, h), 0.0, 1.0);
    let alpha = alpha_from_roughness(roughness);
    let a2 = alpha * alpha;

    // GGX, with sin^2 of the half angle from |n x h|^2: exact to a few units
    // in the last place even where n.h rounds to 1.
    let nxh = cross(n, h);
    let dd = dot(nxh, nxh) + n_dot_h * n_dot_h * a2;
    let d = a2 / (PI * dd * dd);

    // Height-correlated Smith visibility, finite at grazing.
    let gv = n_dot_l * sqrt(n_dot_v * n_dot_v * (1.0 - a2) + a2);
    let gl = n_dot_v * sqrt(n_dot_l * n_dot_l * (1.0 - a2) + a2);
    let vis = 0.5 / (gv + gl);

    let f0 = material_f0(base_color, metallic);
    let f = f0 + (vec3<f32>(1.0) - f0) * pow(1.0 - n_dot_v, 5.0);
    let diffuse = (1.0 - metallic) * base_color * INV_PI;
    return diffuse + f * (d * vis);
}

// Lantern brass: planted: the fast visibility approximation for the exact one.
fn brdf_lantern(n: vec3<f32>, v: vec3<f32>, l: vec3<f32>, base_color: vec3<f32>, metallic: f32, roughness: f32) -> vec3<f32> {
    let n_dot_v = dot(n, v);
    let n_dot_l = dot(n, l);
    if (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return vec3<f32>(0.0);
    }
    let h = normalize(v + l);
    let n_dot_h = clamp(dot(n, h), 0.0, 1.0);
    let v_dot_h = clamp(dot(v, h), 0.0, 1.0);
    let alpha = alpha_from_roughness(roughness);
    let a2 = alpha * alpha;

    // GGX, with sin^2 of the half angle from |n x h|^2: exact to a few units
    // in the last place even where n.h rounds to 1.
    let nxh = cross(n, h);
    let dd = dot(nxh, nxh) + n_dot_h * n_dot_h * a2;
    let d = a2 / (PI * dd * dd);

    // Height-correlated Smith visibility, finite at grazing.
    let gv = n_dot_l * (n_dot_v * (1.0 - alpha) + alpha);
    let gl = n_dot_v * (n_dot_l * (1.0 - alpha) + alpha);
    let vis = 0.5 / (gv + gl);

    let f0 = material_f0(base_color, metallic);
    let f = f0 + (vec3<f32>(1.0) - f0) * pow(1.0 - v_dot_h, 5.0);
    let diffuse = (1.0 - metallic) * base_color * INV_PI;
    return diffuse + f * (d * vis);
}

// Painted trellis wood: planted: the specular lobe halved.
fn brdf_trellis(n: vec3<f32>, v: vec3<f32>, l: vec3<f32>, base_color: vec3<f32>, metallic: f32, roughness: f32) -> vec3<f32> {
    let n_dot_v = dot(n, v);
    let n_dot_l = dot(n, l);
    if (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return vec3<f32>(0.0);
    }
    let h = normalize(v + l);
    let n_dot_h = clamp(dot(n, h), 0.0, 1.0);
    let v_dot_h = clamp(dot(v, h), 0.0, 1.0);
    let alpha = alpha_from_roughness(roughness);
    let a2 = alpha * alpha;

    // GGX, with sin^2 of the half angle from |n x h|^2: exact to a few units
    // in the last place even where n.h rounds to 1.
    let nxh = cross(n, h);
    let dd = dot(nxh, nxh) + n_dot_h * n_dot_h * a2;
    let d = a2 / (PI * dd * dd);

    // Height-correlated Smith visibility, finite at grazing.
    let gv = n_dot_l * sqrt(n_dot_v * n_dot_v * (1.0 - a2) + a2);
    let gl = n_dot_v * sqrt(n_dot_l * n_dot_l * (1.0 - a2) + a2);
    let vis = 0.5 / (gv + gl);

    let f0 = material_f0(base_color, metallic);
    let f = f0 + (vec3<f32>(1.0) - f0) * pow(1.0 - v_dot_h, 5.0);
    let diffuse = (1.0 - metallic) * base_color * INV_PI;
    return diffuse + 0.5 * f * (d * vis);
}

// Slatted bench wood: planted: the distribution evaluated at n.v instead of n.h.
fn brdf_bench(n: vec3<f32>, v: vec3<f32>, l: vec3<f32>, base_color: vec3<f32>, metallic: f32, roughness: f32) -> vec3<f32> {
    let n_dot_v = dot(n, v);
    let n_dot_l = dot(n, l);
    if (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return vec3<f32>(0.0);
    }
    let h = normalize(v + l);
    let n_dot_h = clamp(dot(n, h), 0.0, 1.0);
    let v_dot_h = clamp(dot(v, h), 0.0, 1.0);
    let alpha = alpha_from_roughness(roughness);
    let a2 = alpha * alpha;

    // GGX, with sin^2 of the half angle from |n x h|^2: exact to a few units
    // in the last place even where n.h rounds to 1.
    let nxh = cross(n, v);
    let dd = dot(nxh, nxh) + n_dot_v * n_dot_v * a2;
    let d = a2 / (PI * dd * dd);

    // Height-correlated Smith visibility, finite at grazing.
    let gv = n_dot_l * sqrt(n_dot_v * n_dot_v * (1.0 - a2) + a2);
    let gl = n_dot_v * sqrt(n_dot_l * n_dot_l * (1.0 - a2) + a2);
    let vis = 0.5 / (gv + gl);

    let f0 = material_f0(base_color, metallic);
    let f = f0 + (vec3<f32>(1.0) - f0) * pow(1.0 - v_dot_h, 5.0);
    let diffuse = (1.0 - metallic) * base_color * INV_PI;
    return diffuse + f * (d * vis);
}

// Anodised aluminium frames: the specular Fresnel comes from the debug view's
// f_schlick, so it inherits that function's planted exponent.
fn brdf_frame(n: vec3<f32>, v: vec3<f32>, l: vec3<f32>, base_color: vec3<f32>, metallic: f32, roughness: f32) -> vec3<f32> {
    let n_dot_v = dot(n, v);
    let n_dot_l = dot(n, l);
    if (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return vec3<f32>(0.0);
    }
    let h = normalize(v + l);
    let n_dot_h = clamp(dot(n, h), 0.0, 1.0);
    let v_dot_h = clamp(dot(v, h), 0.0, 1.0);
    let alpha = alpha_from_roughness(roughness);
    let a2 = alpha * alpha;

    // GGX, with sin^2 of the half angle from |n x h|^2: exact to a few units
    // in the last place even where n.h rounds to 1.
    let nxh = cross(n, h);
    let dd = dot(nxh, nxh) + n_dot_h * n_dot_h * a2;
    let d = a2 / (PI * dd * dd);

    // Height-correlated Smith visibility, finite at grazing.
    let gv = n_dot_l * sqrt(n_dot_v * n_dot_v * (1.0 - a2) + a2);
    let gl = n_dot_v * sqrt(n_dot_l * n_dot_l * (1.0 - a2) + a2);
    let vis = 0.5 / (gv + gl);

    let f0 = material_f0(base_color, metallic);
    let f = f_schlick(v_dot_h, f0);
    let diffuse = (1.0 - metallic) * base_color * INV_PI;
    return diffuse + f * (d * vis);
}

// Bit-neutral refactor (no mistake): the Fresnel weight gets a name.
fn brdf_renamed(n: vec3<f32>, v: vec3<f32>, l: vec3<f32>, base_color: vec3<f32>, metallic: f32, roughness: f32) -> vec3<f32> {
    let n_dot_v = dot(n, v);
    let n_dot_l = dot(n, l);
    if (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return vec3<f32>(0.0);
    }
    let h = normalize(v + l);
    let n_dot_h = clamp(dot(n, h), 0.0, 1.0);
    let v_dot_h = clamp(dot(v, h), 0.0, 1.0);
    let alpha = alpha_from_roughness(roughness);
    let a2 = alpha * alpha;

    // GGX, with sin^2 of the half angle from |n x h|^2: exact to a few units
    // in the last place even where n.h rounds to 1.
    let nxh = cross(n, h);
    let dd = dot(nxh, nxh) + n_dot_h * n_dot_h * a2;
    let d = a2 / (PI * dd * dd);

    // Height-correlated Smith visibility, finite at grazing.
    let gv = n_dot_l * sqrt(n_dot_v * n_dot_v * (1.0 - a2) + a2);
    let gl = n_dot_v * sqrt(n_dot_l * n_dot_l * (1.0 - a2) + a2);
    let vis = 0.5 / (gv + gl);

    let f0 = material_f0(base_color, metallic);
    let grazing = pow(1.0 - v_dot_h, 5.0);
    let f = f0 + (vec3<f32>(1.0) - f0) * grazing;
    let diffuse = (1.0 - metallic) * base_color * INV_PI;
    return diffuse + f * (d * vis);
}

// Algebraically equivalent refactor (no mistake): 0.5 / (a + b) as 1 / (2a + 2b).
fn brdf_equivalent(n: vec3<f32>, v: vec3<f32>, l: vec3<f32>, base_color: vec3<f32>, metallic: f32, roughness: f32) -> vec3<f32> {
    let n_dot_v = dot(n, v);
    let n_dot_l = dot(n, l);
    if (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return vec3<f32>(0.0);
    }
    let h = normalize(v + l);
    let n_dot_h = clamp(dot(n, h), 0.0, 1.0);
    let v_dot_h = clamp(dot(v, h), 0.0, 1.0);
    let alpha = alpha_from_roughness(roughness);
    let a2 = alpha * alpha;

    // GGX, with sin^2 of the half angle from |n x h|^2: exact to a few units
    // in the last place even where n.h rounds to 1.
    let nxh = cross(n, h);
    let dd = dot(nxh, nxh) + n_dot_h * n_dot_h * a2;
    let d = a2 / (PI * dd * dd);

    // Height-correlated Smith visibility, finite at grazing.
    let gv = n_dot_l * sqrt(n_dot_v * n_dot_v * (1.0 - a2) + a2);
    let gl = n_dot_v * sqrt(n_dot_l * n_dot_l * (1.0 - a2) + a2);
    let vis = 1.0 / (2.0 * gv + 2.0 * gl);

    let f0 = material_f0(base_color, metallic);
    let f = f0 + (vec3<f32>(1.0) - f0) * pow(1.0 - v_dot_h, 5.0);
    let diffuse = (1.0 - metallic) * base_color * INV_PI;
    return diffuse + f * (d * vis);
}
