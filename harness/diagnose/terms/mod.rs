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

use crate::reference::brdf::{CookTorrance, DiffuseKind, FresnelKind, MaskingKind, NdfKind};
use crate::reference::material::RoughnessClamp;
use crate::reference::vec3::{add, dot, mix, normalize, scale, Vec3};
use crate::reference::{fresnel, material, ndf, sin2_from_cos};
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

/// A registry model taken apart into terms.
#[derive(Clone, Copy, Debug)]
pub struct Decomposition {
    /// The registry name.
    pub model: &'static str,
    /// The knobs the evaluator reads.
    pub knobs: &'static [Knob],
    /// Evaluates under a variant: `args` flattened as the registry's, `out` its outputs.
    pub eval: fn(args: &[f64], variant: &Variant, out: &mut [f64]),
}

impl Decomposition {
    /// Whether the model reads `knob`.
    pub fn reads(&self, knob: Knob) -> bool {
        self.knobs.contains(&knob)
    }
}

/// The decomposition of the registry model `model`, if it has one.
pub fn decomposition(model: &str) -> Option<&'static Decomposition> {
    DECOMPOSITIONS.iter().find(|d| d.model == model)
}

/// Every decomposition.
pub fn decompositions() -> &'static [Decomposition] {
    DECOMPOSITIONS
}

// ---- roughness ----

/// Perceptual roughness → alpha under the variant's clamp and remap, for a model that takes
/// perceptual roughness, with the model's own clamp `model_min` (if any).
fn alpha_of_roughness(r: f64, model_min: Option<f64>, v: &Variant) -> f64 {
    let r = match (v.clamp, model_min) {
        (Clamp::AsModel, Some(min)) => RoughnessClamp::Min(min).apply(r),
        (Clamp::AsModel, None) | (Clamp::Missing, _) => r,
        (Clamp::Min(min), _) => RoughnessClamp::Min(min).apply(r),
    };
    remap(r, v.remap)
}

fn remap(r: f64, m: Remap) -> f64 {
    match m {
        Remap::Square => material::alpha_from_roughness(r),
        Remap::None => r,
        Remap::Twice => {
            let a = r * r;
            a * a
        }
        Remap::Sqrt => r.sqrt(),
    }
}

/// The alpha a shader computes when the check hands the reference `alpha = roughness²`:
/// unchanged under the reference variant, otherwise through `roughness = sqrt(alpha)`.
fn alpha_of_alpha(alpha: f64, v: &Variant) -> f64 {
    if v.remap == Remap::Square && v.clamp == Clamp::AsModel {
        return alpha;
    }
    alpha_of_roughness(alpha.sqrt(), None, v)
}

// ---- distribution ----

/// GGX as `ndf::ggx`, with its π, its χ⁺ cut and its two squares as knobs.
fn ggx(n_dot_h: f64, alpha: f64, v: &Variant) -> f64 {
    if v.ndf_cut && n_dot_h <= 0.0 {
        return 0.0;
    }
    let a2 = if v.ndf_alpha_squared {
        alpha * alpha
    } else {
        alpha
    };
    let c2 = n_dot_h * n_dot_h;
    let s2 = sin2_from_cos(n_dot_h);
    let d = s2 + c2 * a2;
    if v.ndf_denominator_squared {
        a2 / (v.ndf_pi * d * d)
    } else {
        a2 / (v.ndf_pi * d)
    }
}

/// Beckmann as `ndf::beckmann`, with the same knobs.
fn beckmann(n_dot_h: f64, alpha: f64, v: &Variant) -> f64 {
    if v.ndf_cut && n_dot_h <= 0.0 {
        return 0.0;
    }
    let a2 = if v.ndf_alpha_squared {
        alpha * alpha
    } else {
        alpha
    };
    let c2 = n_dot_h * n_dot_h;
    let tan2 = sin2_from_cos(n_dot_h) / c2;
    if v.ndf_denominator_squared {
        (-tan2 / a2).exp() / (v.ndf_pi * a2 * c2 * c2)
    } else {
        (-tan2 / a2).exp() / (v.ndf_pi * a2 * c2)
    }
}

