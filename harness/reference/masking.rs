//! Smith masking-shadowing functions: Λ, G1, G2 and the visibility form V.
//!
//! In Smith's model the masking of a direction `v` depends on `v` only through its angle to
//! the macro normal, via the function Λ of the chosen NDF:
//! `G1(v) = 1 / (1 + Λ(v))`. Two directions combine either separably,
//! `G2 = G1(v) · G1(l)`, or height-correlated, `G2 = 1 / (1 + Λ(v) + Λ(l))`
//! (Heitz 2014, which also shows the height-correlated form is the more accurate one).
//! Shaders usually fold the BRDF's denominator into the masking term and evaluate the
//! visibility `V = G2 / (4 (n·l) (n·v))`; the `v_*` functions return that form directly and
//! stay finite as `n·v → 0` or `n·l → 0`, where the quotient `G2 / (4 n·l n·v)` would be 0/0.
//!
//! Conventions shared by the whole family:
//! - `n_dot_v` and `n_dot_l` are cosines to the macro normal. The papers multiply G1 by
//!   `χ+(v·m / v·n)`; these functions leave out the microfacet side of that test (for the
//!   reflection half vector it always passes) and apply the macro side: a direction at or
//!   below the horizon (`n_dot_v ≤ 0`) is fully masked, so G1, G2 and V are 0 there and Λ is
//!   `+∞`.
//! - `alpha` is the NDF's width parameter (Walter et al. 2007), not perceptual roughness.
//! - `alpha = 0` (a mirror) gives Λ = 0 and G1 = 1 for every direction above the horizon.

use super::sin2_from_cos;
use std::f64::consts::PI;

/// `sqrt(cos²θ + alpha² sin²θ)`, the square root that appears in GGX's Λ, written with the
/// cancellation-free `sin²θ = (1 - cos θ)(1 + cos θ)`.
#[inline]
fn ggx_root(c: f64, alpha: f64) -> f64 {
    (c * c + alpha * alpha * sin2_from_cos(c)).sqrt()
}

/// Smith Λ for GGX.
///
/// Formula: `Λ(v) = (-1 + sqrt(1 + alpha² tan²θ)) / 2` with `cos θ = n·v`; evaluated as
/// `alpha² sin²θ / (2 cos θ (cos θ + sqrt(cos²θ + alpha² sin²θ)))` (the same quantity, with
/// the subtraction removed so small values keep their digits).
///
/// Domain: `n_dot_v` in `-1 ..= 1`, `alpha ≥ 0`.
///
/// Edges: 0 at `n_dot_v = 1` or `alpha = 0`; grows like `alpha / (2 n·v)` as `n_dot_v → 0+`;
/// `+∞` for `n_dot_v ≤ 0`.
///
/// Source: B. Walter, S. R. Marschner, H. Li and K. E. Torrance, "Microfacet Models for
/// Refraction through Rough Surfaces", 2007 (section 5.3); written as Λ by E. Heitz,
/// "Understanding the Masking-Shadowing Function in Microfacet-Based BRDFs", 2014.
#[inline]
pub fn ggx_lambda(n_dot_v: f64, alpha: f64) -> f64 {
    if n_dot_v <= 0.0 {
        return f64::INFINITY;
    }
    let c = n_dot_v;
    alpha * alpha * sin2_from_cos(c) / (2.0 * c * (c + ggx_root(c, alpha)))
}

/// Smith G1 for GGX.
///
/// Formula: `G1(v) = 1 / (1 + Λ(v)) = 2 / (1 + sqrt(1 + alpha² tan²θ))`, evaluated as
/// `2 cos θ / (cos θ + sqrt(cos²θ + alpha² sin²θ))`.
///
/// Domain: `n_dot_v` in `-1 ..= 1`, `alpha ≥ 0`.
///
/// Edges: 1 at `n_dot_v = 1` or `alpha = 0`; falls linearly, like `2 n·v / alpha`, as
/// `n_dot_v → 0+`; 0 for `n_dot_v ≤ 0`.
///
/// Source: Walter et al. 2007, section 5.3; Heitz 2014.
#[inline]
pub fn ggx_g1(n_dot_v: f64, alpha: f64) -> f64 {
    if n_dot_v <= 0.0 {
        return 0.0;
    }
    let c = n_dot_v;
    2.0 * c / (c + ggx_root(c, alpha))
}

