//! The hypothesis search on planted mistakes: each case edits one function of the demo
//! library (shaders/brackenfold/materials.wgsl) in memory, or compiles a small function of
//! its own, evaluates it with the evaluator, and asks `diagnose::search` which single change
//! of the reference explains the failing points.
//!
//! For every case: the function with the mistake fails and the planted hypothesis is a full
//! fit ranked first (ties allowed only with fits of the same score); the function without
//! it passes, so the search names nothing; and the function without the mistake does not
//! behave like the changed reference (the hypothesis is told apart on the sweep).
//! Algebraically equivalent refactors pass and get no hypothesis either.
//!
//! The mistakes are the common ones of the trade (common practice, no single source); the
//! references are `shadegate::reference`, themselves checked against mpmath and Mitsuba 3 in
//! tests/reference.

use shadegate::diagnose::{self, Options};
use shadegate::eval::{bits_to_f64, f64_to_bits, Program, ScalarKind};
use shadegate::reference;
use shadegate::wgsl::Shader;
use std::collections::BTreeMap;

const LIBRARY: &str = include_str!("../../shaders/brackenfold/materials.wgsl");

/// A function under test with its sweep, its reference binding and its tolerance.
struct Setup {
    function: &'static str,
    model: &'static str,
    /// Points as the function's argument leaves (already f32 values).
    points: fn() -> Vec<Vec<f64>>,
    /// The reference's flattened arguments from a point's leaves.
    reference_args: fn(&[f64]) -> Vec<f64>,
    /// `|got - want| ≤ abs` or `≤ rel · |want|` passes (the suite's rule: any bound).
    rel: f64,
    abs: f64,
}

fn lin(a: f64, b: f64, n: usize) -> Vec<f64> {
    (0..n)
        .map(|i| f64::from((a + (b - a) * i as f64 / (n - 1) as f64) as f32))
        .collect()
}

fn log(a: f64, b: f64, n: usize) -> Vec<f64> {
    (0..n)
        .map(|i| f64::from((a * (b / a).powf(i as f64 / (n - 1) as f64)) as f32))
        .collect()
}

fn grid(axes: &[Vec<f64>]) -> Vec<Vec<f64>> {
    let mut out = vec![vec![]];
    for axis in axes {
        out = out
            .into_iter()
            .flat_map(|p| {
                axis.iter().map(move |&x| {
                    let mut q = p.clone();
                    q.push(x);
                    q
                })
            })
            .collect();
    }
    out
}

fn directions(max_theta_deg: f64) -> Vec<[f64; 3]> {
    let mut d = Vec::new();
    for t in lin(0.0, max_theta_deg, 7) {
        for p in [0.0_f64, 100.0, 200.0] {
            let (t, p) = (t.to_radians(), p.to_radians());
            d.push([t.sin() * p.cos(), t.sin() * p.sin(), t.cos()].map(|x| f64::from(x as f32)));
        }
    }
    d
}

fn brdf_points(roughnesses: &[f32]) -> Vec<Vec<f64>> {
    let mut out = Vec::new();
    for v in directions(89.0) {
        for l in directions(89.0) {
            for metallic in [0.0, 0.5, 1.0] {
                for &roughness in roughnesses {
                    for albedo in [0.005_f32, 0.05, 0.9] {
                        let mut p = vec![0.0, 0.0, 1.0];
                        p.extend(v);
                        p.extend(l);
                        p.extend([albedo, albedo * 0.85, albedo * 0.7].map(f64::from));
                        p.push(metallic);
                        p.push(f64::from(roughness));
                        out.push(p);
                    }
                }
            }
        }
    }
    out
}

fn same(p: &[f64]) -> Vec<f64> {
    p.to_vec()
}

fn square_last(p: &[f64]) -> Vec<f64> {
    let mut q = p.to_vec();
    let r = q.pop().unwrap();
    q.push(r * r);
    q
}

