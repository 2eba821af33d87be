//! Differential property test: random typed expression trees are printed as
//! WGSL, compiled and evaluated by shadegate over a batch of random inputs, and
//! evaluated directly in Rust from the WGSL spec's definitions (written here,
//! independently of the evaluator's own `arith` module).
//!
//! The trees use correctly rounded operations only (+ - * / of IEEE 754
//! binary32, sqrt, floor, abs, min/max, integer arithmetic, bit operations,
//! conversions, comparisons, select, dot with the evaluator's documented
//! left-to-right summation), so results must agree bit for bit. The
//! transcendental built-ins, which the spec bounds instead of pinning, are
//! applied at the root of an exact tree in `transcendental_roots_within_spec_bounds`
//! and compared with Rust's f64 functions within the WGSL spec's accuracy
//! bound (W3C WGSL, "Floating Point Accuracy").
//! On failure proptest shrinks the tree and prints the minimal failing WGSL.

use std::collections::BTreeMap;

use proptest::prelude::*;
use shadegate::eval::Program;
use shadegate::wgsl::Shader;

/// f32-valued expressions.
#[derive(Clone, Debug)]
enum F {
    Var(usize),
    Lit(f32),
    Add(Box<F>, Box<F>),
    Sub(Box<F>, Box<F>),
    Mul(Box<F>, Box<F>),
    Div(Box<F>, Box<F>),
    Neg(Box<F>),
    Abs(Box<F>),
    Sqrt(Box<F>),
    Floor(Box<F>),
    Min(Box<F>, Box<F>),
    Max(Box<F>, Box<F>),
    Select(Box<F>, Box<F>, Box<B>),
    FromI(Box<I>),
    FromU(Box<U>),
    Dot3(Box<[F; 6]>),
}

/// i32-valued expressions.
#[derive(Clone, Debug)]
enum I {
    Var(usize),
    Lit(i32),
    Add(Box<I>, Box<I>),
    Sub(Box<I>, Box<I>),
    Mul(Box<I>, Box<I>),
    Div(Box<I>, Box<I>),
    Rem(Box<I>, Box<I>),
    Shl(Box<I>, Box<U>),
    Shr(Box<I>, Box<U>),
    And(Box<I>, Box<I>),
    Xor(Box<I>, Box<I>),
    Neg(Box<I>),
    FromF(Box<F>),
    FromU(Box<U>),
}

/// u32-valued expressions.
#[derive(Clone, Debug)]
enum U {
    Var(usize),
    Lit(u32),
    Add(Box<U>, Box<U>),
    Mul(Box<U>, Box<U>),
    Div(Box<U>, Box<U>),
    Rem(Box<U>, Box<U>),
    Shr(Box<U>, Box<U>),
    Or(Box<U>, Box<U>),
    Not(Box<U>),
    CountOnes(Box<U>),
    FromF(Box<F>),
    Bitcast(Box<F>),
}

/// bool-valued expressions.
#[derive(Clone, Debug)]
enum B {
    LtF(Box<F>, Box<F>),
    EqI(Box<I>, Box<I>),
    LeU(Box<U>, Box<U>),
    Not(Box<B>),
}

const NF: usize = 3;
const NI: usize = 2;
const NU: usize = 2;

fn lit_f() -> impl Strategy<Value = f32> {
    prop_oneof![
        Just(0.0f32),
        Just(1.0),
        Just(-2.5),
        Just(0.5),
        Just(1e-3),
        Just(3.0e5),
        (-100.0f32..100.0)
    ]
}

fn leaf_f() -> BoxedStrategy<F> {
    prop_oneof![(0..NF).prop_map(F::Var), lit_f().prop_map(F::Lit)].boxed()
}
fn leaf_i() -> BoxedStrategy<I> {
    prop_oneof![(0..NI).prop_map(I::Var), (-1000i32..1000).prop_map(I::Lit)].boxed()
}
fn leaf_u() -> BoxedStrategy<U> {
    prop_oneof![(0..NU).prop_map(U::Var), (0u32..40).prop_map(U::Lit)].boxed()
}

