//! Large inputs: how reading time grows with a suite's check count and a
//! WGSL file's function count, printed as ratios taken in one run (see the
//! README's "Limits"). Linear work shows a per-item ratio near 1 between the
//! small and the large input.
//!
//! `cargo run --release --example large_inputs [FUNCTIONS]` (default 100,000
//! functions for the large WGSL file).

use std::collections::BTreeMap;
use std::path::Path;
use std::time::Instant;

use shadegate::eval::Program;
use shadegate::limits::Limits;
use shadegate::suite;
use shadegate::wgsl::{self, Shader};

/// A suite of `n` golden checks of one function.
fn suite_text(n: usize) -> String {
    (0..n)
        .map(|i| {
            format!(
                "[[check]]\nname = \"c{i}\"\nshader = \"lib.wgsl\"\nfunction = \"f\"\ngolden = true\nargs = {{ x = \"x * 2\" }}\n\n[check.sweep]\nx = {{ linear = [0.0, 1.0, 8] }}\n\n"
            )
        })
        .collect()
}

/// A WGSL file of `n` small functions.
fn wgsl_text(n: usize) -> String {
    (0..n)
        .map(|i| format!("fn g{i}(x: f32) -> f32 {{\n    return x * {i}.0 + 1.0;\n}}\n"))
        .collect()
}

fn seconds(f: impl FnOnce()) -> f64 {
    let t = Instant::now();
    f();
    t.elapsed().as_secs_f64()
}

fn main() {
    let big: usize = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(100_000);

    // Suite reading (what `list` does): 1,000 versus 8,000 checks.
    let per_check = |n: usize| {
        let text = suite_text(n);
        let s = seconds(|| {
            let s = suite::parse(Path::new("s.toml"), &text).expect("suite parses");
            assert_eq!(s.checks.len(), n);
        });
        s / n as f64
    };
    let (small, large) = (per_check(1_000), per_check(8_000));
    println!(
        "suite: {:.1} µs per check at 1,000 checks, {:.1} µs at 8,000 (ratio {:.2}; 1 is linear)",
        small * 1e6,
        large * 1e6,
        large / small
    );

    // WGSL: naga's front end versus our own work on the same file.
    for n in [big / 10, big] {
        let text = wgsl_text(n);
        let ours_scan = seconds(|| {
            assert!(wgsl::nesting(&text, Limits::default().expression_depth).is_none());
        });
        let t = Instant::now();
        let naga_module = naga::front::wgsl::parse_str(&text).expect("parses");
        let naga_parse = t.elapsed().as_secs_f64();
        drop(naga_module);
        let mut shader = None;
        let whole =
            seconds(|| shader = Some(Shader::from_source("big.wgsl", text.clone()).unwrap()));
        let shader = shader.unwrap();
        let compile = seconds(|| {
            Program::compile(&shader, &format!("g{}", n - 1), &BTreeMap::new()).unwrap();
        });
        println!(
            "wgsl, {n} functions: naga parse {naga_parse:.3} s; parse + validate (naga, on its thread) {whole:.3} s; \
             our depth scan {ours_scan:.4} s ({:.2}% of naga's parse); compiling one function {compile:.4} s",
            100.0 * ours_scan / naga_parse
        );
    }
}
