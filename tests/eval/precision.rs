//! The precision analysis (`shadegate::precision`) on functions analysed by
//! hand (`tests/data/precision/hand.wgsl`), and against the spec-bound number
//! model. Every expected value below is derived in the comment beside it
//! from IEEE 754 binary16/binary32 rounding (round to nearest, ties to even)
//! and, where said, recomputed with numpy's float32 and Python's exact
//! fractions.

use shadegate::eval::{f64_to_bits, Arithmetic, Program, ScalarKind};
use shadegate::precision::{analyse, Analysis, OpStats, Options};
use shadegate::wgsl::Shader;

const HAND: &str = "tests/data/precision/hand.wgsl";

fn shader() -> Shader {
    Shader::load(HAND.as_ref()).unwrap()
}

/// Analyse `function` at `points` (one row of values per point, one value
/// per input leaf).
#[track_caller]
fn check(function: &str, points: &[Vec<f64>], arithmetic: Arithmetic) -> Analysis {
    let sh = shader();
    let p = Program::compile_with(&sh, function, &Default::default(), arithmetic).unwrap();
    analyse_points(&sh, &p, None, points)
}

#[track_caller]
fn analyse_points(
    sh: &Shader,
    p: &Program,
    twin: Option<&Program>,
    points: &[Vec<f64>],
) -> Analysis {
    let leaves = p.input_leaves();
    let cols: Vec<Vec<u32>> = (0..leaves.len())
        .map(|i| {
            points
                .iter()
                .map(|row| f64_to_bits(leaves[i].1, row[i]))
                .collect()
        })
        .collect();
    let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
    let a = analyse(p, &refs, &sh.source, twin, &Options::default()).unwrap();
    assert!(
        a.internal_errors.is_empty(),
        "the shadow's working values differ from the evaluator's: {:?}",
        a.internal_errors
    );
    a
}

/// The operations of line `line`.
fn ops(a: &Analysis, line: u32) -> Vec<&OpStats> {
    a.lines
        .iter()
        .filter(|l| l.line == line)
        .flat_map(|l| l.ops.iter())
        .collect()
}

fn f16(x: f64) -> f64 {
    half::f16::from_f64(x).to_f64()
}

/// n = (sin 0.7, 0, cos 0.7) and h tilted from it by `theta`, with `alpha`.
fn ggx_point(theta: f64, alpha: f64) -> Vec<f64> {
    let p0: f64 = 0.7;
    vec![
        p0.sin(),
        0.0,
        p0.cos(),
        (p0 + theta).sin(),
        0.0,
        (p0 + theta).cos(),
        alpha,
    ]
}

fn ggx_sweep() -> Vec<Vec<f64>> {
    let mut pts = Vec::new();
    for i in 0..100 {
        for alpha in [0.002, 0.01, 0.05, 0.2] {
            pts.push(ggx_point(0.3 * f64::from(i) / 99.0, alpha));
        }
    }
    pts
}

