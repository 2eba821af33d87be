//! Semantics corpus for the CPU evaluator: small WGSL functions over the whole
//! subset shading code uses, each evaluated at hand-picked points and compared
//! with values worked out by hand from the W3C WGSL specification (editor's
//! draft, `wgsl/index.bs`; sections are named by their anchors, e.g.
//! `#fract-builtin`, because section numbers move between drafts).
//!
//! Comparison is bit for bit, signed zeros included, and any NaN matches any
//! NaN (the spec does not pin NaN payloads). The evaluator implements IEEE 754
//! binary32 exactly and does not use the spec's licence to ignore the sign of
//! zero ("Floating Point Evaluation"), so exact zeros are checked too. Where
//! the spec only bounds a result (transcendental built-ins), the tolerance and
//! its derivation from the spec's accuracy table are written beside the case.
//!
//! Each test collects all failing cases of its corpus and reports them
//! together, naming the line of each case.

use std::collections::{BTreeMap, HashMap};
use std::panic::Location;

use shadegate::eval::{bits_to_f64, f64_to_bits, IssueKind, LaneIssue, Program, ScalarKind};
use shadegate::wgsl::Shader;

// ------------------------------------------------------------------ harness

/// One WGSL module and the failures found in it so far.
struct Corpus {
    shader: Shader,
    programs: HashMap<String, Program>,
    failures: Vec<String>,
}

impl Corpus {
    fn new(src: &str) -> Corpus {
        let shader = Shader::from_source("corpus.wgsl", src.to_string())
            .unwrap_or_else(|e| panic!("corpus does not load:\n{e}"));
        Corpus {
            shader,
            programs: HashMap::new(),
            failures: Vec::new(),
        }
    }

    fn program(&mut self, f: &str) -> &Program {
        if !self.programs.contains_key(f) {
            let p = Program::compile(&self.shader, f, &BTreeMap::new())
                .unwrap_or_else(|e| panic!("`{f}` does not compile:\n{e}"));
            self.programs.insert(f.to_string(), p);
        }
        &self.programs[f]
    }

    /// Evaluate `f` at the points `rows` (one f64 per input leaf, encoded by the
    /// leaf's kind). Returns per point the output leaves (kind, bits).
    fn run_points(
        &mut self,
        f: &str,
        rows: &[Vec<f64>],
    ) -> (Vec<Vec<(ScalarKind, u32)>>, Vec<LaneIssue>) {
        let p = self.program(f);
        let ins = p.input_leaves();
        let outs = p.output_leaves();
        let cols: Vec<Vec<u32>> = ins
            .iter()
            .enumerate()
            .map(|(i, (name, k))| {
                rows.iter()
                    .map(|r| {
                        let v = *r
                            .get(i)
                            .unwrap_or_else(|| panic!("`{f}`: no value for input `{name}`"));
                        f64_to_bits(*k, v)
                    })
                    .collect()
            })
            .collect();
        for r in rows {
            assert_eq!(
                r.len(),
                ins.len(),
                "`{f}` takes {} input leaves: {ins:?}",
                ins.len()
            );
        }
        let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
        let mut out = Vec::new();
        let issues = p.eval(&refs, &mut out);
        let per_point = (0..rows.len())
            .map(|pt| {
                outs.iter()
                    .zip(&out)
                    .map(|((_, k), c)| (*k, c[pt]))
                    .collect()
            })
            .collect();
        (per_point, issues)
    }

    fn run(&mut self, f: &str, args: &[f64]) -> (Vec<(ScalarKind, u32)>, Vec<LaneIssue>) {
        let (mut pts, issues) = self.run_points(f, &[args.to_vec()]);
        (pts.remove(0), issues)
    }

    /// `f(args)` must equal `want` exactly, with no per-lane issue.
    #[track_caller]
    fn check(&mut self, f: &str, args: &[f64], want: &[f64]) {
        let at = Location::caller();
        let (got, issues) = self.run(f, args);
        let ok = got.len() == want.len() && got.iter().zip(want).all(|(&(k, b), &w)| same(k, b, w));
        if !ok || !issues.is_empty() {
            self.failures.push(format!(
                "line {}: {f}({args:?}) = {:?}, want {want:?}{}",
                at.line(),
                decode(&got),
                if issues.is_empty() {
                    String::new()
                } else {
                    format!(" (issues: {issues:?})")
                }
            ));
        }
    }

    /// Like [`Corpus::check`], but the point must also carry exactly one issue
    /// of `kind` (e.g. a NaN made from finite inputs).
    #[track_caller]
    fn check_flagged(&mut self, f: &str, args: &[f64], want: &[f64], kind: IssueKind) {
        let at = Location::caller();
        let (got, issues) = self.run(f, args);
        let ok = got.len() == want.len() && got.iter().zip(want).all(|(&(k, b), &w)| same(k, b, w));
        let flagged = issues.len() == 1 && issues[0].kind == kind;
        if !ok || !flagged {
            self.failures.push(format!(
                "line {}: {f}({args:?}) = {:?}, want {want:?} with one {kind:?} issue, issues: {issues:?}",
                at.line(),
                decode(&got),
            ));
        }
    }

    /// Each output within `tol` (absolute) of `want`; `why` states where the
    /// tolerance comes from.
    #[track_caller]
    fn check_within(&mut self, f: &str, args: &[f64], want: &[f64], tol: f64, why: &str) {
        let at = Location::caller();
        assert!(!why.is_empty());
        let (got, issues) = self.run(f, args);
        let vals = decode(&got);
        let ok =
            vals.len() == want.len() && vals.iter().zip(want).all(|(g, w)| (g - w).abs() <= tol);
        if !ok || !issues.is_empty() {
            self.failures.push(format!(
                "line {}: {f}({args:?}) = {vals:?}, want {want:?} ± {tol:e} ({why}){}",
                at.line(),
                if issues.is_empty() {
                    String::new()
                } else {
                    format!(" (issues: {issues:?})")
                }
            ));
        }
    }

    /// Each output within `ulps` units in the last place (f32) of `want`.
    #[track_caller]
    fn check_ulps(&mut self, f: &str, args: &[f64], want: &[f64], ulps: f64, why: &str) {
        let at = Location::caller();
        let (got, issues) = self.run(f, args);
        let vals = decode(&got);
        let ok = vals.len() == want.len()
            && vals
                .iter()
                .zip(want)
                .all(|(g, w)| (g - w).abs() <= ulps * ulp_f32(*w));
        if !ok || !issues.is_empty() {
            self.failures.push(format!(
                "line {}: {f}({args:?}) = {vals:?}, want {want:?} within {ulps} ULP ({why}){}",
                at.line(),
                if issues.is_empty() {
                    String::new()
                } else {
                    format!(" (issues: {issues:?})")
                }
            ));
        }
    }

    #[track_caller]
    fn fail_unless(&mut self, cond: bool, what: String) {
        if !cond {
            self.failures
                .push(format!("line {}: {what}", Location::caller().line()));
        }
    }

    fn finish(self) {
        if !self.failures.is_empty() {
            panic!(
                "{} failing case(s):\n  {}",
                self.failures.len(),
                self.failures.join("\n  ")
            );
        }
    }
}

/// Output bits match the wanted value: NaN matches any NaN, everything else
/// exactly (signed zeros included).
fn same(k: ScalarKind, bits: u32, want: f64) -> bool {
    if want.is_nan() {
        return matches!(k, ScalarKind::F32 | ScalarKind::F16) && bits_to_f64(k, bits).is_nan();
    }
    bits == f64_to_bits(k, want)
}

fn decode(got: &[(ScalarKind, u32)]) -> Vec<f64> {
    got.iter().map(|&(k, b)| bits_to_f64(k, b)).collect()
}

/// Unit in the last place of an f32 value near `x` (the spacing of binary32
/// numbers in x's binade, subnormal spacing below 2^-126).
fn ulp_f32(x: f64) -> f64 {
    let e = x.abs().log2().floor().max(-126.0);
    2f64.powf(e - 23.0)
}

/// Round an f64 to the nearest IEEE 754 binary16 value, ties to even,
/// written out here (independently of the evaluator's use of the `half`
/// crate): scale so that one binary16 ULP is 1, round, scale back.
fn round_f16(x: f64) -> f64 {
    if x == 0.0 || !x.is_finite() {
        return x;
    }
    let e = x.abs().log2().floor().max(-14.0); // binary16 emin = -14
    let quantum = 2f64.powf(e - 10.0); // 10 fraction bits
    let r = (x / quantum).round_ties_even() * quantum;
    if r.abs() >= 65520.0 {
        f64::INFINITY.copysign(x) // past MAX (65504) by half an ULP: overflow
    } else {
        r
    }
}

const T: f64 = 1.0;
const F: f64 = 0.0;
const NAN: f64 = f64::NAN;
const INF: f64 = f64::INFINITY;

/// A u32 bit pattern as the f64 carrier value.
fn u(x: u32) -> f64 {
    f64::from(x)
}

fn f32v(x: f32) -> f64 {
    f64::from(x)
}

// ------------------------------------------------------------------ types

const TYPES: &str = r#"
struct Light { dir: vec3<f32>, power: f32 }
struct Scene { lights: array<Light, 2>, ambient: vec3<f32>, count: u32, lit: bool }

fn id_bool(x: bool) -> bool { return x; }
fn id_i32(x: i32) -> i32 { return x; }
fn id_u32(x: u32) -> u32 { return x; }
fn id_f32(x: f32) -> f32 { return x; }
fn id_vec2i(x: vec2<i32>) -> vec2<i32> { return x; }
fn id_vec3u(x: vec3<u32>) -> vec3<u32> { return x; }
fn id_vec4b(x: vec4<bool>) -> vec4<bool> { return x; }
fn id_mat2x3(m: mat2x3<f32>) -> mat2x3<f32> { return m; }
fn id_array(a: array<f32, 3>) -> array<f32, 3> { return a; }
fn scene_total(s: Scene, k: u32) -> f32 {
    return s.lights[k].power * s.lights[k].dir.y + s.ambient.z + f32(s.count) + select(0.0, 100.0, s.lit);
}
fn make_scene(x: f32) -> Scene {
    var s: Scene;
    s.lights[1].dir = vec3(x, 2.0 * x, 3.0);
    s.lights[0].power = -x;
    s.count = 7u;
    s.lit = x > 0.0;
    return s;
}
fn array_of_vec(i: i32) -> vec2<f32> {
    let a = array<vec2<f32>, 3>(vec2(1.0, 2.0), vec2(3.0, 4.0), vec2(5.0, 6.0));
    return a[i];
}
fn nested_array(i: i32, j: i32) -> i32 {
    var a: array<array<i32, 3>, 2>;
    for (var r = 0; r < 2; r++) {
        for (var c = 0; c < 3; c++) {
            a[r][c] = r * 10 + c;
        }
    }
    return a[i][j];
}
"#;

#[test]
fn every_scalar_vector_matrix_array_and_struct_type_round_trips() {
    let mut c = Corpus::new(TYPES);
    c.check("id_bool", &[T], &[T]);
    c.check("id_bool", &[F], &[F]);
    c.check("id_i32", &[-2147483648.0], &[-2147483648.0]);
    c.check("id_u32", &[4294967295.0], &[4294967295.0]);
    c.check("id_f32", &[-0.0], &[-0.0]);
    c.check("id_f32", &[1e-45], &[1e-45]); // smallest subnormal is kept (no flush)
    c.check("id_f32", &[-INF], &[-INF]);
    c.check("id_f32", &[NAN], &[NAN]);
    c.check("id_vec2i", &[-1.0, 7.0], &[-1.0, 7.0]);
    c.check("id_vec3u", &[1.0, 2.0, 3.0], &[1.0, 2.0, 3.0]);
    c.check("id_vec4b", &[T, F, F, T], &[T, F, F, T]);
    c.check(
        "id_mat2x3",
        &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0],
        &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0],
    );
    c.check("id_array", &[1.5, 2.5, 3.5], &[1.5, 2.5, 3.5]);
    c.finish();
}

#[test]
fn leaves_are_named_and_ordered_by_type_structure() {
    let mut c = Corpus::new(TYPES);
    let names = |v: Vec<(String, ScalarKind)>| v.into_iter().map(|(n, _)| n).collect::<Vec<_>>();
    let m = names(c.program("id_mat2x3").input_leaves());
    assert_eq!(
        m,
        ["m[0].x", "m[0].y", "m[0].z", "m[1].x", "m[1].y", "m[1].z"]
    );
    let s = c.program("scene_total").input_leaves();
    assert_eq!(s.len(), 2 * 4 + 3 + 1 + 1 + 1);
    assert_eq!(s[0], ("s.lights[0].dir.x".to_string(), ScalarKind::F32));
    assert_eq!(s[7], ("s.lights[1].power".to_string(), ScalarKind::F32));
    assert_eq!(s[10], ("s.ambient.z".to_string(), ScalarKind::F32));
    assert_eq!(s[11], ("s.count".to_string(), ScalarKind::U32));
    assert_eq!(s[12], ("s.lit".to_string(), ScalarKind::Bool));
    assert_eq!(s[13], ("k".to_string(), ScalarKind::U32));
    let out = names(c.program("make_scene").output_leaves());
    assert_eq!(
        out[4..8],
        [
            "result.lights[1].dir.x",
            "result.lights[1].dir.y",
            "result.lights[1].dir.z",
            "result.lights[1].power"
        ]
    );
    assert_eq!(names(c.program("id_f32").output_leaves()), ["result"]);
    assert_eq!(
        names(c.program("id_array").output_leaves()),
        ["result[0]", "result[1]", "result[2]"]
    );
}

#[test]
fn nested_structs_and_arrays_read_and_write_by_member_and_index() {
    let mut c = Corpus::new(TYPES);
    // lights[0] = (dir (1,2,3), power 4), lights[1] = (dir (5,6,7), power 8),
    // ambient (0,0,0.5), count 3, lit true; k selects a light dynamically.
    let scene = [
        1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 0.0, 0.0, 0.5, 3.0, T,
    ];
    let with_k = |k: f64| scene.iter().copied().chain([k]).collect::<Vec<_>>();
    c.check(
        "scene_total",
        &with_k(0.0),
        &[4.0 * 2.0 + 0.5 + 3.0 + 100.0],
    );
    c.check(
        "scene_total",
        &with_k(1.0),
        &[8.0 * 6.0 + 0.5 + 3.0 + 100.0],
    );
    // A declared-but-unassigned `var` is the zero value ("Zero Value Expressions").
    c.check(
        "make_scene",
        &[2.0],
        &[
            0.0, 0.0, 0.0, -2.0, 2.0, 4.0, 3.0, 0.0, 0.0, 0.0, 0.0, 7.0, T,
        ],
    );
    c.check(
        "make_scene",
        &[-1.0],
        &[
            0.0, 0.0, 0.0, 1.0, -1.0, -2.0, 3.0, 0.0, 0.0, 0.0, 0.0, 7.0, F,
        ],
    );
    c.check("array_of_vec", &[2.0], &[5.0, 6.0]);
    c.check("array_of_vec", &[0.0], &[1.0, 2.0]);
    c.check("nested_array", &[1.0, 2.0], &[12.0]);
    c.check("nested_array", &[0.0, 1.0], &[1.0]);
    c.finish();
}

