//! The report formats, on run results built by hand: a passing check (one stale
//! tolerance, one golden that nothing changed), a failing one with every detail filled
//! in and markup characters in its texts, and one that could not run. JSON and JUnit
//! are parsed back; the terminal report and the ledger are read as text.

use shadegate::compare::{NanPolicy, PointReport, Stats, Tolerance};
use shadegate::gate::{
    CheckResult, Comparison, Confined, Finding, FindingKind, IssueGroup, RunResult, Verdict,
};
use shadegate::report;

const FAILING_NAME: &str = "fresnel <grazing> & \"edge\"";
const BROKEN_ERROR: &str =
    "shaders/patio/finish.wgsl:7:3: error: expected `;`, found \"<\" & more\n   7 | let x = a < b";

fn point(
    index: usize,
    params: &str,
    got: Vec<f64>,
    want: Vec<f64>,
    abs: f64,
    rel: f64,
    ulp: f64,
) -> PointReport {
    PointReport {
        index,
        params: params.into(),
        got,
        want,
        component: 0,
        abs,
        rel,
        ulp,
        near_zero: false,
    }
}

fn passing() -> CheckResult {
    let stale = Stats {
        points: 12_000,
        max_abs: 1.2e-7,
        max_rel: 3.0e-7,
        max_ulp: 2.5,
        rms_abs: 4.0e-8,
        worst_badness: 0.004,
        headroom: 250.0,
        stale_tolerance: true,
        worst: Some(point(
            17,
            "roughness=0.5, cos_theta=0.25",
            vec![0.5],
            vec![0.50000012],
            1.2e-7,
            2.4e-7,
            2.0,
        )),
        ..Stats::default()
    };
    let golden = Stats {
        points: 12_000,
        headroom: f64::INFINITY,
        changed: Some(0),
        ..Stats::default()
    };
    CheckResult {
        name: "ggx_lobe".into(),
        shader: "shaders/patio/finish.wgsl".into(),
        function: "d_ggx".into(),
        points: 12_000,
        verdict: Verdict::Pass,
        error: None,
        comparisons: vec![
            Comparison {
                against: "reference ggx".into(),
                tolerance: Tolerance {
                    ulp: Some(vec![1000.0]),
                    reason: "a generous first guess".into(),
                    ..Tolerance::default()
                },
                stats: stale,
            },
            Comparison {
                against: "golden goldens/ggx_lobe.csv".into(),
                tolerance: Tolerance::exact("a refactor must not change a bit"),
                stats: golden,
            },
        ],
        issues: vec![],
        findings: vec![],
        precision: None,
        seconds: 0.041,
        shard: None,
        albedo: None,
    }
}

