//! The integrated models (directional albedo, energy compensation, split-sum) and the other
//! models added for the wider library, against outside sources and identities.
//!
//! Sources, named beside each check:
//! - `tests/data/reference/integrated/*.csv`: the same integrals computed by
//!   `tools/refgen/refgen.py --integrated` with scipy's QUADPACK over the light direction
//!   (a different variable, rule and code from the Rust quadrature, which integrates over
//!   the half vector), itself checked against mpmath at 20 digits to 1e-13 (see refgen).
//! - Closed forms at `alpha = 1` (GGX is `1/π`, `V = 0.5/(n·l + n·v)`):
//!   `E(μ) = 1 - μ ln(1 + 1/μ)`, `E_avg = (4/3)(1 - ln 2)` (derived in
//!   `harness/reference/ALBEDO.md`).
//! - Identities: `E_avg = 2 ∫ E μ dμ`; scale + bias = E; the white furnace (an energy-
//!   compensated white lobe returns all the light); NDF normalisation; Smith's masking
//!   consistency for the anisotropic G1 (Heitz 2014); the sRGB and octahedral round trips.
//!
//! Quadrature accuracy: the Rust models ask for 1e-10 absolute on E and 1e-9 on E_avg.
//! Measured (these tests, `--nocapture`): against scipy the largest E error is printed by
//! `integrated_albedo_matches_scipy`; at `alpha = 1` against the closed form below 1e-11.

use crate::common::check_table_with;
use shadegate::reference::brdf::{self, CookTorrance};
use shadegate::reference::{
    clearcoat, diffuse, encoding, envbrdf, masking, multiscatter, ndf, quad, sheen,
};
use std::f64::consts::{FRAC_PI_2, PI};

/// The Rust quadrature's request is 1e-10 (E) and scipy's 1e-12, written to 12 digits:
/// a tenfold margin on the Rust side's tolerance.
const INTEGRAL_ABS_TOL: f64 = 1e-9;

#[test]
fn integrated_albedo_matches_scipy() {
    let worst = check_table_with(
        "integrated",
        "scipy",
        "ggx_albedo",
        0.0,
        INTEGRAL_ABS_TOL,
        true,
    );
    println!("ggx_albedo vs scipy: max abs error {worst:.2e}");
}

#[test]
fn split_sum_scale_matches_scipy() {
    check_table_with(
        "integrated",
        "scipy",
        "split_sum_scale",
        0.0,
        INTEGRAL_ABS_TOL,
        false,
    );
}

#[test]
fn split_sum_bias_matches_scipy() {
    check_table_with(
        "integrated",
        "scipy",
        "split_sum_bias",
        0.0,
        INTEGRAL_ABS_TOL,
        false,
    );
}

#[test]
fn every_integrated_table_has_a_test() {
    let dir = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/data/reference/integrated"
    );
    let mut on_disk: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().into_string().unwrap())
        .collect();
    on_disk.sort();
    assert_eq!(
        on_disk,
        [
            "ggx_albedo.csv",
            "split_sum_bias.csv",
            "split_sum_scale.csv"
        ]
    );
}

#[test]
fn albedo_at_alpha_one_has_a_closed_form() {
    // Closed form (ALBEDO.md): E(μ) = 1 - μ ln(1 + 1/μ); its limit at μ = 0 is 1.
    let mut worst = 0.0_f64;
    for mu in [1.0_f64, 0.9, 0.5, 0.25, 0.1, 0.01, 1e-4] {
        let want = 1.0 - mu * (1.0 + 1.0 / mu).ln();
        worst = worst.max((multiscatter::ggx_albedo(mu, 1.0) - want).abs());
    }
    let at_zero = multiscatter::ggx_albedo(0.0, 1.0);
    println!("E at alpha = 1 vs closed form: {worst:.2e}; E(0, 1) = {at_zero}");
    assert!(worst <= 1e-10, "{worst:e}");
    assert!((at_zero - 1.0).abs() <= 1e-9, "{at_zero}");
    let avg = multiscatter::ggx_albedo_average(1.0);
    let want = 4.0 / 3.0 * (1.0 - 2f64.ln());
    assert!((avg - want).abs() <= 1e-9, "E_avg(1) = {avg} vs {want}");
}

