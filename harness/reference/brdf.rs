//! Whole BRDFs: Cook-Torrance composed from chosen terms, and the legacy Phong and
//! Blinn-Phong lighting models.
//!
//! [`CookTorrance`] evaluates `f = f_diffuse + D · G2 · F / (4 n·l n·v)` from the
//! artist-facing inputs `(n, v, l, base_color, metallic, roughness)` through the metallic
//! workflow of [`crate::reference::material`]. Which NDF, masking, Fresnel and diffuse terms
//! it uses is data ([`NdfKind`], [`MaskingKind`], [`FresnelKind`], [`DiffuseKind`]), so a
//! check can name the exact combination the shader under test implements.
//!
//! # Energy of the specular lobe
//!
//! A single-scattering microfacet lobe loses the light that would have bounced more than
//! once between microfacets, and the loss grows with roughness. The table below is the
//! directional albedo `E(v) = ∫ f_spec(v, l) (n·l) dω_l` of [`CookTorrance::STANDARD`]'s
//! specular lobe (GGX, height-correlated Smith, `F = 1`), the output of
//! [`crate::reference::multiscatter::albedo_table`], and also measured by adaptive numerical
//! integration of its own in `tests/reference/identities.rs` (which also checks that it is ≤ 1, that it
//! falls as roughness grows, and that these published digits match what it measures). The
//! same table is in `harness/reference/ALBEDO.md`. Rows are perceptual roughness
//! (`alpha = roughness²`), columns `n·v`; the last column is the hemispherical average
//! `E_avg = 2 ∫ E(μ) μ dμ`.
//!
//! | roughness | n·v = 1 | n·v = 0.75 | n·v = 0.5 | n·v = 0.25 | n·v = 0.1 | average |
//! |---|---|---|---|---|---|---|
//! | 0.1 | 0.9999 | 0.9999 | 0.9997 | 0.9991 | 0.9941 | 0.9995 |
//! | 0.2 | 0.9983 | 0.9976 | 0.9955 | 0.9836 | 0.9290 | 0.9941 |
//! | 0.3 | 0.9907 | 0.9865 | 0.9751 | 0.9317 | 0.8843 | 0.9765 |
//! | 0.4 | 0.9677 | 0.9546 | 0.9264 | 0.8761 | 0.8883 | 0.9404 |
//! | 0.5 | 0.9158 | 0.8915 | 0.8573 | 0.8401 | 0.8916 | 0.8823 |
//! | 0.6 | 0.8245 | 0.7995 | 0.7821 | 0.8084 | 0.8824 | 0.8029 |
//! | 0.7 | 0.6978 | 0.6902 | 0.7040 | 0.7685 | 0.8619 | 0.7074 |
//! | 0.8 | 0.5552 | 0.5755 | 0.6212 | 0.7181 | 0.8331 | 0.6042 |
//! | 0.9 | 0.4200 | 0.4647 | 0.5353 | 0.6598 | 0.7985 | 0.5024 |
//! | 1.0 | 0.3069 | 0.3645 | 0.4507 | 0.5976 | 0.7602 | 0.4091 |
//!
//! The missing fraction `1 - E` is the energy the model drops; on a rough metal it is the
//! darkening that multiple-scattering compensation schemes add back (about 69 % of the
//! light at roughness 1, normal view). At roughness 1 (`alpha = 1`, where GGX is the
//! constant `1/π`) the table has a closed form, `E(μ) = 1 - μ ln(1 + 1/μ)` and
//! `E_avg = (4/3)(1 - ln 2)`, which the tests also check. E falls with roughness at every
//! `n·v ≥ 0.25` and on average, but not at grazing: at `n·v = 0.1` it dips near roughness
//! 0.3 and recovers up to 0.5 (confirmed by an independent brute-force integration).

use super::diffuse;
use super::fresnel;
use super::masking;
use super::material::{self, RoughnessClamp};
use super::ndf;
use super::vec3::{add, dot, normalize, reflect_about, scale, Vec3};

/// Which normal distribution a [`CookTorrance`] uses.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum NdfKind {
    /// [`ndf::ggx`].
    Ggx,
    /// [`ndf::beckmann`].
    Beckmann,
    /// [`ndf::blinn_phong_alpha`], Blinn-Phong with the exponent `2 / alpha² - 2`.
    BlinnPhong,
}

