//! Reference expressions (`reference = "lambert_diffuse * n_dot_l"`): a
//! model times a cosine, a sum of lobes, a model at a remapped argument;
//! `reference_args` defaulting to `args`; the same (f16-rounded) parameter
//! values on both sides of a reference check; malformed expressions as
//! located errors.
//!
//! Sources: Lambert's diffuse BRDF is 1/π (J. H. Lambert, "Photometria",
//! 1760); the GGX NDF is α² / (π ((n·h)² (α² − 1) + 1)²) (B. Walter et al.,
//! "Microfacet Models for Refraction through Rough Surfaces", EGSR 2007);
//! `f16` rounding is IEEE 754 binary16 round-to-nearest-even (0.3 becomes
//! 0.300048828125, half::f16, a general-purpose crate).

use std::path::PathBuf;

use shadegate::gate::{CheckResult, FindingKind, Verdict};
use shadegate::suite::Suite;
use shadegate::wgsl::Diagnostic;

const LIB: &str = r#"
enable f16;

const PI: f32 = 3.14159265358979;

fn lit_lambert(n_dot_l: f32) -> f32 { return n_dot_l / PI; }
fn lit_lambert_wrong(n_dot_l: f32) -> f32 { return n_dot_l / 3.0; }

fn d_ggx(n_dot_h: f32, alpha: f32) -> f32 {
    let a2 = alpha * alpha;
    let d = n_dot_h * n_dot_h * (a2 - 1.0) + 1.0;
    return a2 / (PI * d * d);
}
fn d_ggx_roughness(n_dot_h: f32, roughness: f32) -> f32 {
    return d_ggx(n_dot_h, roughness * roughness);
}
fn diffuse_plus_spec(n_dot_h: f32, alpha: f32) -> f32 {
    return 1.0 / PI + d_ggx(n_dot_h, alpha);
}
fn same16(a: f16) -> f16 { return a; }
fn pi_approx() -> f32 { return 3.14159265; }
fn sky() -> vec3<f32> { return vec3<f32>(0.25, 0.5, 1.0); }
fn tint(c: vec3<f32>, k: f32) -> vec3<f32> { return c * k / PI; }
"#;

fn project(test: &str, suite_text: &str) -> Result<(PathBuf, Suite), Diagnostic> {
    super::common::project("references", test, LIB, suite_text)
}

fn run(test: &str, suite_text: &str) -> CheckResult {
    super::common::run_first("references", test, LIB, suite_text)
}

fn check(function: &str, reference: &str, extra: &str, sweep: &str) -> String {
    format!(
        r#"
[[check]]
name = "r"
shader = "lib.wgsl"
function = "{function}"
reference = "{reference}"
{extra}
[check.sweep]
{sweep}
[check.tolerance]
rel = 1e-4
abs = 1e-7
reason = "f32 cancellation in (n.h)^2 (a^2 - 1) + 1 near n.h = 1"
"#
    )
}

const NDF_SWEEP: &str =
    "n_dot_h = { linear = [0.05, 1.0, 20] }\nroughness = { list = [0.2, 0.5, 0.9] }";

#[test]
fn a_model_times_a_cosine() {
    let sweep = "n_dot_l = { linear = [0.0, 1.0, 33] }";
    let r = run(
        "times",
        &check("lit_lambert", "lambert_diffuse * n_dot_l", "", sweep),
    );
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    assert_eq!(
        r.comparisons[0].against,
        "reference lambert_diffuse * n_dot_l"
    );
    // n_dot_l / 3 against n_dot_l / π: off by π/3 - 1 = 4.7 % everywhere.
    let r = run(
        "times-bad",
        &check("lit_lambert_wrong", "lambert_diffuse * n_dot_l", "", sweep),
    );
    assert_eq!(r.verdict, Verdict::Fail, "{r:#?}");
    let rel = r.comparisons[0].stats.max_rel;
    assert!(
        (rel - (std::f64::consts::PI / 3.0 - 1.0)).abs() < 1e-5,
        "{rel}"
    );
}

