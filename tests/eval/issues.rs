//! Per-point issue reports: an out-of-bounds dynamic index, a loop that runs
//! past the step budget, and a NaN or infinity made from finite inputs must
//! each be reported for exactly the points (lanes) where they happen, with the
//! source line and column, and never for lanes that did not execute the
//! offending code.
//!
//! Spec background (W3C WGSL, editor's draft): an out-of-range index into a
//! value may give an indeterminate value and one into memory is a dynamic
//! error ("Out-of-Bounds Access"); a runtime overflow, infinity or NaN gives
//! an indeterminate value under the "Finite Math Assumption". The evaluator
//! computes an IEEE 754 value anyway and reports the point.

use std::collections::BTreeMap;

use shadegate::eval::{f64_to_bits, Arithmetic, IssueKind, LaneIssue, Program};
use shadegate::limits::Limits;
use shadegate::wgsl::Shader;

/// 1-based line and byte column of the first occurrence of `needle`.
fn pos(src: &str, needle: &str) -> (u32, u32) {
    let at = src
        .find(needle)
        .unwrap_or_else(|| panic!("`{needle}` not in source"));
    let line = src[..at].matches('\n').count() as u32 + 1;
    let col = (at - src[..at].rfind('\n').map_or(0, |n| n + 1)) as u32 + 1;
    (line, col)
}

fn program(src: &str, f: &str) -> Program {
    let sh = Shader::from_source("issues.wgsl", src.to_string()).unwrap_or_else(|e| panic!("{e}"));
    Program::compile(&sh, f, &BTreeMap::new()).unwrap_or_else(|e| panic!("{e}"))
}

/// Evaluate at `rows` (one f64 per input leaf); returns output columns as
/// f64 and the issues.
fn run(p: &Program, rows: &[Vec<f64>]) -> (Vec<Vec<f64>>, Vec<LaneIssue>) {
    let kinds = p.input_leaves();
    let cols: Vec<Vec<u32>> = (0..kinds.len())
        .map(|i| rows.iter().map(|r| f64_to_bits(kinds[i].1, r[i])).collect())
        .collect();
    let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
    let mut out = Vec::new();
    let issues = p.eval(&refs, &mut out);
    let outs = p
        .output_leaves()
        .iter()
        .zip(&out)
        .map(|((_, k), c)| {
            c.iter()
                .map(|&b| shadegate::eval::bits_to_f64(*k, b))
                .collect()
        })
        .collect();
    (outs, issues)
}

fn points(issues: &[LaneIssue]) -> Vec<usize> {
    issues.iter().map(|i| i.point).collect()
}

const INDEXING: &str = r#"
fn read(a: array<f32, 4>, i: i32) -> f32 {
    return a[i];
}
fn read_guarded(v: vec4<f32>, i: i32) -> f32 {
    if i >= 0 {
        return v[i];
    }
    return -1.0;
}
fn read_short_circuit(v: vec4<f32>, i: i32) -> bool {
    return i < 4 && v[i] > 0.0;
}
fn write(i: i32) -> vec4<f32> {
    var a = vec4(1.0, 2.0, 3.0, 4.0);
    a[i] = 10.0;
    return a;
}
fn nested(i: i32, j: i32) -> i32 {
    var m: array<array<i32, 3>, 2>;
    m[1][2] = 7;
    return m[i][j];
}
fn column(m: mat2x2<f32>, i: u32) -> vec2<f32> {
    return m[i];
}
fn store_at(p: ptr<function, array<f32, 2>>, i: i32) {
    (*p)[i] = 5.0;
}
fn via_callee(i: i32) -> f32 {
    var a = array<f32, 2>(1.0, 2.0);
    store_at(&a, i);
    return a[0] + a[1];
}
"#;

#[test]
fn out_of_bounds_index_is_reported_per_point_with_its_position() {
    let p = program(INDEXING, "read");
    let a = [1.0, 2.0, 3.0, 4.0];
    let rows: Vec<Vec<f64>> = [0.0, 3.0, 4.0, -1.0, 2.0, 1000.0]
        .iter()
        .map(|&i| a.iter().copied().chain([i]).collect())
        .collect();
    let (out, issues) = run(&p, &rows);
    assert_eq!(points(&issues), [2, 3, 5], "{issues:#?}");
    let (line, col) = pos(INDEXING, "a[i]");
    for i in &issues {
        assert_eq!(i.kind, IssueKind::OutOfBounds);
        assert_eq!((i.line, i.column), (line, col), "{i:?}");
    }
    assert!(
        issues[0]
            .message
            .contains("index 4 is out of bounds for length 4"),
        "{}",
        issues[0].message
    );
    assert!(
        issues[1].message.contains("index -1"),
        "{}",
        issues[1].message
    );
    assert!(
        issues[0].inputs.contains("i=4"),
        "the offending input is named: {}",
        issues[0].inputs
    );
    // In-range points are unaffected.
    assert_eq!(out[0][0], 1.0);
    assert_eq!(out[0][1], 4.0);
    assert_eq!(out[0][4], 3.0);
}