const D_GGX: Setup = Setup {
    function: "d_ggx",
    model: "ggx_ndf",
    points: || grid(&[lin(1.0 / 256.0, 1.0, 64), log(0.02, 1.0, 20)]),
    reference_args: square_last,
    rel: 2e-6,
    abs: 0.0,
};

const D_GGX_BELOW: Setup = Setup {
    points: || grid(&[lin(-0.5, 1.0, 61), log(0.02, 1.0, 20)]),
    ..D_GGX
};

const VIS: Setup = Setup {
    function: "v_smith_correlated",
    model: "smith_ggx_v_height_correlated",
    points: || {
        grid(&[
            lin(0.01, 1.0, 30),
            log(1e-3, 1.0, 30),
            vec![0.02, 0.1, 0.3, 0.6, 1.0]
                .into_iter()
                .map(|x| f64::from(x as f32))
                .collect(),
        ])
    },
    reference_args: square_last,
    rel: 1e-5,
    abs: 0.0,
};

const SCHLICK: Setup = Setup {
    function: "f_schlick",
    model: "schlick_fresnel_rgb",
    points: || {
        let f0s = [0.02_f32, 0.04, 0.5, 0.95];
        lin(0.0, 1.0, 101)
            .into_iter()
            .flat_map(|c| {
                f0s.iter()
                    .map(move |&f| vec![c, f64::from(f), f64::from(f * 0.9), f64::from(f * 0.8)])
            })
            .collect()
    },
    reference_args: same,
    rel: 0.0,
    abs: 1e-6,
};

const LAMBERT: Setup = Setup {
    function: "diffuse_lambert",
    model: "lambert_diffuse_rgb",
    points: || grid(&[lin(0.0, 1.0, 33), lin(0.0, 1.0, 33), vec![0.25]]),
    reference_args: same,
    // Two roundings of f32 (1/π, then the product): 3e-7 relative.
    rel: 3e-7,
    abs: 0.0,
};

const BURLEY: Setup = Setup {
    function: "diffuse_burley",
    model: "burley_diffuse",
    points: || {
        grid(&[
            lin(0.0, 1.0, 9),
            lin(0.0, 1.0, 9),
            lin(0.0, 1.0, 9),
            lin(0.0, 1.0, 6),
        ])
    },
    reference_args: same,
    rel: 1e-6,
    abs: 0.0,
};

const BRDF: Setup = Setup {
    function: "brdf",
    model: "cook_torrance_rgb",
    points: || brdf_points(&[0.05, 0.3, 0.6, 1.0]),
    reference_args: same,
    rel: 1e-4,
    abs: 1e-6,
};

/// Without the sharpest lobe, where a half-angle sine formed from the cosine in f32 is not
/// accurate enough for the brdf's tolerance.
const BRDF_ROUGH: Setup = Setup {
    points: || brdf_points(&[0.3, 0.6, 1.0]),
    ..BRDF
};

struct Outcome {
    fits: Vec<diagnose::Fit>,
    failing: usize,
    points: usize,
    /// Share of points where the function passes against the reference changed by
    /// `probe` (when given).
    probe_pass: f64,
}

fn pass_rule(rel: f64, abs: f64) -> impl Fn(usize, &[f64], &[f64]) -> bool {
    move |_, got, want| {
        got.iter().zip(want).all(|(&g, &w)| {
            if w.is_nan() || g.is_nan() {
                return w.is_nan() && g.is_nan();
            }
            let e = (g - w).abs();
            g == w || e <= abs || e <= rel * w.abs()
        })
    }
}

