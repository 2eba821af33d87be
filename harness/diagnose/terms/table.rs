//! The decompositions: for each decomposed registry model, the knobs it reads and its
//! evaluator, which maps the registry's flattened arguments onto the terms of `formulas`.

use super::formulas::*;
use super::{Cos, DiffuseForm, Knob, Variant};
use crate::reference::brdf::{CookTorrance, DiffuseKind, MaskingKind, NdfKind};
use crate::reference::material;
use crate::reference::vec3::scale;

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
    use crate::reference::{self, ParamKind};

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
    fn every_decomposed_model_is_registered_once() {
        let mut seen = std::collections::HashSet::new();
        for d in decompositions() {
            assert!(reference::find(d.model).is_some(), "{}", d.model);
            assert!(seen.insert(d.model), "{} twice", d.model);
        }
    }
}