/// Separable Smith G2 for GGX: `G1(v) · G1(l)`.
///
/// Domain and edges: those of [`ggx_g1`] in each direction; 0 if either cosine is ≤ 0.
///
/// Source: Walter et al. 2007, section 5.3 (the separable product); Heitz 2014 names it the
/// separable form.
pub fn ggx_g2_separable(n_dot_v: f64, n_dot_l: f64, alpha: f64) -> f64 {
    ggx_g1(n_dot_v, alpha) * ggx_g1(n_dot_l, alpha)
}

/// Height-correlated Smith G2 for GGX.
///
/// Formula: `G2(v, l) = 1 / (1 + Λ(v) + Λ(l))`.
///
/// Domain: cosines in `-1 ..= 1`, `alpha ≥ 0`.
///
/// Edges: 1 when both directions are normal or `alpha = 0`; tends to 0 as either cosine
/// tends to 0; 0 if either is ≤ 0. Never larger than the separable form.
///
/// Source: E. Heitz, "Understanding the Masking-Shadowing Function in Microfacet-Based
/// BRDFs", 2014 (height-correlated masking and shadowing).
pub fn ggx_g2_height_correlated(n_dot_v: f64, n_dot_l: f64, alpha: f64) -> f64 {
    1.0 / (1.0 + ggx_lambda(n_dot_v, alpha) + ggx_lambda(n_dot_l, alpha))
}

/// Visibility of the separable Smith GGX G2: `V = G1(v) G1(l) / (4 n·v n·l)`.
///
/// Formula: evaluated as `1 / ((n·v + sqrt(n·v² + alpha² (1 - n·v²))) (n·l + sqrt(n·l² +
/// alpha² (1 - n·l²))))`, which is the same quantity with the cosines cancelled.
///
/// Domain: cosines in `-1 ..= 1`, `alpha ≥ 0`.
///
/// Edges: `1/4` when both cosines are 1; finite as one cosine tends to 0 (for example
/// `1 / (alpha (n·l + sqrt(...)))` at `n·v = 0+`), infinite only when both cosines and
/// `alpha` are 0; 0 if either cosine is ≤ 0 (masked).
///
/// Source: Walter et al. 2007, section 5.3.
#[inline]
pub fn ggx_v_separable(n_dot_v: f64, n_dot_l: f64, alpha: f64) -> f64 {
    if n_dot_v <= 0.0 || n_dot_l <= 0.0 {
        return 0.0;
    }
    1.0 / ((n_dot_v + ggx_root(n_dot_v, alpha)) * (n_dot_l + ggx_root(n_dot_l, alpha)))
}

/// Visibility of the height-correlated Smith GGX G2: `V = G2 / (4 n·v n·l)`.
///
/// Formula: `V = 0.5 / (n·l sqrt(n·v² (1 - alpha²) + alpha²) + n·v sqrt(n·l² (1 - alpha²) +
/// alpha²))`, exactly equal to `1 / (4 n·v n·l (1 + Λ(v) + Λ(l)))` (the square roots are
/// evaluated in the cancellation-free form `sqrt(c² + alpha² (1 - c)(1 + c))`).
///
/// Domain: cosines in `-1 ..= 1`, `alpha ≥ 0`.
///
/// Edges: `1/4` when both cosines are 1; at `n·v = 0+` it tends to `0.5 / (alpha n·l)`
/// (finite for `alpha > 0`); infinite when both cosines are 0+; 0 if either cosine is ≤ 0.
///
/// Source: E. Heitz, "Understanding the Masking-Shadowing Function in Microfacet-Based
/// BRDFs", Journal of Computer Graphics Techniques 3(2), 2014; in this form S. Lagarde and
/// C. de Rousiers, course notes of the SIGGRAPH 2014 course "Physically Based Shading in
/// Theory and Practice", 2014.
#[inline]
pub fn ggx_v_height_correlated(n_dot_v: f64, n_dot_l: f64, alpha: f64) -> f64 {
    if n_dot_v <= 0.0 || n_dot_l <= 0.0 {
        return 0.0;
    }
    0.5 / (n_dot_l * ggx_root(n_dot_v, alpha) + n_dot_v * ggx_root(n_dot_l, alpha))
}