/// Evaluate `function` of `source` over the setup's points and run the search.
#[track_caller]
fn run(s: &Setup, source: &str, probe: Option<&str>) -> Outcome {
    let shader =
        Shader::from_source("planted.wgsl", source.to_string()).unwrap_or_else(|d| panic!("{d}"));
    let program =
        Program::compile(&shader, s.function, &BTreeMap::new()).unwrap_or_else(|d| panic!("{d}"));
    let points = (s.points)();
    let leaves = program.input_leaves().len();
    let inputs: Vec<Vec<u32>> = (0..leaves)
        .map(|c| {
            points
                .iter()
                .map(|p| f64_to_bits(ScalarKind::F32, p[c]))
                .collect()
        })
        .collect();
    let refs: Vec<&[u32]> = inputs.iter().map(Vec::as_slice).collect();
    let mut outputs = Vec::new();
    program.eval(&refs, &mut outputs);
    let got: Vec<Vec<f64>> = outputs
        .iter()
        .map(|c| c.iter().map(|&b| bits_to_f64(ScalarKind::F32, b)).collect())
        .collect();
    let model = reference::find(s.model).unwrap();
    let args: Vec<Vec<f64>> = points.iter().map(|p| (s.reference_args)(p)).collect();
    let arg_cols: Vec<Vec<f64>> = (0..model.arity())
        .map(|c| args.iter().map(|a| a[c]).collect())
        .collect();
    let pass = pass_rule(s.rel, s.abs);
    let point_got = |i: usize| got.iter().map(|c| c[i]).collect::<Vec<f64>>();
    let failing: Vec<usize> = (0..points.len())
        .filter(|&i| !pass(i, &point_got(i), &model.call(&args[i])))
        .collect();
    let probe_pass = probe.map_or(0.0, |id| {
        let v = diagnose::hypothesis(id).unwrap().variant();
        let d = diagnose::decomposition(s.model).unwrap();
        let mut want = vec![0.0; model.outputs];
        let ok = (0..points.len())
            .filter(|&i| {
                (d.eval)(&args[i], &v, &mut want);
                pass(i, &point_got(i), &want)
            })
            .count();
        ok as f64 / points.len() as f64
    });
    let a: Vec<&[f64]> = arg_cols.iter().map(Vec::as_slice).collect();
    let g: Vec<&[f64]> = got.iter().map(Vec::as_slice).collect();
    let fits = diagnose::search(s.model, &a, &g, pass, &failing, &Options::default()).unwrap();
    Outcome {
        fits,
        failing: failing.len(),
        points: points.len(),
        probe_pass,
    }
}

/// `LIBRARY` with `from` replaced by `to` inside function `function` (or in the whole file
/// when `function` is empty); the text must occur.
#[track_caller]
fn edit(function: &str, from: &str, to: &str) -> String {
    let (start, end) = if function.is_empty() {
        (0, LIBRARY.len())
    } else {
        let start = LIBRARY
            .find(&format!("fn {function}("))
            .unwrap_or_else(|| panic!("no fn {function}"));
        let end = start + LIBRARY[start..].find("\n}\n").unwrap();
        (start, end)
    };
    let body = &LIBRARY[start..end];
    assert!(body.contains(from), "`{from}` not in {function}");
    format!(
        "{}{}{}",
        &LIBRARY[..start],
        body.replacen(from, to, 1),
        &LIBRARY[end..]
    )
}

/// The planted mistake `mistaken` is named by `id` (a full fit, ranked first or tied with
/// the first); `correct` passes and gets no hypothesis; and `correct` does not behave like
/// the reference with `id`.
#[track_caller]
fn planted(s: &Setup, mistaken: &str, correct: &str, id: &str) {
    let bad = run(s, mistaken, None);
    assert!(bad.failing > 0, "{id}: the mistake does not fail the check");
    let top = bad.fits.first().unwrap_or_else(|| {
        panic!(
            "{id}: nothing found ({} of {} points fail)",
            bad.failing, bad.points
        )
    });
    let fit = bad
        .fits
        .iter()
        .find(|f| f.hypothesis.id == id)
        .unwrap_or_else(|| panic!("{id} not found; found {:?}", summary(&bad.fits)));
    assert!(fit.is_full(), "{id}: partial {:?}", summary(&bad.fits));
    assert_eq!(
        fit.score(),
        top.score(),
        "{id} ranked below {:?}",
        summary(&bad.fits)
    );

    let good = run(s, correct, Some(id));
    assert_eq!(good.failing, 0, "{id}: the correct function fails");
    assert!(
        good.fits.is_empty(),
        "{id}: the correct function gets {:?}",
        summary(&good.fits)
    );
    assert!(
        good.probe_pass < 1.0,
        "{id}: the correct function also behaves like the reference with this change; the sweep cannot tell them apart"
    );
}

