//! Microfacet normal distribution functions (NDFs).
//!
//! Each function returns `D(m)`, the density of microfacet normals per unit solid angle,
//! normalised so that the projected microfacet area equals the macro-surface area:
//! `∫ D(m) (n·m) dω_m = 1` over the hemisphere. The integration tests check that identity
//! numerically for every model here.
//!
//! Conventions shared by the whole family:
//! - `n_dot_h` is the cosine between the macro normal `n` and the microfacet normal `m`
//!   (in a BRDF, the half vector `h`), expected in `-1 ..= 1`.
//! - `alpha` is the width parameter of the paper (Walter et al. 2007), not the artist's
//!   "perceptual roughness"; see [`crate::reference::material::alpha_from_roughness`].
//! - The papers multiply `D` by the positive characteristic function `χ+(n·m)`, which is one
//!   for `n·m > 0` and zero for `n·m ≤ 0` (Walter et al. 2007, section 3). These functions
//!   apply it: they return exactly 0 for `n_dot_h ≤ 0`.
//! - `sin²θ` is computed as `(1 - cos θ)(1 + cos θ)`, which is exact to rounding near
//!   `cos θ = 1`, where `1 - cos²θ` would lose most of its digits; this matters for narrow
//!   lobes, whose whole shape lives in that region.

use super::sin2_from_cos;
use super::vec3::{dot, Vec3};
use std::f64::consts::PI;

/// GGX / Trowbridge-Reitz distribution, isotropic.
///
/// Formula: `D(m) = χ+(n·m) · alpha² / (π · ((n·m)² (alpha² - 1) + 1)²)`, evaluated as
/// `alpha² / (π · (sin²θ + cos²θ alpha²)²)` with `cos θ = n·m` (algebraically identical).
///
/// Domain: `n_dot_h` in `-1 ..= 1`, `alpha > 0` (typically `0 < alpha ≤ 1`).
///
/// Edges: at `n_dot_h = 1` the value is `1 / (π alpha²)`; at `n_dot_h → 0+` it tends to
/// `alpha² / π` (GGX has a long tail that reaches the horizon); at `n_dot_h ≤ 0` it is 0.
/// As `alpha → 0` the lobe tends to a Dirac delta: the value at `n_dot_h < 1` tends to 0
/// and the peak grows as `1/alpha²`. At `alpha = 0` exactly the function returns 0 for
/// `n_dot_h < 1` and NaN at `n_dot_h = 1` (0/0: a delta has no finite value); clamp the
/// roughness before calling (see [`crate::reference::material::RoughnessClamp`]).
///
/// Source: T. S. Trowbridge and K. P. Reitz, "Average irregularity representation of a
/// rough surface for ray reflection", 1975; named GGX and written in this form by
/// B. Walter, S. R. Marschner, H. Li and K. E. Torrance, "Microfacet Models for Refraction
/// through Rough Surfaces", 2007, section 5.3.
#[inline]
pub fn ggx(n_dot_h: f64, alpha: f64) -> f64 {
    if n_dot_h <= 0.0 {
        return 0.0;
    }
    let a2 = alpha * alpha;
    let c2 = n_dot_h * n_dot_h;
    let s2 = sin2_from_cos(n_dot_h);
    let d = s2 + c2 * a2;
    a2 / (PI * d * d)
}

