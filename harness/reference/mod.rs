//! Reference models: the published shading math in f64.
//!
//! Every function here is written from its paper's formula, never from the WGSL under test,
//! and each doc comment gives the formula in plain text, the domain, the value at the
//! domain's edges and the source. The families, one file each:
//!
//! - [`ndf`]: microfacet distributions (GGX isotropic and anisotropic, Beckmann,
//!   Blinn-Phong).
//! - [`masking`]: Smith Λ, G1, G2 (separable and height-correlated) and the visibility form,
//!   with the named fast approximations.
//! - [`fresnel`]: Schlick's approximation and the exact dielectric and conductor formulas.
//! - [`diffuse`]: Lambert, Burley, Oren-Nayar (full and qualitative) and Hammon's GGX
//!   diffuse approximation.
//! - [`material`]: the metallic workflow and the roughness remapping.
//! - [`brdf`]: Cook-Torrance composed from chosen terms, the anisotropic GGX specular lobe,
//!   and legacy Phong / Blinn-Phong.
//! - [`sheen`]: the Charlie and velvet sheen distributions, the cloth visibility and the
//!   composed lobes.
//! - [`clearcoat`]: GTR1, Kelemen's visibility, the layer's Fresnel and the composed lobe.
//! - [`multiscatter`]: the directional and average albedo of the GGX lobe by numerical
//!   integration ([`quad`]), and the energy-compensation terms built on them.
//! - [`envbrdf`]: the split-sum environment BRDF's scale and bias, integrated, and a
//!   published analytic fit.
//! - [`encoding`]: sRGB transfer, octahedral unit-vector encoding, a filmic tone curve.
//!
//! The rest of the tool reaches the models by name through the registry, [`models`] and
//! [`find`]: a suite file names a model, the sweep binds its parameters by
//! [`ParamSpec::name`], and the CLI lists them with [`listing`].
//! The models a check evaluates most also have a column form ([`columns`]): the same
//! function run over whole columns of arguments, which the gate uses where it exists.
//!
//! How the models are proven (all in `cargo test`, no Python needed at test time):
//! `tests/reference/mpmath.rs` compares against tables computed at 40 significant digits by
//! `tools/refgen/refgen.py`; `tests/reference/mitsuba.rs` against tables from the Mitsuba 3
//! renderer's own implementations; `tests/reference/identities.rs` checks normalisation,
//! masking consistency, reciprocity and energy by numerical integration;
//! `tests/reference/handbook.rs` checks handbook facts; `tests/reference/integrated.rs`
//! checks the integrated models against scipy integrals over a different variable, closed
//! forms and identities (white furnace, round trips). The measured specular albedo table
//! is in [`brdf`] and in `harness/reference/ALBEDO.md`.
//!
//! Measured agreement (largest relative error over every row of every table, as the tests
//! print it with `--nocapture`):
//! - against mpmath (14 tables, 4,007 points): 2.2e-13, at the dielectric Fresnel
//!   within 1e-6 of the critical angle, where `ior² - 1 + cos²θ` cancels; Beckmann's D and
//!   Λ reach 1.3e-13 and 1.7e-13 where `exp` has an argument near 700; everything else is
//!   below 1e-15. The tests require 1e-12.
//! - against Mitsuba 3 in single precision (8 tables, 1,600 points): 9.2e-7 (Beckmann D),
//!   about 15 f32 units in the last place; the tests require 1e-5, the bound derived from
//!   f32 rounding in `tests/reference/mitsuba.rs`.
//!
//! The registry is split by what each file owns: `registry` the types ([`Model`],
//! [`ParamSpec`], [`ParamKind`]) and the look-ups; `params` the parameter domains and the
//! example arguments; `citations` the source of every model; `table_terms` (the separate
//! terms: ndf, masking, fresnel, diffuse, material) and `table_lobes` (composed lobes,
//! the anisotropic terms, sheen, clearcoat, multiscatter, envbrdf, encoding) the entries,
//! which [`models`] lists in that order.
//!
//! Invariant: **this module never calls the WGSL evaluator, and the evaluator never calls

pub mod brdf;
pub mod clearcoat;
pub mod columns;
pub mod diffuse;
pub mod encoding;
pub mod envbrdf;
pub mod fresnel;
pub mod masking;
pub mod material;
pub mod multiscatter;
pub mod ndf;
pub mod quad;
pub mod sheen;
pub mod vec3;

mod citations;
mod params;
mod registry;
mod table_lobes;
mod table_terms;

pub use registry::{find, listing, models, Model, ParamKind, ParamSpec};

/// `sin²θ` from `cos θ` as `(1 - cos θ)(1 + cos θ)`: unlike `1 - cos²θ` it keeps full
/// relative precision near `cos θ = ±1` (for `|cos θ| ≥ 0.5` the factor `1 - |cos θ|` is
/// exact by Sterbenz's lemma).
#[inline]
pub(crate) fn sin2_from_cos(c: f64) -> f64 {
    (1.0 - c) * (1.0 + c)
}
