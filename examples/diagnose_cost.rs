//! Cost of the hypothesis search on a failing 100,000-point check.
//!
//! The check: the demo library's `brdf` (shaders/brackenfold/materials.wgsl) against
//! `cook_torrance_rgb` over 100,000 seeded points (directions in the upper hemisphere,
//! base colour, metallic, roughness), tolerance rel 1e-4 or abs 1e-6 (the demo suite's), with
//! one mistake planted in memory. The example times, in one run: the evaluator over every
//! point, the reference over every point, the pass/fail judgement, and the search with its
//! default sampling (up to 2,000 failing and 2,000 passing points) and with no sampling.
//!
//! It then runs the failing checks of the planted suite
//! (shaders/brackenfold-planted/shadegate.toml) through the gate twice, in one run: with every
//! explainer and without the diagnosis (`gate::explain::WITHOUT_DIAGNOSIS`: no hypothesis
//! search, no call-graph attribution), best of 5 each, and prints the time the diagnosis adds
//! as a ratio to the check without it.
//!
//! Run: `cargo run --release --example diagnose_cost`. It prints one table per mistake.
use std::collections::BTreeMap;
use std::time::Instant;

use shadegate::diagnose::{self, Options};
use shadegate::eval::{bits_to_f64, f64_to_bits, Program, ScalarKind};
use shadegate::reference;
use shadegate::wgsl::Shader;

const N: usize = 100_000;
const LIBRARY: &str = include_str!("../shaders/brackenfold/materials.wgsl");

fn points() -> Vec<Vec<f64>> {
    let mut rng = shadegate::sweep::Rng::new(0xb4ac_6e0f_u64);
    let mut next = || rng.unit();
    let f = |x: f64| f64::from(x as f32);
    (0..N)
        .map(|_| {
            let mut p = vec![0.0, 0.0, 1.0];
            for _ in 0..2 {
                let z = 0.02 + 0.98 * next();
                let phi = std::f64::consts::TAU * next();
                let r = (1.0 - z * z).sqrt();
                p.extend([f(r * phi.cos()), f(r * phi.sin()), f(z)]);
            }
            let a = next();
            p.extend([f(a), f(a * 0.85), f(a * 0.7)]);
            p.push(if next() < 0.5 { 0.0 } else { 1.0 });
            p.push(f(0.05 + 0.95 * next()));
            p
        })
        .collect()
}

fn pass(_: usize, got: &[f64], want: &[f64]) -> bool {
    got.iter().zip(want).all(|(&g, &w)| {
        let e = (g - w).abs();
        (g.is_nan() && w.is_nan()) || e <= 1e-6 || e <= 1e-4 * w.abs()
    })
}

fn ms(t: Instant) -> f64 {
    t.elapsed().as_secs_f64() * 1e3
}

/// The gate on the planted suite's failing checks, with and without the diagnosis.
fn gate_cost() {
    use shadegate::gate::{self, explain, Verdict};
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("shaders/brackenfold-planted/shadegate.toml");
    let suite = shadegate::suite::load(&path).unwrap_or_else(|d| panic!("{d}"));
    println!("gate, planted suite: check with the diagnosis vs without (best of 5, one run)");
    println!(
        "{:<18} {:>8} {:>12} {:>12} {:>8}",
        "check", "points", "without ms", "with ms", "ratio"
    );
    let best = |f: &dyn Fn() -> f64| (0..5).map(|_| f()).fold(f64::INFINITY, f64::min);
    let (mut total_without, mut total_with) = (0.0, 0.0);
    for c in &suite.checks {
        let time = |table: &[&dyn explain::Explainer]| {
            let t = Instant::now();
            let r = gate::run_check_explained(&suite, c, None, table);
            assert_ne!(r.verdict, Verdict::Error, "{:?}", r.error);
            (ms(t), r.verdict)
        };
        if time(explain::WITHOUT_DIAGNOSIS).1 != Verdict::Fail {
            continue;
        }
        let without = best(&|| time(explain::WITHOUT_DIAGNOSIS).0);
        let with = best(&|| time(explain::EXPLAINERS).0);
        total_without += without;
        total_with += with;
        println!(
            "{:<18} {:>8} {:>12.1} {:>12.1} {:>7.2}x",
            c.name,
            c.sweep.len(),
            without,
            with,
            with / without
        );
    }
    println!(
        "{:<18} {:>8} {:>12.1} {:>12.1} {:>7.2}x",
        "all failing",
        "",
        total_without,
        total_with,
        total_with / total_without
    );
}

