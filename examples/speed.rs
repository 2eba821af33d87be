//! Throughput benchmark: the shadegate evaluator (with native code for its
//! straight-line stretches, and interpreted only) against the same functions
//! hand-written in Rust f32 and compiled into this binary (the native bound),
//! and against the f64 reference models, over the same 1,048,576-point grid.
//!
//! Run: `cargo run --release --example speed` (add `-- --big` for the
//! 16M-point memory measurement). It prints one table; the README's "Speed"
//! section shows a run.
use std::collections::BTreeMap;
use std::hint::black_box;
use std::time::Instant;

use rayon::prelude::*;
use shadegate::eval::{set_tier, Program, Tier};
use shadegate::reference::{brdf::CookTorrance, ndf};
use shadegate::wgsl::Shader;

const N: usize = 1 << 20;
const PI: f32 = std::f32::consts::PI;

/// The demo library: its `d_ggx` and its full Cook-Torrance `brdf`.
const LIBRARY: &str = "shaders/brackenfold/materials.wgsl";
// The WGSL literals 3.14159265358979 and 0.318309886183791 round to these f32 values.
const INV_PI: f32 = std::f32::consts::FRAC_1_PI;

// ---------------------------------------------------------------- native f32

/// `d_ggx` of the demo library, term for term.
fn ggx_native(n_dot_h: &[f32], roughness: &[f32], out: &mut [f32]) {
    for i in 0..out.len() {
        let c = n_dot_h[i];
        let alpha = roughness[i] * roughness[i];
        let a2 = alpha * alpha;
        let s2 = (1.0 - c) * (1.0 + c);
        let d = s2 + c * c * a2;
        out[i] = a2 / (PI * d * d);
    }
}

type V3 = [f32; 3];
fn dot(a: V3, b: V3) -> f32 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}
fn clamp01(x: f32) -> f32 {
    // WGSL clamp = min(max(x, 0), 1).
    x.clamp(0.0, 1.0)
}

/// The demo library's `brdf`, term for term, in plain Rust f32.
#[inline(always)]
fn brdf_native(n: V3, v: V3, l: V3, base: V3, metallic: f32, roughness: f32) -> V3 {
    brdf_native_with(n, v, l, base, metallic, roughness, |x| x.powf(5.0))
}

/// The same with `pow(x, 5)` as four multiplications, which the compiler can
/// vectorise: the machine's real bound (results differ in the last bits).
#[inline(always)]
fn brdf_native_mul(n: V3, v: V3, l: V3, base: V3, metallic: f32, roughness: f32) -> V3 {
    brdf_native_with(n, v, l, base, metallic, roughness, |x| {
        let x2 = x * x;
        x2 * x2 * x
    })
}

#[inline(always)]
fn brdf_native_with(
    n: V3,
    v: V3,
    l: V3,
    base: V3,
    metallic: f32,
    roughness: f32,
    pow5: impl Fn(f32) -> f32,
) -> V3 {
    let n_dot_v = dot(n, v);
    let n_dot_l = dot(n, l);
    if n_dot_v <= 0.0 || n_dot_l <= 0.0 {
        return [0.0; 3];
    }
    let hv = [v[0] + l[0], v[1] + l[1], v[2] + l[2]];
    let len = dot(hv, hv).sqrt();
    let h = [hv[0] / len, hv[1] / len, hv[2] / len];
    let n_dot_h = clamp01(dot(n, h));
    let v_dot_h = clamp01(dot(v, h));
    let alpha = roughness * roughness;
    let a2 = alpha * alpha;
    let nxh = [
        n[1] * h[2] - n[2] * h[1],
        n[2] * h[0] - n[0] * h[2],
        n[0] * h[1] - n[1] * h[0],
    ];
    let dd = dot(nxh, nxh) + n_dot_h * n_dot_h * a2;
    let d = a2 / (PI * dd * dd);
    let gv = n_dot_l * (n_dot_v * n_dot_v * (1.0 - a2) + a2).sqrt();
    let gl = n_dot_v * (n_dot_l * n_dot_l * (1.0 - a2) + a2).sqrt();
    let vis = 0.5 / (gv + gl);
    let w = pow5(1.0 - v_dot_h);
    let dv = d * vis;
    let mut out = [0.0; 3];
    for c in 0..3 {
        let f0 = 0.04 * (1.0 - metallic) + base[c] * metallic;
        let f = f0 + (1.0 - f0) * w;
        out[c] = (1.0 - metallic) * base[c] * INV_PI + f * dv;
    }
    out
}