#[test]
fn albedo_edges() {
    // A mirror loses nothing; every E ≤ 1 (energy conservation), also at μ = 0.
    assert_eq!(multiscatter::ggx_albedo(0.4, 0.0), 1.0);
    for alpha in [0.01, 0.3, 1.0] {
        for mu in [0.0, 0.3, 1.0] {
            let e = multiscatter::ggx_albedo(mu, alpha);
            assert!(e > 0.0 && e <= 1.0 + 1e-10, "E({mu}, {alpha}) = {e}");
        }
    }
    // At μ = 0 exactly E = 1 for every alpha > 0: E = ∫ D_v(h) G2/G1(v) dω_h with the
    // visible normals D_v normalised (Heitz 2014), and G2/G1(v) = (1 + Λv)/(1 + Λv + Λl)
    // → 1 as Λv → ∞; no reflected direction is cut by the horizon there.
    for alpha in [0.01, 0.3] {
        let e0 = multiscatter::ggx_albedo(0.0, alpha);
        assert!((e0 - 1.0).abs() <= 1e-9, "E(0, {alpha}) = {e0}");
    }
}

/// Composite Simpson rule with `n` (even) intervals: a rule of its own, not the models'.
fn simpson(f: &dyn Fn(f64) -> f64, a: f64, b: f64, n: usize) -> f64 {
    let h = (b - a) / n as f64;
    let mut s = f(a) + f(b);
    for i in 1..n {
        s += f(a + i as f64 * h) * if i % 2 == 1 { 4.0 } else { 2.0 };
    }
    s * h / 3.0
}

#[test]
fn average_albedo_is_twice_the_first_moment_of_e() {
    // Identity: E_avg = 2 ∫ E(μ) μ dμ, here by Simpson's rule on 60 intervals of its own
    // (error below 1e-6: the integrand behaves like μ² ln μ at 0).
    for alpha in [0.3, 1.0] {
        let f = |mu: f64| 2.0 * multiscatter::ggx_albedo(mu, alpha) * mu;
        let simpson = simpson(&f, 0.0, 0.05, 10) + simpson(&f, 0.05, 1.0, 50);
        let model = multiscatter::ggx_albedo_average(alpha);
        assert!(
            (simpson - model).abs() <= 1e-6,
            "alpha {alpha}: {simpson} vs {model}"
        );
    }
}

#[test]
fn kulla_conty_restores_the_white_furnace() {
    // White furnace: E(μ) + ∫ f_ms (n·l) dω_l = 1, with ∫ over the hemisphere =
    // 2π ∫₀¹ f_ms(μ, μ_l) μ_l dμ_l (f_ms depends on the cosines only). Simpson on 60
    // intervals; stated accuracy 1e-5 (Simpson's error, as above, divided by
    // 1 - E_avg ≥ 0.06 at these widths).
    for alpha in [0.3, 1.0] {
        for mu in [1.0, 0.1] {
            let f = |ml: f64| multiscatter::kulla_conty_ms(mu, ml, alpha) * ml;
            let ms = 2.0 * PI * (simpson(&f, 0.0, 0.05, 10) + simpson(&f, 0.05, 1.0, 50));
            let total = multiscatter::ggx_albedo(mu, alpha) + ms;
            assert!(
                (total - 1.0).abs() <= 1e-5,
                "alpha {alpha}, μ {mu}: {total}"
            );
        }
    }
    assert_eq!(multiscatter::kulla_conty_ms(0.5, 0.5, 0.0), 0.0);
}