/// Fast approximation of the height-correlated GGX visibility, without square roots.
///
/// Formula: `V ≈ 0.5 / (n·l (n·v (1 - alpha) + alpha) + n·v (n·l (1 - alpha) + alpha))`:
/// each `sqrt(c² (1 - alpha²) + alpha²)` of the exact form is replaced by the linear
/// `c (1 - alpha) + alpha`, which agrees with it at `c = 0`, at `c = 1`, at `alpha = 0` and
/// at `alpha = 1`.
///
/// Domain: cosines in `0 ..= 1`, `0 ≤ alpha ≤ 1`. No clamping is applied, as in the source:
/// it is a polynomial evaluated as written (negative cosines give a meaningless number).
///
/// Edges: `1/4` at normal incidence for every alpha; at `n·v = 0` it is `0.5 / (alpha n·l)`,
/// the same as the exact form; infinite when both cosines are 0. The approximation is
/// "mathematically wrong", in its authors' words, in between (tested).
///
/// Source: R. Guy and M. Agopian, design documentation of an open-source real-time
/// physically based renderer, 2018 (section on the geometric shadowing term; common
/// practice, quoted from memory). Algebraically it equals
/// [`ggx_v_height_correlated_hammon`]; the two are kept apart because a shader written in one
/// form rounds differently in f32 from one written in the other.
#[inline]
pub fn ggx_v_height_correlated_fast(n_dot_v: f64, n_dot_l: f64, alpha: f64) -> f64 {
    let ggx_v = n_dot_l * (n_dot_v * (1.0 - alpha) + alpha);
    let ggx_l = n_dot_v * (n_dot_l * (1.0 - alpha) + alpha);
    0.5 / (ggx_v + ggx_l)
}

/// Linear-interpolation approximation of the height-correlated GGX visibility.
///
/// Formula: `V ≈ 0.5 / mix(2 n·l n·v, n·l + n·v, alpha)` where
/// `mix(a, b, t) = a + (b - a) t`.
///
/// Domain: cosines in `0 ..= 1`, `0 ≤ alpha ≤ 1`; evaluated as written, no clamping.
///
/// Edges: `alpha = 0` gives `1 / (4 n·l n·v)` (no masking, infinite at grazing); `alpha = 1`
/// gives `0.5 / (n·l + n·v)`; `1/4` at normal incidence.
///
/// Source: E. Hammon Jr., "PBR Diffuse Lighting for GGX+Smith Microsurfaces", Game
/// Developers Conference, 2017.
#[inline]
pub fn ggx_v_height_correlated_hammon(n_dot_v: f64, n_dot_l: f64, alpha: f64) -> f64 {
    let a = 2.0 * n_dot_l * n_dot_v;
    let b = n_dot_l + n_dot_v;
    0.5 / (a + (b - a) * alpha)
}

/// Schlick's G1 approximation, in the GGX fit: `G1(v) ≈ n·v / (n·v (1 - k) + k)`.
///
/// Domain: `n_dot_v` in `0 ..= 1`, `0 ≤ k ≤ 1`. Choose `k` with [`schlick_k_from_alpha`]
/// (the fit to Smith GGX) or [`schlick_k_analytic_light`]. Evaluated as written, no clamping.
///
/// Edges: 1 at `n_dot_v = 1` or `k = 0`; 0 at `n_dot_v = 0` for `k > 0`.
///
/// Source: C. Schlick, "An Inexpensive BRDF Model for Physically-based Rendering", 1994
/// (the rational form); B. Karis, course notes of the SIGGRAPH 2013 course "Physically
/// Based Shading in Theory and Practice", 2013 (its use with GGX).
pub fn schlick_ggx_g1(n_dot_v: f64, k: f64) -> f64 {
    n_dot_v / (n_dot_v * (1.0 - k) + k)
}

/// Visibility of the separable Schlick-GGX G2:
/// `V = G1(v) G1(l) / (4 n·v n·l) = 1 / (4 (n·v (1 - k) + k) (n·l (1 - k) + k))`.
///
/// Domain: cosines in `0 ..= 1`, `0 ≤ k ≤ 1`. Edges: `1/4` at normal incidence; finite at
/// grazing for `k > 0`; `k = 0` gives `1 / (4 n·v n·l)`.
///
/// Source: Schlick 1994; Karis 2013.
#[inline]
pub fn schlick_ggx_v(n_dot_v: f64, n_dot_l: f64, k: f64) -> f64 {
    0.25 / ((n_dot_v * (1.0 - k) + k) * (n_dot_l * (1.0 - k) + k))
}