// ------------------------------------------------------------------ expressions

const EXPRS: &str = r#"
fn compose(v: vec2<f32>, z: f32) -> vec4<f32> { return vec4(v.yx, z, 1.0); }
fn compose_mat(a: vec2<f32>, b: vec2<f32>) -> mat2x2<f32> { return mat2x2<f32>(a, b * 2.0); }
fn splat(x: f32) -> vec3<f32> { return vec3(x) + 1.0; }
fn swizzle(v: vec4<f32>) -> vec4<f32> { return v.wzyx + v.xxyy; }
fn swizzle_rgba(c: vec4<f32>) -> vec3<f32> { return c.bgr; }
fn member(v: vec3<f32>) -> f32 { return v.y; }
fn index_const(a: array<i32, 3>) -> i32 { return a[2]; }
fn index_dyn_vec(v: vec4<f32>, i: i32) -> f32 { return v[i]; }
fn index_dyn_u32(v: vec3<u32>, i: u32) -> u32 { return v[i]; }
fn index_dyn_mat(m: mat3x2<f32>, i: i32) -> vec2<f32> { return m[i]; }
fn index_dyn_mat2(m: mat3x2<f32>, i: i32, j: i32) -> f32 { return m[i][j]; }
fn index_dyn_var(i: i32, v: f32) -> vec4<f32> {
    var a = vec4(1.0, 2.0, 3.0, 4.0);
    a[i] = v;
    return a;
}
fn index_dyn_const_table(i: i32) -> f32 {
    return TABLE[i];
}
const TABLE = array<f32, 4>(0.5, 1.5, 2.5, 3.5);

fn neg_f(x: f32) -> f32 { return -x; }
fn add_f(a: f32, b: f32) -> f32 { return a + b; }
fn sub_f(a: f32, b: f32) -> f32 { return a - b; }
fn mul_f(a: f32, b: f32) -> f32 { return a * b; }
fn div_f(a: f32, b: f32) -> f32 { return a / b; }
fn rem_f(a: f32, b: f32) -> f32 { return a % b; }
fn vec_ops(a: vec3<f32>, b: vec3<f32>, s: f32) -> vec3<f32> { return (a + b) * s - a / b; }
fn vec_scalar_left(a: vec2<f32>, s: f32) -> vec2<f32> { return s * a + s; }

fn cmp_f(a: f32, b: f32) -> vec4<bool> { return vec4((a < b), (a <= b), (a == b), (a != b)); }
fn cmp_f2(a: f32, b: f32) -> vec2<bool> { return vec2((a > b), (a >= b)); }
fn cmp_i(a: i32, b: i32) -> vec4<bool> { return vec4((a < b), (a <= b), (a > b), (a >= b)); }
fn cmp_u(a: u32, b: u32) -> vec4<bool> { return vec4((a < b), (a <= b), (a > b), (a == b)); }
fn cmp_vec(a: vec3<f32>, b: vec3<f32>) -> vec3<bool> { return a < b; }
fn bool_ops(a: bool, b: bool) -> vec4<bool> { return vec4(a & b, a | b, !a, a != b); }
fn bool_eq(a: bool, b: bool) -> bool { return a == b; }

fn mat_vec(m: mat3x2<f32>, v: vec3<f32>) -> vec2<f32> { return m * v; }
fn vec_mat(v: vec2<f32>, m: mat3x2<f32>) -> vec3<f32> { return v * m; }
fn mat_mat(a: mat2x2<f32>, b: mat2x2<f32>) -> mat2x2<f32> { return a * b; }
fn mat_mat_rect(a: mat3x2<f32>, b: mat2x3<f32>) -> mat2x2<f32> { return a * b; }
fn scalar_mat(s: f32, m: mat2x2<f32>) -> mat2x2<f32> { return s * m; }
fn mat_scalar(m: mat2x2<f32>, s: f32) -> mat2x2<f32> { return m * s; }
fn mat_add_sub(a: mat2x2<f32>, b: mat2x2<f32>) -> mat2x2<f32> { return (a + b) - (b - a); }

fn select_scalar(f: f32, t: f32, c: bool) -> f32 { return select(f, t, c); }
fn select_vec_scalar_cond(f: vec2<f32>, t: vec2<f32>, c: bool) -> vec2<f32> { return select(f, t, c); }
fn select_vec(f: vec3<i32>, t: vec3<i32>, c: vec3<bool>) -> vec3<i32> { return select(f, t, c); }
fn all_any(v: vec3<bool>) -> vec2<bool> { return vec2(all(v), any(v)); }
fn all_any_scalar(b: bool) -> vec2<bool> { return vec2(all(b), any(b)); }
"#;

#[test]
fn compose_splat_swizzle_and_access() {
    let mut c = Corpus::new(EXPRS);
    c.check("compose", &[1.0, 2.0, 3.0], &[2.0, 1.0, 3.0, 1.0]);
    c.check("compose_mat", &[1.0, 2.0, 3.0, 4.0], &[1.0, 2.0, 6.0, 8.0]);
    c.check("splat", &[2.0], &[3.0, 3.0, 3.0]);
    c.check(
        "swizzle",
        &[1.0, 2.0, 3.0, 4.0],
        &[4.0 + 1.0, 3.0 + 1.0, 2.0 + 2.0, 1.0 + 2.0],
    );
    c.check(
        "swizzle_rgba",
        &[0.1, 0.2, 0.3, 0.4],
        &[f32v(0.3), f32v(0.2), f32v(0.1)],
    );
    c.check("member", &[1.0, 2.0, 3.0], &[2.0]);
    c.check("index_const", &[7.0, 8.0, 9.0], &[9.0]);
    for i in 0..4 {
        c.check(
            "index_dyn_vec",
            &[10.0, 11.0, 12.0, 13.0, i as f64],
            &[10.0 + i as f64],
        );
    }
    c.check("index_dyn_u32", &[5.0, 6.0, 7.0, 2.0], &[7.0]);
    let m = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0];
    c.check("index_dyn_mat", &[&m[..], &[1.0]].concat(), &[3.0, 4.0]);
    c.check("index_dyn_mat2", &[&m[..], &[2.0, 1.0]].concat(), &[6.0]);
    c.check("index_dyn_var", &[2.0, 9.0], &[1.0, 2.0, 9.0, 4.0]);
    c.check("index_dyn_var", &[0.0, -1.0], &[-1.0, 2.0, 3.0, 4.0]);
    c.check("index_dyn_const_table", &[3.0], &[3.5]);
    c.finish();
}

#[test]
fn float_arithmetic_is_ieee_binary32_round_to_nearest_even() {
    let mut c = Corpus::new(EXPRS);
    // "Floating Point Accuracy": + - * are correctly rounded; the evaluator
    // is exactly IEEE 754 binary32 with round-to-nearest-even, / included.
    c.check("add_f", &[0.1, 0.2], &[f32v(0.1f32 + 0.2f32)]);
    c.check("add_f", &[16777216.0, 1.0], &[16777216.0]); // tie to even
    c.check("add_f", &[16777216.0, 3.0], &[16777220.0]); // tie to even, upwards
    c.check("add_f", &[1.0, -1.0], &[0.0]); // x - x is +0 in round-to-nearest
    c.check("add_f", &[-0.0, -0.0], &[-0.0]);
    // Overflow and 0/0 follow IEEE 754 and are flagged as non-finite results
    // of finite inputs (the spec's "Finite Math Assumption" makes them
    // indeterminate on a GPU).
    c.check_flagged(
        "add_f",
        &[3.4028235e38, 3.4028235e38],
        &[INF],
        IssueKind::NonFinite,
    );
    c.check("add_f", &[INF, -INF], &[NAN]);
    c.check("sub_f", &[1.0, 1.0e-8], &[1.0]);
    c.check("sub_f", &[0.0, 0.0], &[0.0]);
    c.check(
        "mul_f",
        &[1.0e-30, 1.0e-30],
        &[f32v(1.0e-30f32 * 1.0e-30f32)],
    ); // subnormal kept
    c.check("mul_f", &[-2.0, 0.0], &[-0.0]);
    c.check("div_f", &[1.0, 3.0], &[f32v(1.0f32 / 3.0f32)]);
    c.check_flagged("div_f", &[1.0, -0.0], &[-INF], IssueKind::NonFinite);
    c.check_flagged("div_f", &[0.0, 0.0], &[NAN], IssueKind::NonFinite);
    c.check("neg_f", &[0.0], &[-0.0]);
    c.check("neg_f", &[-INF], &[INF]);
    // "Arithmetic Expressions": float e1 % e2 = e1 - e2 * trunc(e1 / e2).
    c.check("rem_f", &[5.5, 2.0], &[1.5]);
    c.check("rem_f", &[-5.5, 2.0], &[-1.5]);
    c.check("rem_f", &[5.5, -2.0], &[1.5]);
    let (a, b) = (1.0e10f32, 3.3f32);
    let spec = a - b * (a / b).trunc();
    c.fail_unless(
        spec != a % b,
        format!("case {a} % {b} must tell the formula from fmod"),
    );
    c.check("rem_f", &[f32v(a), f32v(b)], &[f32v(spec)]);
    c.check(
        "vec_ops",
        &[1.0, 2.0, 4.0, 1.0, 2.0, 8.0, 0.5],
        &[0.0, 1.0, 5.5],
    );
    c.check("vec_scalar_left", &[1.0, -2.0, 3.0], &[6.0, -3.0]);
    c.finish();
}

#[test]
fn comparisons_and_boolean_operators() {
    let mut c = Corpus::new(EXPRS);
    c.check("cmp_f", &[1.0, 2.0], &[T, T, F, T]);
    c.check("cmp_f", &[2.0, 2.0], &[F, T, T, F]);
    c.check("cmp_f", &[0.0, -0.0], &[F, T, T, F]); // +0 == -0 (IEEE 754)
    c.check("cmp_f", &[NAN, 1.0], &[F, F, F, T]); // NaN compares unordered
    c.check("cmp_f2", &[NAN, NAN], &[F, F]);
    c.check("cmp_f2", &[3.0, 2.0], &[T, T]);
    c.check("cmp_i", &[-1.0, 1.0], &[T, T, F, F]);
    c.check("cmp_i", &[-2147483648.0, 2147483647.0], &[T, T, F, F]);
    c.check("cmp_u", &[4294967295.0, 1.0], &[F, F, T, F]); // unsigned order
    c.check("cmp_vec", &[1.0, 5.0, NAN, 2.0, 4.0, 0.0], &[T, F, F]);
    c.check("bool_ops", &[T, F], &[F, T, F, T]);
    c.check("bool_ops", &[T, T], &[T, T, F, F]);
    c.check("bool_eq", &[F, F], &[T]);
    c.finish();
}

#[test]
fn matrix_products_follow_column_major_linear_algebra() {
    let mut c = Corpus::new(EXPRS);
    // Columns c0 = (1,2), c1 = (3,4), c2 = (5,6) ("Matrix Types": column-major).
    let m = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0];
    // m * v = c0*1 + c1*10 + c2*100.
    c.check(
        "mat_vec",
        &[&m[..], &[1.0, 10.0, 100.0]].concat(),
        &[531.0, 642.0],
    );
    // v * m: component c is dot(v, column c).
    c.check(
        "vec_mat",
        &[&[1.0, 10.0][..], &m[..]].concat(),
        &[21.0, 43.0, 65.0],
    );
    // [[1,3],[2,4]] * [[5,7],[6,8]] = [[23,31],[34,46]] (rows shown), columns out.
    c.check(
        "mat_mat",
        &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0],
        &[23.0, 34.0, 31.0, 46.0],
    );
    // mat3x2 * mat2x3 -> mat2x2: column j is a * (column j of b).
    c.check(
        "mat_mat_rect",
        &[&m[..], &[1.0, 0.0, 2.0, 0.0, 1.0, 3.0]].concat(),
        &[11.0, 14.0, 18.0, 22.0],
    );
    c.check(
        "scalar_mat",
        &[2.0, 1.0, 2.0, 3.0, 4.0],
        &[2.0, 4.0, 6.0, 8.0],
    );
    c.check(
        "mat_scalar",
        &[1.0, 2.0, 3.0, 4.0, -1.0],
        &[-1.0, -2.0, -3.0, -4.0],
    );
    c.check(
        "mat_add_sub",
        &[1.0, 2.0, 3.0, 4.0, 10.0, 20.0, 30.0, 40.0],
        &[2.0, 4.0, 6.0, 8.0],
    );
    c.finish();
}

#[test]
fn select_all_and_any() {
    let mut c = Corpus::new(EXPRS);
    // "Logical Built-in Functions": select(f, t, cond) is t when cond holds.
    c.check("select_scalar", &[1.0, 2.0, T], &[2.0]);
    c.check("select_scalar", &[1.0, 2.0, F], &[1.0]);
    c.check(
        "select_vec_scalar_cond",
        &[1.0, 2.0, 3.0, 4.0, T],
        &[3.0, 4.0],
    );
    c.check(
        "select_vec",
        &[1.0, 2.0, 3.0, -1.0, -2.0, -3.0, T, F, T],
        &[-1.0, 2.0, -3.0],
    );
    c.check("all_any", &[T, T, T], &[T, T]);
    c.check("all_any", &[T, F, T], &[F, T]);
    c.check("all_any", &[F, F, F], &[F, F]);
    c.check("all_any_scalar", &[T], &[T, T]);
    c.check("all_any_scalar", &[F], &[F, F]);
    c.finish();
}

// ------------------------------------------------------------------ integers

const INTS: &str = r#"
fn add_i(a: i32, b: i32) -> i32 { return a + b; }
fn sub_i(a: i32, b: i32) -> i32 { return a - b; }
fn mul_i(a: i32, b: i32) -> i32 { return a * b; }
fn div_i(a: i32, b: i32) -> i32 { return a / b; }
fn rem_i(a: i32, b: i32) -> i32 { return a % b; }
fn neg_i(a: i32) -> i32 { return -a; }
fn add_u(a: u32, b: u32) -> u32 { return a + b; }
fn sub_u(a: u32, b: u32) -> u32 { return a - b; }
fn mul_u(a: u32, b: u32) -> u32 { return a * b; }
fn div_u(a: u32, b: u32) -> u32 { return a / b; }
fn rem_u(a: u32, b: u32) -> u32 { return a % b; }
fn shl_i(a: i32, s: u32) -> i32 { return a << s; }
fn shr_i(a: i32, s: u32) -> i32 { return a >> s; }
fn shl_u(a: u32, s: u32) -> u32 { return a << s; }
fn shr_u(a: u32, s: u32) -> u32 { return a >> s; }
fn bits_u(a: u32, b: u32) -> vec4<u32> { return vec4(a & b, a | b, a ^ b, ~a); }
fn bits_i(a: i32, b: i32) -> vec4<i32> { return vec4(a & b, a | b, a ^ b, ~a); }
fn vec_div_i(a: vec2<i32>, b: vec2<i32>) -> vec2<i32> { return a / b; }
fn vec_shift(a: vec2<u32>, s: vec2<u32>) -> vec2<u32> { return a << s; }
"#;