#[test]
fn textbook_ggx_in_f16_names_the_cancelling_line() {
    // Line 12 is `let s2 = 1.0h - c2;`. At theta = 0 (h = n), with n =
    // (0.64404296875, 0, 0.7646484375) in f16, the f16 dot product is
    // 0.9990234375 (the exact n·n is 0.99947874...), its square rounds to
    // 0.998046875 and s2 = 1 - 0.998046875 = 2^-9 exactly, so
    // log2(1 / 2^-9) = 9 bits cancel; the f64 value of s2 from the same f16
    // inputs is 0.0010425709846799691, so s2 carries a relative error of
    // 0.87337 (numpy float16 and Python fractions). Over the sweep the
    // worst case is 10 bits: operands 1 and 0.9990234375 (theta = 0.00606).
    let one = check(
        "ggx_textbook_f16",
        &[ggx_point(0.0, 0.01)],
        Arithmetic::Exact,
    );
    let s = ops(&one, 12)[0];
    assert_eq!(s.op, "FSub");
    assert!(s.half);
    assert_eq!(s.max_cancel_bits, 9.0);
    assert_eq!(
        s.cancel_point.as_ref().unwrap().operands,
        vec![1.0, 0.998046875]
    );
    let s2e = 0.0010425709846799691f64;
    let want = (2f64.powi(-9) - s2e) / s2e;
    assert!(
        (s.max_carried_rel - want).abs() < 1e-9,
        "{} vs {want}",
        s.max_carried_rel
    );
    // The subtraction itself is exact (Sterbenz): no local error.
    assert_eq!(s.max_local_ulp, 0.0);

    let a = check("ggx_textbook_f16", &ggx_sweep(), Arithmetic::Exact);
    let s = ops(&a, 12)[0];
    assert_eq!(s.max_cancel_bits, 10.0);
    let w = s.cancel_point.as_ref().unwrap();
    assert_eq!(w.operands, vec![1.0, 0.9990234375]);
    assert!(
        w.inputs.contains("alpha="),
        "inputs are named: {}",
        w.inputs
    );
    assert!(s.cancellations > 0);
    // The hint names the cure with this line, and the cross-product form
    // because the squared value is a dot product.
    assert!(a
        .hints
        .iter()
        .any(|h| h.line == 12 && h.cure.contains("(1 - x) * (1 + x)")));
    assert!(a
        .hints
        .iter()
        .any(|h| h.line == 12 && h.cure.contains("cross")));
    // The error the subtraction exposes comes from the rounded dot product
    // (line 10): taking that line exactly removes most of the final error.
    let share = |l: u32| a.lines.iter().find(|x| x.line == l).unwrap().share;
    assert!(share(10) > 0.5, "{}", share(10));
    // The text names the line, the bits and the inputs.
    let t = shadegate::precision::text(&a);
    assert!(t.contains("cancels up to 10.0 bits"), "{t}");
    assert!(t.contains("let s2 = 1.0h - c2;"), "{t}");
}

#[test]
fn cross_product_form_reports_the_overflow_a_clamp_hides() {
    // At theta = 0 and alpha = 0.002 (f16: 0.0020008087158203125): the cross
    // product is 0, a = dot(n, h) * alpha rounds near alpha, a * a is about
    // 4.0e-6 (an f16 subnormal), k = alpha / (a * a) is about 500 and k * k
    // about 2.5e5 > 65504, the largest f16: the first multiplication on line
    // 23 overflows. `min(d, 65504.0h)` on line 24 turns the infinity back
    // into 65504, so the result is finite and nothing else would show it.
    let a = check(
        "ggx_cross_f16",
        &[ggx_point(0.0, 0.002), ggx_point(0.2, 0.2)],
        Arithmetic::Exact,
    );
    let line23 = ops(&a, 23);
    let ov = line23
        .iter()
        .find_map(|o| o.overflow.as_ref())
        .expect("an overflow on line 23");
    assert_eq!(ov.count, 1, "only the first point overflows");
    assert_eq!(ov.hidden, 1, "and its result is finite all the same");
    assert_eq!(ov.hidden_by, Some((24, "FMin".to_string())));
    assert!(
        (2.0e5..3.0e5).contains(&ov.first.value),
        "k*k in f64 is about 2.5e5: {}",
        ov.first.value
    );
    assert_eq!(ov.first.point, 0);
    // The subnormal a * a (line 22) is reported as an underflow too.
    assert!(ops(&a, 22).iter().any(|o| o.underflow.is_some()));
    assert!(a
        .hints
        .iter()
        .any(|h| h.line == 23 && h.cure.contains("65504")));
}

#[test]
fn benign_cancellation_is_exact_and_explains_nothing() {
    // x = 1 + 2^-23 and y = 1 are exact inputs; x - y = 2^-23 exactly
    // (Sterbenz lemma), so 23 bits cancel (log2((1 + 2^-23) / 2^-23) =
    // 23.0000002) but no error is carried and the result is exact.
    let x = 1.0 + 2f64.powi(-23);
    let a = check("benign", &[vec![x, 1.0], vec![3.0, 1.0]], Arithmetic::Exact);
    let s = ops(&a, 30)[0];
    assert_eq!(s.op, "FSub");
    assert!(
        (s.max_cancel_bits - 23.0).abs() < 1e-6,
        "{}",
        s.max_cancel_bits
    );
    assert_eq!(s.max_carried_rel, 0.0);
    assert_eq!(a.final_error.max_ulp, 0.0);
    assert!(a.lines.iter().all(|l| l.share == 0.0));
    assert!(a.hints.is_empty(), "nothing to cure: {:?}", a.hints);
}