fn tree(
    depth: u32,
) -> (
    BoxedStrategy<F>,
    BoxedStrategy<I>,
    BoxedStrategy<U>,
    BoxedStrategy<B>,
) {
    if depth == 0 {
        let b = (leaf_f(), leaf_f())
            .prop_map(|(a, b)| B::LtF(a.into(), b.into()))
            .boxed();
        return (leaf_f(), leaf_i(), leaf_u(), b);
    }
    let (f, i, u, b) = tree(depth - 1);
    let bx = |s: BoxedStrategy<F>| s.prop_map(Box::new);
    let ff = prop_oneof![
        3 => f.clone(),
        1 => (bx(f.clone()), bx(f.clone())).prop_map(|(a, b)| F::Add(a, b)),
        1 => (bx(f.clone()), bx(f.clone())).prop_map(|(a, b)| F::Sub(a, b)),
        1 => (bx(f.clone()), bx(f.clone())).prop_map(|(a, b)| F::Mul(a, b)),
        1 => (bx(f.clone()), bx(f.clone())).prop_map(|(a, b)| F::Div(a, b)),
        1 => bx(f.clone()).prop_map(F::Neg),
        1 => bx(f.clone()).prop_map(F::Abs),
        1 => bx(f.clone()).prop_map(F::Sqrt),
        1 => bx(f.clone()).prop_map(F::Floor),
        1 => (bx(f.clone()), bx(f.clone())).prop_map(|(a, b)| F::Min(a, b)),
        1 => (bx(f.clone()), bx(f.clone())).prop_map(|(a, b)| F::Max(a, b)),
        1 => (bx(f.clone()), bx(f.clone()), b.clone().prop_map(Box::new)).prop_map(|(a, c, d)| F::Select(a, c, d)),
        1 => i.clone().prop_map(|x| F::FromI(Box::new(x))),
        1 => u.clone().prop_map(|x| F::FromU(Box::new(x))),
        1 => proptest::array::uniform6(f.clone()).prop_map(|a| F::Dot3(Box::new(a))),
    ]
    .boxed();
    let bi = |s: BoxedStrategy<I>| s.prop_map(Box::new);
    let bu = |s: BoxedStrategy<U>| s.prop_map(Box::new);
    let ii = prop_oneof![
        3 => i.clone(),
        1 => (bi(i.clone()), bi(i.clone())).prop_map(|(a, b)| I::Add(a, b)),
        1 => (bi(i.clone()), bi(i.clone())).prop_map(|(a, b)| I::Sub(a, b)),
        1 => (bi(i.clone()), bi(i.clone())).prop_map(|(a, b)| I::Mul(a, b)),
        1 => (bi(i.clone()), bi(i.clone())).prop_map(|(a, b)| I::Div(a, b)),
        1 => (bi(i.clone()), bi(i.clone())).prop_map(|(a, b)| I::Rem(a, b)),
        1 => (bi(i.clone()), bu(u.clone())).prop_map(|(a, b)| I::Shl(a, b)),
        1 => (bi(i.clone()), bu(u.clone())).prop_map(|(a, b)| I::Shr(a, b)),
        1 => (bi(i.clone()), bi(i.clone())).prop_map(|(a, b)| I::And(a, b)),
        1 => (bi(i.clone()), bi(i.clone())).prop_map(|(a, b)| I::Xor(a, b)),
        1 => bi(i.clone()).prop_map(I::Neg),
        1 => f.clone().prop_map(|x| I::FromF(Box::new(x))),
        1 => u.clone().prop_map(|x| I::FromU(Box::new(x))),
    ]
    .boxed();
    let uu = prop_oneof![
        3 => u.clone(),
        1 => (bu(u.clone()), bu(u.clone())).prop_map(|(a, b)| U::Add(a, b)),
        1 => (bu(u.clone()), bu(u.clone())).prop_map(|(a, b)| U::Mul(a, b)),
        1 => (bu(u.clone()), bu(u.clone())).prop_map(|(a, b)| U::Div(a, b)),
        1 => (bu(u.clone()), bu(u.clone())).prop_map(|(a, b)| U::Rem(a, b)),
        1 => (bu(u.clone()), bu(u.clone())).prop_map(|(a, b)| U::Shr(a, b)),
        1 => (bu(u.clone()), bu(u.clone())).prop_map(|(a, b)| U::Or(a, b)),
        1 => bu(u.clone()).prop_map(U::Not),
        1 => bu(u.clone()).prop_map(U::CountOnes),
        1 => f.clone().prop_map(|x| U::FromF(Box::new(x))),
        1 => f.clone().prop_map(|x| U::Bitcast(Box::new(x))),
    ]
    .boxed();
    let bb = prop_oneof![
        (f.clone(), f.clone()).prop_map(|(a, b)| B::LtF(a.into(), b.into())),
        (i.clone(), i.clone()).prop_map(|(a, b)| B::EqI(a.into(), b.into())),
        (u.clone(), u.clone()).prop_map(|(a, b)| B::LeU(a.into(), b.into())),
        b.prop_map(|x| B::Not(x.into())),
    ]
    .boxed();
    (ff, ii, uu, bb)
}