/// Blinn-Phong from alpha as `ndf::blinn_phong_alpha`, with π and the cut as knobs.
fn blinn_phong(n_dot_h: f64, alpha: f64, v: &Variant) -> f64 {
    if v.ndf_cut && n_dot_h <= 0.0 {
        return 0.0;
    }
    let e = ndf::blinn_phong_exponent_from_alpha(alpha);
    (e + 2.0) / (2.0 * v.ndf_pi) * n_dot_h.powf(e)
}

fn distribution(kind: NdfKind, n_dot_h: f64, alpha: f64, v: &Variant) -> f64 {
    let kind = match v.ndf_form {
        NdfForm::Model => kind,
        NdfForm::Kind(k) => k,
    };
    match kind {
        NdfKind::Ggx => ggx(n_dot_h, alpha, v),
        NdfKind::Beckmann => beckmann(n_dot_h, alpha, v),
        NdfKind::BlinnPhong => blinn_phong(n_dot_h, alpha, v),
    }
}

// ---- visibility ----

fn ggx_root(c: f64, alpha: f64) -> f64 {
    (c * c + alpha * alpha * sin2_from_cos(c)).sqrt()
}

/// `masking::ggx_v_height_correlated` with its cut as a knob.
fn ggx_v_hc(n_dot_v: f64, n_dot_l: f64, alpha: f64, cut: bool) -> f64 {
    if cut && (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return 0.0;
    }
    0.5 / (n_dot_l * ggx_root(n_dot_v, alpha) + n_dot_v * ggx_root(n_dot_l, alpha))
}

/// `masking::ggx_v_separable` with its cut as a knob.
fn ggx_v_sep(n_dot_v: f64, n_dot_l: f64, alpha: f64, cut: bool) -> f64 {
    if cut && (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return 0.0;
    }
    1.0 / ((n_dot_v + ggx_root(n_dot_v, alpha)) * (n_dot_l + ggx_root(n_dot_l, alpha)))
}

/// The visibility of `masking` (as `CookTorrance::visibility` composes it for `ndf`).
fn visibility(
    ndf: NdfKind,
    kind: MaskingKind,
    n_dot_v: f64,
    n_dot_l: f64,
    alpha: f64,
    v: &Variant,
) -> f64 {
    let kind = match v.vis_form {
        VisForm::Kind(k) => k,
        _ => kind,
    };
    let ggx = ndf == NdfKind::Ggx;
    let vis = match kind {
        MaskingKind::SmithSeparable if ggx => ggx_v_sep(n_dot_v, n_dot_l, alpha, v.vis_cut),
        MaskingKind::SmithHeightCorrelated if ggx => ggx_v_hc(n_dot_v, n_dot_l, alpha, v.vis_cut),
        _ => CookTorrance {
            ndf,
            masking: kind,
            ..CookTorrance::STANDARD
        }
        .visibility(n_dot_v, n_dot_l, alpha),
    };
    let vis = if v.vis_four == 4.0 {
        vis
    } else {
        vis * (4.0 / v.vis_four)
    };
    if v.vis_form == VisForm::G2NotDivided {
        vis * (4.0 * n_dot_v * n_dot_l)
    } else {
        vis
    }
}

// ---- Fresnel ----

/// `fresnel::schlick_f90` with the exponent as a knob.
fn schlick(v_dot_h: f64, f0: f64, f90: f64, v: &Variant) -> f64 {
    let m = 1.0 - v_dot_h;
    let w = if v.schlick_exponent == 5.0 {
        let m2 = m * m;
        m2 * m2 * m
    } else {
        m.powf(v.schlick_exponent)
    };
    f0 + (f90 - f0) * w
}

