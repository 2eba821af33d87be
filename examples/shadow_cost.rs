//! Cost of the shadow evaluation: the demo library's full BRDF (`brdf`, the
//! Cook-Torrance model of shaders/brackenfold/materials.wgsl) at 1,048,576
//! points, evaluated normally and with an f64 shadow beside every float
//! operation, both on one thread, in one run.
//!
//! Run: `cargo run --release --example shadow_cost`. It prints the times
//! and their ratios: the shadow executor (with the per-operation
//! measurements of `shadegate::precision`, shares off), the `f64` number
//! model, and the whole analysis with its shares (Shapley values over random
//! orders on a random sample of the points; their own cost is the whole
//! analysis less the shadow run and the f64 model), each against the normal
//! evaluator.
use std::collections::BTreeMap;
use std::time::Instant;

use shadegate::eval::Program;
use shadegate::precision::{analyse, Options};
use shadegate::sweep::Rng;
use shadegate::wgsl::Shader;

const N: usize = 1 << 20;

fn main() {
    let sh = Shader::load("shaders/brackenfold/materials.wgsl".as_ref()).expect("demo library");
    let p = Program::compile(&sh, "brdf", &BTreeMap::new()).expect("brdf compiles");
    // Random unit vectors above the surface for n = +z, v and l; colours,
    // metallic and roughness in [0, 1].
    let mut rng = Rng::new(7);
    let leaves = p.input_leaves();
    let mut cols: Vec<Vec<u32>> = vec![Vec::with_capacity(N); leaves.len()];
    for _ in 0..N {
        let dir = |rng: &mut Rng| {
            let (z, phi) = (rng.unit(), 2.0 * std::f64::consts::PI * rng.unit());
            let r = (1.0 - z * z).sqrt();
            [r * phi.cos(), r * phi.sin(), z]
        };
        let (v, l) = (dir(&mut rng), dir(&mut rng));
        let mut vals = vec![0.0, 0.0, 1.0];
        vals.extend(v);
        vals.extend(l);
        for _ in 0..3 {
            vals.push(rng.unit());
        }
        vals.push(rng.unit());
        vals.push(0.05 + 0.95 * rng.unit());
        assert_eq!(
            vals.len(),
            leaves.len(),
            "brdf(n, v, l, base_color, metallic, roughness)"
        );
        for (c, x) in cols.iter_mut().zip(vals) {
            c.push((x as f32).to_bits());
        }
    }
    let ins: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();

    let mut out = Vec::new();
    let t = Instant::now();
    p.eval_serial(&ins, &mut out);
    let normal = t.elapsed().as_secs_f64();

    let serial = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .unwrap();
    let t = Instant::now();
    let a = serial.install(|| {
        analyse(
            &p,
            &ins,
            &sh.source,
            None,
            &Options {
                shares: false,
                ..Options::default()
            },
        )
        .expect("analysis")
    });
    let shadow = t.elapsed().as_secs_f64();
    assert!(a.internal_errors.is_empty(), "{:?}", a.internal_errors);

    let t = Instant::now();
    let f = serial.install(|| p.eval_f64(&ins));
    let f64_model = t.elapsed().as_secs_f64();
    assert_eq!(f[0].len(), N);

    let t = Instant::now();
    let full = serial
        .install(|| analyse(&p, &ins, &sh.source, None, &Options::default()).expect("analysis"));
    let with_shares = t.elapsed().as_secs_f64();
    let shares = with_shares - shadow - f64_model;

    println!("brdf at {N} points, one thread:");
    println!("  normal evaluation        {normal:8.3} s   1.0×");
    println!(
        "  shadow + measurements    {shadow:8.3} s  {:5.1}× (includes one normal evaluation, the bit-identity check)",
        shadow / normal
    );
    println!(
        "  f64 number model         {f64_model:8.3} s  {:5.1}×",
        f64_model / normal
    );
    println!(
        "  analysis with shares     {with_shares:8.3} s  {:5.1}×",
        with_shares / normal
    );
    println!(
        "  of which the shares      {shares:8.3} s  {:5.1}× ({} re-runs of {} sampled points in the f64 model, {} orders of {} lines)",
        shares / normal,
        full.share_runs,
        full.share_points,
        full.share_orders,
        full.lines.len()
    );
    println!(
        "  (final error over the sweep: max {:.1} ULP, mean {:.2} ULP)",
        a.final_error.max_ulp, a.final_error.mean_ulp
    );
}