#[test]
fn schlick_average_and_fresnel_factor_edges() {
    // 2 ∫ (1 - μ)⁵ μ dμ = 1/21 (calculus); the colour factor is 1 for a white lobe.
    assert!((multiscatter::schlick_fresnel_average(0.0) - 1.0 / 21.0).abs() < 1e-17);
    assert_eq!(multiscatter::schlick_fresnel_average(1.0), 1.0);
    assert_eq!(multiscatter::kulla_conty_fresnel_factor(1.0, 0.7), 1.0);
    assert_eq!(multiscatter::kulla_conty_fresnel_factor(0.0, 0.7), 0.0);
    let white = multiscatter::kulla_conty_ms_fresnel(0.5, 0.7, 0.3, 1.0);
    let plain = multiscatter::kulla_conty_ms(0.5, 0.7, 0.3);
    assert!((white - plain).abs() <= 1e-15 * plain);
}

/// `∫ f(v, l) (n·l) dω_l` over `l` for `n·v = mu`, by a 10-point Gauss-Legendre product rule
/// on 8 × 8 sub-panels of each of (0, θv, π/2) × (0, π/2, π), doubled for the symmetry in φ:
/// an integration over the light direction, unlike the models' over the half vector.
fn integrate_over_l(mu: f64, f: &dyn Fn([f64; 3], [f64; 3]) -> f64) -> f64 {
    let v = [(1.0 - mu * mu).sqrt(), 0.0, mu];
    let tv = mu.acos();
    let split =
        |a: f64, b: f64| -> Vec<f64> { (0..=8).map(|i| a + (b - a) * i as f64 / 8.0).collect() };
    let mut thetas = split(0.0, tv);
    thetas.pop();
    thetas.extend(split(tv, FRAC_PI_2));
    let mut phis = split(0.0, FRAC_PI_2);
    phis.pop();
    phis.extend(split(FRAC_PI_2, PI));
    let inner = |t: f64| {
        let (s, c) = t.sin_cos();
        let g = |p: f64| f(v, [s * p.cos(), s * p.sin(), c]) * c * s;
        phis.windows(2)
            .map(|w| quad::rule(&g, w[0], w[1]))
            .sum::<f64>()
    };
    2.0 * thetas
        .windows(2)
        .filter(|w| w[1] > w[0])
        .map(|w| quad::rule(&inner, w[0], w[1]))
        .sum::<f64>()
}

#[test]
fn turquin_compensation_restores_the_white_furnace() {
    // White furnace with F0 = 1: ∫ f_ss (1 + (1 - E)/E) (n·l) dω = 1. The lobe is
    // CookTorrance::SPECULAR_ONLY, integrated over l by the rule above (independent of the
    // model's E); accurate to about 1e-6 for these broad lobes (alpha ≥ 0.3), checked by
    // its agreement with the closed form at alpha = 1 in the same loop.
    let n = [0.0, 0.0, 1.0];
    for roughness in [0.55_f64, 1.0] {
        let alpha = roughness * roughness;
        for mu in [1.0, 0.2] {
            let lobe = |v: [f64; 3], l: [f64; 3]| {
                CookTorrance::SPECULAR_ONLY.eval(n, v, l, [1.0; 3], 0.0, roughness)[0]
            };
            let e = integrate_over_l(mu, &lobe);
            assert!(
                (e - multiscatter::ggx_albedo(mu, alpha)).abs() <= 1e-6,
                "E by l-integration {e} vs model at r {roughness}, μ {mu}"
            );
            let compensated = e * multiscatter::turquin_compensation(mu, alpha, 1.0);
            assert!((compensated - 1.0).abs() <= 2e-6, "{compensated}");
        }
    }
}

#[test]
fn split_sum_terms_add_up_to_the_albedo_and_have_mirror_edges() {
    // Identity: scale + bias = E (Schlick's weights sum to 1).
    for r in [0.3_f64, 1.0] {
        for mu in [1.0, 0.05] {
            let sum = envbrdf::split_sum_scale(mu, r) + envbrdf::split_sum_bias(mu, r);
            let e = multiscatter::ggx_albedo(mu, r * r);
            assert!((sum - e).abs() <= 3e-10, "r {r}, μ {mu}: {sum} vs {e}");
        }
    }
    // Roughness 0 (a mirror, v·h = n·v): scale = 1 - (1 - μ)⁵, bias = (1 - μ)⁵.
    for mu in [1.0_f64, 0.5, 0.0] {
        let p = (1.0 - mu).powi(5);
        assert!((envbrdf::split_sum_scale(mu, 0.0) - (1.0 - p)).abs() < 1e-15);
        assert!((envbrdf::split_sum_bias(mu, 0.0) - p).abs() < 1e-15);
    }
}

