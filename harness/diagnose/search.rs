//! The hypothesis search: which single change of the reference explains the failure.
//!
//! [`search`] takes plain columns and a closure, nothing of the gate's types: the reference
//! model's name, its flattened argument columns at the check's points, the function's
//! outputs there, the tolerance as a predicate and the failing points. It samples up to
//! [`Options::max_failing`] failing and [`Options::max_passing`] passing points (evenly
//! strided, so the sample is deterministic), re-evaluates the reference under every
//! applicable hypothesis of the catalogue at those points, and returns the hypotheses under
//! which failing points pass while passing points still pass, as [`Fit`]s ranked by the
//! share they explain.

use super::catalogue::{Hypothesis, CATALOGUE};
use super::terms::decomposition;
use crate::reference;

/// How much the search samples and what it reports.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Options {
    /// Failing points tried (all of them when there are fewer).
    pub max_failing: usize,
    /// Passing points tried.
    pub max_passing: usize,
    /// A hypothesis is reported when it explains at least this share of the failing points…
    pub min_explained: f64,
    /// …and keeps at least this share of the passing points passing.
    pub min_kept: f64,
}

impl Default for Options {
    fn default() -> Options {
        Options {
            max_failing: 2000,
            max_passing: 2000,
            min_explained: 0.05,
            min_kept: 0.99,
        }
    }
}

/// One hypothesis with its evidence.
#[derive(Clone, Copy, Debug)]
pub struct Fit {
    pub hypothesis: &'static Hypothesis,
    /// Share of the sampled failing points that pass under the change (0 ..= 1).
    pub explained: f64,
    /// Share of the sampled passing points that still pass under it (1 when none were
    /// sampled).
    pub kept: f64,
    /// How many failing and passing points were tried.
    pub failing_tried: usize,
    pub passing_tried: usize,
    /// A failing point the change explains, and one it does not (if any).
    pub explained_point: Option<usize>,
    pub unexplained_point: Option<usize>,
}

impl Fit {
    /// Explains every failing point tried and keeps every passing one.
    pub fn is_full(&self) -> bool {
        self.explained == 1.0 && self.kept == 1.0
    }

    /// The ranking score: `explained · kept`.
    pub fn score(&self) -> f64 {
        self.explained * self.kept
    }
}

/// Why a search could not run.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum SearchError {
    /// No registry model of that name.
    UnknownModel(String),
    /// The model is registered but has no decomposition (nothing to change).
    NotDecomposed(String),
    /// Columns of the wrong count or length, or a failing index out of range.
    Shape(String),
}

impl std::fmt::Display for SearchError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            SearchError::UnknownModel(m) => write!(f, "no reference model named `{m}`"),
            SearchError::NotDecomposed(m) => {
                write!(f, "reference model `{m}` has no decomposition into terms")
            }
            SearchError::Shape(s) => f.write_str(s),
        }
    }
}

impl std::error::Error for SearchError {}

/// `count` indices out of `0..n` evenly strided (all of them when `n ≤ count`).
fn stride(n: usize, count: usize) -> impl Iterator<Item = usize> {
    let take = n.min(count);
    (0..take).map(move |k| (k as u128 * n as u128 / take as u128) as usize)
}

