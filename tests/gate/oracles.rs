//! Twin checks and property checks on the user's own function: each property
//! on a function that keeps it and one that breaks it, asserted on typed
//! results (verdicts, worst points, findings), and the malformed uses as
//! located errors.
//!
//! Sources: the sRGB transfer functions and their constants are those of
//! IEC 61966-2-1:1999; reciprocity of `dot(v, l)` is the commutativity of the
//! dot product (and of IEEE 754 multiplication, with the sum taken in the same
//! order), so it holds bit for bit; `f16` rounding of the twin's parameters is
//! IEEE 754 binary16 round-to-nearest-even (half::f16, a general-purpose crate).

use std::path::PathBuf;

use shadegate::gate::{self, CheckResult, FindingKind, Verdict};
use shadegate::suite::Suite;
use shadegate::wgsl::Diagnostic;

const LIB: &str = r#"
enable f16;

fn clamped(x: f32) -> f32 { return clamp(x * 1.5, 0.0, 1.0); }
fn overshoots(x: f32) -> f32 { return x * 1.5; }

fn safe_inverse(x: f32) -> f32 { return 1.0 / max(x, 1e-4); }
fn inverse(x: f32) -> f32 { return 1.0 / x; }

fn symmetric(v: vec3<f32>, l: vec3<f32>, k: f32) -> f32 { return k * dot(v, l); }
fn lopsided(v: vec3<f32>, l: vec3<f32>, k: f32) -> f32 { return k * (2.0 * v.z + l.z); }
fn isotropic(n: vec3<f32>, v: vec3<f32>, l: vec3<f32>) -> f32 { return dot(n, v) * dot(n, l) + dot(v, l); }
fn anisotropic(n: vec3<f32>, v: vec3<f32>, l: vec3<f32>) -> f32 { return dot(n, v) * dot(n, l) + v.x * l.x; }
fn two_values(x: f32) -> vec2<f32> { return vec2<f32>(x, x); }

fn srgb_encode(c: f32) -> f32 {
    if (c <= 0.0031308) { return 12.92 * c; }
    return 1.055 * pow(c, 1.0 / 2.4) - 0.055;
}
fn srgb_decode(e: f32) -> f32 {
    if (e <= 0.04045) { return e / 12.92; }
    return pow((e + 0.055) / 1.055, 2.4);
}
fn gamma_decode(e: f32) -> f32 { return pow(e, 2.2); }

fn square(a: f32) -> f32 { return a * a; }
fn square_f16(a: f16) -> f16 { return a * a; }
fn square_fast(a: f32) -> f32 { return 2.0 * a - 1.0; }
"#;

fn project(test: &str, suite_text: &str) -> Result<(PathBuf, Suite), Diagnostic> {
    super::common::project("oracles", test, LIB, suite_text)
}

fn run(test: &str, suite_text: &str) -> CheckResult {
    super::common::run_first("oracles", test, LIB, suite_text)
}

fn scalar(function: &str, property: &str, extra: &str) -> String {
    format!(
        r#"
[[check]]
name = "p"
shader = "lib.wgsl"
function = "{function}"
property = {property}
{extra}
[check.sweep]
x = {{ linear = [0.0, 1.0, 65] }}
"#
    )
}