// ------------------------------------------------------------ WGSL printing

fn wf(e: &F) -> String {
    match e {
        F::Var(i) => format!("f{i}"),
        F::Lit(x) => format!("({x:?}f)"),
        F::Add(a, b) => format!("({} + {})", wf(a), wf(b)),
        F::Sub(a, b) => format!("({} - {})", wf(a), wf(b)),
        F::Mul(a, b) => format!("({} * {})", wf(a), wf(b)),
        F::Div(a, b) => format!("({} / {})", wf(a), wf(b)),
        F::Neg(a) => format!("(-{})", wf(a)),
        F::Abs(a) => format!("abs({})", wf(a)),
        F::Sqrt(a) => format!("sqrt({})", wf(a)),
        F::Floor(a) => format!("floor({})", wf(a)),
        F::Min(a, b) => format!("min({}, {})", wf(a), wf(b)),
        F::Max(a, b) => format!("max({}, {})", wf(a), wf(b)),
        F::Select(a, b, c) => format!("select({}, {}, {})", wf(a), wf(b), wb(c)),
        F::FromI(a) => format!("f32({})", wi(a)),
        F::FromU(a) => format!("f32({})", wu(a)),
        F::Dot3(v) => format!(
            "dot(vec3<f32>({}, {}, {}), vec3<f32>({}, {}, {}))",
            wf(&v[0]),
            wf(&v[1]),
            wf(&v[2]),
            wf(&v[3]),
            wf(&v[4]),
            wf(&v[5])
        ),
    }
}

fn wi(e: &I) -> String {
    match e {
        I::Var(i) => format!("i{i}"),
        I::Lit(x) if *x < 0 => format!("({x}i)"),
        I::Lit(x) => format!("{x}i"),
        I::Add(a, b) => format!("({} + {})", wi(a), wi(b)),
        I::Sub(a, b) => format!("({} - {})", wi(a), wi(b)),
        I::Mul(a, b) => format!("({} * {})", wi(a), wi(b)),
        I::Div(a, b) => format!("({} / {})", wi(a), wi(b)),
        I::Rem(a, b) => format!("({} % {})", wi(a), wi(b)),
        I::Shl(a, b) => format!("({} << {})", wi(a), wu_shift(b)),
        I::Shr(a, b) => format!("({} >> {})", wi(a), wu_shift(b)),
        I::And(a, b) => format!("({} & {})", wi(a), wi(b)),
        I::Xor(a, b) => format!("({} ^ {})", wi(a), wi(b)),
        I::Neg(a) => format!("(-{})", wi(a)),
        I::FromF(a) => format!("i32({})", wf(a)),
        I::FromU(a) => format!("bitcast<i32>({})", wu(a)),
    }
}

/// A constant shift amount of 32 or more is a shader-creation error (WGSL
/// "Bit Expressions"), so literal amounts are printed modulo 32.
fn wu_shift(e: &U) -> String {
    match e {
        U::Lit(x) => format!("{}u", x % 32),
        other => wu(other),
    }
}