/// Schlick's `k` fitted to Smith GGX: `k = alpha / 2`.
///
/// Source: B. Karis, course notes of the SIGGRAPH 2013 course "Physically Based Shading in
/// Theory and Practice", 2013.
#[inline]
pub fn schlick_k_from_alpha(alpha: f64) -> f64 {
    alpha / 2.0
}

/// Schlick's `k` for analytic lights with the roughness remapping `(roughness + 1) / 2`:
/// `k = (roughness + 1)² / 8`, where `roughness` is the perceptual roughness.
///
/// Source: B. Karis, course notes of the SIGGRAPH 2013 course "Physically Based Shading in
/// Theory and Practice", 2013 (after Burley's remapping for analytic lights).
pub fn schlick_k_analytic_light(roughness: f64) -> f64 {
    (roughness + 1.0) * (roughness + 1.0) / 8.0
}

/// `a = 1 / (alpha tan θ) = cos θ / (alpha sin θ)`, the argument of Beckmann's Λ.
fn beckmann_a(c: f64, alpha: f64) -> f64 {
    c / (alpha * sin2_from_cos(c).sqrt())
}

/// Smith Λ for Beckmann, exact.
///
/// Formula: with `a = 1 / (alpha tan θ)`,
/// `Λ(v) = (erf(a) - 1) / 2 + exp(-a²) / (2 a √π)`.
///
/// Evaluation: for `a < 2` as `(exp(-a²) / (a √π) - erfc(a)) / 2`, so that `erf(a) - 1`
/// does not cancel. For `a ≥ 2` the two terms agree in their leading digits (they differ by
/// a fraction of about `1 / (2a²)`), so the difference is taken inside the classical
/// continued fraction `√π e^{a²} erfc(a) = 1 / (a + t)`,
/// `t = (1/2) / (a + 1 / (a + (3/2) / (a + 2 / (a + ...))))` (Abramowitz and Stegun,
/// "Handbook of Mathematical Functions", 1964, 7.1.14, from memory), which gives
/// `Λ = exp(-a²) / (2 √π) · t / (a (a + t))` with no subtraction; 80 levels give full f64
/// precision for `a ≥ 2`. `exp(-a²)` uses `a²` split into two f64 (by a fused multiply-add),
/// since the rounding of `a²` alone would cost up to 700 ulp near underflow.
///
/// Domain: `n_dot_v` in `-1 ..= 1`, `alpha ≥ 0`.
///
/// Edges: 0 at `n_dot_v = 1` (`a = ∞`) or `alpha = 0`; it falls off like
/// `exp(-a²) / (4 √π a³)` for large `a` and underflows to exactly 0 near `a ≈ 27`; grows like
/// `alpha / (2 √π n·v)` as `n_dot_v → 0+`; `+∞` for `n_dot_v ≤ 0`.
///
/// Source: B. Walter, S. R. Marschner, H. Li and K. E. Torrance, "Microfacet Models for
/// Refraction through Rough Surfaces", 2007, section 5.1; E. Heitz, "Understanding the
/// Masking-Shadowing Function in Microfacet-Based BRDFs", 2014.
pub fn beckmann_lambda(n_dot_v: f64, alpha: f64) -> f64 {
    if n_dot_v <= 0.0 {
        return f64::INFINITY;
    }
    beckmann_lambda_of_a(beckmann_a(n_dot_v, alpha))
}

/// `exp(-a²)` with `a²` carried as an unevaluated sum `hi + lo`.
fn exp_neg_square(a: f64) -> f64 {
    let hi = a * a;
    let lo = a.mul_add(a, -hi);
    (-hi).exp() * (-lo).exp()
}

/// Beckmann's Λ as a function of `a = 1 / (alpha tan θ)`, `a ≥ 0`.
fn beckmann_lambda_of_a(a: f64) -> f64 {
    if a.is_infinite() {
        return 0.0;
    }
    if a < 2.0 {
        return (exp_neg_square(a) / (a * PI.sqrt()) - libm::erfc(a)) / 2.0;
    }
    let mut t = 0.0;
    for k in (1..=80).rev() {
        t = (f64::from(k) / 2.0) / (a + t);
    }
    exp_neg_square(a) / (2.0 * PI.sqrt()) * t / (a * (a + t))
}

