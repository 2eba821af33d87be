//! Print the GPU adapter and a ULP table (device against the CPU
//! evaluator) for one WGSL function.
//!
//! ```text
//! cargo run --release --features gpu --example gpu_info -- \
//!     [--adapter TEXT] [--points N] [FILE.wgsl FUNCTION]
//! ```
//!
//! Without FILE and FUNCTION it runs on the GPU `ggx_d` of
//! tests/gpu/corpus_wgsl/shading.wgsl. Float arguments are drawn uniformly
//! from [0, 1], integer and bool arguments from all bit patterns (seeded, so
//! runs repeat).

use std::collections::BTreeMap;
use std::path::PathBuf;
use std::process::ExitCode;
use std::time::Instant;

use shadegate::eval::{Program, ScalarKind};
use shadegate::gpu::{self, Gpu};
use shadegate::wgsl::Shader;

fn main() -> ExitCode {
    match run() {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("gpu_info: {e}");
            ExitCode::from(2)
        }
    }
}

fn run() -> Result<(), String> {
    let mut adapter = None;
    let mut points = 1usize << 20;
    let mut rest = Vec::new();
    let mut args = std::env::args().skip(1);
    while let Some(a) = args.next() {
        match a.as_str() {
            "--adapter" => adapter = Some(args.next().ok_or("--adapter needs a value")?),
            "--points" => {
                let v = args.next().ok_or("--points needs a value")?;
                points = v
                    .parse()
                    .map_err(|_| format!("--points: `{v}` is not a count"))?;
            }
            _ => rest.push(a),
        }
    }
    let (file, function) = match rest.as_slice() {
        [] => (
            PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/gpu/corpus_wgsl/shading.wgsl"),
            "ggx_d".to_string(),
        ),
        [f, n] => (PathBuf::from(f), n.clone()),
        _ => return Err("usage: gpu_info [--adapter TEXT] [--points N] [FILE FUNCTION]".into()),
    };
    let shader = Shader::load(&file).map_err(|e| e.to_string())?;
    let overrides = BTreeMap::new();
    let program = Program::compile(&shader, &function, &overrides).map_err(|e| e.to_string())?;

    let t = Instant::now();
    let gpu = Gpu::new(adapter.as_deref()).map_err(|e| e.to_string())?;
    println!("adapter: {}", gpu.adapter());
    println!("setup: {:.1} ms", ms(t.elapsed()));

    let leaves = program.input_leaves();
    let mut rng = 0x5eed_0001_u64;
    let inputs: Vec<Vec<u32>> = leaves
        .iter()
        .map(|(_, k)| (0..points).map(|_| random_leaf(*k, &mut rng)).collect())
        .collect();
    let cols: Vec<&[u32]> = inputs.iter().map(|c| c.as_slice()).collect();

    let t = Instant::now();
    let kernel = gpu
        .prepare(&shader, &function, &overrides)
        .map_err(|e| e.to_string())?;
    let compile = t.elapsed();
    let t = Instant::now();
    let one: Vec<&[u32]> = cols.iter().map(|c| &c[..1]).collect();
    kernel.eval(&one).map_err(|e| e.to_string())?;
    let first = t.elapsed();
    let t = Instant::now();
    let gpu = kernel.eval(&cols).map_err(|e| e.to_string())?;
    let run = t.elapsed();
    println!(
        "pipeline: {:.1} ms, first dispatch (1 point): {:.1} ms, {points} points: {:.1} ms ({:.1} ms per million)",
        ms(compile),
        ms(first),
        ms(run),
        ms(run) * 1e6 / points as f64
    );

    let t = Instant::now();
    let mut cpu = Vec::new();
    program.eval(&cols, &mut cpu);
    println!("cpu evaluator: {:.1} ms", ms(t.elapsed()));

    println!(
        "\n{}: `{function}`, device against the CPU evaluator",
        file.display()
    );
    let table = gpu::ulp_summary(&program.output_leaves(), &cpu, &gpu);
    print!("{}", gpu::format_table(&table, Some((&leaves, &cols))));
    Ok(())
}

fn ms(d: std::time::Duration) -> f64 {
    d.as_secs_f64() * 1e3
}

/// splitmix64 step.
fn next(s: &mut u64) -> u64 {
    *s = s.wrapping_add(0x9e37_79b9_7f4a_7c15);
    let mut z = *s;
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

fn random_leaf(k: ScalarKind, s: &mut u64) -> u32 {
    let r = next(s);
    let unit = (r >> 40) as f64 / (1u64 << 24) as f64;
    match k {
        ScalarKind::F32 => (unit as f32).to_bits(),
        ScalarKind::F16 => u32::from(half::f16::from_f64(unit).to_bits()),
        ScalarKind::Bool => (r & 1) as u32,
        ScalarKind::I32 | ScalarKind::U32 => r as u32,
    }
}