fn wu(e: &U) -> String {
    match e {
        U::Var(i) => format!("u{i}"),
        U::Lit(x) => format!("{x}u"),
        U::Add(a, b) => format!("({} + {})", wu(a), wu(b)),
        U::Mul(a, b) => format!("({} * {})", wu(a), wu(b)),
        U::Div(a, b) => format!("({} / {})", wu(a), wu(b)),
        U::Rem(a, b) => format!("({} % {})", wu(a), wu(b)),
        U::Shr(a, b) => format!("({} >> {})", wu(a), wu_shift(b)),
        U::Or(a, b) => format!("({} | {})", wu(a), wu(b)),
        U::Not(a) => format!("(~{})", wu(a)),
        U::CountOnes(a) => format!("countOneBits({})", wu(a)),
        U::FromF(a) => format!("u32({})", wf(a)),
        U::Bitcast(a) => format!("bitcast<u32>({})", wf(a)),
    }
}

fn wb(e: &B) -> String {
    match e {
        B::LtF(a, b) => format!("({} < {})", wf(a), wf(b)),
        B::EqI(a, b) => format!("({} == {})", wi(a), wi(b)),
        B::LeU(a, b) => format!("({} <= {})", wu(a), wu(b)),
        B::Not(a) => format!("(!{})", wb(a)),
    }
}

// ------------------------------------------------------------ direct evaluation

/// Values of the variables of one point.
#[derive(Clone, Debug)]
struct Env {
    f: [f32; NF],
    i: [i32; NI],
    u: [u32; NU],
}

/// Whether an indeterminate value (WGSL "Indeterminate values": float→int of
/// NaN, NaN payload bits) was involved: then the point is not compared.
#[derive(Default)]
struct Inexact(bool);

fn ef(e: &F, v: &Env, x: &mut Inexact) -> f32 {
    match e {
        F::Var(i) => v.f[*i],
        F::Lit(a) => *a,
        F::Add(a, b) => ef(a, v, x) + ef(b, v, x),
        F::Sub(a, b) => ef(a, v, x) - ef(b, v, x),
        F::Mul(a, b) => ef(a, v, x) * ef(b, v, x),
        F::Div(a, b) => ef(a, v, x) / ef(b, v, x),
        F::Neg(a) => -ef(a, v, x),
        F::Abs(a) => ef(a, v, x).abs(),
        F::Sqrt(a) => ef(a, v, x).sqrt(),
        F::Floor(a) => ef(a, v, x).floor(),
        // min(e1, e2) = e2 if e2 < e1 else e1; max(e1, e2) = e2 if e1 < e2
        // else e1 (WGSL "Numeric Built-in Functions"), NaN operands included.
        F::Min(a, b) => {
            let (p, q) = (ef(a, v, x), ef(b, v, x));
            if q < p {
                q
            } else {
                p
            }
        }
        F::Max(a, b) => {
            let (p, q) = (ef(a, v, x), ef(b, v, x));
            if p < q {
                q
            } else {
                p
            }
        }
        F::Select(a, b, c) => {
            let (f, t) = (ef(a, v, x), ef(b, v, x));
            if eb(c, v, x) {
                t
            } else {
                f
            }
        }
        F::FromI(a) => ei(a, v, x) as f32,
        F::FromU(a) => eu(a, v, x) as f32,
        F::Dot3(a) => {
            let c: Vec<f32> = a.iter().map(|e| ef(e, v, x)).collect();
            // The evaluator documents left-to-right summation.
            (c[0] * c[3] + c[1] * c[4]) + c[2] * c[5]
        }
    }
}