fn summary(fits: &[diagnose::Fit]) -> Vec<(&'static str, f64, f64)> {
    fits.iter()
        .map(|f| (f.hypothesis.id, f.explained, f.kept))
        .collect()
}

#[track_caller]
fn plant(s: &Setup, from: &str, to: &str, id: &str) {
    let scope = if from.starts_with("const ") {
        ""
    } else {
        s.function
    };
    planted(s, &edit(scope, from, to), LIBRARY, id);
}

// ---- roughness ----

#[test]
fn remap_none() {
    plant(
        &BRDF,
        "alpha_from_roughness(roughness)",
        "roughness",
        "remap_none",
    );
}

#[test]
fn remap_twice() {
    plant(
        &BRDF,
        "alpha_from_roughness(roughness)",
        "alpha_from_roughness(alpha_from_roughness(roughness))",
        "remap_twice",
    );
}

#[test]
fn remap_sqrt() {
    plant(
        &BRDF,
        "alpha_from_roughness(roughness)",
        "sqrt(roughness)",
        "remap_sqrt",
    );
}

#[test]
fn remap_none_in_the_distribution_alone() {
    // Alone, D(alpha = roughness) is also "alpha where alpha² belongs": a tie, both named.
    plant(
        &D_GGX,
        "alpha_from_roughness(roughness)",
        "roughness",
        "remap_none",
    );
    plant(
        &D_GGX,
        "alpha_from_roughness(roughness)",
        "roughness",
        "ndf_alpha_not_squared",
    );
}

#[test]
fn clamp_added() {
    plant(
        &D_GGX,
        "alpha_from_roughness(roughness)",
        "alpha_from_roughness(max(roughness, 0.045))",
        "clamp_0_045",
    );
}

const CLAMPED: &str = "
fn alpha_clamped(roughness: f32, min_roughness: f32) -> f32 {
    let r = max(roughness, min_roughness);
    return r * r;
}
fn alpha_unclamped(roughness: f32, min_roughness: f32) -> f32 {
    return roughness * roughness;
}
";

const ALPHA_CLAMPED: Setup = Setup {
    function: "alpha_clamped",
    model: "alpha_from_roughness_clamped",
    points: || {
        grid(&[
            lin(0.0, 1.0, 101),
            vec![f64::from(0.045_f32), f64::from(0.089_f32)],
        ])
    },
    reference_args: same,
    rel: 1e-6,
    abs: 0.0,
};

#[test]
fn clamp_missing() {
    let mistaken = CLAMPED
        .replace("alpha_clamped(", "alpha_x(")
        .replace("alpha_unclamped(", "alpha_clamped(");
    planted(&ALPHA_CLAMPED, &mistaken, CLAMPED, "clamp_missing");
}

// ---- distribution ----

#[test]
fn ndf_pi_3_14() {
    plant(&D_GGX, "PI * d * d", "3.14 * d * d", "ndf_pi_3_14");
    plant(&BRDF, "PI * dd * dd", "3.14 * dd * dd", "ndf_pi_3_14");
}

#[test]
fn ndf_pi_22_7() {
    plant(&D_GGX, "PI * d * d", "(22.0 / 7.0) * d * d", "ndf_pi_22_7");
}

#[test]
fn ndf_inv_pi_missing_and_twice() {
    plant(&D_GGX, "PI * d * d", "d * d", "ndf_inv_pi_missing");
    plant(&D_GGX, "PI * d * d", "PI * PI * d * d", "ndf_inv_pi_twice");
}

#[test]
fn ndf_denominator_not_squared() {
    plant(
        &D_GGX,
        "PI * d * d",
        "PI * d",
        "ndf_denominator_not_squared",
    );
}