/// GGX / Trowbridge-Reitz distribution, anisotropic, from the microfacet normal's
/// components in the tangent frame.
///
/// Formula: `D(m) = χ+(n·m) / (π alpha_x alpha_y ((t·m / alpha_x)² + (b·m / alpha_y)² + (n·m)²)²)`
/// where `(t, b, n)` is an orthonormal tangent frame and `m` a unit vector, so that
/// `(t·m)² + (b·m)² + (n·m)² = 1`.
///
/// Domain: `alpha_x > 0`, `alpha_y > 0`; `t_dot_h`, `b_dot_h`, `n_dot_h` the components of
/// a unit vector. With `alpha_x = alpha_y = alpha` it equals [`ggx`] (identity tested).
///
/// Edges: the peak at `m = n` is `1 / (π alpha_x alpha_y)`; 0 for `n_dot_h ≤ 0`. As either
/// alpha tends to 0 the lobe collapses to a line (a delta in that direction); alpha = 0
/// exactly gives 0 away from that line and NaN or infinity on it.
///
/// Source: E. Heitz, "Understanding the Masking-Shadowing Function in Microfacet-Based
/// BRDFs", 2014 (its anisotropic form); the isotropic form is Walter et al. 2007; the
/// parameterisation with a tangent frame is also given by B. Burley, course notes of the
/// SIGGRAPH 2012 course "Practical Physically Based Shading in Film and Game Production",
/// 2012, appendix B.
pub fn ggx_aniso(n_dot_h: f64, t_dot_h: f64, b_dot_h: f64, alpha_x: f64, alpha_y: f64) -> f64 {
    if n_dot_h <= 0.0 {
        return 0.0;
    }
    let x = t_dot_h / alpha_x;
    let y = b_dot_h / alpha_y;
    let d = x * x + y * y + n_dot_h * n_dot_h;
    1.0 / (PI * alpha_x * alpha_y * d * d)
}

/// Anisotropic GGX evaluated from vectors: the microfacet normal `h` and the tangent frame
/// `(n, t, b)`.
///
/// Formula: [`ggx_aniso`]`(n·h, t·h, b·h, alpha_x, alpha_y)`.
///
/// Domain: `h`, `n`, `t`, `b` unit vectors with `(t, b, n)` orthonormal (not checked and not
/// re-orthogonalised: the frame is used as given, like a shader's TBN). `alpha_x` is the
/// width along `t`, `alpha_y` along `b`.
///
/// Edges: as [`ggx_aniso`].
///
/// Source: E. Heitz, "Understanding the Masking-Shadowing Function in Microfacet-Based
/// BRDFs", 2014.
pub fn ggx_aniso_frame(h: Vec3, n: Vec3, t: Vec3, b: Vec3, alpha_x: f64, alpha_y: f64) -> f64 {
    ggx_aniso(dot(n, h), dot(t, h), dot(b, h), alpha_x, alpha_y)
}

/// Beckmann distribution.
///
/// Formula: `D(m) = χ+(n·m) · exp(-tan²θ / alpha²) / (π alpha² cos⁴θ)` with `cos θ = n·m`
/// and `tan²θ = sin²θ / cos²θ`.
///
/// Domain: `n_dot_h` in `-1 ..= 1`, `alpha > 0`. Here `alpha` is the root-mean-square slope
/// of the microsurface (Walter's `alpha_b`), so each slope component has standard
/// deviation `alpha / √2`.
///
/// Edges: at `n_dot_h = 1` the value is `1 / (π alpha²)`; as `n_dot_h → 0+` the exponential
/// wins and the value tends to 0 (it underflows to exactly 0 in f64 once
/// `tan²θ / alpha² > ~745`); 0 for `n_dot_h ≤ 0`. As `alpha → 0` the lobe tends to a Dirac
/// delta; `alpha = 0` exactly gives 0 for `n_dot_h < 1` and NaN at `n_dot_h = 1`.
///
/// Source: P. Beckmann and A. Spizzichino, "The Scattering of Electromagnetic Waves from
/// Rough Surfaces", 1963; in microfacet form R. L. Cook and K. E. Torrance, "A Reflectance
/// Model for Computer Graphics", 1982, and Walter et al. 2007, section 5.1.
#[inline]
pub fn beckmann(n_dot_h: f64, alpha: f64) -> f64 {
    if n_dot_h <= 0.0 {
        return 0.0;
    }
    let a2 = alpha * alpha;
    let c2 = n_dot_h * n_dot_h;
    let tan2 = sin2_from_cos(n_dot_h) / c2;
    (-tan2 / a2).exp() / (PI * a2 * c2 * c2)
}

