//! Executor tests that run whole programs through the batch driver: full
//! batches bound in place, ragged tails, the NaN-tracing re-run, abandoned
//! points, dynamic indexing and non-32-bit leaves. They are the tests Miri
//! runs (`cargo +nightly miri test --lib -- eval::tests eval::verify`, with few lanes), so they
//! keep their programs small.

use std::collections::BTreeMap;

use super::{bits_to_f64, f64_to_bits, IssueKind, Program, LANES};
use crate::wgsl::Shader;

fn program(src: &str, f: &str) -> Program {
    let sh = Shader::from_source("exec.wgsl", src.to_string()).unwrap_or_else(|e| panic!("{e}"));
    Program::compile(&sh, f, &BTreeMap::new()).unwrap_or_else(|e| panic!("{e}"))
}

/// Columns from rows of f64 (one per input leaf).
fn columns(p: &Program, rows: &[Vec<f64>]) -> Vec<Vec<u32>> {
    let kinds = p.input_leaves();
    (0..kinds.len())
        .map(|i| rows.iter().map(|r| f64_to_bits(kinds[i].1, r[i])).collect())
        .collect()
}

fn decode(p: &Program, out: &[Vec<u32>]) -> Vec<Vec<f64>> {
    p.output_leaves()
        .iter()
        .zip(out)
        .map(|((_, k), c)| c.iter().map(|&b| bits_to_f64(*k, b)).collect())
        .collect()
}

const SRC: &str = r#"
enable f16;
fn spin(x: i32) -> i32 { var i = 0; while i != x { i++; } return i; }
fn spin_then_divide(x: i32, y: f32) -> f32 {
    return f32(spin(x)) / y;
}
fn scale(a: f32, b: f32) -> vec2<f32> {
    return vec2<f32>(a * b, a / b);
}
fn store_at(p: ptr<function, array<f32, 3>>, i: i32, v: f32) { (*p)[i] = v; }
fn pick(i: i32, v: f16) -> f16 {
    var a = array<f32, 3>(1.0, 2.0, 3.0);
    store_at(&a, i, a[(i + 1) % 3]);
    if i == 1 { return v; }
    return f16(a[i]);
}
"#;

#[test]
fn full_batches_in_place_and_a_ragged_tail_agree_with_the_formula() {
    let p = program(SRC, "scale");
    // Two full batches and one ragged point; b = 0 at one point makes the
    // batch re-run with NaN tracing while its outputs are bound.
    let n = 2 * LANES + 1;
    let rows: Vec<Vec<f64>> = (0..n)
        .map(|i| vec![i as f64 + 0.5, if i == 3 { 0.0 } else { 2.0 }])
        .collect();
    let cols = columns(&p, &rows);
    let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
    // Under Miri only the serial path: the parallel one runs through rayon,
    // whose crossbeam-epoch dependency casts integers to pointers, which
    // Stacked Borrows rejects outside this crate's code.
    let paths: &[bool] = if cfg!(miri) { &[false] } else { &[false, true] };
    for &parallel in paths {
        let mut out = Vec::new();
        let issues = if parallel {
            p.eval(&refs, &mut out)
        } else {
            p.eval_serial(&refs, &mut out)
        };
        let v = decode(&p, &out);
        for (i, r) in rows.iter().enumerate() {
            assert_eq!(v[0][i], f64::from((r[0] * r[1]) as f32), "point {i}");
            assert_eq!(v[1][i], f64::from(r[0] as f32 / r[1] as f32), "point {i}");
        }
        let kinds: Vec<_> = issues.iter().map(|i| (i.point, i.kind)).collect();
        assert_eq!(kinds, [(3, IssueKind::NonFinite)]);
    }
}

#[test]
fn an_abandoned_point_is_nan_in_full_and_ragged_batches() {
    let mut p = program(SRC, "spin_then_divide");
    p.set_step_budget(20);
    for n in [LANES, 2, LANES + 2] {
        let mut rows = vec![vec![-1.0, 1.0], vec![1.0, 0.0]];
        rows.resize(n, vec![3.0, 2.0]);
        let cols = columns(&p, &rows);
        let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
        let mut out = Vec::new();
        let issues = p.eval_serial(&refs, &mut out);
        let v = decode(&p, &out);
        assert!(v[0][0].is_nan(), "{n} points: {}", v[0][0]);
        assert_eq!(v[0][1], f64::INFINITY);
        assert!(v[0][2..].iter().all(|&x| x == 1.5));
        let kinds: Vec<_> = issues.iter().map(|i| (i.point, i.kind)).collect();
        assert_eq!(
            kinds,
            [(0, IssueKind::StepBudget), (1, IssueKind::NonFinite)]
        );
    }
}