/// The `F90` a Schlick model uses: `model_f90` is `Some(f90)` for a fixed or given one,
/// `None` for "from F0".
fn f90_of(f0: Vec3, model_f90: Option<f64>, v: &Variant) -> f64 {
    let from_f0 = |sat: bool| {
        let x = 50.0 * dot(f0, [0.33, 0.33, 0.33]);
        if sat {
            x.clamp(0.0, 1.0)
        } else {
            x
        }
    };
    match (v.fresnel_form, model_f90) {
        (FresnelForm::SchlickF90One, _) => 1.0,
        (FresnelForm::SchlickF90FromF0, _) => from_f0(true),
        (FresnelForm::F90Unsaturated, None) => from_f0(false),
        (_, Some(f90)) => f90,
        (_, None) => fresnel::f90_from_f0(f0),
    }
}

/// Per-channel Fresnel of a Schlick model at `c`, the model's own `F90` rule being
/// `model_f90` (see [`f90_of`]).
fn fresnel_rgb(c: f64, f0: Vec3, model_f90: Option<f64>, v: &Variant) -> Vec3 {
    if v.fresnel_form == FresnelForm::ExactDielectric {
        return f0.map(|f| fresnel::dielectric(c, fresnel::ior_from_f0(f)));
    }
    let f90 = f90_of(f0, model_f90, v);
    [
        schlick(c, f0[0], f90, v),
        schlick(c, f0[1], f90, v),
        schlick(c, f0[2], f90, v),
    ]
}

// ---- diffuse and material ----

/// Burley as `diffuse::burley` with its knobs; `l_dot_h` already chosen by the caller.
fn burley(n_dot_v: f64, n_dot_l: f64, l_dot_h: f64, roughness: f64, v: &Variant) -> f64 {
    let roughness = if v.burley_alpha {
        roughness * roughness
    } else {
        roughness
    };
    let ldh2 = if v.burley_ldh_squared {
        roughness * l_dot_h * l_dot_h
    } else {
        roughness * l_dot_h
    };
    let fd90 = 0.5 + 2.0 * ldh2;
    let light = 1.0 + (fd90 - 1.0) * pow5(1.0 - n_dot_l);
    let view = 1.0 + (fd90 - 1.0) * pow5(1.0 - n_dot_v);
    light * view * v.diffuse_inv_pi
}

fn pow5(x: f64) -> f64 {
    let x2 = x * x;
    x2 * x2 * x
}

fn f0_metallic(base: Vec3, metallic: f64, model_dielectric: f64, v: &Variant) -> Vec3 {
    let d = v.dielectric_f0.unwrap_or(model_dielectric);
    if v.metallic_inverted {
        mix(base, [d; 3], metallic)
    } else {
        material::f0_metallic_with(base, metallic, d)
    }
}

fn diffuse_color(base: Vec3, metallic: f64, v: &Variant) -> Vec3 {
    if v.metal_diffuse_kept {
        base
    } else {
        material::diffuse_color(base, metallic)
    }
}

fn factor(x: f64, k: f64) -> f64 {
    if k == 1.0 {
        x
    } else {
        x * k
    }
}

// ---- Cook-Torrance ----