#[test]
fn rounded_square_cancels_in_f32_and_the_factored_twin_cures_it() {
    // x = 0.9999 (f32: 0.9998999834060669). x * x rounds to
    // 0.9997999668121338, 1.000331906e-8 below the exact square; 1 - x*x is
    // then exact (Sterbenz) at 2.0003318786621094e-4 while the exact value
    // is 2.0002318454714896e-4: relative error 839/16776377 = 5.0012e-5,
    // and log2(0.99979997 / 2.0003319e-4) = 12.2875 bits cancelled (numpy
    // float32 and Python fractions). The factored form (1 - x)(1 + x) gives
    // 2.0002319070044905e-4, relative error 3.08e-8.
    let sh = shader();
    let p = Program::compile(&sh, "one_minus_square", &Default::default()).unwrap();
    let t = Program::compile(&sh, "one_minus_square_factored", &Default::default()).unwrap();
    let a = analyse_points(&sh, &p, Some(&t), &[vec![0.9999]]);
    let s = ops(&a, 37)
        .into_iter()
        .find(|o| o.op == "FSub")
        .expect("the subtraction");
    assert!(
        (s.max_cancel_bits - 12.2875).abs() < 1e-3,
        "{}",
        s.max_cancel_bits
    );
    let want = 839.0 / 16776377.0;
    assert!(
        (s.max_carried_rel - want).abs() < 1e-3 * want,
        "{} vs {want}",
        s.max_carried_rel
    );
    assert!((a.final_error.max_rel - want).abs() < 1e-3 * want);
    // The square (line 36) is where the error comes from. Two lines, so
    // both orders are run and the shares are exact Shapley values: the
    // square's is (v(∅) − v({36}) + v({37}) − 0) / 2, the subtraction's
    // (v(∅) − v({37}) + v({36}) − 0) / 2, over v(∅) = 5.0012e-5. Taking the
    // subtraction exactly changes nothing (it is exact already): v({37}) =
    // v(∅). Taking the square exactly leaves the rounding of the exact
    // result to f32, 2.0002318454714896e-4 → 2.0002319070044905e-4, relative
    // 3.0763e-8 = v({36}) (numpy float32). So the subtraction's share is
    // 3.0763e-8 / (2 · 5.0012e-5) = 3.0756e-4 and the square's the rest;
    // alone, the subtraction explains exactly nothing.
    let line = |l: u32| a.lines.iter().find(|x| x.line == l).unwrap();
    let sub_share = 3.0762934e-8 / (2.0 * want);
    assert!(
        (line(37).share - sub_share).abs() < 1e-3 * sub_share,
        "{} vs {sub_share}",
        line(37).share
    );
    assert!((line(36).share + line(37).share - 1.0).abs() < 1e-12);
    assert_eq!(line(37).alone, 0.0);
    assert!(a.share_exhaustive && a.share_orders == 2);
    assert_eq!(a.share_margin, 0.0);
    assert_eq!(a.unattributed, 0.0);
    let h = a
        .hints
        .iter()
        .find(|h| h.cure.contains("(1 - x) * (1 + x)"))
        .expect("the factoring hint");
    let (before, after) = h.measured.expect("a twin was given");
    assert!((before - want).abs() < 1e-3 * want);
    assert!(after < 1e-7, "the factored twin: {after}");
}

#[test]
fn subnormal_and_flushed_f16_products_are_reported() {
    // 2^-8 * 2^-10 = 2^-18: below 2^-14, the smallest normal f16, but a
    // multiple of 2^-24, so an exact subnormal. 2^-13 * 2^-13 = 2^-26 is
    // below half the smallest subnormal (2^-25) and rounds to zero; the
    // final result 0 * 1024 is then 100 % wrong (exact: 2^-16).
    let a = check(
        "tiny_product_f16",
        &[
            vec![2f64.powi(-8), 2f64.powi(-10)],
            vec![2f64.powi(-13), 2f64.powi(-13)],
        ],
        Arithmetic::Exact,
    );
    let u = ops(&a, 47)
        .into_iter()
        .find_map(|o| o.underflow.as_ref())
        .expect("an underflow on line 47");
    assert_eq!(u.subnormal, 1);
    assert_eq!(u.flushed, 1);
    assert_eq!(u.first.point, 0);
    assert_eq!(u.first.value, 2f64.powi(-18));
    assert_eq!(a.final_error.max_rel, 1.0);
}

