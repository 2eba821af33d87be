//! The reference models against mathematical identities, checked by numerical integration.
//!
//! Sources:
//! - NDF normalisation, `∫ D(m) (n·m) dω_m = 1` over the hemisphere: the defining property
//!   of a microfacet distribution (B. Walter, S. R. Marschner, H. Li, K. E. Torrance,
//!   "Microfacet Models for Refraction through Rough Surfaces", 2007, section 3).
//! - Masking consistent with the NDF, `∫ G1(v, m) max(0, v·m) D(m) dω_m = n·v`: the
//!   projected area of the microsurface seen from `v` equals that of the macro-surface
//!   (E. Heitz, "Understanding the Masking-Shadowing Function in Microfacet-Based BRDFs",
//!   2014). Smith's G1 satisfies it exactly.
//! - Lambert's albedo `∫ (1/π) (n·l) dω_l = 1`: a calculus identity.
//! - Helmholtz reciprocity `f(v, l) = f(l, v)` of a physically based BRDF.
//! - Energy: the directional albedo of a microfacet lobe with `F = 1` is at most 1, and falls
//!   as roughness grows because single scattering drops the light that bounces between
//!   facets (Heitz 2014 discusses this loss). The measured table is published in
//!   `harness/reference/brdf.rs` and `harness/reference/ALBEDO.md`, and checked here
//!   against both.
//!
//! The integrals use an adaptive Gauss-Legendre rule written here (nodes from Newton's method
//! on the Legendre recurrence), with panel breaks placed where the integrand has a kink or a
//! narrow peak. Each test states the quadrature accuracy it asks for and why its tolerance
//! is that.

use shadegate::reference::brdf::CookTorrance;
use shadegate::reference::{diffuse, find, masking, ndf};
use std::f64::consts::{FRAC_PI_2, PI};
use std::sync::OnceLock;

// ---------------------------------------------------------------------------------------
// Quadrature
// ---------------------------------------------------------------------------------------

const GL_N: usize = 10;

/// Gauss-Legendre nodes and weights on (-1, 1), by Newton's method on `P_n`.
fn gauss_legendre() -> ([f64; GL_N], [f64; GL_N]) {
    let mut x = [0.0; GL_N];
    let mut w = [0.0; GL_N];
    for i in 0..GL_N {
        let mut z = (PI * (i as f64 + 0.75) / (GL_N as f64 + 0.5)).cos();
        loop {
            let (mut p0, mut p1) = (1.0, z);
            for k in 2..=GL_N {
                let kf = k as f64;
                let p2 = ((2.0 * kf - 1.0) * z * p1 - (kf - 1.0) * p0) / kf;
                p0 = p1;
                p1 = p2;
            }
            let dp = GL_N as f64 * (z * p1 - p0) / (z * z - 1.0);
            let dz = p1 / dp;
            z -= dz;
            if dz.abs() < 1e-16 {
                let (mut p0, mut p1) = (1.0, z);
                for k in 2..=GL_N {
                    let kf = k as f64;
                    let p2 = ((2.0 * kf - 1.0) * z * p1 - (kf - 1.0) * p0) / kf;
                    p0 = p1;
                    p1 = p2;
                }
                let dp = GL_N as f64 * (z * p1 - p0) / (z * z - 1.0);
                x[i] = z;
                w[i] = 2.0 / ((1.0 - z * z) * dp * dp);
                break;
            }
        }
    }
    (x, w)
}

struct Quad {
    x: [f64; GL_N],
    w: [f64; GL_N],
}

impl Quad {
    fn new() -> Self {
        let (x, w) = gauss_legendre();
        Quad { x, w }
    }

    fn rule(&self, f: &dyn Fn(f64) -> f64, a: f64, b: f64) -> f64 {
        let (m, h) = ((a + b) / 2.0, (b - a) / 2.0);
        (0..GL_N)
            .map(|i| self.w[i] * f(m + h * self.x[i]))
            .sum::<f64>()
            * h
    }

