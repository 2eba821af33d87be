//! Multiple scattering: the directional albedo of the single-scattering GGX specular lobe,
//! its hemispherical average, and the energy-compensation terms built on them.
//!
//! The lobe is [`super::brdf::CookTorrance::SPECULAR_ONLY`]'s: `f_ss = D · V` with the GGX
//! distribution, the height-correlated Smith visibility and `F = 1`. Its directional albedo
//! `E(μ, alpha) = ∫ f_ss (n·l) dω_l` is computed here by numerical integration
//! ([`super::quad`]), over the microfacet normal `h` with the reflection Jacobian
//! `dω_l = 4 (v·h) dω_h` (Walter et al. 2007), with panel breaks where the reflected
//! direction crosses the horizon. Nothing is tabulated by hand; the albedo table published
//! in `harness/reference/ALBEDO.md` is [`albedo_table`]'s output.
//!
//! Accuracy: the quadrature is asked for [`ALBEDO_TOL`] absolute on E and
//! [`AVERAGE_TOL`] on `E_avg`. What it reaches is measured in the tests against an
//! independent integration with mpmath (`tools/refgen/refgen.py`, its own transcription of
//! the integrand and mpmath's own tanh-sinh quadrature at 30 digits) and against the
//! closed forms at `alpha = 1`: see `tests/reference/integrated.rs`.
//!
//! Cost: one E takes some tens of thousands of evaluations of the lobe (about a
//! millisecond); `E_avg` integrates E over μ and is cached per `alpha` for the life of the
//! process, so the energy-compensation models cost two or three E per point.

use super::ndf;
use super::quad;
use std::collections::HashMap;
use std::f64::consts::{FRAC_PI_2, PI};
use std::sync::{Mutex, OnceLock};

/// Absolute tolerance asked of the quadrature for one directional albedo.
pub const ALBEDO_TOL: f64 = 1e-10;
/// Absolute tolerance asked of the quadrature over μ for the average albedo.
pub const AVERAGE_TOL: f64 = 1e-9;

/// `sqrt(c² + alpha² (1 - c²))`, from the height-correlated GGX visibility.
fn ggx_root(c: f64, alpha: f64) -> f64 {
    (c * c + alpha * alpha * (1.0 - c) * (1.0 + c)).sqrt()
}

/// Panel breaks on `[0, π/2]` for a lobe of angular width about `width` around θ = 0, plus
/// the extra breaks given.
fn lobe_breaks(width: f64, extra: &[f64]) -> Vec<f64> {
    let mut b = vec![0.0];
    let mut t = width / 8.0;
    while t < FRAC_PI_2 {
        b.push(t);
        t *= 2.0;
    }
    b.extend(extra.iter().copied().filter(|&e| e > 0.0 && e < FRAC_PI_2));
    b.push(FRAC_PI_2);
    b.sort_by(f64::total_cmp);
    b.dedup();
    b
}

/// `∫ f_ss(v, l) w(v·h) (n·l) dω_l` over the upper hemisphere, for `n·v = n_dot_v`; `w`
/// weights each microfacet by its `v·h` (1 for the albedo, Schlick's weights for the
/// split-sum terms). `alpha = 0` is the mirror: `w(n·v)`.
pub(crate) fn lobe_integral(n_dot_v: f64, alpha: f64, w: &dyn Fn(f64) -> f64, tol: f64) -> f64 {
    let mu = n_dot_v.clamp(0.0, 1.0);
    if alpha == 0.0 {
        return w(mu);
    }
    let sin_v = ((1.0 - mu) * (1.0 + mu)).sqrt();
    let root_v = ggx_root(mu, alpha);
    let inner = |t: f64| {
        let (s, c) = t.sin_cos();
        let d = ndf::ggx(c, alpha);
        let g = |p: f64| {
            let v_dot_h = sin_v * s * p.cos() + mu * c;
            if v_dot_h <= 0.0 {
                return 0.0;
            }
            let n_dot_l = 2.0 * v_dot_h * c - mu;
            if n_dot_l <= 0.0 {
                return 0.0;
            }
            // V = G2 / (4 n·l n·v), finite at n·v = 0.
            let vis = 0.5 / (n_dot_l * root_v + mu * ggx_root(n_dot_l, alpha));
            d * vis * 4.0 * n_dot_l * v_dot_h * w(v_dot_h)
        };
        // Symmetric in φ about the plane of v: integrate (0, π) and double. l reaches the
        // horizon where cos φ = n·v (1 - 2 cos²θ) / (2 cos θ sin θv sin θ): a kink.
        let mut breaks = vec![0.0, FRAC_PI_2, PI];
        if sin_v * s > 0.0 && c > 0.0 {
            let k = mu * (1.0 - 2.0 * c * c) / (2.0 * c * sin_v * s);
            if k.abs() < 1.0 {
                breaks.push(k.acos());
                breaks.sort_by(f64::total_cmp);
            }
        }
        2.0 * quad::panels(&g, &breaks, tol / 4.0) * s
    };
    // h beyond θ = (π/2 + θv)/2 reflects v below the horizon: a kink there.
    let kink = (FRAC_PI_2 - mu.acos()) / 2.0;
    quad::panels(
        &inner,
        &lobe_breaks(alpha, &[kink, FRAC_PI_2 - kink]),
        tol / 2.0,
    )
}

