//! The optimised evaluation path gives exactly the bits of the straightforward
//! one, on every function of the demo library over its checks' sweeps:
//! full batches read and written in place in the caller's columns, on all
//! cores, with the widest kernels the CPU runs (AVX-512 or AVX2 on x86-64) —
//! against one point at a time (a padded batch through the evaluator's own
//! slot memory) with the kernels of every width it runs, the baseline's
//! included. (The speed example adds a third witness: the same functions
//! written in plain Rust f32 agree bit for bit.)

use std::path::Path;

use shadegate::eval as lanes;
use shadegate::eval::Width;
use shadegate::gate;

/// The demo suite of this repository.
fn demo_suite() -> shadegate::suite::Suite {
    shadegate::suite::load(Path::new(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/shadegate.toml"
    )))
    .unwrap()
}

#[test]
fn batched_widest_in_place_equals_one_point_at_a_time_at_every_width() {
    let suite = demo_suite();
    let mut functions = 0;
    for check in &suite.checks {
        let ev = gate::evaluate(&suite, check, None).unwrap_or_else(|e| panic!("{e}"));
        let n = ev.points.len;
        // Every point for small sweeps, a spread of 4,000 for the dense one,
        // one at a time at every vector width this machine runs.
        let step = (n / 4000).max(1);
        for width in Width::available() {
            lanes::set_width(Some(width));
            for i in (0..n).step_by(step) {
                let one: Vec<Vec<u32>> = ev.input_columns.iter().map(|c| vec![c[i]]).collect();
                let refs: Vec<&[u32]> = one.iter().map(|c| &c[..]).collect();
                let mut out = Vec::new();
                ev.program.eval_serial(&refs, &mut out);
                for (j, col) in out.iter().enumerate() {
                    assert_eq!(
                        col[0],
                        ev.output_columns[j][i],
                        "{}: point {i} ({}), output {j}, {width:?}",
                        check.name,
                        ev.points.describe(i)
                    );
                }
            }
        }
        lanes::set_width(None);
        functions += 1;
    }
    assert_eq!(functions, suite.checks.len());
}

/// Native code for the straight-line stretches gives the executor's bits on
/// every function of the demo library over its checks' sweeps (whole
/// sweeps, on all cores), and most of those functions have such stretches.
#[test]
fn native_code_gives_the_executors_bits_on_every_demo_function() {
    use shadegate::eval::{set_tier, Tier};
    let suite = demo_suite();
    let mut compiled = 0;
    for check in &suite.checks {
        let ev = gate::evaluate(&suite, check, None).unwrap_or_else(|e| panic!("{e}"));
        let ins: Vec<&[u32]> = ev.input_columns.iter().map(|c| &c[..]).collect();
        let mut runs = [Tier::Interpret, Tier::Native].map(|tier| {
            set_tier(Some(tier));
            let mut out = Vec::new();
            let issues = ev.program.eval(&ins, &mut out);
            (out, issues)
        });
        set_tier(None);
        let (native, interpreted) = (runs[1].clone(), std::mem::take(&mut runs[0]));
        assert_eq!(interpreted.1, native.1, "{}: issues", check.name);
        for (j, (a, b)) in interpreted.0.iter().zip(&native.0).enumerate() {
            if let Some(i) = (0..a.len()).find(|&i| a[i] != b[i]) {
                panic!(
                    "{}: output {j} at point {i} ({}): {:#x} interpreted, {:#x} native",
                    check.name,
                    ev.points.describe(i),
                    a[i],
                    b[i]
                );
            }
        }
        compiled += usize::from(ev.program.has_native_code());
    }
    assert!(
        compiled * 2 > suite.checks.len(),
        "only {compiled} of {} checks' functions have native code",
        suite.checks.len()
    );
}