    /// Adaptive integral of `f` over `[a, b]` to absolute accuracy about `tol`.
    fn adaptive(&self, f: &dyn Fn(f64) -> f64, a: f64, b: f64, tol: f64) -> f64 {
        let whole = self.rule(f, a, b);
        self.refine(f, a, b, whole, tol, 0)
    }

    fn refine(
        &self,
        f: &dyn Fn(f64) -> f64,
        a: f64,
        b: f64,
        whole: f64,
        tol: f64,
        depth: u32,
    ) -> f64 {
        let m = (a + b) / 2.0;
        let left = self.rule(f, a, m);
        let right = self.rule(f, m, b);
        if (left + right - whole).abs() <= tol || depth >= 40 {
            return left + right;
        }
        self.refine(f, a, m, left, tol / 2.0, depth + 1)
            + self.refine(f, m, b, right, tol / 2.0, depth + 1)
    }

    /// Adaptive integral over consecutive panels `breaks[i] .. breaks[i+1]`.
    fn panels(&self, f: &dyn Fn(f64) -> f64, breaks: &[f64], tol: f64) -> f64 {
        let per = tol / (breaks.len() - 1) as f64;
        breaks
            .windows(2)
            .map(|p| self.adaptive(f, p[0], p[1], per))
            .sum()
    }
}

/// Panel breaks on `[0, π/2]` for a lobe of angular width about `width` around θ = 0:
/// 0, width/8, width/4, ... doubling up to π/2, plus any extra breaks.
fn lobe_breaks(width: f64, extra: &[f64]) -> Vec<f64> {
    let mut b = vec![0.0];
    let mut t = width / 8.0;
    while t < FRAC_PI_2 {
        b.push(t);
        t *= 2.0;
    }
    b.extend(extra.iter().copied().filter(|&e| e > 0.0 && e < FRAC_PI_2));
    b.push(FRAC_PI_2);
    b.sort_by(f64::total_cmp);
    b.dedup();
    b
}

const ALPHAS: &[f64] = &[0.01, 0.03, 0.1, 0.2, 0.35, 0.5, 0.7, 0.85, 1.0];

// ---------------------------------------------------------------------------------------
// NDF normalisation
// ---------------------------------------------------------------------------------------

/// Quadrature is asked for 1e-11 absolute on an integral of 1; the check allows 1e-9, a
/// hundredfold margin for the adaptive error estimate. A wrong normalisation constant (a
/// missing π, alpha instead of alpha²) misses by a factor of order one.
const NORM_TOL: f64 = 1e-9;

#[track_caller]
fn check_normalised(name: &str, width: f64, d: &dyn Fn(f64) -> f64) {
    let q = Quad::new();
    let f = |t: f64| d(t.cos()) * t.cos() * t.sin();
    let integral = 2.0 * PI * q.panels(&f, &lobe_breaks(width, &[]), 1e-11 / (2.0 * PI));
    assert!(
        (integral - 1.0).abs() <= NORM_TOL,
        "{name}: ∫ D cos dω = {integral:.15}"
    );
}

#[test]
fn ggx_ndf_is_normalised() {
    for &a in ALPHAS {
        check_normalised(&format!("ggx alpha={a}"), a, &|c| ndf::ggx(c, a));
    }
}

#[test]
fn beckmann_ndf_is_normalised() {
    for &a in ALPHAS {
        check_normalised(&format!("beckmann alpha={a}"), a, &|c| ndf::beckmann(c, a));
    }
}

#[test]
fn blinn_phong_ndf_is_normalised() {
    for &a in ALPHAS {
        check_normalised(&format!("blinn-phong alpha={a}"), a, &|c| {
            ndf::blinn_phong_alpha(c, a)
        });
    }
    // and directly by exponent, including the flat p = 0
    for p in [0.0_f64, 1.0, 5.0, 64.0, 1000.0] {
        let width = (2.0 / (p + 2.0)).sqrt();
        check_normalised(&format!("blinn-phong p={p}"), width, &|c| {
            ndf::blinn_phong(c, p)
        });
    }
}

