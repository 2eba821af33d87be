//! Material parameterisation: the metallic workflow and the roughness remapping.
//!
//! These turn the artist-facing parameters (base colour, metallic, perceptual roughness,
//! reflectance) into the physical ones the BRDF terms take (diffuse colour, `F0`, alpha).

use super::vec3::{mix, scale, Vec3};

/// Normal-incidence reflectance assumed for every dielectric in the metallic workflow:
/// 0.04, the `F0` of a material with index 1.5.
///
/// Common practice (most dielectrics have `F0` between about 0.02 and 0.05); the value is
/// `((1.5 - 1) / (1.5 + 1))²` exactly (tested against
/// [`crate::reference::fresnel::f0_from_ior`]).
pub const DIELECTRIC_F0: f64 = 0.04;

/// Diffuse colour in the metallic workflow: `diffuse = (1 - metallic) · base_color`.
///
/// Domain: `base_color` components and `metallic` in `0 ..= 1`. Edges: `metallic = 1`
/// (a metal) has no diffuse term; `metallic = 0` gives the base colour.
///
/// Source: B. Burley, course notes of the SIGGRAPH 2012 course "Practical Physically Based
/// Shading in Film and Game Production", 2012 (the metallic parameter); in this form
/// B. Karis, course notes of the SIGGRAPH 2013 course "Physically Based Shading in Theory
/// and Practice", 2013.
#[inline]
pub fn diffuse_color(base_color: Vec3, metallic: f64) -> Vec3 {
    scale(base_color, 1.0 - metallic)
}

/// Normal-incidence reflectance in the metallic workflow:
/// `F0 = mix(0.04, base_color, metallic) = 0.04 (1 - metallic) + base_color · metallic`.
///
/// Domain: components in `0 ..= 1`. Edges: `metallic = 0` gives [`DIELECTRIC_F0`] on every
/// channel; `metallic = 1` gives the base colour (a metal's specular colour).
///
/// Source: Karis 2013.
pub fn f0_metallic(base_color: Vec3, metallic: f64) -> Vec3 {
    f0_metallic_with(base_color, metallic, DIELECTRIC_F0)
}

/// [`f0_metallic`] with a chosen dielectric reflectance:
/// `F0 = mix(dielectric_f0, base_color, metallic)`.
///
/// Domain and edges: as [`f0_metallic`]. Source: Karis 2013.
#[inline]
pub fn f0_metallic_with(base_color: Vec3, metallic: f64, dielectric_f0: f64) -> Vec3 {
    mix([dielectric_f0; 3], base_color, metallic)
}

/// Dielectric `F0` from a perceptual reflectance parameter: `F0 = 0.16 · reflectance²`.
///
/// Domain: `reflectance` in `0 ..= 1`. Edges: 0 at 0; 0.04 (the common value) at 0.5;
/// 0.16 at 1, near diamond's `F0` of about 0.17 (index 2.42, a handbook value quoted from
/// memory).
///
/// Source: R. Guy and M. Agopian, design documentation of an open-source real-time
/// physically based renderer, 2018 (the reflectance parameter of its standard material).
/// Known to us only from that source: common practice, quoted from memory.
pub fn f0_from_reflectance(reflectance: f64) -> f64 {
    0.16 * reflectance * reflectance
}

/// Metallic-workflow `F0` with the dielectric value from a reflectance parameter:
/// `F0 = 0.16 reflectance² (1 - metallic) + base_color · metallic`.
///
/// Domain: components in `0 ..= 1`. Edges: as [`f0_metallic`], with the dielectric end set by
/// [`f0_from_reflectance`]. Source: Guy and Agopian 2018.
pub fn f0_metallic_reflectance(base_color: Vec3, metallic: f64, reflectance: f64) -> Vec3 {
    f0_metallic_with(base_color, metallic, f0_from_reflectance(reflectance))
}

