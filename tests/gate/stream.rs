//! The streamed check (`gate::stream`): a check runs in segments whose
//! statistics merge into those of one pass over every point, and its
//! explanation works from a bounded set of evidence points. With the
//! `evidence_points` limit below a check's point count, the explainers see
//! a sample; the statistics must not change and the planted mistake must
//! still be named.

use std::path::Path;

use shadegate::gate::{self, FindingKind, Verdict};
use shadegate::limits::Limit;
use shadegate::suite;

fn planted() -> suite::Suite {
    suite::load(Path::new(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/shaders/brackenfold-planted/shadegate.toml"
    )))
    .unwrap_or_else(|d| panic!("{d}"))
}

fn hypotheses(c: &gate::CheckResult) -> Vec<String> {
    c.findings
        .iter()
        .filter_map(|f| match &f.kind {
            FindingKind::BehavesLike { hypothesis, .. } => Some(hypothesis.clone()),
            _ => None,
        })
        .collect()
}

#[test]
fn a_sampled_explanation_keeps_the_statistics_and_names_the_mistake() {
    // d_ggx with alpha = roughness: 12,240 points, explained from 1,000
    // (500 evenly spread, 500 of the failing ones). The demo snapshot
    // (`demo.rs`) covers merging many segments: its 1M-point `brdf_full`
    // runs in 64 and its report is unchanged.
    let whole = planted();
    let check = whole
        .checks
        .iter()
        .find(|c| c.name == "ggx_distribution")
        .expect("the planted suite has ggx_distribution");
    let all = gate::run_check(&whole, check);
    let mut small = whole.clone();
    small.limits.set(Limit::EvidencePoints, 1_000).unwrap();
    let sampled = gate::run_check(&small, check);
    assert_eq!(all.verdict, Verdict::Fail);
    assert_eq!(sampled.verdict, Verdict::Fail);
    // Pass 1 never depends on the evidence.
    assert_eq!(all.comparisons, sampled.comparisons);
    assert_eq!(all.issues, sampled.issues);
    assert!(
        hypotheses(&all).contains(&"remap_none".to_string()),
        "{:#?}",
        all.findings
    );
    assert!(
        hypotheses(&sampled).contains(&"remap_none".to_string()),
        "{:#?}",
        sampled.findings
    );
}