/// i32 division and remainder per WGSL "Arithmetic Expressions": division by
/// zero gives e1, remainder by zero 0; MIN / -1 gives MIN, MIN % -1 gives 0.
fn ei(e: &I, v: &Env, x: &mut Inexact) -> i32 {
    match e {
        I::Var(i) => v.i[*i],
        I::Lit(a) => *a,
        I::Add(a, b) => ei(a, v, x).wrapping_add(ei(b, v, x)),
        I::Sub(a, b) => ei(a, v, x).wrapping_sub(ei(b, v, x)),
        I::Mul(a, b) => ei(a, v, x).wrapping_mul(ei(b, v, x)),
        I::Div(a, b) => {
            let (p, q) = (ei(a, v, x), ei(b, v, x));
            if q == 0 || (p == i32::MIN && q == -1) {
                p
            } else {
                p / q
            }
        }
        I::Rem(a, b) => {
            let (p, q) = (ei(a, v, x), ei(b, v, x));
            if q == 0 || (p == i32::MIN && q == -1) {
                0
            } else {
                p % q
            }
        }
        I::Shl(a, b) => ei(a, v, x).wrapping_shl(eu_shift(b, v, x)),
        I::Shr(a, b) => ei(a, v, x).wrapping_shr(eu_shift(b, v, x)),
        I::And(a, b) => ei(a, v, x) & ei(b, v, x),
        I::Xor(a, b) => ei(a, v, x) ^ ei(b, v, x),
        I::Neg(a) => ei(a, v, x).wrapping_neg(),
        I::FromF(a) => {
            // Saturating conversion; the upper bound is the largest f32 below
            // 2^31 (WGSL "Floating Point Conversion"); NaN is indeterminate.
            let f = ef(a, v, x);
            if f.is_nan() {
                x.0 = true;
                0
            } else if f >= 2147483520.0 {
                2147483520
            } else {
                f as i32
            }
        }
        I::FromU(a) => eu(a, v, x) as i32,
    }
}

fn eu_shift(e: &U, v: &Env, x: &mut Inexact) -> u32 {
    match e {
        U::Lit(a) => a % 32,
        other => eu(other, v, x),
    }
}

fn eu(e: &U, v: &Env, x: &mut Inexact) -> u32 {
    match e {
        U::Var(i) => v.u[*i],
        U::Lit(a) => *a,
        U::Add(a, b) => eu(a, v, x).wrapping_add(eu(b, v, x)),
        U::Mul(a, b) => eu(a, v, x).wrapping_mul(eu(b, v, x)),
        U::Div(a, b) => {
            let (p, q) = (eu(a, v, x), eu(b, v, x));
            // Division by zero gives e1.
            p.checked_div(q).unwrap_or(p)
        }
        U::Rem(a, b) => {
            let (p, q) = (eu(a, v, x), eu(b, v, x));
            if q == 0 {
                0
            } else {
                p % q
            }
        }
        U::Shr(a, b) => eu(a, v, x).wrapping_shr(eu_shift(b, v, x)),
        U::Or(a, b) => eu(a, v, x) | eu(b, v, x),
        U::Not(a) => !eu(a, v, x),
        U::CountOnes(a) => eu(a, v, x).count_ones(),
        U::FromF(a) => {
            let f = ef(a, v, x);
            if f.is_nan() {
                x.0 = true;
                0
            } else if f >= 4294967040.0 {
                4294967040
            } else {
                f as u32
            }
        }
        U::Bitcast(a) => {
            let f = ef(a, v, x);
            if f.is_nan() {
                // NaN payloads are not pinned by the spec.
                x.0 = true;
            }
            f.to_bits()
        }
    }
}

fn eb(e: &B, v: &Env, x: &mut Inexact) -> bool {
    match e {
        B::LtF(a, b) => ef(a, v, x) < ef(b, v, x),
        B::EqI(a, b) => ei(a, v, x) == ei(b, v, x),
        B::LeU(a, b) => eu(a, v, x) <= eu(b, v, x),
        B::Not(a) => !eb(a, v, x),
    }
}

// ------------------------------------------------------------ harness

fn edge_f() -> impl Strategy<Value = f32> {
    prop_oneof![
        Just(0.0f32),
        Just(-0.0),
        Just(1.0),
        Just(f32::MAX),
        Just(f32::MIN_POSITIVE),
        Just(1.0e-40), // subnormal
        Just(f32::INFINITY),
        Just(f32::NAN),
        -1.0e6f32..1.0e6,
        -2.0f32..2.0,
    ]
}