#[test]
fn anisotropic_ggx_ndf_is_normalised() {
    let q = Quad::new();
    for &(ax, ay) in &[(0.05, 0.5), (0.5, 0.05), (0.2, 0.2), (0.1, 1.0), (0.7, 0.3)] {
        let inner = |t: f64| {
            let (s, c) = t.sin_cos();
            let g = |p: f64| ndf::ggx_aniso(c, s * p.cos(), s * p.sin(), ax, ay);
            let phi_breaks = [0.0, FRAC_PI_2, PI, 1.5 * PI, 2.0 * PI];
            q.panels(&g, &phi_breaks, 1e-10) * c * s
        };
        let width = f64::min(ax, ay);
        let integral = q.panels(&inner, &lobe_breaks(width, &[]), 1e-10);
        // Two nested adaptive rules each asked for 1e-10: the check allows 1e-8 for the same
        // hundredfold margin as NORM_TOL.
        assert!(
            (integral - 1.0).abs() <= 1e-8,
            "aniso ggx ({ax}, {ay}): {integral:.15}"
        );
    }
}

// ---------------------------------------------------------------------------------------
// Masking consistent with the NDF (Heitz 2014)
// ---------------------------------------------------------------------------------------

/// `∫ max(0, v·m) D(m) dω_m` for an isotropic D and `v` at angle `theta_v` from the normal.
/// The φ integral of `max(0, v·m)` is done in closed form (D does not depend on φ): with
/// `v·m = sin θv sin θ cos φ + cos θv cos θ`, it is positive for `|φ| < φmax(θ)`, and
/// `∫_{-φmax}^{φmax} v·m dφ = 2 (sin θv sin θ sin φmax + cos θv cos θ φmax)`.
fn projected_area(theta_v: f64, width: f64, d: &dyn Fn(f64) -> f64) -> f64 {
    let q = Quad::new();
    let (sv, cv) = theta_v.sin_cos();
    let f = |t: f64| {
        let (s, c) = t.sin_cos();
        let phi_max = if sv * s == 0.0 {
            if cv * c > 0.0 {
                PI
            } else {
                0.0
            }
        } else {
            (-(cv * c) / (sv * s)).clamp(-1.0, 1.0).acos()
        };
        let ring = 2.0 * (sv * s * phi_max.sin() + cv * c * phi_max);
        d(c) * ring * s
    };
    // φmax starts to fall below π at θ = π/2 - θv: a kink in the integrand.
    q.panels(&f, &lobe_breaks(width, &[FRAC_PI_2 - theta_v]), 1e-12)
}

/// Quadrature asked for 1e-12 absolute on a projected area of order 1; the check allows
/// 1e-9 relative. A G1 that is not the Smith G1 of this NDF misses by percent (tested below
/// with Walter's rational fit, which is accurate to about 0.3 % only).
const MASKING_TOL: f64 = 1e-9;

#[test]
fn smith_ggx_g1_is_consistent_with_the_ggx_ndf() {
    for &a in ALPHAS {
        for theta_deg in [0.0, 20.0, 45.0, 70.0, 85.0, 89.0] {
            let tv = f64::to_radians(theta_deg);
            let area = projected_area(tv, a, &|c| ndf::ggx(c, a));
            let lhs = masking::ggx_g1(tv.cos(), a) * area;
            let rel = (lhs / tv.cos() - 1.0).abs();
            assert!(
                rel <= MASKING_TOL,
                "ggx alpha={a} θv={theta_deg}: G1·A = {lhs}, n·v = {}",
                tv.cos()
            );
        }
    }
}

