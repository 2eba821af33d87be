//! Fresnel reflectance: Schlick's approximation and the exact dielectric and conductor
//! formulas.
//!
//! Conventions shared by the whole family:
//! - `v_dot_h` is the cosine of the angle of incidence on the (micro)facet: `v·h` in a
//!   microfacet BRDF, `n·v` for a smooth surface.
//! - `ior` is the *relative* index of refraction, `n_transmitted / n_incident` (1.5 for
//!   light arriving from air onto glass; 1/1.5 for light inside the glass heading out).
//!   `k` is the extinction coefficient of a conductor, so the complex index is `ior + i k`.
//! - Reflectances are unpolarised: the mean of the s- and p-polarised reflectances.
//! - Schlick's polynomial is evaluated exactly as written for any input; it is meaningful for
//!   `v_dot_h` in `0 ..= 1`. The exact formulas use `|v_dot_h|`.

use super::vec3::{dot, Vec3};

/// Schlick's Fresnel approximation with `F90 = 1`: `F = F0 + (1 - F0) (1 - cos θ)⁵`.
///
/// Domain: `v_dot_h` in `0 ..= 1`, `0 ≤ f0 ≤ 1`. No clamping (see the module notes).
///
/// Edges: `F0` at normal incidence (`v_dot_h = 1`), exactly 1 at grazing (`v_dot_h = 0`),
/// which are also the exact Fresnel values there (tested).
///
/// Source: C. Schlick, "An Inexpensive BRDF Model for Physically-based Rendering", 1994.
#[inline]
pub fn schlick(v_dot_h: f64, f0: f64) -> f64 {
    schlick_f90(v_dot_h, f0, 1.0)
}

/// Schlick's Fresnel approximation with a free grazing value:
/// `F = F0 + (F90 - F0) (1 - cos θ)⁵`.
///
/// Domain: `v_dot_h` in `0 ..= 1`, `0 ≤ f0, f90 ≤ 1`. No clamping.
///
/// Edges: `F0` at `v_dot_h = 1`, `F90` at `v_dot_h = 0`.
///
/// Source: C. Schlick, "An Inexpensive BRDF Model for Physically-based Rendering", 1994
/// (with `F90 = 1`); the free `F90` is used by B. Burley, course notes of the SIGGRAPH 2012
/// course "Practical Physically Based Shading in Film and Game Production", 2012, and by
/// S. Lagarde and C. de Rousiers, course notes of the SIGGRAPH 2014 course "Physically Based
/// Shading in Theory and Practice", 2014.
#[inline]
pub fn schlick_f90(v_dot_h: f64, f0: f64, f90: f64) -> f64 {
    let m = 1.0 - v_dot_h;
    let m2 = m * m;
    f0 + (f90 - f0) * (m2 * m2 * m)
}

/// Schlick's approximation per RGB channel with `F90 = 1`.
///
/// Domain and edges: as [`schlick`], channel by channel.
///
/// Source: Schlick 1994.
#[inline]
pub fn schlick_rgb(v_dot_h: f64, f0: Vec3) -> Vec3 {
    schlick_rgb_f90(v_dot_h, f0, 1.0)
}

/// Schlick's approximation per RGB channel with one scalar `F90` for all channels.
///
/// Domain and edges: as [`schlick_f90`], channel by channel.
///
/// Source: Schlick 1994; Burley 2012.
#[inline]
pub fn schlick_rgb_f90(v_dot_h: f64, f0: Vec3, f90: f64) -> Vec3 {
    [
        schlick_f90(v_dot_h, f0[0], f90),
        schlick_f90(v_dot_h, f0[1], f90),
        schlick_f90(v_dot_h, f0[2], f90),
    ]
}

/// Grazing reflectance derived from `F0`: `F90 = saturate(50 · dot(F0, (0.33, 0.33, 0.33)))`.
///
/// A reflectance below about 2 % is not found in real materials, so it is read as
/// pre-baked specular occlusion and the grazing reflection is faded out with it.
///
/// Domain: RGB `F0` with components in `0 ..= 1`. Edges: 0 at `F0 = 0`; 1 (saturated) once
/// the mean `F0` reaches about 0.0202; the common dielectric 0.04 gives 1.
///
/// Source: R. Guy and M. Agopian, design documentation of an open-source real-time
/// physically based renderer, 2018 (section on specular occlusion), after C. Schüler, "An
/// Efficient and Physically Plausible Real-Time Shading Model", ShaderX7, 2009 (common
/// practice; attribution from memory).
#[inline]
pub fn f90_from_f0(f0: Vec3) -> f64 {
    (50.0 * dot(f0, [0.33, 0.33, 0.33])).clamp(0.0, 1.0)
}

