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
//! Invariant: **this module never calls the WGSL evaluator, and the evaluator never calls
//! it**; the comparison layer brings the two together.

pub mod brdf;
pub mod clearcoat;
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

use std::fmt::Write as _;
use vec3::Vec3;

/// `sin²θ` from `cos θ` as `(1 - cos θ)(1 + cos θ)`: unlike `1 - cos²θ` it keeps full
/// relative precision near `cos θ = ±1` (for `|cos θ| ≥ 0.5` the factor `1 - |cos θ|` is
/// exact by Sterbenz's lemma).
pub(crate) fn sin2_from_cos(c: f64) -> f64 {
    (1.0 - c) * (1.0 + c)
}

/// The shape of one model parameter.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ParamKind {
    /// One f64.
    Scalar,
    /// Three f64 (a direction or an RGB colour), consecutive in the flattened argument list.
    Vec3,
}

impl ParamKind {
    /// How many scalars the parameter takes in the flattened argument list.
    pub fn width(self) -> usize {
        match self {
            ParamKind::Scalar => 1,
            ParamKind::Vec3 => 3,
        }
    }
}

/// One named parameter of a registered model.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ParamSpec {
    /// The name a shader author would use (`n_dot_h`, `alpha`, `base_color`, ...).
    pub name: &'static str,
    /// Scalar or three-component.
    pub kind: ParamKind,
    /// One line: what the parameter means.
    pub doc: &'static str,
    /// The domain of the scalar, or of each component of a vector: `(low, high)`, inclusive.
    pub range: (f64, f64),
}

/// A registered reference model, callable by name.
#[derive(Clone, Copy, Debug)]
pub struct Model {
    /// Unique name, e.g. `ggx_ndf`, `smith_ggx_v_height_correlated`, `cook_torrance_rgb`.
    pub name: &'static str,
    /// `ndf`, `masking`, `fresnel`, `diffuse`, `material`, `brdf`, `sheen`, `clearcoat`,
    /// `multiscatter`, `envbrdf` or `encoding`.
    pub family: &'static str,
    /// One line.
    pub summary: &'static str,
    /// Authors, title, year.
    pub citation: &'static str,
    /// The parameters, in argument order.
    pub params: &'static [ParamSpec],
    /// Number of f64 outputs (1, 2 or 3).
    pub outputs: usize,
    /// Evaluates the model: `args` flattened (a `Vec3` parameter takes 3 consecutive
    /// scalars), `out` of length [`Model::outputs`].
    pub eval: fn(args: &[f64], out: &mut [f64]),
    /// A typical argument list (flattened), inside every parameter's range.
    pub example: &'static [f64],
}

impl Model {
    /// Length of the flattened argument list.
    pub fn arity(&self) -> usize {
        self.params.iter().map(|p| p.kind.width()).sum()
    }

    /// Evaluates at `args` into a new vector of [`Model::outputs`] values.
    ///
    /// Panics if `args.len() != self.arity()`.
    pub fn call(&self, args: &[f64]) -> Vec<f64> {
        assert_eq!(
            args.len(),
            self.arity(),
            "wrong argument count for {}",
            self.name
        );
        let mut out = vec![0.0; self.outputs];
        (self.eval)(args, &mut out);
        out
    }
}

/// All registered models, grouped by family.
pub fn models() -> &'static [Model] {
    MODELS
}

/// The model registered under `name`, if any.
pub fn find(name: &str) -> Option<&'static Model> {
    MODELS.iter().find(|m| m.name == name)
}

/// A human-readable listing of every model: name, outputs, summary, parameters and source.
pub fn listing() -> String {
    let mut s = String::new();
    let mut family = "";
    for m in MODELS {
        if m.family != family {
            family = m.family;
            let _ = writeln!(s, "{family}:");
        }
        let out = match m.outputs {
            1 => "scalar",
            2 => "vec2",
            _ => "rgb",
        };
        let _ = writeln!(s, "  {} -> {}: {}", m.name, out, m.summary);
        for p in m.params {
            let kind = match p.kind {
                ParamKind::Scalar => "",
                ParamKind::Vec3 => " (vec3)",
            };
            let _ = writeln!(
                s,
                "      {}{}  {} [{} .. {}]",
                p.name, kind, p.doc, p.range.0, p.range.1
            );
        }
        let _ = writeln!(s, "      source: {}", m.citation);
    }
    s
}

fn v3(a: &[f64], i: usize) -> Vec3 {
    [a[i], a[i + 1], a[i + 2]]
}

fn put3(out: &mut [f64], v: Vec3) {
    out[..3].copy_from_slice(&v);
}

const fn scalar(name: &'static str, doc: &'static str, lo: f64, hi: f64) -> ParamSpec {
    ParamSpec {
        name,
        kind: ParamKind::Scalar,
        doc,
        range: (lo, hi),
    }
}

const fn vector(name: &'static str, doc: &'static str, lo: f64, hi: f64) -> ParamSpec {
    ParamSpec {
        name,
        kind: ParamKind::Vec3,
        doc,
        range: (lo, hi),
    }
}

const N_DOT_H: ParamSpec = scalar(
    "n_dot_h",
    "cosine between normal and half vector",
    -1.0,
    1.0,
);
const T_DOT_H: ParamSpec = scalar("t_dot_h", "half vector along the tangent", -1.0, 1.0);
const B_DOT_H: ParamSpec = scalar("b_dot_h", "half vector along the bitangent", -1.0, 1.0);
const N_DOT_V: ParamSpec = scalar("n_dot_v", "cosine between normal and view", -1.0, 1.0);
const N_DOT_L: ParamSpec = scalar("n_dot_l", "cosine between normal and light", -1.0, 1.0);
const V_DOT_H: ParamSpec = scalar("v_dot_h", "cosine of incidence on the facet", 0.0, 1.0);
const L_DOT_H: ParamSpec = scalar("l_dot_h", "cosine between light and half vector", 0.0, 1.0);
const ALPHA: ParamSpec = scalar("alpha", "microfacet width (roughness squared)", 0.0, 1.0);
const ALPHA_X: ParamSpec = scalar("alpha_x", "microfacet width along the tangent", 0.0, 1.0);
const ALPHA_Y: ParamSpec = scalar("alpha_y", "microfacet width along the bitangent", 0.0, 1.0);
const EXPONENT: ParamSpec = scalar("exponent", "Blinn-Phong exponent", 0.0, 1.0e4);
const ROUGHNESS: ParamSpec = scalar("roughness", "perceptual roughness", 0.0, 1.0);
const MIN_ROUGHNESS: ParamSpec = scalar(
    "min_roughness",
    "lower bound on perceptual roughness",
    0.0,
    1.0,
);
const K: ParamSpec = scalar("k", "Schlick masking constant", 0.0, 1.0);
const F0: ParamSpec = scalar("f0", "reflectance at normal incidence", 0.0, 1.0);
const F90: ParamSpec = scalar("f90", "reflectance at grazing incidence", 0.0, 1.0);
const F0_RGB: ParamSpec = vector("f0", "reflectance at normal incidence", 0.0, 1.0);
const IOR: ParamSpec = scalar("ior", "relative index of refraction", 0.01, 10.0);
const IOR_RGB: ParamSpec = vector("ior", "refractive index (real part)", 0.01, 10.0);
const EXTINCTION: ParamSpec = scalar("k", "extinction coefficient", 0.0, 20.0);
const EXTINCTION_RGB: ParamSpec = vector("k", "extinction coefficient", 0.0, 20.0);
const ALBEDO: ParamSpec = vector("albedo", "diffuse albedo", 0.0, 1.0);
const BASE_COLOR: ParamSpec = vector("base_color", "linear base colour", 0.0, 1.0);
const METALLIC: ParamSpec = scalar("metallic", "0 dielectric, 1 metal", 0.0, 1.0);
const REFLECTANCE: ParamSpec = scalar("reflectance", "dielectric reflectance parameter", 0.0, 1.0);
const N: ParamSpec = vector("n", "surface normal", -1.0, 1.0);
const T: ParamSpec = vector("t", "tangent", -1.0, 1.0);
const B: ParamSpec = vector("b", "bitangent", -1.0, 1.0);
const H: ParamSpec = vector("h", "half vector (microfacet normal)", -1.0, 1.0);
const V: ParamSpec = vector("v", "direction to the viewer", -1.0, 1.0);
const L: ParamSpec = vector("l", "direction to the light", -1.0, 1.0);
const DIFFUSE_COLOR: ParamSpec = vector("diffuse_color", "diffuse colour", 0.0, 1.0);
const SPECULAR_COLOR: ParamSpec = vector("specular_color", "specular colour", 0.0, 1.0);
const SHININESS: ParamSpec = scalar("shininess", "specular exponent", 0.0, 1.0e4);