#[test]
fn out_of_bounds_index_in_a_branch_not_taken_is_not_reported() {
    let p = program(INDEXING, "read_guarded");
    let v = [1.0, 2.0, 3.0, 4.0];
    let rows: Vec<Vec<f64>> = [1.0, 9.0, -3.0, 2.0, -100.0]
        .iter()
        .map(|&i| v.iter().copied().chain([i]).collect())
        .collect();
    let (out, issues) = run(&p, &rows);
    // Only i = 9 takes the branch with an out-of-range index; the negative
    // ones never evaluate v[i].
    assert_eq!(points(&issues), [1], "{issues:#?}");
    assert_eq!(issues[0].line, pos(INDEXING, "v[i];").0);
    assert_eq!(out[0][2], -1.0);
    assert_eq!(out[0][4], -1.0);
    assert_eq!(out[0][3], 3.0);
}

#[test]
fn out_of_bounds_index_on_the_skipped_side_of_and_is_not_reported() {
    let p = program(INDEXING, "read_short_circuit");
    let v = [1.0, -2.0, 3.0, 4.0];
    let rows: Vec<Vec<f64>> = [0.0, 1.0, 4.0, 77.0]
        .iter()
        .map(|&i| v.iter().copied().chain([i]).collect())
        .collect();
    let (out, issues) = run(&p, &rows);
    assert!(issues.is_empty(), "{issues:#?}");
    assert_eq!(out[0], [1.0, 0.0, 0.0, 0.0]);
}

#[test]
fn out_of_bounds_stores_nested_indices_and_callees_are_located() {
    let p = program(INDEXING, "write");
    let (_, issues) = run(&p, &[vec![2.0], vec![4.0], vec![-1.0]]);
    assert_eq!(points(&issues), [1, 2]);
    assert_eq!(
        (issues[0].line, issues[0].column),
        pos(INDEXING, "a[i] = 10.0")
    );

    let p = program(INDEXING, "nested");
    let (out, issues) = run(&p, &[vec![1.0, 2.0], vec![2.0, 0.0], vec![0.0, 3.0]]);
    assert_eq!(out[0][0], 7.0);
    assert_eq!(points(&issues), [1, 2], "{issues:#?}");
    assert!(
        issues[0].message.contains("length 2"),
        "{}",
        issues[0].message
    );
    assert!(
        issues[1].message.contains("length 3"),
        "{}",
        issues[1].message
    );

    let p = program(INDEXING, "column");
    let (out, issues) = run(
        &p,
        &[vec![1.0, 2.0, 3.0, 4.0, 1.0], vec![1.0, 2.0, 3.0, 4.0, 2.0]],
    );
    assert_eq!((out[0][0], out[1][0]), (3.0, 4.0));
    assert_eq!(points(&issues), [1]);

    // The index is checked where it is evaluated: inside the callee.
    let p = program(INDEXING, "via_callee");
    let (_, issues) = run(&p, &[vec![1.0], vec![2.0]]);
    assert_eq!(points(&issues), [1]);
    assert_eq!((issues[0].line, issues[0].column), pos(INDEXING, "(*p)[i]"));
}

const LOOPS: &str = r#"
fn spin(x: i32) -> i32 {
    var i = 0;
    loop {
        if i == x { break; }
        i++;
    }
    return i;
}
fn spin_f(x: i32) -> f32 {
    var i = 0;
    while i != x {
        i++;
    }
    return f32(i);
}
fn caller(x: i32) -> i32 {
    var t = array<i32, 2>(10, 20);
    let k = spin(x);
    return t[k - 1];
}
fn nested_loops(n: i32) -> i32 {
    var c = 0;
    for (var i = 0; i < n; i++) {
        for (var j = 0; j < n; j++) {
            c++;
        }
    }
    return c;
}
"#;