#[test]
fn smith_beckmann_g1_is_consistent_with_the_beckmann_ndf() {
    for &a in ALPHAS {
        for theta_deg in [0.0, 20.0, 45.0, 70.0, 85.0, 89.0] {
            let tv = f64::to_radians(theta_deg);
            let area = projected_area(tv, a, &|c| ndf::beckmann(c, a));
            let lhs = masking::beckmann_g1(tv.cos(), a) * area;
            let rel = (lhs / tv.cos() - 1.0).abs();
            assert!(
                rel <= MASKING_TOL,
                "beckmann alpha={a} θv={theta_deg}: G1·A = {lhs}"
            );
        }
    }
}

#[test]
fn beckmann_rational_g1_is_consistent_only_to_its_stated_accuracy() {
    // Walter et al. 2007 state their fit is accurate to better than 0.35 % (from memory);
    // the identity then holds to that accuracy and, being a fit, not to 1e-9.
    let mut worst = 0.0_f64;
    for &a in ALPHAS {
        for theta_deg in [20.0, 45.0, 60.0, 70.0, 80.0, 85.0, 89.0] {
            let tv = f64::to_radians(theta_deg);
            let area = projected_area(tv, a, &|c| ndf::beckmann(c, a));
            let lhs = masking::beckmann_g1_rational(tv.cos(), a) * area;
            worst = worst.max((lhs / tv.cos() - 1.0).abs());
        }
    }
    println!("rational Beckmann G1: worst deviation from the identity {worst:.3e}");
    assert!(worst <= 0.0035, "{worst}");
    assert!(worst > 100.0 * MASKING_TOL, "{worst}");
}

// ---------------------------------------------------------------------------------------
// Lambert
// ---------------------------------------------------------------------------------------

#[test]
fn lambert_albedo_is_one() {
    // Evaluated through the registry, as a black box over both angles. Quadrature asked for
    // 1e-13 on a smooth integrand; 1e-12 allows for summing ~100 panel results.
    let q = Quad::new();
    let model = find("lambert_diffuse").unwrap();
    let inner = |t: f64| {
        let g = |_p: f64| model.call(&[])[0];
        q.adaptive(&g, 0.0, 2.0 * PI, 1e-14) * t.cos() * t.sin()
    };
    let albedo = q.adaptive(&inner, 0.0, FRAC_PI_2, 1e-13);
    assert!((albedo - 1.0).abs() <= 1e-12, "{albedo:.16}");
    assert_eq!(diffuse::lambert(), 1.0 / PI);
}

// ---------------------------------------------------------------------------------------
// Reciprocity
// ---------------------------------------------------------------------------------------

/// A small deterministic generator for test directions (64-bit LCG, Knuth's constants).
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }

    /// A direction in the upper hemisphere of +z, not closer than ~1° to the horizon.
    fn upper(&mut self) -> [f64; 3] {
        let c = 0.02 + 0.98 * self.next();
        let s = (1.0 - c * c).sqrt();
        let p = 2.0 * PI * self.next();
        [s * p.cos(), s * p.sin(), c]
    }
}

#[test]
fn cook_torrance_is_reciprocal() {
    // Swapping v and l leaves every term's value the same in exact arithmetic (n·h, v·h = l·h,
    // the symmetric G2 and V); in f64 the swapped evaluation rounds some of ~30 operations
    // differently, so the two may differ by a few units in the last place: 1e-14 relative.
    let mut rng = Lcg(7);
    let n = [0.0, 0.0, 1.0];
    for name in [
        "cook_torrance_rgb",
        "cook_torrance_burley_rgb",
        "cook_torrance_f90_from_f0_rgb",
        "cook_torrance_beckmann_rgb",
        "cook_torrance_fast_rgb",
    ] {
        let m = find(name).unwrap();
        let mut worst = 0.0_f64;
        for _ in 0..500 {
            let (v, l) = (rng.upper(), rng.upper());
            let base = [rng.next(), rng.next(), rng.next()];
            let (metallic, rough) = (rng.next(), 0.05 + 0.95 * rng.next());
            let args = |a: [f64; 3], b: [f64; 3]| {
                let mut x = Vec::with_capacity(14);
                x.extend_from_slice(&n);
                x.extend_from_slice(&a);
                x.extend_from_slice(&b);
                x.extend_from_slice(&base);
                x.extend_from_slice(&[metallic, rough]);
                x
            };
            let f_vl = m.call(&args(v, l));
            let f_lv = m.call(&args(l, v));
            for c in 0..3 {
                worst = worst.max(((f_vl[c] - f_lv[c]) / f_vl[c]).abs());
            }
        }
        println!("{name}: worst relative asymmetry {worst:.2e}");
        assert!(
            worst <= 1e-14,
            "{name}: f(v,l) and f(l,v) differ by {worst:e}"
        );
    }
}