/// Which masking-shadowing term a [`CookTorrance`] uses, always in its visibility form
/// `V = G2 / (4 n·l n·v)`.
///
/// The Smith forms use the Λ of the chosen NDF: GGX's for [`NdfKind::Ggx`], Beckmann's for
/// [`NdfKind::Beckmann`] and for [`NdfKind::BlinnPhong`] (whose shape is close to Beckmann's
/// at the same alpha; Walter et al. 2007 recommend that pairing). The named approximations
/// are GGX's whatever the NDF.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum MaskingKind {
    /// `G1(v) · G1(l)`.
    SmithSeparable,
    /// `1 / (1 + Λ(v) + Λ(l))`.
    SmithHeightCorrelated,
    /// [`masking::ggx_v_height_correlated_fast`] (Guy and Agopian 2018).
    GgxHeightCorrelatedFast,
    /// [`masking::ggx_v_height_correlated_hammon`] (Hammon 2017).
    GgxHeightCorrelatedHammon,
    /// [`masking::schlick_ggx_v`] with `k = alpha / 2` (Karis 2013).
    SchlickGgx,
}

/// Which Fresnel term a [`CookTorrance`] uses, evaluated at `v·h`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FresnelKind {
    /// `F = 1`: the bare lobe, for energy and reciprocity checks.
    One,
    /// [`fresnel::schlick_rgb`], `F90 = 1`.
    Schlick,
    /// [`fresnel::schlick_rgb_f90_from_f0`], `F90 = saturate(50 · dot(F0, 0.33))`.
    SchlickF90FromF0,
}

/// Which diffuse term a [`CookTorrance`] adds, scaled by the metallic workflow's diffuse
/// colour `(1 - metallic) · base_color`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum DiffuseKind {
    /// No diffuse term (a specular-only BRDF).
    None,
    /// [`diffuse::lambert`].
    Lambert,
    /// [`diffuse::burley`] with the clamped perceptual roughness.
    Burley,
}

/// A Cook-Torrance microfacet BRDF composed from chosen terms.
///
/// Formula: with `h = normalize(v + l)`, `alpha = clamp(roughness)²`,
/// `F0 = mix(dielectric_f0, base_color, metallic)` and
/// `c_diff = (1 - metallic) · base_color`:
/// `f = c_diff · f_d + D(n·h) · V(n·v, n·l) · F(v·h)`, where `V = G2 / (4 n·l n·v)`.
///
/// Domain: `n`, `v`, `l` any non-zero vectors (they are normalised first; `v` and `l` point
/// away from the surface); `base_color` and `metallic` in `0 ..= 1`; `roughness` (perceptual)
/// in `0 ..= 1`.
///
/// Edges: 0 (all channels) when `n·v ≤ 0` or `n·l ≤ 0` (directions below the surface).
/// At `roughness → 0` with [`RoughnessClamp::None`] the specular lobe tends to a delta:
/// `roughness = 0` gives 0 off the mirror direction and NaN on it; choose a clamp to avoid
/// that. As `n·v → 0+` the value stays finite because the visibility form is finite there.
///
/// Source: R. L. Cook and K. E. Torrance, "A Reflectance Model for Computer Graphics", 1982
/// (the microfacet model; their denominator was `π n·l n·v`); the `4 n·l n·v` denominator
/// that normalises it is from B. Walter, S. R. Marschner, H. Li and K. E. Torrance,
/// "Microfacet Models for Refraction through Rough Surfaces", 2007. Each term cites its own
/// source.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CookTorrance {
    /// The distribution `D`.
    pub ndf: NdfKind,
    /// The masking-shadowing term, as visibility.
    pub masking: MaskingKind,
    /// The Fresnel term.
    pub fresnel: FresnelKind,
    /// The diffuse term.
    pub diffuse: DiffuseKind,
    /// The minimum perceptual roughness, if any.
    pub roughness_clamp: RoughnessClamp,
    /// `F0` of the dielectric end of the metallic workflow.
    pub dielectric_f0: f64,
}

