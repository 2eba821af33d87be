//! The reference models against high-precision values of the published formulas.
//!
//! Source: the tables in `tests/data/reference/mpmath/`, written by
//! `tools/refgen/refgen.py --mpmath`, which evaluates each paper's formula with the mpmath
//! library at 50 significant digits (its own transcription of the formulas, not a port of the
//! Rust code: for example it computes Fresnel through Snell's law with complex arithmetic,
//! where the Rust code uses the real-arithmetic form). Each file is named after the registry
//! model it checks; the test calls the model through the registry, so the registry's
//! argument order is checked too.
//!
//! Tolerance: 1e-12 relative, no absolute floor. An f64 evaluation of these formulas takes
//! a few dozen roundings of 2^-53 ≈ 1.1e-16 each, times the condition number of the formula
//! at the point (at most a few hundred here, reached by Beckmann's `exp(-tan²θ/alpha²)` with
//! an argument near 700 and by the Beckmann Λ's cancellation `2a²` near `a ≈ 26`), which
//! stays below 1e-12; a wrong formula misses by far more. No absolute floor is needed because
//! the generator leaves out points whose value is below 1e-300 (they would be subnormal in
//! f64, where relative error means nothing) and counts them in the file's header; an exact
//! zero in the table must be matched by an exact zero.

use crate::common as reference_common;

const REL_TOL: f64 = 1e-12;

/// Checks one table; returns the largest relative error seen.
#[track_caller]
fn check(model: &str) -> f64 {
    reference_common::check_table("mpmath", "mpmath", model, REL_TOL, false)
}

const TABLES: &[&str] = &[
    "ggx_ndf",
    "ggx_aniso_ndf",
    "beckmann_ndf",
    "blinn_phong_ndf",
    "smith_ggx_lambda",
    "smith_ggx_g1",
    "smith_beckmann_lambda",
    "smith_beckmann_g1",
    "smith_ggx_g2_height_correlated",
    "smith_ggx_v_height_correlated",
    "smith_beckmann_g2_height_correlated",
    "fresnel_dielectric",
    "fresnel_conductor",
    "burley_diffuse",
    "smith_ggx_aniso_lambda",
    "smith_ggx_aniso_g1",
    "smith_ggx_aniso_g2_separable",
    "smith_ggx_aniso_g2_height_correlated",
    "smith_ggx_aniso_v_separable",
    "smith_ggx_aniso_v_height_correlated",
    "oren_nayar_diffuse",
    "oren_nayar_qualitative",
    "hammon_diffuse",
    "charlie_sheen_ndf",
    "ashikhmin_velvet_ndf",
    "sheen_visibility",
    "sheen_charlie_lobe",
    "sheen_velvet_lobe",
    "gtr1_ndf",
    "kelemen_visibility",
    "clearcoat_fresnel",
    "clearcoat_lobe",
    "schlick_fresnel_average",
    "kulla_conty_fresnel_factor",
    "srgb_encode",
    "srgb_decode",
    "filmic_tonemap",
];

#[test]
fn ggx_ndf() {
    check("ggx_ndf");
}

#[test]
fn ggx_aniso_ndf() {
    check("ggx_aniso_ndf");
}

#[test]
fn beckmann_ndf() {
    check("beckmann_ndf");
}

#[test]
fn blinn_phong_ndf() {
    check("blinn_phong_ndf");
}

#[test]
fn smith_ggx_lambda() {
    check("smith_ggx_lambda");
}

#[test]
fn smith_ggx_g1() {
    check("smith_ggx_g1");
}

#[test]
fn smith_beckmann_lambda() {
    check("smith_beckmann_lambda");
}

#[test]
fn smith_beckmann_g1() {
    check("smith_beckmann_g1");
}

#[test]
fn smith_ggx_g2_height_correlated() {
    check("smith_ggx_g2_height_correlated");
}

#[test]
fn smith_ggx_v_height_correlated() {
    check("smith_ggx_v_height_correlated");
}

#[test]
fn smith_beckmann_g2_height_correlated() {
    check("smith_beckmann_g2_height_correlated");
}

#[test]
fn fresnel_dielectric() {
    check("fresnel_dielectric");
}

#[test]
fn fresnel_conductor() {
    check("fresnel_conductor");
}

#[test]
fn burley_diffuse() {
    check("burley_diffuse");
}

/// One test per table of the models added for the wider library (each table's header names
/// its paper; the formulas are transcribed in `tools/refgen/refgen.py`).
macro_rules! table_tests {
    ($($name:ident),* $(,)?) => {
        $(
            #[test]
            fn $name() {
                check(stringify!($name));
            }
        )*
    };
}

table_tests!(
    smith_ggx_aniso_lambda,
    smith_ggx_aniso_g1,
    smith_ggx_aniso_g2_separable,
    smith_ggx_aniso_g2_height_correlated,
    smith_ggx_aniso_v_separable,
    smith_ggx_aniso_v_height_correlated,
    oren_nayar_diffuse,
    oren_nayar_qualitative,
    hammon_diffuse,
    charlie_sheen_ndf,
    ashikhmin_velvet_ndf,
    sheen_visibility,
    sheen_charlie_lobe,
    sheen_velvet_lobe,
    gtr1_ndf,
    kelemen_visibility,
    clearcoat_fresnel,
    clearcoat_lobe,
    schlick_fresnel_average,
    kulla_conty_fresnel_factor,
    srgb_encode,
    srgb_decode,
    filmic_tonemap,
);

#[test]
fn every_table_on_disk_has_a_test() {
    // A table added by the generator but not listed here would silently go unchecked.
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/data/reference/mpmath");
    let mut on_disk: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().into_string().unwrap())
        .filter_map(|n| n.strip_suffix(".csv").map(str::to_owned))
        .collect();
    on_disk.sort();
    let mut listed: Vec<String> = TABLES.iter().map(|s| s.to_string()).collect();
    listed.sort();
    assert_eq!(on_disk, listed);
}

#[test]
fn summary_of_agreement() {
    // Prints the worst relative error over all tables (run with --nocapture to see it).
    let worst = TABLES.iter().map(|t| check(t)).fold(0.0, f64::max);
    println!("all mpmath tables: max relative error {worst:.3e}");
    assert!(worst <= REL_TOL);
}
