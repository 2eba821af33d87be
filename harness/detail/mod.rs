//! Per-point detail of one check, for the pictures, the report page and the per-point
//! CSV files: the function's results, what each comparison expects, and each point
//! judged against its tolerance.
//!
//! This is a small adapter over the gate's public steps ([`gate::evaluate`],
//! [`gate::reference_columns`], [`golden::read`]) and [`compare::assess`]: a check's
//! result ([`gate::CheckResult`]) keeps only bounded statistics, so whatever needs
//! every point evaluates the check again here. The judgement per point is the gate's
//! own ([`compare::assess`]), so a point fails here exactly when it fails in the run.

use crate::compare::{self, Assessment, Tolerance};
use crate::gate::{self, Evaluated};
use crate::golden;
use crate::suite::{Check, Suite};
use crate::sweep::Domain;
use crate::values::{format_value, ScalarKind};

/// What one comparison of a check expects at every point.
pub struct Expected {
    /// `reference` or `golden` (used in file names).
    pub kind: &'static str,
    /// `reference <model>` or `golden <path>`, as the run's comparison says.
    pub against: String,
    /// One f64 column per output component.
    pub want: Vec<Vec<f64>>,
    pub tolerance: Tolerance,
}

/// A check evaluated over its sweep, with what each of its comparisons expects.
pub struct CheckPoints {
    pub ev: Evaluated,
    /// The function's results as f64, one column per output component.
    pub got: Vec<Vec<f64>>,
    pub expected: Vec<Expected>,
    /// The results are f16 (ULPs are f16 ULPs).
    pub half: bool,
}

impl CheckPoints {
    /// Evaluate `check` of `suite` on the CPU and read what its comparisons expect.
    pub fn of(suite: &Suite, check: &Check) -> Result<CheckPoints, String> {
        let ev = gate::evaluate(suite, check, None)?;
        CheckPoints::judge(suite, check, ev)
    }

    /// What `check`'s comparisons expect of an evaluation already made.
    pub fn judge(suite: &Suite, check: &Check, ev: Evaluated) -> Result<CheckPoints, String> {
        let half = ev.outputs.iter().any(|(_, k)| *k == ScalarKind::F16);
        let got = gate::as_f64(&ev.output_columns, &ev.outputs);
        let mut expected = Vec::new();
        if let Some(model) = check.reference {
            gate::reference_fits(check, model, got.len())?;
            expected.push(Expected {
                kind: "reference",
                against: format!("reference {}", model.name),
                want: gate::reference_columns(check, model, &ev.points, &check.reference_args)?,
                tolerance: check.tolerance.clone(),
            });
        }
        if let Some(expr) = &check.reference_expr {
            expected.push(Expected {
                kind: "reference",
                against: format!("reference {}", expr.text),
                want: gate::reference_expr_columns(check, expr, &ev.points, got.len())?,
                tolerance: check.tolerance.clone(),
            });
        }
        if let Some(gpath) = &check.golden {
            let g = golden::open(&suite.resolve(gpath), &suite.limits).map_err(|d| d.rendered)?;
            if g.outputs.len() == got.len() && g.len() == ev.points.len {
                let outputs = g.read_outputs(0..g.len()).map_err(|d| d.rendered)?;
                expected.push(Expected {
                    kind: "golden",
                    against: format!("golden {}", gpath.display()),
                    want: gate::as_f64(&outputs, &g.outputs),
                    tolerance: check.golden_tolerance.clone(),
                });
            }
        }
        Ok(CheckPoints {
            ev,
            got,
            expected,
            half,
        })
    }

    /// Number of points.
    pub fn len(&self) -> usize {
        self.ev.points.len
    }

    /// Whether the sweep is empty.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Point `i` judged against `e`, exactly as the gate judges it.
    pub fn assess(&self, e: &Expected, i: usize) -> Assessment {
        compare::assess(&self.got, &e.want, i, &e.tolerance, self.half)
    }

