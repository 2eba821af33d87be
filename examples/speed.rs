//! Throughput benchmark: the shadegate evaluator against the same functions
//! hand-written in Rust f32 (the native bound) and the f64 reference models.
//! Run with `cargo run --release --example speed`; see README "Speed".
use std::collections::BTreeMap;
use std::hint::black_box;
use std::time::Instant;

use shadegate::eval::Program;
use shadegate::wgsl::Shader;

const N: usize = 1 << 20;

fn ggx_native(n_dot_h: &[f32], alpha: &[f32], out: &mut [f32]) {
    for i in 0..out.len() {
        let a2 = alpha[i] * alpha[i];
        let d = n_dot_h[i] * n_dot_h[i] * (a2 - 1.0) + 1.0;
        out[i] = a2 / (std::f32::consts::PI * d * d);
    }
}

fn time<F: FnMut()>(mut f: F) -> f64 {
    f();
    let mut best = f64::MAX;
    for _ in 0..(if std::env::var("SPEED_REPS").is_ok() { 60 } else { 5 }) {
        let t = Instant::now();
        f();
        best = best.min(t.elapsed().as_secs_f64());
    }
    best
}

fn main() {
    let src = r#"
const PI: f32 = 3.14159265358979;
fn ggx(n_dot_h: f32, alpha: f32) -> f32 {
    let a2 = alpha * alpha;
    let d = n_dot_h * n_dot_h * (a2 - 1.0) + 1.0;
    return a2 / (PI * d * d);
}
"#;
    let sh = Shader::from_source("bench.wgsl", src.to_string()).unwrap();
    let p = Program::compile(&sh, "ggx", &BTreeMap::new()).unwrap();
    let side = 1024;
    let ndh: Vec<f32> = (0..N).map(|i| (i % side) as f32 / side as f32).collect();
    let alpha: Vec<f32> = (0..N).map(|i| 0.01 + (i / side) as f32 / side as f32).collect();
    let ib: Vec<u32> = ndh.iter().map(|x| x.to_bits()).collect();
    let ab: Vec<u32> = alpha.iter().map(|x| x.to_bits()).collect();
    let mut out = Vec::new();
    let mut nat = vec![0f32; N];
    let t_native = time(|| ggx_native(black_box(&ndh), black_box(&alpha), &mut nat));
    let t_native_n = time(|| {
        use rayon::prelude::*;
        nat.par_chunks_mut(1 << 14)
            .zip(ndh.par_chunks(1 << 14).zip(alpha.par_chunks(1 << 14)))
            .for_each(|(o, (a, b))| ggx_native(black_box(a), black_box(b), o));
    });
    let t_eval1 = time(|| {
        black_box(p.eval_serial(&[&ib, &ab], &mut out));
    });
    let t_evaln = time(|| {
        black_box(p.eval(&[&ib, &ab], &mut out));
    });
    let mps = |t: f64| N as f64 / t / 1e6;
    println!("ggx native 1 core : {:8.1} M/s", mps(t_native));
    println!("ggx native all    : {:8.1} M/s  scaling {:.2}", mps(t_native_n), t_native / t_native_n);
    println!("ggx eval   1 core : {:8.1} M/s  ratio {:.3}", mps(t_eval1), t_native / t_eval1);
    println!("ggx eval   all    : {:8.1} M/s  scaling {:.2}", mps(t_evaln), t_eval1 / t_evaln);
    println!("slots {}", p.slot_count());
}