// ---------------------------------------------------------------- inputs

/// The BRDF's arguments at point `i` of the 14 input columns.
#[inline(always)]
fn point<C: AsRef<[f32]>>(c: &[C], i: usize) -> (V3, V3, V3, V3, f32, f32) {
    let x = |k: usize| c[k].as_ref()[i];
    (
        [x(0), x(1), x(2)],
        [x(3), x(4), x(5)],
        [x(6), x(7), x(8)],
        [x(9), x(10), x(11)],
        x(12),
        x(13),
    )
}

struct Brdf {
    cols: Vec<Vec<f32>>,
}

/// 1024 view directions × 1024 (light, material) combinations.
fn brdf_inputs(n: usize) -> Brdf {
    let mut cols: Vec<Vec<f32>> = (0..14).map(|_| Vec::with_capacity(n)).collect();
    for i in 0..n {
        let (a, b) = (i % 1024, (i / 1024) % 1024);
        let tv = a as f32 / 1024.0 * 1.55;
        let pv = (a % 32) as f32 / 32.0 * std::f32::consts::TAU;
        let tl = (b % 32) as f32 / 32.0 * 1.55;
        let pl = (b / 32) as f32 / 32.0 * std::f32::consts::TAU;
        let v = [tv.sin() * pv.cos(), tv.sin() * pv.sin(), tv.cos()];
        let l = [tl.sin() * pl.cos(), tl.sin() * pl.sin(), tl.cos()];
        let m = [(b % 5) as f32 / 4.0, 0.02 + (b % 11) as f32 / 10.5];
        let vals = [
            0.0, 0.0, 1.0, v[0], v[1], v[2], l[0], l[1], l[2], 0.9, 0.6, 0.3, m[0], m[1],
        ];
        for (c, x) in cols.iter_mut().zip(vals) {
            c.push(x);
        }
    }
    Brdf { cols }
}

// ---------------------------------------------------------------- timing

/// The best time of each closure over `ROUNDS` rounds in which they take
/// turns, so that a slow spell of a shared machine falls on all of them
/// alike and the ratios taken in one run stay fair.
fn race(fs: &mut [&mut dyn FnMut()]) -> Vec<f64> {
    const ROUNDS: usize = 7;
    let mut best = vec![f64::MAX; fs.len()];
    for f in fs.iter_mut() {
        f();
    }
    for _ in 0..ROUNDS {
        for (f, b) in fs.iter_mut().zip(&mut best) {
            let t = Instant::now();
            f();
            *b = b.min(t.elapsed().as_secs_f64());
        }
    }
    best
}

fn peak_rss_mib() -> f64 {
    let status = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    status
        .lines()
        .find(|l| l.starts_with("VmHWM:"))
        .and_then(|l| l.split_whitespace().nth(1))
        .and_then(|kb| kb.parse::<f64>().ok())
        .map_or(f64::NAN, |kb| kb / 1024.0)
}

struct Row {
    what: &'static str,
    secs: f64,
}

fn print_table(title: &str, rows: &[Row], native_1: f64) {
    println!("\n{title} ({N} points)");
    println!("{:<38} {:>12} {:>14}", "", "M points/s", "vs native 1c");
    for r in rows {
        let mps = N as f64 / r.secs / 1e6;
        println!("{:<38} {:>12.1} {:>14.3}", r.what, mps, native_1 / r.secs);
    }
}