/// Search the catalogue for the single change of `model` that explains the failure.
///
/// - `args`: the model's flattened argument columns (a vec3 parameter is three columns), one
///   value per point.
/// - `got`: the function's outputs, one column per output component (NaN allowed).
/// - `pass(i, got, expected)`: whether the function's result `got` (its components at point
///   `i`) passes the check's tolerance against `expected`.
/// - `failing`: the indices of the failing points.
///
/// Returns the fits that meet `opts`, best first (by `explained · kept`, then by catalogue
/// order). Without failing points there is nothing to explain and the result is empty.
pub fn search<P>(
    model: &str,
    args: &[&[f64]],
    got: &[&[f64]],
    pass: P,
    failing: &[usize],
    opts: &Options,
) -> Result<Vec<Fit>, SearchError>
where
    P: Fn(usize, &[f64], &[f64]) -> bool,
{
    let m = reference::find(model).ok_or_else(|| SearchError::UnknownModel(model.into()))?;
    let d = decomposition(model).ok_or_else(|| SearchError::NotDecomposed(model.into()))?;
    if args.len() != m.arity() || got.len() != m.outputs {
        return Err(SearchError::Shape(format!(
            "`{model}` takes {} argument columns and gives {} outputs; got {} and {}",
            m.arity(),
            m.outputs,
            args.len(),
            got.len()
        )));
    }
    let n = got[0].len();
    if args.iter().chain(got).any(|c| c.len() != n) {
        return Err(SearchError::Shape("columns of different lengths".into()));
    }
    if let Some(&i) = failing.iter().find(|&&i| i >= n) {
        return Err(SearchError::Shape(format!("failing point {i} of {n}")));
    }
    if failing.is_empty() {
        return Ok(Vec::new());
    }
    let failing_sample: Vec<usize> = stride(failing.len(), opts.max_failing)
        .map(|k| failing[k])
        .collect();
    let mut is_failing = vec![false; n];
    for &i in failing {
        is_failing[i] = true;
    }
    let passing_count = is_failing.iter().filter(|&&f| !f).count();
    let passing_all: Vec<usize> = if passing_count <= opts.max_passing {
        (0..n).filter(|&i| !is_failing[i]).collect()
    } else {
        // Stride over all points and skip failing ones: deterministic and spread out.
        stride(n, opts.max_passing.saturating_mul(n) / passing_count.max(1))
            .filter(|&i| !is_failing[i])
            .take(opts.max_passing)
            .collect()
    };

    let mut a = vec![0.0; m.arity()];
    let mut g = vec![0.0; m.outputs];
    let mut want = vec![0.0; m.outputs];
    let mut passes = |i: usize, v: &_| {
        for (c, col) in args.iter().enumerate() {
            a[c] = col[i];
        }
        for (c, col) in got.iter().enumerate() {
            g[c] = col[i];
        }
        (d.eval)(&a, v, &mut want);
        pass(i, &g, &want)
    };

    let mut fits = Vec::new();
    for h in CATALOGUE.iter().filter(|h| d.reads(h.knob)) {
        let v = h.variant();
        // A first pass over every tenth sampled failing point (at least 100) drops the
        // hypotheses that explain nothing, which is most of them, at a tenth of the cost.
        let probe = (failing_sample.len() / 10).max(100);
        if failing_sample.len() > probe {
            let hits = stride(failing_sample.len(), probe)
                .filter(|&k| passes(failing_sample[k], &v))
                .count();
            if (hits as f64) < 0.5 * opts.min_explained * probe as f64 {
                continue;
            }
        }
        let (mut explained, mut explained_point, mut unexplained_point) = (0usize, None, None);
        for &i in &failing_sample {
            if passes(i, &v) {
                explained += 1;
                explained_point.get_or_insert(i);
            } else {
                unexplained_point.get_or_insert(i);
            }
        }
        let explained_share = explained as f64 / failing_sample.len() as f64;
        if explained_share < opts.min_explained || explained == 0 {
            continue;
        }
        let kept = passing_all.iter().filter(|&&i| passes(i, &v)).count();
        let kept_share = if passing_all.is_empty() {
            1.0
        } else {
            kept as f64 / passing_all.len() as f64
        };
        if kept_share < opts.min_kept {
            continue;
        }
        fits.push(Fit {
            hypothesis: h,
            explained: explained_share,
            kept: kept_share,
            failing_tried: failing_sample.len(),
            passing_tried: passing_all.len(),
            explained_point,
            unexplained_point,
        });
    }
    // Stable sort: ties keep catalogue order.
    fits.sort_by(|x, y| y.score().total_cmp(&x.score()));
    Ok(fits)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stride_is_even_and_in_range() {
        assert_eq!(stride(10, 4).collect::<Vec<_>>(), vec![0, 2, 5, 7]);
        assert_eq!(stride(3, 10).collect::<Vec<_>>(), vec![0, 1, 2]);
        assert_eq!(stride(0, 10).count(), 0);
    }

    #[test]
    fn unknown_and_undecomposed_models_are_errors() {
        let none: &[&[f64]] = &[];
        let p = |_: usize, _: &[f64], _: &[f64]| true;
        assert!(matches!(
            search("no_such", none, none, p, &[], &Options::default()),
            Err(SearchError::UnknownModel(_))
        ));
        assert!(matches!(
            search("ior_from_f0", none, none, p, &[], &Options::default()),
            Err(SearchError::NotDecomposed(_))
        ));
    }
}