#[test]
fn integer_arithmetic_wraps_and_division_has_the_spec_values() {
    let mut c = Corpus::new(INTS);
    const MIN: f64 = -2147483648.0;
    const MAX: f64 = 2147483647.0;
    // "Integer Types" / "Arithmetic Expressions": concrete integers wrap
    // modulo 2^32.
    c.check("add_i", &[MAX, 1.0], &[MIN]);
    c.check("sub_i", &[MIN, 1.0], &[MAX]);
    c.check("mul_i", &[65536.0, 65536.0], &[0.0]);
    c.check("mul_i", &[MAX, 2.0], &[-2.0]);
    c.check("neg_i", &[MIN], &[MIN]); // -MIN wraps to MIN
    c.check("add_u", &[4294967295.0, 2.0], &[1.0]);
    c.check("sub_u", &[0.0, 1.0], &[4294967295.0]);
    c.check("mul_u", &[4294967295.0, 4294967295.0], &[1.0]);
    // Division truncates toward zero; the remainder takes the dividend's sign.
    c.check("div_i", &[-7.0, 2.0], &[-3.0]);
    c.check("rem_i", &[-7.0, 2.0], &[-1.0]);
    c.check("rem_i", &[7.0, -2.0], &[1.0]);
    // "Arithmetic Expressions": e1 / 0 is e1; MIN / -1 is e1; e1 % 0 and
    // MIN % -1 are 0 (these are creation errors only for const operands).
    c.check("div_i", &[7.0, 0.0], &[7.0]);
    c.check("div_i", &[MIN, -1.0], &[MIN]);
    c.check("rem_i", &[7.0, 0.0], &[0.0]);
    c.check("rem_i", &[MIN, -1.0], &[0.0]);
    c.check("div_u", &[9.0, 0.0], &[9.0]);
    c.check("rem_u", &[9.0, 0.0], &[0.0]);
    c.check("div_u", &[4294967295.0, 2.0], &[2147483647.0]);
    c.check("vec_div_i", &[MIN, 5.0, -1.0, 0.0], &[MIN, 5.0]);
    c.finish();
}

#[test]
fn shifts_take_the_amount_modulo_the_bit_width() {
    let mut c = Corpus::new(INTS);
    // "Bit Expressions": at run time only the low 5 bits of the shift count
    // are used (a const count >= 32 would be a shader-creation error).
    c.check("shl_u", &[1.0, 33.0], &[2.0]);
    c.check("shl_u", &[1.0, 32.0], &[1.0]);
    c.check("shl_u", &[3.0, 31.0], &[2147483648.0]);
    c.check("shr_u", &[2147483648.0, 63.0], &[1.0]);
    c.check("shl_i", &[1.0, 31.0], &[-2147483648.0]);
    c.check("shl_i", &[-1.0, 4294967295.0], &[-2147483648.0]); // count 31
                                                               // >> on i32 is arithmetic (sign-propagating).
    c.check("shr_i", &[-8.0, 1.0], &[-4.0]);
    c.check("shr_i", &[-1.0, 31.0], &[-1.0]);
    c.check("shr_i", &[-2147483648.0, 32.0], &[-2147483648.0]);
    c.check("vec_shift", &[1.0, 1.0, 4.0, 36.0], &[16.0, 16.0]);
    c.check(
        "bits_u",
        &[u(0xF0F0u32), u(0xFF00u32)],
        &[
            u(0xF000u32),
            u(0xFFF0u32),
            u(0x0FF0u32),
            f64::from(!0xF0F0u32),
        ],
    );
    c.check("bits_i", &[-1.0, 5.0], &[5.0, -1.0, -6.0, 0.0]);
    c.finish();
}

// ------------------------------------------------------------------ conversions

const CONVERSIONS: &str = r#"
enable f16;
fn f_to_i(x: f32) -> i32 { return i32(x); }
fn f_to_u(x: f32) -> u32 { return u32(x); }
fn h_to_i(x: f16) -> i32 { return i32(x); }
fn h_to_u(x: f16) -> u32 { return u32(x); }
fn i_to_f(x: i32) -> f32 { return f32(x); }
fn u_to_f(x: u32) -> f32 { return f32(x); }
fn i_to_u(x: i32) -> u32 { return u32(x); }
fn u_to_i(x: u32) -> i32 { return i32(x); }
fn f_to_b(x: f32) -> bool { return bool(x); }
fn i_to_b(x: i32) -> bool { return bool(x); }
fn u_to_b(x: u32) -> bool { return bool(x); }
fn b_to_all(b: bool) -> vec3<f32> { return vec3(f32(b), f32(i32(b)), f32(u32(b))); }
fn vec_f_to_i(v: vec3<f32>) -> vec3<i32> { return vec3<i32>(v); }
fn bc_f_u(x: f32) -> u32 { return bitcast<u32>(x); }
fn bc_u_f(x: u32) -> f32 { return bitcast<f32>(x); }
fn bc_u_i(x: u32) -> i32 { return bitcast<i32>(x); }
fn bc_i_f(x: i32) -> f32 { return bitcast<f32>(x); }
fn bc_vec(v: vec2<f32>) -> vec2<i32> { return bitcast<vec2<i32>>(v); }
"#;

#[test]
fn float_to_integer_conversion_saturates_at_the_spec_bounds() {
    let mut c = Corpus::new(CONVERSIONS);
    // "Floating Point Conversion": clamp to the closest value to the integer
    // range that is representable in the *source* type, then truncate. For
    // f32 -> i32 the bounds are -2^31 and 2147483520 (2^31 - 128), for
    // f32 -> u32 they are 0 and 4294967040 (2^32 - 256). The spec's own
    // examples: i32(1e20f) = 2147483520, u32(1e20f) = 4294967040, u32(-1f) = 0.
    c.check("f_to_i", &[1e20], &[2147483520.0]);
    c.check("f_to_u", &[1e20], &[4294967040.0]);
    c.check("f_to_u", &[-1.0], &[0.0]);
    c.check("f_to_i", &[2147483520.0], &[2147483520.0]);
    c.check("f_to_i", &[2147483648.0], &[2147483520.0]);
    c.check("f_to_i", &[INF], &[2147483520.0]);
    c.check("f_to_i", &[-2147483648.0], &[-2147483648.0]);
    c.check("f_to_i", &[-3e9], &[-2147483648.0]);
    c.check("f_to_i", &[-INF], &[-2147483648.0]);
    c.check("f_to_i", &[-2.7], &[-2.0]); // truncation toward zero
    c.check("f_to_i", &[2.7], &[2.0]);
    c.check("f_to_i", &[-0.0], &[0.0]);
    c.check("f_to_u", &[4294967040.0], &[4294967040.0]);
    c.check("f_to_u", &[4294967296.0], &[4294967040.0]);
    c.check("f_to_u", &[2.9], &[2.0]);
    c.check("f_to_u", &[-0.5], &[0.0]);
    c.check("vec_f_to_i", &[1.5, -2.5, 3e9], &[1.0, -2.0, 2147483520.0]);
    // f16 sources never exceed the i32 range (65504 max); u32 still floors at 0.
    c.check("h_to_i", &[-65504.0], &[-65504.0]);
    c.check("h_to_i", &[-1.5], &[-1.0]);
    c.check("h_to_u", &[65504.0], &[65504.0]);
    c.check("h_to_u", &[-3.0], &[0.0]);
    c.finish();
}

#[test]
fn integer_to_float_rounds_to_nearest_even_and_bool_conversions() {
    let mut c = Corpus::new(CONVERSIONS);
    c.check("i_to_f", &[16777217.0], &[16777216.0]); // tie -> even
    c.check("i_to_f", &[16777219.0], &[16777220.0]); // tie -> even, upwards
    c.check("i_to_f", &[-2147483648.0], &[-2147483648.0]);
    c.check("i_to_f", &[2147483647.0], &[2147483648.0]);
    c.check("u_to_f", &[4294967295.0], &[4294967296.0]);
    // i32 <-> u32 reinterpret the bits ("Conversion Built-in Functions").
    c.check("i_to_u", &[-1.0], &[4294967295.0]);
    c.check("u_to_i", &[2147483648.0], &[-2147483648.0]);
    // bool(x) is false exactly for zero (both signs); NaN is true.
    c.check("f_to_b", &[0.0], &[F]);
    c.check("f_to_b", &[-0.0], &[F]);
    c.check("f_to_b", &[NAN], &[T]);
    c.check("f_to_b", &[1e-45], &[T]);
    c.check("i_to_b", &[-5.0], &[T]);
    c.check("i_to_b", &[0.0], &[F]);
    c.check("u_to_b", &[7.0], &[T]);
    c.check("b_to_all", &[T], &[1.0, 1.0, 1.0]);
    c.check("b_to_all", &[F], &[0.0, 0.0, 0.0]);
    c.finish();
}

#[test]
fn bitcast_reinterprets_32_bit_patterns() {
    let mut c = Corpus::new(CONVERSIONS);
    c.check("bc_f_u", &[1.0], &[f64::from(0x3F80_0000u32)]);
    c.check("bc_f_u", &[-0.0], &[f64::from(0x8000_0000u32)]);
    c.check("bc_u_f", &[f64::from(0xC000_0000u32)], &[-2.0]);
    c.check("bc_u_f", &[1.0], &[1e-45]); // bit pattern 1: smallest subnormal
    c.check("bc_u_i", &[4294967295.0], &[-1.0]);
    c.check("bc_i_f", &[-1082130432.0], &[-1.0]); // 0xBF800000
    c.check(
        "bc_vec",
        &[1.0, -2.0],
        &[f64::from(0x3F80_0000u32), -1073741824.0],
    );
    // The spec also defines bitcasts between vec2<f16> and 32-bit scalars
    // ("Bit Reinterpretation Built-in Functions"); naga 30 rejects them in
    // validation (its `As` bitcast keeps the component count), so they never
    // reach the evaluator.
    c.finish();
}

// ------------------------------------------------------------------ statements

const STATEMENTS: &str = r#"
fn decls(x: f32) -> f32 {
    const K = 2.5;
    let a = x * K;
    var b = a;
    b = b + 1.0;
    return b;
}
fn compound_i(a: i32, b: i32) -> array<i32, 10> {
    var r: array<i32, 10>;
    var x = a; x += b; r[0] = x;
    x = a; x -= b; r[1] = x;
    x = a; x *= b; r[2] = x;
    x = a; x /= b; r[3] = x;
    x = a; x %= b; r[4] = x;
    x = a; x &= b; r[5] = x;
    x = a; x |= b; r[6] = x;
    x = a; x ^= b; r[7] = x;
    x = a; x <<= u32(b); r[8] = x;
    x = a; x >>= u32(b); r[9] = x;
    return r;
}
fn compound_vec(a: vec2<f32>) -> vec2<f32> {
    var v = a;
    v *= 2.0;
    v += vec2(1.0, -1.0);
    v.y /= 4.0;
    return v;
}
fn incdec(a: i32) -> vec2<i32> {
    var i = a;
    i++;
    i++;
    i--;
    var j = a;
    j--;
    return vec2(i, j);
}
fn classify(x: f32) -> i32 {
    if x < 0.0 {
        return -1;
    } else if x == 0.0 {
        return 0;
    } else {
        return 1;
    }
}
fn if_no_else(x: f32) -> f32 {
    var y = x;
    if y > 10.0 { y = 10.0; }
    return y;
}
fn sw(x: i32) -> i32 {
    var r = 0;
    switch x {
        case 1, 2: { r = 10; }
        case 3: { r = 30; if r > 0 { break; } r = 31; }
        case 5, default, 6: { r = 99; }
        case -4: { r = -40; }
    }
    return r;
}
fn sw_u(x: u32) -> u32 {
    switch x {
        case 0u: { return 100u; }
        case 4294967295u: { return 200u; }
        default: { return x; }
    }
}
fn sw_in_loop(n: i32) -> i32 {
    var acc = 0;
    for (var i = 0; i < n; i++) {
        switch i % 3 {
            case 0: { continue; }
            case 1: { acc += 10; }
            default: { acc += 1; break; }
        }
        acc += 100;
    }
    return acc;
}
fn loop_break(n: i32) -> i32 {
    var s = 0;
    var i = 0;
    loop {
        if i >= n { break; }
        s += i;
        continuing { i++; }
    }
    return s;
}
fn collatz_steps(x: u32) -> u32 {
    var v = x;
    var steps = 0u;
    while v != 1u {
        if v % 2u == 0u { v /= 2u; } else { v = 3u * v + 1u; }
        steps++;
    }
    return steps;
}
fn for_continue(n: i32) -> i32 {
    var s = 0;
    for (var i = 0; i < n; i++) {
        if i % 2 == 0 { continue; }
        s += i;
    }
    return s;
}
fn break_if(n: i32) -> i32 {
    var i = 0;
    loop {
        i += 3;
        continuing { break if i >= n; }
    }
    return i;
}
fn continuing_after_continue(n: i32) -> i32 {
    var i = 0;
    var c = 0;
    loop {
        i++;
        if i > n { break; }
        if i % 2 == 0 { continue; }
        c += 100;
        continuing { c += 1; }
    }
    return c;
}
fn nested(n: i32) -> i32 {
    var c = 0;
    for (var i = 0; i < n; i++) {
        for (var j = 0; j < n; j++) {
            if j > i { break; }
            c += 1;
        }
    }
    return c;
}
fn find_first(a: array<i32, 5>, v: i32) -> i32 {
    for (var i = 0; i < 5; i++) {
        if a[i] == v { return i; }
    }
    return -1;
}
fn isqrt_up(x: i32) -> i32 {
    var i = 0;
    loop {
        if i * i >= x { return i; }
        i++;
    }
    return -1;
}
fn nested_call_return(x: i32) -> i32 {
    return isqrt_up(x) + isqrt_up(x + 10) * 100;
}
fn early_return_then_var(x: f32) -> f32 {
    var y = 1.0;
    if x < 0.0 { return -1.0; }
    y = y + x;
    for (var i = 0; i < 3; i++) {
        if y > 4.0 { return y * 10.0; }
        y = y * 2.0;
    }
    return y;
}
fn loop_local_reinit(n: i32) -> i32 {
    var total = 0;
    for (var i = 0; i < n; i++) {
        var fresh: i32;
        fresh += i;
        total += fresh;
    }
    return total;
}
"#;