#[test]
fn a_range_holds_for_a_clamped_function_and_fails_with_the_worst_point_for_one_that_overshoots() {
    let p = r#"{ kind = "range", min = 0.0, max = 1.0 }"#;
    let r = run("range-good", &scalar("clamped", p, ""));
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    assert_eq!(r.comparisons[0].against, "property result in [0, 1]");
    let r = run("range-bad", &scalar("overshoots", p, ""));
    assert_eq!(r.verdict, Verdict::Fail, "{r:#?}");
    let s = &r.comparisons[0].stats;
    // 1.5 x > 1 for x > 2/3: 22 of the 65 points (x = k/64, k = 43..64).
    assert_eq!(s.failed, 22, "{s:#?}");
    let worst = s.worst.as_ref().unwrap();
    assert_eq!((worst.got[0], worst.want[0]), (1.5, 1.0));
    assert_eq!(worst.params, "x=1");
    // Where it fails: x in [43/64, 1], narrower than half the swept range.
    assert!(
        r.findings.iter().any(|f| matches!(&f.kind,
            FindingKind::Confined { parameter, lo, .. } if parameter == "x" && (*lo - 43.0 / 64.0).abs() < 1e-6)),
        "{:#?}",
        r.findings
    );
    // A one-sided bound: 1.5 x >= 0 everywhere.
    let r = run(
        "range-one-sided",
        &scalar("overshoots", r#"{ kind = "range", min = 0 }"#, ""),
    );
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    assert_eq!(r.comparisons[0].against, "property result >= 0");
}

#[test]
fn finiteness_holds_with_a_guard_and_fails_at_zero_without_it() {
    let p = r#"{ kind = "finite" }"#;
    let r = run("finite-good", &scalar("safe_inverse", p, ""));
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    let r = run("finite-bad", &scalar("inverse", p, ""));
    assert_eq!(r.verdict, Verdict::Fail, "{r:#?}");
    let s = &r.comparisons[0].stats;
    // 1/0 = +inf (IEEE 754 division by zero) at x = 0 only.
    assert_eq!((s.failed, s.nonfinite), (1, 1), "{s:#?}");
    assert_eq!(s.first_nonfinite[0].params, "x=0");
    assert!(r
        .findings
        .iter()
        .any(|f| matches!(f.kind, FindingKind::NonFinite { points: 1, .. })));
}

fn reciprocity(function: &str, swap: &str) -> String {
    format!(
        r#"
[[check]]
name = "r"
shader = "lib.wgsl"
function = "{function}"
property = {{ kind = "reciprocity", swap = {swap} }}
args = {{ k = "0.5" }}
[check.sweep]
v = {{ direction = {{ theta = {{ linear = [0, 80, 5] }}, phi = {{ list = [0, 90] }} }} }}
l = {{ direction = {{ theta = {{ linear = [0, 80, 5] }}, phi = {{ list = [45, 180] }} }} }}
[check.tolerance]
abs = 1e-7
reason = "the same operations in the same order"
"#
    )
}

#[test]
fn reciprocity_holds_for_a_dot_product_and_fails_for_a_lopsided_function() {
    let r = run("recip-good", &reciprocity("symmetric", r#"["v", "l"]"#));
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    let s = &r.comparisons[0].stats;
    assert_eq!((s.points, s.max_abs), (100, 0.0), "{s:#?}");
    assert_eq!(r.comparisons[0].against, "property reciprocity v <-> l");
    let r = run("recip-bad", &reciprocity("lopsided", r#"["v", "l"]"#));
    assert_eq!(r.verdict, Verdict::Fail, "{r:#?}");
    // 0.5 (2 v.z + l.z) - 0.5 (2 l.z + v.z) = 0.5 (v.z - l.z): largest at
    // theta_v = 0, theta_l = 80 degrees, 0.5 (1 - cos 80°).
    let s = &r.comparisons[0].stats;
    let expect = 0.5 * (1.0 - 80f64.to_radians().cos());
    assert!((s.max_abs - expect).abs() < 1e-6, "{s:#?}");
    // Points with v = l keep it.
    assert!(s.failed < s.points);
}

fn round_trip(decode: &str, tol: &str) -> String {
    format!(
        r#"
[[check]]
name = "srgb"
shader = "lib.wgsl"
function = "srgb_encode"
property = {{ kind = "round_trip", decode = "{decode}" }}
args = {{ c = "x" }}
[check.sweep]
x = {{ linear = [0.0, 1.0, 257] }}
[check.tolerance]
{tol}
reason = "a pow and a handful of roundings each way"
"#
    )
}

#[test]
fn an_srgb_round_trip_is_the_identity_and_a_gamma_decoder_breaks_it() {
    let r = run(
        "rt-good",
        &round_trip("srgb_decode", "abs = 1e-6\nrel = 1e-5"),
    );
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    assert_eq!(
        r.comparisons[0].against,
        "property round trip through srgb_decode"
    );
    let r = run(
        "rt-bad",
        &round_trip("gamma_decode", "abs = 1e-6\nrel = 1e-5"),
    );
    assert_eq!(r.verdict, Verdict::Fail, "{r:#?}");
    let worst = r.comparisons[0].stats.worst.as_ref().unwrap();
    // Expected value: the encoder's own argument.
    // (x = i / 256 on this grid, exact in f32.)
    assert_eq!(worst.want[0], worst.index as f64 / 256.0, "{worst:#?}");
}

fn twin(function: &str, twin_fn: &str, tol: &str) -> String {
    format!(
        r#"
[[check]]
name = "t"
shader = "lib.wgsl"
function = "{function}"
twin = {{ function = "{twin_fn}", args = {{ a = "alpha" }} }}
args = {{ a = "alpha" }}
[check.sweep]
alpha = {{ list = [0.3, 0.5, 0.7, 0.9] }}
[check.tolerance]
{tol}
reason = "one f16 rounding of the product"
"#
    )
}

#[test]
fn an_f16_twin_sees_the_same_rounded_parameters_and_passes() {
    // alpha = 0.3 is 0.30004883 in f16 (binary16 round-to-nearest-even); the
    // f32 side sees that value too, so only the product's rounding is left.
    let r = run("twin-f16", &twin("square", "square_f16", "ulp = 1"));
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    assert_eq!(r.comparisons[0].against, "twin square_f16");
    assert!(
        r.findings.iter().any(|f| matches!(&f.kind,
            FindingKind::InputsRounded { parameters, .. } if parameters == &["alpha".to_string()])),
        "{:#?}",
        r.findings
    );
    // The two differ by one f16 rounding at most, and do differ somewhere.
    assert!(r.comparisons[0].stats.max_abs > 0.0);
}

#[test]
fn a_fast_twin_that_differs_fails_with_the_worst_point() {
    let r = run("twin-fast", &twin("square_fast", "square", "abs = 1e-3"));
    assert_eq!(r.verdict, Verdict::Fail, "{r:#?}");
    // 2a - 1 against a²: -(1 - a)², largest at a = 0.3 (0.49).
    let worst = r.comparisons[0].stats.worst.as_ref().unwrap();
    assert_eq!(worst.params, "alpha=0.3");
    assert!((r.comparisons[0].stats.max_abs - 0.49).abs() < 1e-6);
    assert!(!r
        .findings
        .iter()
        .any(|f| matches!(f.kind, FindingKind::InputsRounded { .. })));
}

#[test]
fn malformed_uses_are_located_errors() {
    // An unknown property: a parse error at the `property` line.
    let text = scalar("clamped", r#"{ kind = "monotone" }"#, "");
    let d = project("bad-kind", &text).unwrap_err();
    assert!(
        d.message.contains("unknown property \"monotone\""),
        "{}",
        d.rendered
    );
    assert_eq!(d.line, 6, "{}", d.rendered);
    // A key of another kind.
    let d = project(
        "bad-key",
        &scalar("clamped", r#"{ kind = "finite", max = 1 }"#, ""),
    )
    .unwrap_err();
    assert!(d.message.contains("no key `max`"), "{}", d.rendered);
    // A twin or reciprocity without a tolerance.
    let d = project(
        "no-tol",
        &twin("square", "square_f16", "").replace(
            "[check.tolerance]\n\nreason = \"one f16 rounding of the product\"\n",
            "",
        ),
    )
    .unwrap_err();
    assert!(
        d.message.contains("needs a `[check.tolerance]`"),
        "{}",
        d.rendered
    );

    // Run-time errors name the suite file and the line of the key.
    let r = run("missing-twin", &twin("square", "cube", "ulp = 1"));
    assert_eq!(r.verdict, Verdict::Error);
    let e = r.error.unwrap();
    assert!(
        e.contains("shadegate.toml:6:") && e.contains("`cube`"),
        "{e}"
    );
    let r = run("bad-swap", &reciprocity("symmetric", r#"["v", "h"]"#));
    let e = r.error.unwrap();
    assert!(
        e.contains("shadegate.toml:6:") && e.contains("has no argument `h` (has: v, l, k)"),
        "{e}"
    );
    let r = run("bad-swap-type", &reciprocity("symmetric", r#"["v", "k"]"#));
    assert!(r.error.unwrap().contains("only arguments of one type"));
    let r = run(
        "twin-shape",
        &twin("square", "two_values", "ulp = 1")
            .replace("args = { a = \"alpha\" } }", "args = { x = \"alpha\" } }"),
    );
    let e = r.error.unwrap();
    assert!(
        e.contains("shadegate.toml:6:") && e.contains("a twin must return the same shape"),
        "{e}"
    );
    let r = run("decode-shape", &round_trip("two_values", "abs = 1e-6"));
    let e = r.error.unwrap();
    assert!(
        e.contains("shadegate.toml:6:") && e.contains("round trip gives back every argument"),
        "{e}"
    );
}

#[test]
fn compare_accepts_two_function_names() {
    let (dir, s) = project("compare-fns", &twin("square", "square_fast", "abs = 1e-3"))
        .unwrap_or_else(|d| panic!("{}", d.rendered));
    let lib = dir.join("lib.wgsl");
    let c = &s.checks[0];
    let r = gate::compare_functions(&s, c, (&lib, "square"), (&lib, "square")).unwrap();
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    // square_fast against square: 2a - 1 - a² = -(1 - a)², never within a
    // bit-exact golden tolerance on this sweep.
    let r = gate::compare_functions(&s, c, (&lib, "square"), (&lib, "square_fast")).unwrap();
    assert_eq!(r.verdict, Verdict::Fail, "{r:#?}");
    assert_eq!(r.function, "square → square_fast");
    assert_eq!(r.comparisons[0].stats.failed, 4);
    assert!((r.comparisons[0].stats.max_abs - 0.49).abs() < 1e-6);
}

fn isotropy(function: &str) -> String {
    format!(
        r#"
[[check]]
name = "iso"
shader = "lib.wgsl"
function = "{function}"
property = {{ kind = "isotropy", rotate = ["v", "l"], about = "n", angle = 40 }}
args = {{ n = "vec3(0, 0, 1)" }}
[check.sweep]
v = {{ direction = {{ theta = {{ linear = [0, 80, 5] }}, phi = {{ list = [0, 90] }} }} }}
l = {{ direction = {{ theta = {{ linear = [0, 80, 5] }}, phi = {{ list = [45, 180] }} }} }}
[check.tolerance]
abs = 1e-6
reason = "the rotated directions are rounded to f32"
"#
    )
}

#[test]
fn isotropy_holds_for_dot_products_and_fails_for_a_model_with_a_preferred_axis() {
    // Dot products are invariant under rotation (an identity of Euclidean
    // geometry); v.x l.x is not.
    let r = run("iso-good", &isotropy("isotropic"));
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    assert_eq!(
        r.comparisons[0].against,
        "property isotropy: v, l rotated 40° about n"
    );
    let r = run("iso-bad", &isotropy("anisotropic"));
    assert_eq!(r.verdict, Verdict::Fail, "{r:#?}");
    // Points with v or l along the normal (theta = 0) keep it.
    assert!(r.comparisons[0].stats.failed < 100);
    let r = run(
        "iso-missing",
        &isotropy("isotropic").replace("about = \"n\"", "about = \"normal\""),
    );
    let e = r.error.unwrap();
    assert!(
        e.contains("shadegate.toml:6:") && e.contains("no argument `normal`"),
        "{e}"
    );
}

#[test]
fn a_twin_in_f64_is_the_function_without_rounding() {
    // `square` against itself in the f64 number model: the only difference
    // is the f32 rounding of a * a, at most half an ULP (IEEE 754 round to
    // nearest), and 0.3f32² = 0.0900000071525574... is not an f32, so it
    // shows.
    let suite = twin("square", "square", "ulp = 0.5").replace(
        "twin = { function = \"square\",",
        "twin = { function = \"square\", arithmetic = \"f64\",",
    );
    let r = run("twin-f64", &suite);
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    assert_eq!(r.comparisons[0].against, "twin square in f64");
    assert!(r.comparisons[0].stats.max_abs > 0.0);
    assert!(r.comparisons[0].stats.max_ulp <= 0.5);
}

#[test]
fn a_twin_arithmetic_other_than_exact_or_f64_is_a_located_error() {
    let suite = twin("square", "square", "ulp = 0.5").replace(
        "twin = { function = \"square\",",
        "twin = { function = \"square\", arithmetic = \"f32\",",
    );
    let e = project("twin-arith", &suite).unwrap_err();
    assert!(e.rendered.contains("twin.arithmetic"), "{}", e.rendered);
    assert!(e.rendered.contains("shadegate.toml:6:"), "{}", e.rendered);
}
