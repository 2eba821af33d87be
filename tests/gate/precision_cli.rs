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

/// A check made of two files: `precision --check` compiles the function from
/// the check's files (SHADER alone does not compile: it calls `keep` from
/// the other file), and `--twin` finds its rewritten form in the other file.
/// Lines and operations are named in their own files. Before, the command
/// loaded SHADER alone and stopped at `keep`, and the twin was looked up in
/// SHADER only.
#[test]
fn precision_command_takes_the_function_and_its_twin_from_a_checks_files() {
    let dir = std::env::temp_dir().join(format!(
        "shadegate-gate-precision-files-{}",
        std::process::id()
    ));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(
        dir.join("base.wgsl"),
        "fn keep(x: f32) -> f32 {\n    return x;\n}\n\n\
         fn sin2_factored(c: f32) -> f32 {\n    return keep((1.0 - c) * (1.0 + c));\n}\n",
    )
    .unwrap();
    std::fs::write(
        dir.join("lib.wgsl"),
        "fn sin2_naive(c: f32) -> f32 {\n    let s = 1.0 - c * c;\n    return keep(s);\n}\n",
    )
    .unwrap();
    std::fs::write(
        dir.join("shadegate.toml"),
        r#"
[[check]]
name = "sin2"
shader = ["base.wgsl", "lib.wgsl"]
function = "sin2_naive"
reference = "(1 - c) * (1 + c)"
[check.sweep]
c = { linear = [0.99, 0.99999, 50] }
[check.tolerance]
rel = 1e-1
reason = "1 - c*c cancels near c = 1: about 6e-8 / (1 - c^2) relative, 3e-3 at the sweep's end"
"#,
    )
    .unwrap();
    let args = |twin: &'static str| {
        [
            "precision",
            "lib.wgsl",
            "sin2_naive",
            "--check",
            "sin2",
            "--twin",
            twin,
        ]
    };
    let out = shadegate(&args("sin2_factored"), &dir);
    let t = String::from_utf8_lossy(&out.stdout);
    assert_eq!(
        out.status.code(),
        Some(0),
        "{t}{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(
        t.contains("lib.wgsl:2  share  100.0 %  let s = 1.0 - c * c;"),
        "{t}"
    );
    assert!(t.contains("    lib.wgsl:2:13 FSub "), "{t}");
    assert!(
        t.contains("hint (lib.wgsl:2): write 1 - x*x as (1 - x) * (1 + x)"),
        "{t}"
    );
    assert!(t.contains("in the rewritten twin"), "{t}");

    let missing = shadegate(&args("sin2_nowhere"), &dir);
    let e = String::from_utf8_lossy(&missing.stderr);
    assert_eq!(missing.status.code(), Some(2), "{e}");
    assert!(
        e.contains("base.wgsl + lib.wgsl: error: no function named `sin2_nowhere` (functions in these files: keep, sin2_factored, sin2_naive)"),
        "{e}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}