fn failing() -> CheckResult {
    let stats = Stats {
        points: 2_000,
        skipped: 0,
        failed: 1_800,
        fail_share: 0.9,
        max_abs: 0.0123,
        max_rel: 0.034,
        max_ulp: 1.2e5,
        rms_abs: 3.1e-3,
        worst_badness: f64::INFINITY,
        headroom: 0.0,
        stale_tolerance: false,
        worst: Some(point(
            1_999,
            "cos_theta=1, f0=0.04",
            vec![f64::NAN],
            vec![0.04],
            f64::INFINITY,
            f64::INFINITY,
            f64::INFINITY,
        )),
        first_failures: vec![
            point(
                3,
                "cos_theta=0.0015, f0=0.04",
                vec![0.9375],
                vec![0.9912],
                0.0537,
                0.0542,
                9.0e5,
            ),
            point(
                4,
                "cos_theta=0.002, f0=0.04",
                vec![0.93],
                vec![0.9883],
                0.0583,
                0.059,
                9.8e5,
            ),
        ],
        nonfinite: 3,
        first_nonfinite: vec![point(
            1_999,
            "cos_theta=1, f0=0.04",
            vec![f64::NAN],
            vec![0.04],
            f64::INFINITY,
            f64::INFINITY,
            f64::INFINITY,
        )],
        changed: None,
        ..Stats::default()
    };
    CheckResult {
        name: FAILING_NAME.into(),
        shader: "shaders/patio/finish.wgsl".into(),
        function: "f_schlick".into(),
        points: 2_000,
        verdict: Verdict::Fail,
        error: None,
        comparisons: vec![Comparison {
            against: "reference fresnel_schlick".into(),
            tolerance: Tolerance {
                abs: Some(vec![1e-6]),
                rel: Some(vec![1e-5]),
                nan: NanPolicy::Match,
                reason: "pow in f32 | one rounding per step <2 ULP> & \"more\"".into(),
                ..Tolerance::default()
            },
            stats,
        }],
        issues: vec![IssueGroup {
            kind: "non_finite".into(),
            message: "result is not finite although every input is; first NaN/Inf produced by pow"
                .into(),
            location: "shaders/patio/finish.wgsl:42:17".into(),
            count: 3,
            example: "cos_theta=1, f0=0.04 (function inputs: 1, 0.04)".into(),
        }],
        findings: vec![
            Finding {
                against: "reference fresnel_schlick".into(),
                explains: Some(0.0016),
                kind: FindingKind::NonFinite {
                    points: 3,
                    site: Some("shaders/patio/finish.wgsl:42:17".into()),
                },
            },
            Finding {
                against: "reference fresnel_schlick".into(),
                explains: Some(1.0),
                kind: FindingKind::Confined {
                    which: Confined::Failures,
                    parameter: "cos_theta \u{1b}[bell]".into(),
                    lo: 0.0,
                    hi: 0.1,
                    swept_lo: 0.0,
                    swept_hi: 1.0,
                },
            },
        ],
        precision: None,
        seconds: 0.012,
        shard: None,
        albedo: None,
    }
}

fn broken() -> CheckResult {
    CheckResult {
        name: "lambert_broken".into(),
        shader: "shaders/patio/finish.wgsl".into(),
        function: "diffuse_lambert".into(),
        points: 0,
        verdict: Verdict::Error,
        error: Some(BROKEN_ERROR.into()),
        comparisons: vec![],
        issues: vec![],
        findings: vec![],
        precision: None,
        seconds: 0.001,
        shard: None,
        albedo: None,
    }
}

fn run() -> RunResult {
    RunResult {
        suite: "suites/patio & garden.toml".into(),
        checks: vec![passing(), failing(), broken()],
    }
}

// ---------------------------------------------------------------- JSON

