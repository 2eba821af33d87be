//! The registry's composite models taken apart into named terms, re-evaluable with one
//! term changed.
//!
//! A [`Variant`] holds one setting per term (the roughness remap and clamp, the
//! distribution, the visibility, the Fresnel term and its `F0`/`F90`, the diffuse term, the
//! metallic blend, which cosine each term reads, the horizon cut, constant factors).
//! [`Variant::REFERENCE`] is the published model; a hypothesis of the catalogue changes one
//! field. [`decomposition`] gives, for a registry model name, the list of [`Knob`]s the
//! model reads and its evaluator `eval(args, variant, out)`, with the registry's flattened
//! argument order.
//!
//! Every term is written here operation for operation as in `crate::reference`, so that
//! with [`Variant::REFERENCE`] each decomposition reproduces its registry model bit for bit
//! (checked over each model's domain by `reference_variant_is_bit_identical` below). The
//! reference functions are called directly where the term has no knob of its own.
//!
//! One file per job: this one holds the settings ([`Variant`] and its field types, [`Knob`]);
//! `formulas` the terms and the composed Cook-Torrance evaluator, each behind its knobs;
//! `table` the [`Decomposition`]s: which knobs each model reads and how its flattened
//! arguments reach the formulas.

mod formulas;
mod table;

pub use table::{decomposition, decompositions, Decomposition};

use crate::reference::brdf::{DiffuseKind, MaskingKind, NdfKind};
use std::f64::consts::{FRAC_1_PI, PI};

/// How the shader maps perceptual roughness to the microfacet width alpha.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Remap {
    /// `alpha = roughness²` (the reference).
    Square,
    /// `alpha = roughness`: the remap skipped.
    None,
    /// `alpha = roughness⁴`: the remap applied twice.
    Twice,
    /// `alpha = sqrt(roughness)`: a square root where the square belongs.
    Sqrt,
}

/// The minimum perceptual roughness the shader applies.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Clamp {
    /// As the reference model does (its parameter or its configuration).
    AsModel,
    /// No clamp at all.
    Missing,
    /// `max(roughness, value)` with a fixed value.
    Min(f64),
}

/// Which cosine a term reads.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Cos {
    /// The cosine the model prescribes for that term.
    Model,
    NdotV,
    NdotL,
    NdotH,
    VdotH,
}

/// The visibility form `V = G2 / (4 n·l n·v)`, or a neighbour of it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum VisForm {
    /// The model's own.
    Model,
    /// Another masking model of the same signature.
    Kind(MaskingKind),
    /// `G2` returned without the division by `4 n·l n·v`.
    G2NotDivided,
}

/// The Fresnel form.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FresnelForm {
    /// The model's own.
    Model,
    /// Schlick with `F90 = 1` (any `F90` the model has is ignored).
    SchlickF90One,
    /// Schlick with `F90 = saturate(50 dot(F0, 0.33))`.
    SchlickF90FromF0,
    /// As the model, but `F90 = 50 dot(F0, 0.33)` without the saturate.
    F90Unsaturated,
    /// The exact dielectric formula at the index of refraction that has this `F0`.
    ExactDielectric,
}

/// The distribution form.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum NdfForm {
    Model,
    Kind(NdfKind),
}

/// The diffuse form.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum DiffuseForm {
    Model,
    Kind(DiffuseKind),
}