#[test]
fn declarations_and_assignment_forms() {
    let mut c = Corpus::new(STATEMENTS);
    c.check("decls", &[2.0], &[6.0]);
    // a = -7, b = 2
    c.check(
        "compound_i",
        &[-7.0, 2.0],
        &[-5.0, -9.0, -14.0, -3.0, -1.0, 0.0, -5.0, -5.0, -28.0, -2.0],
    );
    // b = 33: shift counts are taken modulo 32 in compound forms too.
    c.check(
        "compound_i",
        &[12.0, 33.0],
        &[45.0, -21.0, 396.0, 0.0, 12.0, 0.0, 45.0, 45.0, 24.0, 6.0],
    );
    c.check("compound_vec", &[1.0, 2.0], &[3.0, 0.75]);
    c.check("incdec", &[5.0], &[6.0, 4.0]);
    c.check("incdec", &[2147483647.0], &[-2147483648.0, 2147483646.0]); // ++ wraps
    c.check("loop_local_reinit", &[4.0], &[6.0]); // a `var` in a loop body starts at zero each time
    c.finish();
}

#[test]
fn if_else_and_switch() {
    let mut c = Corpus::new(STATEMENTS);
    c.check("classify", &[-3.0], &[-1.0]);
    c.check("classify", &[0.0], &[0.0]);
    c.check("classify", &[-0.0], &[0.0]);
    c.check("classify", &[2.0], &[1.0]);
    c.check("classify", &[NAN], &[1.0]); // both comparisons false: the else arm
    c.check("if_no_else", &[12.0], &[10.0]);
    c.check("if_no_else", &[3.0], &[3.0]);
    for (x, want) in [
        (1, 10),
        (2, 10),
        (3, 30),
        (5, 99),
        (6, 99),
        (0, 99),
        (-4, -40),
        (7, 99),
    ] {
        c.check("sw", &[f64::from(x)], &[f64::from(want)]);
    }
    c.check("sw_u", &[0.0], &[100.0]);
    c.check("sw_u", &[4294967295.0], &[200.0]);
    c.check("sw_u", &[17.0], &[17.0]);
    // i = 0: continue; 1: +10 +100; 2: +1 (break leaves the switch only) +100; ...
    c.check("sw_in_loop", &[6.0], &[2.0 * 110.0 + 2.0 * 101.0]);
    c.finish();
}

#[test]
fn loops_break_continue_continuing_and_return() {
    let mut c = Corpus::new(STATEMENTS);
    c.check("loop_break", &[5.0], &[10.0]);
    c.check("loop_break", &[0.0], &[0.0]);
    c.check("collatz_steps", &[27.0], &[111.0]);
    c.check("collatz_steps", &[6.0], &[8.0]);
    c.check("collatz_steps", &[1.0], &[0.0]);
    c.check("for_continue", &[10.0], &[25.0]);
    c.check("break_if", &[10.0], &[12.0]);
    c.check("break_if", &[0.0], &[3.0]); // the body runs before the first test
                                         // The continuing block runs after `continue` but not after `break`.
    c.check("continuing_after_continue", &[4.0], &[204.0]);
    c.check("nested", &[4.0], &[10.0]);
    c.check("find_first", &[4.0, 8.0, 15.0, 16.0, 23.0, 16.0], &[3.0]);
    c.check("find_first", &[4.0, 8.0, 15.0, 16.0, 23.0, 42.0], &[-1.0]);
    c.check("nested_call_return", &[10.0], &[4.0 + 500.0]);
    c.check("nested_call_return", &[0.0], &[0.0 + 400.0]);
    c.check("early_return_then_var", &[-2.0], &[-1.0]);
    c.check("early_return_then_var", &[0.5], &[60.0]);
    c.check("early_return_then_var", &[4.5], &[55.0]);
    c.finish();
}

#[test]
fn lanes_taking_different_paths_share_a_batch() {
    // The same control-flow corpus evaluated with every point in one batch
    // must give each point its own answer (per-lane masks).
    let mut c = Corpus::new(STATEMENTS);
    let xs = [27.0, 1.0, 6.0, 7.0, 2.0, 97.0, 3.0, 1.0];
    let want = [111.0, 0.0, 8.0, 16.0, 1.0, 118.0, 7.0, 0.0];
    let rows: Vec<Vec<f64>> = xs.iter().map(|&x| vec![x]).collect();
    let (got, issues) = c.run_points("collatz_steps", &rows);
    let got: Vec<f64> = got.iter().map(|p| decode(p)[0]).collect();
    c.fail_unless(
        got == want && issues.is_empty(),
        format!("collatz batch {got:?} {issues:?}"),
    );
    let rows: Vec<Vec<f64>> = [-2.0, 0.5, 4.5, 100.0, 1.5]
        .iter()
        .map(|&x| vec![x])
        .collect();
    let (got, _) = c.run_points("early_return_then_var", &rows);
    let got: Vec<f64> = got.iter().map(|p| decode(p)[0]).collect();
    c.fail_unless(
        got == [-1.0, 60.0, 55.0, 1010.0, 50.0],
        format!("early return batch {got:?}"),
    );
    let rows: Vec<Vec<f64>> = (-5..9).map(|x| vec![f64::from(x)]).collect();
    let (got, _) = c.run_points("sw", &rows);
    let got: Vec<f64> = got.iter().map(|p| decode(p)[0]).collect();
    let want: Vec<f64> = (-5..9)
        .map(|x| match x {
            1 | 2 => 10.0,
            3 => 30.0,
            -4 => -40.0,
            _ => 99.0,
        })
        .collect();
    c.fail_unless(got == want, format!("switch batch {got:?}"));
    c.finish();
}

// ------------------------------------------------------------------ short circuit, pointers

const CALLS: &str = r#"
struct Light { dir: vec3<f32>, power: f32 }

fn touch(p: ptr<function, i32>) -> bool {
    *p = *p + 1;
    return true;
}
fn and_rhs(x: f32) -> i32 {
    var n = 0;
    let r = x > 0.0 && touch(&n);
    return n * 10 + i32(r);
}
fn or_rhs(x: f32) -> i32 {
    var n = 0;
    let r = x > 0.0 || touch(&n);
    return n * 10 + i32(r);
}
fn chained(x: f32) -> i32 {
    var n = 0;
    let r = (x > 0.0 && touch(&n)) || touch(&n);
    return n * 10 + i32(r);
}
fn put(p: ptr<function, f32>, v: f32) { *p = v; }
fn swap(a: ptr<function, f32>, b: ptr<function, f32>) {
    let t = *a;
    *a = *b;
    *b = t;
}
fn ptr_scalar(x: f32, y: f32) -> vec2<f32> {
    var a = x;
    var b = y;
    swap(&a, &b);
    return vec2(a, b);
}
fn ptr_array_elem(i: i32, v: f32) -> vec4<f32> {
    var arr = array<f32, 4>(1.0, 2.0, 3.0, 4.0);
    put(&arr[i], v);
    return vec4(arr[0], arr[1], arr[2], arr[3]);
}
fn ptr_member(x: f32) -> vec4<f32> {
    var s = Light(vec3(1.0, 2.0, 3.0), 4.0);
    put(&s.power, x);
    return vec4(s.dir, s.power);
}
fn ptr_nested_member(x: f32) -> f32 {
    var ls = array<Light, 2>(Light(vec3(0.0), 1.0), Light(vec3(0.0), 2.0));
    put(&ls[1].power, x);
    return ls[0].power + ls[1].power;
}
fn scale_all(p: ptr<function, array<f32, 4>>, k: f32) {
    for (var i = 0; i < 4; i++) {
        (*p)[i] = (*p)[i] * k;
    }
}
fn ptr_whole_array(k: f32) -> vec4<f32> {
    var a = array<f32, 4>(1.0, 2.0, 3.0, 4.0);
    scale_all(&a, k);
    return vec4(a[0], a[1], a[2], a[3]);
}
fn set_component(p: ptr<function, vec3<f32>>, i: i32) { (*p)[i] = 9.0; }
fn ptr_vec_dynamic(i: i32) -> vec3<f32> {
    var v = vec3(1.0, 2.0, 3.0);
    set_component(&v, i);
    return v;
}
fn conditional_store(x: f32) -> f32 {
    var a = 1.0;
    if x > 0.0 { put(&a, x); }
    return a;
}
fn accumulate(acc: ptr<function, f32>, x: f32) -> f32 {
    *acc += x;
    return *acc;
}
fn ptr_through_two_calls(x: f32) -> vec2<f32> {
    var acc = 0.0;
    let first = accumulate(&acc, x);
    let second = accumulate(&acc, x * 2.0);
    return vec2(first, second);
}
"#;

#[test]
fn short_circuit_operators_skip_the_right_side() {
    let mut c = Corpus::new(CALLS);
    // "Logical Expressions": e1 && e2 evaluates e2 only when e1 is true,
    // e1 || e2 only when e1 is false. `touch` counts its calls through a
    // pointer, so a skipped right side leaves the count at 0.
    c.check("and_rhs", &[1.0], &[11.0]);
    c.check("and_rhs", &[-1.0], &[0.0]);
    c.check("or_rhs", &[1.0], &[1.0]);
    c.check("or_rhs", &[-1.0], &[11.0]);
    c.check("chained", &[1.0], &[11.0]);
    c.check("chained", &[-1.0], &[11.0]);
    // Mixed in one batch: each lane sees only its own side effects.
    let rows: Vec<Vec<f64>> = [1.0, -1.0, 2.0, 0.0, NAN]
        .iter()
        .map(|&x| vec![x])
        .collect();
    let (got, _) = c.run_points("and_rhs", &rows);
    let got: Vec<f64> = got.iter().map(|p| decode(p)[0]).collect();
    c.fail_unless(
        got == [11.0, 0.0, 11.0, 0.0, 0.0],
        format!("and_rhs batch {got:?}"),
    );
    let (got, _) = c.run_points("or_rhs", &rows);
    let got: Vec<f64> = got.iter().map(|p| decode(p)[0]).collect();
    c.fail_unless(
        got == [1.0, 11.0, 1.0, 11.0, 11.0],
        format!("or_rhs batch {got:?}"),
    );
    c.finish();
}

#[test]
fn function_pointers_reach_variables_elements_and_members() {
    let mut c = Corpus::new(CALLS);
    c.check("ptr_scalar", &[1.0, 2.0], &[2.0, 1.0]);
    c.check("ptr_array_elem", &[2.0, 9.0], &[1.0, 2.0, 9.0, 4.0]);
    c.check("ptr_array_elem", &[0.0, -1.0], &[-1.0, 2.0, 3.0, 4.0]);
    c.check("ptr_member", &[7.0], &[1.0, 2.0, 3.0, 7.0]);
    c.check("ptr_nested_member", &[5.0], &[6.0]);
    c.check("ptr_whole_array", &[0.5], &[0.5, 1.0, 1.5, 2.0]);
    c.check("ptr_vec_dynamic", &[1.0], &[1.0, 9.0, 3.0]);
    c.check("conditional_store", &[3.0], &[3.0]);
    c.check("conditional_store", &[-3.0], &[1.0]);
    c.check("ptr_through_two_calls", &[1.5], &[1.5, 4.5]);
    let rows: Vec<Vec<f64>> = [3.0, -3.0, 0.0, 8.0].iter().map(|&x| vec![x]).collect();
    let (got, _) = c.run_points("conditional_store", &rows);
    let got: Vec<f64> = got.iter().map(|p| decode(p)[0]).collect();
    c.fail_unless(
        got == [3.0, 1.0, 1.0, 8.0],
        format!("conditional_store batch {got:?}"),
    );
    c.finish();
}

// ------------------------------------------------------------------ module scope

const MODULE_SCOPE: &str = r#"
const SCALE: f32 = 4.0;
const TABLE = array<f32, 3>(10.0, 20.0, 30.0);
const ORIGIN = vec2<f32>(0.5, -0.5);
override gain: f32 = 2.0;
override bias: f32 = gain * 3.0;
@id(7) override level: i32 = 1;
override enabled: bool = false;
override required: u32;
var<private> counter: i32 = 5;
var<private> acc: vec2<f32>;

fn use_const(i: i32) -> f32 { return TABLE[i] * SCALE + ORIGIN.y; }
fn use_overrides(x: f32) -> f32 { return x * gain + bias; }
fn use_level() -> i32 { return level; }
fn use_enabled(x: f32) -> f32 { return select(x, -x, enabled); }
fn use_required() -> u32 { return required * 2u; }
fn use_private(x: i32) -> i32 {
    counter += x;
    return counter;
}
fn bump() { counter += 1; acc += vec2(1.0, 2.0); }
fn use_private_via_calls(x: i32) -> vec3<f32> {
    bump();
    bump();
    return vec3(f32(counter + x), acc);
}
"#;

fn with_overrides(src: &str, f: &str, ov: &[(&str, f64)], args: &[f64]) -> Vec<f64> {
    let sh = Shader::from_source("module.wgsl", src.to_string()).unwrap();
    let map: BTreeMap<String, f64> = ov.iter().map(|(k, v)| (k.to_string(), *v)).collect();
    let p = Program::compile(&sh, f, &map).unwrap_or_else(|e| panic!("{e}"));
    let cols: Vec<Vec<u32>> = p
        .input_leaves()
        .iter()
        .zip(args)
        .map(|((_, k), &v)| vec![f64_to_bits(*k, v)])
        .collect();
    let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
    let mut out = Vec::new();
    assert!(p.eval(&refs, &mut out).is_empty());
    p.output_leaves()
        .iter()
        .zip(&out)
        .map(|((_, k), c)| bits_to_f64(*k, c[0]))
        .collect()
}

#[test]
fn module_constants_and_private_variables() {
    let src = MODULE_SCOPE.replace("override required: u32;", "override required: u32 = 21u;");
    let mut c = Corpus::new(&src);
    c.check("use_const", &[1.0], &[79.5]);
    c.check("use_const", &[2.0], &[119.5]);
    // var<private> is per invocation: every point starts from the initialiser,
    // whatever ran before it in the batch or in earlier calls.
    c.check("use_private", &[1.0], &[6.0]);
    c.check("use_private", &[1.0], &[6.0]);
    let rows: Vec<Vec<f64>> = (0..300).map(|x| vec![f64::from(x)]).collect();
    let (got, _) = c.run_points("use_private", &rows);
    let ok = got
        .iter()
        .enumerate()
        .all(|(i, p)| decode(p)[0] == 5.0 + i as f64);
    c.fail_unless(
        ok,
        "private variable leaked between points of a batch".into(),
    );
    // Zero-initialised private vector, mutated through two calls.
    c.check("use_private_via_calls", &[10.0], &[17.0, 2.0, 4.0]);
    c.finish();
}