#[test]
fn json_parses_back_with_the_expected_fields() {
    let v: serde_json::Value = serde_json::from_str(&report::json(&run())).expect("valid JSON");
    assert_eq!(v["format"], "shadegate-run");
    assert_eq!(v["version"], 1);
    assert_eq!(v["suite"], "suites/patio & garden.toml");
    let sum = &v["summary"];
    assert_eq!(
        (sum["checks"].as_u64(), sum["passed"].as_u64()),
        (Some(3), Some(1))
    );
    assert_eq!(
        (sum["failed"].as_u64(), sum["errors"].as_u64()),
        (Some(1), Some(1))
    );
    assert_eq!(sum["exit_code"], 2);
    assert_eq!(sum["points"], 14_000);

    let checks = v["checks"].as_array().unwrap();
    let verdicts: Vec<&str> = checks
        .iter()
        .map(|c| c["verdict"].as_str().unwrap())
        .collect();
    assert_eq!(verdicts, ["pass", "fail", "error"]);

    let pass = &checks[0]["comparisons"];
    assert_eq!(pass[0]["stats"]["stale_tolerance"], true);
    assert_eq!(pass[0]["stats"]["headroom"], 250.0);
    assert_eq!(pass[0]["tolerance"]["ulp"][0], 1000.0);
    assert_eq!(
        pass[1]["stats"]["headroom"], "inf",
        "nothing moved: unbounded headroom"
    );
    assert_eq!(pass[1]["stats"]["changed"], 0);
    assert!(pass[1]["stats"]["worst"].is_null(), "null means absent");

    let fail = &checks[1];
    assert_eq!(fail["name"], FAILING_NAME);
    let s = &fail["comparisons"][0]["stats"];
    assert_eq!(s["failed"], 1_800);
    assert_eq!(s["nonfinite"], 3);
    assert_eq!(s["max_ulp"], 1.2e5);
    assert_eq!(s["worst"]["params"], "cos_theta=1, f0=0.04");
    assert_eq!(s["worst"]["got"][0], "NaN");
    assert_eq!(s["worst"]["want"][0], 0.04);
    assert_eq!(s["worst"]["abs"], "inf");
    assert_eq!(s["first_failures"].as_array().unwrap().len(), 2);
    assert_eq!(s["first_failures"][1]["index"], 4);
    assert_eq!(s["first_nonfinite"][0]["index"], 1_999);
    let t = &fail["comparisons"][0]["tolerance"];
    assert_eq!(t["describe"], "abs 1e-6 or rel 1e-5");
    assert_eq!(t["nan"], "match");
    assert!(t["ulp"].is_null());
    assert_eq!(
        fail["issues"][0]["location"],
        "shaders/patio/finish.wgsl:42:17"
    );
    assert_eq!(fail["issues"][0]["count"], 3);
    assert_eq!(fail["findings"].as_array().unwrap().len(), 2);
    assert_eq!(fail["findings"][0]["kind"], "non_finite");
    assert_eq!(fail["findings"][0]["points"], 3);
    assert_eq!(fail["findings"][1]["kind"], "confined");
    assert_eq!(fail["findings"][1]["which"], "failures");

    assert_eq!(checks[2]["error"], BROKEN_ERROR);
    assert!(checks[0]["error"].is_null());
}

/// `report` must hold every field of `derived` (the result types' own serialisation)
/// with the same value, except that a non-finite number, `null` there, is a string here.
#[track_caller]
fn covers(derived: &serde_json::Value, report: &serde_json::Value, path: &str) {
    use serde_json::Value;
    match (derived, report) {
        (Value::Object(d), Value::Object(r)) => {
            for (k, dv) in d {
                let rv = r
                    .get(k)
                    .unwrap_or_else(|| panic!("the JSON report lacks {path}.{k}"));
                covers(dv, rv, &format!("{path}.{k}"));
            }
        }
        (Value::Array(d), Value::Array(r)) => {
            assert_eq!(d.len(), r.len(), "length of {path}");
            for (i, (dv, rv)) in d.iter().zip(r).enumerate() {
                covers(dv, rv, &format!("{path}[{i}]"));
            }
        }
        (Value::Null, Value::String(s)) => {
            assert!(
                ["NaN", "inf", "-inf"].contains(&s.as_str()),
                "{path}: null became {s:?}"
            );
        }
        (d, r) => assert_eq!(d, r, "{path}"),
    }
}

#[test]
fn json_carries_every_field_of_the_result_types() {
    let run = run();
    // Both through text, so both read their numbers back the same way.
    let derived: serde_json::Value =
        serde_json::from_str(&serde_json::to_string(&run).unwrap()).unwrap();
    let ours: serde_json::Value = serde_json::from_str(&report::json(&run)).unwrap();
    covers(&derived, &ours, "run");
}

#[test]
fn json_keeps_nan_and_infinities_apart() {
    let mut r = run();
    r.checks[1].comparisons[0].stats.first_failures[0].got =
        vec![f64::INFINITY, f64::NEG_INFINITY, f64::NAN, -0.0];
    let v: serde_json::Value = serde_json::from_str(&report::json(&r)).unwrap();
    let got = &v["checks"][1]["comparisons"][0]["stats"]["first_failures"][0]["got"];
    assert_eq!(got[0], "inf");
    assert_eq!(got[1], "-inf");
    assert_eq!(got[2], "NaN");
    assert!(
        got[3].as_f64().unwrap().is_sign_negative(),
        "-0 stays a number with its sign"
    );
}

// ---------------------------------------------------------------- JUnit

