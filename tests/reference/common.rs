//! Shared by the reference-table tests: read one committed CSV table of a
//! registered model (comment lines `#`, one column per scalar parameter, then
//! `expected`) and compare the model with it row by row.

use shadegate::reference::{find, ParamKind};

/// Compare model `model` with `tests/data/reference/<dir>/<model>.csv` to
/// relative error `rel_tol`; `source` names the table's origin in messages.
/// An exact zero in the table must be matched by an exact zero. With
/// `positive`, every expected value must be > 0 (a property of the generator).
/// Returns the largest relative error seen.
#[track_caller]
pub fn check_table(dir: &str, source: &str, model: &str, rel_tol: f64, positive: bool) -> f64 {
    check_table_with(dir, source, model, rel_tol, 0.0, positive)
}

/// As [`check_table`], with an absolute floor: a row passes when
/// `|got - expected| ≤ abs_tol + rel_tol |expected|` (for tables of integrals, whose
/// quadrature error is absolute). Returns the largest absolute error seen when `abs_tol`
/// is not 0, else the largest relative error.
#[track_caller]
pub fn check_table_with(
    dir: &str,
    source: &str,
    model: &str,
    rel_tol: f64,
    abs_tol: f64,
    positive: bool,
) -> f64 {
    let m = find(model).unwrap_or_else(|| panic!("no registered model {model}"));
    let path = format!(
        "{}/tests/data/reference/{dir}/{model}.csv",
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
        if positive {
            assert!(
                expected > 0.0,
                "{path} row {}: the generator keeps values positive",
                i + 1
            );
        }
        let got = m.call(args)[0];
        if abs_tol > 0.0 {
            let err = (got - expected).abs();
            if err.is_nan() || err > abs_tol + rel_tol * expected.abs() {
                failures.push(format!(
                    "  {args:?}: got {got:e}, {source} {expected:e}, abs {err:.2e}"
                ));
            }
            worst = worst.max(err);
            rows += 1;
            continue;
        }
        let rel = if expected == 0.0 {
            if got == 0.0 {
                0.0
            } else {
                f64::INFINITY
            }
        } else {
            ((got - expected) / expected).abs()
        };
        if rel.is_nan() || rel > rel_tol {
            failures.push(format!(
                "  {args:?}: got {got:e}, {source} {expected:e}, rel {rel:.2e}"
            ));
        }
        worst = worst.max(rel);
        rows += 1;
    }
    assert!(rows > 50, "{path}: only {rows} rows");
    let what = if abs_tol > 0.0 {
        "absolute"
    } else {
        "relative"
    };
    println!("{model}: {rows} rows, max {what} error {worst:.3e}");
    assert!(
        failures.is_empty(),
        "{model}: {} of {rows} rows differ from {source} by more than {rel_tol:e} relative + {abs_tol:e}:\n{}",
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