#[test]
fn integral_pow_is_an_amplifier() {
    // pow(y, 8) multiplies y's relative error by 8: y = x * 1.0000001 rounds
    // (relative error up to 2^-24), so pow's result carries up to about
    // 8 * 2^-24 = 4.8e-7.
    let pts: Vec<Vec<f64>> = (0..64).map(|i| vec![1.0 + f64::from(i) / 64.0]).collect();
    let a = check("pow_amplifier", &pts, Arithmetic::Exact);
    let amp = ops(&a, 55)
        .into_iter()
        .find_map(|o| o.amplifier.as_ref())
        .expect("pow is an amplifier");
    assert!(amp.kind.contains("integral exponent 8"));
    assert_eq!(amp.factor, 8.0);
    assert!(amp.worst_rel > 2f64.powi(-24) && amp.worst_rel < 9.0 * 2f64.powi(-24));
}

#[test]
fn spec_bound_model_stays_within_the_wgsl_accuracy_bounds() {
    // Under the spec-bound model every inexact operation moves within its
    // WGSL bound ("Floating Point Accuracy"): division 2.5 ULP, exp
    // 3 + 2|x| ULP (x in [-1, 1] here: at most 5), sqrt (inherited from
    // 1 / inverseSqrt) 4.5 ULP, + - * correctly rounded (0.5 ULP). The shadow
    // executor measures each operation's local error against the f64 value
    // of the same operation on the same operands; it must stay within those
    // bounds, and some must exceed the exact model's 0.5 ULP (else the test
    // could not tell the models apart).
    let src = "fn f(x: f32, y: f32) -> f32 {\n    let q = x / y;\n    let e = exp(x);\n    let r = sqrt(y);\n    return q + e * r;\n}\n";
    let sh = Shader::from_source("spec.wgsl", src.to_string()).unwrap();
    let mut moved = 0.0f64;
    for seed in 1..4 {
        let p = Program::compile_with(
            &sh,
            "f",
            &Default::default(),
            Arithmetic::SpecBounds { seed },
        )
        .unwrap();
        let mut pts = Vec::new();
        for i in 0..40 {
            for j in 1..40 {
                pts.push(vec![-1.0 + f64::from(i) / 20.0, f64::from(j) / 7.0]);
            }
        }
        let a = analyse_points(&sh, &p, None, &pts);
        let bound = |op: &str| match op {
            "FDiv" => 2.5,
            "FExp" => 5.0,
            "FSqrt" => 4.5,
            _ => 0.5,
        };
        for l in &a.lines {
            for o in &l.ops {
                assert!(
                    o.max_local_ulp <= bound(&o.op),
                    "line {}: {} moved {} ULP, bound {}",
                    o.line,
                    o.op,
                    o.max_local_ulp,
                    bound(&o.op)
                );
                moved = moved.max(o.max_local_ulp);
            }
        }
    }
    assert!(moved > 0.5, "the spec-bound model moved nothing: {moved}");
}

#[test]
fn f16_inputs_are_the_values_the_function_sees() {
    // The analysis works on the f16 values of f16 arguments: alpha 0.002
    // is 0.0020008087158203125 in f16, and the worst-point text says so.
    let a = check(
        "ggx_textbook_f16",
        &[ggx_point(0.0, 0.002)],
        Arithmetic::Exact,
    );
    assert!(
        a.final_error
            .worst_inputs
            .contains(&format!("alpha={}", f16(0.002))),
        "{}",
        a.final_error.worst_inputs
    );
    let _ = ScalarKind::F16;
}