#[test]
fn ndf_no_cut() {
    // The library's d_ggx has no χ⁺ cut: over n·h ≤ 0 that is the mistake.
    let correct = edit(
        "d_ggx",
        "let alpha =",
        "if (n_dot_h <= 0.0) { return 0.0; }\n    let alpha =",
    );
    planted(&D_GGX_BELOW, LIBRARY, &correct, "ndf_no_cut");
}

const BECKMANN: &str = "
fn d_beckmann(n_dot_h: f32, roughness: f32) -> f32 {
    let a2 = roughness * roughness * roughness * roughness;
    let c2 = n_dot_h * n_dot_h;
    let tan2 = (1.0 - n_dot_h) * (1.0 + n_dot_h) / c2;
    return exp(-tan2 / a2) / (3.14159265 * a2 * c2 * c2);
}
";

#[test]
fn ndf_beckmann_for_ggx() {
    // Beckmann's exp(-tan²/a²) in f32 carries a relative error of about |tan²/a²| units of
    // f32 rounding (the condition number of exp), so this check's tolerance is 2e-5, with
    // abs 1e-30 for values that underflow f32 (the reference's reach 1e-196 at n·h = 0.5).
    // Where D ≥ 1e-30 the argument is below 69, so 2e-5 covers the exp.
    let s = Setup {
        function: "d_beckmann",
        points: || grid(&[lin(0.5, 1.0, 32), log(0.1, 1.0, 12)]),
        rel: 2e-5,
        abs: 1e-30,
        ..D_GGX
    };
    let correct = LIBRARY.to_string()
        + "fn d_beckmann(n_dot_h: f32, roughness: f32) -> f32 { return d_ggx(n_dot_h, roughness); }";
    planted(&s, BECKMANN, &correct, "ndf_beckmann");
}

// ---- visibility ----

#[test]
fn vis_four_missing_and_two() {
    plant(
        &VIS,
        "g2 / (4.0 * nv * nl)",
        "g2 / (nv * nl)",
        "vis_four_missing",
    );
    plant(
        &VIS,
        "g2 / (4.0 * nv * nl)",
        "g2 / (2.0 * nv * nl)",
        "vis_four_as_two",
    );
}

#[test]
fn vis_g2_not_divided() {
    plant(&VIS, "g2 / (4.0 * nv * nl)", "g2", "vis_g2_not_divided");
}

#[test]
fn vis_separable() {
    plant(
        &VIS,
        "1.0 / (1.0 + smith_lambda(nv, a2) + smith_lambda(nl, a2))",
        "1.0 / ((1.0 + smith_lambda(nv, a2)) * (1.0 + smith_lambda(nl, a2)))",
        "vis_separable",
    );
}

#[test]
fn vis_fast_approximation() {
    plant(
        &BRDF,
        "let gv = n_dot_l * sqrt(n_dot_v * n_dot_v * (1.0 - a2) + a2);
    let gl = n_dot_v * sqrt(n_dot_l * n_dot_l * (1.0 - a2) + a2);",
        "let gv = n_dot_l * (n_dot_v * (1.0 - alpha) + alpha);
    let gl = n_dot_v * (n_dot_l * (1.0 - alpha) + alpha);",
        "vis_fast",
    );
}

// ---- Fresnel ----

#[test]
fn schlick_exponent() {
    plant(
        &SCHLICK,
        "1.0 - v_dot_h, 5.0",
        "1.0 - v_dot_h, 4.0",
        "schlick_exponent_4",
    );
    plant(
        &BRDF,
        "1.0 - v_dot_h, 5.0",
        "1.0 - v_dot_h, 6.0",
        "schlick_exponent_6",
    );
}

#[test]
fn f90_from_f0() {
    plant(
        &BRDF,
        "let f = f0 + (vec3<f32>(1.0) - f0)",
        "let f = f0 + (vec3<f32>(clamp(50.0 * dot(f0, vec3<f32>(0.33)), 0.0, 1.0)) - f0)",
        "f90_from_f0",
    );
}

