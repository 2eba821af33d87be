//! Compact goldens (`.golden`) end to end through the `shadegate` command: a check
//! chooses the format with `golden_format = "compact"` or a `.golden` path, `record`
//! writes the golden and its readable summary (refused under `CI`, only inside the
//! suite's folder, never over another file), a run compares against it with 0 changed
//! bits, a changed argument expression is caught by the inputs' hash, a corrupt block is
//! an error naming the file and the block, a golden above `golden_size` warns, and the
//! suite keys are located errors when malformed.

use std::path::{Path, PathBuf};
use std::process::Output;

use super::common::{output_text as text, shadegate_ci as shadegate};

use shadegate::{gate, golden, suite};

/// Results with NaN payloads, signed zeros and infinities, over 5,000 points (two
/// blocks of 4,096 points, the second partial).
const SHADER: &str = "\
fn specials(x: f32, k: i32) -> vec3<f32> {
    return vec3<f32>(x, sqrt(x - 0.5), x * f32(k));
}
";

fn suite_text(golden: &str, extra: &str) -> String {
    format!(
        "{extra}[[check]]\nname = \"specials\"\nshader = \"lib.wgsl\"\nfunction = \"specials\"\n{golden}\nargs = {{ x = \"x\", k = \"k\" }}\n\n[check.sweep]\nx = {{ linear = [-1.0, 1.0, 1000] }}\nk = {{ list = [-2, -1, 0, 1, 2] }}\n"
    )
}

fn project(test: &str, suite: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!(
        "shadegate-gate-compact-{}-{test}",
        std::process::id()
    ));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join("lib.wgsl"), SHADER).unwrap();
    std::fs::write(dir.join("shadegate.toml"), suite).unwrap();
    dir
}

fn recorded(test: &str, suite: &str) -> (PathBuf, Output) {
    let dir = project(test, suite);
    let o = shadegate(&dir, &["record"], false);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o));
    (dir, o)
}

fn changed_bits(dir: &Path) -> (Option<i32>, serde_json::Value) {
    let o = shadegate(dir, &["run", "--format", "json"], true);
    let v: serde_json::Value =
        serde_json::from_slice(&o.stdout).unwrap_or_else(|e| panic!("{e}: {}", text(&o)));
    (
        o.status.code(),
        v["checks"][0]["comparisons"][0]["stats"]["changed"].clone(),
    )
}

#[test]
fn a_compact_golden_records_reads_back_bit_exact_and_compares_unchanged() {
    let (dir, _) = recorded(
        "round-trip",
        &suite_text("golden = true\ngolden_format = \"compact\"", ""),
    );
    let g = dir.join("goldens/specials.golden");
    let s = suite::load(&dir.join("shadegate.toml")).unwrap_or_else(|d| panic!("{d}"));
    let ev = gate::evaluate(&s, &s.checks[0], None).unwrap();
    let r = golden::open(&g, &s.limits).unwrap_or_else(|d| panic!("{d}"));
    assert_eq!(r.format(), golden::Format::Compact);
    assert_eq!(r.len(), 5000);
    assert_eq!(r.read_outputs(0..5000).unwrap(), ev.output_columns);
    assert_eq!(r.check_inputs(0..5000, &ev.input_columns).unwrap(), 0);
    // NaN (sqrt of a negative), -0 (x = -0 * k) and infinities are all in there.
    let bits: Vec<u32> = ev.output_columns.iter().flatten().copied().collect();
    assert!(bits.iter().any(|&b| f32::from_bits(b).is_nan()));
    assert!(bits.contains(&(-0.0f32).to_bits()));
    // The same check recorded as CSV reads back to the same outputs.
    let csv_dir = recorded("round-trip-csv", &suite_text("golden = true", "")).0;
    let c = golden::open(&csv_dir.join("goldens/specials.csv"), &s.limits).unwrap();
    assert_eq!(c.format(), golden::Format::Csv);
    assert_eq!(
        c.read_outputs(1000..4500).unwrap(),
        r.read_outputs(1000..4500).unwrap()
    );
    // A run against it: every bit unchanged.
    let (code, changed) = changed_bits(&dir);
    assert_eq!(code, Some(0));
    assert_eq!(changed, 0);
    std::fs::remove_dir_all(&dir).ok();
    std::fs::remove_dir_all(&csv_dir).ok();
}

