//! `run --shard K/N` and `merge`: a suite run whole and run as shards merged
//! give the same statistics, worst and first points, issues and exit code;
//! bad shard specs and bad sets of shard reports are errors naming the file.

use std::path::{Path, PathBuf};

use shadegate::gate::{self, shard, RunResult, Verdict};
use shadegate::report::{self, Timings};
use shadegate::suite::{self, Suite};
use shadegate::sweep::Shard;

use super::common::shadegate;

fn load(rel: &str) -> Suite {
    suite::load(&Path::new(env!("CARGO_MANIFEST_DIR")).join(rel)).unwrap_or_else(|d| panic!("{d}"))
}

/// Run `filter` of the suite as `n` shards, write each JSON report, read
/// them back (in reverse order) and merge.
fn merged(s: &Suite, filter: Option<&str>, n: usize) -> RunResult {
    let parts: Vec<shard::Part> = (1..=n)
        .rev()
        .map(|k| {
            let part = shard::sharded(s, Shard { index: k, of: n });
            let run = gate::run(&part, filter, |_, _, _| {});
            let text = report::json_with(&run, Timings::Omit);
            let file = format!("shard{k}.json");
            shard::Part {
                run: shard::read_report(&file, &text).unwrap_or_else(|e| panic!("{e}")),
                file,
            }
        })
        .collect();
    shard::merge(&parts).unwrap_or_else(|e| panic!("{e}"))
}

/// Same numbers, same bits: every comparison's statistics (worst point,
/// first failing and non-finite points, RMS from the exact sum), issues,
/// verdicts and the exit code.
fn assert_same_numbers(whole: &RunResult, merged: &RunResult) {
    assert_eq!(whole.exit_code(), merged.exit_code());
    assert_eq!(whole.checks.len(), merged.checks.len());
    for (a, b) in whole.checks.iter().zip(&merged.checks) {
        assert_eq!(a.name, b.name);
        assert_eq!(a.verdict, b.verdict, "{}", a.name);
        assert_eq!(a.points, b.points, "{}", a.name);
        assert_eq!(a.issues, b.issues, "{}", a.name);
        // An albedo property's table (NaN cells equal through Debug).
        assert_eq!(
            format!("{:?}", a.albedo),
            format!("{:?}", b.albedo),
            "{}",
            a.name
        );
        assert_eq!(a.comparisons.len(), b.comparisons.len(), "{}", a.name);
        for (x, y) in a.comparisons.iter().zip(&b.comparisons) {
            // Through Debug, which prints every f64 exactly (shortest
            // round-trip form) and makes NaN equal to NaN.
            assert_eq!(
                format!("{:?}", x.stats),
                format!("{:?}", y.stats),
                "{} vs {}",
                a.name,
                x.against
            );
            assert_eq!(x.stats.rms_abs.to_bits(), y.stats.rms_abs.to_bits());
        }
    }
}

#[test]
fn the_demo_suite_as_three_shards_merges_into_the_same_report() {
    // Every demo check but the 1M-point one (its shards are the same code
    // path; the debug build makes it slow): goldens, references, a twin and
    // properties. The whole JSON report is the same bytes, findings included.
    let mut s = load("shadegate.toml");
    s.checks.retain(|c| c.name != "brdf_full");
    let whole = gate::run(&s, None, |_, _, _| {});
    assert_eq!(whole.exit_code(), 0);
    let m = merged(&s, None, 3);
    assert_same_numbers(&whole, &m);
    assert_eq!(
        report::json_with(&whole, Timings::Omit),
        report::json_with(&m, Timings::Omit)
    );
    assert_eq!(
        report::text_with(&whole, false, Timings::Omit),
        report::text_with(&m, false, Timings::Omit)
    );
}

#[test]
fn an_albedo_table_survives_the_json_report_and_the_merge() {
    // Quillmere's white-furnace check: its table (view angle x alpha, beside
    // ggx_albedo) is in the JSON report, reads back, and the shards' tables
    // join into the whole run's, cell for cell, for splits that cut its
    // view angles apart.
    let s = load("demos/quillmere/shadegate.toml");
    let filter = Some("cobble_furnace");
    let whole = gate::run(&s, filter, |_, _, _| {});
    let table = whole.checks[0].albedo.as_ref().expect("a table");
    assert!(table.angles.len() > 1 && table.reference.is_some());
    let json = report::json_with(&whole, Timings::Omit);
    assert!(json.contains("\"albedo\": {"), "{json}");
    assert!(json.contains("\"model\": \"ggx_albedo\""), "{json}");
    let back = shard::read_report("whole.json", &json).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(
        format!("{:?}", back.checks[0].albedo),
        format!("{:?}", whole.checks[0].albedo)
    );
    for n in [2, 5] {
        let m = merged(&s, filter, n);
        assert_same_numbers(&whole, &m);
        assert_eq!(
            report::text_with(&whole, false, Timings::Omit),
            report::text_with(&m, false, Timings::Omit)
        );
    }
}