    /// Extra columns for `eval --judge`: their names, and per point their text. Per
    /// comparison: the expected value of each output leaf, the point's error (abs, rel
    /// and ULP of its worst component), its badness (error ÷ tolerance) and `pass`.
    pub fn judge_columns(&self) -> (Vec<String>, Vec<Vec<String>>) {
        let mut names = Vec::new();
        for e in &self.expected {
            for (leaf, _) in self.ev.outputs.iter() {
                names.push(format!("{}.{leaf}", e.kind));
            }
            for col in ["abs_error", "rel_error", "ulp_error", "badness", "pass"] {
                names.push(format!("{}.{col}", e.kind));
            }
        }
        let rows = (0..self.len())
            .map(|i| {
                let mut row = Vec::new();
                for e in &self.expected {
                    row.extend(e.want.iter().map(|c| number(c[i])));
                    let a = self.assess(e, i);
                    row.extend([a.err.0, a.err.1, a.err.2, a.badness].map(number));
                    row.push((!a.fails()).to_string());
                }
                row
            })
            .collect();
        (names, rows)
    }

    /// The failing points of comparison `e` as CSV (sweep parameters, function inputs,
    /// results, expected values, errors), or `None` when none fails. Every failing point
    /// is written: their number is bounded by the sweep's, which the suite's
    /// `points_per_check` limit bounds.
    pub fn failing_csv(&self, e: &Expected) -> Option<String> {
        let failing: Vec<usize> = (0..self.len())
            .filter(|&i| self.assess(e, i).fails())
            .collect();
        if failing.is_empty() {
            return None;
        }
        let mut w = csv::Writer::from_writer(Vec::new());
        let p = &self.ev.points;
        let mut header = vec!["point".to_string()];
        for (k, name) in p.names.iter().enumerate() {
            if p.widths[k] == 1 {
                header.push(name.clone());
            } else {
                header.extend(["x", "y", "z"].map(|c| format!("{name}.{c}")));
            }
        }
        header.extend(self.ev.inputs.iter().map(|(n, _)| format!("in.{n}")));
        header.extend(self.ev.outputs.iter().map(|(n, _)| format!("got.{n}")));
        header.extend(self.ev.outputs.iter().map(|(n, _)| format!("want.{n}")));
        header.extend(["abs_error", "rel_error", "ulp_error", "badness"].map(String::from));
        w.write_record(&header).ok()?;
        for &i in &failing {
            let mut row = vec![i.to_string()];
            for cols in &p.columns {
                row.extend(cols.iter().map(|c| number(c[i])));
            }
            for ((_, k), c) in self.ev.inputs.iter().zip(&self.ev.input_columns) {
                row.push(format_value(*k, c[i], false));
            }
            for ((_, k), c) in self.ev.outputs.iter().zip(&self.ev.output_columns) {
                row.push(format_value(*k, c[i], false));
            }
            row.extend(e.want.iter().map(|c| number(c[i])));
            let a = self.assess(e, i);
            row.extend([a.err.0, a.err.1, a.err.2, a.badness].map(number));
            w.write_record(&row).ok()?;
        }
        String::from_utf8(w.into_inner().ok()?).ok()
    }
}

/// An f64 written so it reads back exactly (`inf`, `-inf`, `NaN` for non-finite).
fn number(x: f64) -> String {
    if x.is_nan() {
        "NaN".into()
    } else if x.is_infinite() {
        if x > 0.0 { "inf" } else { "-inf" }.into()
    } else {
        format!("{x:?}")
    }
}

/// The sweep parameters of `check` that neither the function's arguments nor the
/// reference's parameters use, each with its number of values (the factor it multiplies
/// the point count by). Loads and compiles the shader to learn the function's arguments.
pub fn unused_parameters(suite: &Suite, check: &Check) -> Result<Vec<(String, usize)>, String> {
    let program = gate::build_of(suite, check, None)?.program()?;
    let mut used: Vec<String> = Vec::new();
    let mut use_binding =
        |name: &str, exprs: &std::collections::BTreeMap<String, crate::sweep::Expr>| match exprs
            .get(name)
        {
            Some(e) => used.extend(e.variables()),
            None => used.push(name.to_string()),
        };
    for (name, _) in program.params() {
        use_binding(name, &check.args);
    }
    if let Some(model) = check.reference {
        for p in model.params {
            use_binding(p.name, &check.reference_args);
        }
    }
    if let Some(e) = &check.reference_expr {
        used.extend(e.variables());
    }
    Ok(check
        .sweep
        .params
        .iter()
        .filter(|(name, _)| !used.contains(name))
        .map(|(name, d)| (name.clone(), values_of(d)))
        .collect())
}

fn values_of(d: &Domain) -> usize {
    d.count()
}
