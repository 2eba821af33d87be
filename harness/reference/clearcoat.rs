//! Clearcoat: a thin varnish layer with its own narrow lobe.
//!
//! The lobe is `f = D_GTR1(n·h, alpha) · V_Kelemen(l·h) · F(v·h)` with the layer's Fresnel
//! at a fixed index of refraction 1.5 (`F0 = 0.04`), in Schlick's form.

use super::fresnel;
use super::sin2_from_cos;
use std::f64::consts::{FRAC_1_PI, PI};

/// The fixed index of refraction of the clearcoat layer.
pub const CLEARCOAT_IOR: f64 = 1.5;

/// The generalised Trowbridge-Reitz distribution with exponent 1 (Berry's distribution).
///
/// Formula: `D(h) = (alpha² - 1) / (π ln(alpha²) (1 + (alpha² - 1) cos²θh))`; written with
/// `alpha² - 1 = (alpha - 1)(alpha + 1)`, `ln(alpha²) = ln_1p(alpha² - 1)` near
/// `alpha = 1` (`2 ln alpha` below 0.5) and `1 + (alpha² - 1) cos² = alpha² cos² + sin²`, so
/// it stays accurate near `alpha = 1` and for narrow lobes at `n·h → 1`.
///
/// Domain: `n_dot_h` in `-1 ..= 1`, `alpha` in `(0, 1]`. Normalised: `∫ D (n·h) dω_h = 1`
/// (tested).
///
/// Edges: `alpha = 1` gives the constant `1/π` (the limit); as `alpha → 0` it narrows to a
/// delta, with long tails; 0 for `n·h < 0`.
///
/// Source: B. Burley, course notes, SIGGRAPH 2012 course "Practical Physically Based
/// Shading in Film and Game Production" (GTR, its clearcoat with `gamma = 1`); the
/// distribution is E. M. Berry, "Diffuse reflection of light from a matt surface", Journal
/// of the Optical Society of America, 1923.
pub fn gtr1_ndf(n_dot_h: f64, alpha: f64) -> f64 {
    if n_dot_h < 0.0 {
        return 0.0;
    }
    if alpha >= 1.0 {
        return FRAC_1_PI;
    }
    let a2m1 = (alpha - 1.0) * (alpha + 1.0);
    // ln(alpha²): through ln_1p near 1, where alpha² - 1 is small; directly below, where
    // 1 + (alpha² - 1) would lose the digits of a small alpha².
    let log_a2 = if alpha > 0.5 {
        a2m1.ln_1p()
    } else {
        2.0 * alpha.ln()
    };
    // 1 + (alpha² - 1) cos² = alpha² cos² + sin², without the cancellation at cos → 1.
    let c = n_dot_h;
    a2m1 / (PI * log_a2 * (alpha * alpha * c * c + sin2_from_cos(c)))
}

/// The clearcoat width from the gloss parameter: `alpha = mix(0.1, 0.001, gloss)`.
///
/// Domain: `gloss` in `0 ..= 1`. Edges: 0.1 at `gloss = 0`, 0.001 at `gloss = 1`.
///
/// Source: Burley 2012 (as above; quoted from memory of its reference implementation:
/// common practice).
pub fn clearcoat_alpha_from_gloss(gloss: f64) -> f64 {
    0.1 + (0.001 - 0.1) * gloss
}

/// Kelemen's visibility `V = 1 / (4 (l·h)²)`.
///
/// Domain: `l_dot_h` in `(0, 1]`. Edges: `1/4` at `l·h = 1`; infinite as `l·h → 0`.
///
/// Source: C. Kelemen, L. Szirmay-Kalos, "A Microfacet Based Coupled Specular-Matte BRDF
/// Model with Importance Sampling", Eurographics 2001 short presentations.
pub fn kelemen_visibility(l_dot_h: f64) -> f64 {
    0.25 / (l_dot_h * l_dot_h)
}

/// The clearcoat layer's Fresnel: Schlick's approximation with `F0` from the fixed index
/// [`CLEARCOAT_IOR`] (`F0 = ((1.5 - 1)/(1.5 + 1))² = 0.04`).
///
/// Domain: `v_dot_h` in `0 ..= 1`. Edges: 0.04 at `v·h = 1`, 1 at `v·h = 0`.
///
/// Source: C. Schlick, "An Inexpensive BRDF Model for Physically-based Rendering",
/// Computer Graphics Forum, 1994; the index 1.5 is common practice.
pub fn clearcoat_fresnel(v_dot_h: f64) -> f64 {
    fresnel::schlick(v_dot_h, fresnel::f0_from_ior(CLEARCOAT_IOR))
}

/// The composed clearcoat lobe `f = D_GTR1(n·h, alpha) · V_Kelemen(l·h) · F(l·h)` (for the
/// reflection half vector `l·h = v·h`).
///
/// Domain and edges: those of the three factors.
///
/// Source: Burley 2012 and Kelemen and Szirmay-Kalos 2001, as above.
pub fn clearcoat_lobe(n_dot_h: f64, l_dot_h: f64, alpha: f64) -> f64 {
    gtr1_ndf(n_dot_h, alpha) * kelemen_visibility(l_dot_h) * clearcoat_fresnel(l_dot_h)
}