#[test]
fn the_evidence_limit_is_a_suite_limit() {
    let dir = std::env::temp_dir().join(format!("shadegate-stream-limit-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join("lib.wgsl"), "fn f(x: f32) -> f32 { return x; }\n").unwrap();
    let text = "[limits]\nevidence_points = 0\n\n[[check]]\nname = \"f\"\nshader = \"lib.wgsl\"\nfunction = \"f\"\nproperty = { kind = \"finite\" }\n[check.sweep]\nx = { list = [1.0] }\n[check.tolerance]\nabs = 0\nreason = \"identity\"\n";
    std::fs::write(dir.join("shadegate.toml"), text).unwrap();
    let e = suite::load(&dir.join("shadegate.toml")).unwrap_err();
    assert!(
        e.rendered.contains("evidence_points") && e.rendered.contains(":2:"),
        "{}",
        e.rendered
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn points_at_equals_the_points_of_their_ranges() {
    // Grid and random points: a gathered point has the values it has in
    // the whole sweep.
    let s = planted();
    let check = &s.checks[0];
    let n = check.sweep.len();
    let all = check.sweep.points_in(0..n);
    let ix = [0, 1, 2, 255, 256, 10_239, 10_240, 10_241, n - 1];
    let some = check.sweep.points_at(&ix);
    assert_eq!(some.len, ix.len());
    for (k, &i) in ix.iter().enumerate() {
        assert_eq!(some.describe(k), all.describe(i), "point {i}");
        for p in 0..all.names.len() {
            for (a, b) in some.columns[p].iter().zip(&all.columns[p]) {
                assert_eq!(a[k].to_bits(), b[i].to_bits(), "point {i}");
            }
        }
    }
}

/// `compare` runs as a stream too: over 10,001 points (three segments) the
/// new version changes exactly the points above 0.75, x = i / 10000 for
/// i = 7501..=10000 (2,500 of them; 0.75 itself is exact in f32 and stays),
/// each by half its value. The merged statistics count them all, the first
/// failures listed are the first in sweep order, and the same file on both
/// sides changes nothing.
#[test]
fn compare_streams_its_segments_into_one_comparison() {
    let lib = "fn ramp(x: f32) -> f32 { return x; }\n\
               fn ramp_new(x: f32) -> f32 { if (x > 0.75) { return x * 1.5; } return x; }\n";
    let suite_text = r#"
[[check]]
name = "ramp"
shader = "lib.wgsl"
function = "ramp"
golden = true
[check.sweep]
x = { linear = [0.0, 1.0, 10001] }
"#;
    let (dir, s) = crate::common::project("stream", "compare", lib, suite_text)
        .unwrap_or_else(|d| panic!("{}", d.rendered));
    let file = dir.join("lib.wgsl");
    let c = &s.checks[0];
    assert!(c.sweep.len() > 2 * gate::stream::SEGMENT);
    let r = gate::compare_functions(&s, c, (&file, "ramp"), (&file, "ramp_new")).unwrap();
    assert_eq!(r.verdict, Verdict::Fail);
    let st = &r.comparisons[0].stats;
    assert_eq!(
        (st.points, st.failed, st.changed),
        (10001, 2500, Some(2500))
    );
    // x * 1.5 rounds to f32 once: (1.5 x (1 + e) - x) / x = 0.5 + 1.5 e with
    // |e| <= 2^-24.
    assert!(
        (st.max_rel - 0.5).abs() <= 1.5 * 2f64.powi(-24),
        "{}",
        st.max_rel
    );
    let first: Vec<usize> = st.first_failures.iter().map(|p| p.index).collect();
    assert_eq!(first, vec![7501, 7502, 7503, 7504, 7505]);

    let same = gate::compare_functions(&s, c, (&file, "ramp"), (&file, "ramp")).unwrap();
    assert_eq!(same.verdict, Verdict::Pass);
    assert_eq!(same.comparisons[0].stats.changed, Some(0));
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_reference_shares_only_the_functions_argument_columns_of_the_same_expression() {
    // `brdf_full` gives the function and the reference the same `n` and
    // `base_color` expressions: the reference reads the function's columns
    // of them, and gets the bits it computes alone. With another
    // `base_color` for the reference, it must compute its own.
    let (s, check) = crate::common::demo_check("brdf_full");
    let prepared = gate::stream::Prepared::new(&s, &check, None).unwrap_or_else(|e| panic!("{e}"));
    let ev = prepared
        .evaluate_keeping_args(gate::points_of(&check))
        .unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(ev.arg_columns.len(), 2, "n and base_color are computed");
    let whole = gate::evaluate(&s, &check, None).unwrap_or_else(|e| panic!("{e}"));
    assert!(
        whole.arg_columns.is_empty(),
        "a whole evaluation keeps none"
    );
    let model = check.reference.expect("a reference model");
    let bits = |c: Vec<Vec<f64>>| -> Vec<Vec<u64>> {
        c.iter()
            .map(|c| c.iter().map(|x| x.to_bits()).collect())
            .collect()
    };
    let alone = gate::reference_columns(&check, model, &ev.points, &check.reference_args);
    let shared = gate::reference_columns_sharing(
        &check,
        model,
        &ev.points,
        &check.reference_args,
        &ev.arg_columns,
    );
    let alone = bits(alone.unwrap_or_else(|e| panic!("{e}")));
    assert_eq!(bits(shared.unwrap_or_else(|e| panic!("{e}"))), alone);

    let mut other = check.reference_args.clone();
    other.insert(
        "base_color".into(),
        shadegate::sweep::Expr::parse("vec3(albedo * 0.5, albedo, albedo)").unwrap(),
    );
    let alone_other = gate::reference_columns(&check, model, &ev.points, &other);
    let shared_other =
        gate::reference_columns_sharing(&check, model, &ev.points, &other, &ev.arg_columns);
    let alone_other = bits(alone_other.unwrap_or_else(|e| panic!("{e}")));
    assert_eq!(
        bits(shared_other.unwrap_or_else(|e| panic!("{e}"))),
        alone_other
    );
    assert_ne!(
        alone_other, alone,
        "the other base_color changes the reference"
    );
}
