//! `shadegate precision` and `run --precision` end to end: the cancelling
//! line of a naive f16 distribution named with its bits and inputs, the
//! overflow a clamp hides in the cross-product form, and the attribution in
//! the text and JSON reports of a run. The numbers are analysed by hand in
//! tests/eval/precision.rs.

use std::path::Path;

use super::common::shadegate;

const ROOT: &str = env!("CARGO_MANIFEST_DIR");

fn stdout(args: &[&str]) -> String {
    let out = shadegate(args, Path::new(ROOT));
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).unwrap()
}

/// n = (sin 0.7, 0, cos 0.7), h = n (theta = 0), alpha as given.
fn point(alpha: f64) -> String {
    let (s, c) = 0.7f64.sin_cos();
    format!("n={s};0;{c},h={s};0;{c},alpha={alpha}")
}

#[test]
fn precision_command_names_the_cancelling_line() {
    let t = stdout(&[
        "precision",
        "tests/data/precision/hand.wgsl",
        "ggx_textbook_f16",
        "--point",
        &point(0.01),
        "--twin",
        "ggx_cross_f16",
    ]);
    assert!(t.contains("line   12"), "{t}");
    assert!(t.contains("12:14 FSub f16"), "{t}");
    assert!(t.contains("cancels up to 9.0 bits at n.x="), "{t}");
    assert!(t.contains("hint (line 12)"), "{t}");
    assert!(t.contains("in the rewritten twin"), "{t}");
}

#[test]
fn precision_command_reports_the_hidden_overflow_as_json() {
    let j = stdout(&[
        "precision",
        "tests/data/precision/hand.wgsl",
        "ggx_cross_f16",
        "--point",
        &point(0.002),
        "--format",
        "json",
    ]);
    let v: serde_json::Value = serde_json::from_str(&j).unwrap();
    let ov = v["lines"]
        .as_array()
        .unwrap()
        .iter()
        .flat_map(|l| l["ops"].as_array().unwrap())
        .find_map(|o| o["overflow"].as_object())
        .expect("an overflow");
    assert_eq!(ov["count"], 1);
    assert_eq!(ov["hidden"], 1);
    assert_eq!(ov["hidden_by"], serde_json::json!([24, "FMin"]));
}

#[test]
fn run_with_precision_adds_the_attribution_to_text_and_json() {
    let t = stdout(&["run", "ggx_distribution", "--precision", "--deterministic"]);
    assert!(t.contains("precision: final error max"), "{t}");
    assert!(t.contains("lines by share of the error"), "{t}");
    let j = stdout(&[
        "run",
        "ggx_distribution",
        "--precision",
        "--deterministic",
        "--format",
        "json",
    ]);
    let v: serde_json::Value = serde_json::from_str(&j).unwrap();
    let p = &v["checks"][0]["precision"];
    assert_eq!(p["function"], "d_ggx");
    assert!(!p["lines"].as_array().unwrap().is_empty());
    assert!(p["share_margin"].as_f64().is_some());
    // Without the flag the report is unchanged: no precision key.
    let j = stdout(&[
        "run",
        "ggx_distribution",
        "--deterministic",
        "--format",
        "json",
    ]);
    let v: serde_json::Value = serde_json::from_str(&j).unwrap();
    assert!(v["checks"][0].get("precision").is_none());
}

/// Standard output of a run expected to exit with `code`.
fn stdout_with(args: &[&str], code: i32) -> String {
    let out = shadegate(args, Path::new(ROOT));
    assert_eq!(
        out.status.code(),
        Some(code),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).unwrap()
}

const F16_SUITE: &str = "tests/data/precision/f16.toml";

#[test]
fn precision_command_gives_the_f16_budget_against_the_twin() {
    // The check ggx_peak_port: ggx_peak_f16 against its f32 twin under rel
    // 1e-2 over roughness 0.02..0.3; the 27 failing points are derived
    // independently (binary16 rounding by the `half` crate) in
    // tests/eval/precision.rs, f16_port_budget_names_the_failing_roughness_and_its_line.
    let args = [
        "precision",
        "tests/data/precision/hand.wgsl",
        "ggx_peak_f16",
        "--check",
        "ggx_peak_port",
        "--suite",
        F16_SUITE,
    ];
    let t = stdout(&args);
    assert!(
        t.contains(
            "f16 budget against twin ggx_peak_f32 (tolerance rel 1e-2): 27 of 281 points miss it"
        ),
        "{t}"
    );
    assert!(t.contains("misses at roughness=0.0200042724609375"), "{t}");
    assert!(t.contains("line 72 accounts for"), "{t}");
    assert!(t.contains("exact Shapley values over all 6 orders"), "{t}");
    let mut json = args.to_vec();
    json.extend(["--format", "json"]);
    let v: serde_json::Value = serde_json::from_str(&stdout(&json)).unwrap();
    let b = &v["budget"];
    assert_eq!(b["failing"], 27);
    assert_eq!(b["max_use"], "inf");
    assert_eq!(b["misses"][0]["line"], 72);
    assert_eq!(b["misses"][0]["got"], "inf");
    assert_eq!(v["share_points"], 281);
}

#[test]
fn run_with_precision_gives_the_f16_budget() {
    // The check fails (27 points overflow), so the run exits with 1.
    let t = stdout_with(
        &[
            "run",
            "--suite",
            F16_SUITE,
            "--precision",
            "--deterministic",
        ],
        1,
    );
    assert!(t.contains("f16 budget against twin ggx_peak_f32"), "{t}");
    assert!(t.contains("inf× the tolerance, mostly line 72"), "{t}");
    let j = stdout_with(
        &[
            "run",
            "--suite",
            F16_SUITE,
            "--precision",
            "--deterministic",
            "--format",
            "json",
        ],
        1,
    );
    let v: serde_json::Value = serde_json::from_str(&j).unwrap();
    let b = &v["checks"][0]["precision"]["budget"];
    assert_eq!(b["failing"], 27);
    assert_eq!(b["lines"].as_array().unwrap().len(), 3);
}