#[test]
fn step_budget_abandons_only_the_points_that_run_out() {
    let mut p = program(LOOPS, "spin");
    p.set_step_budget(1000);
    // x = 999 needs 1000 iterations (the last one breaks): within budget.
    // x = 1000 needs 1001; x = -1 never ends (short of wrapping 2^32 times).
    let rows = vec![vec![5.0], vec![999.0], vec![1000.0], vec![-1.0], vec![0.0]];
    let (out, issues) = run(&p, &rows);
    assert_eq!(points(&issues), [2, 3], "{issues:#?}");
    let (line, col) = pos(LOOPS, "loop {");
    for i in &issues {
        assert_eq!(i.kind, IssueKind::StepBudget);
        assert_eq!((i.line, i.column), (line, col));
        assert!(i.message.contains("1000"), "{}", i.message);
    }
    assert_eq!(out[0][0], 5.0);
    assert_eq!(out[0][1], 999.0);
    assert_eq!(out[0][4], 0.0);
    // An abandoned point has no result: integers read 0, floats NaN.
    assert_eq!((out[0][2], out[0][3]), (0.0, 0.0));
    let mut p = program(LOOPS, "spin_f");
    p.set_step_budget(100);
    let (out, issues) = run(&p, &[vec![-5.0], vec![50.0]]);
    assert_eq!(points(&issues), [0]);
    assert!(out[0][0].is_nan());
    assert_eq!(out[0][1], 50.0);
}

#[test]
fn step_budget_in_a_callee_abandons_the_point_in_the_caller_too() {
    // After `spin` gives up on a point, the caller must not go on computing
    // with its unfinished value (here it would index t out of bounds and
    // produce a second, spurious report).
    let mut p = program(LOOPS, "caller");
    p.set_step_budget(64);
    let (out, issues) = run(&p, &[vec![1.0], vec![-1.0], vec![2.0]]);
    assert_eq!(points(&issues), [1], "{issues:#?}");
    assert_eq!(issues[0].kind, IssueKind::StepBudget);
    assert_eq!(out[0], [10.0, 0.0, 20.0]);
}

#[test]
fn step_budget_counts_every_loop_of_a_point_together() {
    // One budget per point over all its loops: n = 30 takes 30 outer and
    // 900 inner iterations (930 steps), within 1000; n = 32 takes
    // 32 + 1024 = 1056, past it, though each loop alone stays within.
    let mut p = program(LOOPS, "nested_loops");
    p.set_step_budget(1000);
    let (out, issues) = run(&p, &[vec![30.0], vec![32.0]]);
    assert_eq!(out[0][0], 900.0);
    assert_eq!(points(&issues), [1]);
    assert_eq!(issues[0].kind, IssueKind::StepBudget);
    assert!(
        issues[0].message.contains("steps_per_point"),
        "{}",
        issues[0].message
    );
}

const NONFINITE: &str = r#"
fn root(x: f32) -> f32 {
    return sqrt(x - 1.0);
}
fn ratio(a: f32, b: f32) -> f32 {
    return a / b;
}
fn direction(v: vec3<f32>) -> vec3<f32> {
    return normalize(v);
}
fn guarded_root(x: f32) -> f32 {
    return select(sqrt(x), 0.0, x < 0.0);
}
fn branch_root(x: f32) -> f32 {
    if x >= 0.0 {
        return sqrt(x);
    }
    return 0.0;
}
fn inverse_of_int(i: i32) -> f32 {
    let d = f32(i);
    return 1.0 / d;
}
fn grow(x: f32) -> f32 {
    var y = x;
    for (var i = 0; i < 4; i++) {
        y = y * y;
    }
    return y;
}
"#;