fn main() {
    gate_cost();
    let pts = points();
    let model = reference::find("cook_torrance_rgb").unwrap();
    let args: Vec<Vec<f64>> = (0..model.arity())
        .map(|c| pts.iter().map(|p| p[c]).collect())
        .collect();
    let inputs: Vec<Vec<u32>> = args
        .iter()
        .map(|c| c.iter().map(|&x| f64_to_bits(ScalarKind::F32, x)).collect())
        .collect();
    let input_refs: Vec<&[u32]> = inputs.iter().map(Vec::as_slice).collect();
    let arg_refs: Vec<&[f64]> = args.iter().map(Vec::as_slice).collect();

    for (label, from, to) in [
        ("pi as 3.14 in D", "PI * dd * dd", "3.14 * dd * dd"),
        (
            "roughness remap skipped",
            "alpha_from_roughness(roughness)",
            "roughness",
        ),
        (
            "Fresnel at n.v",
            "pow(1.0 - v_dot_h, 5.0)",
            "pow(1.0 - n_dot_v, 5.0)",
        ),
    ] {
        // The edit is made inside `brdf` (other functions share some of its text).
        let at = LIBRARY.find("fn brdf(").unwrap();
        let source = format!("{}{}", &LIBRARY[..at], LIBRARY[at..].replacen(from, to, 1));
        assert_ne!(source, LIBRARY, "{from} not in brdf");
        let shader = Shader::from_source("planted.wgsl", source).unwrap();
        let program = Program::compile(&shader, "brdf", &BTreeMap::new()).unwrap();

        let t = Instant::now();
        let mut out = Vec::new();
        program.eval(&input_refs, &mut out);
        let t_eval = ms(t);
        let got: Vec<Vec<f64>> = out
            .iter()
            .map(|c| c.iter().map(|&b| bits_to_f64(ScalarKind::F32, b)).collect())
            .collect();

        let t = Instant::now();
        let want: Vec<Vec<f64>> = pts.iter().map(|p| model.call(p)).collect();
        let t_ref = ms(t);

        let t = Instant::now();
        let failing: Vec<usize> = (0..N)
            .filter(|&i| {
                let g = [got[0][i], got[1][i], got[2][i]];
                !pass(i, &g, &want[i])
            })
            .collect();
        let t_judge = ms(t);
        let got_refs: Vec<&[f64]> = got.iter().map(Vec::as_slice).collect();

        let t = Instant::now();
        let fits = diagnose::search(
            model.name,
            &arg_refs,
            &got_refs,
            pass,
            &failing,
            &Options::default(),
        )
        .unwrap();
        let t_search = ms(t);

        let all = Options {
            max_failing: N,
            max_passing: N,
            ..Options::default()
        };
        let t = Instant::now();
        let fits_all =
            diagnose::search(model.name, &arg_refs, &got_refs, pass, &failing, &all).unwrap();
        let t_search_all = ms(t);

        let check = t_eval + t_ref + t_judge;
        println!("{label}: {} of {N} points fail", failing.len());
        println!(
            "  top fit (sampled): {} explained {:.3} kept {:.3}; unsampled: {}",
            fits.first().map_or("none", |f| f.hypothesis.id),
            fits.first().map_or(0.0, |f| f.explained),
            fits.first().map_or(0.0, |f| f.kept),
            fits_all.first().map_or("none", |f| f.hypothesis.id),
        );
        println!("  evaluator {t_eval:9.1} ms");
        println!("  reference {t_ref:9.1} ms");
        println!("  judgement {t_judge:9.1} ms");
        println!(
            "  search, sampled   {t_search:9.1} ms  = {:.2}x the check (evaluator + reference + judgement)",
            t_search / check
        );
        println!(
            "  search, all points {t_search_all:8.1} ms  = {:.2}x the check",
            t_search_all / check
        );
    }
}