/// `CookTorrance::eval` with every term behind its knob.
#[allow(clippy::too_many_arguments)]
fn cook_torrance(
    m: &CookTorrance,
    n: Vec3,
    view: Vec3,
    l: Vec3,
    base_color: Vec3,
    metallic: f64,
    roughness: f64,
    v: &Variant,
) -> Vec3 {
    let n = normalize(n);
    let view = normalize(view);
    let l = normalize(l);
    let n_dot_v = dot(n, view);
    let n_dot_l = dot(n, l);
    if v.horizon_cut && (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return [0.0; 3];
    }
    let h = if v.half_normalised {
        normalize(add(view, l))
    } else {
        add(view, l)
    };
    let n_dot_h = dot(n, h);
    let v_dot_h = dot(view, h);
    let pick = |c: Cos, own: f64| match c {
        Cos::Model => own,
        Cos::NdotV => n_dot_v,
        Cos::NdotL => n_dot_l,
        Cos::NdotH => n_dot_h,
        Cos::VdotH => v_dot_h,
    };
    let model_min = match m.roughness_clamp {
        RoughnessClamp::None => None,
        RoughnessClamp::Min(x) => Some(x),
    };
    let clamped = match (v.clamp, model_min) {
        (Clamp::AsModel, Some(min)) | (Clamp::Min(min), _) => {
            RoughnessClamp::Min(min).apply(roughness)
        }
        _ => roughness,
    };
    let alpha = remap(clamped, v.remap);

    let f0 = f0_metallic(base_color, metallic, m.dielectric_f0, v);
    let f_cos = pick(v.fresnel_cos, v_dot_h);
    let f = match m.fresnel {
        FresnelKind::One => [1.0; 3],
        FresnelKind::Schlick => fresnel_rgb(f_cos, f0, Some(1.0), v),
        FresnelKind::SchlickF90FromF0 => fresnel_rgb(f_cos, f0, None, v),
    };
    let d = distribution(m.ndf, pick(v.ndf_cos, n_dot_h), alpha, v);
    let vis = visibility(
        m.ndf,
        m.masking,
        pick(v.vis_cos, n_dot_v),
        n_dot_l,
        alpha,
        v,
    );
    let specular = scale(f, factor(d * vis, v.specular_factor));

    let kind = match v.diffuse_form {
        DiffuseForm::Model => m.diffuse,
        DiffuseForm::Kind(k) => k,
    };
    let fd = match kind {
        DiffuseKind::None => return specular.map(|x| factor(x, v.total_factor)),
        DiffuseKind::Lambert => v.diffuse_inv_pi,
        DiffuseKind::Burley => burley(n_dot_v, n_dot_l, pick(v.burley_cos, dot(l, h)), clamped, v),
    };
    add(
        specular,
        scale(
            diffuse_color(base_color, metallic, v),
            factor(fd, v.diffuse_factor),
        ),
    )
    .map(|x| factor(x, v.total_factor))
}

fn v3(a: &[f64], i: usize) -> Vec3 {
    [a[i], a[i + 1], a[i + 2]]
}

fn ct(m: &CookTorrance, a: &[f64], v: &Variant, o: &mut [f64]) {
    let r = cook_torrance(m, v3(a, 0), v3(a, 3), v3(a, 6), v3(a, 9), a[12], a[13], v);
    o[..3].copy_from_slice(&r);
}

const CT_KNOBS: &[Knob] = &[
    Knob::Roughness,
    Knob::Distribution,
    Knob::Cosines,
    Knob::Visibility,
    Knob::Fresnel,
    Knob::F90,
    Knob::DiffusePi,
    Knob::DiffuseForm,
    Knob::Metallic,
    Knob::Horizon,
    Knob::Lobes,
    Knob::Total,
];
const CT_BURLEY_KNOBS: &[Knob] = &[
    Knob::Roughness,
    Knob::Distribution,
    Knob::Cosines,
    Knob::Visibility,
    Knob::Fresnel,
    Knob::F90,
    Knob::DiffusePi,
    Knob::DiffuseForm,
    Knob::Burley,
    Knob::Metallic,
    Knob::Horizon,
    Knob::Lobes,
    Knob::Total,
];
const SPECULAR_KNOBS: &[Knob] = &[
    Knob::Roughness,
    Knob::Distribution,
    Knob::Cosines,
    Knob::Visibility,
    Knob::Horizon,
    Knob::Total,
];
const NDF_KNOBS: &[Knob] = &[Knob::Roughness, Knob::Distribution, Knob::Total];
const VIS_KNOBS: &[Knob] = &[Knob::Roughness, Knob::Visibility, Knob::Total];
const FRESNEL_KNOBS: &[Knob] = &[Knob::Fresnel, Knob::F90, Knob::Total];
const LAMBERT_KNOBS: &[Knob] = &[Knob::DiffusePi, Knob::Total];
const BURLEY_KNOBS: &[Knob] = &[
    Knob::DiffusePi,
    Knob::DiffuseForm,
    Knob::Burley,
    Knob::Total,
];
const METALLIC_KNOBS: &[Knob] = &[Knob::Metallic, Knob::Total];
const ROUGHNESS_KNOBS: &[Knob] = &[Knob::Roughness, Knob::Total];

