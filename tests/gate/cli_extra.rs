//! The command's smaller promises, one test each: `ledger` exits 1 on a failing check,
//! a broken pipe is not an error, sweep parameters no argument uses are warned about,
//! `list` shows the tolerance each comparison applies, reports without timings are
//! byte-identical across runs, values given on the command line are read strictly and
//! exactly, and per-point data (`eval --judge`, `run --failing-points`).

use std::path::PathBuf;
use std::process::{Command, Output, Stdio};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn shadegate(args: &[&str]) -> Output {
    crate::common::shadegate(args, &root())
}

fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("shadegate-extra-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

const PLANTED: &str = "shaders/brackenfold-planted/shadegate.toml";

#[test]
fn ledger_exits_1_when_a_check_fails() {
    let o = shadegate(&["ledger", "--suite", PLANTED]);
    assert_eq!(o.status.code(), Some(1), "{}", text(&o.stderr));
    assert!(text(&o.stdout).contains("# Tolerance ledger"));
}

#[test]
fn a_closed_pipe_is_not_an_error() {
    // Like `shadegate models | head -0`: the reader is gone before anything is written.
    let mut child = Command::new(env!("CARGO_BIN_EXE_shadegate"))
        .args(["list", "--suite", PLANTED])
        .current_dir(root())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    drop(child.stdout.take());
    let o = child.wait_with_output().unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    assert_eq!(text(&o.stderr), "");
}

#[test]
fn unused_sweep_parameters_are_warned_about() {
    let dir = scratch("unused");
    std::fs::copy(
        root().join("shaders/brackenfold/materials.wgsl"),
        dir.join("m.wgsl"),
    )
    .unwrap();
    std::fs::write(
        dir.join("s.toml"),
        r#"
[[check]]
name = "ggx"
shader = "m.wgsl"
function = "d_ggx"
reference = "ggx_ndf"
reference_args = { alpha = "roughness * roughness" }

[check.sweep]
n_dot_h = { linear = [0.1, 1.0, 5] }
roughness = { list = [0.5] }
spare = { linear = [0.0, 1.0, 7] }

[check.tolerance]
rel = 2e-6
reason = "a few f32 operations"
"#,
    )
    .unwrap();
    let o = shadegate(&["run", "--suite", dir.join("s.toml").to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stdout));
    let err = text(&o.stderr);
    assert!(
        err.contains("s.toml:3: check `ggx`: sweep parameter `spare` is used by no argument"),
        "{err}"
    );
    assert!(err.contains("its 7 values"), "{err}");
    assert!(
        !err.contains("`roughness`") && !err.contains("`n_dot_h`"),
        "{err}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn list_shows_the_tolerance_each_comparison_applies() {
    let o = shadegate(&["list"]);
    let out = text(&o.stdout);
    let golden = out.lines().find(|l| l.starts_with("brdf_golden ")).unwrap();
    // A golden-only check: the golden's tolerance, not the (unused) reference one.
    assert!(
        golden.contains(
            "against golden goldens/brdf_golden.csv within ulp 0 (a golden is a bit-exact record"
        ),
        "{golden}"
    );
    assert!(!golden.contains("reference"), "{golden}");
    let ggx = out
        .lines()
        .find(|l| l.starts_with("ggx_distribution "))
        .unwrap();
    assert!(ggx.contains("reference ggx_ndf within rel 2e-6"), "{ggx}");
    assert!(
        ggx.contains("and golden goldens/ggx_distribution.csv within ulp 0"),
        "{ggx}"
    );
}

#[test]
fn reports_without_timings_are_identical_across_runs() {
    for format in ["text", "json", "junit"] {
        let a = shadegate(&[
            "run",
            "--suite",
            PLANTED,
            "lambert",
            "--deterministic",
            "--format",
            format,
        ]);
        let b = shadegate(&[
            "run",
            "--suite",
            PLANTED,
            "lambert",
            "--deterministic",
            "--format",
            format,
        ]);
        assert_eq!(a.status.code(), Some(1));
        assert_eq!(a.stdout, b.stdout, "{format} differs between two runs");
        let out = text(&a.stdout);
        assert!(
            !out.contains(" ms") && !out.contains("seconds") && !out.contains("time="),
            "{format}: {out}"
        );
    }
    // With timings (the default off CI) they are there.
    let t = shadegate(&["run", "--suite", PLANTED, "lambert", "--format", "junit"]);
    assert!(text(&t.stdout).contains("time=\""));
    // CI alone turns timings off.
    let ci = Command::new(env!("CARGO_BIN_EXE_shadegate"))
        .args(["run", "--suite", PLANTED, "lambert", "--format", "json"])
        .current_dir(root())
        .env("CI", "true")
        .output()
        .unwrap();
    assert!(!text(&ci.stdout).contains("seconds"));
}

fn eval_point(point: &str, extra: &[&str]) -> Output {
    let mut args = vec![
        "eval",
        "tests/gate/data/values.wgsl",
        "pick",
        "--point",
        point,
    ];
    args.extend_from_slice(extra);
    shadegate(&args)
}

#[test]
fn integers_on_the_command_line_are_strict_and_located() {
    for (point, says) in [
        (
            "i=2147483648,u=0,x=0",
            "--point 1: `i`: `2147483648` is out of range for i32",
        ),
        (
            "i=1.5,u=0,x=0",
            "--point 1: `i`: `1.5` is not an integer (it has a fraction)",
        ),
        (
            "i=0,u=-1,x=0",
            "--point 1: `u`: `-1` is out of range for u32",
        ),
        ("i=0,u=0,x=one", "--point 1: `x`: `one` is not a number"),
    ] {
        let o = eval_point(point, &[]);
        assert_eq!(o.status.code(), Some(2), "{point}");
        assert!(
            text(&o.stderr).contains(says),
            "{point}: {}",
            text(&o.stderr)
        );
    }
    let o = eval_point("i=-2147483648,u=4294967295,x=0", &[]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    assert!(
        text(&o.stdout).contains("-2147483648,4294967295,"),
        "{}",
        text(&o.stdout)
    );
}

#[test]
fn decimals_are_rounded_to_f32_once() {
    // 1 + 2^-24 + 1e-20: through f64 it lands on the half-way point 1 + 2^-24 and
    // ties-to-even gives 1.0; rounded once it is 1 + 2^-23 (0x3f800001).
    let o = eval_point("i=0,u=0,x=1.00000005960464477539062500001", &["--bits"]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let out = text(&o.stdout);
    assert!(
        out.lines().nth(1).unwrap().starts_with("0,0,0x3f800001,"),
        "{out}"
    );
}

#[test]
fn values_go_in_and_come_out_as_bit_patterns() {
    // -0.0 given as bits reaches the function as -0.0 (pick returns x unchanged).
    let o = eval_point("i=0,u=0,x=0x80000000", &["--bits"]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let out = text(&o.stdout);
    assert_eq!(out.lines().next().unwrap(), "i,u,x,result");
    assert_eq!(out.lines().nth(1).unwrap(), "0,0,0x80000000,0x80000000");
    let o = eval_point("i=0,u=0,x=0x3f800000", &[]);
    assert_eq!(text(&o.stdout).lines().nth(1).unwrap(), "0,0,1.0,1.0");
}

#[test]
fn eval_judge_adds_expected_error_and_pass_columns() {
    let o = shadegate(&[
        "eval",
        "shaders/brackenfold-planted/materials.wgsl",
        "diffuse_lambert",
        "--check",
        "lambert_diffuse",
        "--suite",
        PLANTED,
        "--judge",
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let out = text(&o.stdout);
    let mut r = csv::Reader::from_reader(out.as_bytes());
    let h = r.headers().unwrap().clone();
    for col in [
        "reference.result.x",
        "reference.ulp_error",
        "reference.badness",
        "reference.pass",
    ] {
        assert!(h.iter().any(|c| c == col), "no column {col}: {h:?}");
    }
    let pass = h.iter().position(|c| c == "reference.pass").unwrap();
    let (got, want) = (
        h.iter().position(|c| c == "result.x").unwrap(),
        h.iter().position(|c| c == "reference.result.x").unwrap(),
    );
    let mut fails = 0;
    let mut rows = 0;
    for rec in r.records() {
        let rec = rec.unwrap();
        rows += 1;
        fails += usize::from(&rec[pass] == "false");
        // The planted Lambert term forgets 1/π: where it is nonzero the ratio is π.
        let (g, w): (f64, f64) = (rec[got].parse().unwrap(), rec[want].parse().unwrap());
        if w > 1e-3 {
            assert!((g / w - std::f64::consts::PI).abs() < 1e-5, "{g} / {w}");
        }
    }
    // The run says how many fail; the columns must agree with it.
    let run = shadegate(&["run", "--suite", PLANTED, "lambert", "--format", "json"]);
    let v: serde_json::Value = serde_json::from_slice(&run.stdout).unwrap();
    let failed = v["checks"][0]["comparisons"][0]["stats"]["failed"]
        .as_u64()
        .unwrap();
    assert_eq!(fails as u64, failed);
    assert_eq!(rows, 1089);
}

#[test]
fn failing_points_go_to_csv_one_row_per_failing_point() {
    let dir = scratch("failing");
    let o = shadegate(&[
        "run",
        "--suite",
        PLANTED,
        "smith",
        "--failing-points",
        dir.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(1));
    let csv_text = std::fs::read_to_string(dir.join("smith_visibility.reference.csv")).unwrap();
    let mut r = csv::Reader::from_reader(csv_text.as_bytes());
    let h = r.headers().unwrap().clone();
    assert_eq!(&h[0], "point");
    assert!(h.iter().any(|c| c == "got.result") && h.iter().any(|c| c == "want.result"));
    let rows = r.records().count();
    let run = shadegate(&["run", "--suite", PLANTED, "smith", "--format", "json"]);
    let v: serde_json::Value = serde_json::from_slice(&run.stdout).unwrap();
    assert_eq!(
        rows as u64,
        v["checks"][0]["comparisons"][0]["stats"]["failed"]
            .as_u64()
            .unwrap()
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn one_point_is_singular_and_the_component_label_cannot_be_a_parameter() {
    let dir = scratch("one");
    std::fs::copy(
        root().join("shaders/brackenfold-planted/materials.wgsl"),
        dir.join("m.wgsl"),
    )
    .unwrap();
    // A parameter called x, a vec3 result, one point, and a failure (1/π forgotten).
    std::fs::write(
        dir.join("s.toml"),
        r#"
[[check]]
name = "one"
shader = "m.wgsl"
function = "diffuse_lambert"
reference = "lambert_diffuse_rgb"
args = { diffuse_color = "vec3(x, x, x)" }
reference_args = { albedo = "vec3(x, x, x)" }

[check.sweep]
x = { list = [0.5] }

[check.tolerance]
ulp = 2
reason = "two roundings"
"#,
    )
    .unwrap();
    let o = shadegate(&[
        "run",
        "--suite",
        dir.join("s.toml").to_str().unwrap(),
        "--deterministic",
    ]);
    assert_eq!(o.status.code(), Some(1));
    let out = text(&o.stdout);
    assert!(out.contains("· 1 point\n"), "{out}");
    assert!(out.contains("1 of 1 point fail"), "{out}");
    assert!(out.contains("(1 point)"), "{out}");
    assert!(!out.contains("1 points"), "{out}");
    assert!(out.contains("· in result.x ·"), "{out}");
    assert!(!out.contains("· in x ·"), "{out}");
    let _ = std::fs::remove_dir_all(&dir);
}
