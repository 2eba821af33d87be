//! Golden datasets end to end, through the `shadegate` command in a scratch project:
//! recording and reading back is bit-exact (NaN payloads, signed zeros, subnormals and
//! infinities included), recording is refused under `CI`, a truncated, corrupt or
//! mismatched golden is an error that names the file and the line, and a shader edit that
//! changes no bit is proven to change nothing while one that does is caught.

use std::path::PathBuf;

use super::common::{output_text as text, shadegate_ci as shadegate};

use shadegate::{gate, golden, suite};

/// A function whose results include every kind of special f32 value.
const SHADER: &str = "\
fn specials(x: f32) -> vec3<f32> {
    return vec3<f32>(x, sqrt(x), x * 3.0);
}
";

const SUITE: &str = r#"
[[check]]
name = "specials"
shader = "lib.wgsl"
function = "specials"
golden = true

[check.sweep]
x = { list = [nan, inf, -inf, -0.0, 0.0, 1e-45, 1.1754942e-38, 3.4e38, 0.1, -2.5, 1.0] }
"#;

/// A scratch project folder with the suite and the shader, unique per test.
fn project(test: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!(
        "shadegate-gate-golden-{}-{test}",
        std::process::id()
    ));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join("lib.wgsl"), SHADER).unwrap();
    std::fs::write(dir.join("shadegate.toml"), SUITE).unwrap();
    dir
}

/// Run the `shadegate` command in `dir`. `ci` sets or clears the CI variable (the test
/// command itself runs under CI=true in `.ci/run`).
fn recorded(test: &str) -> (PathBuf, PathBuf) {
    let dir = project(test);
    let o = shadegate(&dir, &["record"], false);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o));
    let g = dir.join("goldens/specials.csv");
    assert!(g.exists(), "record wrote no golden: {}", text(&o));
    (dir, g)
}

#[test]
fn goldens_round_trip_bit_exact() {
    let (dir, g) = recorded("round-trip");
    let back = golden::read(&g).unwrap_or_else(|d| panic!("{d}"));
    // Evaluate again in this process and compare every bit.
    let s = suite::load(&dir.join("shadegate.toml")).unwrap_or_else(|d| panic!("{d}"));
    let ev = gate::evaluate(&s, &s.checks[0], None).unwrap();
    assert_eq!(back.input_columns, ev.input_columns);
    assert_eq!(back.output_columns, ev.output_columns);
    // The special values really are in there.
    let bits: Vec<u32> = back.output_columns.iter().flatten().copied().collect();
    let has = |f: &dyn Fn(f32) -> bool| bits.iter().any(|&b| f(f32::from_bits(b)));
    assert!(has(&|x| x.is_nan()), "no NaN");
    assert!(has(&|x| x == f32::INFINITY) && has(&|x| x == f32::NEG_INFINITY));
    assert!(bits.contains(&(-0.0f32).to_bits()), "no negative zero");
    assert!(has(&|x| x != 0.0 && x.is_subnormal()), "no subnormal");
    // Its header names what it was recorded from.
    assert_eq!(back.header.check, "specials");
    assert_eq!(back.header.function, "specials");
    assert!(back.header.shader.ends_with("lib.wgsl"));
    assert_eq!(back.header.points, 11);
    // Running against it: every point unchanged.
    let o = shadegate(&dir, &["run", "--format", "json"], true);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(
        v["checks"][0]["comparisons"][0]["stats"]["changed"], 0,
        "{v:#}"
    );
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn record_is_refused_under_ci() {
    let dir = project("ci");
    let o = shadegate(&dir, &["record"], true);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(
        String::from_utf8_lossy(&o.stderr).contains("CI"),
        "{}",
        text(&o)
    );
    assert!(
        !dir.join("goldens/specials.csv").exists(),
        "a golden was written under CI"
    );
    assert!(
        !dir.join("goldens").exists()
            || std::fs::read_dir(dir.join("goldens"))
                .unwrap()
                .next()
                .is_none(),
        "something was written under CI"
    );
    std::fs::remove_dir_all(&dir).ok();
}

/// Edit the recorded golden, run, and expect exit 2 with `file:line` of the problem.
#[track_caller]
fn expect_golden_error(test: &str, edit: impl Fn(&str) -> String, line: usize, fragment: &str) {
    let (dir, g) = recorded(test);
    let before = std::fs::read_to_string(&g).unwrap();
    let after = edit(&before);
    assert_ne!(before, after, "test bug: the edit changed nothing");
    std::fs::write(&g, after).unwrap();
    let o = shadegate(&dir, &["run"], true);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    let all = text(&o);
    let at = format!("specials.csv:{line}:");
    assert!(all.contains(&at), "`{at}` not in the error:\n{all}");
    assert!(
        all.contains(fragment),
        "`{fragment}` not in the error:\n{all}"
    );
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn a_truncated_golden_is_an_error_naming_file_and_line() {
    // Drop the last data row and the end marker: what a killed writer would leave.
    expect_golden_error(
        "truncated",
        |t| {
            let mut lines: Vec<&str> = t.lines().collect();
            lines.truncate(lines.len() - 2);
            lines.join("\n") + "\n"
        },
        18,
        "truncated",
    );
}

#[test]
fn a_corrupt_value_is_an_error_naming_file_and_line() {
    // Line 9 is the first data row (8 header lines); break its last value.
    expect_golden_error(
        "corrupt",
        |t| {
            let mut lines: Vec<String> = t.lines().map(str::to_string).collect();
            let row = &mut lines[9];
            let cut = row.rfind(',').unwrap();
            row.truncate(cut + 1);
            row.push_str("1.0x");
            lines.join("\n") + "\n"
        },
        10,
        "1.0x",
    );
}

#[test]
fn a_golden_of_another_function_is_an_error_naming_file_and_line() {
    expect_golden_error(
        "mismatch",
        |t| t.replacen("# function: specials", "# function: other", 1),
        4,
        "other",
    );
}

#[test]
fn a_refactor_that_changes_no_bit_is_proven_to_change_nothing() {
    let (dir, _) = recorded("refactor");
    // x * 3.0 == x * 3.0 written differently; sqrt(x) unchanged. No bit may move.
    let refactored = SHADER.replace("x * 3.0", "3.0 * x");
    std::fs::write(dir.join("lib.wgsl"), refactored).unwrap();
    let o = shadegate(&dir, &["run", "--format", "json"], true);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let check = &v["checks"][0];
    assert_eq!(check["comparisons"][0]["stats"]["changed"], 0, "{check:#}");
    // The edit itself is noticed.
    let findings = check["findings"].to_string();
    assert!(findings.contains("shader changed"), "{findings}");
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn a_refactor_that_moves_one_bit_is_caught() {
    let (dir, _) = recorded("one-bit");
    // x * 3 against x / (1/3): the same in exact arithmetic, not in f32, where 1/3 is
    // rounded first.
    let edited = SHADER.replace("x * 3.0", "x / (1.0 / 3.0)");
    std::fs::write(dir.join("lib.wgsl"), edited).unwrap();
    let o = shadegate(&dir, &["run", "--format", "json"], true);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let stats = &v["checks"][0]["comparisons"][0]["stats"];
    // In f32, 0.1 * 3 = 0.3 but 0.1 / 0.33333334 = 0.29999998 (checked with numpy's
    // float32, an outside implementation of the same IEEE arithmetic).
    let changed = stats["changed"].as_u64().unwrap();
    assert!(changed >= 1, "{stats:#}");
    assert_eq!(o.status.code(), Some(1), "{}", text(&o));
    std::fs::remove_dir_all(&dir).ok();
}