fn edge_i() -> impl Strategy<Value = i32> {
    prop_oneof![
        Just(0),
        Just(-1),
        Just(i32::MIN),
        Just(i32::MAX),
        Just(31),
        any::<i32>(),
        -50i32..50
    ]
}

fn edge_u() -> impl Strategy<Value = u32> {
    prop_oneof![
        Just(0u32),
        Just(u32::MAX),
        Just(31),
        Just(32),
        any::<u32>(),
        0u32..64
    ]
}

fn points() -> impl Strategy<Value = Vec<Env>> {
    proptest::collection::vec(
        (
            proptest::array::uniform3(edge_f()),
            proptest::array::uniform2(edge_i()),
            proptest::array::uniform2(edge_u()),
        )
            .prop_map(|(f, i, u)| Env { f, i, u }),
        1..300,
    )
}

/// Compare one f32 result bit for bit (any NaN matches any NaN: payloads are
/// not pinned by the spec).
fn same_f(got: f32, want: f32, indeterminate: bool) -> bool {
    indeterminate || got.to_bits() == want.to_bits() || (got.is_nan() && want.is_nan())
}

/// A spec accuracy bound: (argument, f64 value, evaluator's f32) → within?
type Bound = fn(f64, f64, f32) -> bool;

/// Distance from the f64 value `want` to `got` in ULPs of f32 at `want`.
fn ulps(want: f64, got: f32) -> f64 {
    let w = want as f32;
    let ulp = (f64::from(f32::from_bits(w.abs().to_bits() + 1)) - f64::from(w.abs())).abs();
    (want - f64::from(got)).abs() / ulp
}

/// The generated function, or `None` when naga rejects it: a constant
/// sub-expression may divide by zero or overflow, which WGSL makes a
/// shader-creation error. Such cases are discarded, not counted.
fn program(body: &str, ret: &str) -> Option<(String, Program)> {
    let src = format!(
        "fn f(f0: f32, f1: f32, f2: f32, i0: i32, i1: i32, u0: u32, u1: u32) -> {ret} {{\n    return {body};\n}}\n"
    );
    let shader = Shader::from_source("tree.wgsl", src.clone()).ok()?;
    // Once naga accepts the module, the evaluator must compile it.
    let p =
        Program::compile(&shader, "f", &BTreeMap::new()).unwrap_or_else(|d| panic!("{d}\n{src}"));
    Some((src, p))
}

fn columns(pts: &[Env]) -> Vec<Vec<u32>> {
    let mut cols = vec![Vec::new(); NF + NI + NU];
    for p in pts {
        let bits =
            p.f.iter()
                .map(|x| x.to_bits())
                .chain(p.i.iter().map(|&x| x as u32))
                .chain(p.u.iter().copied());
        for (c, b) in cols.iter_mut().zip(bits) {
            c.push(b);
        }
    }
    cols
}

fn run(p: &Program, pts: &[Env]) -> Vec<u32> {
    let cols = columns(pts);
    let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
    let mut out = Vec::new();
    p.try_eval(&refs, &mut out).expect("inputs match");
    out.remove(0)
}

fn config() -> ProptestConfig {
    ProptestConfig {
        cases: 96,
        ..ProptestConfig::default()
    }
}