const T_DOT_V: ParamSpec = scalar("t_dot_v", "view direction along the tangent", -1.0, 1.0);
const B_DOT_V: ParamSpec = scalar("b_dot_v", "view direction along the bitangent", -1.0, 1.0);
const T_DOT_L: ParamSpec = scalar("t_dot_l", "light direction along the tangent", -1.0, 1.0);
const B_DOT_L: ParamSpec = scalar("b_dot_l", "light direction along the bitangent", -1.0, 1.0);
const COS_PHI: ParamSpec = scalar(
    "cos_phi",
    "cosine of the azimuth between the projected view and light",
    -1.0,
    1.0,
);
const SIGMA_ON: ParamSpec = scalar("sigma", "facet slope deviation (radians)", 0.0, 1.5);
const RHO: ParamSpec = scalar("rho", "diffuse albedo", 0.0, 1.0);
const L_DOT_V: ParamSpec = scalar("l_dot_v", "cosine between light and view", -1.0, 1.0);
const SHEEN_ALPHA: ParamSpec = scalar("alpha", "sheen roughness", 0.01, 1.0);
const VELVET_SIGMA: ParamSpec = scalar("sigma", "velvet width", 0.01, 1.0);
const CC_ALPHA: ParamSpec = scalar("alpha", "clearcoat width", 0.001, 1.0);
const GLOSS: ParamSpec = scalar("gloss", "clearcoat gloss", 0.0, 1.0);
const MS_ALPHA: ParamSpec = scalar("alpha", "microfacet width (roughness squared)", 0.0, 1.0);
const F_AVG: ParamSpec = scalar("f_avg", "hemispherical average Fresnel", 0.0, 1.0);
const E_AVG: ParamSpec = scalar("e_avg", "hemispherical average albedo", 0.0, 1.0);
const X_LINEAR: ParamSpec = scalar("x", "linear value", 0.0, 1.0);
const X_SIGNAL: ParamSpec = scalar("x", "sRGB-encoded value", 0.0, 1.0);
const X_HDR: ParamSpec = scalar("x", "scene-referred linear value", 0.0, 1.0e3);
const OCT_U: ParamSpec = scalar("u", "first octahedral coordinate", -1.0, 1.0);
const OCT_V: ParamSpec = scalar("v", "second octahedral coordinate", -1.0, 1.0);
const UNIT: ParamSpec = vector("n", "unit vector to encode", -1.0, 1.0);

const WALTER: &str = "B. Walter, S. R. Marschner, H. Li, K. E. Torrance, \
    \"Microfacet Models for Refraction through Rough Surfaces\", Eurographics Symposium on \
    Rendering, 2007";
const HEITZ: &str = "E. Heitz, \"Understanding the Masking-Shadowing Function in \
    Microfacet-Based BRDFs\", Journal of Computer Graphics Techniques 3(2), 2014";
const GGX_CITE: &str = "T. S. Trowbridge, K. P. Reitz, \"Average irregularity representation \
    of a rough surface for ray reflection\", Journal of the Optical Society of America, 1975; \
    B. Walter, S. R. Marschner, H. Li, K. E. Torrance, \"Microfacet Models for Refraction \
    through Rough Surfaces\", Eurographics Symposium on Rendering, 2007";
const BECKMANN_CITE: &str = "P. Beckmann, A. Spizzichino, \"The Scattering of Electromagnetic \
    Waves from Rough Surfaces\", 1963; B. Walter et al., \"Microfacet Models for Refraction \
    through Rough Surfaces\", Eurographics Symposium on Rendering, 2007";
const BLINN_CITE: &str = "J. F. Blinn, \"Models of Light Reflection for Computer Synthesized \
    Pictures\", SIGGRAPH 1977; normalisation from B. Walter et al., \"Microfacet Models for \
    Refraction through Rough Surfaces\", Eurographics Symposium on Rendering, 2007";
const HEITZ_LAGARDE: &str = "E. Heitz, \"Understanding the Masking-Shadowing Function in \
    Microfacet-Based BRDFs\", Journal of Computer Graphics Techniques 3(2), 2014; in this form \
    S. Lagarde, C. de Rousiers, course notes, SIGGRAPH 2014 course \"Physically Based Shading \
    in Theory and Practice\"";
const GUY_AGOPIAN: &str = "R. Guy, M. Agopian, design documentation of an open-source \
    real-time physically based renderer, 2018 (common practice; quoted from memory)";
const HAMMON: &str = "E. Hammon Jr., \"PBR Diffuse Lighting for GGX+Smith Microsurfaces\", \
    Game Developers Conference, 2017";
const SCHLICK_KARIS: &str = "C. Schlick, \"An Inexpensive BRDF Model for Physically-based \
    Rendering\", Computer Graphics Forum (Eurographics), 1994; B. Karis, course notes, \
    SIGGRAPH 2013 course \"Physically Based Shading in Theory and Practice\"";
const SCHLICK: &str = "C. Schlick, \"An Inexpensive BRDF Model for Physically-based \
    Rendering\", Computer Graphics Forum (Eurographics), 1994";
const SCHLICK_F90: &str = "C. Schlick, \"An Inexpensive BRDF Model for Physically-based \
    Rendering\", Computer Graphics Forum (Eurographics), 1994; F90 from R. Guy, M. Agopian, \
    design documentation of an open-source real-time renderer, 2018, after C. Schüler, \
    \"An Efficient and Physically Plausible Real-Time Shading Model\", ShaderX7, 2009 \
    (common practice; attribution from memory)";
const BORN_WOLF: &str = "A. Fresnel, 1823, as given by M. Born, E. Wolf, \"Principles of \
    Optics\", 1959";
const LAMBERT: &str = "J. H. Lambert, \"Photometria\", 1760";
const BURLEY: &str = "B. Burley, course notes, SIGGRAPH 2012 course \"Practical Physically \
    Based Shading in Film and Game Production\"";
const BURLEY_KARIS: &str = "B. Burley, course notes, SIGGRAPH 2012 course \"Practical \
    Physically Based Shading in Film and Game Production\"; B. Karis, course notes, \
    SIGGRAPH 2013 course \"Physically Based Shading in Theory and Practice\"";
const COOK_TORRANCE: &str = "R. L. Cook, K. E. Torrance, \"A Reflectance Model for Computer \
    Graphics\", ACM Transactions on Graphics, 1982; B. Walter et al., \"Microfacet Models \
    for Refraction through Rough Surfaces\", Eurographics Symposium on Rendering, 2007";
const PHONG: &str = "B. T. Phong, \"Illumination for Computer Generated Pictures\", \
    Communications of the ACM, 1975";

const OREN_NAYAR: &str = "M. Oren, S. K. Nayar, \"Generalization of Lambert's Reflectance \
    Model\", SIGGRAPH 1994";
