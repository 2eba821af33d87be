//! Texture built-ins on look-up tables bound in place of textures, through
//! WGSL: `textureSampleLevel`, `textureSample` and `textureLoad` must give the
//! values the WGSL/WebGPU texel rules define (hand-computed here, on a 4 × 2
//! table of powers of two so every bilinear blend is exact in f32) for each
//! filter and address mode, at texel centres, edges and corners, for
//! hundreds of points at once (so every lane of several batches is used).
//!
//! Sources: WGSL, "Texture Built-in Functions"; WebGPU, "GPUSamplerDescriptor";
//! the texel-coordinate rules are quoted in `harness/table/sample.rs`.

use std::collections::BTreeMap;
use std::sync::Arc;

use shadegate::eval::{bits_to_f64, f64_to_bits, Arithmetic, IssueKind, Program, ScalarKind};
use shadegate::limits::Limits;
use shadegate::table::{Address, Bindings, Bound, Filter, Resource, Sampler, Table};
use shadegate::wgsl::Shader;

const SRC: &str = "
@group(0) @binding(0) var lut: texture_2d<f32>;
@group(0) @binding(1) var lut_sampler: sampler;

fn sample_level(u: f32, v: f32, level: f32) -> vec4<f32> {
    return textureSampleLevel(lut, lut_sampler, vec2(u, v), level);
}

fn sample_auto(u: f32, v: f32) -> f32 {
    if (u < 2.0) {
        return textureSample(lut, lut_sampler, vec2(u, v)).x;
    }
    return -1.0;
}

fn load_i(x: i32, y: i32) -> vec4<f32> {
    return textureLoad(lut, vec2(x, y), 0);
}

fn load_u(x: u32, y: u32, level: u32) -> f32 {
    return textureLoad(lut, vec2(x, y), level).x;
}
";

fn table() -> Arc<Table> {
    Arc::new(Table::new(4, 2, 1, vec![0., 1., 2., 4., 8., 16., 32., 64.]).unwrap())
}

fn bindings(filter: Filter, u: Address, v: Address, by_slot: bool) -> Bindings {
    let (t, s) = if by_slot {
        (
            Resource::Binding {
                group: 0,
                binding: 0,
            },
            Resource::Binding {
                group: 0,
                binding: 1,
            },
        )
    } else {
        (
            Resource::Name("lut".into()),
            Resource::Name("lut_sampler".into()),
        )
    };
    Bindings {
        entries: vec![
            (t, Bound::Table(table())),
            (
                s,
                Bound::Sampler(Sampler {
                    mag_filter: filter,
                    min_filter: filter,
                    address_u: u,
                    address_v: v,
                    weight_bits: None,
                }),
            ),
        ],
    }
}

fn compile(f: &str, b: &Bindings) -> Result<Program, shadegate::wgsl::Diagnostic> {
    let sh = Shader::from_source("lut.wgsl", SRC.to_string()).unwrap_or_else(|e| panic!("{e}"));
    Program::compile_bound(
        &sh,
        f,
        &BTreeMap::new(),
        Arithmetic::Exact,
        &Limits::default(),
        b,
    )
}

/// Evaluate `p` at `rows`; output columns as f64, and the issues.
fn refused(f: &str, b: &Bindings) -> shadegate::wgsl::Diagnostic {
    match compile(f, b) {
        Ok(_) => panic!("`{f}` compiled"),
        Err(e) => e,
    }
}

fn run(p: &Program, rows: &[Vec<f64>]) -> (Vec<Vec<f64>>, Vec<shadegate::eval::LaneIssue>) {
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
        .map(|((_, k), c)| c.iter().map(|&b| bits_to_f64(*k, b)).collect())
        .collect();
    (outs, issues)
}

/// (u, v, clamp-to-edge, repeat, mirror-repeat) for linear filtering, each
/// worked from the rules: `x = u·4 − ½`, `y = v·2 − ½`, texels `floor` and
/// `floor + 1` wrapped per mode, weights the fractional parts.
const LINEAR: &[(f64, f64, f64, f64, f64)] = &[
    // texel centres
    (0.125, 0.25, 0.0, 0.0, 0.0),
    (0.875, 0.75, 64.0, 64.0, 64.0),
    (0.625, 0.25, 2.0, 2.0, 2.0),
    // between centres: (t(0,0) + t(1,0) + t(0,1) + t(1,1)) / 4
    (0.25, 0.5, 6.25, 6.25, 6.25),
    // left and right edges of row 0
    (0.0, 0.25, 0.0, 2.0, 0.0),
    (1.0, 0.25, 4.0, 2.0, 4.0),
    // top and bottom edges of column 1
    (0.375, 0.0, 1.0, 8.5, 1.0),
    (0.375, 1.0, 16.0, 8.5, 16.0),
    // corners
    (0.0, 0.0, 0.0, 19.0, 0.0),
    (1.0, 1.0, 64.0, 19.0, 64.0),
    (1.0, 0.0, 4.0, 19.0, 4.0),
    (0.0, 1.0, 8.0, 19.0, 8.0),
    // beyond the edges
    (-0.25, 0.25, 0.0, 3.0, 0.5),
    (1.25, 0.25, 4.0, 0.5, 3.0),
];

/// (u, v, clamp-to-edge, repeat, mirror-repeat) for nearest filtering:
/// texel `floor(u·4), floor(v·2)` wrapped.
const NEAREST: &[(f64, f64, f64, f64, f64)] = &[
    (0.3, 0.6, 16.0, 16.0, 16.0),
    (-0.1, 0.25, 0.0, 4.0, 0.0),
    (1.0, 0.25, 4.0, 0.0, 4.0),
    (-0.3, 0.25, 0.0, 2.0, 1.0),
    (0.0, 1.0, 8.0, 0.0, 8.0),
    (1.0, 1.0, 64.0, 0.0, 64.0),
];

