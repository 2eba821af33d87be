//! Numerical integration for the integrated models ([`super::multiscatter`],
//! [`super::envbrdf`]): adaptive Gauss-Legendre quadrature on panels.
//!
//! The rule is the 10-point Gauss-Legendre rule (nodes from Newton's method on the Legendre
//! recurrence); [`adaptive`] bisects a panel until the two halves agree with the whole to
//! the requested absolute tolerance (halved at each level), to a depth of 40. The error
//! estimate is heuristic, so the accuracy the models claim is measured, not assumed: the
//! tests compare the integrated models with an independent quadrature (mpmath at 30 digits
//! in `tools/refgen/refgen.py`) and with closed forms.

use std::f64::consts::PI;
use std::sync::OnceLock;

const N: usize = 10;

fn rule_nodes() -> &'static ([f64; N], [f64; N]) {
    static NODES: OnceLock<([f64; N], [f64; N])> = OnceLock::new();
    NODES.get_or_init(|| {
        let mut x = [0.0; N];
        let mut w = [0.0; N];
        let legendre = |z: f64| {
            let (mut p0, mut p1) = (1.0, z);
            for k in 2..=N {
                let kf = k as f64;
                let p2 = ((2.0 * kf - 1.0) * z * p1 - (kf - 1.0) * p0) / kf;
                p0 = p1;
                p1 = p2;
            }
            (p1, N as f64 * (z * p1 - p0) / (z * z - 1.0))
        };
        for i in 0..N {
            let mut z = (PI * (i as f64 + 0.75) / (N as f64 + 0.5)).cos();
            for _ in 0..100 {
                let (p, dp) = legendre(z);
                let dz = p / dp;
                z -= dz;
                if dz.abs() < 1e-16 {
                    break;
                }
            }
            let (_, dp) = legendre(z);
            x[i] = z;
            w[i] = 2.0 / ((1.0 - z * z) * dp * dp);
        }
        (x, w)
    })
}

/// The 10-point Gauss-Legendre rule on `[a, b]`.
pub fn rule(f: &dyn Fn(f64) -> f64, a: f64, b: f64) -> f64 {
    let (x, w) = rule_nodes();
    let (m, h) = ((a + b) / 2.0, (b - a) / 2.0);
    (0..N).map(|i| w[i] * f(m + h * x[i])).sum::<f64>() * h
}

/// The nodes and weights of the 10-point Gauss-Legendre rule on `[a, b]`
/// (for integrands evaluated elsewhere, e.g. in batches through the evaluator).
pub fn nodes(a: f64, b: f64) -> impl Iterator<Item = (f64, f64)> {
    let (x, w) = rule_nodes();
    let (m, h) = ((a + b) / 2.0, (b - a) / 2.0);
    (0..N).map(move |i| (m + h * x[i], w[i] * h))
}

/// Adaptive integral of `f` over `[a, b]`, to an absolute tolerance of about `tol`.
pub fn adaptive(f: &dyn Fn(f64) -> f64, a: f64, b: f64, tol: f64) -> f64 {
    let whole = rule(f, a, b);
    refine(f, a, b, whole, tol, 0)
}

fn refine(f: &dyn Fn(f64) -> f64, a: f64, b: f64, whole: f64, tol: f64, depth: u32) -> f64 {
    let m = (a + b) / 2.0;
    let left = rule(f, a, m);
    let right = rule(f, m, b);
    if (left + right - whole).abs() <= tol || depth >= 40 {
        return left + right;
    }
    refine(f, a, m, left, tol / 2.0, depth + 1) + refine(f, m, b, right, tol / 2.0, depth + 1)
}

/// Adaptive integral over the consecutive panels `breaks[i] .. breaks[i + 1]` (sorted),
/// the tolerance shared equally between them.
pub fn panels(f: &dyn Fn(f64) -> f64, breaks: &[f64], tol: f64) -> f64 {
    let per = tol / (breaks.len().max(2) - 1) as f64;
    breaks
        .windows(2)
        .map(|p| adaptive(f, p[0], p[1], per))
        .sum()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rule_is_exact_for_polynomials_of_degree_19() {
        // Gauss-Legendre with 10 nodes integrates x^k exactly for k ≤ 19 (a textbook fact).
        for k in 0..20 {
            let got = rule(&|x: f64| x.powi(k), 0.0, 1.0);
            let want = 1.0 / (k as f64 + 1.0);
            assert!((got - want).abs() <= 1e-15, "x^{k}: {got} vs {want}");
        }
        let deg20 = rule(&|x: f64| x.powi(20), 0.0, 1.0);
        assert!((deg20 - 1.0 / 21.0).abs() > 1e-16, "degree 20 is not exact");
    }

    #[test]
    fn adaptive_handles_a_kink_and_a_peak() {
        // ∫ |x - 1/3| dx on [0, 1] = 5/18; ∫ 1/(1e-6 + x²) on [-1, 1] = 2e3 atan(1e3).
        let kink = adaptive(&|x: f64| (x - 1.0 / 3.0).abs(), 0.0, 1.0, 1e-12);
        assert!((kink - 5.0 / 18.0).abs() <= 1e-11, "{kink}");
        let peak = panels(&|x: f64| 1.0 / (1e-6 + x * x), &[-1.0, 0.0, 1.0], 1e-6);
        let want = 2e3 * 1e3_f64.atan();
        assert!((peak - want).abs() <= 1e-8 * want, "{peak} vs {want}");
    }
}