#[test]
fn a_malformed_albedo_table_in_a_report_is_an_error() {
    let s = load("demos/quillmere/shadegate.toml");
    let whole = gate::run(&s, Some("cobble_furnace"), |_, _, _| {});
    let json = report::json_with(&whole, Timings::Omit);
    // Drop the last row's cells: rows no longer match the angles.
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    let mut v = v;
    let rows = v["checks"][0]["albedo"]["albedo"].as_array_mut().unwrap();
    rows.pop();
    let e = shard::read_report("cut.json", &v.to_string()).unwrap_err();
    assert!(
        e.contains("cut.json") && e.contains("cobble_furnace") && e.contains("albedo table"),
        "{e}"
    );
}

#[test]
fn a_failing_suite_as_shards_keeps_its_worst_points_and_exit_code() {
    // The planted mistakes fail: worst points, first failures, counts and
    // exit code 1 survive any split, including more shards than some
    // sweeps have points per shard.
    let s = load("shaders/brackenfold-planted/shadegate.toml");
    let whole = gate::run(&s, None, |_, _, _| {});
    assert_eq!(whole.exit_code(), 1);
    assert!(whole.checks.iter().any(|c| c.verdict == Verdict::Fail));
    for n in [2, 3, 7] {
        assert_same_numbers(&whole, &merged(&s, None, n));
    }
}

fn tmp(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("shadegate-shards-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).expect("temp dir");
    d
}

fn text(o: &std::process::Output) -> String {
    format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    )
}

#[test]
fn the_command_line_shards_and_merges() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let dir = tmp("cli");
    let whole = shadegate(&["run", "ggx", "--format", "json", "--deterministic"], root);
    assert_eq!(whole.status.code(), Some(0), "{}", text(&whole));
    let mut files = Vec::new();
    for k in 1..=3 {
        let f = dir.join(format!("s{k}.json"));
        let o = shadegate(
            &[
                "run",
                "ggx",
                "--format",
                "json",
                "--deterministic",
                "--shard",
                &format!("{k}/3"),
                "--output",
                f.to_str().unwrap(),
            ],
            root,
        );
        assert_eq!(o.status.code(), Some(0), "{}", text(&o));
        files.push(f.to_str().unwrap().to_string());
    }
    let args = |fs: &[&String]| {
        let mut a = vec!["merge", "--format", "json", "--deterministic"];
        a.extend(fs.iter().map(|s| s.as_str()));
        a.into_iter().map(String::from).collect::<Vec<_>>()
    };
    let run = |a: Vec<String>| shadegate(&a.iter().map(String::as_str).collect::<Vec<_>>(), root);
    let m = run(args(&[&files[2], &files[0], &files[1]]));
    assert_eq!(m.status.code(), Some(0), "{}", text(&m));
    assert_eq!(
        String::from_utf8_lossy(&m.stdout),
        String::from_utf8_lossy(&whole.stdout)
    );

    // Missing, duplicate and mismatched shards: exit 2, the file named.
    let o = run(args(&[&files[0], &files[1]]));
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o).contains("shard 3/3 is missing"), "{}", text(&o));
    let o = run(args(&[&files[0], &files[1], &files[1]]));
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o).contains(&format!("{}: shard 2/3 again", files[1])),
        "{}",
        text(&o)
    );
    let half = dir.join("h1.json");
    let o = shadegate(
        &[
            "run",
            "ggx",
            "--format",
            "json",
            "--shard",
            "1/2",
            "--output",
            half.to_str().unwrap(),
        ],
        root,
    );
    assert_eq!(o.status.code(), Some(0), "{}", text(&o));
    let half = half.to_str().unwrap().to_string();
    let o = run(args(&[&files[0], &files[1], &files[2], &half]));
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o).contains(&format!("{half}: shard 1/2, but")),
        "{}",
        text(&o)
    );
    // A whole-run report is not a shard.
    let w = dir.join("whole.json");
    std::fs::write(&w, &whole.stdout).unwrap();
    let w = w.to_str().unwrap().to_string();
    let o = run(args(&[&w]));
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o).contains(&format!("{w}: check `ggx_distribution` has no `shard`")),
        "{}",
        text(&o)
    );
    // Not JSON at all: file, line and column.
    let bad = dir.join("bad.json");
    std::fs::write(&bad, "{\n  \"format\": oops\n}\n").unwrap();
    let bad = bad.to_str().unwrap().to_string();
    let o = run(args(&[&bad]));
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o).contains(&format!("{bad}:2:")), "{}", text(&o));
    // A different check list.
    let other = dir.join("o3.json");
    let o = shadegate(
        &[
            "run",
            "schlick",
            "--format",
            "json",
            "--shard",
            "3/3",
            "--output",
            other.to_str().unwrap(),
        ],
        root,
    );
    assert!(o.status.code() == Some(0), "{}", text(&o));
    let other = other.to_str().unwrap().to_string();
    let o = run(args(&[&files[0], &files[1], &other]));
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o).contains(&format!("{other}: checks ")),
        "{}",
        text(&o)
    );

    // Bad shard specs.
    for (spec, why) in [
        ("0/3", "between 1 and 3"),
        ("4/3", "between 1 and 3"),
        ("x", "no `/`"),
    ] {
        let o = shadegate(&["run", "ggx", "--shard", spec], root);
        assert_eq!(o.status.code(), Some(2), "{spec}");
        assert!(
            text(&o).contains(&format!("shard `{spec}`: ")) && text(&o).contains(why),
            "{}",
            text(&o)
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}
