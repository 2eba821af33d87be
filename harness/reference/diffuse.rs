//! Diffuse BRDFs: Lambert, Burley, Oren-Nayar (full and qualitative) and Hammon's GGX
//! diffuse approximation.
//!
//! These return the BRDF value `f_d` (units 1/sr), without the cosine `n·l` of the rendering
//! equation. The scalar forms are for unit albedo; multiply by the diffuse colour, or use the
//! `_rgb` forms.

use super::vec3::{scale, Vec3};
use std::f64::consts::{FRAC_1_PI, PI};

/// Lambert's diffuse BRDF for unit albedo: `f_d = 1 / π`.
///
/// Domain: any pair of directions above the surface (the value does not depend on them).
/// Edges: none; the directional albedo `∫ f_d (n·l) dω` is exactly 1 (tested by
/// integration).
///
/// Source: J. H. Lambert, "Photometria", 1760.
#[inline]
pub fn lambert() -> f64 {
    FRAC_1_PI
}

/// Lambert's diffuse BRDF with an RGB albedo: `f_d = albedo / π`.
///
/// Domain: albedo components in `0 ..= 1` for energy conservation. Source: Lambert 1760.
pub fn lambert_rgb(albedo: Vec3) -> Vec3 {
    scale(albedo, 1.0 / PI)
}

/// Burley's diffuse BRDF for unit albedo, with its retro-reflection term.
///
/// Formula: `F_D90 = 0.5 + 2 roughness cos²θd` with `cos θd = l·h`, and
/// `f_d = (1/π) (1 + (F_D90 - 1)(1 - n·l)⁵) (1 + (F_D90 - 1)(1 - n·v)⁵)`.
///
/// Domain: cosines in `0 ..= 1`; `roughness` in `0 ..= 1` is the paper's artist-facing
/// roughness (perceptual roughness, not alpha; some engines pass alpha here instead:
/// check which one the shader under test uses). Evaluated as written, no clamping.
///
/// Edges: `1/π` at `n·l = n·v = 1` for every roughness; at grazing each factor becomes
/// `F_D90`, so smooth surfaces (`F_D90 = 0.5`) darken by half per grazing direction and rough
/// ones (`F_D90` up to 2.5) brighten. The model is not energy conserving.
///
/// Source: B. Burley, course notes of the SIGGRAPH 2012 course "Practical Physically Based
/// Shading in Film and Game Production", 2012 (its diffuse model).
#[inline]
pub fn burley(n_dot_v: f64, n_dot_l: f64, l_dot_h: f64, roughness: f64) -> f64 {
    let fd90 = 0.5 + 2.0 * roughness * l_dot_h * l_dot_h;
    let light = 1.0 + (fd90 - 1.0) * pow5(1.0 - n_dot_l);
    let view = 1.0 + (fd90 - 1.0) * pow5(1.0 - n_dot_v);
    light * view * FRAC_1_PI
}

/// [`burley`] times an RGB base colour.
///
/// Domain and edges: as [`burley`]. Source: Burley 2012.
pub fn burley_rgb(
    base_color: Vec3,
    n_dot_v: f64,
    n_dot_l: f64,
    l_dot_h: f64,
    roughness: f64,
) -> Vec3 {
    scale(base_color, burley(n_dot_v, n_dot_l, l_dot_h, roughness))
}

fn pow5(x: f64) -> f64 {
    let x2 = x * x;
    x2 * x2 * x
}

/// The angles Oren and Nayar's model is written in: `(α, β) = (max(θi, θr), min(θi, θr))`.
fn oren_nayar_angles(n_dot_v: f64, n_dot_l: f64) -> (f64, f64) {
    let (tv, tl) = (n_dot_v.acos(), n_dot_l.acos());
    (tv.max(tl), tv.min(tl))
}

/// Oren and Nayar's rough diffuse BRDF, the full model (first-order term and the
/// interreflection term), for albedo `rho`.
///
/// Formula: with `θi = acos(n·l)`, `θr = acos(n·v)`, `α = max(θi, θr)`,
/// `β = min(θi, θr)`, `c = cos(φi - φr)` (the cosine of the azimuth between the
/// projections of `l` and `v` on the surface) and `s² = sigma²`:
/// `C1 = 1 - 0.5 s²/(s² + 0.33)`;
/// `C2 = 0.45 s²/(s² + 0.09) sin α` if `c ≥ 0`, else `0.45 s²/(s² + 0.09) (sin α - (2β/π)³)`;
/// `C3 = 0.125 s²/(s² + 0.09) (4αβ/π²)²`;
/// `f1 = rho/π (C1 + c C2 tan β + (1 - |c|) C3 tan((α + β)/2))`;
/// `f2 = 0.17 rho²/π s²/(s² + 0.13) (1 - c (2β/π)²)`; `f = f1 + f2`.
///
/// Domain: cosines in `-1 ..= 1`, `c` in `-1 ..= 1`, `sigma` (the standard deviation of
/// the facet slope angle, radians) `≥ 0`, `rho` in `0 ..= 1`.
///
/// Edges: `sigma = 0` gives Lambert `rho/π`; 0 when either cosine is `≤ 0`; infinite when
/// both directions are at grazing (`tan((α + β)/2)` with `α = β = π/2`), finite otherwise.
///
/// Source: M. Oren, S. K. Nayar, "Generalization of Lambert's Reflectance Model",
/// SIGGRAPH 1994 (the full model with the interreflection term; the constants transcribed
/// from the paper as we remember it, checked only against our own independent
/// transcription and the identities in the tests).
pub fn oren_nayar(n_dot_v: f64, n_dot_l: f64, cos_phi: f64, sigma: f64, rho: f64) -> f64 {
    if n_dot_v <= 0.0 || n_dot_l <= 0.0 {
        return 0.0;
    }
    let (a, b) = oren_nayar_angles(n_dot_v, n_dot_l);
    let s2 = sigma * sigma;
    let c1 = 1.0 - 0.5 * s2 / (s2 + 0.33);
    let two_b_pi = 2.0 * b / PI;
    let c2 = if cos_phi >= 0.0 {
        0.45 * s2 / (s2 + 0.09) * a.sin()
    } else {
        0.45 * s2 / (s2 + 0.09) * (a.sin() - two_b_pi * two_b_pi * two_b_pi)
    };
    let r = 4.0 * a * b / (PI * PI);
    let c3 = 0.125 * s2 / (s2 + 0.09) * r * r;
    let f1 = rho / PI
        * (c1 + cos_phi * c2 * b.tan() + (1.0 - cos_phi.abs()) * c3 * ((a + b) / 2.0).tan());
    let f2 = 0.17 * rho * rho / PI * s2 / (s2 + 0.13) * (1.0 - cos_phi * two_b_pi * two_b_pi);
    f1 + f2
}

