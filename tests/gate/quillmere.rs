//! The Quillmere demo (demos/quillmere, an invented harbour-town game's
//! shading library): every check passes through the binary (exit 0), and its
//! planted copy (demos/quillmere-planted) fails each kind of check — reference
//! model, reference expression, twin, range, round trip, albedo, normalisation —
//! with the worst point and the explanation the mistake calls for (exit 1).
//!
//! Sources: the expected factors are the planted mistakes' own arithmetic: a
//! division by 3 instead of π is a factor π/3 = 1.047198; a GGX NDF without
//! its 1/π integrates to π over the hemisphere (B. Walter et al., EGSR 2007,
//! D is normalised); sRGB decoding by a 2.2 power is not the inverse of the
//! IEC 61966-2-1 encoding; the planted wear's 10-year constant gives more wear
//! than 12 years at every age > 0 (exp is decreasing).

use std::path::Path;

use shadegate::gate::{self, CheckResult, FindingKind, Verdict};

use super::common::shadegate;

fn demo(dir: &str) -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("demos")
        .join(dir)
}

fn run(dir: &str) -> Vec<CheckResult> {
    let suite =
        shadegate::suite::load(&demo(dir).join("shadegate.toml")).unwrap_or_else(|d| panic!("{d}"));
    gate::run(&suite, None, |_, _, _| {}).checks
}

fn check<'a>(all: &'a [CheckResult], name: &str) -> &'a CheckResult {
    all.iter()
        .find(|c| c.name == name)
        .unwrap_or_else(|| panic!("no check {name}"))
}

#[test]
fn the_library_passes_and_the_planted_copy_fails_through_the_binary() {
    let out = shadegate(&["run"], &demo("quillmere"));
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stdout)
    );
    let out = shadegate(&["run"], &demo("quillmere-planted"));
    assert_eq!(out.status.code(), Some(1));
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("1 passed · 13 failed"), "{text}");
}

#[test]
fn every_function_of_the_library_is_judged_by_an_oracle_and_passes() {
    let all = run("quillmere");
    assert_eq!(all.len(), 14);
    for c in &all {
        assert_eq!(c.verdict, Verdict::Pass, "{c:#?}");
        // No golden anywhere: each check is judged by a model, an
        // expression, a twin or a property.
        assert!(
            c.comparisons
                .iter()
                .all(|k| !k.against.starts_with("golden")),
            "{c:#?}"
        );
    }
}

#[test]
fn each_planted_mistake_fails_its_check_with_an_explanation() {
    let all = run("quillmere-planted");
    let factor = |c: &CheckResult| {
        c.findings.iter().find_map(|f| match &f.kind {
            FindingKind::ConstantFactor { factor, .. } => Some(*factor),
            _ => None,
        })
    };
    // Reference expression: / 3 instead of / π.
    let c = check(&all, "stone_lit");
    assert_eq!(c.verdict, Verdict::Fail);
    let k = factor(c).expect("a constant factor");
    assert!((k - std::f64::consts::PI / 3.0).abs() < 1e-5, "{k}");
    // Reference model at a remapped argument: the missing 1/π, named.
    let c = check(&all, "cobble_ndf_model");
    let k = factor(c).expect("a constant factor");
    assert!((k - std::f64::consts::PI).abs() < 1e-5, "{k}");
    // Normalisation: the integral is π at every alpha.
    let c = check(&all, "cobble_ndf_normalised");
    assert_eq!(c.comparisons[0].stats.failed, 5);
    let w = c.comparisons[0].stats.worst.as_ref().unwrap();
    assert!((w.got[0] - std::f64::consts::PI).abs() < 1e-5, "{w:#?}");
    // Twin: the f16 port divides by 3 instead of π (and its twin lost 1/π).
    let c = check(&all, "cobble_ndf_f16");
    assert_eq!(c.verdict, Verdict::Fail);
    assert!(c
        .findings
        .iter()
        .any(|f| matches!(f.kind, FindingKind::InputsRounded { .. })));
    // Albedo: the unmasked lobe (and the NDF's lost 1/π) gain energy.
    let c = check(&all, "cobble_furnace");
    let w = c.comparisons[0].stats.worst.as_ref().unwrap();
    assert!(w.got[0] > 1.0 && w.want[0] == 1.0, "{w:#?}");
    // Masking identity: the Schlick-style fit k = α/2 in place of Smith's G1
    // sees too little of the surface at 60° (0.462 of the 0.5 = cos 60°).
    let c = check(&all, "cobble_masking");
    assert_eq!(c.verdict, Verdict::Fail);
    let w = c.comparisons[0].stats.worst.as_ref().unwrap();
    assert!(
        (w.want[0] - 0.5).abs() < 1e-6 && w.want[0] - w.got[0] > 0.03,
        "{w:#?}"
    );
    // Reference model: Schlick with the fifth power cut to a fourth.
    assert_eq!(check(&all, "lamp_fresnel").verdict, Verdict::Fail);
    // The encoder is right; its round trip through a 2.2 power is not.
    assert_eq!(check(&all, "srgb_encode").verdict, Verdict::Pass);
    let c = check(&all, "srgb_round_trip");
    assert_eq!(c.verdict, Verdict::Fail);
    assert_eq!(
        c.comparisons[0].against,
        "property round trip through srgb_decode"
    );
    // The tone curve without its saturate: above 1 for bright inputs.
    let c = check(&all, "fog_tone_range");
    let w = c.comparisons[0].stats.worst.as_ref().unwrap();
    assert!(w.got[0] > 1.0 && w.want[0] == 1.0, "{w:#?}");
    assert_eq!(check(&all, "fog_tone").verdict, Verdict::Fail);
    // A struct argument over two files: the plank calls the planted
    // stone_lit of the first file, so each component is off by π/3.
    for name in ["dock_plank", "dock_plank_fields"] {
        let c = check(&all, name);
        assert_eq!(c.verdict, Verdict::Fail);
        assert_eq!(c.shader, "shaders/harbour.wgsl + shaders/dock.wgsl");
        let k = factor(c).expect("a constant factor");
        assert!((k - std::f64::consts::PI / 3.0).abs() < 1e-5, "{k}");
    }
    // The out-parameter: 1 - exp(-age / 10) wears faster than the model's
    // 12-year constant, so the worst point has more wear than expected.
    let c = check(&all, "plank_wear");
    assert_eq!(c.verdict, Verdict::Fail);
    let w = c.comparisons[0].stats.worst.as_ref().unwrap();
    assert!(w.got[0] > w.want[0], "{w:#?}");
}