#[test]
fn junit_parses_with_the_right_counts_and_attributes() {
    let xml = report::junit(&run());
    let doc = roxmltree::Document::parse(&xml).unwrap_or_else(|e| panic!("{e}\n{xml}"));
    let root = doc.root_element();
    assert_eq!(root.tag_name().name(), "testsuites");
    for (k, want) in [("tests", "3"), ("failures", "1"), ("errors", "1")] {
        assert_eq!(root.attribute(k), Some(want), "testsuites {k}");
    }
    let suites: Vec<_> = root
        .children()
        .filter(|n| n.has_tag_name("testsuite"))
        .collect();
    assert_eq!(suites.len(), 1);
    let suite = suites[0];
    assert_eq!(suite.attribute("name"), Some("suites/patio & garden.toml"));
    for (k, want) in [
        ("tests", "3"),
        ("failures", "1"),
        ("errors", "1"),
        ("time", "0.054"),
    ] {
        assert_eq!(suite.attribute(k), Some(want), "testsuite {k}");
    }

    let cases: Vec<_> = suite
        .children()
        .filter(|n| n.has_tag_name("testcase"))
        .collect();
    let names: Vec<_> = cases.iter().map(|c| c.attribute("name").unwrap()).collect();
    assert_eq!(
        names,
        ["ggx_lobe", FAILING_NAME, "lambert_broken"],
        "names survive escaping"
    );
    assert_eq!(cases[0].attribute("classname"), Some("shadegate.d_ggx"));
    assert_eq!(
        cases[0].attribute("file"),
        Some("shaders/patio/finish.wgsl")
    );
    assert_eq!(cases[0].attribute("time"), Some("0.041"));

    let child = |i: usize, tag: &str| cases[i].children().find(|n| n.has_tag_name(tag));
    assert!(child(0, "failure").is_none() && child(0, "error").is_none());
    let out = child(0, "system-out")
        .expect("passing check summary")
        .text()
        .unwrap();
    assert!(out.contains("stale tolerance"), "{out}");

    let failure = child(1, "failure").expect("failure element");
    let message = failure.attribute("message").unwrap();
    assert!(
        message.contains("against reference fresnel_schlick: 1,800 of 2,000 points fail (90 %)"),
        "{message}"
    );
    assert!(message.contains("3 non-finite"), "{message}");
    assert!(message.contains("(cos_theta=1, f0=0.04)"), "{message}");
    let body = failure.text().unwrap();
    assert!(
        body.contains("reason: pow in f32 | one rounding per step <2 ULP> & \"more\""),
        "{body}"
    );
    assert!(body.contains("#3 cos_theta=0.0015, f0=0.04"), "{body}");
    assert!(
        body.contains("\u{FFFD}[bell]"),
        "a control character is replaced, not dropped: {body}"
    );
    assert!(child(1, "error").is_none());

    let error = child(2, "error").expect("error element");
    assert_eq!(
        error.attribute("message"),
        Some("shaders/patio/finish.wgsl:7:3: error: expected `;`, found \"<\" & more")
    );
    assert!(error.text().unwrap().contains("7 | let x = a < b"));
}

#[test]
fn junit_attributes_keep_line_breaks_and_tabs() {
    let mut r = run();
    r.checks[2].name = "two\nlines\tand a tab".into();
    let xml = report::junit(&r);
    let doc = roxmltree::Document::parse(&xml).unwrap();
    let names: Vec<_> = doc
        .descendants()
        .filter(|n| n.has_tag_name("testcase"))
        .map(|n| n.attribute("name").unwrap().to_string())
        .collect();
    assert_eq!(names[2], "two\nlines\tand a tab");
}

#[test]
fn junit_of_an_all_passing_run_has_no_failures() {
    let r = RunResult {
        suite: "s.toml".into(),
        checks: vec![passing()],
    };
    let xml = report::junit(&r);
    let doc = roxmltree::Document::parse(&xml).unwrap();
    let root = doc.root_element();
    assert_eq!(
        (
            root.attribute("tests"),
            root.attribute("failures"),
            root.attribute("errors")
        ),
        (Some("1"), Some("0"), Some("0"))
    );
    assert!(!doc
        .descendants()
        .any(|n| n.has_tag_name("failure") || n.has_tag_name("error")));
}