impl CookTorrance {
    /// The common real-time combination: GGX, height-correlated Smith, Schlick Fresnel with
    /// `F90 = 1`, Lambert diffuse, no roughness clamp, dielectric `F0 = 0.04`.
    pub const STANDARD: CookTorrance = CookTorrance {
        ndf: NdfKind::Ggx,
        masking: MaskingKind::SmithHeightCorrelated,
        fresnel: FresnelKind::Schlick,
        diffuse: DiffuseKind::Lambert,
        roughness_clamp: RoughnessClamp::None,
        dielectric_f0: material::DIELECTRIC_F0,
    };

    /// [`CookTorrance::STANDARD`]'s specular lobe alone with `F = 1`: the configuration whose
    /// albedo is tabulated in this module's documentation.
    pub const SPECULAR_ONLY: CookTorrance = CookTorrance {
        fresnel: FresnelKind::One,
        diffuse: DiffuseKind::None,
        ..CookTorrance::STANDARD
    };

    /// [`CookTorrance::STANDARD`] with Burley's diffuse in place of Lambert's.
    pub const BURLEY: CookTorrance = CookTorrance {
        diffuse: DiffuseKind::Burley,
        ..CookTorrance::STANDARD
    };

    /// [`CookTorrance::STANDARD`] with Schlick's F90 derived from F0.
    pub const F90_FROM_F0: CookTorrance = CookTorrance {
        fresnel: FresnelKind::SchlickF90FromF0,
        ..CookTorrance::STANDARD
    };

    /// [`CookTorrance::STANDARD`] with the square-root-free height-correlated visibility.
    pub const FAST_VISIBILITY: CookTorrance = CookTorrance {
        masking: MaskingKind::GgxHeightCorrelatedFast,
        ..CookTorrance::STANDARD
    };

    /// [`CookTorrance::STANDARD`] with Beckmann's NDF (and its height-correlated Smith).
    pub const BECKMANN: CookTorrance = CookTorrance {
        ndf: NdfKind::Beckmann,
        ..CookTorrance::STANDARD
    };

    /// The chosen NDF at `n·h` and `alpha`.
    #[inline(always)]
    pub fn distribution(&self, n_dot_h: f64, alpha: f64) -> f64 {
        match self.ndf {
            NdfKind::Ggx => ndf::ggx(n_dot_h, alpha),
            NdfKind::Beckmann => ndf::beckmann(n_dot_h, alpha),
            NdfKind::BlinnPhong => ndf::blinn_phong_alpha(n_dot_h, alpha),
        }
    }

    /// The chosen visibility `V = G2 / (4 n·l n·v)`.
    #[inline(always)]
    pub fn visibility(&self, n_dot_v: f64, n_dot_l: f64, alpha: f64) -> f64 {
        let ggx = self.ndf == NdfKind::Ggx;
        match self.masking {
            MaskingKind::SmithSeparable if ggx => masking::ggx_v_separable(n_dot_v, n_dot_l, alpha),
            MaskingKind::SmithSeparable => {
                masking::beckmann_g2_separable(n_dot_v, n_dot_l, alpha) / (4.0 * n_dot_v * n_dot_l)
            }
            MaskingKind::SmithHeightCorrelated if ggx => {
                masking::ggx_v_height_correlated(n_dot_v, n_dot_l, alpha)
            }
            MaskingKind::SmithHeightCorrelated => {
                masking::beckmann_v_height_correlated(n_dot_v, n_dot_l, alpha)
            }
            MaskingKind::GgxHeightCorrelatedFast => {
                masking::ggx_v_height_correlated_fast(n_dot_v, n_dot_l, alpha)
            }
            MaskingKind::GgxHeightCorrelatedHammon => {
                masking::ggx_v_height_correlated_hammon(n_dot_v, n_dot_l, alpha)
            }
            MaskingKind::SchlickGgx => {
                masking::schlick_ggx_v(n_dot_v, n_dot_l, masking::schlick_k_from_alpha(alpha))
            }
        }
    }

