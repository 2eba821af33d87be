//! The catalogue of mistakes: one row per hypothesis.
//!
//! A [`Hypothesis`] is a small value: a stable id, the [`Term`] it blames, the [`Knob`] of
//! [`Variant`] it turns (so it is tried only on models that read that knob), the change
//! itself as a function on a [`Variant`], and the phrase a report puts after "behaves like
//! &lt;reference&gt; with". To add one, append a row to [`CATALOGUE`] and a planted test (see
//! `DEVELOPERS.md`, "Adding a hypothesis").

use super::terms::{Clamp, Cos, DiffuseForm, FresnelForm, Knob, NdfForm, Remap, Variant, VisForm};
use crate::reference::brdf::{DiffuseKind, MaskingKind, NdfKind};
use std::f64::consts::PI;

/// The part of a model a hypothesis blames.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Term {
    RoughnessRemap,
    RoughnessClamp,
    Distribution,
    Visibility,
    Fresnel,
    F0,
    F90,
    Diffuse,
    Cosine,
    Constant,
}

/// One mistake shading code makes.
#[derive(Clone, Copy, Debug)]
pub struct Hypothesis {
    /// Stable identifier (snake case), for tests, JSON and suppressions.
    pub id: &'static str,
    /// The term it blames.
    pub term: Term,
    /// The knob it turns.
    pub knob: Knob,
    /// The change, applied to [`Variant::REFERENCE`].
    pub change: fn(&mut Variant),
    /// What a report writes after "behaves like `<reference>` with".
    pub description: &'static str,
}

impl Hypothesis {
    /// The reference variant with this one change.
    pub fn variant(&self) -> Variant {
        let mut v = Variant::REFERENCE;
        (self.change)(&mut v);
        v
    }
}

/// The hypothesis with this id.
pub fn hypothesis(id: &str) -> Option<&'static Hypothesis> {
    CATALOGUE.iter().find(|h| h.id == id)
}

/// π as 3.14, the usual mistyping (the quotient is the same f64 as the literal 3.14: both
/// are correctly rounded).
const PI_3_14: f64 = 314.0 / 100.0;
/// π as 3.142.
const PI_3_142: f64 = 3142.0 / 1000.0;

macro_rules! h {
    ($id:literal, $term:ident, $knob:ident, |$v:ident| $body:expr, $desc:literal) => {
        Hypothesis {
            id: $id,
            term: Term::$term,
            knob: Knob::$knob,
            change: |$v: &mut Variant| $body,
            description: $desc,
        }
    };
}