#[test]
fn shadow_working_values_equal_the_evaluator_on_every_demo_check() {
    // The shadow executor computes its working values with the same lane
    // kernels; `analyse` compares them with `Program::eval` at every point
    // and reports any difference as an internal error. Every check of the
    // demo suite, on an evenly strided subset of at most 4,096 points (the
    // shares on 256 of them).
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/shadegate.toml");
    let suite = shadegate::suite::load(path.as_ref()).unwrap();
    let mut analysed = 0;
    for c in &suite.checks {
        let Ok(ev) = shadegate::gate::evaluate(&suite, c, None) else {
            continue;
        };
        let n = ev.input_columns.first().map_or(0, Vec::len);
        if n == 0 {
            continue;
        }
        let stride = n.div_ceil(4096);
        let cols: Vec<Vec<u32>> = ev
            .input_columns
            .iter()
            .map(|col| col.iter().step_by(stride).copied().collect())
            .collect();
        let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
        let opts = Options {
            share_points: 256,
            ..Options::default()
        };
        let a = analyse(&ev.program, &refs, &ev.build.shader.source, None, &opts).unwrap();
        assert!(
            a.internal_errors.is_empty(),
            "{}: {:?}",
            c.name,
            a.internal_errors
        );
        // Every rounding operation has a line: with all lines exact the
        // emulation is the f64 model, so the shares add up to 1.
        assert_eq!(a.unattributed, 0.0, "{}", c.name);
        if a.emulated_mean_rel > 0.0 {
            let sum: f64 = a.lines.iter().map(|l| l.share).sum();
            assert!((sum - 1.0).abs() < 1e-9, "{}: {sum}", c.name);
        }
        analysed += 1;
    }
    assert!(analysed >= 8, "only {analysed} demo checks analysed");
}

/// Values of an f32 argument, one point each.
fn points_of(xs: &[f64]) -> Vec<Vec<f64>> {
    xs.iter().map(|&x| vec![x]).collect()
}

#[test]
fn shares_of_lines_that_undo_each_other_are_shapley_values() {
    // times_three_over_three: line 61 `y = x * 3.0` rounds, line 62 `y / 3.0`
    // often rounds back to x. The f64 model gives x exactly (3x is exact in
    // f64, and the correctly rounded 3x / 3 is x). With the product exact
    // the quotient is x again: v({61}) = 0. With the quotient exact, the
    // product's rounding is left: v({62}) = mean |f32(3x)/3 − x| / x. Two
    // lines, so both orders are run and the shares are the Shapley values
    // (v(∅) − v({61}) + v({62}) − v(both)) / 2 and (v(∅) − v({62}) +
    // v({61}) − v(both)) / 2, over v(∅). Every v is recomputed here in
    // Rust's own f32 and f64 arithmetic (IEEE 754 binary32/binary64, round
    // to nearest), independently of the evaluator.
    let xs: Vec<f64> = (0..1000)
        .map(|i| f64::from((1.0 + f64::from(i) / 999.0) as f32))
        .collect();
    let a = check("times_three_over_three", &points_of(&xs), Arithmetic::Exact);
    let rel = |g: f64, x: f64| ((g - x).abs() / x).min(1.0);
    let mean = |f: &dyn Fn(f64) -> f64| xs.iter().map(|&x| f(x)).sum::<f64>() / xs.len() as f64;
    let v0 = mean(&|x| rel(f64::from((x as f32 * 3.0) / 3.0), x));
    let v62 = mean(&|x| rel(f64::from(x as f32 * 3.0) / 3.0, x));
    assert!(v0 > 0.0 && v62 > v0, "v(∅) {v0}, v({{62}}) {v62}");
    let line = |l: u32| a.lines.iter().find(|x| x.line == l).unwrap();
    assert!((a.emulated_mean_rel - v0).abs() < 1e-12 * v0.max(1e-300) + 1e-20);
    let want61 = (v0 + v62) / (2.0 * v0);
    let want62 = (v0 - v62) / (2.0 * v0);
    assert!(
        (line(61).share - want61).abs() < 1e-9,
        "{} vs {want61}",
        line(61).share
    );
    assert!(
        (line(62).share - want62).abs() < 1e-9,
        "{} vs {want62}",
        line(62).share
    );
    // The quotient's rounding undoes the product's: a negative share. The
    // shares add up to 1; the errors "alone" (1 and (v0 − v62) / v0) do not.
    assert!(line(62).share < 0.0);
    assert!((line(61).share + line(62).share - 1.0).abs() < 1e-12);
    assert!((line(61).alone - 1.0).abs() < 1e-12);
    assert!((line(61).alone + line(62).alone - 1.0).abs() > 0.1);
    assert!(a.share_exhaustive && a.share_margin == 0.0 && a.unattributed == 0.0);
}