/// `n·v · Λ(v)` for Beckmann, finite at `n·v = 0` where Λ is infinite: for `a < 2`,
/// `(alpha sin θ exp(-a²) / √π - cos θ erfc(a)) / 2`; above, `cos θ · Λ`.
fn beckmann_cos_lambda(c: f64, alpha: f64) -> f64 {
    let s = sin2_from_cos(c).sqrt();
    let a = c / (alpha * s);
    if a < 2.0 {
        (alpha * s * exp_neg_square(a) / PI.sqrt() - c * libm::erfc(a)) / 2.0
    } else {
        c * beckmann_lambda_of_a(a)
    }
}

/// Smith G1 for Beckmann, exact: `G1(v) = 1 / (1 + Λ(v))` with [`beckmann_lambda`].
///
/// Domain: `n_dot_v` in `-1 ..= 1`, `alpha ≥ 0`.
///
/// Edges: 1 at `n_dot_v = 1` or `alpha = 0` (and to f64 precision once `a > ~6`); falls
/// like `2 √π n·v / alpha` as `n_dot_v → 0+`; 0 for `n_dot_v ≤ 0`.
///
/// Source: Walter et al. 2007, section 5.1; Heitz 2014.
pub fn beckmann_g1(n_dot_v: f64, alpha: f64) -> f64 {
    1.0 / (1.0 + beckmann_lambda(n_dot_v, alpha))
}

/// Smith G1 for Beckmann, Walter's rational approximation.
///
/// Formula: with `a = 1 / (alpha tan θ)`,
/// `G1 ≈ (3.535 a + 2.181 a²) / (1 + 2.276 a + 2.577 a²)` for `a < 1.6`, and `1` otherwise.
///
/// Domain: `n_dot_v` in `-1 ..= 1`, `alpha > 0`.
///
/// Edges: 1 for `a ≥ 1.6` (near normal incidence, or small alpha); tends to 0 like
/// `3.535 a` as `n_dot_v → 0+`; 0 for `n_dot_v ≤ 0`. The paper states it is accurate to
/// better than 0.35 % relative (from memory); the tests measure the largest deviation from
/// [`beckmann_g1`]. Note the fit is not continuous at `a = 1.6`: just below it the
/// rational gives 1.00006, slightly more than 1.
///
/// Source: B. Walter, S. R. Marschner, H. Li and K. E. Torrance, "Microfacet Models for
/// Refraction through Rough Surfaces", 2007, section 5.1.
pub fn beckmann_g1_rational(n_dot_v: f64, alpha: f64) -> f64 {
    if n_dot_v <= 0.0 {
        return 0.0;
    }
    let a = beckmann_a(n_dot_v, alpha);
    if a < 1.6 {
        (3.535 * a + 2.181 * a * a) / (1.0 + 2.276 * a + 2.577 * a * a)
    } else {
        1.0
    }
}

/// Separable Smith G2 for Beckmann: `G1(v) · G1(l)` with the exact [`beckmann_g1`].
///
/// Domain and edges: those of [`beckmann_g1`] in each direction.
///
/// Source: Walter et al. 2007, section 5.1.
pub fn beckmann_g2_separable(n_dot_v: f64, n_dot_l: f64, alpha: f64) -> f64 {
    beckmann_g1(n_dot_v, alpha) * beckmann_g1(n_dot_l, alpha)
}

/// Height-correlated Smith G2 for Beckmann: `G2 = 1 / (1 + Λ(v) + Λ(l))` with the exact
/// [`beckmann_lambda`].
///
/// Domain and edges: as [`ggx_g2_height_correlated`].
///
/// Source: Heitz 2014.
pub fn beckmann_g2_height_correlated(n_dot_v: f64, n_dot_l: f64, alpha: f64) -> f64 {
    1.0 / (1.0 + beckmann_lambda(n_dot_v, alpha) + beckmann_lambda(n_dot_l, alpha))
}