const SCHLICK_F90: &str = "
fn f_schlick_f90(v_dot_h: f32, f0: vec3<f32>, f90: f32) -> vec3<f32> {
    return f0 + (vec3<f32>(f90) - f0) * pow(1.0 - v_dot_h, 5.0);
}
fn f_schlick_f90_ignored(v_dot_h: f32, f0: vec3<f32>, f90: f32) -> vec3<f32> {
    return f0 + (vec3<f32>(1.0) - f0) * pow(1.0 - v_dot_h, 5.0);
}
";

#[test]
fn f90_ignored() {
    let s = Setup {
        function: "f_schlick_f90",
        model: "schlick_fresnel_rgb_f90",
        points: || {
            grid(&[
                lin(0.0, 1.0, 51),
                vec![f64::from(0.04_f32)],
                vec![f64::from(0.5_f32)],
                vec![f64::from(0.9_f32)],
                lin(0.0, 1.0, 5),
            ])
        },
        ..SCHLICK
    };
    let mistaken = SCHLICK_F90
        .replace("f_schlick_f90(", "f_x(")
        .replace("f_schlick_f90_ignored(", "f_schlick_f90(");
    planted(&s, &mistaken, SCHLICK_F90, "f90_one");
}

// ---- diffuse ----

#[test]
fn diffuse_pi() {
    plant(
        &LAMBERT,
        "diffuse_color * INV_PI",
        "diffuse_color / 3.14",
        "diffuse_pi_3_14",
    );
    plant(
        &LAMBERT,
        "diffuse_color * INV_PI",
        "diffuse_color * INV_PI * INV_PI",
        "diffuse_inv_pi_twice",
    );
    plant(
        &BRDF,
        "base_color * INV_PI",
        "base_color",
        "diffuse_inv_pi_missing",
    );
}

#[test]
fn burley_terms() {
    plant(
        &BURLEY,
        "roughness * l_dot_h * l_dot_h",
        "roughness * l_dot_h",
        "burley_ldh_not_squared",
    );
    plant(
        &BURLEY,
        "2.0 * roughness * l_dot_h",
        "2.0 * roughness * roughness * l_dot_h",
        "burley_alpha",
    );
    plant(
        &BURLEY,
        "roughness * l_dot_h * l_dot_h",
        "roughness * n_dot_l * n_dot_l",
        "burley_at_ndl",
    );
}

#[test]
fn lambert_for_burley() {
    plant(
        &BURLEY,
        "let fd90 =",
        "return INV_PI;\n    let fd90 =",
        "diffuse_lambert",
    );
}

// ---- cosines and vectors ----

#[test]
fn distribution_at_the_wrong_cosine() {
    plant(
        &BRDF,
        "let nxh = cross(n, h);
    let dd = dot(nxh, nxh) + n_dot_h * n_dot_h * a2;",
        "let nxh = cross(n, v);
    let dd = dot(nxh, nxh) + n_dot_v * n_dot_v * a2;",
        "ndf_at_ndv",
    );
}

#[test]
fn fresnel_at_the_wrong_cosine() {
    plant(
        &BRDF,
        "pow(1.0 - v_dot_h, 5.0)",
        "pow(1.0 - n_dot_v, 5.0)",
        "fresnel_at_ndv",
    );
    plant(
        &BRDF,
        "pow(1.0 - v_dot_h, 5.0)",
        "pow(1.0 - n_dot_h, 5.0)",
        "fresnel_at_ndh",
    );
}

