//! The split-sum environment BRDF: the scale and bias that turn `F0` into the directional
//! albedo of the GGX specular lobe with Schlick Fresnel, `E_F(μ) = F0 · scale + bias`.
//!
//! Formula: with `f_ss = D · V` (GGX, height-correlated Smith visibility, `F = 1`) and
//! Schlick's `F = F0 + (1 - F0)(1 - v·h)⁵ = F0 (1 - (1 - v·h)⁵) + (1 - v·h)⁵`:
//! `scale(μ, r) = ∫ f_ss (1 - (1 - v·h)⁵) (n·l) dω_l`,
//! `bias(μ, r) = ∫ f_ss (1 - v·h)⁵ (n·l) dω_l`, with `alpha = r²`. Their sum is the
//! directional albedo [`super::multiscatter::ggx_albedo`] (tested). Both are integrated
//! numerically by the same code as the albedo ([`super::multiscatter`]), to
//! [`super::multiscatter::ALBEDO_TOL`] absolute.
//!
//! Published analytic fits of these tables exist; [`split_sum_fit`] is one, so that a
//! shader's fit can be checked against the integral and the fit's own error is known.
//!
//! Source: B. Karis, course notes, SIGGRAPH 2013 course "Physically Based Shading in
//! Theory and Practice" (the split-sum approximation and the table of scale and bias;
//! the tables there used a separable Schlick-GGX visibility, these use the
//! height-correlated one, as many later renderers do: common practice).

use super::multiscatter::{lobe_integral, ALBEDO_TOL};

fn pow5(x: f64) -> f64 {
    let x2 = x * x;
    x2 * x2 * x
}

/// The split-sum scale term (the factor of `F0`).
///
/// Domain: `n_dot_v` in `0 ..= 1` (clamped), perceptual `roughness` in `0 ..= 1`.
/// Edges: at `roughness = 0` (a mirror) it is `1 - (1 - n·v)⁵`, so 1 at normal view and 0
/// at grazing; at `n·v = 0` it is the finite grazing limit.
///
/// Source: Karis 2013 (see the module documentation).
pub fn split_sum_scale(n_dot_v: f64, roughness: f64) -> f64 {
    let alpha = roughness * roughness;
    lobe_integral(n_dot_v, alpha, &|vh| 1.0 - pow5(1.0 - vh), ALBEDO_TOL)
}

/// The split-sum bias term (added to `F0 · scale`).
///
/// Domain as [`split_sum_scale`]. Edges: at `roughness = 0` it is `(1 - n·v)⁵`: 0 at
/// normal view, 1 at grazing.
///
/// Source: Karis 2013 (see the module documentation).
pub fn split_sum_bias(n_dot_v: f64, roughness: f64) -> f64 {
    let alpha = roughness * roughness;
    lobe_integral(n_dot_v, alpha, &|vh| pow5(1.0 - vh), ALBEDO_TOL)
}

/// The published analytic fit of the split-sum scale and bias, `(scale, bias)`.
///
/// Formula: `c0 = (-1, -0.0275, -0.572, 0.022)`, `c1 = (1, 0.0425, 1.04, -0.04)`,
/// `r = roughness · c0 + c1`, `a004 = min(r.x², 2^(-9.28 n·v)) r.x + r.y`,
/// `(scale, bias) = (-1.04, 1.04) a004 + (r.z, r.w)`.
///
/// Domain: `n_dot_v` in `0 ..= 1`, `roughness` in `0 ..= 1`. Edges: at `roughness = 0`,
/// `n·v = 1` it gives `(0.9941, 0.0059)` where the integral gives `(1, 0)`; at
/// `roughness = 1`, `n·v = 1` the bias is slightly negative (`-0.0024`): the fit is a fit,
/// and its distance from the integral is measured in the tests, not promised.
///
/// Source: B. Karis, "Physically Based Shading on Mobile", web article, 2014; the
/// coefficients are quoted from memory: common practice.
pub fn split_sum_fit(n_dot_v: f64, roughness: f64) -> (f64, f64) {
    let c0 = [-1.0, -0.0275, -0.572, 0.022];
    let c1 = [1.0, 0.0425, 1.04, -0.04];
    let r: Vec<f64> = (0..4).map(|i| roughness * c0[i] + c1[i]).collect();
    let a004 = (r[0] * r[0]).min((-9.28 * n_dot_v).exp2()) * r[0] + r[1];
    (-1.04 * a004 + r[2], 1.04 * a004 + r[3])
}
