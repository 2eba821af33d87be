//! The spec-bound number model (`Arithmetic::SpecBounds`): results of inexact
//! operations move within, and only within, the WGSL spec's accuracy bounds
//! (W3C WGSL, "Floating Point Accuracy", the table in shared/naga-wgsl.md 2.1),
//! deterministically per seed. Reference values: Rust's f64 functions, whose
//! error (< 1 ULP of f64) is negligible at f32 resolution.

use std::collections::BTreeMap;

use shadegate::eval::{Arithmetic, Program};
use shadegate::wgsl::Shader;

const SRC: &str = r#"
fn f_exp(x: f32) -> f32 { return exp(x); }
fn f_log(x: f32) -> f32 { return log(x); }
fn f_sin(x: f32) -> f32 { return sin(x); }
fn f_div(x: f32, y: f32) -> f32 { return x / y; }
fn f_atan(x: f32) -> f32 { return atan(x); }
fn f_isqrt(x: f32) -> f32 { return inverseSqrt(x); }
fn f_exact(x: f32, y: f32) -> f32 { return x * y + x - y; }
fn f_pow(x: f32) -> f32 { return pow(x, 2.2); }
"#;

fn eval(name: &str, arith: Arithmetic, cols: &[Vec<f32>]) -> Vec<f32> {
    let shader = Shader::from_source("bounds.wgsl", SRC.to_string()).unwrap();
    let p = Program::compile_with(&shader, name, &BTreeMap::new(), arith).unwrap();
    let bits: Vec<Vec<u32>> = cols
        .iter()
        .map(|c| c.iter().map(|x| x.to_bits()).collect())
        .collect();
    let refs: Vec<&[u32]> = bits.iter().map(|c| &c[..]).collect();
    let mut out = Vec::new();
    p.try_eval(&refs, &mut out).unwrap();
    out.remove(0).into_iter().map(f32::from_bits).collect()
}

/// Error of `got` against the f64 value, in f32 ULPs at the f64 value.
fn ulps(want: f64, got: f32) -> f64 {
    let w = (want as f32).abs();
    let ulp = f64::from(f32::from_bits(w.to_bits() + 1)) - f64::from(w);
    (want - f64::from(got)).abs() / ulp
}

const SEED: Arithmetic = Arithmetic::SpecBounds { seed: 7 };

fn grid(lo: f32, hi: f32, n: usize) -> Vec<f32> {
    (0..n)
        .map(|i| lo + (hi - lo) * i as f32 / (n - 1) as f32)
        .collect()
}

/// Checks `bound(x, want, got)` for every point and that at least `min_moved`
/// of the points differ from the exact model (the model really perturbs).
fn check(
    name: &str,
    xs: Vec<f32>,
    f: fn(f64) -> f64,
    bound: fn(f64, f64, f32) -> bool,
    min_moved: f64,
) {
    let exact = eval(name, Arithmetic::Exact, std::slice::from_ref(&xs));
    let moved = eval(name, SEED, std::slice::from_ref(&xs));
    let mut differ = 0;
    for (i, &x) in xs.iter().enumerate() {
        let want = f(f64::from(x));
        assert!(
            bound(f64::from(x), want, moved[i]),
            "{name}({x}) = {} outside the spec bound (f64 {want})",
            moved[i]
        );
        differ += usize::from(moved[i].to_bits() != exact[i].to_bits());
    }
    let share = differ as f64 / xs.len() as f64;
    assert!(
        share >= min_moved,
        "{name}: only {share:.3} of points moved"
    );
}

#[test]
fn exp_moves_within_3_plus_2x_ulp() {
    check(
        "f_exp",
        grid(-20.0, 20.0, 4001),
        f64::exp,
        |x, w, g| ulps(w, g) <= 3.0 + 2.0 * x.abs(),
        0.9,
    );
}