    /// Evaluates the BRDF (see the type's documentation for the formula, domain and edges).
    /// Returns linear RGB, units 1/sr, without the `n·l` cosine.
    #[inline(always)]
    pub fn eval(
        &self,
        n: Vec3,
        v: Vec3,
        l: Vec3,
        base_color: Vec3,
        metallic: f64,
        roughness: f64,
    ) -> Vec3 {
        let n = normalize(n);
        let v = normalize(v);
        let l = normalize(l);
        let n_dot_v = dot(n, v);
        let n_dot_l = dot(n, l);
        if n_dot_v <= 0.0 || n_dot_l <= 0.0 {
            return [0.0; 3];
        }
        // v + l is not zero here: both lie strictly above the surface.
        let h = normalize(add(v, l));
        let n_dot_h = dot(n, h);
        let v_dot_h = dot(v, h);
        let roughness = self.roughness_clamp.apply(roughness);
        let alpha = material::alpha_from_roughness(roughness);

        let f0 = material::f0_metallic_with(base_color, metallic, self.dielectric_f0);
        let f = match self.fresnel {
            FresnelKind::One => [1.0; 3],
            FresnelKind::Schlick => fresnel::schlick_rgb(v_dot_h, f0),
            FresnelKind::SchlickF90FromF0 => fresnel::schlick_rgb_f90_from_f0(v_dot_h, f0),
        };
        let dv = self.distribution(n_dot_h, alpha) * self.visibility(n_dot_v, n_dot_l, alpha);
        let specular = scale(f, dv);

        let fd = match self.diffuse {
            DiffuseKind::None => return specular,
            DiffuseKind::Lambert => diffuse::lambert(),
            DiffuseKind::Burley => diffuse::burley(n_dot_v, n_dot_l, dot(l, h), roughness),
        };
        add(
            specular,
            scale(material::diffuse_color(base_color, metallic), fd),
        )
    }
}

/// Phong's lighting model, as legacy shaders compute it per light.
///
/// Formula: with unit `n`, `v`, `l` and `r = 2 (n·l) n - l` (the mirror of `l`):
/// `I = diffuse_color · max(n·l, 0) + specular_color · max(r·v, 0)^shininess`, the specular
/// term being 0 when `n·l ≤ 0` (no highlight from a light behind the surface).
///
/// This is a lighting model, not a BRDF: the cosine `n·l` is already in the diffuse term,
/// there is no `1/π`, and the specular lobe is not normalised, so it neither conserves
/// energy nor is reciprocal. It is here so that a project replacing it can pin the old
/// output.
///
/// Domain: non-zero vectors (normalised first), colours in `0 ..= 1`, `shininess ≥ 0`.
/// Edges: 0 for `n·l ≤ 0`; `shininess = 0` makes the specular term the constant
/// `specular_color` over the lit hemisphere (`0⁰ = 1` where `r·v ≤ 0`, as IEEE `pow`
/// defines it); large `shininess` narrows the highlight towards a point.
///
/// Source: B. T. Phong, "Illumination for Computer Generated Pictures", 1975.
pub fn phong(
    n: Vec3,
    v: Vec3,
    l: Vec3,
    diffuse_color: Vec3,
    specular_color: Vec3,
    shininess: f64,
) -> Vec3 {
    let n = normalize(n);
    let v = normalize(v);
    let l = normalize(l);
    let n_dot_l = dot(n, l);
    if n_dot_l <= 0.0 {
        return [0.0; 3];
    }
    let r = reflect_about(l, n);
    let s = dot(r, v).max(0.0).powf(shininess);
    add(scale(diffuse_color, n_dot_l), scale(specular_color, s))
}

/// Blinn's modification of the Phong lighting model, using the half vector.
///
/// Formula: with unit `n`, `v`, `l` and `h = normalize(v + l)`:
/// `I = diffuse_color · max(n·l, 0) + specular_color · max(n·h, 0)^shininess`, the
/// specular term being 0 when `n·l ≤ 0`.
///
/// A lighting model, not a BRDF (see [`phong`]); kept for pinning legacy output.
///
/// Domain: non-zero vectors (normalised first), `v ≠ -l`, colours in `0 ..= 1`,
/// `shininess ≥ 0`. Edges: 0 for `n·l ≤ 0`; `v = -l` has no half vector and gives NaN.
/// For about the same highlight size the exponent is about four times Phong's (common
/// practice).
///
/// Source: J. F. Blinn, "Models of Light Reflection for Computer Synthesized Pictures",
/// 1977.
pub fn blinn_phong(
    n: Vec3,
    v: Vec3,
    l: Vec3,
    diffuse_color: Vec3,
    specular_color: Vec3,
    shininess: f64,
) -> Vec3 {
    let n = normalize(n);
    let v = normalize(v);
    let l = normalize(l);
    let n_dot_l = dot(n, l);
    if n_dot_l <= 0.0 {
        return [0.0; 3];
    }
    let h = normalize(add(v, l));
    let s = dot(n, h).max(0.0).powf(shininess);
    add(scale(diffuse_color, n_dot_l), scale(specular_color, s))
}

