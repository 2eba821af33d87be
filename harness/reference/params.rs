//! Parameter domains and example arguments of the registered models: one [`ParamSpec`]
//! per parameter meaning (name, one line, range), the typical unit vectors and argument
//! lists the registry's examples are built from, and the helpers that read and write
//! three-component values in a flattened argument or output list.

use super::registry::{ParamKind, ParamSpec};
use super::vec3::Vec3;

pub(super) fn v3(a: &[f64], i: usize) -> Vec3 {
    [a[i], a[i + 1], a[i + 2]]
}

pub(super) fn put3(out: &mut [f64], v: Vec3) {
    out[..3].copy_from_slice(&v);
}

pub(super) const fn scalar(name: &'static str, doc: &'static str, lo: f64, hi: f64) -> ParamSpec {
    ParamSpec {
        name,
        kind: ParamKind::Scalar,
        doc,
        range: (lo, hi),
    }
}

pub(super) const fn vector(name: &'static str, doc: &'static str, lo: f64, hi: f64) -> ParamSpec {
    ParamSpec {
        name,
        kind: ParamKind::Vec3,
        doc,
        range: (lo, hi),
    }
}

pub(super) const N_DOT_H: ParamSpec = scalar(
    "n_dot_h",
    "cosine between normal and half vector",
    -1.0,
    1.0,
);
pub(super) const T_DOT_H: ParamSpec = scalar("t_dot_h", "half vector along the tangent", -1.0, 1.0);
pub(super) const B_DOT_H: ParamSpec =
    scalar("b_dot_h", "half vector along the bitangent", -1.0, 1.0);
pub(super) const N_DOT_V: ParamSpec =
    scalar("n_dot_v", "cosine between normal and view", -1.0, 1.0);
pub(super) const N_DOT_L: ParamSpec =
    scalar("n_dot_l", "cosine between normal and light", -1.0, 1.0);
pub(super) const V_DOT_H: ParamSpec =
    scalar("v_dot_h", "cosine of incidence on the facet", 0.0, 1.0);
pub(super) const L_DOT_H: ParamSpec =
    scalar("l_dot_h", "cosine between light and half vector", 0.0, 1.0);
pub(super) const ALPHA: ParamSpec =
    scalar("alpha", "microfacet width (roughness squared)", 0.0, 1.0);
pub(super) const ALPHA_X: ParamSpec =
    scalar("alpha_x", "microfacet width along the tangent", 0.0, 1.0);
pub(super) const ALPHA_Y: ParamSpec =
    scalar("alpha_y", "microfacet width along the bitangent", 0.0, 1.0);
pub(super) const EXPONENT: ParamSpec = scalar("exponent", "Blinn-Phong exponent", 0.0, 1.0e4);
pub(super) const ROUGHNESS: ParamSpec = scalar("roughness", "perceptual roughness", 0.0, 1.0);
pub(super) const MIN_ROUGHNESS: ParamSpec = scalar(
    "min_roughness",
    "lower bound on perceptual roughness",
    0.0,
    1.0,
);
pub(super) const K: ParamSpec = scalar("k", "Schlick masking constant", 0.0, 1.0);
pub(super) const F0: ParamSpec = scalar("f0", "reflectance at normal incidence", 0.0, 1.0);
pub(super) const F90: ParamSpec = scalar("f90", "reflectance at grazing incidence", 0.0, 1.0);
pub(super) const F0_RGB: ParamSpec = vector("f0", "reflectance at normal incidence", 0.0, 1.0);
pub(super) const IOR: ParamSpec = scalar("ior", "relative index of refraction", 0.01, 10.0);
pub(super) const IOR_RGB: ParamSpec = vector("ior", "refractive index (real part)", 0.01, 10.0);
pub(super) const EXTINCTION: ParamSpec = scalar("k", "extinction coefficient", 0.0, 20.0);
pub(super) const EXTINCTION_RGB: ParamSpec = vector("k", "extinction coefficient", 0.0, 20.0);
pub(super) const ALBEDO: ParamSpec = vector("albedo", "diffuse albedo", 0.0, 1.0);
pub(super) const BASE_COLOR: ParamSpec = vector("base_color", "linear base colour", 0.0, 1.0);
pub(super) const METALLIC: ParamSpec = scalar("metallic", "0 dielectric, 1 metal", 0.0, 1.0);
pub(super) const REFLECTANCE: ParamSpec =
    scalar("reflectance", "dielectric reflectance parameter", 0.0, 1.0);
pub(super) const N: ParamSpec = vector("n", "surface normal", -1.0, 1.0);
pub(super) const T: ParamSpec = vector("t", "tangent", -1.0, 1.0);
pub(super) const B: ParamSpec = vector("b", "bitangent", -1.0, 1.0);
pub(super) const H: ParamSpec = vector("h", "half vector (microfacet normal)", -1.0, 1.0);
pub(super) const V: ParamSpec = vector("v", "direction to the viewer", -1.0, 1.0);
pub(super) const L: ParamSpec = vector("l", "direction to the light", -1.0, 1.0);
pub(super) const DIFFUSE_COLOR: ParamSpec = vector("diffuse_color", "diffuse colour", 0.0, 1.0);
pub(super) const SPECULAR_COLOR: ParamSpec = vector("specular_color", "specular colour", 0.0, 1.0);
pub(super) const SHININESS: ParamSpec = scalar("shininess", "specular exponent", 0.0, 1.0e4);