#[test]
fn published_split_sum_fit_against_the_integral() {
    // The fit is a fit: this measures its distance from the integrated terms on a 5 × 4
    // grid (n·v ≥ 0.05, roughness ≥ 0.25) and pins the measured bound, so that a change to
    // either side shows. Measured when written: see the printed line.
    let mut worst = (0.0_f64, 0.0_f64);
    for i in 0..=4 {
        let mu = 0.05 + 0.95 * i as f64 / 4.0;
        for j in 1..=4 {
            let r = j as f64 / 4.0;
            let (fs, fb) = envbrdf::split_sum_fit(mu, r);
            worst.0 = worst.0.max((fs - envbrdf::split_sum_scale(mu, r)).abs());
            worst.1 = worst.1.max((fb - envbrdf::split_sum_bias(mu, r)).abs());
        }
    }
    println!(
        "split-sum fit vs integral: max |scale error| {:.4}, max |bias error| {:.4}",
        worst.0, worst.1
    );
    assert!(
        worst.0 <= FIT_SCALE_BOUND && worst.1 <= FIT_BIAS_BOUND,
        "{worst:?}"
    );
}

/// Measured distance of the published fit from the integral (see the test), rounded up.
/// Measured 0.3633 (scale) and 0.0496 (bias): the fit is poor for smooth surfaces near
/// grazing, and it was made against tables with a separable Schlick-GGX visibility.
const FIT_SCALE_BOUND: f64 = 0.37;
const FIT_BIAS_BOUND: f64 = 0.05;

#[test]
fn published_albedo_table_is_the_models_output() {
    // ALBEDO.md and brdf.rs's documentation print multiscatter::albedo_table to 4 decimals.
    let table =
        multiscatter::albedo_table(&multiscatter::TABLE_ROUGHNESS, &multiscatter::TABLE_N_DOT_V);
    let md = include_str!("../../harness/reference/ALBEDO.md");
    let rs = include_str!("../../harness/reference/brdf.rs");
    for (text, origin) in [(md, "ALBEDO.md"), (rs, "brdf.rs")] {
        let rows: Vec<Vec<f64>> = text
            .lines()
            .map(|l| l.trim_start_matches("//!").trim())
            .filter(|l| l.starts_with("| 0.") || l.starts_with("| 1.0 |"))
            .map(|l| {
                l.split('|')
                    .map(str::trim)
                    .filter(|c| !c.is_empty())
                    .map(|c| c.parse::<f64>().unwrap())
                    .collect()
            })
            .collect();
        assert_eq!(rows.len(), table.len(), "{origin}");
        for (row, model) in rows.iter().zip(&table) {
            for (k, (&published, &e)) in row[1..].iter().zip(model).enumerate() {
                assert!(
                    (published - e).abs() <= 0.5e-4 + 1e-9,
                    "{origin}: roughness {} column {k}: published {published}, model {e}",
                    row[0]
                );
            }
        }
    }
}

// ---- closed-form models: identities and edges ----

#[track_caller]
fn normalised(name: &str, d: &dyn Fn(f64) -> f64, breaks: &[f64]) {
    // ∫ D(θ) cos θ dω = 2π ∫ D cos θ sin θ dθ = 1 (the definition of an NDF).
    let f = |t: f64| d(t.cos()) * t.cos() * t.sin();
    let total = 2.0 * PI * quad::panels(&f, breaks, 1e-10);
    assert!((total - 1.0).abs() <= 1e-9, "{name}: {total}");
}