/// Schlick per RGB channel with `F90` from [`f90_from_f0`]:
/// `F = F0 + (saturate(50 · dot(F0, 0.33)) - F0) (1 - cos θ)⁵`.
///
/// Domain and edges: as [`schlick_rgb_f90`] with that `F90`.
///
/// Source: Schlick 1994; Guy and Agopian 2018.
#[inline]
pub fn schlick_rgb_f90_from_f0(v_dot_h: f64, f0: Vec3) -> Vec3 {
    schlick_rgb_f90(v_dot_h, f0, f90_from_f0(f0))
}

/// Exact unpolarised Fresnel reflectance of a smooth interface between two dielectrics.
///
/// Formula: with `c = |cos θi|` and `g² = ior² - 1 + c²`: if `g² < 0` the light is totally
/// internally reflected and `F = 1`; otherwise
/// `F = ½ ((g - c)/(g + c))² (1 + ((c (g + c) - 1) / (c (g - c) + 1))²)`,
/// which is `(R_s + R_p) / 2` of Fresnel's equations. `g - c` is computed as
/// `(ior² - 1) / (g + c)` so that it keeps its digits when `ior` is near 1.
///
/// Domain: `v_dot_h` in `-1 ..= 1` (its sign is ignored), `ior > 0` relative index.
///
/// Edges: `((ior - 1)/(ior + 1))²` at normal incidence; exactly 1 at grazing
/// (`v_dot_h = 0`); exactly 1 beyond the critical angle `asin(ior)` when `ior < 1`; 0 for
/// `ior = 1` (no interface).
///
/// Source: A. Fresnel (1823), as given by M. Born and E. Wolf, "Principles of Optics",
/// 1959; in this form B. Walter, S. R. Marschner, H. Li and K. E. Torrance, "Microfacet
/// Models for Refraction through Rough Surfaces", 2007 (their dielectric Fresnel term).
pub fn dielectric(v_dot_h: f64, ior: f64) -> f64 {
    if ior == 1.0 {
        return 0.0;
    }
    let c = v_dot_h.abs();
    if c == 0.0 {
        // The exact limit; the formula below would round to 1 ± 4e-16 here.
        return 1.0;
    }
    let e2m1 = (ior - 1.0) * (ior + 1.0);
    let g2 = e2m1 + c * c;
    if g2 < 0.0 {
        return 1.0;
    }
    let g = g2.sqrt();
    let gpc = g + c;
    let gmc = e2m1 / gpc;
    let r = gmc / gpc;
    let t = (c * gpc - 1.0) / (c * gmc + 1.0);
    0.5 * r * r * (1.0 + t * t)
}

