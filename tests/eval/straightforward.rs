//! The optimised evaluation path gives exactly the bits of the straightforward
//! one, on every function of the demo library over its checks' sweeps:
//! full batches read and written in place in the caller's columns, on all
//! cores, with AVX2 kernels (where the CPU has them) — against one point at a
//! time (a padded batch through the evaluator's own slot memory) with only the
//! baseline kernels. (The speed example adds a third witness: the same
//! functions written in plain Rust f32 agree bit for bit.)

use std::path::Path;

use shadegate::eval as lanes;
use shadegate::gate;

#[test]
fn batched_wide_in_place_equals_one_point_at_a_time_baseline() {
    let suite = shadegate::suite::load(Path::new(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/shadegate.toml"
    )))
    .unwrap();
    let mut functions = 0;
    for check in &suite.checks {
        let ev = gate::evaluate(&suite, check, None).unwrap_or_else(|e| panic!("{e}"));
        lanes::set_baseline_only(true);
        let n = ev.points.len;
        // Every point for small sweeps, a spread of 4,000 for the dense one.
        let step = (n / 4000).max(1);
        for i in (0..n).step_by(step) {
            let one: Vec<Vec<u32>> = ev.input_columns.iter().map(|c| vec![c[i]]).collect();
            let refs: Vec<&[u32]> = one.iter().map(|c| &c[..]).collect();
            let mut out = Vec::new();
            ev.program.eval_serial(&refs, &mut out);
            for (j, col) in out.iter().enumerate() {
                assert_eq!(
                    col[0],
                    ev.output_columns[j][i],
                    "{}: point {i} ({}), output {j}",
                    check.name,
                    ev.points.describe(i)
                );
            }
        }
        lanes::set_baseline_only(false);
        functions += 1;
    }
    assert_eq!(functions, suite.checks.len());
}