#[test]
fn demo_brdf_shares_add_up_and_name_the_half_vector() {
    // The demo check brdf_full (Cook-Torrance in f32, 1,048,576 points), on
    // every 17th point (17 is prime to every sweep dimension, so every
    // parameter still varies): the shares are estimated over random orders
    // and add up to 1 by construction; the half vector `h = normalize(v +
    // l)` (line 87 of shaders/brackenfold/materials.wgsl) explains the most,
    // as the check's own tolerance reason says (its rounding, amplified by
    // the sharpest lobe).
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/shadegate.toml");
    let suite = shadegate::suite::load(path.as_ref()).unwrap();
    let c = suite.checks.iter().find(|c| c.name == "brdf_full").unwrap();
    let ev = shadegate::gate::evaluate(&suite, c, None).unwrap();
    let cols: Vec<Vec<u32>> = ev
        .input_columns
        .iter()
        .map(|col| col.iter().step_by(17).copied().collect())
        .collect();
    let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
    let src = &ev.build.shader.source;
    let a = analyse(&ev.program, &refs, src, None, &Options::default()).unwrap();
    assert!(!a.share_exhaustive && a.share_orders == 8);
    assert_eq!(a.share_points, Options::default().share_points);
    let sum: f64 = a.lines.iter().map(|l| l.share).sum();
    assert!((sum - (1.0 - a.unattributed)).abs() < 1e-9, "{sum}");
    assert_eq!(
        a.unattributed, 0.0,
        "every rounding f32 operation has a line"
    );
    let mut by: Vec<_> = a.lines.iter().collect();
    by.sort_by(|x, y| y.share.total_cmp(&x.share));
    assert_eq!(by[0].line, 87, "{}", by[0].text);
    assert!(by[0].text.contains("normalize(v + l)"));
    assert!(
        by[0].share - by[1].share > a.share_margin,
        "the half vector leads by more than the margin: {} vs {} ± {}",
        by[0].share,
        by[1].share,
        a.share_margin
    );
    // The estimates agree with four times as many orders within twice the
    // stated margin (four standard errors) for every line.
    let more = analyse(
        &ev.program,
        &refs,
        src,
        None,
        &Options {
            share_pairs: 16,
            ..Options::default()
        },
    )
    .unwrap();
    for (l, m) in a.lines.iter().zip(&more.lines) {
        assert!(
            (l.share - m.share).abs() <= 2.0 * a.share_margin,
            "line {}: {} with 8 orders, {} with 32, margin {}",
            l.line,
            l.share,
            m.share,
            a.share_margin
        );
    }
}