#[test]
fn sheen_and_clearcoat_distributions_are_normalised() {
    let b = [0.0, 0.02, 0.1, 0.4, 1.0, FRAC_PI_2];
    for a in [0.05, 0.3, 1.0] {
        normalised("charlie", &|c| sheen::charlie_ndf(c, a), &b);
        normalised("velvet", &|c| sheen::ashikhmin_velvet_ndf(c, a), &b);
    }
    for a in [0.01, 0.1, 0.5, 0.999, 1.0] {
        let mut breaks = vec![
            0.0,
            a / 8.0,
            a / 4.0,
            a / 2.0,
            a,
            2.0 * a,
            4.0 * a,
            0.5,
            FRAC_PI_2,
        ];
        breaks.sort_by(f64::total_cmp);
        breaks.dedup();
        breaks.retain(|&x| x <= FRAC_PI_2);
        normalised("gtr1", &|c| clearcoat::gtr1_ndf(c, a), &breaks);
    }
}

#[test]
fn sheen_clearcoat_edges() {
    // Charlie is 0 at n·h = 1 and peaks at grazing facets; velvet's limit at n·h = 1;
    // GTR1's alpha → 1 limit is 1/π; Kelemen is 1/4 at l·h = 1; clearcoat F0 = 0.04.
    assert_eq!(sheen::charlie_ndf(1.0, 0.3), 0.0);
    assert!((sheen::charlie_ndf(0.0, 0.5) - 4.0 / (2.0 * PI)).abs() < 1e-15);
    let s: f64 = 0.4;
    assert!((sheen::ashikhmin_velvet_ndf(1.0, s) - 1.0 / (PI * (1.0 + 4.0 * s * s))).abs() < 1e-16);
    assert!((clearcoat::gtr1_ndf(0.3, 1.0 - 1e-9) - 1.0 / PI).abs() < 1e-8);
    assert_eq!(clearcoat::kelemen_visibility(1.0), 0.25);
    assert!((clearcoat::clearcoat_fresnel(1.0) - 0.04).abs() < 1e-16);
    assert_eq!(clearcoat::clearcoat_fresnel(0.0), 1.0);
    assert_eq!(sheen::neubelt_visibility(1.0, 0.3), 0.25);
    assert_eq!(sheen::neubelt_visibility(0.0, 0.3), 0.0);
}

#[test]
fn anisotropic_masking_reduces_to_the_isotropic_one() {
    // With alpha_x = alpha_y the anisotropic Λ, G2 and V are the isotropic ones (Heitz 2014).
    for a in [0.01, 0.3, 1.0] {
        for (n, t, b) in [
            (0.9, 0.3, 0.3162277660168379),
            (0.1, -0.7, std::f64::consts::FRAC_1_SQRT_2),
        ] {
            let iso = masking::ggx_lambda(n, a);
            let an = masking::ggx_aniso_lambda(n, t, b, a, a);
            assert!((iso - an).abs() <= 1e-14 * iso, "{iso} {an}");
            let vi = masking::ggx_v_height_correlated(n, 0.6, a);
            let va = masking::ggx_aniso_v_height_correlated(n, t, b, 0.6, 0.8, 0.0, a, a);
            assert!((vi - va).abs() <= 1e-14 * vi, "{vi} {va}");
        }
    }
    // Edges: normal incidence; below the horizon.
    assert_eq!(masking::ggx_aniso_g1(1.0, 0.0, 0.0, 0.3, 0.9), 1.0);
    assert_eq!(masking::ggx_aniso_g1(0.0, 1.0, 0.0, 0.3, 0.9), 0.0);
    assert_eq!(
        masking::ggx_aniso_v_separable(1.0, 0.0, 0.0, 1.0, 0.0, 0.0, 0.3, 0.9),
        0.25
    );
}

