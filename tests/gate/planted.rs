//! The planted-mistakes library (shaders/brackenfold-planted/materials.wgsl)
//! must fail its suite, and the report must explain each planted mistake:
//! what moved, where, and the likely cause. The mistakes are the classic ones
//! of the trade (common practice, no single source): a roughness remap
//! skipped or applied twice, a missing clamp at grazing angles, a wrong
//! Schlick exponent, a missing 1/π.

use std::path::Path;

use shadegate::gate::{self, CheckResult, Confined, FindingKind, Remap, Verdict};

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
            |k| matches!(k, FindingKind::Remap { parameter, replaced_by, meaning: Remap::SquaringSkipped, .. }
            if parameter == "roughness" && replaced_by == "sqrt(roughness)")
        ),
        "{:#?}",
        c.findings
    );

    // 2. brdf squares the roughness twice (alpha = roughness⁴).
    let c = check(&all, "brdf_full");
    assert_eq!(c.verdict, Verdict::Fail);
    assert!(
        has(
            c,
            |k| matches!(k, FindingKind::Remap { parameter, replaced_by, meaning: Remap::SquaredTwice, .. }
            if parameter == "roughness" && replaced_by == "roughness * roughness")
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

    // 4. f_schlick uses exponent 4: wrong almost everywhere, worst at mid angles.
    let c = check(&all, "schlick_fresnel");
    assert_eq!(c.verdict, Verdict::Fail);
    let s = &c.comparisons[0].stats;
    assert!(s.fail_share > 0.9, "{}", s.fail_share);
    assert!(
        has(
            c,
            |k| matches!(k, FindingKind::Confined { which: Confined::LargestErrors, parameter, .. }
            if parameter == "v_dot_h")
        ),
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