/// Visibility of the height-correlated Smith Beckmann G2: `V = G2 / (4 n·v n·l)`.
///
/// Formula: evaluated as `1 / (4 (n·v n·l + n·l (n·v Λ(v)) + n·v (n·l Λ(l))))`, where
/// `c Λ(c)` is computed directly so that it stays finite at `c = 0`.
///
/// Domain: cosines in `-1 ..= 1`, `alpha > 0`.
///
/// Edges: `1/4` at normal incidence; at `n·v = 0+` it tends to `√π / (2 alpha n·l)`;
/// infinite when both cosines are 0+; 0 if either cosine is ≤ 0.
///
/// Source: Heitz 2014.
pub fn beckmann_v_height_correlated(n_dot_v: f64, n_dot_l: f64, alpha: f64) -> f64 {
    if n_dot_v <= 0.0 || n_dot_l <= 0.0 {
        return 0.0;
    }
    let cl_v = beckmann_cos_lambda(n_dot_v, alpha);
    let cl_l = beckmann_cos_lambda(n_dot_l, alpha);
    0.25 / (n_dot_v * n_dot_l + n_dot_l * cl_v + n_dot_v * cl_l)
}

/// `sqrt(n² + alpha_x² t² + alpha_y² b²)` for a unit direction with components `(t, b, n)`
/// in the tangent frame: the square root of the anisotropic GGX Λ, times `n`.
fn ggx_aniso_root(n: f64, t: f64, b: f64, alpha_x: f64, alpha_y: f64) -> f64 {
    (n * n + alpha_x * alpha_x * t * t + alpha_y * alpha_y * b * b).sqrt()
}

/// Smith Λ for anisotropic GGX.
///
/// Formula: with the direction's tangent-frame components `(t, b, n)` (`t = t·v`,
/// `b = b·v`, `n = n·v`, unit `v`), `Λ(v) = (-1 + sqrt(1 + (alpha_x² t² + alpha_y² b²) /
/// n²)) / 2`; evaluated as `s / (2 n (n + sqrt(n² + s)))` with `s = alpha_x² t² +
/// alpha_y² b²`, which removes the subtraction.
///
/// Domain: `t`, `b`, `n` the components of a unit vector; `alpha_x`, `alpha_y ≥ 0`.
///
/// Edges: 0 at `n = 1` or when both alphas are 0; equals the isotropic [`ggx_lambda`] when
/// `alpha_x = alpha_y`; grows like `sqrt(s) / (2 n)` as `n → 0+`; `+∞` for `n ≤ 0`.
///
/// Source: E. Heitz, "Understanding the Masking-Shadowing Function in Microfacet-Based
/// BRDFs", Journal of Computer Graphics Techniques 3(2), 2014 (section 5.2, the
/// anisotropic GGX Λ with the projected width `alpha_0² = cos²φ alpha_x² + sin²φ alpha_y²`).
pub fn ggx_aniso_lambda(n_dot_v: f64, t_dot_v: f64, b_dot_v: f64, ax: f64, ay: f64) -> f64 {
    if n_dot_v <= 0.0 {
        return f64::INFINITY;
    }
    let s = ax * ax * t_dot_v * t_dot_v + ay * ay * b_dot_v * b_dot_v;
    s / (2.0 * n_dot_v * (n_dot_v + ggx_aniso_root(n_dot_v, t_dot_v, b_dot_v, ax, ay)))
}

/// Smith G1 for anisotropic GGX: `G1 = 1 / (1 + Λ) = 2 n / (n + sqrt(n² + alpha_x² t² +
/// alpha_y² b²))`.
///
/// Domain and components as [`ggx_aniso_lambda`]. Edges: 1 at `n = 1` or zero alphas;
/// 0 for `n ≤ 0`; tends to 0 as `n → 0+` when the alphas are positive.
///
/// Source: Heitz 2014 (section 5.2).
pub fn ggx_aniso_g1(n_dot_v: f64, t_dot_v: f64, b_dot_v: f64, ax: f64, ay: f64) -> f64 {
    if n_dot_v <= 0.0 {
        return 0.0;
    }
    2.0 * n_dot_v / (n_dot_v + ggx_aniso_root(n_dot_v, t_dot_v, b_dot_v, ax, ay))
}