// ---------------------------------------------------------------------------------------
// Directional albedo of the specular lobe
// ---------------------------------------------------------------------------------------

/// Roughness values (rows) and `n·v` values (columns) of the published table.
const ALBEDO_ROUGHNESS: [f64; 10] = [0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1.0];
const ALBEDO_NDOTV: [f64; 5] = [1.0, 0.75, 0.5, 0.25, 0.1];

/// Quadrature accuracy asked for each albedo (absolute): well below the table's 4 decimals.
const ALBEDO_QUAD_TOL: f64 = 1e-7;

/// `E(v) = ∫ f(v, l) (n·l) dω_l` for [`CookTorrance::SPECULAR_ONLY`], by integrating over the
/// microfacet normal `h` instead of `l`: with `l = 2 (v·h) h - v`, `dω_l = 4 (v·h) dω_h`
/// (Walter et al. 2007, the Jacobian of reflection). The BRDF itself is evaluated as a black
/// box at `(v, l)`; the change of variables only puts the quadrature's effort where the lobe
/// is (near `h = n`, width about alpha).
fn specular_albedo(roughness: f64, n_dot_v: f64) -> f64 {
    let q = Quad::new();
    let n = [0.0, 0.0, 1.0];
    let v = [(1.0 - n_dot_v * n_dot_v).sqrt(), 0.0, n_dot_v];
    let model = CookTorrance::SPECULAR_ONLY;
    let alpha = roughness * roughness;
    let inner = |t: f64| {
        let (s, c) = t.sin_cos();
        let g = |p: f64| {
            let h = [s * p.cos(), s * p.sin(), c];
            let v_dot_h = v[0] * h[0] + v[2] * h[2];
            if v_dot_h <= 0.0 {
                return 0.0;
            }
            let l = [
                2.0 * v_dot_h * h[0] - v[0],
                2.0 * v_dot_h * h[1],
                2.0 * v_dot_h * h[2] - v[2],
            ];
            if l[2] <= 0.0 {
                return 0.0;
            }
            let f = model.eval(n, v, l, [1.0; 3], 0.0, roughness)[0];
            f * l[2] * 4.0 * v_dot_h
        };
        // Symmetric in φ about the plane of v: integrate (0, π) and double. The reflected
        // l reaches the horizon (l_z = 2 (v·h) cos θ - n·v = 0) where
        // cos φ = n·v (1 - 2 cos²θ) / (2 cos θ sin θv sin θ): a kink, so a panel break.
        let sin_v = v[0];
        let mut breaks = vec![0.0, FRAC_PI_2, PI];
        if sin_v * s > 0.0 {
            let k = n_dot_v * (1.0 - 2.0 * c * c) / (2.0 * c * sin_v * s);
            if k.abs() < 1.0 {
                breaks.push(k.acos());
                breaks.sort_by(f64::total_cmp);
            }
        }
        2.0 * q.panels(&g, &breaks, ALBEDO_QUAD_TOL / 4.0) * s
    };
    // h beyond θ = (π/2 + θv)/2 reflects v below the horizon: a kink there.
    let theta_v = n_dot_v.acos();
    let kink = (FRAC_PI_2 - theta_v) / 2.0;
    q.panels(
        &inner,
        &lobe_breaks(alpha, &[kink, FRAC_PI_2 - kink]),
        ALBEDO_QUAD_TOL / 2.0,
    )
}