#[test]
fn record_writes_a_readable_summary_beside_the_compact_golden() {
    let (dir, o) = recorded("summary", &suite_text("golden = \"data/s.golden\"", ""));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("summary -> "), "{err}");
    let t = std::fs::read_to_string(dir.join("data/s.golden.txt")).unwrap();
    let lines: Vec<&str> = t.lines().collect();
    assert_eq!(lines[0], golden::summary::MAGIC);
    assert_eq!(lines[1], "# check: specials");
    assert_eq!(lines[6], "# points: 5000");
    // Column x * k over x in [-1, 1], k in [-2, 2]: min -2, max 2, exactly; the
    // sqrt column has NaN below x = 0.5 (no finite value is counted there).
    assert!(t.contains("result.z:f32,-2.0,2.0,0,0\n"), "{t}");
    let sqrt_row = lines
        .iter()
        .find(|l| l.starts_with("result.y:f32,"))
        .unwrap();
    // x_i = -1 + 2i/999 is below 0.5 for i = 0..=749 (x_749 = 0.4995, x_750 = 0.5015):
    // 750 values of x, times 5 values of k, give NaN.
    assert!(sqrt_row.ends_with(",3750"), "{sqrt_row}");
    assert!(
        t.contains("sample: 17 rows, every 312th point and the last"),
        "{t}"
    );
    assert!(
        t.contains("\n4999,1.0,2,1.0,0.70710677,2.0\n"),
        "the last point's row: {t}"
    );
    // Re-recording replaces both; nothing else appears.
    let o = shadegate(&dir, &["record"], false);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o));
    let mut names: Vec<String> = std::fs::read_dir(dir.join("data"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(names, ["s.golden", "s.golden.txt"]);
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn record_of_a_compact_golden_is_refused_under_ci_and_outside_the_project() {
    let dir = project(
        "ci",
        &suite_text("golden = true\ngolden_format = \"compact\"", ""),
    );
    let o = shadegate(&dir, &["record"], true);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(
        String::from_utf8_lossy(&o.stderr).contains("CI"),
        "{}",
        text(&o)
    );
    assert!(
        !dir.join("goldens").exists(),
        "something was written under CI"
    );
    // Outside the suite's folder: refused by the suite parser, at the key's line.
    let dir = project(
        "outside",
        &suite_text("golden = \"../escaped-compact/x.golden\"", ""),
    );
    let o = shadegate(&dir, &["record"], false);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(
        String::from_utf8_lossy(&o.stderr).contains("shadegate.toml:5:"),
        "{}",
        text(&o)
    );
    assert!(!dir.join("../escaped-compact").exists());
    // A file where the summary goes that is not this check's summary is never
    // replaced, and then the golden is not written either.
    let dir = project("foreign", &suite_text("golden = \"s.golden\"", ""));
    std::fs::write(dir.join("s.golden.txt"), "my notes\n").unwrap();
    let o = shadegate(&dir, &["record"], false);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(
        err.contains("s.golden.txt") && err.contains("not the golden of check `specials`"),
        "{err}"
    );
    assert_eq!(
        std::fs::read_to_string(dir.join("s.golden.txt")).unwrap(),
        "my notes\n"
    );
    assert!(!dir.join("s.golden").exists());
    // A CSV golden of the same check is not a compact golden of it.
    let dir = project("format-swap", &suite_text("golden = \"s.golden\"", ""));
    std::fs::write(
        dir.join("s.golden"),
        "# shadegate golden dataset, format 1\n# check: specials\n",
    )
    .unwrap();
    let o = shadegate(&dir, &["record"], false);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
}

#[test]
fn a_changed_argument_expression_is_caught_by_the_inputs_hash() {
    let suite = suite_text("golden = true\ngolden_format = \"compact\"", "");
    let (dir, _) = recorded("inputs", &suite);
    // Same sweep (the header's sweep line matches), other bits for x.
    std::fs::write(
        dir.join("shadegate.toml"),
        suite.replace("x = \"x\"", "x = \"x * 1.0000001\""),
    )
    .unwrap();
    let o = shadegate(&dir, &["run"], true);
    let all = text(&o);
    assert_eq!(o.status.code(), Some(2), "{all}");
    assert!(all.contains("specials.golden:10:"), "{all}");
    assert!(all.contains("block 0 of 2 (points 0..4096"), "{all}");
    assert!(all.contains("inputs differ"), "{all}");
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn a_corrupt_or_truncated_compact_golden_is_an_error_naming_file_and_block() {
    let (dir, _) = recorded(
        "corrupt",
        &suite_text("golden = true\ngolden_format = \"compact\"", ""),
    );
    let g = dir.join("goldens/specials.golden");
    let good = std::fs::read(&g).unwrap();
    // The last byte is inside block 1's zlib stream (its Adler-32).
    let mut bad = good.clone();
    *bad.last_mut().unwrap() ^= 0xff;
    std::fs::write(&g, &bad).unwrap();
    let o = shadegate(&dir, &["run"], true);
    let all = text(&o);
    assert_eq!(o.status.code(), Some(2), "{all}");
    assert!(all.contains("specials.golden:10:"), "{all}");
    assert!(all.contains("block 1 of 2 (points 4096..5000"), "{all}");
    assert!(all.contains("corrupt"), "{all}");
    std::fs::write(&g, &good[..good.len() - 100]).unwrap();
    let o = shadegate(&dir, &["run"], true);
    let all = text(&o);
    assert_eq!(o.status.code(), Some(2), "{all}");
    assert!(
        all.contains("specials.golden:10:") && all.contains("truncated"),
        "{all}"
    );
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn a_golden_above_golden_size_warns_naming_check_size_limit_and_the_cures() {
    let (dir, o) = recorded(
        "warn-csv",
        &suite_text("golden = true", "[limits]\ngolden_size = 1000\n\n"),
    );
    let err = String::from_utf8_lossy(&o.stderr);
    let size = std::fs::metadata(dir.join("goldens/specials.csv"))
        .unwrap()
        .len();
    assert!(err.contains("warning: check `specials`"), "{err}");
    assert!(err.contains(&format!("is {size} bytes")), "{err}");
    assert!(err.contains("`golden_size` limit of 1000 bytes"), "{err}");
    assert!(err.contains("golden_size = N"), "{err}");
    assert!(
        err.contains("golden = \"goldens/specials.golden\""),
        "{err}"
    );
    // Under the limit: no warning.
    let (_, o) = recorded("quiet", &suite_text("golden = true", ""));
    assert!(
        !String::from_utf8_lossy(&o.stderr).contains("warning"),
        "{}",
        text(&o)
    );
    // A compact golden over the limit warns too, without suggesting itself.
    let (_, o) = recorded(
        "warn-compact",
        &suite_text("golden = \"s.golden\"", "[limits]\ngolden_size = 10\n\n"),
    );
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("warning: check `specials`") && !err.contains("compact format"),
        "{err}"
    );
    std::fs::remove_dir_all(&dir).ok();
}

#[track_caller]
fn refused(text: &str, line: u32, words: &[&str]) {
    let d = suite::parse(Path::new("s.toml"), text).unwrap_err();
    for w in words {
        assert!(d.message.contains(w), "`{w}` missing in: {}", d.rendered);
    }
    assert_eq!(d.line, line, "{}", d.rendered);
}

#[test]
fn golden_format_keys_are_checked_at_their_line() {
    let ok = |golden: &str| {
        let s = suite::parse(Path::new("s.toml"), &suite_text(golden, ""))
            .unwrap_or_else(|d| panic!("{d}"));
        s.checks[0].golden.clone().unwrap()
    };
    assert_eq!(ok("golden = true"), Path::new("goldens/specials.csv"));
    assert_eq!(
        ok("golden = true\ngolden_format = \"csv\""),
        Path::new("goldens/specials.csv")
    );
    assert_eq!(
        ok("golden = true\ngolden_format = \"compact\""),
        Path::new("goldens/specials.golden")
    );
    assert_eq!(ok("golden = \"a/b.golden\""), Path::new("a/b.golden"));
    assert_eq!(
        ok("golden = \"a/b.golden\"\ngolden_format = \"compact\""),
        Path::new("a/b.golden")
    );
    refused(
        &suite_text("golden = true\ngolden_format = \"zip\"", ""),
        6,
        &["unknown format `zip`", "`compact`"],
    );
    refused(
        &suite_text("golden_format = \"compact\"", ""),
        5,
        &["records no golden"],
    );
    refused(
        &suite_text("golden = false\ngolden_format = \"compact\"", ""),
        6,
        &["records no golden"],
    );
    refused(
        &suite_text("golden = \"b.csv\"\ngolden_format = \"compact\"", ""),
        6,
        &["disagrees with the path `b.csv`"],
    );
    refused(
        &suite_text("golden = \"b.txt\"", ""),
        5,
        &["`.csv` or `.golden`"],
    );
    refused(
        &suite_text("golden = true\ngolden_format = 3", ""),
        6,
        &["expected a string"],
    );
    refused(
        &suite_text("golden = true", "[limits]\ngolden_size = 0\n\n"),
        2,
        &["positive"],
    );
}