#[test]
fn non_finite_results_of_finite_inputs_are_traced_to_the_operation() {
    let p = program(NONFINITE, "root");
    let (out, issues) = run(&p, &[vec![2.0], vec![0.5], vec![1.0]]);
    assert_eq!(points(&issues), [1], "{issues:#?}");
    let i = &issues[0];
    assert_eq!(i.kind, IssueKind::NonFinite);
    assert_eq!((i.line, i.column), pos(NONFINITE, "sqrt(x - 1.0)"));
    assert!(i.message.contains("sqrt"), "{}", i.message);
    assert!(out[0][1].is_nan());

    let p = program(NONFINITE, "ratio");
    let (_, issues) = run(
        &p,
        &[
            vec![0.0, 0.0],
            vec![1.0, 0.0],
            vec![1.0, 2.0],
            vec![-3.0, -0.0],
        ],
    );
    assert_eq!(points(&issues), [0, 1, 3], "{issues:#?}");
    for i in &issues {
        assert_eq!((i.line, i.column), pos(NONFINITE, "a / b"));
        assert!(i.message.contains("division"), "{}", i.message);
    }

    let p = program(NONFINITE, "direction");
    let (_, issues) = run(&p, &[vec![0.0, 0.0, 0.0], vec![1.0, 0.0, 0.0]]);
    assert_eq!(points(&issues), [0]);
    assert!(
        issues[0].message.contains("normalize"),
        "{}",
        issues[0].message
    );

    // Integer inputs are finite too.
    let p = program(NONFINITE, "inverse_of_int");
    let (_, issues) = run(&p, &[vec![0.0], vec![4.0]]);
    assert_eq!(points(&issues), [0]);
    assert_eq!(issues[0].line, pos(NONFINITE, "1.0 / d").0);

    // Overflow in the third pass of a loop: 1e10^2 = 1e20, ^2 = 1e40 = inf.
    let p = program(NONFINITE, "grow");
    let (_, issues) = run(&p, &[vec![1e10], vec![1.5]]);
    assert_eq!(points(&issues), [0]);
    assert_eq!((issues[0].line, issues[0].column), pos(NONFINITE, "y * y"));
    assert!(
        issues[0].message.contains("multiplication"),
        "{}",
        issues[0].message
    );
}

#[test]
fn non_finite_results_are_not_reported_when_an_input_already_was() {
    let p = program(NONFINITE, "ratio");
    let (out, issues) = run(
        &p,
        &[
            vec![f64::NAN, 1.0],
            vec![f64::INFINITY, 2.0],
            vec![1.0, f64::NAN],
        ],
    );
    assert!(issues.is_empty(), "{issues:#?}");
    assert!(out[0][0].is_nan() && out[0][1].is_infinite() && out[0][2].is_nan());
    let p = program(NONFINITE, "root");
    let (_, issues) = run(&p, &[vec![f64::NEG_INFINITY]]);
    assert!(issues.is_empty(), "{issues:#?}");
}

#[test]
fn a_nan_that_does_not_reach_the_result_is_not_reported() {
    // select evaluates both sides; the NaN of sqrt(-4) is discarded.
    let p = program(NONFINITE, "guarded_root");
    let (out, issues) = run(&p, &[vec![-4.0], vec![4.0]]);
    assert!(issues.is_empty(), "{issues:#?}");
    assert_eq!(out[0], [0.0, 2.0]);
    // A branch that is not taken computes nothing reportable either.
    let p = program(NONFINITE, "branch_root");
    let (out, issues) = run(&p, &[vec![-4.0], vec![9.0]]);
    assert!(issues.is_empty(), "{issues:#?}");
    assert_eq!(out[0], [0.0, 3.0]);
}

#[test]
fn issues_name_global_point_indices_across_batches_and_threads() {
    // 10_007 points: several 128-lane batches and several parallel chunks.
    let p = program(INDEXING, "read");
    let n = 10_007usize;
    let bad: Vec<usize> = vec![0, 127, 128, 4095, 4096, 8191, 10_006];
    let rows: Vec<Vec<f64>> = (0..n)
        .map(|k| {
            let i = if bad.contains(&k) {
                4.0 + (k % 3) as f64
            } else {
                (k % 4) as f64
            };
            vec![1.0, 2.0, 3.0, 4.0, i]
        })
        .collect();
    let (out, issues) = run(&p, &rows);
    assert_eq!(points(&issues), bad);
    for k in [1usize, 5, 129, 5000, 10_005] {
        assert_eq!(out[0][k], 1.0 + (k % 4) as f64, "point {k}");
    }
}

const ABANDONED_AND_INFINITE: &str = r#"
fn spin(x: i32) -> i32 { var i = 0; while i != x { i++; } return i; }
fn spin_then_divide(x: i32, y: f32) -> f32 {
    return f32(spin(x)) / y;
}
"#;

