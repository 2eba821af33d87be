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
    stages(&check, &ev, &refs, evaluator, runs);
    device(&ev, &refs, evaluator, runs);
}

/// The three stages no check can skip (the evaluator, the f64 reference
/// model and the judgement by `compare`), each alone on one core over the
/// check's points in segments of [`gate::stream::SEGMENT`], every segment
/// timed on its second pass (its columns then in the cache, as in a check,
/// where a segment's stages follow one another). Their sum spread over the
/// cores, against the evaluator alone, is what a check would cost with
/// nothing else: no points, no argument or input columns, no statistics
/// beyond `compare`'s; and then with the function's compilation, which a
/// check does once.
fn stages(
    check: &suite::Check,
    ev: &gate::Evaluated,
    refs: &[&[u32]],
    evaluator: f64,
    runs: usize,
) {
    let seg = gate::stream::SEGMENT;
    let n = ev.points.len;
    let model = check.reference.expect("brdf_full has a reference");
    let column_form = shadegate::reference::columns::find(model.name).expect("a column form");
    let got = gate::as_f64(&ev.output_columns, &ev.outputs);
    let args = gate::reference_arg_columns(check, model, &ev.points, &check.reference_args)
        .expect("reference arguments");
    let want = gate::reference_columns(check, model, &ev.points, &check.reference_args)
        .expect("reference columns");
    let no_name = |_: usize| String::new();
    // Time `f`'s second call (the first brings its columns into the cache).
    let warm = |f: &mut dyn FnMut()| {
        f();
        let t = Instant::now();
        f();
        t.elapsed().as_secs_f64()
    };
    let mut out = Vec::new();
    let mut model_out = vec![vec![0.0; seg]; model.outputs];
    let (mut eval_t, mut model_t, mut judge_t) = (f64::INFINITY, f64::INFINITY, f64::INFINITY);
    for _ in 0..runs {
        let (mut e, mut m, mut j) = (0.0, 0.0, 0.0);
        for start in (0..n).step_by(seg) {
            let r = start..n.min(start + seg);
            let ins: Vec<&[u32]> = refs.iter().map(|c| &c[r.clone()]).collect();
            e += warm(&mut || {
                ev.program.eval_serial(&ins, &mut out);
            });
            let a: Vec<&[f64]> = args.iter().map(|c| &c[r.clone()]).collect();
            m += warm(&mut || {
                let mut o: Vec<&mut [f64]> =
                    model_out.iter_mut().map(|c| &mut c[..r.len()]).collect();
                column_form(&a, &mut o);
            });
            let g: Vec<Vec<f64>> = got.iter().map(|c| c[r.clone()].to_vec()).collect();
            let w: Vec<Vec<f64>> = want.iter().map(|c| c[r.clone()].to_vec()).collect();
            j += warm(&mut || {
                shadegate::compare::compare(&g, &w, &check.tolerance, false, &no_name);
            });
        }
        (eval_t, model_t, judge_t) = (eval_t.min(e), model_t.min(m), judge_t.min(j));
    }
    // Compiling the function (lowering, and native code where there is
    // some), which a check does once, on one core.
    let mut compile_t = f64::INFINITY;
    for _ in 0..runs {
        let t = Instant::now();
        let program = ev.build.program().expect("compiles");
        #[cfg(target_arch = "x86_64")]
        program.has_native_code();
        compile_t = compile_t.min(t.elapsed().as_secs_f64());
        drop(program);
    }
    let sum = eval_t + model_t + judge_t;
    println!("  stages alone, one core, {seg}-point segments in the cache:");
    println!("    evaluator                {:>8.1} ms", 1e3 * eval_t);
    println!("    f64 reference model      {:>8.1} ms", 1e3 * model_t);
    println!("    judgement (compare)      {:>8.1} ms", 1e3 * judge_t);
    println!(
        "    compiling the function   {:>8.1} ms  (once per check)",
        1e3 * compile_t
    );
    println!(
        "    the three stages / evaluator            {:>5.2}×  (the same segments, one core)",
        sum / eval_t
    );
    let cores = rayon::current_num_threads() as f64;
    println!(
        "    the three on {cores} cores / evaluator alone  {:>5.2}×  (a check with nothing else)",
        sum / cores / evaluator
    );
    println!(
        "    and compiling, on {cores} cores              {:>5.2}×",
        (sum + compile_t) / cores / evaluator
    );
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