/// Every hypothesis, in the order ties are ranked.
// One row per hypothesis: kept as a table, not as rustfmt would spread it.
#[rustfmt::skip]
pub static CATALOGUE: &[Hypothesis] = &[
    // ---- roughness ----
    h!("remap_none", RoughnessRemap, Roughness, |v| v.remap = Remap::None,
        "the roughness remap skipped (alpha = roughness)"),
    h!("remap_twice", RoughnessRemap, Roughness, |v| v.remap = Remap::Twice,
        "the roughness remap applied twice (alpha = roughness⁴)"),
    h!("remap_sqrt", RoughnessRemap, Roughness, |v| v.remap = Remap::Sqrt,
        "a square root for the roughness remap (alpha = sqrt(roughness))"),
    h!("clamp_missing", RoughnessClamp, Roughness, |v| v.clamp = Clamp::Missing,
        "the minimum-roughness clamp missing"),
    h!("clamp_0_045", RoughnessClamp, Roughness, |v| v.clamp = Clamp::Min(0.045),
        "roughness clamped at 0.045"),
    h!("clamp_0_089", RoughnessClamp, Roughness, |v| v.clamp = Clamp::Min(0.089),
        "roughness clamped at 0.089"),
    h!("clamp_0_01", RoughnessClamp, Roughness, |v| v.clamp = Clamp::Min(0.01),
        "roughness clamped at 0.01"),
    h!("clamp_0_02", RoughnessClamp, Roughness, |v| v.clamp = Clamp::Min(0.02),
        "roughness clamped at 0.02"),
    h!("clamp_0_03", RoughnessClamp, Roughness, |v| v.clamp = Clamp::Min(0.03),
        "roughness clamped at 0.03"),
    h!("clamp_0_04", RoughnessClamp, Roughness, |v| v.clamp = Clamp::Min(0.04),
        "roughness clamped at 0.04"),
    h!("clamp_0_05", RoughnessClamp, Roughness, |v| v.clamp = Clamp::Min(0.05),
        "roughness clamped at 0.05"),
    h!("clamp_0_08", RoughnessClamp, Roughness, |v| v.clamp = Clamp::Min(0.08),
        "roughness clamped at 0.08"),
    h!("clamp_0_1", RoughnessClamp, Roughness, |v| v.clamp = Clamp::Min(0.1),
        "roughness clamped at 0.1"),
    // ---- distribution ----
    h!("ndf_pi_3_14", Constant, Distribution, |v| v.ndf_pi = PI_3_14,
        "π written as 3.14 in the distribution"),
    h!("ndf_pi_22_7", Constant, Distribution, |v| v.ndf_pi = 22.0 / 7.0,
        "π written as 22/7 in the distribution"),
    h!("ndf_pi_3_142", Constant, Distribution, |v| v.ndf_pi = PI_3_142,
        "π written as 3.142 in the distribution"),
    h!("ndf_inv_pi_missing", Constant, Distribution, |v| v.ndf_pi = 1.0,
        "the distribution's 1/π missing"),
    h!("ndf_inv_pi_twice", Constant, Distribution, |v| v.ndf_pi = PI * PI,
        "the distribution divided by π twice"),
    h!("ndf_no_cut", Distribution, Distribution, |v| v.ndf_cut = false,
        "no cut of the distribution at n·h ≤ 0"),
    h!("ndf_alpha_not_squared", Distribution, Distribution, |v| v.ndf_alpha_squared = false,
        "alpha where alpha² belongs in the distribution"),
    h!("ndf_denominator_not_squared", Distribution, Distribution,
        |v| v.ndf_denominator_squared = false,
        "the distribution's denominator not squared"),
    h!("ndf_ggx", Distribution, Distribution, |v| v.ndf_form = NdfForm::Kind(NdfKind::Ggx),
        "the GGX distribution instead"),
    h!("ndf_beckmann", Distribution, Distribution,
        |v| v.ndf_form = NdfForm::Kind(NdfKind::Beckmann),
        "the Beckmann distribution instead"),
    h!("ndf_blinn_phong", Distribution, Distribution,
        |v| v.ndf_form = NdfForm::Kind(NdfKind::BlinnPhong),
        "the Blinn-Phong distribution instead"),
    // ---- visibility ----
    h!("vis_four_missing", Constant, Visibility, |v| v.vis_four = 1.0,
        "the 4 of the specular denominator missing"),
    h!("vis_four_as_two", Constant, Visibility, |v| v.vis_four = 2.0,
        "2 in place of the 4 of the specular denominator"),
    h!("vis_g2_not_divided", Visibility, Visibility, |v| v.vis_form = VisForm::G2NotDivided,
        "G2 not divided by 4 n·l n·v"),
    h!("vis_separable", Visibility, Visibility,
        |v| v.vis_form = VisForm::Kind(MaskingKind::SmithSeparable),
        "separable Smith masking instead"),
    h!("vis_height_correlated", Visibility, Visibility,
        |v| v.vis_form = VisForm::Kind(MaskingKind::SmithHeightCorrelated),
        "height-correlated Smith masking instead"),
    h!("vis_fast", Visibility, Visibility,
        |v| v.vis_form = VisForm::Kind(MaskingKind::GgxHeightCorrelatedFast),
        "the square-root-free approximation of height-correlated masking"),
    h!("vis_hammon", Visibility, Visibility,
        |v| v.vis_form = VisForm::Kind(MaskingKind::GgxHeightCorrelatedHammon),
        "Hammon's approximation of height-correlated masking"),
    h!("vis_schlick_ggx", Visibility, Visibility,
        |v| v.vis_form = VisForm::Kind(MaskingKind::SchlickGgx),
        "Schlick's approximation of Smith masking (k = alpha/2)"),
    h!("vis_no_cut", Visibility, Visibility, |v| v.vis_cut = false,
        "no cut of the visibility at n·v or n·l ≤ 0"),
    // ---- Fresnel ----
    h!("schlick_exponent_4", Fresnel, Fresnel, |v| v.schlick_exponent = 4.0,
        "Schlick's exponent 4 instead of 5"),
    h!("schlick_exponent_6", Fresnel, Fresnel, |v| v.schlick_exponent = 6.0,
        "Schlick's exponent 6 instead of 5"),
    h!("schlick_exponent_2", Fresnel, Fresnel, |v| v.schlick_exponent = 2.0,
        "Schlick's exponent 2 instead of 5"),
    h!("fresnel_exact", Fresnel, Fresnel, |v| v.fresnel_form = FresnelForm::ExactDielectric,
        "the exact dielectric Fresnel instead of Schlick's approximation"),
    h!("f90_one", F90, F90, |v| v.fresnel_form = FresnelForm::SchlickF90One,
        "F90 ignored (F90 = 1)"),
    h!("f90_from_f0", F90, F90, |v| v.fresnel_form = FresnelForm::SchlickF90FromF0,
        "F90 derived from F0 (saturate(50 dot(F0, 0.33)))"),
    h!("f90_unsaturated", F90, F90, |v| v.fresnel_form = FresnelForm::F90Unsaturated,
        "F90 from F0 not saturated"),
    // ---- diffuse ----
    h!("diffuse_pi_3_14", Constant, DiffusePi, |v| v.diffuse_inv_pi = 1.0 / PI_3_14,
        "π written as 3.14 in the diffuse term"),
    h!("diffuse_pi_22_7", Constant, DiffusePi, |v| v.diffuse_inv_pi = 7.0 / 22.0,
        "π written as 22/7 in the diffuse term"),
    h!("diffuse_pi_3_142", Constant, DiffusePi, |v| v.diffuse_inv_pi = 1.0 / PI_3_142,
        "π written as 3.142 in the diffuse term"),
    h!("diffuse_inv_pi_missing", Constant, DiffusePi, |v| v.diffuse_inv_pi = 1.0,
        "the diffuse term's 1/π missing"),
    h!("diffuse_inv_pi_twice", Constant, DiffusePi, |v| v.diffuse_inv_pi = 1.0 / (PI * PI),
        "the diffuse term divided by π twice"),
    h!("diffuse_burley", Diffuse, DiffuseForm,
        |v| v.diffuse_form = DiffuseForm::Kind(DiffuseKind::Burley),
        "Burley diffuse instead"),
    h!("diffuse_lambert", Diffuse, DiffuseForm,
        |v| v.diffuse_form = DiffuseForm::Kind(DiffuseKind::Lambert),
        "Lambert diffuse instead"),
    h!("burley_ldh_not_squared", Diffuse, Burley, |v| v.burley_ldh_squared = false,
        "l·h not squared in Burley's F_D90"),
    h!("burley_alpha", RoughnessRemap, Burley, |v| v.burley_alpha = true,
        "alpha (roughness²) given to Burley's diffuse instead of roughness"),
    h!("burley_at_ndl", Cosine, Burley, |v| v.burley_cos = Cos::NdotL,
        "n·l in place of l·h in Burley's F_D90"),
    h!("burley_at_ndv", Cosine, Burley, |v| v.burley_cos = Cos::NdotV,
        "n·v in place of l·h in Burley's F_D90"),
    h!("burley_at_ndh", Cosine, Burley, |v| v.burley_cos = Cos::NdotH,
        "n·h in place of l·h in Burley's F_D90"),
    // ---- cosines and vectors ----
    h!("ndf_at_ndv", Cosine, Cosines, |v| v.ndf_cos = Cos::NdotV,
        "the distribution at n·v instead of n·h"),
    h!("ndf_at_ndl", Cosine, Cosines, |v| v.ndf_cos = Cos::NdotL,
        "the distribution at n·l instead of n·h"),
    h!("ndf_at_vdh", Cosine, Cosines, |v| v.ndf_cos = Cos::VdotH,
        "the distribution at v·h instead of n·h"),
    h!("fresnel_at_ndv", Cosine, Cosines, |v| v.fresnel_cos = Cos::NdotV,
        "Fresnel at n·v instead of v·h"),
    h!("fresnel_at_ndl", Cosine, Cosines, |v| v.fresnel_cos = Cos::NdotL,
        "Fresnel at n·l instead of v·h"),
    h!("fresnel_at_ndh", Cosine, Cosines, |v| v.fresnel_cos = Cos::NdotH,
        "Fresnel at n·h instead of v·h"),
    h!("vis_at_ndh", Cosine, Cosines, |v| v.vis_cos = Cos::NdotH,
        "the visibility at n·h in place of n·v"),
    h!("half_not_normalised", Cosine, Cosines, |v| v.half_normalised = false,
        "the half vector v + l not normalised"),
    h!("no_horizon_cut", Cosine, Horizon,
        |v| (v.horizon_cut, v.vis_cut, v.ndf_cut) = (false, false, false),
        "no cut below the horizon (n·v or n·l ≤ 0 reaches the formula)"),
    // ---- metallic workflow ----
    h!("dielectric_f0_0_02", F0, Metallic, |v| v.dielectric_f0 = Some(0.02),
        "dielectric F0 0.02 instead of 0.04"),
    h!("dielectric_f0_0_05", F0, Metallic, |v| v.dielectric_f0 = Some(0.05),
        "dielectric F0 0.05 instead of 0.04"),
    h!("dielectric_f0_0_08", F0, Metallic, |v| v.dielectric_f0 = Some(0.08),
        "dielectric F0 0.08 instead of 0.04"),
    h!("dielectric_f0_0_4", F0, Metallic, |v| v.dielectric_f0 = Some(0.4),
        "dielectric F0 0.4 instead of 0.04"),
    h!("dielectric_f0_0_004", F0, Metallic, |v| v.dielectric_f0 = Some(0.004),
        "dielectric F0 0.004 instead of 0.04"),
    h!("metallic_inverted", F0, Metallic, |v| v.metallic_inverted = true,
        "the metallic blend inverted"),
    h!("metal_diffuse_kept", Diffuse, Metallic, |v| v.metal_diffuse_kept = true,
        "the diffuse colour not removed for metals"),
    h!("reflectance_not_squared", F0, Reflectance, |v| v.reflectance_squared = false,
        "reflectance not squared in F0 = 0.16 reflectance²"),
    // ---- constant factors ----
    h!("specular_x2", Constant, Lobes, |v| v.specular_factor = 2.0,
        "the specular lobe doubled"),
    h!("specular_half", Constant, Lobes, |v| v.specular_factor = 0.5,
        "the specular lobe halved"),
    h!("specular_x_pi", Constant, Lobes, |v| v.specular_factor = PI,
        "the specular lobe multiplied by π"),
    h!("diffuse_x2", Constant, Lobes, |v| v.diffuse_factor = 2.0,
        "the diffuse lobe doubled"),
    h!("diffuse_half", Constant, Lobes, |v| v.diffuse_factor = 0.5,
        "the diffuse lobe halved"),
    h!("total_x2", Constant, Total, |v| v.total_factor = 2.0,
        "the result doubled"),
    h!("total_half", Constant, Total, |v| v.total_factor = 0.5,
        "the result halved"),
    h!("total_x_pi", Constant, Total, |v| v.total_factor = PI,
        "the result multiplied by π"),
    h!("total_over_pi", Constant, Total, |v| v.total_factor = 1.0 / PI,
        "the result divided by π"),
];

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diagnose::terms::decompositions;
    use std::collections::HashSet;

    #[test]
    fn ids_are_unique_snake_case() {
        let mut seen = HashSet::new();
        for h in CATALOGUE {
            assert!(seen.insert(h.id), "{} twice", h.id);
            assert!(
                h.id.chars()
                    .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '_'),
                "{}",
                h.id
            );
            assert!(
                !h.description.is_empty() && !h.description.ends_with('.'),
                "{}",
                h.id
            );
        }
    }

    #[test]
    fn every_hypothesis_changes_something() {
        for h in CATALOGUE {
            assert_ne!(h.variant(), Variant::REFERENCE, "{} changes nothing", h.id);
        }
    }

    #[test]
    fn every_hypothesis_applies_to_some_model() {
        for h in CATALOGUE {
            assert!(
                decompositions().iter().any(|d| d.reads(h.knob)),
                "{} applies to no decomposed model",
                h.id
            );
        }
    }
}