#[test]
fn f16_port_budget_names_the_failing_roughness_and_its_line() {
    // ggx_peak_f16 (1 / (pi alpha^2), alpha = roughness^2, lines 70-72)
    // against its f32 twin under rel 1e-2, roughness 0.020 to 0.300 by
    // 0.001. The expected failing set is recomputed here with the `half`
    // crate's IEEE 754 binary16 rounding after every operation (as WGSL f16
    // does) and Rust's f32: the f16 quotient overflows (1 / (pi a2) at or
    // above 65520 rounds to infinity) for roughness below about 0.047.
    let h = |x: f64| half::f16::from_f64(x).to_f64();
    let rs: Vec<f64> = (20..=300).map(|i| f64::from(i) / 1000.0).collect();
    let mut expected = Vec::new();
    for (p, &r) in rs.iter().enumerate() {
        let rh = h(r);
        let alpha = h(rh * rh);
        let a2 = h(alpha * alpha);
        let got = h(1.0 / h(3.140625 * a2));
        let rf = rh as f32;
        let want = f64::from(1.0 / (3.140625f32 * ((rf * rf) * (rf * rf))));
        if !got.is_finite() || ((got - want) / want).abs() > 1e-2 {
            expected.push(p);
        }
    }
    assert!(expected.len() > 20 && expected.contains(&0), "{expected:?}");
    assert!(rs[*expected.last().unwrap()] < 0.06, "{expected:?}");

    let sh = shader();
    let p = Program::compile(&sh, "ggx_peak_f16", &Default::default()).unwrap();
    let twin = Program::compile(&sh, "ggx_peak_f32", &Default::default()).unwrap();
    let col: Vec<u32> = rs
        .iter()
        .map(|&r| f64_to_bits(ScalarKind::F16, r))
        .collect();
    let twin_col: Vec<u32> = rs.iter().map(|&r| (h(r) as f32).to_bits()).collect();
    let mut out = Vec::new();
    twin.eval(&[&twin_col[..]], &mut out);
    let reference = vec![out[0]
        .iter()
        .map(|&b| f64::from(f32::from_bits(b)))
        .collect()];
    let opts = Options {
        budget: Some(shadegate::precision::BudgetSpec {
            tolerance: shadegate::compare::Tolerance {
                rel: Some(vec![1e-2]),
                reason: "test".into(),
                ..Default::default()
            },
            reference: Some(reference),
            against: "twin ggx_peak_f32".into(),
        }),
        ..Options::default()
    };
    let a = analyse(&p, &[&col[..]], &sh.source, None, &opts).unwrap();
    let b = a.budget.as_ref().expect("an f16 function with a tolerance");
    assert_eq!((b.points, b.failing), (rs.len(), expected.len()));
    assert!(b.max_use.is_infinite());
    // The worst misses are the overflows (infinitely bad; ties go to the
    // smallest roughness), and the division that overflows dominates there:
    // making line 72 exact gives the finite f64 quotient, making the other
    // lines exact leaves it infinite.
    assert_eq!(b.misses.len(), 5);
    for (i, m) in b.misses.iter().enumerate() {
        assert_eq!(m.point, expected[i]);
        assert!(m.got.is_infinite() && m.want.is_finite());
        assert_eq!(m.line, Some(72), "{m:?}");
        assert!(m.line_part > 50.0, "{m:?}");
        assert!(m.inputs.starts_with("roughness=0.0"), "{}", m.inputs);
    }
    // The parts add up: per line the mean parts, summed, are the mean use
    // less what is left with every line exact (the twin's own rounding).
    let sum: f64 = b.lines.iter().map(|l| l.mean).sum();
    assert!(
        (sum - (b.mean_use - b.reference_part)).abs() < 1e-9 * b.mean_use,
        "{sum} vs {} - {}",
        b.mean_use,
        b.reference_part
    );
    let top = b
        .lines
        .iter()
        .max_by(|x, y| x.mean.total_cmp(&y.mean))
        .unwrap();
    assert_eq!(top.line, 72);
    // Without a twin the budget is against the function's own f64 values:
    // 1 / (3.140625 (r_h^2)^2) in binary64 for the f16 roughness r_h
    // (3.140625 is exact in f16).
    let expected_f64: Vec<usize> = rs
        .iter()
        .enumerate()
        .filter(|&(_, &r)| {
            let rh = h(r);
            let a2 = h(h(rh * rh) * h(rh * rh));
            let got = h(1.0 / h(3.140625 * a2));
            let want = 1.0 / (3.140625 * ((rh * rh) * (rh * rh)));
            !got.is_finite() || ((got - want) / want).abs() > 1e-2
        })
        .map(|(p, _)| p)
        .collect();
    let mut own = opts.clone();
    if let Some(b) = own.budget.as_mut() {
        b.reference = None;
        b.against = "the function's f64 values".into();
    }
    let f = analyse(&p, &[&col[..]], &sh.source, None, &own).unwrap();
    let fb = f.budget.as_ref().unwrap();
    assert_eq!(fb.failing, expected_f64.len());
    assert_eq!(fb.misses[0].point, expected_f64[0]);
    assert_eq!(
        fb.reference_part, 0.0,
        "every line exact is the f64 model itself"
    );
    let t = shadegate::precision::text(&a);
    assert!(
        t.contains("f16 budget against twin ggx_peak_f32 (tolerance rel 1e-2)"),
        "{t}"
    );
    assert!(
        t.contains(&format!("{} of 281 points miss it", expected.len())),
        "{t}"
    );
    assert!(t.contains("line 72 accounts for"), "{t}");
}