/// Regression: one point of a batch runs past the step budget inside a
/// called function while another divides by zero. The abandoned point must
/// come back as NaN with a step-budget issue, never as a number, whether the
/// batch is full (outputs written in place in the caller's column) or ragged.
#[track_caller]
fn check_abandoned_point_is_never_a_number(points: usize) {
    let mut p = program(ABANDONED_AND_INFINITE, "spin_then_divide");
    p.set_step_budget(200);
    // Point 0 never finishes (x = -1); point 1 divides 1 by 0; the rest are
    // ordinary (x = 3, y = 2 → 1.5).
    let mut rows = vec![vec![-1.0, 1.0], vec![1.0, 0.0]];
    rows.resize(points, vec![3.0, 2.0]);
    let (out, issues) = run(&p, &rows);
    assert!(
        out[0][0].is_nan(),
        "abandoned point came back as {} ({points} points)",
        out[0][0]
    );
    assert_eq!(out[0][1], f64::INFINITY);
    assert!(out[0][2..].iter().all(|&v| v == 1.5));
    let kinds: Vec<_> = issues.iter().map(|i| (i.point, i.kind)).collect();
    assert_eq!(
        kinds,
        [(0, IssueKind::StepBudget), (1, IssueKind::NonFinite)],
        "{issues:#?}"
    );
}

#[test]
fn abandoned_point_is_never_a_number_in_a_full_batch() {
    check_abandoned_point_is_never_a_number(shadegate::eval::LANES);
}

#[test]
fn abandoned_point_is_never_a_number_in_a_ragged_batch() {
    check_abandoned_point_is_never_a_number(2);
}

fn program_limited(src: &str, f: &str, limits: &Limits) -> Result<Program, String> {
    let sh = Shader::from_source("limits.wgsl", src.to_string()).unwrap_or_else(|e| panic!("{e}"));
    Program::compile_limited(&sh, f, &BTreeMap::new(), Arithmetic::Exact, limits)
        .map_err(|e| e.to_string())
}

#[test]
fn three_nested_long_loops_end_with_a_step_budget_issue() {
    // 60,000³ iterations would never finish; the budget is per point over
    // all loops, so the point is abandoned after `steps_per_point` of them.
    let src = r#"
fn deep(n: i32) -> f32 {
    var c = 0.0;
    for (var i = 0; i < n; i++) {
        for (var j = 0; j < n; j++) {
            for (var k = 0; k < n; k++) { c += 1.0; }
        }
    }
    return c;
}
"#;
    let limits = Limits {
        steps_per_point: 50_000,
        ..Limits::default()
    };
    let p = program_limited(src, "deep", &limits).unwrap();
    let (out, issues) = run(&p, &[vec![60_000.0], vec![3.0]]);
    assert_eq!(points(&issues), [0], "{issues:#?}");
    assert_eq!(issues[0].kind, IssueKind::StepBudget);
    assert!(issues[0].message.contains("50000"), "{}", issues[0].message);
    assert!(out[0][0].is_nan());
    assert_eq!(out[0][1], 27.0);
}

#[test]
fn a_huge_local_or_private_array_is_refused_at_compile_time() {
    for (src, needle) in [
        (
            "fn f(i: i32) -> f32 {\n    var a: array<f32, 100000000>;\n    return a[i];\n}\n",
            "var a",
        ),
        (
            "var<private> big: array<array<f32, 10000>, 10000>;\nfn f(i: i32) -> f32 {\n    return big[i][i];\n}\n",
            "var<private> big",
        ),
    ] {
        let err = program_limited(src, "f", &Limits::default()).err().expect("refused");
        let (line, _) = pos(src, needle);
        assert!(err.starts_with(&format!("limits.wgsl:{line}:")), "{err}");
        assert!(err.contains("program_slots"), "{err}");
        assert!(err.contains("[limits]"), "{err}");
    }
}

#[test]
fn inlining_past_the_program_size_limit_is_refused_while_inlining() {
    // f0 calls f1 twice, f1 calls f2 twice, ... 24 levels: 2^24 inlined
    // calls. Refused once the program passes `program_ops`, long before.
    let mut src = String::from("fn f24(x: f32) -> f32 { return x * 1.5; }\n");
    for i in (0..24).rev() {
        src.push_str(&format!(
            "fn f{i}(x: f32) -> f32 {{ return f{n}(x) + f{n}(x + 1.0); }}\n",
            n = i + 1
        ));
    }
    let limits = Limits {
        program_ops: 20_000,
        ..Limits::default()
    };
    let err = program_limited(&src, "f0", &limits).err().expect("refused");
    assert!(err.starts_with("limits.wgsl:"), "{err}");
    assert!(!err.starts_with("limits.wgsl:0:"), "{err}");
    assert!(
        err.contains("program_ops") && err.contains("20000"),
        "{err}"
    );
    assert!(err.contains("[limits]"), "{err}");
    // The same shader with 10 levels fits.
    let p = program_limited(&src, "f14", &limits).unwrap();
    assert_eq!(p.function(), "f14");
}