const CHARLIE: &str = "A. Conty Estevez, C. Kulla, \"Production Friendly Microfacet Sheen \
    BRDF\", technical report, 2017; visibility from M. Ashikhmin, S. Premoze, \
    \"Distribution-based BRDFs\", technical report, 2007, as used by D. Neubelt, \
    M. Pettineo, course notes, SIGGRAPH 2013 course \"Physically Based Shading in Theory and \
    Practice\"";
const VELVET: &str = "M. Ashikhmin, S. Premoze, \"Distribution-based BRDFs\", technical \
    report, 2007";
const NEUBELT: &str = "M. Ashikhmin, S. Premoze, \"Distribution-based BRDFs\", technical \
    report, 2007; D. Neubelt, M. Pettineo, course notes, SIGGRAPH 2013 course \"Physically \
    Based Shading in Theory and Practice\"";
const GTR1: &str = "B. Burley, course notes, SIGGRAPH 2012 course \"Practical Physically \
    Based Shading in Film and Game Production\"; E. M. Berry, \"Diffuse reflection of light \
    from a matt surface\", Journal of the Optical Society of America, 1923";
const KELEMEN: &str = "C. Kelemen, L. Szirmay-Kalos, \"A Microfacet Based Coupled \
    Specular-Matte BRDF Model with Importance Sampling\", Eurographics 2001 short \
    presentations";
const CLEARCOAT: &str = "B. Burley, course notes, SIGGRAPH 2012 course \"Practical \
    Physically Based Shading in Film and Game Production\"; C. Kelemen, L. Szirmay-Kalos, \
    Eurographics 2001 short presentations; C. Schlick, Computer Graphics Forum, 1994";
const KULLA_CONTY: &str = "C. Kulla, A. Conty, course notes, SIGGRAPH 2017 course \
    \"Physically Based Shading in Theory and Practice\"; integrated numerically";
const TURQUIN: &str = "E. Turquin, \"Practical multiple scattering compensation for \
    microfacet models\", technical report, 2019; E integrated numerically";
const SPLIT_SUM: &str = "B. Karis, course notes, SIGGRAPH 2013 course \"Physically Based \
    Shading in Theory and Practice\"; integrated numerically with height-correlated Smith";
const SPLIT_SUM_FIT: &str = "B. Karis, \"Physically Based Shading on Mobile\", web article, \
    2014 (coefficients quoted from memory: common practice)";
const SRGB: &str = "IEC 61966-2-1:1999, default RGB colour space sRGB";
const OCTAHEDRAL: &str = "Z. H. Cigolle, S. Donow, D. Evangelakos, M. Mara, M. McGuire, \
    Q. Meyer, \"A Survey of Efficient Representations for Independent Unit Vectors\", \
    Journal of Computer Graphics Techniques 3(2), 2014";
const FILMIC: &str = "K. Narkowicz, web article on a fitted filmic tone-mapping curve, 2015 \
    (coefficients quoted from memory: common practice)";

/// Typical unit vectors for the examples: a normal, a view and a light direction.
const EX_N: [f64; 3] = [0.0, 0.0, 1.0];
const EX_V: [f64; 3] = [0.3, 0.0, 0.9539392014169457];
const EX_L: [f64; 3] = [-0.5, 0.2, 0.8426149773176358];

const fn cat<const A: usize, const B: usize, const C: usize>(a: [f64; A], b: [f64; B]) -> [f64; C] {
    let mut out = [0.0; C];
    let mut i = 0;
    while i < A {
        out[i] = a[i];
        i += 1;
    }
    while i < A + B {
        out[i] = b[i - A];
        i += 1;
    }
    out
}

/// An example view in the tangent frame `(t, b, n)` and the anisotropic pair's parameters.
const EX_ANISO_V: [f64; 5] = [0.9327379053088815, 0.3, 0.2, 0.2, 0.5];
const EX_ANISO_PAIR: [f64; 8] = [
    0.9327379053088815,
    0.3,
    0.2,
    0.9110433579144299,
    -0.4,
    0.1,
    0.2,
    0.5,
];
const ANISO_PAIR: [ParamSpec; 8] = [
    N_DOT_V, T_DOT_V, B_DOT_V, N_DOT_L, T_DOT_L, B_DOT_L, ALPHA_X, ALPHA_Y,
];

const EX_NVL: [f64; 9] = cat::<6, 3, 9>(cat::<3, 3, 6>(EX_N, EX_V), EX_L);
const EX_BRDF: [f64; 14] = cat::<9, 5, 14>(EX_NVL, [0.8, 0.5, 0.3, 0.25, 0.6]);
const EX_LEGACY: [f64; 16] = cat::<9, 7, 16>(EX_NVL, [0.6, 0.3, 0.2, 0.5, 0.5, 0.5, 32.0]);