/// Oren and Nayar's qualitative model, unit albedo: the form shaders usually implement.
///
/// Formula: `A = 1 - 0.5 s²/(s² + 0.33)`, `B = 0.45 s²/(s² + 0.09)` with `s = sigma`;
/// `f = (1/π) (A + B max(0, c) sin α tan β)` with `α`, `β`, `c` as in [`oren_nayar`].
///
/// Domain: as [`oren_nayar`]. Edges: `sigma = 0` gives `1/π`; 0 when either cosine is
/// `≤ 0`; finite at grazing (`sin α tan β` with `β < π/2` unless both are grazing, where
/// `tan β` is infinite); the azimuth term vanishes for `c ≤ 0`.
///
/// Source: M. Oren, S. K. Nayar, "Generalization of Lambert's Reflectance Model",
/// SIGGRAPH 1994 (the qualitative model).
pub fn oren_nayar_qualitative(n_dot_v: f64, n_dot_l: f64, cos_phi: f64, sigma: f64) -> f64 {
    if n_dot_v <= 0.0 || n_dot_l <= 0.0 {
        return 0.0;
    }
    let (a, b) = oren_nayar_angles(n_dot_v, n_dot_l);
    let s2 = sigma * sigma;
    let ca = 1.0 - 0.5 * s2 / (s2 + 0.33);
    let cb = 0.45 * s2 / (s2 + 0.09);
    (ca + cb * cos_phi.max(0.0) * a.sin() * b.tan()) / PI
}

/// Hammon's diffuse approximation for a GGX + Smith microsurface, for albedo `rho`.
///
/// Formula: `facing = 0.5 + 0.5 l·v`;
/// `rough = facing (0.9 - 0.4 facing) (0.5 + n·h) / n·h`;
/// `smooth = 1.05 (1 - (1 - n·l)⁵)(1 - (1 - n·v)⁵)`;
/// `single = (1/π) mix(smooth, rough, alpha)`; `multi = 0.1159 alpha`;
/// `f = rho (single + rho multi)`.
///
/// Domain: cosines in `0 ..= 1` (`n_dot_h > 0`), `l_dot_v` in `-1 ..= 1`, `alpha` in
/// `0 ..= 1`, `rho` in `0 ..= 1`. Evaluated as written, no clamping (as in the source).
///
/// Edges: at `alpha = 0` only the smooth term remains, 0 at grazing `n·l = 0` or
/// `n·v = 0` and `1.05 rho/π` at normal incidence; at `alpha = 1` the rough term does not
/// depend on `n·l`, `n·v` except through `n·h` and `l·v`; infinite as `n·h → 0`.
///
/// Source: E. Hammon Jr., "PBR Diffuse Lighting for GGX+Smith Microsurfaces", Game
/// Developers Conference, 2017 (the fitted constants 0.9, 0.4, 1.05 and 0.1159 are quoted
/// from memory of its slides: common practice).
pub fn hammon(n_dot_v: f64, n_dot_l: f64, n_dot_h: f64, l_dot_v: f64, alpha: f64, rho: f64) -> f64 {
    let facing = 0.5 + 0.5 * l_dot_v;
    let rough = facing * (0.9 - 0.4 * facing) * ((0.5 + n_dot_h) / n_dot_h);
    let smooth = 1.05 * (1.0 - pow5(1.0 - n_dot_l)) * (1.0 - pow5(1.0 - n_dot_v));
    let single = (smooth + (rough - smooth) * alpha) / PI;
    let multi = 0.1159 * alpha;
    rho * (single + rho * multi)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn burley_at_normal_incidence_is_lambert() {
        // From the formula: both Schlick-like factors are 1 when n·l = n·v = 1.
        for r in [0.0, 0.5, 1.0] {
            assert_eq!(burley(1.0, 1.0, 1.0, r), lambert());
        }
    }

    #[test]
    fn burley_at_grazing_is_fd90_squared_over_pi() {
        // From the formula: with n·l = n·v = 0 each factor equals F_D90.
        let (r, ldh) = (0.3, 0.6);
        let fd90 = 0.5 + 2.0 * r * ldh * ldh;
        let expected = fd90 * fd90 / PI;
        assert!((burley(0.0, 0.0, ldh, r) - expected).abs() <= 1e-15 * expected);
    }
}