/// Separable Smith G2 for anisotropic GGX: `G2 = G1(v) G1(l)`.
///
/// Domain: the tangent-frame components of two unit vectors `v` and `l`, alphas `≥ 0`.
/// Edges: 1 when both directions are the normal; 0 if either `n` component is `≤ 0`.
///
/// Source: Heitz 2014 (section 6, the separable form).
#[allow(clippy::too_many_arguments)]
pub fn ggx_aniso_g2_separable(
    n_dot_v: f64,
    t_dot_v: f64,
    b_dot_v: f64,
    n_dot_l: f64,
    t_dot_l: f64,
    b_dot_l: f64,
    ax: f64,
    ay: f64,
) -> f64 {
    ggx_aniso_g1(n_dot_v, t_dot_v, b_dot_v, ax, ay)
        * ggx_aniso_g1(n_dot_l, t_dot_l, b_dot_l, ax, ay)
}

/// Height-correlated Smith G2 for anisotropic GGX: `G2 = 1 / (1 + Λ(v) + Λ(l))`.
///
/// Domain and edges as [`ggx_aniso_g2_separable`]; equals the isotropic
/// [`ggx_g2_height_correlated`] when `alpha_x = alpha_y`.
///
/// Source: Heitz 2014 (section 6, the height-correlated form).
#[allow(clippy::too_many_arguments)]
pub fn ggx_aniso_g2_height_correlated(
    n_dot_v: f64,
    t_dot_v: f64,
    b_dot_v: f64,
    n_dot_l: f64,
    t_dot_l: f64,
    b_dot_l: f64,
    ax: f64,
    ay: f64,
) -> f64 {
    if n_dot_v <= 0.0 || n_dot_l <= 0.0 {
        return 0.0;
    }
    1.0 / (1.0
        + ggx_aniso_lambda(n_dot_v, t_dot_v, b_dot_v, ax, ay)
        + ggx_aniso_lambda(n_dot_l, t_dot_l, b_dot_l, ax, ay))
}

/// Visibility of the separable anisotropic G2: `V = G1(v) G1(l) / (4 n·v n·l) =
/// 1 / ((n_v + r_v)(n_l + r_l))` with `r = sqrt(n² + alpha_x² t² + alpha_y² b²)`.
///
/// Domain as [`ggx_aniso_g2_separable`]. Edges: `1/4` when both directions are the normal;
/// finite as either `n → 0+` (for positive alphas); 0 if either `n ≤ 0`.
///
/// Source: Heitz 2014; the visibility form (G2 divided by the BRDF's `4 n·v n·l`) is
/// common practice.
#[allow(clippy::too_many_arguments)]
pub fn ggx_aniso_v_separable(
    n_dot_v: f64,
    t_dot_v: f64,
    b_dot_v: f64,
    n_dot_l: f64,
    t_dot_l: f64,
    b_dot_l: f64,
    ax: f64,
    ay: f64,
) -> f64 {
    if n_dot_v <= 0.0 || n_dot_l <= 0.0 {
        return 0.0;
    }
    let rv = ggx_aniso_root(n_dot_v, t_dot_v, b_dot_v, ax, ay);
    let rl = ggx_aniso_root(n_dot_l, t_dot_l, b_dot_l, ax, ay);
    1.0 / ((n_dot_v + rv) * (n_dot_l + rl))
}

