//! The albedo table of an albedo property check (issue 13): the function's directional
//! albedo by view angle and roughness, computed in the gate (`CheckResult::albedo`) and
//! printed by the text report beside the reference model's single-scattering albedo.
//!
//! Sources: a Lambertian lobe 1/π has directional albedo exactly 1 at every view angle
//! (∫ cos θ / π dω = 1 over the hemisphere, a handbook identity); the demo's GGX lobe
//! (height-correlated Smith, F = 1) is the integrand of the registry's `ggx_albedo`, which
//! `tests/reference/` checks against mpmath; the quadrature's accuracy against it
//! (1e-5 up to 60°, 2e-3 at 80°) is the one `gate::oracle::hemisphere_nodes` documents
//! and `tests/gate/quadrature.rs` measures.

use std::path::Path;

use shadegate::gate::{self, AlbedoTable, RunResult, Verdict};
use shadegate::reference;
use shadegate::report;
use shadegate::suite;

const LIB: &str = r#"
fn lambert(v: vec3<f32>, l: vec3<f32>, roughness: f32) -> f32 { return 0.31830987; }
fn lambert_gain(v: vec3<f32>, l: vec3<f32>, roughness: f32) -> f32 { return 0.31830987 * (1.0 + roughness); }
fn lambert_alpha(v: vec3<f32>, l: vec3<f32>, alpha: f32) -> f32 { return 0.31830987; }
"#;

fn suite_text(function: &str, rough: &str) -> String {
    format!(
        r#"
[[check]]
name = "furnace"
shader = "lib.wgsl"
function = "{function}"
property = {{ kind = "albedo", over = "l" }}

[check.sweep]
v = {{ direction = {{ theta = {{ list = [0, 45, 70] }}, phi = {{ list = [0, 90] }} }} }}
{rough} = {{ list = [0.25, 0.5] }}
"#
    )
}

fn table(function: &str, rough: &str, test: &str) -> (gate::CheckResult, AlbedoTable) {
    let r = super::common::run_first("albedo", test, LIB, &suite_text(function, rough));
    let t = r
        .albedo
        .clone()
        .unwrap_or_else(|| panic!("no albedo table: {r:#?}"));
    (r, t)
}

#[test]
fn a_lambertian_lobe_has_albedo_one_in_every_cell() {
    let (r, t) = table("lambert", "roughness", "lambert");
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    assert_eq!(t.over, "l");
    assert_eq!(t.view, "v");
    assert_eq!(t.roughness.as_deref(), Some("roughness"));
    assert_eq!(t.angles.len(), 3);
    for (a, want) in t.angles.iter().zip([0.0, 45.0, 70.0]) {
        // The directions are rounded to f32 before the angle is taken.
        assert!((a - want).abs() < 1e-4, "{:?}", t.angles);
    }
    assert_eq!(t.roughnesses, vec![0.25, 0.5]);
    for row in &t.albedo {
        for &a in row {
            // 1/π rounded to f32 is 0.318309873 (3e-8 above 1/π): the integral is 1 + 1e-7.
            assert!((a - 1.0).abs() < 1e-6, "{:?}", t.albedo);
        }
    }
    // No `alpha` to give ggx_albedo: the table says so instead of guessing a remap.
    assert!(t.reference.is_none());
    assert!(
        t.note.as_deref().unwrap_or("").contains("alpha"),
        "{:?}",
        t.note
    );
}

#[test]
fn the_reference_column_is_ggx_albedo_at_each_cells_point() {
    // The model's `alpha` comes from the sweep parameter of that name.
    let (_, t) = table("lambert_alpha", "alpha", "with-reference");
    assert_eq!(t.roughness.as_deref(), Some("alpha"));
    let m = t.reference.as_ref().expect("a reference column");
    let model = reference::find("ggx_albedo").unwrap();
    for (r, theta) in t.angles.iter().enumerate() {
        for (c, rough) in t.roughnesses.iter().enumerate() {
            // The view's z as the gate sees it: the direction rounded to f32.
            let z = f64::from(theta.to_radians().cos() as f32);
            let mut out = [0.0];
            (model.eval)(&[z, *rough], &mut out);
            assert!(
                (m[r][c] - out[0]).abs() < 1e-6,
                "cell {r},{c}: {} vs {}",
                m[r][c],
                out[0]
            );
        }
    }
    assert!(t.note.is_none());
}

#[test]
fn the_demo_ggx_lobe_matches_ggx_albedo_and_a_planted_gain_is_marked() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let s = suite::load(&root.join("demos/quillmere/shadegate.toml")).unwrap();
    let c = s
        .checks
        .iter()
        .find(|c| c.name == "cobble_furnace")
        .unwrap();
    let r = gate::run_check(&s, c);
    let t = r
        .albedo
        .as_ref()
        .expect("the demo's furnace check has a table");
    assert_eq!(t.roughness.as_deref(), Some("alpha"));
    let m = t.reference.as_ref().expect("alpha is a sweep parameter");
    for (row, theta) in t.angles.iter().enumerate() {
        let within = if *theta <= 60.0 { 1e-5 } else { 2.5e-3 };
        for (a, want) in t.albedo[row].iter().zip(&m[row]) {
            assert!((a - want).abs() <= within, "{theta}°: {a} vs {want}");
        }
    }
    // The text report prints it.
    let run = RunResult {
        suite: "demos/quillmere/shadegate.toml".into(),
        checks: vec![r.clone()],
    };
    let text = report::text(&run, false);
    assert!(
        text.contains("directional albedo over l by view angle (v from +z) and alpha, beside ggx_albedo (single scattering):"),
        "{text}"
    );
    assert!(text.contains("alpha 0.1"), "{text}");
    assert!(text.contains("0.9883  / 0.9883"), "{text}");
    assert!(!text.contains("gains energy"), "{text}");
    // A gain shows as a starred cell and a note.
    let (r, t) = table("lambert_gain", "roughness", "gain");
    assert_eq!(r.verdict, Verdict::Fail);
    assert!(
        t.albedo.iter().flatten().all(|&a| a > 1.2),
        "{:?}",
        t.albedo
    );
    let text = report::text(
        &RunResult {
            suite: "lib".into(),
            checks: vec![r],
        },
        false,
    );
    assert!(text.contains("1.2500*"), "{text}");
    assert!(
        text.contains("* above 1: the function gains energy"),
        "{text}"
    );
    assert!(text.contains("(ggx_albedo not shown:"), "{text}");
}