#[track_caller]
fn check_mode(filter: Filter, cases: &[(f64, f64, f64, f64, f64)]) {
    for (m, mode) in [Address::ClampToEdge, Address::Repeat, Address::MirrorRepeat]
        .into_iter()
        .enumerate()
    {
        for by_slot in [false, true] {
            let p = compile("sample_level", &bindings(filter, mode, mode, by_slot)).unwrap();
            // Each case repeated over several batches, so every lane runs it.
            let rows: Vec<Vec<f64>> = (0..300)
                .map(|i| {
                    let c = cases[i % cases.len()];
                    vec![c.0, c.1, 0.0]
                })
                .collect();
            let (out, issues) = run(&p, &rows);
            assert!(issues.is_empty());
            for (i, r) in rows.iter().enumerate() {
                let c = cases[i % cases.len()];
                let want = [c.2, c.3, c.4][m];
                assert_eq!(
                    out[0][i], want,
                    "{filter:?} {mode:?} at ({}, {}), point {i}",
                    r[0], r[1]
                );
                // A one-channel table reads (r, 0, 0, 1).
                assert_eq!((out[1][i], out[2][i], out[3][i]), (0.0, 0.0, 1.0));
            }
        }
    }
}

#[test]
fn texture_sample_level_linear_matches_hand_computed_bilinear_values() {
    check_mode(Filter::Linear, LINEAR);
}

#[test]
fn texture_sample_level_nearest_matches_hand_computed_texels() {
    check_mode(Filter::Nearest, NEAREST);
}

#[test]
fn texture_sample_is_level_zero_and_masked_lanes_do_not_matter() {
    let b = bindings(Filter::Linear, Address::Repeat, Address::Repeat, false);
    let p = compile("sample_auto", &b).unwrap();
    let (out, _) = run(&p, &[vec![0.0, 0.0], vec![5.0, 0.0], vec![0.25, 0.5]]);
    assert_eq!(out[0], vec![19.0, -1.0, 6.25]);
}

#[test]
fn level_above_zero_uses_the_min_filter() {
    let mut b = bindings(
        Filter::Linear,
        Address::ClampToEdge,
        Address::ClampToEdge,
        false,
    );
    if let Bound::Sampler(s) = &mut b.entries[1].1 {
        s.min_filter = Filter::Nearest;
    }
    let p = compile("sample_level", &b).unwrap();
    let (out, _) = run(&p, &[vec![0.25, 0.5, 0.0], vec![0.25, 0.5, 2.0]]);
    // Linear: 6.25; nearest: texel (floor(1.0), floor(1.0)) = (1, 1) = 16.
    assert_eq!(out[0], vec![6.25, 16.0]);
}

#[test]
fn texture_load_reads_texels_and_reports_out_of_range_points() {
    let b = bindings(Filter::Nearest, Address::Repeat, Address::Repeat, false);
    let p = compile("load_i", &b).unwrap();
    assert_eq!(p.input_leaves()[0].1, ScalarKind::I32);
    let (out, issues) = run(
        &p,
        &[
            vec![3.0, 1.0],
            vec![4.0, 0.0],
            vec![-1.0, 0.0],
            vec![1.0, 0.0],
        ],
    );
    assert_eq!(out[0], vec![64.0, 0.0, 0.0, 1.0]);
    // Out of range reads (0, 0, 0, 0) (one of the results WGSL allows).
    assert_eq!(out[3], vec![1.0, 0.0, 0.0, 1.0]);
    let pts: Vec<usize> = issues.iter().map(|i| i.point).collect();
    assert_eq!(pts, vec![1, 2]);
    assert!(issues.iter().all(|i| i.kind == IssueKind::OutOfBounds));
    assert!(
        issues[0].message.contains("(4, 0)"),
        "{}",
        issues[0].message
    );
    assert_eq!(issues[0].line, 17);

    let p = compile("load_u", &b).unwrap();
    let (out, issues) = run(
        &p,
        &[
            vec![2.0, 1.0, 0.0],
            vec![2.0, 1.0, 1.0],
            vec![4294967295.0, 0.0, 0.0],
        ],
    );
    assert_eq!(out[0], vec![32.0, 0.0, 0.0]);
    assert_eq!(issues.len(), 2, "{issues:?}");
}

#[test]
fn unbound_and_misbound_textures_are_located_errors() {
    let e = refused("sample_level", &Bindings::default());
    assert!(e.message.contains("not supported"), "{}", e.message);
    assert!(
        e.message.contains("`lut") && e.message.contains("[check."),
        "{}",
        e.message
    );
    assert_eq!(e.line, 6, "{}", e.rendered);
    // Only the sampler bound: the texture is still refused.
    let mut b = bindings(Filter::Linear, Address::Repeat, Address::Repeat, false);
    b.entries.remove(0);
    let e = refused("sample_level", &b);
    assert!(e.message.contains("`lut`"), "{}", e.message);
    // A table bound to the sampler variable.
    let mut b = bindings(Filter::Linear, Address::Repeat, Address::Repeat, false);
    b.entries[1].1 = Bound::Table(table());
    let e = refused("sample_level", &b);
    assert!(
        e.message.contains("binds a table to this sampler"),
        "{}",
        e.message
    );
}