#[test]
fn a_model_at_a_remapped_argument_and_a_sum_of_lobes() {
    let r = run(
        "remap",
        &check(
            "d_ggx_roughness",
            "ggx_ndf(alpha = roughness * roughness)",
            "",
            NDF_SWEEP,
        ),
    );
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    // Positional arguments too.
    let r = run(
        "positional",
        &check(
            "d_ggx_roughness",
            "ggx_ndf(n_dot_h, roughness ^ 2)",
            "",
            NDF_SWEEP,
        ),
    );
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    // Without the remap the reference is the NDF at alpha = roughness: fails.
    let r = run(
        "remap-missing",
        &check(
            "d_ggx_roughness",
            "ggx_ndf(alpha = roughness)",
            "",
            NDF_SWEEP,
        ),
    );
    assert_eq!(r.verdict, Verdict::Fail, "{r:#?}");
    // A sum of two lobes, the NDF's alpha from `args` (the default).
    let r = run(
        "sum",
        &check(
            "diffuse_plus_spec",
            "lambert_diffuse + ggx_ndf",
            "args = { alpha = \"roughness * roughness\" }",
            NDF_SWEEP,
        ),
    );
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
}

#[test]
fn reference_args_default_to_args_of_the_same_name() {
    // A plain model: `alpha` comes from `args`, not written twice.
    let r = run(
        "default",
        &check(
            "d_ggx",
            "ggx_ndf",
            "args = { alpha = \"roughness * roughness\" }",
            NDF_SWEEP,
        ),
    );
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    // An explicit `reference_args` entry still wins over `args`.
    let r = run(
        "override",
        &check(
            "d_ggx",
            "ggx_ndf",
            "args = { alpha = \"roughness * roughness\" }\nreference_args = { alpha = \"roughness\" }",
            NDF_SWEEP,
        ),
    );
    assert_eq!(r.verdict, Verdict::Fail, "{r:#?}");
}

#[test]
fn vector_expressions_and_plain_expressions() {
    // A vec3 result against a vec3 expression over a vec3 sweep parameter.
    let sweep = "c = { direction = { theta = { linear = [0, 80, 5] }, phi = { list = [0, 90] } } }\nk = { list = [0.5, 2.0] }";
    let r = run("vec", &check("tint", "c * k / pi", "", sweep));
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    let r = run(
        "vec-rgb",
        &check("tint", "lambert_diffuse_rgb(c) * k", "", sweep),
    );
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
}

#[test]
fn an_f16_parameter_reaches_the_reference_rounded() {
    // The identity in f16 against the identity expression: it passes with no
    // tolerance only if the reference sees 0.300048828125, not 0.3.
    let text = r#"
[[check]]
name = "r"
shader = "lib.wgsl"
function = "same16"
reference = "a"
[check.sweep]
a = { list = [0.3, 0.1, 0.7] }
[check.tolerance]
abs = 0
reason = "the identity is exact"
"#;
    let r = run("f16", text);
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    assert!(
        r.findings.iter().any(|f| matches!(&f.kind,
            FindingKind::InputsRounded { parameters, .. } if parameters == &["a".to_string()])),
        "{:#?}",
        r.findings
    );
    let report = shadegate::report::text(
        &shadegate::gate::RunResult {
            suite: "shadegate.toml".into(),
            checks: vec![r],
        },
        false,
    );
    assert!(
        report.contains("a rounded to f16 for both sides"),
        "{report}"
    );
}

#[track_caller]
fn located(test: &str, text: &str, line: u32, fragments: &[&str]) {
    let d = project(test, text).unwrap_err();
    assert_eq!(d.line, line, "{}", d.rendered);
    assert!(d.rendered.contains("shadegate.toml:"), "{}", d.rendered);
    for f in fragments {
        assert!(d.message.contains(f), "missing `{f}` in:\n{}", d.rendered);
    }
}

