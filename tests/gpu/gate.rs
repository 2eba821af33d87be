//! The demo suite (shadegate.toml) run on the GPU on a WebGPU device: every check's
//! sweep runs through the CPU evaluator and the device. Integer and bool
//! results must be bit-identical; float results must meet the check's own
//! tolerance against its reference model on both back ends; on the
//! planted-mistakes library the same checks must fail on both back ends.
//! Per check, the ULP distribution of device against CPU is printed
//! (`--nocapture`).
#![cfg(feature = "gpu")]

use crate::common as gpu_common;

use std::path::{Path, PathBuf};

use shadegate::compare;
use shadegate::eval::{bits_to_f64, ScalarKind};
use shadegate::gate;
use shadegate::gpu;
use shadegate::suite::{self, Check, Suite};
use shadegate::wgsl::Shader;

fn suite() -> Suite {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("shadegate.toml");
    suite::load(&path).unwrap_or_else(|d| panic!("{d}"))
}

fn as_f64(cols: &[Vec<u32>], kinds: &[(String, ScalarKind)]) -> Vec<Vec<f64>> {
    cols.iter()
        .zip(kinds)
        .map(|(c, (_, k))| c.iter().map(|&b| bits_to_f64(*k, b)).collect())
        .collect()
}

/// The planted-mistakes copy of a shader of the good library.
fn planted(path: &Path) -> PathBuf {
    let s = path
        .to_string_lossy()
        .replace("shaders/brackenfold/", "shaders/brackenfold-planted/");
    PathBuf::from(s)
}

/// Run one check on both back ends; returns whether each passed its
/// reference comparison (None without a reference).
fn gpu_check(suite: &Suite, check: &Check, shader_path: &Path) -> Option<(bool, bool)> {
    let dev = gpu_common::device()?;
    let ev = gate::evaluate(suite, check, Some(&[shader_path.to_path_buf()]))
        .unwrap_or_else(|e| panic!("check `{}`: {e}", check.name));
    let shader = Shader::load(shader_path).unwrap_or_else(|d| panic!("{d}"));
    let cols: Vec<&[u32]> = ev.input_columns.iter().map(|c| c.as_slice()).collect();
    let gpu = dev
        .eval(&shader, &check.function, &check.overrides, &cols)
        .unwrap_or_else(|e| panic!("check `{}`: {e}", check.name));
    let table = gpu::ulp_summary(&ev.outputs, &ev.output_columns, &gpu);
    println!(
        "check `{}` ({}, `{}`) on {}: device against the CPU evaluator\n{}",
        check.name,
        shader_path.display(),
        check.function,
        dev.adapter().name,
        gpu::format_table(&table, Some((&ev.inputs, &cols)))
    );
    for ((name, kind), row) in ev.outputs.iter().zip(&table) {
        if !kind.is_float() {
            assert_eq!(
                row.exact, row.points,
                "check `{}`: {kind:?} leaf `{name}` must be bit-identical on the device",
                check.name
            );
        }
    }
    let model = check.reference?;
    let want = gate::reference_columns(check, model, &ev.points, &check.reference_args)
        .unwrap_or_else(|e| panic!("check `{}`: {e}", check.name));
    let half = ev.outputs.iter().any(|(_, k)| *k == ScalarKind::F16);
    let describe = |i: usize| ev.points.describe(i);
    let cpu_stats = compare::compare(
        &as_f64(&ev.output_columns, &ev.outputs),
        &want,
        &check.tolerance,
        half,
        &describe,
    );
    let gpu_stats = compare::compare(
        &as_f64(&gpu, &ev.outputs),
        &want,
        &check.tolerance,
        half,
        &describe,
    );
    println!(
        "  against reference `{}` ({}): CPU {} of {} points failed (worst rel {:.3e}), device {} failed (worst rel {:.3e})",
        model.name,
        check.tolerance.describe(),
        cpu_stats.failed,
        cpu_stats.points,
        cpu_stats.max_rel,
        gpu_stats.failed,
        gpu_stats.max_rel
    );
    Some((cpu_stats.failed == 0, gpu_stats.failed == 0))
}

#[test]
fn demo_library_passes_its_reference_checks_on_both_back_ends() {
    if gpu_common::device().is_none() {
        return;
    }
    let suite = suite();
    let mut with_reference = 0;
    for check in &suite.checks {
        let path = suite.resolve(&check.shader);
        if let Some((cpu, gpu)) = gpu_check(&suite, check, &path) {
            assert!(cpu, "check `{}` fails on the CPU evaluator", check.name);
            assert!(gpu, "check `{}` fails on the device", check.name);
            with_reference += 1;
        }
    }
    assert!(
        with_reference >= 3,
        "only {with_reference} checks have a reference"
    );
}

#[test]
fn planted_mistakes_fail_on_both_back_ends() {
    if gpu_common::device().is_none() {
        return;
    }
    let suite = suite();
    let mut failing = 0;
    for check in &suite.checks {
        let path = planted(&suite.resolve(&check.shader));
        assert!(path.exists(), "no planted copy {}", path.display());
        if let Some((cpu, gpu)) = gpu_check(&suite, check, &path) {
            assert_eq!(
                cpu,
                gpu,
                "check `{}` on the planted library: CPU {} but device {}",
                check.name,
                if cpu { "passes" } else { "fails" },
                if gpu { "passes" } else { "fails" }
            );
            failing += usize::from(!cpu);
        }
    }
    assert!(failing >= 3, "only {failing} planted mistakes were caught");
}

/// `Gpu::run_suite` compiles each function once per run, not once per
/// call: a failing check reaches the device twice (its points, then its
/// evidence points for the explanation), and a check longer than
/// `BACKEND_SEGMENT` once per segment. Two checks of one function with
/// different overrides make two pipelines; the second check's reference is
/// off by 2× so that it fails and is re-evaluated.
#[test]
fn run_suite_compiles_each_function_once() {
    if gpu_common::device().is_none() {
        return;
    }
    // Its own device: the shared one's count moves with other tests.
    let dev = gpu::Gpu::new(None).unwrap_or_else(|e| panic!("{e}"));
    let dir = std::env::temp_dir().join(format!("shadegate-gpu-kernels-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(
        dir.join("lib.wgsl"),
        "override scale: f32 = 1.0;\nfn scaled(x: f32) -> f32 { return x * scale; }\n",
    )
    .unwrap();
    let check = |name: &str, scale: f64, want: f64| {
        format!(
            r#"
[[check]]
name = "{name}"
shader = "lib.wgsl"
function = "scaled"
overrides = {{ scale = {scale:?} }}
reference = "smith_schlick_k_from_alpha"
reference_args = {{ alpha = "x * {:?}" }}
[check.sweep]
x = {{ linear = [0.0, 1.0, 12289] }}
[check.tolerance]
rel = 1e-6
reason = "one multiplication by a power of two is exact"
"#,
            2.0 * want
        )
    };
    std::fs::write(
        dir.join("shadegate.toml"),
        check("twice", 2.0, 2.0) + &check("four_times", 4.0, 8.0),
    )
    .unwrap();
    let s = suite::load(&dir.join("shadegate.toml")).unwrap_or_else(|d| panic!("{d}"));
    let r = dev.run_suite(&s, None, |_, _, _| {});
    assert_eq!(r.checks.len(), 2);
    assert_eq!(r.passed(), 1, "{:#?}", r.checks);
    assert_eq!(r.failed(), 1, "{:#?}", r.checks);
    assert_eq!(dev.pipelines_compiled(), 2);
    let _ = std::fs::remove_dir_all(&dir);
}