/// Directional albedo `E(μ, alpha)` of the single-scattering GGX specular lobe with
/// height-correlated Smith visibility and `F = 1`.
///
/// Formula: `E(μ) = ∫ D(h) V(n·v, n·l) (n·l) dω_l` over the hemisphere, `n·v = μ`,
/// integrated numerically (see the module documentation).
///
/// Domain: `n_dot_v` in `0 ..= 1` (clamped), `alpha` in `0 ..= 1`.
///
/// Edges: `alpha = 0` gives 1 (a mirror loses nothing); at `alpha = 1` the closed form
/// `E(μ) = 1 - μ ln(1 + 1/μ)` holds (GGX is `1/π` and `V = 0.5 / (n·l + n·v)` there);
/// `μ = 0` gives the finite grazing limit (the visibility stays finite there). Always
/// `≤ 1` (tested).
///
/// Source: the definition of directional albedo; the lobe's terms cite B. Walter et al.,
/// "Microfacet Models for Refraction through Rough Surfaces", Eurographics Symposium on
/// Rendering, 2007, and E. Heitz, "Understanding the Masking-Shadowing Function in
/// Microfacet-Based BRDFs", Journal of Computer Graphics Techniques 3(2), 2014; its use for
/// energy compensation is C. Kulla, A. Conty, course notes, SIGGRAPH 2017 course
/// "Physically Based Shading in Theory and Practice".
pub fn ggx_albedo(n_dot_v: f64, alpha: f64) -> f64 {
    lobe_integral(n_dot_v, alpha, &|_| 1.0, ALBEDO_TOL)
}

/// The hemispherical average `E_avg(alpha) = 2 ∫₀¹ E(μ, alpha) μ dμ` of [`ggx_albedo`].
///
/// Integrated adaptively over μ on the panels `0, 0.05, 0.25, 1` (E changes fastest near
/// grazing); cached per `alpha` (keyed by its bits) for the life of the process.
///
/// Domain: `alpha` in `0 ..= 1`. Edges: 1 at `alpha = 0`; `(4/3)(1 - ln 2)` at
/// `alpha = 1` (closed form, tested).
///
/// Source: C. Kulla, A. Conty, course notes, SIGGRAPH 2017 course "Physically Based
/// Shading in Theory and Practice" (the average albedo `E_avg`).
pub fn ggx_albedo_average(alpha: f64) -> f64 {
    static CACHE: OnceLock<Mutex<HashMap<u64, f64>>> = OnceLock::new();
    let cache = CACHE.get_or_init(|| Mutex::new(HashMap::new()));
    if let Some(e) = cache
        .lock()
        .map(|c| c.get(&alpha.to_bits()).copied())
        .ok()
        .flatten()
    {
        return e;
    }
    let f = |mu: f64| 2.0 * ggx_albedo(mu, alpha) * mu;
    let e = quad::panels(&f, &[0.0, 0.05, 0.25, 1.0], AVERAGE_TOL);
    if let Ok(mut c) = cache.lock() {
        c.insert(alpha.to_bits(), e);
    }
    e
}

/// Kulla and Conty's multiple-scattering lobe for the white (`F = 1`) GGX lobe.
///
/// Formula: `f_ms(v, l) = (1 - E(n·v)) (1 - E(n·l)) / (π (1 - E_avg))`, with `E` from
/// [`ggx_albedo`] and `E_avg` from [`ggx_albedo_average`]. It is built so that
/// `∫ (f_ss + f_ms) (n·l) dω_l = 1` for every `v`: a white furnace returns all the light.
///
/// Domain: cosines in `0 ..= 1`, `alpha` in `0 ..= 1`. Edges: 0 at `alpha = 0` (nothing is
/// lost, `E = E_avg = 1`; the 0/0 is defined as 0); 0 for cosines `≤ 0`; largest for rough
/// lobes at grazing.
///
/// Source: C. Kulla, A. Conty, course notes, SIGGRAPH 2017 course "Physically Based
/// Shading in Theory and Practice" (after Kelemen and Szirmay-Kalos 2001).
pub fn kulla_conty_ms(n_dot_v: f64, n_dot_l: f64, alpha: f64) -> f64 {
    if alpha == 0.0 || n_dot_v <= 0.0 || n_dot_l <= 0.0 {
        return 0.0;
    }
    let e_avg = ggx_albedo_average(alpha);
    (1.0 - ggx_albedo(n_dot_v, alpha)) * (1.0 - ggx_albedo(n_dot_l, alpha)) / (PI * (1.0 - e_avg))
}