fn main() {
    let big = std::env::args().any(|a| a == "--big");
    let threads = rayon::current_num_threads();
    println!("shadegate speed benchmark: {threads} threads available");
    let shader = Shader::load(std::path::Path::new(LIBRARY)).unwrap_or_else(|d| panic!("{d}"));
    let none = BTreeMap::new();

    // ---- GGX NDF
    let ggx = Program::compile(&shader, "d_ggx", &none).expect("d_ggx");
    let side = 1024;
    let ndh: Vec<f32> = (0..N).map(|i| (i % side) as f32 / side as f32).collect();
    let alpha: Vec<f32> = (0..N)
        .map(|i| 0.01 + (i / side) as f32 / side as f32)
        .collect();
    let ib: Vec<u32> = ndh.iter().map(|x| x.to_bits()).collect();
    let ab: Vec<u32> = alpha.iter().map(|x| x.to_bits()).collect();
    let (mut out, mut out_all) = (Vec::new(), Vec::new());
    let (mut nat, mut nat_all) = (vec![0f32; N], vec![0f32; N]);
    let mut r64 = vec![0f64; N];
    let mut out_i = Vec::new();
    let [t_native, t_native_all, t_interp1, t_eval1, t_evaln, t_ref] = race(&mut [
        &mut || ggx_native(black_box(&ndh), black_box(&alpha), &mut nat),
        &mut || {
            nat_all
                .par_chunks_mut(1 << 14)
                .zip(ndh.par_chunks(1 << 14).zip(alpha.par_chunks(1 << 14)))
                .for_each(|(o, (a, b))| ggx_native(black_box(a), black_box(b), o));
        },
        &mut || {
            set_tier(Some(Tier::Interpret));
            drop(black_box(ggx.eval_serial(&[&ib, &ab], &mut out_i)));
            set_tier(None);
        },
        &mut || drop(black_box(ggx.eval_serial(&[&ib, &ab], &mut out))),
        &mut || drop(black_box(ggx.eval(&[&ib, &ab], &mut out_all))),
        &mut || {
            for i in 0..N {
                let r = f64::from(alpha[i]);
                r64[i] = ndf::ggx(f64::from(ndh[i]), r * r);
            }
            black_box(&r64);
        },
    ])[..] else {
        unreachable!("six closures")
    };
    assert_eq!(out_i, out, "the two tiers differ");
    let same = out[0]
        .iter()
        .zip(&nat)
        .filter(|(a, b)| **a == b.to_bits())
        .count();
    print_table(
        "demo library d_ggx (GGX NDF), 2 scalars -> 1",
        &[
            Row {
                what: "native Rust f32, 1 core",
                secs: t_native,
            },
            Row {
                what: "native Rust f32, all cores",
                secs: t_native_all,
            },
            Row {
                what: "shadegate interpreted only, 1 core",
                secs: t_interp1,
            },
            Row {
                what: "shadegate evaluator, 1 core",
                secs: t_eval1,
            },
            Row {
                what: "shadegate evaluator, all cores",
                secs: t_evaln,
            },
            Row {
                what: "f64 reference model, 1 core",
                secs: t_ref,
            },
        ],
        t_native,
    );
    println!(
        "evaluator scaling 1 -> {threads} cores: {:.2}x; bit-identical to native: {:.1} %",
        t_eval1 / t_evaln,
        100.0 * same as f64 / N as f64
    );

    // ---- full Cook-Torrance BRDF
    let bp = Program::compile(&shader, "brdf", &none).expect("brdf");
    let inp = brdf_inputs(N);
    let bits: Vec<Vec<u32>> = inp
        .cols
        .iter()
        .map(|c| c.iter().map(|x| x.to_bits()).collect())
        .collect();
    let refs: Vec<&[u32]> = bits.iter().map(|c| &c[..]).collect();
    let c = &inp.cols;
    let pt = |i: usize| point(c, i);
    let mut nat3: Vec<Vec<f32>> = vec![vec![0f32; N]; 3];
    // Structure-of-arrays columns, one tight loop per chunk: the layout a
    // performance-minded hand-written version would use.
    #[inline(always)]
    fn native_soa<F: Fn(V3, V3, V3, V3, f32, f32) -> V3>(c: &[&[f32]], o: &mut [&mut [f32]], f: F) {
        let n = o[0].len();
        let c: [&[f32]; 14] = std::array::from_fn(|k| &c[k][..n]);
        let [o0, o1, o2] = o else { unreachable!() };
        let (o0, o1, o2) = (&mut o0[..n], &mut o1[..n], &mut o2[..n]);
        for i in 0..n {
            let (n, v, l, b, m, r) = point(&c, i);
            let r = f(n, v, l, b, m, r);
            o0[i] = r[0];
            o1[i] = r[1];
            o2[i] = r[2];
        }
    }
    let run_native = |o: &mut Vec<Vec<f32>>, mul: bool, parallel: bool| {
        let cols: Vec<&[f32]> = c.iter().map(|x| &x[..]).collect();
        let [o0, o1, o2] = &mut o[..] else {
            unreachable!()
        };
        let work = |k: usize, (a, (b, d)): (&mut [f32], (&mut [f32], &mut [f32]))| {
            let s = k * 4096;
            let sub: Vec<&[f32]> = cols.iter().map(|x| &x[s..]).collect();
            if mul {
                native_soa(black_box(&sub), &mut [a, b, d], brdf_native_mul);
            } else {
                native_soa(black_box(&sub), &mut [a, b, d], brdf_native);
            }
        };
        if parallel {
            o0.par_chunks_mut(4096)
                .zip(o1.par_chunks_mut(4096).zip(o2.par_chunks_mut(4096)))
                .enumerate()
                .for_each(|(k, x)| work(k, x));
        } else {
            o0.chunks_mut(4096)
                .zip(o1.chunks_mut(4096).zip(o2.chunks_mut(4096)))
                .enumerate()
                .for_each(|(k, x)| work(k, x));
        }
    };
    let mut nat3_all: Vec<Vec<f32>> = vec![vec![0f32; N]; 3];
    let mut mul3: Vec<Vec<f32>> = vec![vec![0f32; N]; 3];
    let mut ref3 = vec![[0f64; 3]; N];
    let d = |x: V3| x.map(f64::from);
    let mut out_bi = Vec::new();
    let [t_bn, t_bn_all, t_bm, t_bi1, t_be1, t_ben, t_br] = race(&mut [
        &mut || run_native(&mut nat3, false, false),
        &mut || run_native(&mut nat3_all, false, true),
        &mut || run_native(&mut mul3, true, false),
        &mut || {
            set_tier(Some(Tier::Interpret));
            drop(black_box(bp.eval_serial(&refs, &mut out_bi)));
            set_tier(None);
        },
        &mut || drop(black_box(bp.eval_serial(&refs, &mut out))),
        &mut || drop(black_box(bp.eval(&refs, &mut out_all))),
        &mut || {
            for (i, o) in ref3.iter_mut().enumerate() {
                let (n, v, l, b, m, r) = pt(i);
                *o =
                    CookTorrance::STANDARD.eval(d(n), d(v), d(l), d(b), f64::from(m), f64::from(r));
            }
            black_box(&ref3);
        },
    ])[..] else {
        unreachable!("seven closures")
    };
    assert_eq!(out_bi, out, "the two tiers differ");
    let bsame = (0..N)
        .filter(|&i| (0..3).all(|k| out[k][i] == nat3[k][i].to_bits()))
        .count();
    print_table(
        "demo library brdf (Cook-Torrance: GGX, Smith height-correlated, Schlick, Lambert), 14 scalars -> RGB",
        &[
            Row {
                what: "native Rust f32, 1 core",
                secs: t_bn,
            },
            Row {
                what: "native Rust f32, all cores",
                secs: t_bn_all,
            },
            Row {
                what: "native, pow as multiplications, 1 core",
                secs: t_bm,
            },
            Row {
                what: "shadegate interpreted only, 1 core",
                secs: t_bi1,
            },
            Row {
                what: "shadegate evaluator, 1 core",
                secs: t_be1,
            },
            Row {
                what: "shadegate evaluator, all cores",
                secs: t_ben,
            },
            Row {
                what: "f64 reference model, 1 core",
                secs: t_br,
            },
        ],
        t_bn,
    );
    println!(
        "evaluator scaling 1 -> {threads} cores: {:.2}x; bit-identical to native: {:.1} % (native uses the platform powf)",
        t_be1 / t_ben,
        100.0 * bsame as f64 / N as f64
    );
    println!(
        "slots per thread (lowered -> shared by liveness, fused): GGX {} -> {}, BRDF {} -> {} (x {} lanes x 4 bytes)",
        ggx.lowered_slot_count(),
        ggx.slot_count(),
        bp.lowered_slot_count(),
        bp.slot_count(),
        shadegate::eval::LANES
    );

    if big {
        // ---- memory: 16M points streamed through fixed-size per-thread machines
        let n = 16 << 20;
        drop((nat, nat3, mul3, ref3, r64, bits, out));
        // Reset the peak-RSS mark to the current RSS (Linux: "5" > clear_refs).
        let _ = std::fs::write("/proc/self/clear_refs", "5");
        let before = peak_rss_mib();
        let i1: Vec<u32> = (0..n)
            .map(|i| ((i % 4096) as f32 / 4096.0).to_bits())
            .collect();
        let i2: Vec<u32> = (0..n)
            .map(|i| (0.01 + (i / 4096 % 4096) as f32 / 4096.0).to_bits())
            .collect();
        let mut o = Vec::new();
        let t = Instant::now();
        ggx.eval(&[&i1, &i2], &mut o);
        let secs = t.elapsed().as_secs_f64();
        let columns = (3 * n * 4) as f64 / (1 << 20) as f64;
        let peak = peak_rss_mib();
        println!(
            "\n16M-point GGX: {:.2} s; peak RSS {:.0} MiB = {:.0} MiB before + {:.0} MiB input/output columns + {:.1} MiB working set",
            secs,
            peak,
            before,
            columns,
            peak - before - columns
        );
    }
}
