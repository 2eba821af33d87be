//! The planted-mistakes library (shaders/brackenfold-planted/materials.wgsl)
//! must fail its suite, and the report must explain each planted mistake:
//! what moved, where, and the likely cause. The mistakes are the classic ones
//! of the trade (common practice, no single source): a roughness remap
//! skipped or applied twice, a missing clamp at grazing angles, a wrong
//! Schlick exponent, a missing 1/π, and one per `brdf_*` copy (π as 3.14,
//! the metallic blend inverted, ...), each named by the hypothesis search;
//! a call into a mistaken function is attributed to it; refactors without a
//! mistake show no finding.

use std::path::Path;

use shadegate::gate::{self, CheckResult, Confined, FindingKind, Verdict};

fn run() -> Vec<CheckResult> {
    let suite = shadegate::suite::load(Path::new(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/shaders/brackenfold-planted/shadegate.toml"
    )))
    .unwrap_or_else(|d| panic!("{d}"));
    gate::run(&suite, None, |_, _, _| {}).checks
}

fn check<'a>(all: &'a [CheckResult], name: &str) -> &'a CheckResult {
    all.iter()
        .find(|c| c.name == name)
        .unwrap_or_else(|| panic!("no check {name}"))
}

fn has(c: &CheckResult, want: impl Fn(&FindingKind) -> bool) -> bool {
    c.findings.iter().any(|f| want(&f.kind))
}

#[test]
fn every_planted_mistake_fails_and_is_explained() {
    let all = run();

    // 1. d_ggx uses alpha = roughness.
    let c = check(&all, "ggx_distribution");
    assert_eq!(c.verdict, Verdict::Fail);
    assert!(
        has(
            c,
            |k| matches!(k, FindingKind::BehavesLike { hypothesis, .. } if hypothesis == "remap_none")
        ),
        "{:#?}",
        c.findings
    );
    // The search names it, so the remap probe's finding is not repeated.
    assert!(!has(c, |k| matches!(k, FindingKind::Remap { .. })));

    // 2. brdf squares the roughness twice (alpha = roughness⁴).
    let c = check(&all, "brdf_full");
    assert_eq!(c.verdict, Verdict::Fail);
    assert!(
        has(
            c,
            |k| matches!(k, FindingKind::BehavesLike { hypothesis, .. } if hypothesis == "remap_twice")
        ),
        "{:#?}",
        c.findings
    );

    // 3b. The same mistake found with no reference model at all: the
    // finiteness property over the whole domain, traced to the same division.
    let c = check(&all, "smith_visibility_finite");
    assert_eq!(c.verdict, Verdict::Fail);
    assert_eq!(c.comparisons[0].against, "property result finite");
    let s = &c.comparisons[0].stats;
    assert!(
        s.nonfinite > 0
            && s.first_nonfinite[0]
                .params
                .starts_with("n_dot_v=0, n_dot_l=0")
    );
    assert!(
        has(
            c,
            |k| matches!(k, FindingKind::NonFinite { site: Some(site), .. }
            if site.ends_with("materials.wgsl:51:16"))
        ),
        "{:#?}",
        c.findings
    );
    // The planted mistakes keep reciprocity, isotropy and the Fresnel range.
    for name in ["brdf_reciprocity", "brdf_isotropy", "schlick_in_unit_range"] {
        assert_eq!(check(&all, name).verdict, Verdict::Pass, "{name}");
    }

    // 3. v_smith_correlated lost its clamp: NaN at n·v = 0, traced to the division.
    let c = check(&all, "smith_visibility");
    assert_eq!(c.verdict, Verdict::Fail);
    let s = &c.comparisons[0].stats;
    assert!(s.nonfinite > 0 && !s.first_nonfinite.is_empty());
    assert!(
        s.first_nonfinite[0].params.starts_with("n_dot_v=0,"),
        "{:?}",
        s.first_nonfinite[0]
    );
    assert!(
        has(
            c,
            |k| matches!(k, FindingKind::NonFinite { points, site: Some(site) }
            if *points == s.nonfinite && site.ends_with("materials.wgsl:51:16"))
        ),
        "{:#?}",
        c.findings
    );
    assert!(
        has(
            c,
            |k| matches!(k, FindingKind::Confined { which: Confined::Failures, parameter, lo, .. }
            if parameter == "n_dot_v" && *lo == 0.0)
        ),
        "{:#?}",
        c.findings
    );
    let issue = c
        .issues
        .iter()
        .find(|i| i.kind == "non_finite")
        .expect("a non-finite issue");
    assert!(
        issue.message.contains("first NaN/Inf produced by division"),
        "{issue:?}"
    );
    assert!(
        issue.location.ends_with("materials.wgsl:51:16"),
        "{issue:?}"
    );

    // 4. f_schlick uses exponent 4: wrong almost everywhere; the search names
    // the exponent, so "where the errors are largest" (which only mirrors
    // where the values are) is not reported.
    let c = check(&all, "schlick_fresnel");
    assert_eq!(c.verdict, Verdict::Fail);
    let s = &c.comparisons[0].stats;
    assert!(s.fail_share > 0.9, "{}", s.fail_share);
    assert!(
        has(
            c,
            |k| matches!(k, FindingKind::BehavesLike { hypothesis, .. } if hypothesis == "schlick_exponent_4")
        ),
        "{:#?}",
        c.findings
    );
    assert!(
        !has(c, |k| matches!(
            k,
            FindingKind::Confined {
                which: Confined::LargestErrors,
                ..
            }
        )),
        "{:#?}",
        c.findings
    );
    assert!(
        !has(c, |k| matches!(k, FindingKind::ConstantFactor { .. })),
        "an exponent change is not a constant factor: {:#?}",
        c.findings
    );

    // 5. diffuse_lambert forgot 1/π: a constant factor π, explaining every failure.
    let c = check(&all, "lambert_diffuse");
    assert_eq!(c.verdict, Verdict::Fail);
    assert!(
        c.findings.iter().any(|f| f.explains == Some(1.0)
            && matches!(&f.kind, FindingKind::ConstantFactor { factor, named: Some(n) }
                if (factor - std::f64::consts::PI).abs() < 1e-5 && n.starts_with("π "))),
        "{:#?}",
        c.findings
    );

    // The untouched function still passes.
    assert_eq!(check(&all, "burley_diffuse").verdict, Verdict::Pass);
}