// ---------------------------------------------------------------- text

fn strip_ansi(s: &str) -> String {
    let mut out = String::new();
    let mut chars = s.chars();
    while let Some(c) = chars.next() {
        if c == '\x1b' {
            assert_eq!(chars.next(), Some('['), "only CSI sequences");
            for c in chars.by_ref() {
                if c.is_ascii_alphabetic() {
                    break;
                }
            }
        } else {
            out.push(c);
        }
    }
    out
}

#[track_caller]
fn has(text: &str, needle: &str) {
    assert!(text.contains(needle), "missing {needle:?} in\n{text}");
}

#[test]
fn text_states_the_key_facts() {
    let t = report::text(&run(), false);
    // One status line per check: verdict, name, function, points, time.
    let status: Vec<&str> = t
        .lines()
        .filter(|l| ["PASS", "FAIL", "ERROR"].iter().any(|v| l.starts_with(v)))
        .collect();
    assert_eq!(status.len(), 3, "{t}");
    for (line, facts) in status.iter().zip([
        ["PASS", "ggx_lobe", "d_ggx", "12,000 points", "41 ms"],
        ["FAIL", FAILING_NAME, "f_schlick", "2,000 points", "12 ms"],
        [
            "ERROR",
            "lambert_broken",
            "diffuse_lambert",
            "0 points",
            "1 ms",
        ],
    ]) {
        for f in facts {
            has(line, f);
        }
    }
    // Passing: one short line per comparison, and the stale warning.
    has(
        &t,
        "reference ggx: max abs 1.2e-7 · max rel 3e-7 · max 2.5 ULP · headroom 250×",
    );
    has(&t, "golden goldens/ggx_lobe.csv: max abs 0 · max rel 0 · max 0 ULP · headroom ∞ · 0 points changed bits");
    has(
        &t,
        "warning: stale tolerance: it is 250× looser than the worst error measured",
    );
    assert!(
        !t.contains("a generous first guess"),
        "passing checks stay short"
    );
    // Failing: tolerance and reason, statistics, worst and first points, non-finite, issues, findings.
    has(
        &t,
        "reference fresnel_schlick, tolerance abs 1e-6 or rel 1e-5",
    );
    has(
        &t,
        "reason: pow in f32 | one rounding per step <2 ULP> & \"more\"",
    );
    has(&t, "1,800 of 2,000 points fail (90 %) · headroom 0×");
    has(
        &t,
        "max abs 0.0123 · max rel 0.034 · max 1.2e5 ULP · rms abs 0.0031",
    );
    has(
        &t,
        "worst point #1999 cos_theta=1, f0=0.04: got NaN want 0.04",
    );
    has(&t, "first failing points, in sweep order:");
    has(
        &t,
        "#3 cos_theta=0.0015, f0=0.04: got 0.9375 want 0.9912 · abs 0.0537 · rel 0.0542 · 9e5 ULP",
    );
    has(&t, "#4 cos_theta=0.002, f0=0.04");
    has(
        &t,
        "3 points give NaN or infinity where the expected value is finite:",
    );
    has(&t, "3× non_finite at shaders/patio/finish.wgsl:42:17: result is not finite although every input is");
    has(
        &t,
        "first at cos_theta=1, f0=0.04 (function inputs: 1, 0.04)",
    );
    has(&t, "- against the reference fresnel_schlick: all failing points have cos_theta \u{FFFD}[bell] in [0, 0.1]");
    // Erroring: the whole message, every line.
    has(
        &t,
        "could not run: shaders/patio/finish.wgsl:7:3: error: expected `;`",
    );
    has(&t, "7 | let x = a < b");
    // Summary.
    let last = t.lines().last().unwrap();
    has(last, "1 passed · 1 failed · 1 could not run");
    has(last, "14,000 points");
}