#[test]
fn malformed_reference_expressions_are_located_errors() {
    let bad = |r: &str, extra: &str| check("d_ggx", r, extra, NDF_SWEEP);
    located(
        "bad-param",
        &bad("ggx_ndf(alpha = roughness, beta = 1)", ""),
        6,
        &["model `ggx_ndf` has no parameter `beta`", "n_dot_h, alpha"],
    );
    located(
        "bad-missing",
        &bad("ggx_ndf(n_dot_h)", ""),
        6,
        &["model `ggx_ndf` needs `alpha`", "reference_args"],
    );
    located(
        "bad-twice",
        &bad("ggx_ndf(n_dot_h, roughness, alpha = 1)", ""),
        6,
        &["takes 2 argument(s), got 3"],
    );
    located(
        "bad-twice-named",
        &bad("ggx_ndf(n_dot_h = 1, n_dot_h = 0.5)", ""),
        6,
        &["`n_dot_h` is given twice"],
    );
    located(
        "bad-vec2",
        &bad("split_sum_fit(n_dot_h, roughness) * 2", ""),
        6,
        &["`split_sum_fit` gives 2 values", "1 or 3"],
    );
    located(
        "bad-name",
        &bad("ggx_ndf(alpha = roughness) * n_dot_l", ""),
        6,
        &["`n_dot_l` is neither a reference model nor a sweep parameter"],
    );
    located(
        "bad-syntax",
        &bad("ggx_ndf(alpha = ) + 1", ""),
        6,
        &[
            "key `reference`: unexpected `)`",
            "a model name of `shadegate models` or an expression",
        ],
    );
    located(
        "bad-width",
        &bad("ggx_ndf(n_dot_h = vec3(1, 0, 0), alpha = roughness)", ""),
        6,
        &["parameter `n_dot_h` takes 1 value(s), its argument gives 3"],
    );
    located(
        "bad-refarg",
        &bad(
            "lambert_diffuse * n_dot_h",
            "reference_args = { alpha = \"roughness\" }",
        ),
        7,
        &[
            "key `reference_args.alpha`",
            "`lambert_diffuse` has no parameter",
        ],
    );
    // A width that does not match the function's result: a run error naming both.
    let r = run(
        "bad-outputs",
        &check(
            "d_ggx_roughness",
            "vec3(1, 1, 1) * ggx_ndf(alpha = roughness)",
            "",
            NDF_SWEEP,
        ),
    );
    assert_eq!(r.verdict, Verdict::Error, "{r:#?}");
    let e = r.error.unwrap();
    assert!(
        e.contains("returns 1 value(s)") && e.contains("gives 3"),
        "{e}"
    );
}

#[test]
fn a_function_without_arguments_needs_no_sweep() {
    let text = |function: &str, reference: &str, extra: &str| {
        format!(
            r#"
[[check]]
name = "z"
shader = "lib.wgsl"
function = "{function}"
reference = "{reference}"
{extra}
[check.tolerance]
rel = 1e-7
reason = "one f32 rounding of a constant"
"#
        )
    };
    let r = run("zero", &text("pi_approx", "pi", ""));
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    assert_eq!(r.points, 1);
    let r = run("zero-vec", &text("sky", "vec3(0.25, 0.5, 1)", ""));
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    let r = run("zero-bad", &text("sky", "vec3(0.25, 0.5, 0.9)", ""));
    assert_eq!(r.verdict, Verdict::Fail, "{r:#?}");
    // A function with arguments and no sweep: the missing argument is named.
    let r = run("zero-args", &text("d_ggx", "1", ""));
    assert_eq!(r.verdict, Verdict::Error, "{r:#?}");
    let e = r.error.unwrap();
    assert!(e.contains("argument `n_dot_h` has no expression"), "{e}");
    // Random points without a sweep: located.
    located(
        "zero-random",
        &text("pi_approx", "pi", "[check.random]\ncount = 4\nseed = 1"),
        2,
        &["random points need sweep parameters"],
    );
    // An empty sweep table is still an error.
    located(
        "zero-empty",
        &text("pi_approx", "pi", "[check.sweep]"),
        7,
        &["the sweep has no parameters", "leave out `[check.sweep]`"],
    );
}