/// Each planted mistake, by check, and the catalogue hypothesis that names it
/// (`diagnose::CATALOGUE`; the mistakes are the common ones of the trade,
/// common practice, no single source).
const NAMED: &[(&str, &str)] = &[
    ("ggx_distribution", "remap_none"),
    ("brdf_full", "remap_twice"),
    ("schlick_fresnel", "schlick_exponent_4"),
    ("lambert_diffuse", "diffuse_inv_pi_missing"),
    ("brdf_teak", "ndf_pi_3_14"),
    ("brdf_steel", "metallic_inverted"),
    ("brdf_ceramic", "dielectric_f0_0_02"),
    ("brdf_cushion", "metal_diffuse_kept"),
    ("brdf_parasol", "fresnel_at_ndv"),
    ("brdf_lantern", "vis_fast"),
    ("brdf_trellis", "specular_half"),
    ("brdf_bench", "ndf_at_ndv"),
];

/// The lines of a check's text report that name its findings.
fn finding_lines(c: &CheckResult) -> Vec<String> {
    c.findings
        .iter()
        .map(shadegate::report::format::finding)
        .collect()
}

#[test]
fn every_planted_mistake_is_named_by_the_hypothesis_search() {
    let all = run();
    let mut wrong = Vec::new();
    for &(name, id) in NAMED {
        let c = check(&all, name);
        if c.verdict != Verdict::Fail {
            wrong.push(format!("{name}: {:?}, not a failure", c.verdict));
            continue;
        }
        // The hypothesis is a full fit (every sampled failing point
        // explained, every passing one kept) …
        let full = c.findings.iter().find(|f| {
            matches!(&f.kind, FindingKind::BehavesLike { hypothesis, explained, kept, .. }
                if hypothesis == id && *explained == 1.0 && *kept == 1.0)
        });
        // … ranked first among the check's findings (or tied with the first).
        match full {
            None => wrong.push(format!(
                "{name}: {id} not a full fit: {:#?}",
                finding_lines(c)
            )),
            Some(f) if f.explains != c.findings[0].explains => wrong.push(format!(
                "{name}: {id} not ranked first: {:#?}",
                finding_lines(c)
            )),
            Some(_) => {}
        }
        // One line of the report names it.
        let words = shadegate::diagnose::hypothesis(id).unwrap().description;
        if !finding_lines(c)
            .iter()
            .any(|l| l.contains("behaves like ") && l.contains(words))
        {
            wrong.push(format!("{name}: no line names {id}"));
        }
    }
    let distinct: std::collections::HashSet<&str> = NAMED.iter().map(|x| x.1).collect();
    assert!(distinct.len() >= 12, "{} distinct mistakes", distinct.len());
    assert!(wrong.is_empty(), "{}", wrong.join("\n"));
}

#[test]
fn a_failing_call_is_attributed_to_the_callee_that_deviates() {
    let all = run();
    // brdf_frame is correct itself but calls f_schlick, whose exponent is
    // planted (4 for 5); the suite binds f_schlick to its reference.
    let c = check(&all, "brdf_frame");
    assert_eq!(c.verdict, Verdict::Fail);
    let schlick = shadegate::diagnose::hypothesis("schlick_exponent_4").unwrap();
    let source = include_str!("../../shaders/brackenfold-planted/materials.wgsl");
    let start = source.find("fn brdf_frame(").unwrap();
    let call = start + source[start..].find("f_schlick(v_dot_h, f0)").unwrap();
    let line = source[..call].lines().count() as u32;
    assert!(
        c.findings.iter().any(|f| matches!(&f.kind,
            FindingKind::CalleeDeviates { callee, check, line: l, deviating_failing, failing_reached, behaves_like: Some(b), .. }
            if callee == "f_schlick" && check == "schlick_fresnel" && *l == line
                && *deviating_failing > 0 && deviating_failing == failing_reached
                && b == schlick.description)),
        "{:#?}",
        finding_lines(c)
    );
}

#[test]
fn refactors_without_a_mistake_show_no_finding() {
    let all = run();
    for name in ["brdf_renamed", "brdf_equivalent", "burley_diffuse"] {
        let c = check(&all, name);
        assert_eq!(c.verdict, Verdict::Pass, "{name}: {:#?}", c.comparisons);
        assert!(c.findings.is_empty(), "{name}: {:#?}", finding_lines(c));
    }
}