#[test]
fn anisotropic_g1_is_consistent_with_the_anisotropic_ndf() {
    // Heitz 2014: ∫ G1(v) max(0, v·m) D(m) dω_m = n·v for Smith's G1.
    let (ax, ay) = (0.2, 0.6);
    for (vn, vt, vb) in [(0.8_f64, 0.6, 0.0), (0.3, 0.5, 0.8124038404635961)] {
        let g1 = masking::ggx_aniso_g1(vn, vt, vb, ax, ay);
        let inner = |t: f64| {
            let (s, c) = t.sin_cos();
            let g = |p: f64| {
                let m = [s * p.cos(), s * p.sin(), c];
                let vm = (vt * m[0] + vb * m[1] + vn * m[2]).max(0.0);
                ndf::ggx_aniso(c, m[0], m[1], ax, ay) * vm * c.max(0.0) / c.max(1e-300) * s
            };
            quad::panels(&g, &[0.0, FRAC_PI_2, PI, 1.5 * PI, 2.0 * PI], 1e-12)
        };
        let breaks = [0.0, 0.025, 0.05, 0.1, 0.2, 0.4, 0.8, FRAC_PI_2];
        let projected = quad::panels(&inner, &breaks, 1e-11);
        // 1e-6: the kink of max(0, v·m) is not a panel break, so the adaptive rule
        // converges slowly there (measured 5.5e-8); a wrong Λ (alpha_x for alpha_0, say)
        // misses by percents.
        assert!(
            (g1 * projected - vn).abs() <= 1e-6,
            "{} vs {vn}",
            g1 * projected
        );
    }
}

#[test]
fn anisotropic_lobe_with_equal_widths_is_the_isotropic_lobe() {
    let n = [0.0, 0.0, 1.0];
    let (t, b) = ([1.0, 0.0, 0.0], [0.0, 1.0, 0.0]);
    let v = [0.3, 0.0, 0.9539392014169457];
    let l = [-0.5, 0.2, 0.8426149773176358];
    for r in [0.2_f64, 0.6, 1.0] {
        let iso = CookTorrance::SPECULAR_ONLY.eval(n, v, l, [1.0; 3], 0.0, r)[0];
        let an = brdf::ggx_aniso_specular(n, t, b, v, l, r * r, r * r);
        assert!((iso - an).abs() <= 1e-14 * iso, "{iso} {an}");
    }
    assert_eq!(
        brdf::ggx_aniso_specular(n, t, b, v, [0.0, 0.6, -0.8], 0.2, 0.5),
        0.0
    );
    // At v = l = n: D = 1/(π ax ay), V = 1/4.
    let at_n = brdf::ggx_aniso_specular(n, t, b, n, n, 0.2, 0.5);
    assert!((at_n - 1.0 / (4.0 * PI * 0.1)).abs() <= 1e-14 * at_n);
}

#[test]
fn diffuse_edges() {
    // Oren-Nayar with sigma = 0 is Lambert (the paper's limit); Hammon at alpha = 0 and
    // normal incidence is 1.05 rho/π (from its formula).
    for (v, l, c) in [(0.9, 0.4, 0.3), (0.2, 0.7, -0.8)] {
        assert!((diffuse::oren_nayar(v, l, c, 0.0, 0.6) - 0.6 / PI).abs() < 1e-16);
        assert!((diffuse::oren_nayar_qualitative(v, l, c, 0.0) - 1.0 / PI).abs() < 1e-16);
    }
    assert_eq!(diffuse::oren_nayar(0.0, 0.5, 0.3, 0.3, 0.5), 0.0);
    assert!((diffuse::hammon(1.0, 1.0, 1.0, 1.0, 0.0, 0.5) - 1.05 * 0.5 / PI).abs() < 1e-16);
}