static MODELS: &[Model] = &[
    // ---- ndf ----
    Model {
        name: "ggx_ndf",
        family: "ndf",
        summary: "GGX / Trowbridge-Reitz D, isotropic",
        citation: GGX_CITE,
        params: &[N_DOT_H, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = ndf::ggx(a[0], a[1]),
        example: &[0.9, 0.3],
    },
    Model {
        name: "ggx_aniso_ndf",
        family: "ndf",
        summary: "GGX D, anisotropic, from the half vector's tangent-frame components",
        citation: HEITZ,
        params: &[N_DOT_H, T_DOT_H, B_DOT_H, ALPHA_X, ALPHA_Y],
        outputs: 1,
        eval: |a, o| o[0] = ndf::ggx_aniso(a[0], a[1], a[2], a[3], a[4]),
        example: &[0.9, 0.3, 0.31622776601683794, 0.2, 0.5],
    },
    Model {
        name: "ggx_aniso_ndf_frame",
        family: "ndf",
        summary: "GGX D, anisotropic, from vectors h, n, t, b",
        citation: HEITZ,
        params: &[H, N, T, B, ALPHA_X, ALPHA_Y],
        outputs: 1,
        eval: |a, o| {
            o[0] = ndf::ggx_aniso_frame(v3(a, 0), v3(a, 3), v3(a, 6), v3(a, 9), a[12], a[13])
        },
        example: &[
            0.3,
            0.31622776601683794,
            0.9,
            0.0,
            0.0,
            1.0,
            1.0,
            0.0,
            0.0,
            0.0,
            1.0,
            0.0,
            0.2,
            0.5,
        ],
    },
    Model {
        name: "beckmann_ndf",
        family: "ndf",
        summary: "Beckmann D",
        citation: BECKMANN_CITE,
        params: &[N_DOT_H, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = ndf::beckmann(a[0], a[1]),
        example: &[0.9, 0.3],
    },
    Model {
        name: "blinn_phong_ndf",
        family: "ndf",
        summary: "normalised Blinn-Phong D, (p+2)/(2 pi) n_dot_h^p",
        citation: BLINN_CITE,
        params: &[N_DOT_H, EXPONENT],
        outputs: 1,
        eval: |a, o| o[0] = ndf::blinn_phong(a[0], a[1]),
        example: &[0.9, 20.0],
    },
    Model {
        name: "blinn_phong_ndf_alpha",
        family: "ndf",
        summary: "normalised Blinn-Phong D with exponent 2/alpha^2 - 2",
        citation: BLINN_CITE,
        params: &[N_DOT_H, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = ndf::blinn_phong_alpha(a[0], a[1]),
        example: &[0.9, 0.3],
    },
    Model {
        name: "blinn_phong_exponent_from_alpha",
        family: "ndf",
        summary: "Blinn-Phong exponent p = 2/alpha^2 - 2",
        citation: WALTER,
        params: &[ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = ndf::blinn_phong_exponent_from_alpha(a[0]),
        example: &[0.3],
    },
    Model {
        name: "blinn_phong_alpha_from_exponent",
        family: "ndf",
        summary: "width alpha = sqrt(2/(p+2)) from a Blinn-Phong exponent",
        citation: WALTER,
        params: &[EXPONENT],
        outputs: 1,
        eval: |a, o| o[0] = ndf::blinn_phong_alpha_from_exponent(a[0]),
        example: &[20.0],
    },
    // ---- masking ----
    Model {
        name: "smith_ggx_lambda",
        family: "masking",
        summary: "Smith Lambda for GGX",
        citation: HEITZ,
        params: &[N_DOT_V, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = masking::ggx_lambda(a[0], a[1]),
        example: &[0.5, 0.3],
    },
    Model {
        name: "smith_ggx_g1",
        family: "masking",
        summary: "Smith G1 for GGX",
        citation: WALTER,
        params: &[N_DOT_V, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = masking::ggx_g1(a[0], a[1]),
        example: &[0.5, 0.3],
    },
    Model {
        name: "smith_ggx_g2_separable",
        family: "masking",
        summary: "Smith G2 for GGX, separable G1(v) G1(l)",
        citation: WALTER,
        params: &[N_DOT_V, N_DOT_L, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = masking::ggx_g2_separable(a[0], a[1], a[2]),
        example: &[0.5, 0.7, 0.3],
    },
    Model {
        name: "smith_ggx_g2_height_correlated",
        family: "masking",
        summary: "Smith G2 for GGX, height-correlated 1/(1 + Lambda(v) + Lambda(l))",
        citation: HEITZ,
        params: &[N_DOT_V, N_DOT_L, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = masking::ggx_g2_height_correlated(a[0], a[1], a[2]),
        example: &[0.5, 0.7, 0.3],
    },
    Model {
        name: "smith_ggx_v_separable",
        family: "masking",
        summary: "visibility G2/(4 n_dot_l n_dot_v), separable Smith GGX",
        citation: WALTER,
        params: &[N_DOT_V, N_DOT_L, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = masking::ggx_v_separable(a[0], a[1], a[2]),
        example: &[0.5, 0.7, 0.3],
    },
    Model {
        name: "smith_ggx_v_height_correlated",
        family: "masking",
        summary: "visibility G2/(4 n_dot_l n_dot_v), height-correlated Smith GGX",
        citation: HEITZ_LAGARDE,
        params: &[N_DOT_V, N_DOT_L, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = masking::ggx_v_height_correlated(a[0], a[1], a[2]),
        example: &[0.5, 0.7, 0.3],
    },
    Model {
        name: "smith_ggx_v_height_correlated_fast",
        family: "masking",
        summary: "height-correlated GGX visibility without square roots (approximation)",
        citation: GUY_AGOPIAN,
        params: &[N_DOT_V, N_DOT_L, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = masking::ggx_v_height_correlated_fast(a[0], a[1], a[2]),
        example: &[0.5, 0.7, 0.3],
    },
    Model {
        name: "smith_ggx_v_height_correlated_hammon",
        family: "masking",
        summary:
            "height-correlated GGX visibility, 0.5/mix(2 n_dot_l n_dot_v, n_dot_l + n_dot_v, alpha)",
        citation: HAMMON,
        params: &[N_DOT_V, N_DOT_L, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = masking::ggx_v_height_correlated_hammon(a[0], a[1], a[2]),
        example: &[0.5, 0.7, 0.3],
    },
    Model {
        name: "smith_schlick_ggx_g1",
        family: "masking",
        summary: "Schlick's G1 n_dot_v/(n_dot_v (1-k) + k)",
        citation: SCHLICK_KARIS,
        params: &[N_DOT_V, K],
        outputs: 1,
        eval: |a, o| o[0] = masking::schlick_ggx_g1(a[0], a[1]),
        example: &[0.5, 0.15],
    },
    Model {
        name: "smith_schlick_ggx_v",
        family: "masking",
        summary: "visibility of the separable Schlick G2",
        citation: SCHLICK_KARIS,
        params: &[N_DOT_V, N_DOT_L, K],
        outputs: 1,
        eval: |a, o| o[0] = masking::schlick_ggx_v(a[0], a[1], a[2]),
        example: &[0.5, 0.7, 0.15],
    },
    Model {
        name: "smith_schlick_k_from_alpha",
        family: "masking",
        summary: "Schlick k = alpha/2, fitted to Smith GGX",
        citation: SCHLICK_KARIS,
        params: &[ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = masking::schlick_k_from_alpha(a[0]),
        example: &[0.3],
    },
    Model {
        name: "smith_schlick_k_analytic_light",
        family: "masking",
        summary: "Schlick k = (roughness + 1)^2 / 8 for analytic lights",
        citation: SCHLICK_KARIS,
        params: &[ROUGHNESS],
        outputs: 1,
        eval: |a, o| o[0] = masking::schlick_k_analytic_light(a[0]),
        example: &[0.5],
    },
    Model {
        name: "smith_beckmann_lambda",
        family: "masking",
        summary: "Smith Lambda for Beckmann, exact (erfc)",
        citation: WALTER,
        params: &[N_DOT_V, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = masking::beckmann_lambda(a[0], a[1]),
        example: &[0.5, 0.3],
    },
    Model {
        name: "smith_beckmann_g1",
        family: "masking",
        summary: "Smith G1 for Beckmann, exact",
        citation: WALTER,
        params: &[N_DOT_V, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = masking::beckmann_g1(a[0], a[1]),
        example: &[0.5, 0.3],
    },
    Model {
        name: "smith_beckmann_g1_rational",
        family: "masking",
        summary: "Smith G1 for Beckmann, Walter's rational approximation",
        citation: WALTER,
        params: &[N_DOT_V, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = masking::beckmann_g1_rational(a[0], a[1]),
        example: &[0.2, 0.3],
    },
    Model {
        name: "smith_beckmann_g2_separable",
        family: "masking",
        summary: "Smith G2 for Beckmann, separable",
        citation: WALTER,
        params: &[N_DOT_V, N_DOT_L, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = masking::beckmann_g2_separable(a[0], a[1], a[2]),
        example: &[0.5, 0.7, 0.3],
    },
    Model {
        name: "smith_beckmann_g2_height_correlated",
        family: "masking",
        summary: "Smith G2 for Beckmann, height-correlated",
        citation: HEITZ,
        params: &[N_DOT_V, N_DOT_L, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = masking::beckmann_g2_height_correlated(a[0], a[1], a[2]),
        example: &[0.5, 0.7, 0.3],
    },
    Model {
        name: "smith_beckmann_v_height_correlated",
        family: "masking",
        summary: "visibility G2/(4 n_dot_l n_dot_v), height-correlated Smith Beckmann",
        citation: HEITZ,
        params: &[N_DOT_V, N_DOT_L, ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = masking::beckmann_v_height_correlated(a[0], a[1], a[2]),
        example: &[0.5, 0.7, 0.3],
    },
    // ---- fresnel ----
    Model {
        name: "schlick_fresnel",
        family: "fresnel",
        summary: "Schlick F0 + (1 - F0)(1 - v_dot_h)^5",
        citation: SCHLICK,
        params: &[V_DOT_H, F0],
        outputs: 1,
        eval: |a, o| o[0] = fresnel::schlick(a[0], a[1]),
        example: &[0.6, 0.04],
    },
    Model {
        name: "schlick_fresnel_f90",
        family: "fresnel",
        summary: "Schlick F0 + (F90 - F0)(1 - v_dot_h)^5",
        citation: SCHLICK,
        params: &[V_DOT_H, F0, F90],
        outputs: 1,
        eval: |a, o| o[0] = fresnel::schlick_f90(a[0], a[1], a[2]),
        example: &[0.6, 0.04, 0.8],
    },
    Model {
        name: "schlick_fresnel_rgb",
        family: "fresnel",
        summary: "Schlick per channel, F90 = 1",
        citation: SCHLICK,
        params: &[V_DOT_H, F0_RGB],
        outputs: 3,
        eval: |a, o| put3(o, fresnel::schlick_rgb(a[0], v3(a, 1))),
        example: &[0.6, 0.95, 0.64, 0.54],
    },
    Model {
        name: "schlick_fresnel_rgb_f90",
        family: "fresnel",
        summary: "Schlick per channel, one scalar F90",
        citation: SCHLICK,
        params: &[V_DOT_H, F0_RGB, F90],
        outputs: 3,
        eval: |a, o| put3(o, fresnel::schlick_rgb_f90(a[0], v3(a, 1), a[4])),
        example: &[0.6, 0.95, 0.64, 0.54, 0.9],
    },
    Model {
        name: "schlick_fresnel_rgb_f90_from_f0",
        family: "fresnel",
        summary: "Schlick per channel, F90 = saturate(50 dot(F0, 0.33))",
        citation: SCHLICK_F90,
        params: &[V_DOT_H, F0_RGB],
        outputs: 3,
        eval: |a, o| put3(o, fresnel::schlick_rgb_f90_from_f0(a[0], v3(a, 1))),
        example: &[0.6, 0.01, 0.015, 0.02],
    },
    Model {
        name: "f90_from_f0",
        family: "fresnel",
        summary: "F90 = saturate(50 dot(F0, 0.33))",
        citation: SCHLICK_F90,
        params: &[F0_RGB],
        outputs: 1,
        eval: |a, o| o[0] = fresnel::f90_from_f0(v3(a, 0)),
        example: &[0.01, 0.015, 0.02],
    },
    Model {
        name: "fresnel_dielectric",
        family: "fresnel",
        summary: "exact unpolarised dielectric Fresnel, with total internal reflection",
        citation: BORN_WOLF,
        params: &[V_DOT_H, IOR],
        outputs: 1,
        eval: |a, o| o[0] = fresnel::dielectric(a[0], a[1]),
        example: &[0.6, 1.5],
    },
    Model {
        name: "fresnel_conductor",
        family: "fresnel",
        summary: "exact unpolarised conductor Fresnel, complex index ior + i k",
        citation: BORN_WOLF,
        params: &[V_DOT_H, IOR, EXTINCTION],
        outputs: 1,
        eval: |a, o| o[0] = fresnel::conductor(a[0], a[1], a[2]),
        example: &[0.6, 0.2, 3.0],
    },
    Model {
        name: "fresnel_conductor_rgb",
        family: "fresnel",
        summary: "exact conductor Fresnel per channel",
        citation: BORN_WOLF,
        params: &[V_DOT_H, IOR_RGB, EXTINCTION_RGB],
        outputs: 3,
        eval: |a, o| put3(o, fresnel::conductor_rgb(a[0], v3(a, 1), v3(a, 4))),
        example: &[0.6, 0.2, 0.9, 1.1, 3.0, 2.6, 2.3],
    },
    Model {
        name: "f0_from_ior",
        family: "fresnel",
        summary: "F0 = ((ior - 1)/(ior + 1))^2",
        citation: BORN_WOLF,
        params: &[IOR],
        outputs: 1,
        eval: |a, o| o[0] = fresnel::f0_from_ior(a[0]),
        example: &[1.5],
    },
    Model {
        name: "f0_from_conductor",
        family: "fresnel",
        summary: "F0 = ((ior - 1)^2 + k^2)/((ior + 1)^2 + k^2)",
        citation: BORN_WOLF,
        params: &[IOR, EXTINCTION],
        outputs: 1,
        eval: |a, o| o[0] = fresnel::f0_from_conductor(a[0], a[1]),
        example: &[0.2, 3.0],
    },
    Model {
        name: "ior_from_f0",
        family: "fresnel",
        summary: "ior = (1 + sqrt(F0))/(1 - sqrt(F0))",
        citation: BORN_WOLF,
        params: &[F0],
        outputs: 1,
        eval: |a, o| o[0] = fresnel::ior_from_f0(a[0]),
        example: &[0.04],
    },
    // ---- diffuse ----
    Model {
        name: "lambert_diffuse",
        family: "diffuse",
        summary: "Lambert 1/pi (unit albedo)",
        citation: LAMBERT,
        params: &[],
        outputs: 1,
        eval: |_, o| o[0] = diffuse::lambert(),
        example: &[],
    },
    Model {
        name: "lambert_diffuse_rgb",
        family: "diffuse",
        summary: "Lambert albedo/pi",
        citation: LAMBERT,
        params: &[ALBEDO],
        outputs: 3,
        eval: |a, o| put3(o, diffuse::lambert_rgb(v3(a, 0))),
        example: &[0.8, 0.5, 0.3],
    },
    Model {
        name: "burley_diffuse",
        family: "diffuse",
        summary: "Burley diffuse (unit albedo) with F_D90 = 0.5 + 2 roughness l_dot_h^2",
        citation: BURLEY,
        params: &[N_DOT_V, N_DOT_L, L_DOT_H, ROUGHNESS],
        outputs: 1,
        eval: |a, o| o[0] = diffuse::burley(a[0], a[1], a[2], a[3]),
        example: &[0.5, 0.7, 0.9, 0.5],
    },
    Model {
        name: "burley_diffuse_rgb",
        family: "diffuse",
        summary: "Burley diffuse times base colour",
        citation: BURLEY,
        params: &[BASE_COLOR, N_DOT_V, N_DOT_L, L_DOT_H, ROUGHNESS],
        outputs: 3,
        eval: |a, o| put3(o, diffuse::burley_rgb(v3(a, 0), a[3], a[4], a[5], a[6])),
        example: &[0.8, 0.5, 0.3, 0.5, 0.7, 0.9, 0.5],
    },
    // ---- material ----
    Model {
        name: "material_diffuse_color",
        family: "material",
        summary: "metallic workflow diffuse colour (1 - metallic) base_color",
        citation: BURLEY_KARIS,
        params: &[BASE_COLOR, METALLIC],
        outputs: 3,
        eval: |a, o| put3(o, material::diffuse_color(v3(a, 0), a[3])),
        example: &[0.8, 0.5, 0.3, 0.25],
    },
    Model {
        name: "material_f0",
        family: "material",
        summary: "metallic workflow F0 = mix(0.04, base_color, metallic)",
        citation: BURLEY_KARIS,
        params: &[BASE_COLOR, METALLIC],
        outputs: 3,
        eval: |a, o| put3(o, material::f0_metallic(v3(a, 0), a[3])),
        example: &[0.8, 0.5, 0.3, 0.25],
    },
    Model {
        name: "f0_from_reflectance",
        family: "material",
        summary: "dielectric F0 = 0.16 reflectance^2",
        citation: GUY_AGOPIAN,
        params: &[REFLECTANCE],
        outputs: 1,
        eval: |a, o| o[0] = material::f0_from_reflectance(a[0]),
        example: &[0.5],
    },
    Model {
        name: "material_f0_reflectance",
        family: "material",
        summary: "F0 = 0.16 reflectance^2 (1 - metallic) + base_color metallic",
        citation: GUY_AGOPIAN,
        params: &[BASE_COLOR, METALLIC, REFLECTANCE],
        outputs: 3,
        eval: |a, o| put3(o, material::f0_metallic_reflectance(v3(a, 0), a[3], a[4])),
        example: &[0.8, 0.5, 0.3, 0.25, 0.5],
    },
    Model {
        name: "alpha_from_roughness",
        family: "material",
        summary: "alpha = roughness^2",
        citation: BURLEY,
        params: &[ROUGHNESS],
        outputs: 1,
        eval: |a, o| o[0] = material::alpha_from_roughness(a[0]),
        example: &[0.5],
    },
    Model {
        name: "alpha_from_roughness_clamped",
        family: "material",
        summary: "alpha = max(roughness, min_roughness)^2",
        citation: BURLEY,
        params: &[ROUGHNESS, MIN_ROUGHNESS],
        outputs: 1,
        eval: |a, o| o[0] = material::alpha_from_roughness_clamped(a[0], a[1]),
        example: &[0.02, 0.045],
    },
    // ---- brdf ----
    Model {
        name: "cook_torrance_rgb",
        family: "brdf",
        summary: "GGX, height-correlated Smith, Schlick F (F90 = 1), Lambert diffuse",
        citation: COOK_TORRANCE,
        params: &[N, V, L, BASE_COLOR, METALLIC, ROUGHNESS],
        outputs: 3,
        eval: |a, o| eval_cook_torrance(&brdf::CookTorrance::STANDARD, a, o),
        example: &EX_BRDF,
    },
    Model {
        name: "cook_torrance_burley_rgb",
        family: "brdf",
        summary: "GGX, height-correlated Smith, Schlick F (F90 = 1), Burley diffuse",
        citation: COOK_TORRANCE,
        params: &[N, V, L, BASE_COLOR, METALLIC, ROUGHNESS],
        outputs: 3,
        eval: |a, o| eval_cook_torrance(&brdf::CookTorrance::BURLEY, a, o),
        example: &EX_BRDF,
    },
    Model {
        name: "cook_torrance_f90_from_f0_rgb",
        family: "brdf",
        summary: "GGX, height-correlated Smith, Schlick F with F90 from F0, Lambert diffuse",
        citation: COOK_TORRANCE,
        params: &[N, V, L, BASE_COLOR, METALLIC, ROUGHNESS],
        outputs: 3,
        eval: |a, o| eval_cook_torrance(&brdf::CookTorrance::F90_FROM_F0, a, o),
        example: &EX_BRDF,
    },
    Model {
        name: "cook_torrance_fast_rgb",
        family: "brdf",
        summary: "GGX, square-root-free height-correlated visibility, Schlick F, Lambert",
        citation: COOK_TORRANCE,
        params: &[N, V, L, BASE_COLOR, METALLIC, ROUGHNESS],
        outputs: 3,
        eval: |a, o| eval_cook_torrance(&brdf::CookTorrance::FAST_VISIBILITY, a, o),
        example: &EX_BRDF,
    },
    Model {
        name: "cook_torrance_beckmann_rgb",
        family: "brdf",
        summary: "Beckmann, height-correlated Smith Beckmann, Schlick F (F90 = 1), Lambert",
        citation: COOK_TORRANCE,
        params: &[N, V, L, BASE_COLOR, METALLIC, ROUGHNESS],
        outputs: 3,
        eval: |a, o| eval_cook_torrance(&brdf::CookTorrance::BECKMANN, a, o),
        example: &EX_BRDF,
    },
    Model {
        name: "cook_torrance_specular",
        family: "brdf",
        summary: "GGX, height-correlated Smith, F = 1, no diffuse: the bare specular lobe",
        citation: COOK_TORRANCE,
        params: &[N, V, L, ROUGHNESS],
        outputs: 1,
        eval: |a, o| {
            let f = brdf::CookTorrance::SPECULAR_ONLY.eval(
                v3(a, 0),
                v3(a, 3),
                v3(a, 6),
                [1.0; 3],
                0.0,
                a[9],
            );
            o[0] = f[0];
        },
        example: &[
            0.0,
            0.0,
            1.0,
            0.3,
            0.0,
            0.9539392014169457,
            -0.5,
            0.2,
            0.8426149773176358,
            0.6,
        ],
    },
    Model {
        name: "phong_rgb",
        family: "brdf",
        summary: "legacy Phong lighting: diffuse n_dot_l + specular (r_dot_v)^shininess",
        citation: PHONG,
        params: &[N, V, L, DIFFUSE_COLOR, SPECULAR_COLOR, SHININESS],
        outputs: 3,
        eval: |a, o| {
            put3(
                o,
                brdf::phong(v3(a, 0), v3(a, 3), v3(a, 6), v3(a, 9), v3(a, 12), a[15]),
            )
        },
        example: &EX_LEGACY,
    },
    Model {
        name: "blinn_phong_rgb",
        family: "brdf",
        summary: "legacy Blinn-Phong lighting: diffuse n_dot_l + specular (n_dot_h)^shininess",
        citation: BLINN_CITE,
        params: &[N, V, L, DIFFUSE_COLOR, SPECULAR_COLOR, SHININESS],
        outputs: 3,
        eval: |a, o| {
            put3(
                o,
                brdf::blinn_phong(v3(a, 0), v3(a, 3), v3(a, 6), v3(a, 9), v3(a, 12), a[15]),
            )
        },
        example: &EX_LEGACY,
    },
    // ---- anisotropic masking (family masking) ----
    Model {
        name: "smith_ggx_aniso_lambda",
        family: "masking",
        summary: "Smith Lambda for anisotropic GGX, from the view's tangent-frame components",
        citation: HEITZ,
        params: &[N_DOT_V, T_DOT_V, B_DOT_V, ALPHA_X, ALPHA_Y],
        outputs: 1,
        eval: |a, o| o[0] = masking::ggx_aniso_lambda(a[0], a[1], a[2], a[3], a[4]),
        example: &EX_ANISO_V,
    },
    Model {
        name: "smith_ggx_aniso_g1",
        family: "masking",
        summary: "Smith G1 for anisotropic GGX",
        citation: HEITZ,
        params: &[N_DOT_V, T_DOT_V, B_DOT_V, ALPHA_X, ALPHA_Y],
        outputs: 1,
        eval: |a, o| o[0] = masking::ggx_aniso_g1(a[0], a[1], a[2], a[3], a[4]),
        example: &EX_ANISO_V,
    },
    Model {
        name: "smith_ggx_aniso_g2_separable",
        family: "masking",
        summary: "separable Smith G2 for anisotropic GGX",
        citation: HEITZ,
        params: &ANISO_PAIR,
        outputs: 1,
        eval: |a, o| {
            o[0] = masking::ggx_aniso_g2_separable(a[0], a[1], a[2], a[3], a[4], a[5], a[6], a[7])
        },
        example: &EX_ANISO_PAIR,
    },
    Model {
        name: "smith_ggx_aniso_g2_height_correlated",
        family: "masking",
        summary: "height-correlated Smith G2 for anisotropic GGX",
        citation: HEITZ,
        params: &ANISO_PAIR,
        outputs: 1,
        eval: |a, o| {
            o[0] = masking::ggx_aniso_g2_height_correlated(
                a[0], a[1], a[2], a[3], a[4], a[5], a[6], a[7],
            )
        },
        example: &EX_ANISO_PAIR,
    },
    Model {
        name: "smith_ggx_aniso_v_separable",
        family: "masking",
        summary: "visibility G2/(4 n_dot_l n_dot_v), separable Smith, anisotropic GGX",
        citation: HEITZ,
        params: &ANISO_PAIR,
        outputs: 1,
        eval: |a, o| {
            o[0] = masking::ggx_aniso_v_separable(a[0], a[1], a[2], a[3], a[4], a[5], a[6], a[7])
        },
        example: &EX_ANISO_PAIR,
    },
    Model {
        name: "smith_ggx_aniso_v_height_correlated",
        family: "masking",
        summary: "visibility G2/(4 n_dot_l n_dot_v), height-correlated Smith, anisotropic GGX",
        citation: HEITZ,
        params: &ANISO_PAIR,
        outputs: 1,
        eval: |a, o| {
            o[0] = masking::ggx_aniso_v_height_correlated(
                a[0], a[1], a[2], a[3], a[4], a[5], a[6], a[7],
            )
        },
        example: &EX_ANISO_PAIR,
    },
    // ---- more diffuse ----
    Model {
        name: "oren_nayar_diffuse",
        family: "diffuse",
        summary: "Oren-Nayar, full model with the interreflection term, albedo rho",
        citation: OREN_NAYAR,
        params: &[N_DOT_V, N_DOT_L, COS_PHI, SIGMA_ON, RHO],
        outputs: 1,
        eval: |a, o| o[0] = diffuse::oren_nayar(a[0], a[1], a[2], a[3], a[4]),
        example: &[0.6, 0.8, 0.3, 0.4, 0.7],
    },
    Model {
        name: "oren_nayar_qualitative",
        family: "diffuse",
        summary: "Oren-Nayar qualitative model (A + B max(0, cos_phi) sin a tan b)/pi",
        citation: OREN_NAYAR,
        params: &[N_DOT_V, N_DOT_L, COS_PHI, SIGMA_ON],
        outputs: 1,
        eval: |a, o| o[0] = diffuse::oren_nayar_qualitative(a[0], a[1], a[2], a[3]),
        example: &[0.6, 0.8, 0.3, 0.4],
    },
    Model {
        name: "hammon_diffuse",
        family: "diffuse",
        summary: "Hammon's GGX+Smith diffuse approximation, albedo rho",
        citation: HAMMON,
        params: &[N_DOT_V, N_DOT_L, N_DOT_H, L_DOT_V, ALPHA, RHO],
        outputs: 1,
        eval: |a, o| o[0] = diffuse::hammon(a[0], a[1], a[2], a[3], a[4], a[5]),
        example: &[0.6, 0.8, 0.9, 0.5, 0.3, 0.7],
    },
    // ---- anisotropic lobe (family brdf) ----
    Model {
        name: "ggx_aniso_specular",
        family: "brdf",
        summary: "anisotropic GGX D times height-correlated anisotropic Smith V, F = 1",
        citation: HEITZ,
        params: &[N, T, B, V, L, ALPHA_X, ALPHA_Y],
        outputs: 1,
        eval: |a, o| {
            o[0] = brdf::ggx_aniso_specular(
                v3(a, 0),
                v3(a, 3),
                v3(a, 6),
                v3(a, 9),
                v3(a, 12),
                a[15],
                a[16],
            )
        },
        example: &[
            0.0,
            0.0,
            1.0,
            1.0,
            0.0,
            0.0,
            0.0,
            1.0,
            0.0,
            0.3,
            0.0,
            0.9539392014169457,
            -0.5,
            0.2,
            0.8426149773176358,
            0.2,
            0.5,
        ],
    },
    // ---- sheen ----
    Model {
        name: "charlie_sheen_ndf",
        family: "sheen",
        summary: "Charlie sheen D = (2 + 1/alpha) sin^(1/alpha) / (2 pi)",
        citation: CHARLIE,
        params: &[N_DOT_H, SHEEN_ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = sheen::charlie_ndf(a[0], a[1]),
        example: &[0.6, 0.3],
    },
    Model {
        name: "ashikhmin_velvet_ndf",
        family: "sheen",
        summary: "velvet D = (1 + 4 exp(-cot^2/sigma^2)/sin^4) / (pi (1 + 4 sigma^2))",
        citation: VELVET,
        params: &[N_DOT_H, VELVET_SIGMA],
        outputs: 1,
        eval: |a, o| o[0] = sheen::ashikhmin_velvet_ndf(a[0], a[1]),
        example: &[0.6, 0.5],
    },
    Model {
        name: "sheen_visibility",
        family: "sheen",
        summary: "cloth visibility 1 / (4 (n_dot_l + n_dot_v - n_dot_l n_dot_v))",
        citation: NEUBELT,
        params: &[N_DOT_V, N_DOT_L],
        outputs: 1,
        eval: |a, o| o[0] = sheen::neubelt_visibility(a[0], a[1]),
        example: &[0.5, 0.7],
    },
    Model {
        name: "sheen_charlie_lobe",
        family: "sheen",
        summary: "Charlie D times the cloth visibility (sheen colour 1)",
        citation: CHARLIE,
        params: &[N_DOT_H, N_DOT_V, N_DOT_L, SHEEN_ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = sheen::sheen_charlie_lobe(a[0], a[1], a[2], a[3]),
        example: &[0.9, 0.5, 0.7, 0.3],
    },
    Model {
        name: "sheen_velvet_lobe",
        family: "sheen",
        summary: "velvet D times the cloth visibility",
        citation: VELVET,
        params: &[N_DOT_H, N_DOT_V, N_DOT_L, VELVET_SIGMA],
        outputs: 1,
        eval: |a, o| o[0] = sheen::sheen_velvet_lobe(a[0], a[1], a[2], a[3]),
        example: &[0.9, 0.5, 0.7, 0.5],
    },
    // ---- clearcoat ----
    Model {
        name: "gtr1_ndf",
        family: "clearcoat",
        summary: "GTR1 (Berry) D = (a^2 - 1) / (pi ln(a^2) (1 + (a^2 - 1) cos^2))",
        citation: GTR1,
        params: &[N_DOT_H, CC_ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = clearcoat::gtr1_ndf(a[0], a[1]),
        example: &[0.95, 0.05],
    },
    Model {
        name: "clearcoat_alpha_from_gloss",
        family: "clearcoat",
        summary: "alpha = mix(0.1, 0.001, gloss)",
        citation: BURLEY,
        params: &[GLOSS],
        outputs: 1,
        eval: |a, o| o[0] = clearcoat::clearcoat_alpha_from_gloss(a[0]),
        example: &[0.5],
    },
    Model {
        name: "kelemen_visibility",
        family: "clearcoat",
        summary: "Kelemen V = 1 / (4 l_dot_h^2)",
        citation: KELEMEN,
        params: &[L_DOT_H],
        outputs: 1,
        eval: |a, o| o[0] = clearcoat::kelemen_visibility(a[0]),
        example: &[0.8],
    },
    Model {
        name: "clearcoat_fresnel",
        family: "clearcoat",
        summary: "Schlick Fresnel at the layer's fixed IOR 1.5 (F0 = 0.04)",
        citation: SCHLICK,
        params: &[V_DOT_H],
        outputs: 1,
        eval: |a, o| o[0] = clearcoat::clearcoat_fresnel(a[0]),
        example: &[0.8],
    },
    Model {
        name: "clearcoat_lobe",
        family: "clearcoat",
        summary: "GTR1 D times Kelemen V times Schlick F at IOR 1.5",
        citation: CLEARCOAT,
        params: &[N_DOT_H, L_DOT_H, CC_ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = clearcoat::clearcoat_lobe(a[0], a[1], a[2]),
        example: &[0.95, 0.8, 0.05],
    },
    // ---- multiscatter ----
    Model {
        name: "ggx_albedo",
        family: "multiscatter",
        summary:
            "directional albedo E of the GGX lobe (height-correlated Smith, F = 1), integrated",
        citation: KULLA_CONTY,
        params: &[N_DOT_V, MS_ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = multiscatter::ggx_albedo(a[0], a[1]),
        example: &[0.5, 0.3],
    },
    Model {
        name: "ggx_albedo_average",
        family: "multiscatter",
        summary: "hemispherical average E_avg = 2 int E(mu) mu dmu, integrated",
        citation: KULLA_CONTY,
        params: &[MS_ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = multiscatter::ggx_albedo_average(a[0]),
        example: &[0.3],
    },
    Model {
        name: "kulla_conty_ms",
        family: "multiscatter",
        summary: "multiple-scattering lobe (1 - E(v))(1 - E(l)) / (pi (1 - E_avg)), F = 1",
        citation: KULLA_CONTY,
        params: &[N_DOT_V, N_DOT_L, MS_ALPHA],
        outputs: 1,
        eval: |a, o| o[0] = multiscatter::kulla_conty_ms(a[0], a[1], a[2]),
        example: &[0.5, 0.7, 0.3],
    },
    Model {
        name: "kulla_conty_fresnel_factor",
        family: "multiscatter",
        summary: "F_avg^2 E_avg / (1 - F_avg (1 - E_avg))",
        citation: KULLA_CONTY,
        params: &[F_AVG, E_AVG],
        outputs: 1,
        eval: |a, o| o[0] = multiscatter::kulla_conty_fresnel_factor(a[0], a[1]),
        example: &[0.5, 0.8],
    },
    Model {
        name: "schlick_fresnel_average",
        family: "multiscatter",
        summary: "average of Schlick's Fresnel, F0 + (1 - F0)/21",
        citation: KULLA_CONTY,
        params: &[F0],
        outputs: 1,
        eval: |a, o| o[0] = multiscatter::schlick_fresnel_average(a[0]),
        example: &[0.04],
    },
    Model {
        name: "kulla_conty_ms_fresnel",
        family: "multiscatter",
        summary: "multiple-scattering lobe times its Fresnel factor, Schlick F_avg from f0",
        citation: KULLA_CONTY,
        params: &[N_DOT_V, N_DOT_L, MS_ALPHA, F0],
        outputs: 1,
        eval: |a, o| o[0] = multiscatter::kulla_conty_ms_fresnel(a[0], a[1], a[2], a[3]),
        example: &[0.5, 0.7, 0.3, 0.9],
    },
    Model {
        name: "turquin_compensation",
        family: "multiscatter",
        summary: "energy-compensation factor 1 + F0 (1 - E(v)) / E(v)",
        citation: TURQUIN,
        params: &[N_DOT_V, MS_ALPHA, F0],
        outputs: 1,
        eval: |a, o| o[0] = multiscatter::turquin_compensation(a[0], a[1], a[2]),
        example: &[0.5, 0.3, 0.9],
    },
    // ---- envbrdf ----
    Model {
        name: "split_sum",
        family: "envbrdf",
        summary: "split-sum (scale, bias) of the GGX lobe, integrated",
        citation: SPLIT_SUM,
        params: &[N_DOT_V, ROUGHNESS],
        outputs: 2,
        eval: |a, o| {
            o[0] = envbrdf::split_sum_scale(a[0], a[1]);
            o[1] = envbrdf::split_sum_bias(a[0], a[1]);
        },
        example: &[0.5, 0.5],
    },
    Model {
        name: "split_sum_scale",
        family: "envbrdf",
        summary: "split-sum scale (factor of F0), integrated",
        citation: SPLIT_SUM,
        params: &[N_DOT_V, ROUGHNESS],
        outputs: 1,
        eval: |a, o| o[0] = envbrdf::split_sum_scale(a[0], a[1]),
        example: &[0.5, 0.5],
    },
    Model {
        name: "split_sum_bias",
        family: "envbrdf",
        summary: "split-sum bias, integrated",
        citation: SPLIT_SUM,
        params: &[N_DOT_V, ROUGHNESS],
        outputs: 1,
        eval: |a, o| o[0] = envbrdf::split_sum_bias(a[0], a[1]),
        example: &[0.5, 0.5],
    },
    Model {
        name: "split_sum_fit",
        family: "envbrdf",
        summary: "published analytic fit of the split-sum (scale, bias)",
        citation: SPLIT_SUM_FIT,
        params: &[N_DOT_V, ROUGHNESS],
        outputs: 2,
        eval: |a, o| {
            let (s, b) = envbrdf::split_sum_fit(a[0], a[1]);
            o[0] = s;
            o[1] = b;
        },
        example: &[0.5, 0.5],
    },
    // ---- encoding ----
    Model {
        name: "srgb_encode",
        family: "encoding",
        summary: "sRGB transfer, linear to encoded",
        citation: SRGB,
        params: &[X_LINEAR],
        outputs: 1,
        eval: |a, o| o[0] = encoding::srgb_encode(a[0]),
        example: &[0.2],
    },
    Model {
        name: "srgb_decode",
        family: "encoding",
        summary: "sRGB transfer, encoded to linear",
        citation: SRGB,
        params: &[X_SIGNAL],
        outputs: 1,
        eval: |a, o| o[0] = encoding::srgb_decode(a[0]),
        example: &[0.5],
    },
    Model {
        name: "octahedral_encode",
        family: "encoding",
        summary: "octahedral encoding of a unit vector into [-1, 1]^2",
        citation: OCTAHEDRAL,
        params: &[UNIT],
        outputs: 2,
        eval: |a, o| o[..2].copy_from_slice(&encoding::octahedral_encode(v3(a, 0))),
        example: &[0.48, -0.6, -0.64],
    },
    Model {
        name: "octahedral_decode",
        family: "encoding",
        summary: "octahedral decoding of [-1, 1]^2 to a unit vector",
        citation: OCTAHEDRAL,
        params: &[OCT_U, OCT_V],
        outputs: 3,
        eval: |a, o| put3(o, encoding::octahedral_decode(a[0], a[1])),
        example: &[0.3, -0.9],
    },
    Model {
        name: "filmic_tonemap",
        family: "encoding",
        summary: "fitted filmic curve saturate(x (2.51 x + 0.03) / (x (2.43 x + 0.59) + 0.14))",
        citation: FILMIC,
        params: &[X_HDR],
        outputs: 1,
        eval: |a, o| o[0] = encoding::filmic_narkowicz(a[0]),
        example: &[0.8],
    },
];

fn eval_cook_torrance(m: &brdf::CookTorrance, a: &[f64], o: &mut [f64]) {
    put3(
        o,
        m.eval(v3(a, 0), v3(a, 3), v3(a, 6), v3(a, 9), a[12], a[13]),
    );
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::collections::HashSet;

    #[test]
    fn names_are_unique() {
        let mut seen = HashSet::new();
        for m in models() {
            assert!(seen.insert(m.name), "duplicate model name {}", m.name);
        }
    }

    #[test]
    fn every_model_is_finite_at_its_example() {
        for m in models() {
            assert_eq!(
                m.example.len(),
                m.arity(),
                "{}: example has the wrong length",
                m.name
            );
            let mut i = 0;
            for p in m.params {
                for &x in &m.example[i..i + p.kind.width()] {
                    assert!(
                        p.range.0 <= x && x <= p.range.1,
                        "{}: example {} = {x} outside {:?}",
                        m.name,
                        p.name,
                        p.range
                    );
                }
                i += p.kind.width();
            }
            let out = m.call(m.example);
            assert!(out.iter().all(|x| x.is_finite()), "{}: {out:?}", m.name);
        }
    }

    #[test]
    fn families_and_outputs_are_known() {
        let families = [
            "ndf",
            "masking",
            "fresnel",
            "diffuse",
            "material",
            "brdf",
            "sheen",
            "clearcoat",
            "multiscatter",
            "envbrdf",
            "encoding",
        ];
        for m in models() {
            assert!(
                families.contains(&m.family),
                "{}: family {}",
                m.name,
                m.family
            );
            assert!((1..=3).contains(&m.outputs), "{}", m.name);
            assert!(
                !m.citation.is_empty() && !m.summary.is_empty(),
                "{}",
                m.name
            );
        }
    }

    #[test]
    fn parameter_names_are_unique_within_a_model() {
        for m in models() {
            let mut seen = HashSet::new();
            for p in m.params {
                assert!(
                    seen.insert(p.name),
                    "{}: parameter {} twice",
                    m.name,
                    p.name
                );
            }
        }
    }

    #[test]
    fn find_returns_the_named_model() {
        assert_eq!(find("ggx_ndf").map(|m| m.name), Some("ggx_ndf"));
        assert!(find("no_such_model").is_none());
    }

    #[test]
    fn listing_names_every_model() {
        let text = listing();
        for m in models() {
            assert!(text.contains(m.name), "{}", m.name);
        }
    }
}