#[test]
fn half_vector_not_normalised() {
    // The variant reads the cosines off the unnormalised half vector and forms sin² from
    // the cosine, as the reference does. The library's brdf forms sin² as |n × h|² and
    // clamps the cosines to [0, 1], which makes an unnormalised h a different function; the
    // case is planted on a form of brdf that computes D from the cosine alone (checked to
    // pass when h is normalised). Schlick's power is written as products there too: WGSL's
    // pow is undefined for a negative base, which 1 - v·h becomes when h is not normalised.
    let library_form = edit(
        "brdf",
        "let n_dot_h = clamp(dot(n, h), 0.0, 1.0);
    let v_dot_h = clamp(dot(v, h), 0.0, 1.0);",
        "let n_dot_h = dot(n, h);
    let v_dot_h = dot(v, h);",
    )
    .replace(
        "let nxh = cross(n, h);
    let dd = dot(nxh, nxh) + n_dot_h * n_dot_h * a2;",
        "let dd = (1.0 - n_dot_h) * (1.0 + n_dot_h) + n_dot_h * n_dot_h * a2;",
    )
    .replace(
        "pow(1.0 - v_dot_h, 5.0)",
        "((1.0 - v_dot_h) * (1.0 - v_dot_h) * (1.0 - v_dot_h) * (1.0 - v_dot_h) * (1.0 - v_dot_h))",
    );
    let mistaken = library_form.replacen("let h = normalize(v + l);", "let h = v + l;", 1);
    assert_ne!(mistaken, library_form);
    planted(&BRDF_ROUGH, &mistaken, &library_form, "half_not_normalised");
}

// ---- metallic workflow ----

#[test]
fn dielectric_f0() {
    plant(
        &BRDF,
        "const DIELECTRIC_F0: f32 = 0.04;",
        "const DIELECTRIC_F0: f32 = 0.02;",
        "dielectric_f0_0_02",
    );
}

#[test]
fn metallic_inverted() {
    plant(
        &BRDF,
        "let f0 = material_f0(base_color, metallic);",
        "let f0 = mix(base_color, vec3<f32>(DIELECTRIC_F0), metallic);",
        "metallic_inverted",
    );
}

#[test]
fn metal_diffuse_kept() {
    plant(
        &BRDF,
        "(1.0 - metallic) * base_color * INV_PI",
        "base_color * INV_PI",
        "metal_diffuse_kept",
    );
}

// ---- constant factors ----

#[test]
fn lobe_and_total_factors() {
    plant(
        &BRDF,
        "return diffuse + f * (d * vis);",
        "return diffuse + 0.5 * f * (d * vis);",
        "specular_half",
    );
    plant(
        &BRDF,
        "return diffuse + f * (d * vis);",
        "return 2.0 * (diffuse + f * (d * vis));",
        "total_x2",
    );
}

// ---- what must get no hypothesis ----

#[test]
fn equivalent_refactors_get_no_hypothesis() {
    for (s, from, to) in [
        (&D_GGX, "a2 / (PI * d * d)", "(a2 / PI) / (d * d)"),
        (
            &BRDF,
            "return diffuse + f * (d * vis);",
            "return f * (vis * d) + diffuse;",
        ),
        (
            &BRDF,
            "let h = normalize(v + l);",
            "let h = (v + l) * inverseSqrt(dot(v + l, v + l));",
        ),
        (
            &SCHLICK,
            "let w = pow(1.0 - v_dot_h, 5.0);",
            "let m = 1.0 - v_dot_h;\n    let w = m * m * m * m * m;",
        ),
    ] {
        let o = run(s, &edit(s.function, from, to), None);
        assert_eq!(o.failing, 0, "{from} -> {to} fails");
        assert!(o.fits.is_empty());
    }
}

#[test]
fn the_correct_library_gets_no_hypothesis() {
    for s in [&D_GGX, &VIS, &SCHLICK, &LAMBERT, &BURLEY, &BRDF] {
        let o = run(s, LIBRARY, None);
        assert_eq!(o.failing, 0, "{} fails", s.function);
        assert!(o.fits.is_empty(), "{}", s.function);
    }
}

// ---- call-graph attribution ----