#[test]
fn overrides_take_defaults_caller_values_and_dependent_defaults() {
    let src = MODULE_SCOPE;
    // Defaults: gain 2, bias = gain * 3 = 6 (an override-expression default).
    assert_eq!(
        with_overrides(src, "use_overrides", &[("required", 1.0)], &[1.0]),
        [8.0]
    );
    // A caller value for gain also changes bias's default.
    assert_eq!(
        with_overrides(
            src,
            "use_overrides",
            &[("gain", 3.0), ("required", 1.0)],
            &[1.0]
        ),
        [12.0]
    );
    // A caller value replaces the initialiser ("Early Evaluation Expressions").
    assert_eq!(
        with_overrides(
            src,
            "use_overrides",
            &[("gain", 3.0), ("bias", 1.0), ("required", 1.0)],
            &[1.0]
        ),
        [4.0]
    );
    assert_eq!(
        with_overrides(src, "use_level", &[("required", 1.0)], &[]),
        [1.0]
    );
    assert_eq!(
        with_overrides(src, "use_level", &[("level", 5.0), ("required", 1.0)], &[]),
        [5.0]
    );
    // An override with an @id can also be set by its numeric id.
    assert_eq!(
        with_overrides(src, "use_level", &[("7", 4.0), ("required", 1.0)], &[]),
        [4.0]
    );
    assert_eq!(
        with_overrides(
            src,
            "use_enabled",
            &[("enabled", 1.0), ("required", 1.0)],
            &[2.0]
        ),
        [-2.0]
    );
    assert_eq!(
        with_overrides(src, "use_required", &[("required", 21.0)], &[]),
        [42.0]
    );
}

// ------------------------------------------------------------------ numeric built-ins

const NUMERIC: &str = r#"
fn b_abs(x: f32) -> f32 { return abs(x); }
fn b_ceil(x: f32) -> f32 { return ceil(x); }
fn b_floor(x: f32) -> f32 { return floor(x); }
fn b_trunc(x: f32) -> f32 { return trunc(x); }
fn b_round(x: f32) -> f32 { return round(x); }
fn b_fract(x: f32) -> f32 { return fract(x); }
fn b_sign(x: f32) -> f32 { return sign(x); }
fn b_step(e: f32, x: f32) -> f32 { return step(e, x); }
fn b_saturate(x: f32) -> f32 { return saturate(x); }
fn b_min(a: f32, b: f32) -> f32 { return min(a, b); }
fn b_max(a: f32, b: f32) -> f32 { return max(a, b); }
fn b_clamp(x: f32, lo: f32, hi: f32) -> f32 { return clamp(x, lo, hi); }
fn b_ldexp(x: f32, e: i32) -> f32 { return ldexp(x, e); }
fn b_frexp(x: f32) -> vec2<f32> { let r = frexp(x); return vec2(r.fract, f32(r.exp)); }
fn b_frexp_vec(v: vec2<f32>) -> vec4<f32> { let r = frexp(v); return vec4(r.fract, vec2<f32>(r.exp)); }
fn b_modf(x: f32) -> vec2<f32> { let r = modf(x); return vec2(r.fract, r.whole); }
fn b_modf_vec(v: vec2<f32>) -> vec4<f32> { let r = modf(v); return vec4(r.fract, r.whole); }
fn b_fma(a: f32, b: f32, c: f32) -> f32 { return fma(a, b, c); }
fn b_quantize(x: f32) -> f32 { return quantizeToF16(x); }
fn b_sqrt(x: f32) -> f32 { return sqrt(x); }
fn b_inverse_sqrt(x: f32) -> f32 { return inverseSqrt(x); }
fn b_length2(v: vec2<f32>) -> f32 { return length(v); }
fn b_length1(x: f32) -> f32 { return length(x); }
fn b_distance3(a: vec3<f32>, b: vec3<f32>) -> f32 { return distance(a, b); }
fn b_distance1(a: f32, b: f32) -> f32 { return distance(a, b); }
fn b_dot3(a: vec3<f32>, b: vec3<f32>) -> f32 { return dot(a, b); }
fn b_dot_i(a: vec2<i32>, b: vec2<i32>) -> i32 { return dot(a, b); }
fn b_dot_u(a: vec2<u32>, b: vec2<u32>) -> u32 { return dot(a, b); }
fn b_cross(a: vec3<f32>, b: vec3<f32>) -> vec3<f32> { return cross(a, b); }
fn b_normalize(v: vec3<f32>) -> vec3<f32> { return normalize(v); }
fn b_face_forward(n: vec2<f32>, i: vec2<f32>, r: vec2<f32>) -> vec2<f32> { return faceForward(n, i, r); }
fn b_reflect(i: vec2<f32>, n: vec2<f32>) -> vec2<f32> { return reflect(i, n); }
fn b_refract(i: vec2<f32>, n: vec2<f32>, eta: f32) -> vec2<f32> { return refract(i, n, eta); }
fn b_mix(a: f32, b: f32, t: f32) -> f32 { return mix(a, b, t); }
fn b_mix_vs(a: vec2<f32>, b: vec2<f32>, t: f32) -> vec2<f32> { return mix(a, b, t); }
fn b_smoothstep(lo: f32, hi: f32, x: f32) -> f32 { return smoothstep(lo, hi, x); }
fn b_degrees(x: f32) -> f32 { return degrees(x); }
fn b_radians(x: f32) -> f32 { return radians(x); }
fn b_transpose(m: mat2x3<f32>) -> mat3x2<f32> { return transpose(m); }
fn b_det2(m: mat2x2<f32>) -> f32 { return determinant(m); }
fn b_det3(m: mat3x3<f32>) -> f32 { return determinant(m); }
fn b_det4(m: mat4x4<f32>) -> f32 { return determinant(m); }
fn b_exp(x: f32) -> f32 { return exp(x); }
fn b_exp2(x: f32) -> f32 { return exp2(x); }
fn b_log(x: f32) -> f32 { return log(x); }
fn b_log2(x: f32) -> f32 { return log2(x); }
fn b_pow(x: f32, y: f32) -> f32 { return pow(x, y); }
fn b_sin(x: f32) -> f32 { return sin(x); }
fn b_cos(x: f32) -> f32 { return cos(x); }
fn b_tan(x: f32) -> f32 { return tan(x); }
fn b_asin(x: f32) -> f32 { return asin(x); }
fn b_acos(x: f32) -> f32 { return acos(x); }
fn b_atan(x: f32) -> f32 { return atan(x); }
fn b_atan2(y: f32, x: f32) -> f32 { return atan2(y, x); }
fn b_sinh(x: f32) -> f32 { return sinh(x); }
fn b_cosh(x: f32) -> f32 { return cosh(x); }
fn b_tanh(x: f32) -> f32 { return tanh(x); }
fn b_asinh(x: f32) -> f32 { return asinh(x); }
fn b_acosh(x: f32) -> f32 { return acosh(x); }
fn b_atanh(x: f32) -> f32 { return atanh(x); }
fn b_abs_i(x: i32) -> i32 { return abs(x); }
fn b_abs_u(x: u32) -> u32 { return abs(x); }
fn b_sign_i(x: i32) -> i32 { return sign(x); }
fn b_minmax_i(a: i32, b: i32) -> vec2<i32> { return vec2(min(a, b), max(a, b)); }
fn b_minmax_u(a: u32, b: u32) -> vec2<u32> { return vec2(min(a, b), max(a, b)); }
fn b_clamp_i(x: i32, lo: i32, hi: i32) -> i32 { return clamp(x, lo, hi); }
fn b_clamp_u(x: u32, lo: u32, hi: u32) -> u32 { return clamp(x, lo, hi); }
fn b_clamp_vec(v: vec3<f32>) -> vec3<f32> { return clamp(v, vec3(0.0), vec3(1.0)); }
"#;

#[test]
fn rounding_and_piecewise_built_ins() {
    let mut c = Corpus::new(NUMERIC);
    c.check("b_abs", &[-1.5], &[1.5]);
    c.check("b_abs", &[-0.0], &[0.0]);
    c.check("b_abs", &[-INF], &[INF]);
    c.check("b_ceil", &[1.2], &[2.0]);
    c.check("b_ceil", &[-1.5], &[-1.0]);
    c.check("b_ceil", &[-0.5], &[-0.0]);
    c.check("b_floor", &[-1.5], &[-2.0]);
    c.check("b_floor", &[1.9], &[1.0]);
    c.check("b_trunc", &[-1.7], &[-1.0]);
    c.check("b_trunc", &[2.9], &[2.0]);
    // "#round-builtin": nearest integer, halfway cases to the even one.
    for (x, want) in [
        (2.5, 2.0),
        (3.5, 4.0),
        (-2.5, -2.0),
        (0.5, 0.0),
        (1.5, 2.0),
        (2.4, 2.0),
        (-0.5, -0.0),
        (8388609.0, 8388609.0),
    ] {
        c.check("b_round", &[x], &[want]);
    }
    // "#fract-builtin": e - floor(e), so negative inputs give 1 - |frac|, and a
    // tiny negative input gives exactly 1.0 (the spec's own note).
    c.check("b_fract", &[1.75], &[0.75]);
    c.check("b_fract", &[-0.25], &[0.75]);
    c.check("b_fract", &[-2.5], &[0.5]);
    c.check("b_fract", &[-1e-10], &[1.0]);
    c.check("b_fract", &[-0.0], &[0.0]); // -0 - (-0) = +0
                                         // "#sign-builtin": 1 / 0 / -1; zero of either sign gives 0.
    c.check("b_sign", &[-3.0], &[-1.0]);
    c.check("b_sign", &[0.0], &[0.0]);
    c.check("b_sign", &[-0.0], &[0.0]);
    c.check("b_sign", &[2.5], &[1.0]);
    c.check("b_sign", &[-INF], &[-1.0]);
    // "#step-builtin": 1.0 if edge <= x else 0.0.
    c.check("b_step", &[1.0, 1.0], &[1.0]);
    c.check("b_step", &[1.0, 0.5], &[0.0]);
    c.check("b_step", &[-0.0, 0.0], &[1.0]);
    c.check("b_step", &[NAN, 1.0], &[0.0]);
    c.check("b_saturate", &[-1.0], &[0.0]);
    c.check("b_saturate", &[2.0], &[1.0]);
    c.check("b_saturate", &[0.25], &[0.25]);
    c.finish();
}

#[test]
fn min_max_clamp_follow_the_spec_formulas() {
    let mut c = Corpus::new(NUMERIC);
    // "#min-float-builtin": min(e1, e2) = e2 if e2 < e1 else e1;
    // "#max-float-builtin": max(e1, e2) = e2 if e1 < e2 else e1. Taken
    // literally, a NaN e1 comes through and a NaN e2 does not (a runtime NaN
    // is an indeterminate value on a GPU; the evaluator keeps the formula).
    c.check("b_min", &[1.0, 2.0], &[1.0]);
    c.check("b_max", &[1.0, 2.0], &[2.0]);
    c.check("b_min", &[NAN, 1.0], &[NAN]);
    c.check("b_min", &[1.0, NAN], &[1.0]);
    c.check("b_max", &[NAN, 1.0], &[NAN]);
    c.check("b_max", &[1.0, NAN], &[1.0]);
    c.check("b_min", &[-INF, 3.0], &[-INF]);
    // "#clamp": clamp(e, low, high) = min(max(e, low), high).
    c.check("b_clamp", &[5.0, 0.0, 1.0], &[1.0]);
    c.check("b_clamp", &[-5.0, 0.0, 1.0], &[0.0]);
    c.check("b_clamp", &[0.5, 0.0, 1.0], &[0.5]);
    c.check("b_clamp", &[NAN, 0.0, 1.0], &[NAN]);
    // low > high: min(max(0.5, 1), 0) = 0; the median formulation (also
    // allowed) would give 0.5. The evaluator documents min(max()).
    c.check("b_clamp", &[0.5, 1.0, 0.0], &[0.0]);
    c.check("b_clamp_vec", &[-1.0, 0.5, 7.0], &[0.0, 0.5, 1.0]);
    c.check("b_abs_i", &[-2147483648.0], &[-2147483648.0]); // abs wraps at MIN
    c.check("b_abs_i", &[-5.0], &[5.0]);
    c.check("b_abs_u", &[4294967295.0], &[4294967295.0]);
    c.check("b_sign_i", &[-7.0], &[-1.0]);
    c.check("b_sign_i", &[0.0], &[0.0]);
    c.check("b_sign_i", &[-2147483648.0], &[-1.0]);
    c.check("b_minmax_i", &[-3.0, 2.0], &[-3.0, 2.0]);
    c.check("b_minmax_u", &[4294967295.0, 2.0], &[2.0, 4294967295.0]);
    c.check("b_clamp_i", &[5.0, 0.0, 3.0], &[3.0]);
    c.check("b_clamp_i", &[-5.0, 0.0, 3.0], &[0.0]);
    c.check("b_clamp_i", &[1.0, 3.0, 0.0], &[0.0]); // min(max(1, 3), 0)
    c.check("b_clamp_u", &[7.0, 2.0, 4.0], &[4.0]);
    c.finish();
}

#[test]
fn decomposition_built_ins_frexp_modf_ldexp_quantize() {
    let mut c = Corpus::new(NUMERIC);
    // "#frexp-builtin": e = fraction * 2^exp with |fraction| in [0.5, 1); zero
    // gives fraction 0. The spec's example: frexp(1.5).fract = 0.75.
    c.check("b_frexp", &[1.5], &[0.75, 1.0]);
    c.check("b_frexp", &[8.0], &[0.5, 4.0]);
    c.check("b_frexp", &[-3.0], &[-0.75, 2.0]);
    c.check("b_frexp", &[0.0], &[0.0, 0.0]);
    c.check("b_frexp", &[1.1754943508222875e-38], &[0.5, -125.0]); // 2^-126
    c.check("b_frexp_vec", &[0.25, -6.0], &[0.5, -0.75, -1.0, 3.0]);
    // "#modf-builtin": whole = trunc(e), fract = e - trunc(e); the spec's
    // example modf(1.5) = (0.5, 1.0).
    c.check("b_modf", &[1.5], &[0.5, 1.0]);
    c.check("b_modf", &[-2.25], &[-0.25, -2.0]);
    c.check("b_modf", &[-0.5], &[-0.5, -0.0]);
    c.check("b_modf_vec", &[3.75, -1.0], &[0.75, 0.0, 3.0, -1.0]);
    // "#ldexp-builtin": e1 * 2^e2; results below the normal range "may be
    // zero" -- the evaluator keeps the exact subnormal.
    c.check("b_ldexp", &[1.5, 3.0], &[12.0]);
    c.check("b_ldexp", &[-3.0, 0.0], &[-3.0]);
    c.check("b_ldexp", &[1.0, -126.0], &[1.1754943508222875e-38]);
    c.check("b_ldexp", &[1.0, -149.0], &[1e-45]);
    c.check(
        "b_ldexp",
        &[0.75, 128.0],
        &[f32v(0.75 * 2f32.powi(127) * 2.0)],
    );
    // "#quantizeToF16-builtin": round through binary16 (ties to even).
    c.check("b_quantize", &[1.0 + 2f64.powi(-11)], &[1.0]); // tie -> even (1.0)
    c.check(
        "b_quantize",
        &[1.0 + 3.0 * 2f64.powi(-11)],
        &[1.0 + 2f64.powi(-9)],
    ); // tie -> even, up
    c.check("b_quantize", &[65504.0], &[65504.0]);
    c.check("b_quantize", &[-0.1], &[-0.0999755859375]); // f16 0x2E66
    c.check("b_quantize", &[2f64.powi(-24)], &[2f64.powi(-24)]); // binary16 subnormal kept
    c.finish();
}

