//! Shared by the GPU tests: one device per test binary (or a clear skip),
//! seeded argument points, and the leaf-by-leaf comparison of the CPU
//! evaluator with the device under an allowance derived from the WGSL spec.
#![allow(dead_code)]

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;

use shadegate::eval::{bits_to_f64, Program, ScalarKind};
use shadegate::gpu::{self, Gpu, GpuError};
use shadegate::wgsl::Shader;

/// The device shared by every test of this binary; `None` (after printing
/// why) when the machine has no adapter and the environment does not demand
/// one. Any other failure, and "no adapter" under `SHADEGATE_REQUIRE_GPU=1`,
/// fails the calling test.
pub fn device() -> Option<&'static Gpu> {
    static DEVICE: OnceLock<Result<Gpu, GpuError>> = OnceLock::new();
    match DEVICE.get_or_init(|| Gpu::new(None)) {
        Ok(r) => Some(r),
        Err(e) if e.is_no_adapter() && !gpu::device_required() => {
            eprintln!(
                "GPU test skipped: {e}\n(set {}=1 to make this a failure)",
                gpu::REQUIRE_GPU_VAR
            );
            None
        }
        Err(e) if e.is_no_adapter() => {
            panic!("{}=1 demands a device, but: {e}", gpu::REQUIRE_GPU_VAR)
        }
        Err(e) => panic!("gpu device: {e}"),
    }
}

pub fn corpus_file(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/gpu/corpus_wgsl")
        .join(name)
}

pub fn load(name: &str) -> Shader {
    let path = corpus_file(name);
    Shader::load(&path).unwrap_or_else(|d| panic!("{d}"))
}

// ------------------------------------------------------------------ points

/// Where one input leaf's values come from. Every domain has edge values
/// (taken first, and mixed into random points) and a random part.
#[derive(Clone, Copy, Debug)]
pub enum Dom {
    /// Any i32 (random bit patterns) plus the usual edges.
    I32,
    /// Any u32 plus edges.
    U32,
    I32In(i32, i32),
    U32In(u32, u32),
    /// Uniform in [lo, hi] plus lo, hi and the simple values inside.
    F32In(f32, f32),
    /// Integer-valued floats in [lo, hi].
    F32Ints(i32, i32),
    /// Log-uniform magnitudes in [lo, hi] (lo > 0), random sign when `signed`.
    F32Mag(f32, f32, bool),
    /// Any finite f32 (random bit patterns, subnormals included) plus edges
    /// around the conversion and rounding boundaries.
    F32Finite,
    /// Values rounded to f16 from a uniform draw in [lo, hi].
    F16In(f32, f32),
    /// Integer-valued f16 in [lo, hi].
    F16Ints(i32, i32),
    /// Any finite f16 bit pattern (subnormals included).
    F16Finite,
    /// u32 whose two halves are finite f16 patterns.
    U32F16Pair,
    Bool,
}

