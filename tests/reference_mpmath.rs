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

use shadegate::reference::{find, ParamKind};

const REL_TOL: f64 = 1e-12;

/// Checks one table; returns the largest relative error seen.
#[track_caller]
fn check(model: &str) -> f64 {
    let m = find(model).unwrap_or_else(|| panic!("no registered model {model}"));
    let path = format!(
        "{}/tests/data/reference/mpmath/{model}.csv",
        env!("CARGO_MANIFEST_DIR")
    );
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_path(&path)
        .unwrap_or_else(|e| panic!("{path}: {e}"));
    let header: Vec<String> = reader
        .headers()
        .unwrap()
        .iter()
        .map(str::to_owned)
        .collect();
    let names: Vec<&str> = m.params.iter().map(|p| p.name).collect();
    assert!(
        m.params.iter().all(|p| p.kind == ParamKind::Scalar),
        "{model}: scalar params only"
    );
    assert_eq!(
        &header[..header.len() - 1],
        &names[..],
        "{path}: columns vs model parameters"
    );
    assert_eq!(
        header.last().map(String::as_str),
        Some("expected"),
        "{path}"
    );
    assert_eq!(m.outputs, 1, "{model}");

    let mut worst = 0.0_f64;
    let mut failures = Vec::new();
    let mut rows = 0;
    for (i, record) in reader.records().enumerate() {
        let record = record.unwrap_or_else(|e| panic!("{path}: {e}"));
        let values: Vec<f64> = record
            .iter()
            .map(|s| {
                s.parse()
                    .unwrap_or_else(|e| panic!("{path} row {}: {s:?}: {e}", i + 1))
            })
            .collect();
        let (args, expected) = values.split_at(values.len() - 1);
        let expected = expected[0];
        let got = m.call(args)[0];
        let rel = if expected == 0.0 {
            if got == 0.0 {
                0.0
            } else {
                f64::INFINITY
            }
        } else {
            ((got - expected) / expected).abs()
        };
        if rel.is_nan() || rel > REL_TOL {
            failures.push(format!(
                "  {args:?}: got {got:e}, mpmath {expected:e}, rel {rel:.2e}"
            ));
        }
        worst = worst.max(rel);
        rows += 1;
    }
    assert!(rows > 50, "{path}: only {rows} rows");
    println!("{model}: {rows} rows, max relative error {worst:.3e}");
    assert!(
        failures.is_empty(),
        "{model}: {} of {rows} rows differ from mpmath by more than {REL_TOL:e}:\n{}",
        failures.len(),
        failures
            .iter()
            .take(12)
            .cloned()
            .collect::<Vec<_>>()
            .join("\n")
    );
    worst
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