#[test]
fn fma_sqrt_and_vector_geometry() {
    let mut c = Corpus::new(NUMERIC);
    c.check("b_fma", &[2.0, 3.0, 4.0], &[10.0]);
    // "#fma-builtin": e1 * e2 + e3, fused or not ("may be an ordinary multiply
    // then add"). (1 + 2^-12)^2 - 1 is 2^-11 + 2^-24 fused, 2^-11 unfused.
    // The evaluator fuses (one rounding, libm's fmaf).
    let a = 1.0 + 2f64.powi(-12);
    c.check("b_fma", &[a, a, -1.0], &[2f64.powi(-11) + 2f64.powi(-24)]);
    // sqrt is correctly rounded (IEEE 754 squareRoot); the spec's bound,
    // inherited from 1 / inverseSqrt(x), is looser.
    c.check("b_sqrt", &[4.0], &[2.0]);
    c.check("b_sqrt", &[2.0], &[f32v(2f32.sqrt())]);
    c.check("b_sqrt", &[-0.0], &[-0.0]);
    c.check("b_sqrt", &[INF], &[INF]);
    c.check("b_inverse_sqrt", &[4.0], &[0.5]);
    c.check("b_inverse_sqrt", &[0.25], &[2.0]);
    // inverseSqrt: 2 ULP ("Floating Point Accuracy").
    c.check_ulps(
        "b_inverse_sqrt",
        &[3.0],
        &[1.0 / 3f64.sqrt()],
        2.0,
        "inverseSqrt is 2 ULP",
    );
    c.check("b_length2", &[3.0, 4.0], &[5.0]);
    c.check("b_length1", &[-2.0], &[2.0]); // scalar length is |e|
    c.check("b_distance3", &[1.0, 2.0, 3.0, 4.0, 6.0, 3.0], &[5.0]);
    c.check("b_distance1", &[1.0, 4.0], &[3.0]);
    c.check("b_dot3", &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0], &[32.0]);
    c.check("b_dot_i", &[-2.0, 3.0, 4.0, 5.0], &[7.0]);
    c.check("b_dot_u", &[2147483648.0, 1.0, 2.0, 3.0], &[3.0]); // products wrap
    c.check(
        "b_cross",
        &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0],
        &[-3.0, 6.0, -3.0],
    );
    c.check("b_cross", &[1.0, 0.0, 0.0, 0.0, 1.0, 0.0], &[0.0, 0.0, 1.0]);
    // normalize(e) = e / length(e) (inherited): 3/5, 0/5, 4/5 rounded.
    c.check(
        "b_normalize",
        &[3.0, 0.0, 4.0],
        &[f32v(3.0f32 / 5.0), 0.0, f32v(4.0f32 / 5.0)],
    );
    // A zero vector is outside normalize's domain: 0/0 gives NaN, flagged.
    c.check_flagged(
        "b_normalize",
        &[0.0, 0.0, 0.0],
        &[NAN, NAN, NAN],
        IssueKind::NonFinite,
    );
    // "#faceForward-builtin": e1 if dot(e2, e3) < 0, else -e1 (also at 0).
    c.check(
        "b_face_forward",
        &[1.0, 2.0, 0.0, 1.0, 0.0, -1.0],
        &[1.0, 2.0],
    );
    c.check(
        "b_face_forward",
        &[1.0, 2.0, 0.0, 1.0, 0.0, 1.0],
        &[-1.0, -2.0],
    );
    c.check(
        "b_face_forward",
        &[1.0, 2.0, 1.0, 0.0, 0.0, 1.0],
        &[-1.0, -2.0],
    );
    // "#reflect-builtin": e1 - 2 * dot(e2, e1) * e2.
    c.check("b_reflect", &[1.0, -1.0, 0.0, 1.0], &[1.0, 1.0]);
    c.check("b_reflect", &[0.6, -0.8, 0.0, 1.0], &[f32v(0.6), f32v(0.8)]);
    c.finish();
}

#[test]
#[allow(clippy::excessive_precision)] // the spec's degrees/radians literals, as written
fn refract_mix_smoothstep_follow_the_spec_formulas_step_by_step() {
    let mut c = Corpus::new(NUMERIC);
    // "#refract-builtin": k = 1 - e3*e3*(1 - dot(e2,e1)^2); k < 0 gives the
    // zero vector, else e3*e1 - (e3*dot(e2,e1) + sqrt(k))*e2. With e2 = (0,1)
    // the dot product is exactly e1.y, so every step below is one f32 rounding.
    let (ix, iy, eta) = (0.6f32, -0.8f32, 0.5f32);
    let d = iy;
    let k = 1.0 - eta * eta * (1.0 - d * d);
    let coef = eta * d + k.sqrt();
    let want = [eta * ix - coef * 0.0, eta * iy - coef * 1.0];
    c.check(
        "b_refract",
        &[f32v(ix), f32v(iy), 0.0, 1.0, f32v(eta)],
        &[f32v(want[0]), f32v(want[1])],
    );
    // Beyond the critical angle (k = 1 - 2.25 * 0.64 < 0): exactly zero.
    c.check("b_refract", &[0.8, -0.6, 0.0, 1.0, 1.5], &[0.0, 0.0]);
    // eta = 1 passes straight through.
    c.check(
        "b_refract",
        &[0.6, -0.8, 0.0, 1.0, 1.0],
        &[f32v(0.6), f32v(-0.8)],
    );

    // "#mix-builtin": e1 * (1 - e3) + e2 * e3, not e1 + (e2 - e1) * e3.
    c.check("b_mix", &[1.0, 3.0, 0.5], &[2.0]);
    c.check("b_mix", &[1.0, 3.0, 0.0], &[1.0]);
    c.check("b_mix", &[1.0, 3.0, 1.0], &[3.0]);
    let (a, b, t) = (-2.0f32, -1.8f32, 0.1f32);
    let spec = a * (1.0 - t) + b * t;
    c.fail_unless(
        spec != a + (b - a) * t,
        "mix case must tell the two formulas apart".into(),
    );
    c.check("b_mix", &[f32v(a), f32v(b), f32v(t)], &[f32v(spec)]);
    // The scalar-blend overload broadcasts e3 to every component.
    c.check("b_mix_vs", &[0.0, 10.0, 10.0, 20.0, 0.25], &[2.5, 12.5]);

    // "#smoothstep-builtin": t = clamp((x - e0) / (e1 - e0), 0, 1);
    // t * t * (3 - 2 * t). Mirrored when e0 > e1.
    c.check("b_smoothstep", &[0.0, 1.0, 0.5], &[0.5]);
    c.check("b_smoothstep", &[2.0, 4.0, 5.0], &[1.0]);
    c.check("b_smoothstep", &[2.0, 4.0, 1.0], &[0.0]);
    c.check("b_smoothstep", &[1.0, 0.0, 0.25], &[0.84375]);
    let (e0, e1, x) = (0.2f32, 0.9f32, 0.3f32);
    let t = ((x - e0) / (e1 - e0)).clamp(0.0, 1.0);
    c.check(
        "b_smoothstep",
        &[f32v(e0), f32v(e1), f32v(x)],
        &[f32v(t * t * (3.0 - 2.0 * t))],
    );
    // e0 == e1 divides by zero: an indeterminate value, flagged (0/0 here).
    c.check_flagged(
        "b_smoothstep",
        &[1.0, 1.0, 1.0],
        &[NAN],
        IssueKind::NonFinite,
    );

    // degrees/radians are inherited from x * 57.295779513082322865 and
    // x * 0.017453292519943295474: one multiplication by the f32 constant.
    let pi = std::f32::consts::PI;
    c.check(
        "b_degrees",
        &[f32v(pi)],
        &[f32v(pi * 57.295_779_513_082_322_865_f32)],
    );
    c.check("b_degrees", &[1.0], &[f32v(57.295_779_513_082_322_865_f32)]);
    c.check(
        "b_radians",
        &[180.0],
        &[f32v(180.0 * 0.017_453_292_519_943_295_474_f32)],
    );
    c.check(
        "b_radians",
        &[1.0],
        &[f32v(0.017_453_292_519_943_295_474_f32)],
    );
    c.finish();
}

#[test]
fn transpose_and_determinant() {
    let mut c = Corpus::new(NUMERIC);
    // mat2x3 columns (1,2,3), (4,5,6) -> mat3x2 columns (1,4), (2,5), (3,6).
    c.check(
        "b_transpose",
        &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0],
        &[1.0, 4.0, 2.0, 5.0, 3.0, 6.0],
    );
    // determinant's accuracy is unbounded in the spec, but with small integer
    // entries every product and sum is exact in f32 in any order.
    c.check("b_det2", &[1.0, 2.0, 3.0, 4.0], &[-2.0]); // 1*4 - 3*2
                                                       // columns (2,1,1), (0,3,1), (1,2,1): det = 2(3-2) - 0 + 1(1-3) = 0 ... by rows:
                                                       // [[2,0,1],[1,3,2],[1,1,1]] -> 2*(3*1-2*1) - 0*(1*1-2*1) + 1*(1*1-3*1) = 2 - 2 = 0
    c.check(
        "b_det3",
        &[2.0, 1.0, 1.0, 0.0, 3.0, 1.0, 1.0, 2.0, 1.0],
        &[0.0],
    );
    // [[1,2,0],[0,1,0],[3,0,2]] (rows; columns (1,0,3),(2,1,0),(0,0,2)): 1*(2-0) - 2*(0-0) + 0 = 2
    c.check(
        "b_det3",
        &[1.0, 0.0, 3.0, 2.0, 1.0, 0.0, 0.0, 0.0, 2.0],
        &[2.0],
    );
    // Upper-triangular 4x4: the product of the diagonal, 2*3*4*5 = 120.
    let m4 = [
        2.0, 0.0, 0.0, 0.0, 7.0, 3.0, 0.0, 0.0, 1.0, 8.0, 4.0, 0.0, 9.0, 2.0, 6.0, 5.0,
    ];
    c.check("b_det4", &m4, &[120.0]);
    c.finish();
}