/// Exact unpolarised Fresnel reflectance of a smooth conductor (complex index `ior + i k`).
///
/// Formula: with `c = |cos θ|`, `s² = 1 - c²`, and `a + i b = sqrt((ior + i k)² - s²)`
/// (principal root, so `a, b ≥ 0`):
/// `R_s = ((a - c)² + b²) / ((a + c)² + b²)`,
/// `R_p = R_s · ((a c - s²)² + (b c)²) / ((a c + s²)² + (b c)²)`,
/// `F = (R_s + R_p) / 2`.
/// The complex square root is taken in the cancellation-free way (the larger of `a`, `b`
/// from `sqrt((|w| ± Re w) / 2)`, the other from `Im w = 2 a b`).
///
/// Domain: `v_dot_h` in `-1 ..= 1` (sign ignored), `ior > 0`, `k ≥ 0`. With `k = 0` it is
/// the dielectric formula, total internal reflection included (tested).
///
/// Edges: `((ior - 1)² + k²) / ((ior + 1)² + k²)` at normal incidence; exactly 1 at grazing.
///
/// Source: M. Born and E. Wolf, "Principles of Optics", 1959 (reflection at an absorbing
/// medium); the real-arithmetic form of `R_s` and `R_p` is the one collected by
/// S. Lagarde, "Memo on Fresnel equations", 2013.
pub fn conductor(v_dot_h: f64, ior: f64, k: f64) -> f64 {
    let c = v_dot_h.abs();
    let s2 = super::sin2_from_cos(c);
    // w = (ior + i k)² - s² = (ior² - k² - s²) + i (2 ior k)
    let re = (ior - k) * (ior + k) - s2;
    let im = 2.0 * ior * k;
    let modulus = re.hypot(im);
    let (a, b) = if re >= 0.0 {
        let a = ((modulus + re) / 2.0).sqrt();
        (a, if a > 0.0 { im / (2.0 * a) } else { 0.0 })
    } else {
        let b = ((modulus - re) / 2.0).sqrt();
        (im / (2.0 * b), b)
    };
    let b2 = b * b;
    let rs = ((a - c) * (a - c) + b2) / ((a + c) * (a + c) + b2);
    let ac = a * c;
    let bc = b * c;
    let rp = rs * ((ac - s2) * (ac - s2) + bc * bc) / ((ac + s2) * (ac + s2) + bc * bc);
    0.5 * (rs + rp)
}

/// [`conductor`] per RGB channel, with a complex index per channel.
///
/// Domain and edges: as [`conductor`], channel by channel.
///
/// Source: Born and Wolf 1959.
pub fn conductor_rgb(v_dot_h: f64, ior: Vec3, k: Vec3) -> Vec3 {
    [
        conductor(v_dot_h, ior[0], k[0]),
        conductor(v_dot_h, ior[1], k[1]),
        conductor(v_dot_h, ior[2], k[2]),
    ]
}

/// Reflectance at normal incidence of a dielectric: `F0 = ((ior - 1) / (ior + 1))²`.
///
/// Domain: `ior > 0` (relative index). Edges: 0 at `ior = 1`; tends to 1 as `ior → ∞` or
/// `ior → 0`; symmetric under `ior → 1 / ior`.
///
/// Source: Fresnel's equations at normal incidence (Born and Wolf 1959). Handbook fact:
/// `ior = 1.5` gives exactly 0.04 (tested).
pub fn f0_from_ior(ior: f64) -> f64 {
    let r = (ior - 1.0) / (ior + 1.0);
    r * r
}

/// Reflectance at normal incidence of a conductor:
/// `F0 = ((ior - 1)² + k²) / ((ior + 1)² + k²)`.
///
/// Domain: `ior > 0`, `k ≥ 0`. Edges: `k = 0` gives [`f0_from_ior`]; tends to 1 as `k → ∞`.
///
/// Source: Born and Wolf 1959.
pub fn f0_from_conductor(ior: f64, k: f64) -> f64 {
    let k2 = k * k;
    ((ior - 1.0) * (ior - 1.0) + k2) / ((ior + 1.0) * (ior + 1.0) + k2)
}

/// Relative index of refraction from normal-incidence reflectance, the inverse of
/// [`f0_from_ior`] on `ior ≥ 1`: `ior = (1 + sqrt(F0)) / (1 - sqrt(F0))`.
///
/// Domain: `0 ≤ f0 < 1`. Edges: 1 at `f0 = 0`; `+∞` at `f0 = 1`. Of the two indices with
/// the same `F0` (`ior` and `1/ior`) it returns the one ≥ 1.
///
/// Source: Fresnel's equations at normal incidence, solved for the index.
pub fn ior_from_f0(f0: f64) -> f64 {
    let s = f0.sqrt();
    (1.0 + s) / (1.0 - s)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dielectric_unity_ior_reflects_nothing() {
        // Physics: with no index step there is no interface to reflect from.
        for c in [0.0, 0.3, 1.0] {
            assert_eq!(dielectric(c, 1.0), 0.0);
        }
    }

    #[test]
    fn sign_of_the_cosine_is_ignored() {
        // Documented convention: the exact formulas use |cos θ|.
        assert_eq!(dielectric(-0.4, 1.5), dielectric(0.4, 1.5));
        assert_eq!(conductor(-0.4, 0.2, 3.0), conductor(0.4, 0.2, 3.0));
    }
}