fn vis_model(m: MaskingKind, a: &[f64], v: &Variant, o: &mut [f64]) {
    let alpha = alpha_of_alpha(a[2], v);
    o[0] = factor(
        visibility(NdfKind::Ggx, m, a[0], a[1], alpha, v),
        v.total_factor,
    );
}

fn ndf_model(k: NdfKind, a: &[f64], v: &Variant, o: &mut [f64]) {
    let alpha = alpha_of_alpha(a[1], v);
    o[0] = factor(distribution(k, a[0], alpha, v), v.total_factor);
}

fn burley_model(n_dot_v: f64, n_dot_l: f64, l_dot_h: f64, r: f64, v: &Variant) -> f64 {
    let ldh = match v.burley_cos {
        Cos::NdotV => n_dot_v,
        Cos::NdotL => n_dot_l,
        _ => l_dot_h,
    };
    match v.diffuse_form {
        DiffuseForm::Kind(DiffuseKind::Lambert) => v.diffuse_inv_pi,
        _ => burley(n_dot_v, n_dot_l, ldh, r, v),
    }
}

static DECOMPOSITIONS: &[Decomposition] = &[
    Decomposition {
        model: "cook_torrance_rgb",
        knobs: CT_KNOBS,
        eval: |a, v, o| ct(&CookTorrance::STANDARD, a, v, o),
    },
    Decomposition {
        model: "cook_torrance_burley_rgb",
        knobs: CT_BURLEY_KNOBS,
        eval: |a, v, o| ct(&CookTorrance::BURLEY, a, v, o),
    },
    Decomposition {
        model: "cook_torrance_f90_from_f0_rgb",
        knobs: CT_KNOBS,
        eval: |a, v, o| ct(&CookTorrance::F90_FROM_F0, a, v, o),
    },
    Decomposition {
        model: "cook_torrance_fast_rgb",
        knobs: CT_KNOBS,
        eval: |a, v, o| ct(&CookTorrance::FAST_VISIBILITY, a, v, o),
    },
    Decomposition {
        model: "cook_torrance_beckmann_rgb",
        knobs: CT_KNOBS,
        eval: |a, v, o| ct(&CookTorrance::BECKMANN, a, v, o),
    },
    Decomposition {
        model: "cook_torrance_specular",
        knobs: SPECULAR_KNOBS,
        eval: |a, v, o| {
            let r = cook_torrance(
                &CookTorrance::SPECULAR_ONLY,
                v3(a, 0),
                v3(a, 3),
                v3(a, 6),
                [1.0; 3],
                0.0,
                a[9],
                v,
            );
            o[0] = r[0];
        },
    },
    Decomposition {
        model: "ggx_ndf",
        knobs: NDF_KNOBS,
        eval: |a, v, o| ndf_model(NdfKind::Ggx, a, v, o),
    },
    Decomposition {
        model: "beckmann_ndf",
        knobs: NDF_KNOBS,
        eval: |a, v, o| ndf_model(NdfKind::Beckmann, a, v, o),
    },
    Decomposition {
        model: "blinn_phong_ndf_alpha",
        knobs: NDF_KNOBS,
        eval: |a, v, o| ndf_model(NdfKind::BlinnPhong, a, v, o),
    },
    Decomposition {
        model: "smith_ggx_v_height_correlated",
        knobs: VIS_KNOBS,
        eval: |a, v, o| vis_model(MaskingKind::SmithHeightCorrelated, a, v, o),
    },
    Decomposition {
        model: "smith_ggx_v_separable",
        knobs: VIS_KNOBS,
        eval: |a, v, o| vis_model(MaskingKind::SmithSeparable, a, v, o),
    },
    Decomposition {
        model: "smith_ggx_v_height_correlated_fast",
        knobs: VIS_KNOBS,
        eval: |a, v, o| vis_model(MaskingKind::GgxHeightCorrelatedFast, a, v, o),
    },
    Decomposition {
        model: "smith_ggx_v_height_correlated_hammon",
        knobs: VIS_KNOBS,
        eval: |a, v, o| vis_model(MaskingKind::GgxHeightCorrelatedHammon, a, v, o),
    },
    Decomposition {
        model: "schlick_fresnel",
        knobs: FRESNEL_KNOBS,
        eval: |a, v, o| {
            o[0] = factor(
                fresnel_rgb(a[0], [a[1]; 3], Some(1.0), v)[0],
                v.total_factor,
            )
        },
    },
    Decomposition {
        model: "schlick_fresnel_f90",
        knobs: FRESNEL_KNOBS,
        eval: |a, v, o| {
            o[0] = factor(
                fresnel_rgb(a[0], [a[1]; 3], Some(a[2]), v)[0],
                v.total_factor,
            )
        },
    },
    Decomposition {
        model: "schlick_fresnel_rgb",
        knobs: FRESNEL_KNOBS,
        eval: |a, v, o| {
            let f = fresnel_rgb(a[0], v3(a, 1), Some(1.0), v);
            o[..3].copy_from_slice(&f.map(|x| factor(x, v.total_factor)));
        },
    },
    Decomposition {
        model: "schlick_fresnel_rgb_f90",
        knobs: FRESNEL_KNOBS,
        eval: |a, v, o| {
            let f = fresnel_rgb(a[0], v3(a, 1), Some(a[4]), v);
            o[..3].copy_from_slice(&f.map(|x| factor(x, v.total_factor)));
        },
    },
    Decomposition {
        model: "schlick_fresnel_rgb_f90_from_f0",
        knobs: FRESNEL_KNOBS,
        eval: |a, v, o| {
            let f = fresnel_rgb(a[0], v3(a, 1), None, v);
            o[..3].copy_from_slice(&f.map(|x| factor(x, v.total_factor)));
        },
    },
    Decomposition {
        model: "lambert_diffuse",
        knobs: LAMBERT_KNOBS,
        eval: |_, v, o| o[0] = factor(v.diffuse_inv_pi, v.total_factor),
    },
    Decomposition {
        model: "lambert_diffuse_rgb",
        knobs: LAMBERT_KNOBS,
        eval: |a, v, o| {
            // `diffuse::lambert_rgb` scales by `1.0 / PI`, which is `FRAC_1_PI` to the bit
            // (checked in the tests below).
            let r = scale(v3(a, 0), v.diffuse_inv_pi);
            o[..3].copy_from_slice(&r.map(|x| factor(x, v.total_factor)));
        },
    },
    Decomposition {
        model: "burley_diffuse",
        knobs: BURLEY_KNOBS,
        eval: |a, v, o| {
            o[0] = factor(burley_model(a[0], a[1], a[2], a[3], v), v.total_factor);
        },
    },
    Decomposition {
        model: "burley_diffuse_rgb",
        knobs: BURLEY_KNOBS,
        eval: |a, v, o| {
            let fd = burley_model(a[3], a[4], a[5], a[6], v);
            let r = scale(v3(a, 0), fd);
            o[..3].copy_from_slice(&r.map(|x| factor(x, v.total_factor)));
        },
    },
    Decomposition {
        model: "material_f0",
        knobs: METALLIC_KNOBS,
        eval: |a, v, o| {
            let r = f0_metallic(v3(a, 0), a[3], material::DIELECTRIC_F0, v);
            o[..3].copy_from_slice(&r.map(|x| factor(x, v.total_factor)));
        },
    },
    Decomposition {
        model: "material_diffuse_color",
        knobs: METALLIC_KNOBS,
        eval: |a, v, o| {
            let r = diffuse_color(v3(a, 0), a[3], v);
            o[..3].copy_from_slice(&r.map(|x| factor(x, v.total_factor)));
        },
    },
    Decomposition {
        model: "f0_from_reflectance",
        knobs: &[Knob::Reflectance, Knob::Total],
        eval: |a, v, o| o[0] = factor(f0_from_reflectance(a[0], v), v.total_factor),
    },
    Decomposition {
        model: "material_f0_reflectance",
        knobs: &[Knob::Reflectance, Knob::Metallic, Knob::Total],
        eval: |a, v, o| {
            let d = f0_from_reflectance(a[4], v);
            let r = f0_metallic(v3(a, 0), a[3], d, v);
            o[..3].copy_from_slice(&r.map(|x| factor(x, v.total_factor)));
        },
    },
    Decomposition {
        model: "alpha_from_roughness",
        knobs: ROUGHNESS_KNOBS,
        eval: |a, v, o| o[0] = factor(alpha_of_roughness(a[0], None, v), v.total_factor),
    },
    Decomposition {
        model: "alpha_from_roughness_clamped",
        knobs: ROUGHNESS_KNOBS,
        eval: |a, v, o| o[0] = factor(alpha_of_roughness(a[0], Some(a[1]), v), v.total_factor),
    },
];