pub(super) const T_DOT_V: ParamSpec =
    scalar("t_dot_v", "view direction along the tangent", -1.0, 1.0);
pub(super) const B_DOT_V: ParamSpec =
    scalar("b_dot_v", "view direction along the bitangent", -1.0, 1.0);
pub(super) const T_DOT_L: ParamSpec =
    scalar("t_dot_l", "light direction along the tangent", -1.0, 1.0);
pub(super) const B_DOT_L: ParamSpec =
    scalar("b_dot_l", "light direction along the bitangent", -1.0, 1.0);
pub(super) const COS_PHI: ParamSpec = scalar(
    "cos_phi",
    "cosine of the azimuth between the projected view and light",
    -1.0,
    1.0,
);
pub(super) const SIGMA_ON: ParamSpec = scalar("sigma", "facet slope deviation (radians)", 0.0, 1.5);
pub(super) const RHO: ParamSpec = scalar("rho", "diffuse albedo", 0.0, 1.0);
pub(super) const L_DOT_V: ParamSpec = scalar("l_dot_v", "cosine between light and view", -1.0, 1.0);
pub(super) const SHEEN_ALPHA: ParamSpec = scalar("alpha", "sheen roughness", 0.01, 1.0);
pub(super) const VELVET_SIGMA: ParamSpec = scalar("sigma", "velvet width", 0.01, 1.0);
pub(super) const CC_ALPHA: ParamSpec = scalar("alpha", "clearcoat width", 0.001, 1.0);
pub(super) const GLOSS: ParamSpec = scalar("gloss", "clearcoat gloss", 0.0, 1.0);
pub(super) const MS_ALPHA: ParamSpec =
    scalar("alpha", "microfacet width (roughness squared)", 0.0, 1.0);
pub(super) const F_AVG: ParamSpec = scalar("f_avg", "hemispherical average Fresnel", 0.0, 1.0);
pub(super) const E_AVG: ParamSpec = scalar("e_avg", "hemispherical average albedo", 0.0, 1.0);
pub(super) const X_LINEAR: ParamSpec = scalar("x", "linear value", 0.0, 1.0);
pub(super) const X_SIGNAL: ParamSpec = scalar("x", "sRGB-encoded value", 0.0, 1.0);
pub(super) const X_HDR: ParamSpec = scalar("x", "scene-referred linear value", 0.0, 1.0e3);
pub(super) const OCT_U: ParamSpec = scalar("u", "first octahedral coordinate", -1.0, 1.0);
pub(super) const OCT_V: ParamSpec = scalar("v", "second octahedral coordinate", -1.0, 1.0);
pub(super) const UNIT: ParamSpec = vector("n", "unit vector to encode", -1.0, 1.0);

/// Typical unit vectors for the examples: a normal, a view and a light direction.
pub(super) const EX_N: [f64; 3] = [0.0, 0.0, 1.0];
pub(super) const EX_V: [f64; 3] = [0.3, 0.0, 0.9539392014169457];
pub(super) const EX_L: [f64; 3] = [-0.5, 0.2, 0.8426149773176358];

pub(super) const fn cat<const A: usize, const B: usize, const C: usize>(
    a: [f64; A],
    b: [f64; B],
) -> [f64; C] {
    let mut out = [0.0; C];
    let mut i = 0;
    while i < A {
        out[i] = a[i];
        i += 1;
    }
    while i < A + B {
        out[i] = b[i - A];
        i += 1;
    }
    out
}

/// An example view in the tangent frame `(t, b, n)` and the anisotropic pair's parameters.
pub(super) const EX_ANISO_V: [f64; 5] = [0.9327379053088815, 0.3, 0.2, 0.2, 0.5];
pub(super) const EX_ANISO_PAIR: [f64; 8] = [
    0.9327379053088815,
    0.3,
    0.2,
    0.9110433579144299,
    -0.4,
    0.1,
    0.2,
    0.5,
];
pub(super) const ANISO_PAIR: [ParamSpec; 8] = [
    N_DOT_V, T_DOT_V, B_DOT_V, N_DOT_L, T_DOT_L, B_DOT_L, ALPHA_X, ALPHA_Y,
];

pub(super) const EX_NVL: [f64; 9] = cat::<6, 3, 9>(cat::<3, 3, 6>(EX_N, EX_V), EX_L);
pub(super) const EX_BRDF: [f64; 14] = cat::<9, 5, 14>(EX_NVL, [0.8, 0.5, 0.3, 0.25, 0.6]);
pub(super) const EX_LEGACY: [f64; 16] =
    cat::<9, 7, 16>(EX_NVL, [0.6, 0.3, 0.2, 0.5, 0.5, 0.5, 32.0]);
