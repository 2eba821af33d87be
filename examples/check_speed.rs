//! End-to-end cost of a check against its evaluator: the demo suite's
//! `brdf_full` check (1,048,576 points, reference `cook_torrance_rgb`) run
//! whole by the gate, and the evaluator alone on the same input columns, in
//! one run; the ratio is issue 17's target (≤ 2×, and ≤ 0.3 s end to end).
//!
//! Run: `cargo run --release --example check_speed` (add `-- --points N` to
//! run the check with N points, seeded random points added to its grid, for
//! a peak-memory measurement under `/usr/bin/time -v`; add `--shard K/N` to
//! run only that shard of those points, as `run --shard` does).
use std::path::Path;
use std::time::Instant;

use shadegate::gate;
use shadegate::suite;
use shadegate::sweep::Random;

fn best<T>(runs: usize, mut f: impl FnMut() -> T) -> (f64, T) {
    let mut best = f64::INFINITY;
    let mut last = None;
    for _ in 0..runs {
        let t = Instant::now();
        let r = f();
        best = best.min(t.elapsed().as_secs_f64());
        last = Some(r);
    }
    (best, last.expect("at least one run"))
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let points: Option<usize> = args
        .iter()
        .position(|a| a == "--points")
        .and_then(|i| args.get(i + 1))
        .map(|n| n.parse().expect("--points takes a number"));
    let shard = args
        .iter()
        .position(|a| a == "--shard")
        .and_then(|i| args.get(i + 1))
        .map(|s| shadegate::sweep::Shard::parse(s).unwrap_or_else(|e| panic!("{e}")));
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let s = suite::load(&root.join("shadegate.toml")).unwrap_or_else(|d| panic!("{d}"));
    let mut check = s
        .checks
        .iter()
        .find(|c| c.name == "brdf_full")
        .expect("the demo suite has brdf_full")
        .clone();
    if let Some(n) = points {
        let grid = check.sweep.len() - check.sweep.random.map_or(0, |r| r.count);
        check.sweep.random = Some(Random {
            count: n.saturating_sub(grid),
            seed: 17,
        });
        check.shard = shard;
        let t = Instant::now();
        let r = gate::run_check(&s, &check);
        println!(
            "brdf_full with {} points{}: {:?}, {:.3} s end to end (peak memory: see /usr/bin/time -v)",
            r.points,
            shard.map_or(String::new(), |s| format!(" (shard {s} of {})", check.sweep.len())),
            r.verdict,
            t.elapsed().as_secs_f64()
        );
        return;
    }
    let runs = 5;
    let ev = gate::evaluate(&s, &check, None).expect("evaluates");
    let refs: Vec<&[u32]> = ev.input_columns.iter().map(|c| &c[..]).collect();
    // The check and the evaluator alone take turns, so that a slow spell of
    // a shared machine falls on both and their ratio stays fair.
    let (mut end_to_end, mut evaluator) = (f64::INFINITY, f64::INFINITY);
    for _ in 0..runs {
        let (t, r) = best(1, || gate::run_check(&s, &check));
        assert_eq!(r.verdict, gate::Verdict::Pass, "{:?}", r.error);
        end_to_end = end_to_end.min(t);
        let (t, _) = best(1, || {
            let mut out = Vec::new();
            ev.program.eval(&refs, &mut out);
            out
        });
        evaluator = evaluator.min(t);
    }
    let (build_inputs, _) = best(runs, || {
        gate::evaluate(&s, &check, None).map(|e| e.points.len)
    });
    let model = check.reference.expect("brdf_full has a reference");
    let (reference, _) = best(runs, || {
        gate::reference_columns(&check, model, &ev.points, &check.reference_args)
    });
    println!(
        "brdf_full, {} points, {} threads, best of {runs}:",
        ev.points.len,
        rayon::current_num_threads()
    );
    println!("  evaluator alone            {:>8.1} ms", 1e3 * evaluator);
    println!(
        "  inputs + evaluator, whole  {:>8.1} ms  (every point at once, as record and eval do)",
        1e3 * build_inputs
    );
    println!(
        "  reference columns, whole   {:>8.1} ms  (the f64 model alone, every point at once)",
        1e3 * reference
    );
    println!("  whole check (run_check)    {:>8.1} ms", 1e3 * end_to_end);
    println!(
        "  whole check / evaluator    {:>8.1}×  (target ≤ 2×, and ≤ 300 ms)",
        end_to_end / evaluator
    );
    device(&ev, &refs, evaluator, runs);
}

/// The same points through wgpu on the first adapter (Mesa's software
/// driver on a machine without a GPU), built with `--features gpu`.
#[cfg(feature = "gpu")]
fn device(ev: &gate::Evaluated, refs: &[&[u32]], evaluator: f64, runs: usize) {
    let gpu = match shadegate::gpu::Gpu::new(None) {
        Ok(g) => g,
        Err(e) => {
            println!("  device: none ({e})");
            return;
        }
    };
    let kernel = match gpu.prepare_build(&ev.build) {
        Ok(k) => k,
        Err(e) => {
            println!("  device: cannot build the function ({e})");
            return;
        }
    };
    let (t, out) = best(runs, || kernel.eval(refs));
    match out {
        Ok(cols) => {
            let same = cols == ev.output_columns;
            println!(
                "  {} {:>8.1} ms  ({:.1}× the evaluator; bit-identical: {same})",
                gpu.adapter(),
                1e3 * t,
                t / evaluator
            );
        }
        Err(e) => println!("  device: {e}"),
    }
}

#[cfg(not(feature = "gpu"))]
fn device(_: &gate::Evaluated, _: &[&[u32]], _: f64, _: usize) {
    println!("  device: not built (add --features gpu for the wgpu time of the same points)");
}