/// Microfacet width from perceptual roughness: `alpha = roughness²`.
///
/// Domain: `roughness` in `0 ..= 1`. Edges: `roughness = 0` gives `alpha = 0`, the mirror
/// limit in which the NDFs are Dirac deltas (see [`RoughnessClamp`] for the usual guard).
///
/// Source: B. Burley, course notes of the SIGGRAPH 2012 course "Practical Physically Based
/// Shading in Film and Game Production", 2012 (the squared mapping, chosen so roughness
/// changes look perceptually even).
#[inline]
pub fn alpha_from_roughness(roughness: f64) -> f64 {
    roughness * roughness
}

/// The lower bound applied to perceptual roughness before it is squared, if any.
///
/// Shaders clamp roughness so that `alpha²` in the NDF's denominator stays a normal number
/// of the precision they run in; which bound they use is part of what a reference must
/// match, so the clamp is an explicit, named choice rather than a hidden default.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum RoughnessClamp {
    /// Use the roughness as given; `roughness = 0` reaches the delta limit.
    None,
    /// Raise the perceptual roughness to at least this value: `max(roughness, min)`.
    Min(f64),
}

impl RoughnessClamp {
    /// The bound used by shaders running in f32: perceptual roughness 0.045, so that
    /// `alpha² = 0.045⁴ ≈ 4.1e-6`. Common practice; the value is from memory of an
    /// open-source real-time renderer's sources (Guy and Agopian 2018).
    pub const F32: RoughnessClamp = RoughnessClamp::Min(0.045);
    /// The bound used by shaders running in f16: perceptual roughness 0.089, so that
    /// `alpha² = 0.089⁴ ≈ 6.3e-5` stays above f16's smallest normal number (6.1e-5).
    /// Common practice; the value is from memory of the same renderer's sources.
    pub const F16: RoughnessClamp = RoughnessClamp::Min(0.089);

    /// The clamped perceptual roughness.
    #[inline]
    pub fn apply(self, roughness: f64) -> f64 {
        match self {
            RoughnessClamp::None => roughness,
            RoughnessClamp::Min(min) => roughness.max(min),
        }
    }
}

/// Microfacet width from perceptual roughness with a minimum:
/// `alpha = max(roughness, min_roughness)²`.
///
/// Domain: `roughness` and `min_roughness` in `0 ..= 1`. Edges: below `min_roughness` the
/// result is constant `min_roughness²`; with `min_roughness = 0` it is
/// [`alpha_from_roughness`]. NaN roughness gives `min_roughness²` (`f64::max` ignores NaN),
/// which is also what a WGSL `max` may return.
///
/// Source: Burley 2012 (the square); the clamp is common practice (see [`RoughnessClamp`]).
pub fn alpha_from_roughness_clamped(roughness: f64, min_roughness: f64) -> f64 {
    alpha_from_roughness(RoughnessClamp::Min(min_roughness).apply(roughness))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn half_reflectance_is_the_common_dielectric_f0() {
        // 0.16 · 0.5² = 0.04 by the formula; 0.04 is the common-practice dielectric F0.
        assert!((f0_from_reflectance(0.5) - DIELECTRIC_F0).abs() < 1e-17);
    }

    #[test]
    fn metallic_endpoints() {
        // From the formulas: metallic 0 is a dielectric, metallic 1 a metal.
        let base = [0.9, 0.6, 0.2];
        assert_eq!(f0_metallic(base, 0.0), [0.04; 3]);
        assert_eq!(f0_metallic(base, 1.0), base);
        assert_eq!(diffuse_color(base, 1.0), [0.0; 3]);
        assert_eq!(diffuse_color(base, 0.0), base);
    }

    #[test]
    fn roughness_clamp_only_raises() {
        assert_eq!(alpha_from_roughness_clamped(0.0, 0.045), 0.045 * 0.045);
        assert_eq!(alpha_from_roughness_clamped(0.5, 0.045), 0.25);
        assert_eq!(RoughnessClamp::None.apply(0.0), 0.0);
    }
}