/// The hemispherical average `E_avg = 2 ∫ E(μ) μ dμ` over `μ = n·v` in `(0, 1)`, by a
/// 10-point Gauss-Legendre rule on each of `(0, 0.3)` and `(0.3, 1)` (E varies fastest near
/// grazing). Its quadrature error is below 1e-7: while writing this test, a five-panel rule
/// agreed with it to 3e-8 at every tabulated roughness, and at alpha = 1 it matches the
/// closed form (tested below) to 2e-8.
fn average_albedo(roughness: f64) -> f64 {
    let q = Quad::new();
    let f = |mu: f64| 2.0 * specular_albedo(roughness, mu) * mu;
    q.rule(&f, 0.0, 0.3) + q.rule(&f, 0.3, 1.0)
}

/// Rows: roughness; columns: E at each `ALBEDO_NDOTV`, then `E_avg`.
fn measured_albedo_table() -> &'static Vec<Vec<f64>> {
    static TABLE: OnceLock<Vec<Vec<f64>>> = OnceLock::new();
    TABLE.get_or_init(|| {
        ALBEDO_ROUGHNESS
            .iter()
            .map(|&r| {
                let mut row: Vec<f64> = ALBEDO_NDOTV
                    .iter()
                    .map(|&c| specular_albedo(r, c))
                    .collect();
                row.push(average_albedo(r));
                row
            })
            .collect()
    })
}

/// Parses the published table: lines `| 0.1 | 0.9999 | ... |` after a header row.
fn published_table(text: &str, origin: &str) -> Vec<Vec<f64>> {
    let rows: Vec<Vec<f64>> = text
        .lines()
        .map(|l| l.trim_start_matches("//!").trim())
        .filter(|l| l.starts_with('|'))
        .filter_map(|l| {
            let cells: Vec<&str> = l.trim_matches('|').split('|').map(str::trim).collect();
            let nums: Option<Vec<f64>> = cells.iter().map(|c| c.parse().ok()).collect();
            nums
        })
        .collect();
    assert_eq!(rows.len(), ALBEDO_ROUGHNESS.len(), "{origin}: table rows");
    for (row, &r) in rows.iter().zip(&ALBEDO_ROUGHNESS) {
        assert_eq!(
            row.len(),
            ALBEDO_NDOTV.len() + 2,
            "{origin}: row for roughness {r}"
        );
        assert_eq!(row[0], r, "{origin}: roughness column");
    }
    rows.into_iter().map(|r| r[1..].to_vec()).collect()
}

fn format_table(t: &[Vec<f64>]) -> String {
    let mut text = String::from("| roughness |");
    for c in ALBEDO_NDOTV {
        text.push_str(&format!(" n·v = {c} |"));
    }
    text.push_str(" average |\n|---|");
    for _ in 0..=ALBEDO_NDOTV.len() {
        text.push_str("---|");
    }
    text.push('\n');
    for (row, r) in t.iter().zip(ALBEDO_ROUGHNESS) {
        text.push_str(&format!("| {r:.1} |"));
        for e in row {
            text.push_str(&format!(" {e:.4} |"));
        }
        text.push('\n');
    }
    text
}