/// One setting per term. [`Variant::REFERENCE`] is the published model.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Variant {
    pub remap: Remap,
    pub clamp: Clamp,
    /// π in the distribution's normalisation.
    pub ndf_pi: f64,
    /// The χ⁺ cut of the distribution (`D = 0` for `n·h ≤ 0`).
    pub ndf_cut: bool,
    /// `alpha²` inside the distribution (false: `alpha` where `alpha²` belongs).
    pub ndf_alpha_squared: bool,
    /// The distribution's denominator squared (false: `(…)` where `(…)²` belongs).
    pub ndf_denominator_squared: bool,
    pub ndf_form: NdfForm,
    pub ndf_cos: Cos,
    pub vis_form: VisForm,
    /// The 4 of the specular denominator (in the visibility form).
    pub vis_four: f64,
    /// The visibility's cut below the horizon.
    pub vis_cut: bool,
    /// The cosine the visibility reads in place of `n·v`.
    pub vis_cos: Cos,
    pub fresnel_form: FresnelForm,
    /// Schlick's exponent.
    pub schlick_exponent: f64,
    pub fresnel_cos: Cos,
    /// `1/π` of the diffuse term.
    pub diffuse_inv_pi: f64,
    pub diffuse_form: DiffuseForm,
    /// `l·h` squared in Burley's `F_D90`.
    pub burley_ldh_squared: bool,
    /// The cosine Burley's `F_D90` reads in place of `l·h`.
    pub burley_cos: Cos,
    /// Burley given alpha where perceptual roughness belongs.
    pub burley_alpha: bool,
    /// Dielectric `F0` of the metallic workflow (`None`: the model's).
    pub dielectric_f0: Option<f64>,
    /// `F0 = mix(base_color, dielectric, metallic)` instead of
    /// `mix(dielectric, base_color, metallic)`.
    pub metallic_inverted: bool,
    /// The diffuse colour left at `base_color` for metals.
    pub metal_diffuse_kept: bool,
    /// `reflectance²` in `F0 = 0.16 reflectance²`.
    pub reflectance_squared: bool,
    /// The BRDF's cut to black below the horizon.
    pub horizon_cut: bool,
    /// The half vector normalised.
    pub half_normalised: bool,
    /// Factor on the specular lobe.
    pub specular_factor: f64,
    /// Factor on the diffuse lobe.
    pub diffuse_factor: f64,
    /// Factor on the whole result.
    pub total_factor: f64,
}

impl Variant {
    /// The published model: every term as the registry evaluates it.
    pub const REFERENCE: Variant = Variant {
        remap: Remap::Square,
        clamp: Clamp::AsModel,
        ndf_pi: PI,
        ndf_cut: true,
        ndf_alpha_squared: true,
        ndf_denominator_squared: true,
        ndf_form: NdfForm::Model,
        ndf_cos: Cos::Model,
        vis_form: VisForm::Model,
        vis_four: 4.0,
        vis_cut: true,
        vis_cos: Cos::Model,
        fresnel_form: FresnelForm::Model,
        schlick_exponent: 5.0,
        fresnel_cos: Cos::Model,
        diffuse_inv_pi: FRAC_1_PI,
        diffuse_form: DiffuseForm::Model,
        burley_ldh_squared: true,
        burley_cos: Cos::Model,
        burley_alpha: false,
        dielectric_f0: None,
        metallic_inverted: false,
        metal_diffuse_kept: false,
        reflectance_squared: true,
        horizon_cut: true,
        half_normalised: true,
        specular_factor: 1.0,
        diffuse_factor: 1.0,
        total_factor: 1.0,
    };
}

/// A field group of [`Variant`] that a decomposed model reads. A hypothesis applies to a
/// model only if the model reads the knob the hypothesis turns.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Knob {
    /// `remap` and `clamp`.
    Roughness,
    /// `ndf_pi`, `ndf_cut`, `ndf_alpha_squared`, `ndf_denominator_squared`, `ndf_form`.
    Distribution,
    /// `ndf_cos`, `fresnel_cos`, `vis_cos`, `half_normalised`: cosines from vectors.
    Cosines,
    /// `vis_form`, `vis_four`, `vis_cut`.
    Visibility,
    /// `schlick_exponent`, `fresnel_form` between Schlick and the exact form.
    Fresnel,
    /// `fresnel_form`'s `F90` variants.
    F90,
    /// `diffuse_inv_pi`.
    DiffusePi,
    /// `diffuse_form`.
    DiffuseForm,
    /// `burley_ldh_squared`, `burley_cos`, `burley_alpha`.
    Burley,
    /// `dielectric_f0`, `metallic_inverted`, `metal_diffuse_kept`.
    Metallic,
    /// `reflectance_squared`.
    Reflectance,
    /// `horizon_cut`.
    Horizon,
    /// `specular_factor`, `diffuse_factor`: factors on one lobe of a two-lobe BRDF.
    Lobes,
    /// `total_factor`.
    Total,
}