proptest! {
    #![proptest_config(config())]

    #[test]
    fn f32_trees_match_direct_evaluation(e in tree(4).0, pts in points()) {
        let Some((src, p)) = program(&wf(&e), "f32") else { return Err(TestCaseError::reject("naga rejects a constant sub-expression")) };
        let got = run(&p, &pts);
        for (k, pt) in pts.iter().enumerate() {
            let mut x = Inexact::default();
            let want = ef(&e, pt, &mut x);
            let g = f32::from_bits(got[k]);
            prop_assert!(same_f(g, want, x.0), "point {k} (f={:?} i={:?} u={:?}): evaluator {g:?} ({:#010x}), direct {want:?} ({:#010x})\n{src}", pt.f, pt.i, pt.u, got[k], want.to_bits());
        }
    }

    #[test]
    fn transcendental_roots_within_spec_bounds(e in tree(3).0, pts in points(), which in 0usize..4) {
        let (name, bound): (&str, Bound) = match which {
            // exp: 3 + 2·|x| ULP of the result.
            0 => ("exp", |x, want, got| ulps(want, got) <= 3.0 + 2.0 * x.abs()),
            // exp2: 3 + 2·|x| ULP.
            1 => ("exp2", |x, want, got| ulps(want, got) <= 3.0 + 2.0 * x.abs()),
            // log: absolute 2^-21 on [0.5, 2], else 3 ULP.
            2 => ("log", |x, want, got| if (0.5..=2.0).contains(&x) { (want - f64::from(got)).abs() <= 2f64.powi(-21) } else { ulps(want, got) <= 3.0 }),
            // sin: absolute 2^-11 on [-π, π]; unbounded outside.
            _ => ("sin", |x, want, got| x.abs() > std::f64::consts::PI || (want - f64::from(got)).abs() <= 2f64.powi(-11)),
        };
        let Some((src, p)) = program(&format!("{name}({})", wf(&e)), "f32") else { return Err(TestCaseError::reject("naga rejects a constant sub-expression")) };
        let got = run(&p, &pts);
        for (k, pt) in pts.iter().enumerate() {
            let x = f64::from(ef(&e, pt, &mut Inexact::default()));
            let want = match name { "exp" => x.exp(), "exp2" => x.exp2(), "log" => x.ln(), _ => x.sin() };
            let g = f32::from_bits(got[k]);
            if !want.is_finite() || !x.is_finite() || want.abs() > f64::from(f32::MAX) || (name == "log" && x <= 0.0) {
                continue; // outside the finite domain the spec gives no bound
            }
            if want != 0.0 && want.abs() < f64::from(f32::MIN_POSITIVE) {
                continue; // subnormal results may be flushed ("Floating Point Accuracy")
            }
            prop_assert!(bound(x, want, g), "{name}({x}) = {g} but f64 gives {want}\n{src}");
        }
    }

    #[test]
    fn i32_trees_match_direct_evaluation(e in tree(4).1, pts in points()) {
        let Some((src, p)) = program(&wi(&e), "i32") else { return Err(TestCaseError::reject("naga rejects a constant sub-expression")) };
        let got = run(&p, &pts);
        for (k, pt) in pts.iter().enumerate() {
            let mut x = Inexact::default();
            let want = ei(&e, pt, &mut x);
            if x.0 { continue; } // a NaN or transcendental fed a conversion: indeterminate
            prop_assert_eq!(got[k] as i32, want, "point {} (f={:?} i={:?} u={:?})\n{}", k, pt.f, pt.i, pt.u, src);
        }
    }

    #[test]
    fn u32_trees_match_direct_evaluation(e in tree(4).2, pts in points()) {
        let Some((src, p)) = program(&wu(&e), "u32") else { return Err(TestCaseError::reject("naga rejects a constant sub-expression")) };
        let got = run(&p, &pts);
        for (k, pt) in pts.iter().enumerate() {
            let mut x = Inexact::default();
            let want = eu(&e, pt, &mut x);
            if x.0 { continue; }
            prop_assert_eq!(got[k], want, "point {} (f={:?} i={:?} u={:?})\n{}", k, pt.f, pt.i, pt.u, src);
        }
    }

    #[test]
    fn bool_trees_match_direct_evaluation(e in tree(4).3, pts in points()) {
        let Some((src, p)) = program(&format!("select(0u, 1u, {})", wb(&e)), "u32") else { return Err(TestCaseError::reject("naga rejects a constant sub-expression")) };
        let got = run(&p, &pts);
        for (k, pt) in pts.iter().enumerate() {
            let mut x = Inexact::default();
            let want = eb(&e, pt, &mut x);
            if x.0 { continue; }
            prop_assert_eq!(got[k] != 0, want, "point {} (f={:?} i={:?} u={:?})\n{}", k, pt.f, pt.i, pt.u, src);
        }
    }
}
