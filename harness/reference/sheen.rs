//! Sheen: the retro-reflective lobes of cloth and velvet.
//!
//! Two distributions, "Charlie" (Estevez and Kulla 2017) and Ashikhmin's velvet (inverted
//! Gaussian, Ashikhmin and Premože 2007), with the smooth visibility
//! `V = 1 / (4 (n·l + n·v - n·l n·v))` of Ashikhmin and Premože's distribution-based BRDF,
//! the form Neubelt and Pettineo 2013 use for cloth; the composed lobes are `D · V` (the
//! sheen colour multiplies them; with `F = 1` here).

use super::sin2_from_cos;
use std::f64::consts::PI;

/// The "Charlie" sheen distribution.
///
/// Formula: `D(h) = (2 + 1/alpha) sin(θh)^(1/alpha) / (2π)`, `cos θh = n·h`.
///
/// Domain: `n_dot_h` in `-1 ..= 1`, `alpha` in `(0, 1]` (the sheen roughness; renderers
/// commonly pass perceptual sheen roughness squared: common practice). Normalised:
/// `∫ D (n·h) dω_h = 1` (tested).
///
/// Edges: 0 at `n·h = 1` (the lobe peaks at grazing facets); `(2 + 1/alpha)/(2π)` at
/// `n·h = 0`; `alpha = 1` gives `3 sin θ / (2π)`; 0 for `n·h < 0`.
///
/// Source: A. Conty Estevez, C. Kulla, "Production Friendly Microfacet Sheen BRDF",
/// technical report, 2017.
pub fn charlie_ndf(n_dot_h: f64, alpha: f64) -> f64 {
    if n_dot_h < 0.0 {
        return 0.0;
    }
    let inv = 1.0 / alpha;
    (2.0 + inv) * sin2_from_cos(n_dot_h).powf(0.5 * inv) / (2.0 * PI)
}

/// Ashikhmin's velvet distribution (an inverted Gaussian plus a constant).
///
/// Formula: `D(h) = (1 + 4 exp(-cot²θh / sigma²) / sin⁴θh) / (π (1 + 4 sigma²))`.
///
/// Domain: `n_dot_h` in `-1 ..= 1`, `sigma > 0`. Normalised: `∫ D (n·h) dω_h = 1` (the
/// Gaussian part integrates to `4 π sigma²`; tested).
///
/// Edges: `1 / (π (1 + 4 sigma²))` at `n·h = 1` (the limit: `exp(-cot²/sigma²)` falls
/// faster than `sin⁴` does); `(1 + 4) / (π (1 + 4 sigma²))` at `n·h = 0`; 0 for `n·h < 0`.
///
/// Source: M. Ashikhmin, S. Premože, "Distribution-based BRDFs", technical report, 2007
/// (the velvet example; the amplitude 4 and the normalisation are as we remember them and
/// are checked here by the normalisation identity).
pub fn ashikhmin_velvet_ndf(n_dot_h: f64, sigma: f64) -> f64 {
    if n_dot_h < 0.0 {
        return 0.0;
    }
    let s2 = sin2_from_cos(n_dot_h);
    let norm = 1.0 / (PI * (1.0 + 4.0 * sigma * sigma));
    if s2 == 0.0 {
        return norm;
    }
    let cot2 = n_dot_h * n_dot_h / s2;
    norm * (1.0 + 4.0 * (-cot2 / (sigma * sigma)).exp() / (s2 * s2))
}

/// The smooth cloth visibility `V = 1 / (4 (n·l + n·v - n·l n·v))`.
///
/// Domain: cosines in `0 ..= 1`. Edges: `1/4` when either cosine is 1; infinite when both
/// are 0; 0 when either is `≤ 0` (below the surface).
///
/// Source: M. Ashikhmin, S. Premože, "Distribution-based BRDFs", technical report, 2007
/// (the denominator of their BRDF); used with the Charlie and velvet distributions by
/// D. Neubelt, M. Pettineo, course notes, SIGGRAPH 2013 course "Physically Based Shading
/// in Theory and Practice".
pub fn neubelt_visibility(n_dot_v: f64, n_dot_l: f64) -> f64 {
    if n_dot_v <= 0.0 || n_dot_l <= 0.0 {
        return 0.0;
    }
    0.25 / (n_dot_l + n_dot_v - n_dot_l * n_dot_v)
}

/// The composed Charlie sheen lobe `f = D_charlie(n·h, alpha) · V(n·v, n·l)` (sheen colour
/// 1): [`charlie_ndf`] times [`neubelt_visibility`].
///
/// Domain and edges: those of the two factors; 0 when either cosine is `≤ 0`.
///
/// Source: Estevez and Kulla 2017 (the distribution); Neubelt and Pettineo 2013 (the
/// visibility), as above.
pub fn sheen_charlie_lobe(n_dot_h: f64, n_dot_v: f64, n_dot_l: f64, alpha: f64) -> f64 {
    charlie_ndf(n_dot_h, alpha) * neubelt_visibility(n_dot_v, n_dot_l)
}

/// The composed velvet lobe `f = D_velvet(n·h, sigma) · V(n·v, n·l)`:
/// [`ashikhmin_velvet_ndf`] times [`neubelt_visibility`].
///
/// Source: Ashikhmin and Premože 2007.
pub fn sheen_velvet_lobe(n_dot_h: f64, n_dot_v: f64, n_dot_l: f64, sigma: f64) -> f64 {
    ashikhmin_velvet_ndf(n_dot_h, sigma) * neubelt_visibility(n_dot_v, n_dot_l)
}