/// Visibility of the height-correlated anisotropic G2: `V = G2 / (4 n·v n·l) =
/// 0.5 / (n_l r_v + n_v r_l)` with `r = sqrt(n² + alpha_x² t² + alpha_y² b²)`.
///
/// Domain as [`ggx_aniso_g2_separable`]. Edges: `1/4` when both directions are the normal;
/// equals [`ggx_v_height_correlated`] when `alpha_x = alpha_y`; at `n_v = 0+` it tends to
/// `0.5 / (n_l r_v)` (finite for positive alphas); 0 if either `n ≤ 0`.
///
/// Source: Heitz 2014; in this form common practice (the anisotropic extension of the
/// isotropic visibility, quoted from memory of several open renderers).
#[allow(clippy::too_many_arguments)]
pub fn ggx_aniso_v_height_correlated(
    n_dot_v: f64,
    t_dot_v: f64,
    b_dot_v: f64,
    n_dot_l: f64,
    t_dot_l: f64,
    b_dot_l: f64,
    ax: f64,
    ay: f64,
) -> f64 {
    if n_dot_v <= 0.0 || n_dot_l <= 0.0 {
        return 0.0;
    }
    let rv = ggx_aniso_root(n_dot_v, t_dot_v, b_dot_v, ax, ay);
    let rl = ggx_aniso_root(n_dot_l, t_dot_l, b_dot_l, ax, ay);
    0.5 / (n_dot_l * rv + n_dot_v * rl)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * b.abs()
    }

    #[test]
    fn lambda_and_g1_agree() {
        // Identity (Smith): G1 = 1 / (1 + Λ). The two functions are computed by different
        // expressions, so this catches an algebra slip in either. 1e-14: a handful of
        // roundings in each expression.
        for &c in &[1e-3, 0.1, 0.5, 0.9, 0.999999] {
            for &alpha in &[0.01, 0.3, 1.0] {
                assert!(close(
                    ggx_g1(c, alpha),
                    1.0 / (1.0 + ggx_lambda(c, alpha)),
                    1e-14
                ));
            }
        }
    }

    #[test]
    fn visibility_forms_match_g2_over_denominator() {
        // Identity: V = G2 / (4 n·v n·l), checked where the quotient is well conditioned.
        // 1e-14: a handful of roundings in each expression.
        for &(v, l) in &[(0.3, 0.8), (0.9, 0.1), (1.0, 1.0)] {
            for &alpha in &[0.05, 0.5, 1.0] {
                let d = 4.0 * v * l;
                assert!(close(
                    ggx_v_height_correlated(v, l, alpha),
                    ggx_g2_height_correlated(v, l, alpha) / d,
                    1e-14
                ));
                assert!(close(
                    ggx_v_separable(v, l, alpha),
                    ggx_g2_separable(v, l, alpha) / d,
                    1e-14
                ));
                assert!(close(
                    beckmann_v_height_correlated(v, l, alpha),
                    beckmann_g2_height_correlated(v, l, alpha) / d,
                    1e-14
                ));
            }
        }
    }

    #[test]
    fn masked_below_the_horizon() {
        // χ+(n·v): a direction at or below the horizon is fully masked.
        assert_eq!(ggx_g1(0.0, 0.5), 0.0);
        assert_eq!(beckmann_g1(0.0, 0.5), 0.0);
        assert_eq!(beckmann_g1_rational(-0.1, 0.5), 0.0);
        assert_eq!(ggx_v_height_correlated(0.0, 0.5, 0.5), 0.0);
        assert_eq!(beckmann_v_height_correlated(0.5, -0.5, 0.5), 0.0);
        assert_eq!(ggx_lambda(0.0, 0.5), f64::INFINITY);
    }

    #[test]
    fn smooth_surface_has_no_masking() {
        // alpha = 0 is a mirror: Λ = 0 and G1 = 1 above the horizon.
        assert_eq!(ggx_g1(0.2, 0.0), 1.0);
        assert_eq!(beckmann_g1(0.2, 0.0), 1.0);
        assert_eq!(ggx_lambda(0.2, 0.0), 0.0);
    }

    #[test]
    fn grazing_visibility_limits() {
        // Limits stated in the doc comments, from the formulas: at n·v → 0,
        // V_ggx → 0.5 / (alpha n·l) and V_beckmann → √π / (2 alpha n·l).
        let (l, alpha) = (0.6, 0.4);
        let v = 1e-12;
        assert!(close(
            ggx_v_height_correlated(v, l, alpha),
            0.5 / (alpha * l),
            1e-9
        ));
        assert!(close(
            beckmann_v_height_correlated(v, l, alpha),
            PI.sqrt() / (2.0 * alpha * l),
            1e-9
        ));
    }

    #[test]
    fn the_two_fast_approximations_are_algebraically_equal() {
        // Expanding n·l (n·v (1-a) + a) + n·v (n·l (1-a) + a) gives
        // 2 n·l n·v (1-a) + a (n·l + n·v) = mix(2 n·l n·v, n·l + n·v, a). 1e-15: rounding.
        for &(v, l) in &[(0.3, 0.8), (0.01, 0.9), (1.0, 0.5)] {
            for &alpha in &[0.0, 0.2, 0.7, 1.0] {
                assert!(close(
                    ggx_v_height_correlated_fast(v, l, alpha),
                    ggx_v_height_correlated_hammon(v, l, alpha),
                    1e-15
                ));
            }
        }
    }
}
