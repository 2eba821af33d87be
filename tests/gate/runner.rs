//! The runner's own defects, each pinned by the input that showed it, asserted
//! on typed results (verdicts, statistics, findings), not on report wording:
//! a zero-argument function over a sweep, a golden whose row count differs
//! from the sweep, tolerance lists of the wrong length, and a near-1
//! constant factor (π written as 3.14).

use std::path::{Path, PathBuf};

use shadegate::gate::{self, CheckResult, FindingKind, Verdict};
use shadegate::golden::{self, Golden, Header};
use shadegate::suite::{self, Suite};

/// A scratch project with `lib.wgsl` and `shadegate.toml`, unique per test.
fn project(test: &str, shader: &str, suite_text: &str) -> (PathBuf, Suite) {
    let dir = std::env::temp_dir().join(format!(
        "shadegate-gate-runner-{}-{test}",
        std::process::id()
    ));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join("lib.wgsl"), shader).unwrap();
    std::fs::write(dir.join("shadegate.toml"), suite_text).unwrap();
    let s = suite::load(&dir.join("shadegate.toml")).unwrap_or_else(|d| panic!("{d}"));
    (dir, s)
}

fn run_only(s: &Suite) -> CheckResult {
    gate::run_check(s, &s.checks[0])
}

#[test]
fn a_zero_argument_function_is_compared_at_every_point_of_the_sweep() {
    // k = alpha / 2 (the model's documented formula): the constant 0.25 is
    // right at alpha = 0.5 only, wrong at the other three points.
    let (_dir, s) = project(
        "zero-args",
        "fn k() -> f32 { return 0.25; }\n",
        r#"
[[check]]
name = "k"
shader = "lib.wgsl"
function = "k"
reference = "smith_schlick_k_from_alpha"
reference_args = { alpha = "a" }
[check.sweep]
a = { list = [0.5, 0.6, 0.7, 0.8] }
[check.tolerance]
rel = 1e-6
reason = "one rounding"
"#,
    );
    let r = run_only(&s);
    assert_eq!(r.verdict, Verdict::Fail, "{r:#?}");
    let stats = &r.comparisons[0].stats;
    assert_eq!((stats.points, stats.failed), (4, 3), "{stats:#?}");
}

const VEC_SHADER: &str =
    "fn tint(a: f32) -> vec3<f32> { return vec3<f32>(a, a * 0.5, a * 0.25) / 3.14; }\n";

#[test]
fn a_tolerance_list_of_the_wrong_length_is_a_located_error() {
    let (dir, s) = project(
        "tolerance-length",
        VEC_SHADER,
        r#"
[[check]]
name = "tint"
shader = "lib.wgsl"
function = "tint"
reference = "lambert_diffuse_rgb"
reference_args = { albedo = "vec3(a, a * 0.5, a * 0.25)" }
[check.sweep]
a = { linear = [0.1, 1.0, 10] }
[check.tolerance]
rel = [1e-6, 1e-6]
reason = "one rounding per component"
"#,
    );
    let r = run_only(&s);
    assert_eq!(r.verdict, Verdict::Error, "{r:#?}");
    let e = r.error.unwrap();
    let at = format!("{}:3:", dir.join("shadegate.toml").display());
    assert!(e.contains(&at) && e.contains("lists 2 values"), "{e}");
}

#[test]
fn pi_written_as_3_14_is_named_as_a_constant_factor() {
    // π / 3.14 = 1.000507 on every point: below the old 1e-3 "noise" cut,
    // but the same on every point, so it is a factor.
    let (_dir, s) = project(
        "pi-as-3-14",
        VEC_SHADER,
        r#"
[[check]]
name = "tint"
shader = "lib.wgsl"
function = "tint"
reference = "lambert_diffuse_rgb"
reference_args = { albedo = "vec3(a, a * 0.5, a * 0.25)" }
[check.sweep]
a = { linear = [0.1, 1.0, 50] }
[check.tolerance]
rel = 1e-6
reason = "one rounding per component"
"#,
    );
    let r = run_only(&s);
    assert_eq!(r.verdict, Verdict::Fail, "{r:#?}");
    let f = r
        .findings
        .iter()
        .find(|f| matches!(f.kind, FindingKind::ConstantFactor { .. }))
        .unwrap_or_else(|| panic!("no constant factor: {:#?}", r.findings));
    assert_eq!(f.explains, Some(1.0));
    let FindingKind::ConstantFactor { factor, named } = &f.kind else {
        unreachable!()
    };
    assert!(
        (factor - std::f64::consts::PI / (314.0 / 100.0)).abs() < 1e-6,
        "{factor}"
    );
    assert!(named.as_deref().unwrap_or("").contains("3.14"), "{named:?}");
    // The factor explains every failing point; the hypothesis search names
    // the same mistake as π written as 3.14 in the diffuse term, ranked
    // first (ties keep the explainers' order, the search first).
    assert_eq!(r.findings[0].explains, f.explains, "ranked first or tied");
    assert!(
        matches!(&r.findings[0].kind, FindingKind::BehavesLike { hypothesis, explained, .. }
            if hypothesis == "diffuse_pi_3_14" && *explained == 1.0),
        "{:#?}",
        r.findings
    );
}

#[test]
fn a_golden_whose_row_count_differs_from_the_sweep_is_a_located_error() {
    let (dir, s) = project(
        "golden-rows",
        "fn twice(x: f32) -> f32 { return x * 2.0; }\n",
        r#"
[[check]]
name = "twice"
shader = "lib.wgsl"
function = "twice"
golden = true
[check.sweep]
x = { list = [1.0, 2.0, 3.0, 4.0] }
"#,
    );
    let check = &s.checks[0];
    let ev = gate::evaluate(&s, check, None).unwrap();
    // A golden of three rows whose header agrees with itself (so it parses)
    // but not with the four-point sweep.
    let keep = |cols: &[Vec<u32>]| cols.iter().map(|c| c[..3].to_vec()).collect::<Vec<_>>();
    let g = Golden {
        header: Header {
            check: check.name.clone(),
            shader: check.shader.display().to_string(),
            function: check.function.clone(),
            shader_hash: ev.shader_hash(),
            sweep: check.sweep.to_string(),
            points: 3,
        },
        inputs: ev.inputs.to_vec(),
        outputs: ev.outputs.to_vec(),
        input_columns: keep(&ev.input_columns),
        output_columns: keep(&ev.output_columns),
    };
    let path = s.resolve(check.golden.as_deref().unwrap());
    std::fs::create_dir_all(path.parent().unwrap()).unwrap();
    std::fs::write(&path, golden::render(&g)).unwrap();
    let r = run_only(&s);
    assert_eq!(r.verdict, Verdict::Error, "{r:#?}");
    let e = r.error.unwrap();
    assert!(
        e.contains(&format!("{}:7:", path.display())) && e.contains("point count"),
        "{e}"
    );
    let _ = Path::new(&dir);
}