#[test]
fn log_moves_within_2_pow_minus_21_absolute_near_1_and_3_ulp_elsewhere() {
    check(
        "f_log",
        grid(0.01, 50.0, 4001),
        f64::ln,
        |x, w, g| {
            if (0.5..=2.0).contains(&x) {
                (w - f64::from(g)).abs() <= 2f64.powi(-21)
            } else {
                ulps(w, g) <= 3.0
            }
        },
        // Near x = 1 the 2^-21 absolute bound is below one ULP of the tiny
        // result, so those points cannot move; three quarters do.
        0.75,
    );
}

#[test]
fn sin_moves_within_2_pow_minus_11_absolute_on_minus_pi_to_pi() {
    check(
        "f_sin",
        grid(-std::f32::consts::PI, std::f32::consts::PI, 4001),
        f64::sin,
        |_, w, g| (w - f64::from(g)).abs() <= 2f64.powi(-11),
        0.9,
    );
}

#[test]
fn atan_moves_within_4096_ulp() {
    check(
        "f_atan",
        grid(-100.0, 100.0, 4001),
        f64::atan,
        |_, w, g| ulps(w, g) <= 4096.0,
        0.9,
    );
}

#[test]
fn inverse_sqrt_moves_within_2_ulp() {
    check(
        "f_isqrt",
        grid(0.01, 100.0, 4001),
        |x| 1.0 / x.sqrt(),
        |_, w, g| ulps(w, g) <= 2.0,
        0.5,
    );
}

#[test]
fn pow_moves_within_its_inherited_exp2_bound() {
    // pow(x, y) inherits from exp2(y·log2 x): 3 + 2·|y·log2 x| ULP at least.
    // The exponent is the f32 literal 2.2, i.e. 2.2000000476837158.
    const Y: f64 = 2.2f32 as f64;
    check(
        "f_pow",
        grid(0.05, 20.0, 4001),
        |x| x.powf(Y),
        |x, w, g| ulps(w, g) <= 3.0 + 2.0 * (Y * x.log2()).abs(),
        0.5,
    );
}

#[test]
fn division_moves_within_2_5_ulp() {
    let xs = grid(-50.0, 50.0, 2001);
    let ys: Vec<f32> = (0..2001).map(|i| 0.37 + i as f32 * 0.013).collect();
    let got = eval("f_div", SEED, &[xs.clone(), ys.clone()]);
    let exact = eval("f_div", Arithmetic::Exact, &[xs.clone(), ys.clone()]);
    let mut moved = 0;
    for i in 0..xs.len() {
        let want = f64::from(xs[i]) / f64::from(ys[i]);
        if want != 0.0 {
            assert!(
                ulps(want, got[i]) <= 2.5,
                "{} / {} = {}",
                xs[i],
                ys[i],
                got[i]
            );
        }
        moved += usize::from(got[i] != exact[i]);
    }
    assert!(moved > xs.len() / 2, "division barely moved: {moved}");
}

#[test]
fn correctly_rounded_operations_never_move() {
    let xs = grid(-10.0, 10.0, 3001);
    let ys = grid(3.0, -7.0, 3001);
    let exact = eval("f_exact", Arithmetic::Exact, &[xs.clone(), ys.clone()]);
    let moved = eval("f_exact", SEED, &[xs, ys]);
    assert!(exact
        .iter()
        .zip(&moved)
        .all(|(a, b)| a.to_bits() == b.to_bits()));
}

#[test]
fn the_model_is_deterministic_per_seed() {
    let xs = grid(-5.0, 5.0, 1001);
    let a = eval("f_exp", SEED, std::slice::from_ref(&xs));
    let b = eval("f_exp", SEED, std::slice::from_ref(&xs));
    let c = eval("f_exp", Arithmetic::SpecBounds { seed: 8 }, &[xs]);
    assert!(a.iter().zip(&b).all(|(x, y)| x.to_bits() == y.to_bits()));
    assert!(
        a.iter()
            .zip(&c)
            .filter(|(x, y)| x.to_bits() != y.to_bits())
            .count()
            > 500
    );
}