fn f0_from_reflectance(r: f64, v: &Variant) -> f64 {
    if v.reflectance_squared {
        material::f0_from_reflectance(r)
    } else {
        0.16 * r
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::reference::{self, diffuse, masking, ParamKind};

    /// Deterministic points over a model's domain: each parameter's edges, its midpoint and
    /// SplitMix64-drawn values; vectors are drawn per component (so unnormalised and
    /// below-horizon directions are included, which the models must also match).
    fn domain_points(m: &reference::Model, count: usize) -> Vec<Vec<f64>> {
        let mut rng = crate::sweep::Rng::new(0x5eed_u64);
        let mut next = || rng.unit();
        let mut points = vec![m.example.to_vec()];
        for k in 0..count {
            let mut p = Vec::new();
            for s in m.params {
                let (lo, hi) = s.range;
                for _ in 0..s.kind.width() {
                    let x = match k % 5 {
                        0 => lo,
                        1 => hi,
                        2 if s.kind == ParamKind::Scalar => 0.5 * (lo + hi),
                        _ => lo + (hi - lo) * next(),
                    };
                    p.push(x);
                }
            }
            points.push(p);
        }
        points
    }

    #[test]
    fn reference_variant_is_bit_identical() {
        // The decomposition with no change is the registry model, bit for bit (NaN where the
        // registry gives NaN), over each model's domain.
        for d in decompositions() {
            let m =
                reference::find(d.model).unwrap_or_else(|| panic!("{} not registered", d.model));
            let mut got = vec![0.0; m.outputs];
            for p in domain_points(m, 20_000) {
                let want = m.call(&p);
                (d.eval)(&p, &Variant::REFERENCE, &mut got);
                for c in 0..m.outputs {
                    assert!(
                        got[c].to_bits() == want[c].to_bits()
                            || (got[c].is_nan() && want[c].is_nan()),
                        "{}: at {p:?} component {c}: {} against the registry's {}",
                        d.model,
                        got[c],
                        want[c]
                    );
                }
            }
        }
    }

    #[test]
    fn one_over_pi_is_the_constant() {
        // lambert_rgb divides 1.0 by PI; the decomposition uses FRAC_1_PI.
        assert_eq!((1.0 / PI).to_bits(), FRAC_1_PI.to_bits());
        assert_eq!(diffuse::lambert().to_bits(), FRAC_1_PI.to_bits());
    }

    #[test]
    fn every_decomposed_model_is_registered_once() {
        let mut seen = std::collections::HashSet::new();
        for d in decompositions() {
            assert!(reference::find(d.model).is_some(), "{}", d.model);
            assert!(seen.insert(d.model), "{} twice", d.model);
        }
    }

    #[test]
    fn ggx_with_its_own_knobs_is_the_reference_formula() {
        // The re-written terms against the reference functions they mirror.
        for &(c, a) in &[(0.3, 0.2), (0.99, 0.01), (-0.2, 0.5), (1.0, 1.0)] {
            let v = Variant::REFERENCE;
            assert_eq!(ggx(c, a, &v).to_bits(), ndf::ggx(c, a).to_bits());
            assert_eq!(beckmann(c, a, &v).to_bits(), ndf::beckmann(c, a).to_bits());
            assert_eq!(
                ggx_v_hc(c, 0.7, a, true).to_bits(),
                masking::ggx_v_height_correlated(c, 0.7, a).to_bits()
            );
        }
    }
}