#[test]
fn srgb_round_trip() {
    // IEC 61966-2-1: decode(encode(x)) = x. Away from the threshold only f64 rounding
    // remains (1e-15 relative); the standard's two thresholds are not exact images of each
    // other (0.0031308 · 12.92 = 0.04044994 < 0.04045), so between them the round trip is
    // off by the branches' mismatch, below 1e-7 relative.
    let mut worst_far = 0.0_f64;
    let mut worst_near = 0.0_f64;
    for i in 0..=100_000 {
        let x = i as f64 / 100_000.0;
        let back = encoding::srgb_decode(encoding::srgb_encode(x));
        let rel = if x == 0.0 {
            back.abs()
        } else {
            ((back - x) / x).abs()
        };
        if (0.0031..0.0032).contains(&x) {
            worst_near = worst_near.max(rel);
        } else {
            worst_far = worst_far.max(rel);
        }
    }
    println!("sRGB round trip: {worst_far:.2e} away from the threshold, {worst_near:.2e} near it");
    assert!(
        worst_far <= 1e-15 && worst_near <= 1e-7,
        "{worst_far} {worst_near}"
    );
    assert!((encoding::srgb_encode(1.0) - 1.0).abs() <= 2e-16);
    assert_eq!(encoding::srgb_decode(0.0), 0.0);
}

#[test]
fn octahedral_round_trip_over_the_sphere() {
    // Cigolle et al. 2014: decode(encode(n)) = n for every unit n. A Fibonacci lattice of
    // 50,000 directions, plus the axes and the fold lines (x = 0 or y = 0 below the equator).
    let mut dirs: Vec<[f64; 3]> = Vec::new();
    let count = 50_000;
    let golden = PI * (3.0 - 5f64.sqrt());
    for i in 0..count {
        let z = 1.0 - 2.0 * (i as f64 + 0.5) / count as f64;
        let r = (1.0 - z * z).sqrt();
        let p = golden * i as f64;
        dirs.push([r * p.cos(), r * p.sin(), z]);
    }
    for d in [
        [0.0, 0.0, 1.0],
        [0.0, 0.0, -1.0],
        [1.0, 0.0, 0.0],
        [-1.0, 0.0, 0.0],
        [0.0, 1.0, 0.0],
        [0.0, -1.0, 0.0],
        [0.6, 0.0, -0.8],
        [0.0, -0.6, -0.8],
    ] {
        dirs.push(d);
    }
    let mut worst = 0.0_f64;
    for n in dirs {
        let e = encoding::octahedral_encode(n);
        assert!(e[0].abs() <= 1.0 && e[1].abs() <= 1.0, "{n:?} -> {e:?}");
        assert_eq!(
            e[0].abs() + e[1].abs() <= 1.0 + 1e-15,
            n[2] >= 0.0 || e[0].abs() + e[1].abs() == 1.0,
            "{n:?} -> {e:?}"
        );
        let back = encoding::octahedral_decode(e[0], e[1]);
        let err = (0..3).map(|k| (back[k] - n[k]).abs()).fold(0.0, f64::max);
        worst = worst.max(err);
    }
    println!("octahedral round trip: max component error {worst:.2e}");
    assert!(worst <= 1e-15, "{worst:e}");
    assert_eq!(encoding::octahedral_decode(1.0, 1.0), [0.0, 0.0, -1.0]);
    assert_eq!(encoding::octahedral_decode(-1.0, 1.0), [0.0, 0.0, -1.0]);
}

#[test]
fn filmic_curve_edges() {
    // From the formula: 0 at 0, slope 0.03/0.14 at 0, monotone, 1 from the root of
    // 0.08 x² - 0.56 x - 0.14 on.
    assert_eq!(encoding::filmic_narkowicz(0.0), 0.0);
    let h = 1e-9;
    assert!((encoding::filmic_narkowicz(h) / h - 0.03 / 0.14).abs() < 1e-6);
    let knee = (0.56 + 0.3584_f64.sqrt()) / 0.16;
    assert_eq!(encoding::filmic_narkowicz(knee + 1e-9), 1.0);
    assert!(encoding::filmic_narkowicz(knee - 1e-3) < 1.0);
    let mut last = 0.0;
    for i in 1..2000 {
        let y = encoding::filmic_narkowicz(i as f64 * 0.005);
        assert!(y >= last, "not monotone at {}", i as f64 * 0.005);
        last = y;
    }
}