#[test]
fn capture_reads_the_arguments_inside_a_branch() {
    let src = "
fn term(x: f32, k: vec2<f32>) -> f32 { return x * k.y; }
fn caller(x: f32) -> f32 {
    var y = x + 1.0;
    if (x > 0.5) {
        y = term(y * 3.0, vec2<f32>(x, 2.0));
    }
    return y;
}
";
    let shader = Shader::from_source("capture.wgsl", src.to_string()).unwrap();
    let sites = diagnose::callgraph::call_sites(&shader, "caller", "term").unwrap();
    assert_eq!(sites.len(), 1);
    assert_eq!(sites[0].line, 6);
    let xs = [0.0_f32, 0.25, 0.75, 1.0].map(f32::to_bits);
    let cap = diagnose::callgraph::capture(&shader, &sites[0], &[&xs]).unwrap();
    assert_eq!(cap.reached, vec![false, false, true, true]);
    let names: Vec<&str> = cap.args.iter().map(|(n, _)| n.as_str()).collect();
    assert_eq!(names, ["x", "k.x", "k.y"]);
    // Arithmetic by hand: (x + 1) * 3 and the vector (x, 2); the result (x + 1) * 3 * 2.
    assert_eq!(cap.args[0].1[2..], [5.25, 6.0]);
    assert_eq!(cap.args[1].1[2..], [0.75, 1.0]);
    assert_eq!(cap.args[2].1[2..], [2.0, 2.0]);
    assert_eq!(cap.result[0].1[2..], [10.5, 12.0]);
}

#[test]
fn the_failing_brdf_is_traced_to_its_call_of_material_f0() {
    // The mistake is planted in material_f0; brdf, which calls it, fails. Judged at the
    // arguments brdf passes, material_f0 deviates from its reference at every failing point
    // of brdf, alpha_from_roughness at none; the search on the captured columns names the
    // mistake.
    let source = edit("material_f0", "vec3<f32>(DIELECTRIC_F0)", "vec3<f32>(0.02)");
    let s = &BRDF;
    let shader = Shader::from_source("planted.wgsl", source).unwrap();
    let program = Program::compile(&shader, "brdf", &BTreeMap::new()).unwrap();
    let points = (s.points)();
    let inputs: Vec<Vec<u32>> = (0..program.input_leaves().len())
        .map(|c| {
            points
                .iter()
                .map(|p| f64_to_bits(ScalarKind::F32, p[c]))
                .collect()
        })
        .collect();
    let refs: Vec<&[u32]> = inputs.iter().map(Vec::as_slice).collect();
    let mut out = Vec::new();
    program.eval(&refs, &mut out);
    let model = reference::find("cook_torrance_rgb").unwrap();
    let pass = pass_rule(s.rel, s.abs);
    let failing: Vec<usize> = (0..points.len())
        .filter(|&i| {
            let got: Vec<f64> = out
                .iter()
                .map(|c| bits_to_f64(ScalarKind::F32, c[i]))
                .collect();
            !pass(i, &got, &model.call(&points[i]))
        })
        .collect();
    assert!(!failing.is_empty());

    let site = &diagnose::callgraph::call_sites(&shader, "brdf", "material_f0").unwrap()[0];
    assert_eq!(site.line, 104);
    let cap = diagnose::callgraph::capture(&shader, site, &refs).unwrap();
    let f0_model = reference::find("material_f0").unwrap();
    // material_f0's own check: a few f32 roundings, 1e-6 relative.
    let f0_pass = pass_rule(1e-6, 0.0);
    let a = diagnose::callgraph::attribute(&cap, f0_model, |x| x.to_vec(), &f0_pass, &failing);
    assert_eq!(a.failing_reached, failing.len());
    assert_eq!(a.deviating_failing, failing.len());

    let site =
        &diagnose::callgraph::call_sites(&shader, "brdf", "alpha_from_roughness").unwrap()[0];
    let cap_alpha = diagnose::callgraph::capture(&shader, site, &refs).unwrap();
    let alpha_model = reference::find("alpha_from_roughness").unwrap();
    let b =
        diagnose::callgraph::attribute(&cap_alpha, alpha_model, |x| x.to_vec(), &f0_pass, &failing);
    assert_eq!(b.deviating_failing, 0);
    assert_eq!(b.reached, points.len());

    let fits = diagnose::search(
        "material_f0",
        &cap.arg_columns(),
        &cap.result_columns(),
        &f0_pass,
        &a.deviating,
        &Options::default(),
    )
    .unwrap();
    assert_eq!(
        fits.first().map(|f| f.hypothesis.id),
        Some("dielectric_f0_0_02")
    );
    assert!(fits[0].is_full());
}