pub fn splitmix(s: &mut u64) -> u64 {
    *s = s.wrapping_add(0x9e37_79b9_7f4a_7c15);
    let mut z = *s;
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

fn unit(s: &mut u64) -> f64 {
    (splitmix(s) >> 11) as f64 / (1u64 << 53) as f64
}

const F32_EDGES: &[f32] = &[
    0.0,
    -0.0,
    1.0,
    -1.0,
    0.5,
    -0.5,
    1.5,
    -1.5,
    2.5,
    -2.5,
    0.49999997,
    0.50000006,
    0.99999994,
    8388607.5,
    8388608.0,
    16777216.0,
    1e20,
    -1e20,
    2147483520.0,
    2147483648.0,
    -2147483648.0,
    -2147483904.0,
    4294967040.0,
    4294967296.0,
    f32::MAX,
    -f32::MAX,
    f32::MIN_POSITIVE,
    -f32::MIN_POSITIVE,
    1e-45,
    -1e-45,
    1e-40,
    -1e-40,
];

const I32_EDGES: &[i32] = &[
    0,
    1,
    -1,
    2,
    -2,
    3,
    -3,
    7,
    31,
    32,
    33,
    -32,
    255,
    -128,
    127,
    128,
    i32::MAX,
    i32::MIN,
    i32::MIN + 1,
    i32::MAX - 1,
    0x5555_5555,
    0xffff,
    0x10000,
];

const U32_EDGES: &[u32] = &[
    0,
    1,
    2,
    3,
    7,
    31,
    32,
    33,
    63,
    64,
    255,
    256,
    0xffff,
    0x10000,
    0x7fff_ffff,
    0x8000_0000,
    0xffff_ffff,
    0xffff_fffe,
    0x5555_5555,
    0xaaaa_aaaa,
    0x8080_8080,
    0x7f7f_7f7f,
];

const F16_EDGES: &[u16] = &[
    0x0000, 0x8000, 0x3c00, 0xbc00, 0x3800, 0x3e00, 0x7bff, 0xfbff, 0x0400, 0x8400, 0x0001, 0x8001,
    0x03ff, 0x3bff, 0x3c01,
];

fn f16_finite(s: &mut u64) -> u16 {
    loop {
        let h = splitmix(s) as u16;
        if h & 0x7c00 != 0x7c00 {
            return h;
        }
    }
}

impl Dom {
    pub fn kind(self) -> ScalarKind {
        match self {
            Dom::I32 | Dom::I32In(..) => ScalarKind::I32,
            Dom::U32 | Dom::U32In(..) | Dom::U32F16Pair => ScalarKind::U32,
            Dom::F16In(..) | Dom::F16Ints(..) | Dom::F16Finite => ScalarKind::F16,
            Dom::Bool => ScalarKind::Bool,
            _ => ScalarKind::F32,
        }
    }

    pub fn edges(self) -> Vec<u32> {
        let f = |v: &[f32]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
        let inside_f = |lo: f32, hi: f32| {
            let mut v = vec![lo, hi];
            v.extend(
                [0.0f32, -0.0, 1.0, -1.0, 0.5, -0.5]
                    .iter()
                    .filter(|x| (lo..=hi).contains(*x)),
            );
            v
        };
        match self {
            Dom::I32 => I32_EDGES.iter().map(|&x| x as u32).collect(),
            Dom::U32 => U32_EDGES.to_vec(),
            Dom::I32In(lo, hi) => {
                let mut v: Vec<u32> = I32_EDGES
                    .iter()
                    .filter(|x| (lo..=hi).contains(*x))
                    .map(|&x| x as u32)
                    .collect();
                v.extend([lo as u32, hi as u32]);
                v
            }
            Dom::U32In(lo, hi) => {
                let mut v: Vec<u32> = U32_EDGES
                    .iter()
                    .copied()
                    .filter(|x| (lo..=hi).contains(x))
                    .collect();
                v.extend([lo, hi]);
                v
            }
            Dom::F32In(lo, hi) => f(&inside_f(lo, hi)),
            Dom::F32Ints(lo, hi) => [lo, hi, 0, 1, -1]
                .iter()
                .filter(|x| (lo..=hi).contains(*x))
                .map(|&x| (x as f32).to_bits())
                .collect(),
            Dom::F32Mag(lo, hi, signed) => {
                let mut v = vec![lo, hi];
                if (lo..=hi).contains(&1.0) {
                    v.push(1.0);
                }
                if signed {
                    v.extend([-lo, -hi]);
                }
                f(&v)
            }
            Dom::F32Finite => f(F32_EDGES),
            Dom::F16In(lo, hi) => inside_f(lo, hi)
                .iter()
                .map(|&x| u32::from(half::f16::from_f32(x).to_bits()))
                .collect(),
            Dom::F16Ints(lo, hi) => [lo, hi, 0, 1, -1]
                .iter()
                .filter(|x| (lo..=hi).contains(*x))
                .map(|&x| u32::from(half::f16::from_f32(x as f32).to_bits()))
                .collect(),
            Dom::F16Finite => F16_EDGES.iter().map(|&h| u32::from(h)).collect(),
            Dom::U32F16Pair => F16_EDGES
                .iter()
                .zip(F16_EDGES.iter().rev())
                .map(|(&a, &b)| u32::from(a) | (u32::from(b) << 16))
                .collect(),
            Dom::Bool => vec![0, 1],
        }
    }

    pub fn random(self, s: &mut u64) -> u32 {
        match self {
            Dom::I32 | Dom::U32 => splitmix(s) as u32,
            Dom::I32In(lo, hi) => {
                let span = (i64::from(hi) - i64::from(lo) + 1) as u64;
                (i64::from(lo) + (splitmix(s) % span) as i64) as i32 as u32
            }
            Dom::U32In(lo, hi) => {
                let span = u64::from(hi) - u64::from(lo) + 1;
                (u64::from(lo) + splitmix(s) % span) as u32
            }
            Dom::F32In(lo, hi) => ((f64::from(lo) + unit(s) * (f64::from(hi) - f64::from(lo)))
                as f32)
                .clamp(lo, hi)
                .to_bits(),
            Dom::F32Ints(lo, hi) => {
                let span = (i64::from(hi) - i64::from(lo) + 1) as u64;
                ((i64::from(lo) + (splitmix(s) % span) as i64) as f32).to_bits()
            }
            Dom::F32Mag(lo, hi, signed) => {
                let (a, b) = (f64::from(lo).ln(), f64::from(hi).ln());
                let m = ((a + unit(s) * (b - a)).exp() as f32).clamp(lo, hi);
                let neg = signed && splitmix(s) & 1 == 1;
                (if neg { -m } else { m }).to_bits()
            }
            Dom::F32Finite => loop {
                let b = splitmix(s) as u32;
                if b & 0x7f80_0000 != 0x7f80_0000 {
                    return b;
                }
            },
            Dom::F16In(lo, hi) => {
                let x = f64::from(lo) + unit(s) * (f64::from(hi) - f64::from(lo));
                u32::from(half::f16::from_f64(x).to_bits())
            }
            Dom::F16Ints(lo, hi) => {
                let span = (i64::from(hi) - i64::from(lo) + 1) as u64;
                let x = (i64::from(lo) + (splitmix(s) % span) as i64) as f32;
                u32::from(half::f16::from_f32(x).to_bits())
            }
            Dom::F16Finite => u32::from(f16_finite(s)),
            Dom::U32F16Pair => u32::from(f16_finite(s)) | (u32::from(f16_finite(s)) << 16),
            Dom::Bool => (splitmix(s) & 1) as u32,
        }
    }
}

/// `n` copies of one domain (for vector, matrix and array arguments).
pub fn rep(d: Dom, n: usize) -> Vec<Dom> {
    vec![d; n]
}

/// Argument columns: the cross product of the edge values while it stays
/// below 20,000 points, then `random` points where each leaf takes an edge
/// value one time in eight and a random value otherwise. Seeded by `seed`.
pub fn points(doms: &[Dom], random: usize, seed: u64) -> Vec<Vec<u32>> {
    let edges: Vec<Vec<u32>> = doms.iter().map(|d| d.edges()).collect();
    let mut cols: Vec<Vec<u32>> = vec![Vec::new(); doms.len()];
    let product = edges
        .iter()
        .try_fold(1usize, |acc, e| acc.checked_mul(e.len().max(1)));
    if let Some(total) = product.filter(|&t| t <= 20_000 && !doms.is_empty()) {
        for k in 0..total {
            let mut rest = k;
            for (c, e) in cols.iter_mut().zip(&edges) {
                c.push(e[rest % e.len()]);
                rest /= e.len();
            }
        }
    }
    let mut s = seed;
    for _ in 0..random {
        for ((c, d), e) in cols.iter_mut().zip(doms).zip(&edges) {
            let r = splitmix(&mut s);
            c.push(if r.is_multiple_of(8) && !e.is_empty() {
                e[(r >> 8) as usize % e.len()]
            } else {
                d.random(&mut s)
            });
        }
    }
    cols
}

// ------------------------------------------------------------- comparison

/// How far the device may be from the CPU evaluator for one float leaf at
/// one point: `abs + ulp * ULP(m) + rel * m` with `m` the larger magnitude
/// of the two results. Integer and bool leaves always compare exactly.
#[derive(Clone, Copy, Debug, Default)]
pub struct Allow {
    pub abs: f64,
    pub ulp: f64,
    pub rel: f64,
    /// Results and inputs below the smallest normal may be flushed to zero
    /// (WGSL "Floating Point Accuracy": inputs and outputs of the operations
    /// in its tables may be flushed).
    pub flush: bool,
    /// +0 and -0 count as equal (the spec lets an implementation ignore the
    /// sign of a zero, "Floating Point Accuracy").
    pub zero_sign: bool,
}

impl Allow {
    /// Bit for bit: for functions that only move values.
    pub const BITS: Allow = Allow {
        abs: 0.0,
        ulp: 0.0,
        rel: 0.0,
        flush: false,
        zero_sign: false,
    };
    /// Exact value, but flushing and the sign of zero are free.
    pub const EXACT_VALUE: Allow = Allow {
        abs: 0.0,
        ulp: 0.0,
        rel: 0.0,
        flush: true,
        zero_sign: true,
    };

    pub fn ulps(n: f64) -> Allow {
        Allow {
            ulp: n,
            flush: true,
            zero_sign: true,
            ..Allow::default()
        }
    }
}

/// The allowance of a case, possibly depending on the point's inputs (as
/// numbers, one per input leaf).
pub enum Bound {
    Fixed(Allow),
    PerPoint(fn(&[f64]) -> Option<Allow>),
}

/// Whether one result (leaf index, the point's inputs as numbers, result
/// bits) is one the spec allows.
pub type SpecSet = fn(usize, &[f64], u32) -> bool;

/// One differential case: a corpus function, its argument domains and the
/// allowance with its reason.
pub struct Case {
    pub file: &'static str,
    pub function: &'static str,
    pub doms: Vec<Dom>,
    pub bound: Bound,
    /// Why the allowance is what it is (printed with every failure).
    pub why: &'static str,
    /// Output leaves of type u32 that carry two f16 values (pack2x16float).
    pub f16_pairs: bool,
    /// Instead of comparing the two back ends with each other: whether one
    /// result (leaf index, the point's inputs as numbers, result bits) is
    /// one the spec allows. Both the CPU's and the device's must be.
    pub spec_set: Option<SpecSet>,
    /// Least share of points that must be compared (the others are
    /// indeterminate or outside the allowance's range): a guard against a
    /// domain that silently tests nothing.
    pub min_compared: f64,
    pub random: usize,
}

impl Case {
    pub fn new(file: &'static str, function: &'static str, doms: Vec<Dom>) -> Case {
        Case {
            file,
            function,
            doms,
            bound: Bound::Fixed(Allow::BITS),
            why: "integer, bool and moved values must match bit for bit",
            f16_pairs: false,
            spec_set: None,
            min_compared: 0.9,
            random: 60_000,
        }
    }

    pub fn allow(mut self, a: Allow, why: &'static str) -> Case {
        self.bound = Bound::Fixed(a);
        self.why = why;
        self
    }

    pub fn per_point(mut self, f: fn(&[f64]) -> Option<Allow>, why: &'static str) -> Case {
        self.bound = Bound::PerPoint(f);
        self.why = why;
        self
    }
}

fn min_normal(kind: ScalarKind) -> f64 {
    match kind {
        ScalarKind::F16 => 6.103515625e-5,
        _ => f64::from(f32::MIN_POSITIVE),
    }
}

/// The ULP of `m`'s binade (m > 0), doubled when `m` plus the allowance can
/// reach the next power of two (the exact result may lie in the binade
/// above, whose ULP is twice as large).
fn ulp_at(kind: ScalarKind, m: f64, ulps: f64) -> f64 {
    let (mant, min_exp) = match kind {
        ScalarKind::F16 => (10, -14),
        _ => (23, -126),
    };
    let e = if m > 0.0 {
        m.log2().floor() as i32
    } else {
        min_exp
    };
    let e = e.max(min_exp);
    let ulp = 2f64.powi(e - mant);
    if m + ulps * ulp >= 2f64.powi(e + 1) {
        2.0 * ulp
    } else {
        ulp
    }
}

fn is_subnormal(kind: ScalarKind, v: f64) -> bool {
    v != 0.0 && v.abs() < min_normal(kind)
}

/// Float leaf check: `c` from the CPU, `g` from the device.
fn float_ok(kind: ScalarKind, c: u32, g: u32, allow: &Allow) -> bool {
    let same_bits = if kind == ScalarKind::F16 {
        c as u16 == g as u16
    } else {
        c == g
    };
    if same_bits {
        return true;
    }
    let (cv, gv) = (bits_to_f64(kind, c), bits_to_f64(kind, g));
    if cv.is_nan() || gv.is_nan() {
        return false;
    }
    if allow.zero_sign && cv == 0.0 && gv == 0.0 {
        return true;
    }
    if allow.flush && (cv == 0.0 || is_subnormal(kind, cv)) && (gv == 0.0 || is_subnormal(kind, gv))
    {
        return true;
    }
    if cv.is_infinite() || gv.is_infinite() {
        return false;
    }
    let m = cv.abs().max(gv.abs());
    let allowed = allow.abs + allow.ulp * ulp_at(kind, m, allow.ulp) + allow.rel * m;
    (cv - gv).abs() <= allowed
}

/// Every result leaf of point `p` of the CPU that is NaN or infinite
/// although the inputs are finite is an indeterminate value under WGSL's
/// finite-math assumption ("Indeterminate values"): such a point is not
/// compared.
fn indeterminate(kinds: &[ScalarKind], cpu: &[Vec<u32>], p: usize) -> bool {
    kinds.iter().zip(cpu).any(|(k, col)| {
        k.is_float() && {
            let v = bits_to_f64(*k, col[p]);
            !v.is_finite()
        }
    })
}

/// The outcome of one case, for the report.
pub struct Outcome {
    pub points: usize,
    pub compared: usize,
    pub table: Vec<gpu::LeafUlp>,
}

/// Inputs with every subnormal float replaced by a zero of the same sign
/// (what a flushing driver sees), or `None` when nothing would change.
fn flushed_inputs(kinds: &[ScalarKind], cols: &[Vec<u32>]) -> Option<Vec<Vec<u32>>> {
    let mut changed = false;
    let out = kinds
        .iter()
        .zip(cols)
        .map(|(k, col)| {
            col.iter()
                .map(|&b| match k {
                    ScalarKind::F32 if b & 0x7f80_0000 == 0 && b & 0x007f_ffff != 0 => {
                        changed = true;
                        b & 0x8000_0000
                    }
                    ScalarKind::F16 if b & 0x7c00 == 0 && b & 0x03ff != 0 => {
                        changed = true;
                        b & 0x8000
                    }
                    _ => b,
                })
                .collect()
        })
        .collect();
    changed.then_some(out)
}

/// Run `case` on both back ends and check every leaf of every point.
/// Returns `None` when skipped (no device).
#[track_caller]
pub fn check(case: &Case) -> Option<Outcome> {
    let dev = device()?;
    let shader = load(case.file);
    let path = corpus_file(case.file);
    let overrides = BTreeMap::new();
    let program =
        Program::compile(&shader, case.function, &overrides).unwrap_or_else(|d| panic!("{d}"));
    let in_leaves = program.input_leaves();
    let out_leaves = program.output_leaves();
    assert_eq!(
        in_leaves.len(),
        case.doms.len(),
        "{}: `{}` has {} input leaves, the case gives {} domains",
        path.display(),
        case.function,
        in_leaves.len(),
        case.doms.len()
    );
    for ((name, k), d) in in_leaves.iter().zip(&case.doms) {
        assert_eq!(*k, d.kind(), "domain of `{name}` has the wrong type");
    }
    let seed = case
        .function
        .bytes()
        .fold(0xcbf2_9ce4_8422_2325u64, |h, b| {
            (h ^ u64::from(b)).wrapping_mul(0x100_0000_01b3)
        });
    let inputs = points(&case.doms, case.random, seed);
    let cols: Vec<&[u32]> = inputs.iter().map(|c| c.as_slice()).collect();
    let n = cols.first().map_or(0, |c| c.len());

    let mut cpu = Vec::new();
    program.eval(&cols, &mut cpu);
    let gpu = match dev.eval(&shader, case.function, &overrides, &cols) {
        Ok(g) => g,
        // A capability the adapter lacks (f16): nothing to compare here.
        Err(e @ GpuError::Unsupported { .. }) => {
            eprintln!("GPU test skipped: {e}");
            return None;
        }
        Err(e) => panic!("{e}"),
    };
    assert_eq!(gpu.len(), cpu.len(), "output leaf count");

    let in_kinds: Vec<ScalarKind> = in_leaves.iter().map(|l| l.1).collect();
    let out_kinds: Vec<ScalarKind> = out_leaves.iter().map(|l| l.1).collect();
    let flushed = match &case.bound {
        Bound::Fixed(a) if !a.flush => None,
        _ => flushed_inputs(&in_kinds, &inputs),
    };
    let cpu_flushed = flushed.as_ref().map(|f| {
        let fc: Vec<&[u32]> = f.iter().map(|c| c.as_slice()).collect();
        let mut out = Vec::new();
        program.eval(&fc, &mut out);
        out
    });

    let mut failures = Vec::new();
    let mut compared = 0;
    let mut nums = vec![0.0; in_kinds.len()];
    for p in 0..n {
        if indeterminate(&out_kinds, &cpu, p) {
            continue;
        }
        for (v, (k, col)) in nums.iter_mut().zip(in_kinds.iter().zip(&inputs)) {
            *v = bits_to_f64(*k, col[p]);
        }
        let allow = match &case.bound {
            Bound::Fixed(a) => Some(*a),
            Bound::PerPoint(f) => f(&nums),
        };
        let Some(allow) = allow else {
            continue;
        };
        compared += 1;
        for (leaf, k) in out_kinds.iter().enumerate() {
            let g = gpu[leaf][p];
            let ok_with = |c: u32| match k {
                _ if case.f16_pairs && *k == ScalarKind::U32 => {
                    float_ok(ScalarKind::F16, c & 0xffff, g & 0xffff, &allow)
                        && float_ok(ScalarKind::F16, c >> 16, g >> 16, &allow)
                }
                ScalarKind::F32 | ScalarKind::F16 => float_ok(*k, c, g, &allow),
                _ => c == g,
            };
            let ok = match case.spec_set {
                Some(allowed) => allowed(leaf, &nums, cpu[leaf][p]) && allowed(leaf, &nums, g),
                None => {
                    ok_with(cpu[leaf][p])
                        || cpu_flushed.as_ref().is_some_and(|f| ok_with(f[leaf][p]))
                }
            };
            if !ok {
                failures.push((p, leaf, allow));
            }
        }
    }

    let table = gpu::ulp_summary(&out_leaves, &cpu, &gpu);
    println!(
        "{}: `{}` on {}, {n} points ({compared} compared)\n{}",
        case.file,
        case.function,
        dev.adapter().name,
        gpu::format_table(&table, Some((&in_leaves, &cols)))
    );
    if !failures.is_empty() {
        let mut msg = format!(
            "{}: `{}`: {} leaf results of {} points are beyond the allowance ({})\n\
             adapter: {}\n",
            path.display(),
            case.function,
            failures.len(),
            compared,
            case.why,
            dev.adapter()
        );
        for (p, leaf, allow) in failures.iter().take(12) {
            let k = out_kinds[*leaf];
            msg.push_str(&format!(
                "  point {p} `{}`: cpu {} ({:#010x}) device {} ({:#010x}), allowance {allow:?}\n    inputs: {}\n",
                out_leaves[*leaf].0,
                bits_to_f64(k, cpu[*leaf][*p]),
                cpu[*leaf][*p],
                bits_to_f64(k, gpu[*leaf][*p]),
                gpu[*leaf][*p],
                gpu::describe_point(&in_leaves, &cols, *p)
            ));
        }
        panic!("{msg}");
    }
    assert!(
        compared as f64 >= case.min_compared * n as f64,
        "{}: `{}`: only {compared} of {n} points were comparable; the domain is wrong",
        path.display(),
        case.function
    );
    Some(Outcome {
        points: n,
        compared,
        table,
    })
}