/// The hemispherical average of Schlick's Fresnel, `F_avg = 2 ∫₀¹ F(μ) μ dμ =
/// F0 + (1 - F0) / 21` (exact: `2 ∫ (1 - μ)⁵ μ dμ = 1/21`).
///
/// Domain: `f0` in `0 ..= 1`. Edges: `1/21` at `F0 = 0`, 1 at `F0 = 1`.
///
/// Source: integral of C. Schlick, "An Inexpensive BRDF Model for Physically-based
/// Rendering", Computer Graphics Forum, 1994; used by Kulla and Conty 2017.
pub fn schlick_fresnel_average(f0: f64) -> f64 {
    f0 + (1.0 - f0) / 21.0
}

/// Kulla and Conty's colour factor for the multiple-scattering lobe of a lobe with Fresnel:
/// `F_ms = F_avg² E_avg / (1 - F_avg (1 - E_avg))`, the light that survives the
/// (geometric series of) further bounces.
///
/// Domain: `f_avg`, `e_avg` in `0 ..= 1`. Edges: 1 when `F_avg = 1` and `E_avg` is any
/// value above 0; 0 when `F_avg = 0`.
///
/// Source: C. Kulla, A. Conty, course notes, SIGGRAPH 2017 course "Physically Based
/// Shading in Theory and Practice".
pub fn kulla_conty_fresnel_factor(f_avg: f64, e_avg: f64) -> f64 {
    f_avg * f_avg * e_avg / (1.0 - f_avg * (1.0 - e_avg))
}

/// The multiple-scattering lobe with Schlick Fresnel of reflectance `f0`:
/// `f_ms · F_ms(F_avg(f0), E_avg)` ([`kulla_conty_ms`], [`kulla_conty_fresnel_factor`],
/// [`schlick_fresnel_average`]).
///
/// Domain and edges as [`kulla_conty_ms`]; equals it at `f0 = 1`.
///
/// Source: Kulla and Conty 2017 (as above).
pub fn kulla_conty_ms_fresnel(n_dot_v: f64, n_dot_l: f64, alpha: f64, f0: f64) -> f64 {
    let ms = kulla_conty_ms(n_dot_v, n_dot_l, alpha);
    if ms == 0.0 {
        return 0.0;
    }
    ms * kulla_conty_fresnel_factor(schlick_fresnel_average(f0), ggx_albedo_average(alpha))
}

/// Turquin's energy-compensation factor for the single-scattering lobe:
/// `f = f_ss (1 + F0 (1 - E(n·v)) / E(n·v))`; this returns the factor
/// `1 + F0 (1 / E - 1)`.
///
/// With `F0 = 1` the compensated white lobe's albedo is exactly 1 (`E · 1/E`), the white
/// furnace test.
///
/// Domain: `n_dot_v` in `0 ..= 1`, `alpha` in `0 ..= 1`, `f0` in `0 ..= 1`. Edges: 1 at
/// `alpha = 0` or `F0 = 0`; largest for rough lobes (`1/E ≈ 3.3` at `alpha = 1`, normal view).
///
/// Source: E. Turquin, "Practical multiple scattering compensation for microfacet models",
/// technical report, 2019.
pub fn turquin_compensation(n_dot_v: f64, alpha: f64, f0: f64) -> f64 {
    let e = ggx_albedo(n_dot_v, alpha);
    1.0 + f0 * (1.0 / e - 1.0)
}

/// The albedo table published in `harness/reference/ALBEDO.md` and in
/// [`super::brdf`]'s documentation: one row per perceptual roughness `r` (`alpha = r²`),
/// the columns `E` at each `n·v` in `n_dot_v`, then `E_avg`.
pub fn albedo_table(roughness: &[f64], n_dot_v: &[f64]) -> Vec<Vec<f64>> {
    roughness
        .iter()
        .map(|&r| {
            let alpha = r * r;
            let mut row: Vec<f64> = n_dot_v.iter().map(|&c| ggx_albedo(c, alpha)).collect();
            row.push(ggx_albedo_average(alpha));
            row
        })
        .collect()
}

/// The roughness rows of the published albedo table.
pub const TABLE_ROUGHNESS: [f64; 10] = [0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1.0];
/// The `n·v` columns of the published albedo table.
pub const TABLE_N_DOT_V: [f64; 5] = [1.0, 0.75, 0.5, 0.25, 0.1];

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn alpha_one_matches_the_closed_form() {
        // At alpha = 1: E(μ) = 1 - μ ln(1 + 1/μ) (derived in ALBEDO.md).
        for mu in [1.0_f64, 0.5, 0.1, 0.01] {
            let want = 1.0 - mu * (1.0 + 1.0 / mu).ln();
            let got = ggx_albedo(mu, 1.0);
            assert!((got - want).abs() <= 1e-9, "μ = {mu}: {got} vs {want}");
        }
    }

    #[test]
    fn mirror_loses_nothing() {
        assert_eq!(ggx_albedo(0.3, 0.0), 1.0);
        assert_eq!(kulla_conty_ms(0.3, 0.5, 0.0), 0.0);
    }
}
