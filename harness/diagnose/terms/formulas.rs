//! The terms of the decomposed models, each written operation for operation as in
//! `crate::reference` and behind the knobs of a [`Variant`], and `cook_torrance`, the
//! composed evaluator the Cook-Torrance decompositions share.

use super::{Clamp, Cos, DiffuseForm, FresnelForm, NdfForm, Remap, Variant, VisForm};
use crate::reference::brdf::{CookTorrance, DiffuseKind, FresnelKind, MaskingKind, NdfKind};
use crate::reference::material::RoughnessClamp;
use crate::reference::vec3::{add, dot, mix, normalize, scale, Vec3};
use crate::reference::{fresnel, material, ndf, sin2_from_cos};

/// Perceptual roughness → alpha under the variant's clamp and remap, for a model that takes
/// perceptual roughness, with the model's own clamp `model_min` (if any).
pub(super) fn alpha_of_roughness(r: f64, model_min: Option<f64>, v: &Variant) -> f64 {
    let r = match (v.clamp, model_min) {
        (Clamp::AsModel, Some(min)) => RoughnessClamp::Min(min).apply(r),
        (Clamp::AsModel, None) | (Clamp::Missing, _) => r,
        (Clamp::Min(min), _) => RoughnessClamp::Min(min).apply(r),
    };
    remap(r, v.remap)
}

pub(super) fn remap(r: f64, m: Remap) -> f64 {
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
pub(super) fn alpha_of_alpha(alpha: f64, v: &Variant) -> f64 {
    if v.remap == Remap::Square && v.clamp == Clamp::AsModel {
        return alpha;
    }
    alpha_of_roughness(alpha.sqrt(), None, v)
}

// ---- distribution ----

/// GGX as `ndf::ggx`, with its π, its χ⁺ cut and its two squares as knobs.
pub(super) fn ggx(n_dot_h: f64, alpha: f64, v: &Variant) -> f64 {
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
pub(super) fn beckmann(n_dot_h: f64, alpha: f64, v: &Variant) -> f64 {
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
pub(super) fn blinn_phong(n_dot_h: f64, alpha: f64, v: &Variant) -> f64 {
    if v.ndf_cut && n_dot_h <= 0.0 {
        return 0.0;
    }
    let e = ndf::blinn_phong_exponent_from_alpha(alpha);
    (e + 2.0) / (2.0 * v.ndf_pi) * n_dot_h.powf(e)
}

pub(super) fn distribution(kind: NdfKind, n_dot_h: f64, alpha: f64, v: &Variant) -> f64 {
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

pub(super) fn ggx_root(c: f64, alpha: f64) -> f64 {
    (c * c + alpha * alpha * sin2_from_cos(c)).sqrt()
}

/// `masking::ggx_v_height_correlated` with its cut as a knob.
pub(super) fn ggx_v_hc(n_dot_v: f64, n_dot_l: f64, alpha: f64, cut: bool) -> f64 {
    if cut && (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return 0.0;
    }
    0.5 / (n_dot_l * ggx_root(n_dot_v, alpha) + n_dot_v * ggx_root(n_dot_l, alpha))
}

/// `masking::ggx_v_separable` with its cut as a knob.
pub(super) fn ggx_v_sep(n_dot_v: f64, n_dot_l: f64, alpha: f64, cut: bool) -> f64 {
    if cut && (n_dot_v <= 0.0 || n_dot_l <= 0.0) {
        return 0.0;
    }
    1.0 / ((n_dot_v + ggx_root(n_dot_v, alpha)) * (n_dot_l + ggx_root(n_dot_l, alpha)))
}

/// The visibility of `masking` (as `CookTorrance::visibility` composes it for `ndf`).
pub(super) fn visibility(
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
pub(super) fn schlick(v_dot_h: f64, f0: f64, f90: f64, v: &Variant) -> f64 {
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
pub(super) fn f90_of(f0: Vec3, model_f90: Option<f64>, v: &Variant) -> f64 {
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
pub(super) fn fresnel_rgb(c: f64, f0: Vec3, model_f90: Option<f64>, v: &Variant) -> Vec3 {
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
pub(super) fn burley(n_dot_v: f64, n_dot_l: f64, l_dot_h: f64, roughness: f64, v: &Variant) -> f64 {
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

pub(super) fn pow5(x: f64) -> f64 {
    let x2 = x * x;
    x2 * x2 * x
}

pub(super) fn f0_metallic(base: Vec3, metallic: f64, model_dielectric: f64, v: &Variant) -> Vec3 {
    let d = v.dielectric_f0.unwrap_or(model_dielectric);
    if v.metallic_inverted {
        mix(base, [d; 3], metallic)
    } else {
        material::f0_metallic_with(base, metallic, d)
    }
}

pub(super) fn diffuse_color(base: Vec3, metallic: f64, v: &Variant) -> Vec3 {
    if v.metal_diffuse_kept {
        base
    } else {
        material::diffuse_color(base, metallic)
    }
}

pub(super) fn factor(x: f64, k: f64) -> f64 {
    if k == 1.0 {
        x
    } else {
        x * k
    }
}

// ---- Cook-Torrance ----

/// `CookTorrance::eval` with every term behind its knob.
#[allow(clippy::too_many_arguments)]
pub(super) fn cook_torrance(
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

pub(super) fn v3(a: &[f64], i: usize) -> Vec3 {
    [a[i], a[i + 1], a[i + 2]]
}

pub(super) fn ct(m: &CookTorrance, a: &[f64], v: &Variant, o: &mut [f64]) {
    let r = cook_torrance(m, v3(a, 0), v3(a, 3), v3(a, 6), v3(a, 9), a[12], a[13], v);
    o[..3].copy_from_slice(&r);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::reference::{diffuse, masking};
    use std::f64::consts::{FRAC_1_PI, PI};

    #[test]
    fn one_over_pi_is_the_constant() {
        // lambert_rgb divides 1.0 by PI; the decomposition uses FRAC_1_PI.
        assert_eq!((1.0 / PI).to_bits(), FRAC_1_PI.to_bits());
        assert_eq!(diffuse::lambert().to_bits(), FRAC_1_PI.to_bits());
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
