//! Diffuse BRDFs: Lambert and Burley.
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