/// The anisotropic GGX specular lobe with `F = 1`: `f = D(h) · V(v, l)` with the
/// anisotropic GGX distribution ([`ndf::ggx_aniso`]) and the height-correlated anisotropic
/// Smith visibility ([`masking::ggx_aniso_v_height_correlated`]).
///
/// Formula: with `v`, `l` normalised, `h = normalize(v + l)` and each direction's
/// components in the frame `(t, b, n)`: `f = D(n·h, t·h, b·h) ·
/// 0.5 / (n·l r_v + n·v r_l)`, `r = sqrt(n² + alpha_x² t² + alpha_y² b²)`.
///
/// Domain: `n`, `t`, `b` an orthonormal frame (not checked; used as given); `v`, `l`
/// non-zero (normalised here); `alpha_x`, `alpha_y` in `(0, 1]`.
///
/// Edges: 0 when `n·v ≤ 0` or `n·l ≤ 0`; equals [`CookTorrance::SPECULAR_ONLY`]'s lobe
/// when `alpha_x = alpha_y` (tested); `1 / (4 π alpha_x alpha_y)` at `v = l = n`.
///
/// Source: E. Heitz, "Understanding the Masking-Shadowing Function in Microfacet-Based
/// BRDFs", Journal of Computer Graphics Techniques 3(2), 2014; B. Walter et al. 2007 for the
/// microfacet BRDF.
#[allow(clippy::too_many_arguments)]
pub fn ggx_aniso_specular(n: Vec3, t: Vec3, b: Vec3, v: Vec3, l: Vec3, ax: f64, ay: f64) -> f64 {
    let v = normalize(v);
    let l = normalize(l);
    let (nv, nl) = (dot(n, v), dot(n, l));
    if nv <= 0.0 || nl <= 0.0 {
        return 0.0;
    }
    let h = normalize(add(v, l));
    let d = ndf::ggx_aniso(dot(n, h), dot(t, h), dot(b, h), ax, ay);
    let vis = masking::ggx_aniso_v_height_correlated(
        nv,
        dot(t, v),
        dot(b, v),
        nl,
        dot(t, l),
        dot(b, l),
        ax,
        ay,
    );
    d * vis
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn below_the_surface_is_black() {
        let m = CookTorrance::STANDARD;
        let n = [0.0, 0.0, 1.0];
        assert_eq!(
            m.eval(n, [0.0, 0.6, 0.8], [0.0, 0.6, -0.8], [0.5; 3], 0.0, 0.5),
            [0.0; 3]
        );
        assert_eq!(
            phong(
                n,
                [0.0, 0.0, 1.0],
                [0.0, 0.6, -0.8],
                [1.0; 3],
                [1.0; 3],
                8.0
            ),
            [0.0; 3]
        );
    }

    #[test]
    fn normal_incidence_value_from_the_terms() {
        // At v = l = n: h = n, D = 1/(π alpha²), V = 1/4, F = F0, so for a dielectric
        // f = F0 / (4 π alpha²) + c_diff / π. Composition check, 1e-14: a few roundings.
        let n = [0.0, 0.0, 1.0];
        let (r, base) = (0.5_f64, [0.8, 0.4, 0.2]);
        let alpha = r * r;
        let got = CookTorrance::STANDARD.eval(n, n, n, base, 0.0, r);
        for c in 0..3 {
            let want = 0.04 / (4.0 * std::f64::consts::PI * alpha * alpha)
                + base[c] / std::f64::consts::PI;
            assert!((got[c] - want).abs() <= 1e-14 * want);
        }
    }
}