#[test]
fn text_is_coloured_only_when_asked() {
    let plain = report::text(&run(), false);
    let coloured = report::text(&run(), true);
    assert!(!plain.contains('\x1b'), "{plain}");
    // The ESC inside the fixture's finding is data: shown, never sent to the terminal.
    has(&plain, "cos_theta \u{FFFD}[bell] in [0, 0.1]");
    assert!(coloured.contains("\x1b[31;1mFAIL"), "{coloured}");
    assert!(coloured.contains("\x1b[32;1mPASS"), "{coloured}");
    assert!(coloured.contains("\x1b[35;1mERROR"), "{coloured}");
    assert_eq!(
        strip_ansi(&coloured),
        plain,
        "colour adds nothing but escapes"
    );
}

#[test]
fn passing_run_text_is_one_line_per_comparison() {
    let mut c = passing();
    c.comparisons[0].stats.stale_tolerance = false;
    c.comparisons[0].stats.headroom = 4.0;
    let t = report::text(
        &RunResult {
            suite: "s.toml".into(),
            checks: vec![c],
        },
        false,
    );
    let body: Vec<&str> = t.lines().filter(|l| l.starts_with("       ")).collect();
    assert_eq!(body.len(), 2, "{t}");
    assert!(!t.contains("warning"), "{t}");
    has(
        t.lines().last().unwrap(),
        "1 passed · 0 failed · 0 could not run",
    );
}

// ---------------------------------------------------------------- ledger

/// Unescaped `|` in a Markdown table row.
fn separators(row: &str) -> usize {
    let mut n = 0;
    let mut after_backslash = false;
    for c in row.chars() {
        if c == '|' && !after_backslash {
            n += 1;
        }
        after_backslash = c == '\\' && !after_backslash;
    }
    n
}

#[test]
fn ledger_has_one_row_per_comparison() {
    let l = report::ledger(&run());
    let rows: Vec<&str> = l.lines().filter(|r| r.starts_with('|')).collect();
    // Header, separator, 2 + 1 comparisons, 1 row for the check that could not run.
    assert_eq!(rows.len(), 2 + 3 + 1, "{l}");
    has(
        rows[0],
        "| Check | Function | Compared against | Tolerance | Reason |",
    );
    let columns = separators(rows[0]);
    assert_eq!(columns, 11);
    for r in &rows {
        assert_eq!(separators(r), columns, "row keeps its columns: {r}");
    }
    let body = &rows[2..];
    has(
        body[0],
        "| `ggx_lobe` | `d_ggx` in `shaders/patio/finish.wgsl` | reference ggx | ulp 1e3 |",
    );
    has(body[0], "| 1.2e-7 | 3e-7 | 2.5 | 250× | pass, **stale** |");
    has(
        body[1],
        "| ulp 0 (bit-exact) | a refactor must not change a bit | 0 | 0 | 0 | ∞ | pass |",
    );
    has(body[2], "| `fresnel <grazing> & \"edge\"` | `f_schlick` in");
    has(
        body[2],
        "pow in f32 \\| one rounding per step \\<2 ULP\\> \\& \"more\"",
    );
    has(body[2], "| **fail** (1,800 of 2,000 points) |");
    has(body[3], "| `lambert_broken` |");
    has(
        body[3],
        "could not run: shaders/patio/finish.wgsl:7:3: error: expected \\`;\\`",
    );
    has(body[3], "| error |");
    // The note on stale tolerances.
    has(&l, "**Stale tolerances** (1)");
    has(&l, "- `ggx_lobe` against reference ggx: tolerance ulp 1e3");
}

#[test]
fn ledger_says_when_nothing_is_stale() {
    let mut c = passing();
    c.comparisons[0].stats.stale_tolerance = false;
    let l = report::ledger(&RunResult {
        suite: "s.toml".into(),
        checks: vec![c],
    });
    has(&l, "No stale tolerances");
    assert!(
        !l.lines().any(|r| r.starts_with('|') && r.contains("stale")),
        "{l}"
    );
}