#[test]
fn specular_albedo_is_at_most_one_and_matches_the_published_table() {
    let measured = measured_albedo_table();
    println!(
        "measured specular albedo (GGX, height-correlated Smith, F = 1):\n{}",
        format_table(measured)
    );
    for (i, row) in measured.iter().enumerate() {
        for &e in row {
            // Energy conservation, allowing the quadrature's own error.
            assert!(
                e > 0.0 && e <= 1.0 + ALBEDO_QUAD_TOL,
                "roughness {}: {row:?}",
                ALBEDO_ROUGHNESS[i]
            );
        }
    }
    // The published digits are rounded to 4 decimals, so within 0.5e-4 of the exact value;
    // add the quadrature's error (below 1e-7 for E and for the average).
    let tol = 0.5e-4 + ALBEDO_QUAD_TOL;
    for (origin, source) in [
        (
            "harness/reference/brdf.rs",
            include_str!("../../harness/reference/brdf.rs"),
        ),
        (
            "harness/reference/ALBEDO.md",
            include_str!("../../harness/reference/ALBEDO.md"),
        ),
    ] {
        let published = published_table(source, origin);
        for (i, row) in published.iter().enumerate() {
            for (j, &p) in row.iter().enumerate() {
                let m = measured[i][j];
                assert!(
                    (p - m).abs() <= tol,
                    "{origin}: roughness {} column {j}: published {p}, measured {m:.6}; measured table:\n{}",
                    ALBEDO_ROUGHNESS[i],
                    format_table(measured)
                );
            }
        }
    }
}

#[test]
fn specular_albedo_falls_with_roughness_except_near_grazing() {
    // The energy lost by single scattering grows with roughness: E falls as roughness grows
    // for n·v ≥ 0.25 and on average over the hemisphere. Near grazing (n·v = 0.1) it does
    // not: the measured column dips at roughness 0.3 and rises again to 0.5. That is a
    // property of the model, confirmed while writing this test by an independent
    // brute-force integration over l (a numpy midpoint rule on a 4000 x 8000 grid, written
    // from the formulas): 0.92899, 0.88432, 0.88832, 0.89162 at roughness 0.2 .. 0.5.
    let t = measured_albedo_table();
    let grazing = ALBEDO_NDOTV.iter().position(|&c| c == 0.1).unwrap();
    for j in 0..=ALBEDO_NDOTV.len() {
        let column: Vec<f64> = t.iter().map(|row| row[j]).collect();
        let falls = column.windows(2).all(|w| w[1] < w[0]);
        if j == grazing {
            assert!(
                !falls,
                "the grazing column is expected to dip and rise: {column:?}"
            );
            assert!(column[2] < column[3] && column[3] < column[4], "{column:?}");
        } else {
            assert!(falls, "column {j} does not fall with roughness: {column:?}");
        }
    }
}

#[test]
fn specular_albedo_at_alpha_one_has_a_closed_form() {
    // At alpha = 1 GGX is the constant D = 1/π and the height-correlated visibility is
    // 0.5 / (n·l + n·v), so E(μ) = ∫ (1/π) 0.5 n·l / (n·l + μ) dω_l = 1 - μ ln(1 + 1/μ)
    // (integrate over the hemisphere in μ_l). Quadrature asked for 1e-7; the check allows
    // 1e-6, a tenfold margin for the error estimate.
    for mu in [1.0_f64, 0.75, 0.5, 0.25, 0.1, 0.02] {
        let exact = 1.0 - mu * (1.0 + 1.0 / mu).ln();
        let e = specular_albedo(1.0, mu);
        assert!(
            (e - exact).abs() <= 1e-6,
            "μ = {mu}: quadrature {e}, closed form {exact}"
        );
    }
    // Averaged, 2 ∫ (1 - μ ln(1 + 1/μ)) μ dμ = (4/3)(1 - ln 2) (elementary integrals). The
    // average's quadrature is good to 1e-7; the check allows 1e-6.
    let exact = 4.0 / 3.0 * (1.0 - 2f64.ln());
    let avg = average_albedo(1.0);
    assert!(
        (avg - exact).abs() <= 1e-6,
        "average: quadrature {avg}, closed form {exact}"
    );
}

#[test]
fn smooth_lobe_reflects_everything() {
    // As alpha → 0 the lobe with F = 1 becomes a mirror with no masking: E → 1. At
    // roughness 0.05 (alpha 0.0025) and normal view the loss is below 1e-4 (measured; the
    // loss grows roughly like alpha).
    let e = specular_albedo(0.05, 1.0);
    assert!((1.0 - e) < 1e-4 && e <= 1.0 + ALBEDO_QUAD_TOL, "{e}");
}