#[test]
fn dynamic_stores_through_pointers_and_f16_leaves() {
    let p = program(SRC, "pick");
    let n = LANES + 3;
    let rows: Vec<Vec<f64>> = (0..n).map(|i| vec![(i % 4) as f64, 0.25]).collect();
    let cols = columns(&p, &rows);
    let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
    let mut out = Vec::new();
    let issues = p.eval_serial(&refs, &mut out);
    let v = decode(&p, &out);
    for i in 0..n {
        // a[i] = a[(i + 1) % 3]: i = 0 → 2, i = 1 → v, i = 2 → 1. i = 3 is
        // out of bounds, reported; an index out of bounds acts as 0 (WGSL
        // lets an invalid store write any element of the variable), so
        // a[0] = a[1] = 2 is stored and read back.
        let want = [2.0, 0.25, 1.0, 2.0][i % 4];
        assert_eq!(v[0][i], want, "point {i}");
    }
    assert!(issues
        .iter()
        .all(|i| i.kind == IssueKind::OutOfBounds && i.point % 4 == 3));
    assert!(!issues.is_empty());
}

/// A look-up table sampled in place of a texture: the texture op reads its
/// operand columns and writes four result columns per lane, under Miri too.
#[test]
fn a_bound_table_is_sampled_and_loaded_per_lane() {
    use crate::table::{Address, Bindings, Bound, Filter, Resource, Sampler, Table};
    use std::sync::Arc;
    let src = "
@group(0) @binding(0) var t: texture_2d<f32>;
@group(0) @binding(1) var s: sampler;
fn f(u: f32, v: f32, i: i32) -> vec2<f32> {
    let a = textureSampleLevel(t, s, vec2(u, v), 0.0);
    let b = textureLoad(t, vec2(i, 0), 0);
    return vec2(a.y, b.x);
}
";
    let table = Table::new(2, 1, 2, vec![1.0, 10.0, 3.0, 30.0]).unwrap();
    let sampler = Sampler {
        mag_filter: Filter::Linear,
        min_filter: Filter::Linear,
        address_u: Address::Repeat,
        address_v: Address::Repeat,
        weight_bits: None,
    };
    let b = Bindings {
        entries: vec![
            (Resource::Name("t".into()), Bound::Table(Arc::new(table))),
            (Resource::Name("s".into()), Bound::Sampler(sampler)),
        ],
    };
    let sh = Shader::from_source("exec.wgsl", src.to_string()).unwrap();
    let p = Program::compile_bound(
        &sh,
        "f",
        &BTreeMap::new(),
        super::Arithmetic::Exact,
        &crate::limits::Limits::default(),
        &b,
    )
    .unwrap_or_else(|e| panic!("{e}"));
    // u = 0.5 is between the two centres: (10 + 30) / 2; u = 0 wraps: the
    // same; u = 0.25 is the centre of texel 0. Texel 2 is out of range: 0
    // and an issue.
    let n = LANES + 1;
    let rows: Vec<Vec<f64>> = (0..n)
        .map(|i| vec![[0.5, 0.0, 0.25][i % 3], 0.5, (i % 3) as f64])
        .collect();
    let cols = columns(&p, &rows);
    let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
    let mut out = Vec::new();
    let issues = p.eval_serial(&refs, &mut out);
    let got = decode(&p, &out);
    for i in 0..n {
        assert_eq!(got[0][i], [20.0, 20.0, 10.0][i % 3], "point {i}");
        assert_eq!(got[1][i], [1.0, 3.0, 0.0][i % 3], "point {i}");
    }
    let oob: Vec<usize> = issues.iter().map(|i| i.point).collect();
    assert_eq!(oob, (0..n).filter(|i| i % 3 == 2).collect::<Vec<_>>());
    assert!(issues.iter().all(|i| i.kind == IssueKind::OutOfBounds));
}