#[test]
fn transcendental_built_ins_meet_the_accuracy_table_at_sample_points() {
    // Exact values from mathematics (to f64); tolerances from the table in
    // "Floating Point Accuracy" (f32 column). The systematic accuracy sweep
    // against mpmath lives in tests/eval/accuracy.rs; here each built-in is
    // checked to be wired to the right function with the right argument order.
    use std::f64::consts::{E, FRAC_PI_2, FRAC_PI_3, FRAC_PI_4, FRAC_PI_6, PI};
    let mut c = Corpus::new(NUMERIC);
    c.check_ulps("b_exp", &[0.0], &[1.0], 3.0, "exp: 3 + 2|x| ULP");
    c.check_ulps("b_exp", &[1.0], &[E], 5.0, "exp: 3 + 2|x| ULP");
    c.check_ulps("b_exp", &[-2.0], &[(-2f64).exp()], 7.0, "exp: 3 + 2|x| ULP");
    c.check_ulps("b_exp2", &[3.0], &[8.0], 9.0, "exp2: 3 + 2|x| ULP");
    c.check_ulps("b_exp2", &[-1.0], &[0.5], 5.0, "exp2: 3 + 2|x| ULP");
    c.check_within(
        "b_log",
        &[1.0],
        &[0.0],
        2f64.powi(-21),
        "log: absolute 2^-21 on [0.5, 2]",
    );
    c.check_within(
        "b_log",
        &[1.5],
        &[1.5f64.ln()],
        2f64.powi(-21),
        "log: absolute 2^-21 on [0.5, 2]",
    );
    c.check_ulps(
        "b_log",
        &[8.0],
        &[8f64.ln()],
        3.0,
        "log: 3 ULP outside [0.5, 2]",
    );
    c.check_ulps(
        "b_log2",
        &[8.0],
        &[3.0],
        3.0,
        "log2: 3 ULP outside [0.5, 2]",
    );
    c.check_within(
        "b_log2",
        &[0.75],
        &[0.75f64.log2()],
        2f64.powi(-21),
        "log2: absolute 2^-21 on [0.5, 2]",
    );
    // log(0) is -inf (0 is in the domain) and log(-1) is outside it; both
    // are non-finite results of a finite input, reported per lane.
    c.check_flagged("b_log", &[0.0], &[-INF], IssueKind::NonFinite);
    c.check_flagged("b_log", &[-1.0], &[NAN], IssueKind::NonFinite);
    // pow is inherited from exp2(y * log2(x)): for pow(2, 10), log2(2) is off
    // by at most 2^-21, times 10, plus half an ULP of 10 for the product; exp2
    // adds 3 + 2*10 ULP and carries the argument error as ln(2) * 1024 * dt:
    // 23 ULP + 1024 * ln2 * (10 * 2^-21 + 2^-21) / ulp(1024) ~= 23 + 30 = 53.
    c.check_ulps(
        "b_pow",
        &[2.0, 10.0],
        &[1024.0],
        53.0,
        "pow inherited from exp2(y*log2(x))",
    );
    c.check_ulps(
        "b_pow",
        &[4.0, 0.5],
        &[2.0],
        8.0,
        "pow inherited: 3 + 2*1 ULP of exp2 + ln2*2*(0.5*2^-21)/ulp(2) < 8",
    );
    // x < 0 is outside pow's domain; the evaluator gives NaN there.
    c.check_flagged("b_pow", &[-2.0, 2.0], &[NAN], IssueKind::NonFinite);
    let trig = 2f64.powi(-11);
    c.check_within(
        "b_sin",
        &[0.0],
        &[0.0],
        trig,
        "sin: absolute 2^-11 on [-pi, pi]",
    );
    c.check_within(
        "b_sin",
        &[f32v(FRAC_PI_2 as f32)],
        &[1.0],
        trig,
        "sin: absolute 2^-11 on [-pi, pi]",
    );
    c.check_within(
        "b_sin",
        &[1.0],
        &[1f64.sin()],
        trig,
        "sin: absolute 2^-11 on [-pi, pi]",
    );
    c.check_within(
        "b_sin",
        &[-3.0],
        &[(-3f64).sin()],
        trig,
        "sin: absolute 2^-11 on [-pi, pi]",
    );
    c.check_within(
        "b_cos",
        &[0.0],
        &[1.0],
        trig,
        "cos: absolute 2^-11 on [-pi, pi]",
    );
    c.check_within(
        "b_cos",
        &[f32v(PI as f32)],
        &[-1.0],
        trig,
        "cos: absolute 2^-11 on [-pi, pi]",
    );
    // tan is inherited from sin(x) / cos(x): (2^-11 + |tan x| 2^-11) / |cos x|
    // plus 2.5 ULP for the division; at 0.5 that is about 8.6e-4.
    c.check_within(
        "b_tan",
        &[0.5],
        &[0.5f64.tan()],
        9e-4,
        "tan inherited from sin/cos",
    );
    // asin/acos: "worse of" an absolute bound and an inherited one; the
    // absolute part alone is the stricter test.
    c.check_within(
        "b_asin",
        &[0.5],
        &[FRAC_PI_6],
        6.81e-5,
        "asin: absolute 6.81e-5",
    );
    c.check_within(
        "b_asin",
        &[-1.0],
        &[-FRAC_PI_2],
        6.81e-5,
        "asin: absolute 6.81e-5",
    );
    c.check_within(
        "b_acos",
        &[0.5],
        &[FRAC_PI_3],
        6.77e-5,
        "acos: absolute 6.77e-5",
    );
    c.check_within("b_acos", &[-1.0], &[PI], 6.77e-5, "acos: absolute 6.77e-5");
    c.check_ulps("b_atan", &[1.0], &[FRAC_PI_4], 4096.0, "atan: 4096 ULP");
    // atan2(y, x): 4096 ULP for |x| in [2^-126, 2^126]; all four quadrants.
    c.check_ulps(
        "b_atan2",
        &[1.0, -1.0],
        &[3.0 * FRAC_PI_4],
        4096.0,
        "atan2: 4096 ULP",
    );
    c.check_ulps(
        "b_atan2",
        &[-1.0, -1.0],
        &[-3.0 * FRAC_PI_4],
        4096.0,
        "atan2: 4096 ULP",
    );
    c.check_ulps(
        "b_atan2",
        &[-1.0, 1.0],
        &[-FRAC_PI_4],
        4096.0,
        "atan2: 4096 ULP",
    );
    c.check_ulps(
        "b_atan2",
        &[0.5, 2.0],
        &[0.25f64.atan()],
        4096.0,
        "atan2: 4096 ULP",
    );
    // sinh/cosh inherited from (exp(x) -+ exp(-x)) * 0.5: at x = 1, 5 ULP of
    // e, 5 ULP of 1/e, half an ULP for the sum, halved: about 7.3e-7.
    c.check_within(
        "b_sinh",
        &[1.0],
        &[1f64.sinh()],
        7.3e-7,
        "sinh inherited from exp",
    );
    c.check_within(
        "b_cosh",
        &[1.0],
        &[1f64.cosh()],
        7.3e-7,
        "cosh inherited from exp",
    );
    c.check_within(
        "b_tanh",
        &[0.5],
        &[0.5f64.tanh()],
        1e-5,
        "tanh: absolute 1e-5",
    );
    c.check_within("b_tanh", &[20.0], &[1.0], 1e-5, "tanh: absolute 1e-5");
    // asinh/acosh/atanh are inherited from log(x + sqrt(x*x +- 1)) and
    // log((1+x)/(1-x)) * 0.5; at these points that works out below 8.5e-7
    // (log's 2^-21 or 3 ULP, plus sqrt's ~4.5 ULP and the division's 2.5 ULP
    // carried through log's derivative), so 2^-20 is a safe upper bound.
    let hyp = 2f64.powi(-20);
    c.check_within(
        "b_asinh",
        &[0.5],
        &[0.5f64.asinh()],
        hyp,
        "asinh inherited from log/sqrt",
    );
    c.check_within(
        "b_acosh",
        &[2.0],
        &[2f64.acosh()],
        hyp,
        "acosh inherited from log/sqrt",
    );
    c.check_within(
        "b_atanh",
        &[0.5],
        &[0.5f64.atanh()],
        hyp,
        "atanh inherited from log",
    );
    c.finish();
}

// ------------------------------------------------------------------ bit manipulation

const BITS: &str = r#"
fn clz_u(x: u32) -> u32 { return countLeadingZeros(x); }
fn clz_i(x: i32) -> i32 { return countLeadingZeros(x); }
fn ones_u(x: u32) -> u32 { return countOneBits(x); }
fn ones_i(x: i32) -> i32 { return countOneBits(x); }
fn ctz_u(x: u32) -> u32 { return countTrailingZeros(x); }
fn ctz_i(x: i32) -> i32 { return countTrailingZeros(x); }
fn flb_u(x: u32) -> u32 { return firstLeadingBit(x); }
fn flb_i(x: i32) -> i32 { return firstLeadingBit(x); }
fn ftb_u(x: u32) -> u32 { return firstTrailingBit(x); }
fn ftb_i(x: i32) -> i32 { return firstTrailingBit(x); }
fn rev_u(x: u32) -> u32 { return reverseBits(x); }
fn rev_i(x: i32) -> i32 { return reverseBits(x); }
fn ext_u(e: u32, o: u32, c: u32) -> u32 { return extractBits(e, o, c); }
fn ext_i(e: i32, o: u32, c: u32) -> i32 { return extractBits(e, o, c); }
fn ins_u(e: u32, n: u32, o: u32, c: u32) -> u32 { return insertBits(e, n, o, c); }
fn ins_i(e: i32, n: i32, o: u32, c: u32) -> i32 { return insertBits(e, n, o, c); }
fn ext_vec(e: vec2<u32>, o: u32, c: u32) -> vec2<u32> { return extractBits(e, o, c); }
fn dot4i(a: u32, b: u32) -> i32 { return dot4I8Packed(a, b); }
fn dot4u(a: u32, b: u32) -> u32 { return dot4U8Packed(a, b); }
"#;

#[test]
fn bit_counting_and_reversal() {
    let mut c = Corpus::new(BITS);
    c.check("clz_u", &[0.0], &[32.0]);
    c.check("clz_u", &[1.0], &[31.0]);
    c.check("clz_u", &[u(0x8000_0000)], &[0.0]);
    c.check("clz_i", &[-1.0], &[0.0]);
    c.check("clz_i", &[1.0], &[31.0]);
    c.check("ones_u", &[u(0xF0F0)], &[8.0]);
    c.check("ones_i", &[-1.0], &[32.0]);
    c.check("ctz_u", &[0.0], &[32.0]);
    c.check("ctz_u", &[8.0], &[3.0]);
    c.check("ctz_i", &[-2147483648.0], &[31.0]);
    // "#firstLeadingBit-unsigned-builtin": T(-1) for 0, else the top 1 bit.
    c.check("flb_u", &[0.0], &[u(u32::MAX)]);
    c.check("flb_u", &[1.0], &[0.0]);
    c.check("flb_u", &[u(0x8000_0000)], &[31.0]);
    c.check("flb_u", &[u(0x00F0_0000)], &[23.0]);
    // "#firstLeadingBit-signed-builtin": -1 for 0 and -1, else the most
    // significant bit that differs from the sign bit.
    c.check("flb_i", &[0.0], &[-1.0]);
    c.check("flb_i", &[-1.0], &[-1.0]);
    c.check("flb_i", &[1.0], &[0.0]);
    c.check("flb_i", &[-2.0], &[0.0]);
    c.check("flb_i", &[-2147483648.0], &[30.0]);
    c.check("flb_i", &[2147483647.0], &[30.0]);
    c.check("flb_i", &[-256.0], &[7.0]); // 0xFFFFFF00: top 0 bit is bit 7
                                         // "#firstTrailingBit-builtin": T(-1) for 0, else the lowest 1 bit.
    c.check("ftb_u", &[0.0], &[u(u32::MAX)]);
    c.check("ftb_i", &[0.0], &[-1.0]);
    c.check("ftb_u", &[8.0], &[3.0]);
    c.check("ftb_i", &[-2147483648.0], &[31.0]);
    c.check("rev_u", &[1.0], &[u(0x8000_0000)]);
    c.check("rev_u", &[u(0x0000_000F)], &[u(0xF000_0000)]);
    c.check("rev_i", &[1.0], &[-2147483648.0]);
    c.finish();
}

#[test]
fn extract_and_insert_bits_clamp_offset_and_count() {
    let mut c = Corpus::new(BITS);
    // "#extractBits-unsigned-builtin": o = min(offset, 32), c = min(count,
    // 32 - o); 0 when c = 0; other bits 0.
    c.check("ext_u", &[u(0xF0), 4.0, 4.0], &[u(0xF)]);
    c.check("ext_u", &[u(0xF0), 4.0, 8.0], &[u(0xF)]);
    c.check("ext_u", &[u(0xFFFF_FFFF), 40.0, 4.0], &[0.0]);
    c.check("ext_u", &[u(0x1234_5678), 0.0, 32.0], &[u(0x1234_5678)]);
    c.check("ext_u", &[u(0x1234_5678), 28.0, 8.0], &[1.0]);
    c.check("ext_u", &[u(0x1234_5678), 4.0, 0.0], &[0.0]);
    // "#extractBits-signed-builtin": the other bits copy bit c - 1.
    c.check("ext_i", &[f64::from(0xF0), 4.0, 4.0], &[-1.0]);
    c.check("ext_i", &[f64::from(0x70), 4.0, 4.0], &[7.0]);
    c.check("ext_i", &[-2147483648.0, 31.0, 1.0], &[-1.0]);
    c.check("ext_i", &[-1.0, 0.0, 0.0], &[0.0]);
    c.check("ext_i", &[f64::from(0x1234_5678), 28.0, 8.0], &[1.0]);
    c.check("ext_i", &[-2147483648.0, 28.0, 8.0], &[-8.0]);
    c.check("ext_i", &[-5.0, 0.0, 32.0], &[-5.0]);
    c.check(
        "ext_vec",
        &[u(0xAB), u(0xCD00), 4.0, 8.0],
        &[u(0xA), u(0xD0)],
    );
    // "#insertBits-builtin": bits o..o+c-1 from newbits' low bits; e when c = 0.
    c.check("ins_u", &[0.0, u(0xF), 28.0, 8.0], &[u(0xF000_0000)]);
    c.check("ins_u", &[u(0xFFFF_FFFF), 0.0, 8.0, 8.0], &[u(0xFFFF_00FF)]);
    c.check("ins_u", &[u(0x1234), u(0xFFFF), 4.0, 0.0], &[u(0x1234)]);
    c.check("ins_u", &[u(0x1234), u(0xFFFF), 32.0, 4.0], &[u(0x1234)]);
    c.check(
        "ins_u",
        &[u(0x1234), u(0xABCD_EF01), 0.0, 32.0],
        &[u(0xABCD_EF01)],
    );
    c.check("ins_i", &[-1.0, 0.0, 0.0, 31.0], &[-2147483648.0]);
    // "#dot4I8Packed-builtin": signed byte products summed; U8 unsigned.
    // Bytes (low first) 1, -2, 3, -4 and 5, 6, 7, 8: 5 - 12 + 21 - 32 = -18.
    c.check("dot4i", &[u(0xFC03_FE01), u(0x0807_0605)], &[-18.0]);
    c.check(
        "dot4u",
        &[u(0xFFFF_FFFF), u(0xFFFF_FFFF)],
        &[4.0 * 255.0 * 255.0],
    );
    c.finish();
}

// ------------------------------------------------------------------ data packing

const PACKING: &str = r#"
fn p4x8snorm(v: vec4<f32>) -> u32 { return pack4x8snorm(v); }
fn p4x8unorm(v: vec4<f32>) -> u32 { return pack4x8unorm(v); }
fn p4xi8(v: vec4<i32>) -> u32 { return pack4xI8(v); }
fn p4xu8(v: vec4<u32>) -> u32 { return pack4xU8(v); }
fn p4xi8c(v: vec4<i32>) -> u32 { return pack4xI8Clamp(v); }
fn p4xu8c(v: vec4<u32>) -> u32 { return pack4xU8Clamp(v); }
fn p2x16snorm(v: vec2<f32>) -> u32 { return pack2x16snorm(v); }
fn p2x16unorm(v: vec2<f32>) -> u32 { return pack2x16unorm(v); }
fn p2x16float(v: vec2<f32>) -> u32 { return pack2x16float(v); }
fn u4x8snorm(e: u32) -> vec4<f32> { return unpack4x8snorm(e); }
fn u4x8unorm(e: u32) -> vec4<f32> { return unpack4x8unorm(e); }
fn u4xi8(e: u32) -> vec4<i32> { return unpack4xI8(e); }
fn u4xu8(e: u32) -> vec4<u32> { return unpack4xU8(e); }
fn u2x16snorm(e: u32) -> vec2<f32> { return unpack2x16snorm(e); }
fn u2x16unorm(e: u32) -> vec2<f32> { return unpack2x16unorm(e); }
fn u2x16float(e: u32) -> vec2<f32> { return unpack2x16float(e); }
fn rt4x8unorm(v: vec4<f32>) -> vec4<f32> { return unpack4x8unorm(pack4x8unorm(v)); }
fn rt2x16snorm(v: vec2<f32>) -> vec2<f32> { return unpack2x16snorm(pack2x16snorm(v)); }
fn rt2x16float(v: vec2<f32>) -> vec2<f32> { return unpack2x16float(pack2x16float(v)); }
"#;