/// Normalised Blinn-Phong distribution, from its exponent.
///
/// Formula: `D(m) = χ+(n·m) · (p + 2) / (2π) · (n·m)^p`.
///
/// Domain: `exponent = p ≥ 0` (`p = 0` is the cosine-weighted constant `1/π`), `n_dot_h` in
/// `-1 ..= 1`.
///
/// Edges: at `n_dot_h = 1` the value is `(p + 2)/(2π)`; at `n_dot_h → 0+` it tends to 0 for
/// `p > 0`; 0 for `n_dot_h ≤ 0`. As `p → ∞` (the smooth limit) the lobe tends to a Dirac
/// delta; `p = ∞` gives NaN at `n_dot_h = 1` (∞ · 1^∞).
///
/// Source: J. F. Blinn, "Models of Light Reflection for Computer Synthesized Pictures",
/// 1977 (the `(n·h)^p` lobe); the `(p + 2)/(2π)` normalisation that makes it a
/// distribution is given by Walter et al. 2007, section 5.2.
pub fn blinn_phong(n_dot_h: f64, exponent: f64) -> f64 {
    if n_dot_h <= 0.0 {
        return 0.0;
    }
    (exponent + 2.0) / (2.0 * PI) * n_dot_h.powf(exponent)
}

/// Blinn-Phong exponent equivalent to a Beckmann width: `p = 2 / alpha² - 2`.
///
/// With this choice the Blinn-Phong and Beckmann distributions nearly coincide for small
/// `alpha` (Walter et al. 2007, section 5.2).
///
/// Domain: `0 < alpha ≤ 1` (larger alpha gives a negative exponent, which is not a
/// distribution). Edges: `alpha → 0` gives `p → ∞`; `alpha = 1` gives `p = 0`.
///
/// Source: B. Walter, S. R. Marschner, H. Li and K. E. Torrance, "Microfacet Models for
/// Refraction through Rough Surfaces", 2007, section 5.2.
pub fn blinn_phong_exponent_from_alpha(alpha: f64) -> f64 {
    2.0 / (alpha * alpha) - 2.0
}

/// Inverse of [`blinn_phong_exponent_from_alpha`]: `alpha = sqrt(2 / (p + 2))`.
///
/// Domain: `p ≥ 0`. Edges: `p = 0` gives `alpha = 1`; `p → ∞` gives `alpha → 0`.
///
/// Source: Walter et al. 2007, section 5.2.
pub fn blinn_phong_alpha_from_exponent(exponent: f64) -> f64 {
    (2.0 / (exponent + 2.0)).sqrt()
}

/// Blinn-Phong distribution parameterised by a Beckmann-style width.
///
/// Formula: [`blinn_phong`]`(n_dot_h, 2 / alpha² - 2)`.
///
/// Domain: `0 < alpha ≤ 1`. Edges: as [`blinn_phong`]; `alpha → 0` is the delta limit.
///
/// Source: Walter et al. 2007, section 5.2.
#[inline]
pub fn blinn_phong_alpha(n_dot_h: f64, alpha: f64) -> f64 {
    blinn_phong(n_dot_h, blinn_phong_exponent_from_alpha(alpha))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ggx_peak_is_one_over_pi_alpha_squared() {
        // Identity from the formula at cos θ = 1 (Walter et al. 2007, section 5.3).
        for alpha in [0.01, 0.2, 0.7, 1.0] {
            let expected = 1.0 / (PI * alpha * alpha);
            assert!((ggx(1.0, alpha) - expected).abs() <= 1e-15 * expected);
        }
    }

    #[test]
    fn ndfs_vanish_below_the_horizon() {
        // χ+(n·m) from Walter et al. 2007: zero for n·m ≤ 0, including exactly 0.
        for f in [ggx, beckmann, blinn_phong_alpha] {
            assert_eq!(f(0.0, 0.5), 0.0);
            assert_eq!(f(-0.3, 0.5), 0.0);
        }
        assert_eq!(ggx_aniso(0.0, 1.0, 0.0, 0.3, 0.5), 0.0);
    }

    #[test]
    fn beckmann_underflows_to_zero_not_nan_at_grazing() {
        // exp(-tan²θ/alpha²) underflows; the result must be 0, not 0 * inf = NaN.
        assert_eq!(beckmann(1e-3, 0.01), 0.0);
    }

    #[test]
    fn blinn_phong_conversion_round_trips() {
        // Mathematical identity: the two conversions are inverse functions.
        for alpha in [0.05, 0.3, 0.8, 1.0] {
            let back = blinn_phong_alpha_from_exponent(blinn_phong_exponent_from_alpha(alpha));
            assert!((back - alpha).abs() <= 4.0 * f64::EPSILON * alpha);
        }
    }
}