#[cfg(test)]
mod catalogue_tests {
    //! Every hypothesis against a "function" that is the reference with exactly that change
    //! (in f64, so only the change differs): the search must name it as a full fit ranked
    //! first or tied with the first; and every hypothesis must show on some model.
    use super::*;
    use crate::diagnose::terms::{decompositions, Variant};

    fn points(m: &reference::Model) -> Vec<Vec<f64>> {
        // A deterministic grid-like walk over each parameter's range (SplitMix64), vectors
        // as directions in the upper hemisphere so the BRDFs are lit.
        let mut rng = crate::sweep::Rng::new(0x0d1a_9005_u64);
        let mut next = || rng.unit();
        (0..800)
            .map(|_| {
                let mut p = Vec::new();
                for s in m.params {
                    match s.kind {
                        reference::ParamKind::Scalar => {
                            let (lo, hi) = s.range;
                            let (lo, hi) = (lo.max(-0.2), hi.min(2.0));
                            p.push(lo + (hi - lo) * next());
                        }
                        reference::ParamKind::Vec3 if s.range.0 < 0.0 => {
                            let z = 0.05 + 0.95 * next();
                            let phi = std::f64::consts::TAU * next();
                            let r = (1.0 - z * z).sqrt();
                            p.extend([r * phi.cos(), r * phi.sin(), z]);
                        }
                        reference::ParamKind::Vec3 => {
                            p.extend([next(), next(), next()]);
                        }
                    }
                }
                p
            })
            .collect()
    }

    fn pass(_: usize, got: &[f64], want: &[f64]) -> bool {
        got.iter()
            .zip(want)
            .all(|(g, w)| (g.is_nan() && w.is_nan()) || g == w || (g - w).abs() <= 1e-9 * w.abs())
    }

    #[test]
    fn each_hypothesis_is_named_where_it_changes_the_model() {
        let mut named = std::collections::HashSet::new();
        for d in decompositions() {
            let m = reference::find(d.model).unwrap();
            let pts = points(m);
            let cols: Vec<Vec<f64>> = (0..m.arity())
                .map(|c| pts.iter().map(|p| p[c]).collect())
                .collect();
            let args: Vec<&[f64]> = cols.iter().map(Vec::as_slice).collect();
            for h in CATALOGUE.iter().filter(|h| d.reads(h.knob)) {
                let v = h.variant();
                let mut out = vec![0.0; m.outputs];
                let got_rows: Vec<Vec<f64>> = pts
                    .iter()
                    .map(|p| {
                        (d.eval)(p, &v, &mut out);
                        out.clone()
                    })
                    .collect();
                let got_cols: Vec<Vec<f64>> = (0..m.outputs)
                    .map(|c| got_rows.iter().map(|r| r[c]).collect())
                    .collect();
                let got: Vec<&[f64]> = got_cols.iter().map(Vec::as_slice).collect();
                let failing: Vec<usize> = (0..pts.len())
                    .filter(|&i| !pass(i, &got_rows[i], &m.call(&pts[i])))
                    .collect();
                if failing.is_empty() {
                    // The change does not show on this model's domain (say, a clamp value
                    // the model has no roughness for): nothing to name here.
                    continue;
                }
                let fits =
                    search(d.model, &args, &got, pass, &failing, &Options::default()).unwrap();
                let fit = fits
                    .iter()
                    .find(|f| f.hypothesis.id == h.id)
                    .unwrap_or_else(|| panic!("{} on {}: not found", h.id, d.model));
                assert!(fit.is_full(), "{} on {}: {:?}", h.id, d.model, fit);
                assert_eq!(fit.score(), fits[0].score(), "{} on {}", h.id, d.model);
                named.insert(h.id);
            }
            // The unchanged reference passes everywhere, so nothing is named.
            let mut out = vec![0.0; m.outputs];
            let unchanged = pts.iter().all(|p| {
                (d.eval)(p, &Variant::REFERENCE, &mut out);
                pass(0, &out, &m.call(p))
            });
            assert!(unchanged, "{}", d.model);
        }
        for h in CATALOGUE {
            assert!(
                named.contains(h.id),
                "{} is never distinguishable on any model",
                h.id
            );
        }
    }
}