#[test]
fn packing_follows_the_spec_formulas() {
    let mut c = Corpus::new(PACKING);
    // "#pack4x8snorm-builtin": floor(0.5 + 127 * min(1, max(-1, e[i]))),
    // component i in bits 8i..8i+7. 1 -> 0x7F, -1 -> 0x81, 0.5 -> 64 (0x40),
    // -0.5 -> floor(-63.0) = -63 (0xC1).
    c.check("p4x8snorm", &[1.0, -1.0, 0.5, -0.5], &[u(0xC140_817F)]);
    c.check("p4x8snorm", &[2.0, -7.0, 0.0, -0.0], &[u(0x0000_817F)]);
    // "#pack4x8unorm-builtin": floor(0.5 + 255 * min(1, max(0, e[i]))).
    c.check("p4x8unorm", &[0.0, 1.0, 0.5, 2.0], &[u(0xFF80_FF00)]);
    c.check("p4x8unorm", &[-1.0, 0.1, 0.2, 1.0], &[u(0xFF33_1A00)]); // 26.0 -> 0x1A, 51.5 -> 0x33
                                                                     // "#pack4xI8-builtin"/"#pack4xU8-builtin": the low 8 bits of each component.
    c.check("p4xi8", &[-1.0, 2.0, -128.0, 127.0], &[u(0x7F80_02FF)]);
    c.check("p4xi8", &[261.0, -257.0, 0.0, 0.0], &[u(0x0000_FF05)]);
    c.check(
        "p4xu8",
        &[f64::from(0x1FF), 2.0, 3.0, 4.0],
        &[u(0x0403_02FF)],
    );
    // The Clamp forms clamp to [-128, 127] and [0, 255] first.
    c.check("p4xi8c", &[-200.0, 200.0, 5.0, -5.0], &[u(0xFB05_7F80)]);
    c.check("p4xu8c", &[300.0, 255.0, 1.0, 0.0], &[u(0x0001_FFFF)]);
    // "#pack2x16snorm-builtin": floor(0.5 + 32767 * clamp(e, -1, 1)).
    c.check("p2x16snorm", &[1.0, -0.5], &[u(0xC001_7FFF)]);
    // "#pack2x16unorm-builtin": floor(0.5 + 65535 * clamp(e, 0, 1)).
    c.check("p2x16unorm", &[0.5, 1.0], &[u(0xFFFF_8000)]);
    // "#pack2x16float-builtin": each component to binary16: 1.5 = 0x3E00, -2 = 0xC000.
    c.check("p2x16float", &[1.5, -2.0], &[u(0xC000_3E00)]);
    c.check(
        "p2x16float",
        &[1.0 + 2f64.powi(-11), 0.0],
        &[u(0x0000_3C00)],
    ); // tie -> even
    c.finish();
}

#[test]
fn unpacking_follows_the_spec_formulas_and_round_trips() {
    let mut c = Corpus::new(PACKING);
    // "#unpack4x8snorm-builtin": max(v / 127, -1) of each signed byte.
    c.check("u4x8snorm", &[u(0x8081_7F00)], &[0.0, 1.0, -1.0, -1.0]);
    c.check(
        "u4x8snorm",
        &[u(0x0000_0040)],
        &[f32v(64.0 / 127.0), 0.0, 0.0, 0.0],
    );
    // "#unpack4x8unorm-builtin": v / 255.
    c.check(
        "u4x8unorm",
        &[u(0xFF80_0100)],
        &[0.0, f32v(1.0 / 255.0), f32v(128.0 / 255.0), 1.0],
    );
    c.check("u4xi8", &[u(0x7F80_02FF)], &[-1.0, 2.0, -128.0, 127.0]);
    c.check("u4xu8", &[u(0x7F80_02FF)], &[255.0, 2.0, 128.0, 127.0]);
    c.check("u2x16snorm", &[u(0x8000_7FFF)], &[1.0, -1.0]);
    c.check(
        "u2x16snorm",
        &[u(0xC001_0001)],
        &[f32v(1.0 / 32767.0), f32v(-16383.0 / 32767.0)],
    );
    c.check(
        "u2x16unorm",
        &[u(0xFFFF_8000)],
        &[f32v(32768.0 / 65535.0), 1.0],
    );
    c.check("u2x16float", &[u(0xC000_3E00)], &[1.5, -2.0]);
    // 0x7C00 is binary16 infinity: unpacked exactly, and (a non-finite value
    // out of finite inputs) flagged like any other.
    c.check_flagged(
        "u2x16float",
        &[u(0x7C00_0001)],
        &[2f64.powi(-24), INF],
        IssueKind::NonFinite,
    );
    // Round trips recover values on the formats' grids.
    c.check(
        "rt4x8unorm",
        &[0.0, f32v(51.0 / 255.0), 1.0, f32v(128.0 / 255.0)],
        &[0.0, f32v(51.0 / 255.0), 1.0, f32v(128.0 / 255.0)],
    );
    c.check("rt2x16snorm", &[-1.0, 1.0], &[-1.0, 1.0]);
    c.check(
        "rt2x16float",
        &[0.333251953125, -65504.0],
        &[0.333251953125, -65504.0],
    );
    c.finish();
}

// ------------------------------------------------------------------ f16

const HALF: &str = r#"
enable f16;
fn h_add(a: f16, b: f16) -> f16 { return a + b; }
fn h_mul(a: f16, b: f16) -> f16 { return a * b; }
fn h_div(a: f16, b: f16) -> f16 { return a / b; }
fn h_rem(a: f16, b: f16) -> f16 { return a % b; }
fn h_literal(x: f16) -> f16 { return x * 0.1h; }
fn h_accum(x: f16, n: i32) -> f16 {
    var s = 0.0h;
    for (var i = 0; i < n; i++) { s += x; }
    return s;
}
fn h_accum_f32(x: f16, n: i32) -> f32 {
    var s = 0.0f;
    for (var i = 0; i < n; i++) { s += f32(x); }
    return s;
}
fn h_vec_ops(a: vec3<f16>, s: f16) -> vec3<f16> { return a * s + 1.0h; }
fn h_mat_vec(m: mat2x2<f16>, v: vec2<f16>) -> vec2<f16> { return m * v; }
fn h_mat_mat(a: mat2x2<f16>, b: mat2x2<f16>) -> mat2x2<f16> { return a * b; }
fn h_transpose(m: mat2x3<f16>) -> mat3x2<f16> { return transpose(m); }
fn h_dot(a: vec3<f16>, b: vec3<f16>) -> f16 { return dot(a, b); }
fn h_length(v: vec2<f16>) -> f16 { return length(v); }
fn h_mix(a: f16, b: f16, t: f16) -> f16 { return mix(a, b, t); }
fn h_smoothstep(e0: f16, e1: f16, x: f16) -> f16 { return smoothstep(e0, e1, x); }
fn h_degrees(x: f16) -> f16 { return degrees(x); }
fn h_radians(x: f16) -> f16 { return radians(x); }
fn h_clamp(x: f16) -> f16 { return clamp(x, 0.0h, 1.0h); }
fn h_sqrt(x: f16) -> f16 { return sqrt(x); }
fn h_fma(a: f16, b: f16, c: f16) -> f16 { return fma(a, b, c); }
fn h_exp(x: f16) -> f16 { return exp(x); }
fn h_sin(x: f16) -> f16 { return sin(x); }
fn h_from_f32(x: f32) -> f16 { return f16(x); }
fn h_to_f32(x: f16) -> f32 { return f32(x); }
fn h_from_i32(x: i32) -> f16 { return f16(x); }
fn h_from_u32(x: u32) -> f16 { return f16(x); }
fn h_modf(x: f16) -> vec2<f16> { let r = modf(x); return vec2(r.fract, r.whole); }
"#;

/// One f16 operation: the exact result of `op` on binary16 values, rounded
/// once to binary16 (exact here because f64 holds every sum, product and
/// quotient of two binary16 values to well within a binary16 rounding).
fn h1(x: f64) -> f64 {
    round_f16(x)
}

#[test]
fn f16_arithmetic_rounds_to_half_after_every_operation() {
    let mut c = Corpus::new(HALF);
    // binary16 has 11 significant bits: at 2048 the spacing is 2, so
    // 2048 + 1 is a tie that rounds to even (2048) and 2048 + 3 gives 2052.
    c.check("h_add", &[2048.0, 1.0], &[2048.0]);
    c.check("h_add", &[2048.0, 3.0], &[2052.0]);
    c.check("h_add", &[65504.0, 15.0], &[65504.0]);
    // Past MAX by half an ULP overflows to infinity, flagged as non-finite.
    c.check_flagged("h_add", &[65504.0, 16.0], &[INF], IssueKind::NonFinite);
    c.check(
        "h_mul",
        &[1.0 + 2f64.powi(-10), 1.0 + 2f64.powi(-10)],
        &[1.0 + 2f64.powi(-9)],
    );
    c.check("h_div", &[1.0, 3.0], &[0.333251953125]);
    c.check("h_literal", &[1.0], &[0.0999755859375]); // 0.1h is binary16 0x2E66
                                                      // Accumulating 0.1h a hundred times in f16 drifts from the f32 sum.
    let x = 0.0999755859375;
    let mut s16 = 0.0;
    let mut s32 = 0.0f32;
    for _ in 0..100 {
        s16 = h1(s16 + x);
        s32 += x as f32;
    }
    c.fail_unless(
        s16 != f64::from(s32),
        "f16 and f32 sums must differ for this case".into(),
    );
    c.check("h_accum", &[x, 100.0], &[s16]);
    c.check("h_accum_f32", &[x, 100.0], &[f64::from(s32)]);
    c.check(
        "h_vec_ops",
        &[1.5, 0.1, 1000.0, 3.0],
        &[
            h1(1.5 * 3.0 + 1.0),
            h1(h1(0.0999755859375 * 3.0) + 1.0),
            h1(1000.0 * 3.0 + 1.0),
        ],
    );
    // Remainder inherits x - y * trunc(x / y), each step rounded to f16.
    let (a, b) = (-53.125, 9.953125);
    let want = h1(a - h1(b * h1(a / b).trunc()));
    c.fail_unless(
        want != h1(a - b * (a / b).trunc()),
        "h_rem case must tell per-step rounding apart".into(),
    );
    c.check("h_rem", &[a, b], &[want]);
    c.finish();
}

#[test]
fn f16_vectors_and_matrices_round_each_product_and_sum() {
    let mut c = Corpus::new(HALF);
    // Row 0 of m * v is m[0].x * v.x + m[1].x * v.y = (1+2^-10)(1+3*2^-10) - 1.
    // The product rounds to 1 + 2^-8 in f16, so the sum is 2^-8; rounding
    // only once would keep 3*2^-20 and give 2^-8 + 2^-18.
    let (a, b) = (1.0 + 2f64.powi(-10), 1.0 + 3.0 * 2f64.powi(-10));
    c.check(
        "h_mat_vec",
        &[a, 0.0, -1.0, 0.0, b, 1.0],
        &[2f64.powi(-8), 0.0],
    );
    c.check("h_dot", &[a, -1.0, 0.5, b, 1.0, 0.0], &[2f64.powi(-8)]);
    // [[a, 0], [0, 1]] * [[b, 0], [0, 1]] (diagonal) and an off-diagonal sum.
    c.check(
        "h_mat_mat",
        &[a, 0.0, 0.0, 1.0, b, 0.0, -1.0, 1.0],
        &[h1(a * b), 0.0, h1(-a), 1.0],
    );
    c.check(
        "h_transpose",
        &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0],
        &[1.0, 4.0, 2.0, 5.0, 3.0, 6.0],
    );
    // length inherited from sqrt(dot(v, v)): 3-4-5 is exact in f16 too.
    c.check("h_length", &[3.0, 4.0], &[5.0]);
    c.finish();
}

#[test]
#[allow(clippy::excessive_precision)] // the spec's degrees/radians literals, as written
fn f16_formula_built_ins_round_after_every_step() {
    let mut c = Corpus::new(HALF);
    // mix: e1 * (1 - e3) + e2 * e3 with four f16 roundings.
    let (a, b, t) = (0.83154296875, 1.005859375, 0.0655517578125);
    let want = h1(h1(a * h1(1.0 - t)) + h1(b * t));
    c.fail_unless(
        want != h1(a * (1.0 - t) + b * t),
        "h_mix case must tell per-step rounding apart".into(),
    );
    c.check("h_mix", &[a, b, t], &[want]);
    // smoothstep: t = clamp((x - e0) / (e1 - e0), 0, 1); t * t * (3 - 2 * t).
    let (e0, e1, x) = (0.0131683349609375, 1.837890625, 0.5185546875);
    let t = h1(h1(x - e0) / h1(e1 - e0)).clamp(0.0, 1.0);
    let want = h1(h1(t * t) * h1(3.0 - h1(2.0 * t)));
    let t_once = ((x - e0) / (e1 - e0)).clamp(0.0, 1.0);
    c.fail_unless(
        want != h1(t_once * t_once * (3.0 - 2.0 * t_once)),
        "h_smoothstep case".into(),
    );
    c.check("h_smoothstep", &[e0, e1, x], &[want]);
    // degrees/radians: x times the spec's constant, which is itself an f16
    // value here (57.295779513082322865 rounds to 57.28125 in binary16).
    let deg = h1(57.295_779_513_082_322_865);
    assert_eq!(deg, 57.28125);
    c.check("h_degrees", &[6.73046875], &[h1(6.73046875 * deg)]);
    let rad = h1(0.017_453_292_519_943_295_474);
    c.check("h_radians", &[111.25], &[h1(111.25 * rad)]);
    c.check("h_clamp", &[1.5], &[1.0]);
    c.check("h_clamp", &[-0.5], &[0.0]);
    c.check("h_sqrt", &[2.0], &[1.4140625]); // correctly rounded to binary16
                                             // fma may fuse or not; the evaluator rounds once (like the f32 fma):
                                             // (1+2^-10)(1+3*2^-10) - 1 = 2^-8 + 3*2^-20 -> 2^-8 + 2^-18.
    let (fa, fb) = (1.0 + 2f64.powi(-10), 1.0 + 3.0 * 2f64.powi(-10));
    c.check("h_fma", &[fa, fb, -1.0], &[2f64.powi(-8) + 2f64.powi(-18)]);
    c.check("h_modf", &[-2.75], &[-0.75, -2.0]);
    // Transcendentals, f16 column of the table: exp 1 + 2|x| ULP(f16),
    // sin absolute 2^-7 on [-pi, pi].
    c.check_within(
        "h_exp",
        &[1.0],
        &[std::f64::consts::E],
        3.0 * 2f64.powi(-9),
        "exp f16: 1 + 2|x| ULP, ULP(e) = 2^-9",
    );
    c.check_within(
        "h_sin",
        &[1.0],
        &[1f64.sin()],
        2f64.powi(-7),
        "sin f16: absolute 2^-7",
    );
    c.finish();
}

#[test]
fn f16_conversions_round_to_nearest_even() {
    let mut c = Corpus::new(HALF);
    c.check("h_from_f32", &[1.0 + 2f64.powi(-11)], &[1.0]);
    c.check(
        "h_from_f32",
        &[1.0 + 3.0 * 2f64.powi(-11)],
        &[1.0 + 2f64.powi(-9)],
    );
    c.check("h_from_f32", &[65519.0], &[65504.0]);
    c.check("h_from_f32", &[1e-8], &[0.0]); // below half the smallest subnormal
    c.check("h_from_f32", &[3e-8], &[2f64.powi(-24)]); // rounds up to it
    c.check("h_from_f32", &[-0.0], &[-0.0]);
    c.check("h_to_f32", &[0.333251953125], &[0.333251953125]);
    c.check("h_to_f32", &[2f64.powi(-24)], &[2f64.powi(-24)]);
    c.check("h_from_i32", &[2049.0], &[2048.0]);
    c.check("h_from_i32", &[2051.0], &[2052.0]);
    c.check("h_from_i32", &[-2049.0], &[-2048.0]);
    c.check("h_from_u32", &[4097.0], &[4096.0]);
    c.finish();
}
