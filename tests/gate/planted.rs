//! The planted-mistakes library (shaders/brackenfold-planted/materials.wgsl)
//! must fail its suite, and the report must explain each planted mistake:
//! what moved, where, and the likely cause. The mistakes are the classic ones
//! of the trade (common practice, no single source): a roughness remap
//! skipped or applied twice, a missing clamp at grazing angles, a wrong
//! Schlick exponent, a missing 1/π.

use std::path::Path;

use shadegate::gate::{self, CheckResult, Verdict};

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

fn has(c: &CheckResult, needle: &str) -> bool {
    c.findings.iter().any(|f| f.contains(needle))
}

#[test]
fn every_planted_mistake_fails_and_is_explained() {
    let all = run();

    // 1. d_ggx uses alpha = roughness.
    let c = check(&all, "ggx_distribution");
    assert_eq!(c.verdict, Verdict::Fail);
    assert!(
        has(c, "with `roughness` replaced by `sqrt(roughness)`"),
        "{:#?}",
        c.findings
    );
    assert!(
        has(c, "skip one squaring of `roughness`"),
        "{:#?}",
        c.findings
    );

    // 2. brdf squares the roughness twice (alpha = roughness⁴).
    let c = check(&all, "brdf_full");
    assert_eq!(c.verdict, Verdict::Fail);
    assert!(
        has(c, "with `roughness` replaced by `roughness * roughness`"),
        "{:#?}",
        c.findings
    );
    assert!(has(c, "a remap applied twice"), "{:#?}", c.findings);

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
        has(c, "give NaN or infinity where the expected value is finite"),
        "{:#?}",
        c.findings
    );
    assert!(
        has(c, "all failing points have n_dot_v in [0,"),
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
            "the largest relative errors (top 1 % of failures) have v_dot_h in"
        ),
        "{:#?}",
        c.findings
    );

    // 5. diffuse_lambert forgot 1/π: a constant factor π.
    let c = check(&all, "lambert_diffuse");
    assert_eq!(c.verdict, Verdict::Fail);
    assert!(
        has(c, "times 3.141593 = π (a missing 1/π?)"),
        "{:#?}",
        c.findings
    );

    // The untouched function still passes.
    assert_eq!(check(&all, "burley_diffuse").verdict, Verdict::Pass);
}
