//! Exhaustive domains: `every_f16` / `every_f32` list every value of the format in a
//! range, counted as the IEEE 754 binary16/binary32 formats say, and a check over them
//! sees each value exactly once.

use shadegate::gate::{self, Verdict};
use shadegate::suite::Suite;

const LIB: &str = r#"
enable f16;
fn through_f16(x: f32) -> f32 { return f32(f16(x)); }
fn square(x: f32) -> f32 { return x * x; }
"#;

fn suite_with(test: &str, sweep: &str, function: &str, reference: &str) -> Result<Suite, String> {
    let text = format!(
        r#"
[[check]]
name = "e"
shader = "lib.wgsl"
function = "{function}"
reference = "{reference}"
[check.sweep]
{sweep}
[check.tolerance]
ulp = 0
reason = "exact for these inputs"
"#
    );
    super::common::project("every", test, LIB, &text)
        .map(|(_, s)| s)
        .map_err(|d| d.rendered)
}

#[test]
fn every_f16_value_survives_a_round_trip_through_f16() {
    // Every binary16 value in [0, 1] (zero, 1,023 subnormals, 14 binades of 1,024
    // normals and 1.0, by the binary16 layout of IEEE 754-2019 §3.4) converts to f16
    // and back unchanged: it is already an f16 value.
    let s = suite_with("trip", "x = { every_f16 = [0, 1] }", "through_f16", "x").unwrap();
    let r = gate::run_check(&s, &s.checks[0]);
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    assert_eq!(r.points, 1 + 1023 + 14 * 1024 + 1);
    assert_eq!(r.comparisons[0].stats.failed, 0);
    // The same check over a linear grid of 1,001 points is not exhaustive and fails:
    // most of its points are no f16 value.
    let s = suite_with("grid", "x = { linear = [0, 1, 1001] }", "through_f16", "x").unwrap();
    let r = gate::run_check(&s, &s.checks[0]);
    assert_eq!(r.verdict, Verdict::Fail, "{r:#?}");
}

#[test]
fn every_f32_value_of_a_narrow_range_is_squared_exactly_where_the_product_fits() {
    // Every binary32 value in [1, 1 + 2^-12]: 2^11 + 1 values. Their squares need up
    // to 48 significant bits, so f32 rounds most of them: against the exact square
    // (reference expression x ^ 2, evaluated in f64, exact for a 24-bit x) a check of
    // 0 ULP fails on a share of the points, and every point is distinct.
    let s = suite_with(
        "sq",
        "x = { every_f32 = [1, 1.000244140625] }",
        "square",
        "x ^ 2",
    )
    .unwrap();
    let r = gate::run_check(&s, &s.checks[0]);
    assert_eq!(r.points, (1 << 11) + 1);
    assert_eq!(r.verdict, Verdict::Fail, "{r:#?}");
    let stats = &r.comparisons[0].stats;
    assert!(stats.failed > 0 && stats.failed < r.points, "{stats:#?}");
}

#[test]
fn malformed_exhaustive_domains_are_located_errors() {
    for (sweep, message) in [
        (
            "x = { every_f16 = [0.1, 0.1] }",
            "no f16 value lies in [0.1, 0.1]",
        ),
        ("x = { every_f16 = [1, 0] }", "needs low <= high"),
        ("x = { every_f32 = [0, 1] }", "values, more than"),
        ("x = { every_f32 = [0, inf] }", "finite bounds"),
        ("x = { every_f16 = [0] }", "every_f16 = [low, high]"),
    ] {
        let e = suite_with("bad", sweep, "square", "x ^ 2").unwrap_err();
        assert!(e.contains(message), "{sweep}: {e}");
        assert!(e.contains("shadegate.toml:8:"), "{sweep}: {e}");
    }
}
