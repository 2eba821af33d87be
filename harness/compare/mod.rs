//! Comparing computed columns with expected ones: tolerances, error
//! statistics and the findings that explain a failure.
//!
//! A point passes when, for every output component, the error is within *any*
//! of the tolerance's bounds (absolute, relative, ULP). Its *badness* is the
//! smallest ratio error / bound over the given bounds; it fails when its badness
//! exceeds 1. The worst point is the one with the largest badness, and the headroom
//! of a check is 1 / (worst badness): a headroom above 100 flags a stale
//! tolerance that would hide a regression.

pub mod exact;
pub mod ulp;

pub use exact::ExactSum;

use crate::widths::{at_widths, Runs};
use serde::Serialize;

/// What to do with points where the expected value is NaN or infinite.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, serde::Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum NanPolicy {
    /// The result must be non-finite of the same kind (NaN, +∞ or −∞).
    #[default]
    Match,
    /// Such points are not compared (counted as skipped).
    Skip,
}

/// Accepted error, per output component (a single value applies to all).
#[derive(Clone, Debug, PartialEq, Serialize, Default)]
pub struct Tolerance {
    pub abs: Option<Vec<f64>>,
    pub rel: Option<Vec<f64>>,
    pub ulp: Option<Vec<f64>>,
    pub nan: NanPolicy,
    /// Why this much error is accepted. Mandatory in suite files.
    pub reason: String,
}

impl Tolerance {
    /// Bit-exact (0 ULP).
    pub fn exact(reason: &str) -> Tolerance {
        Tolerance {
            ulp: Some(vec![0.0]),
            reason: reason.to_string(),
            ..Tolerance::default()
        }
    }

    fn pick(v: &Option<Vec<f64>>, c: usize) -> Option<f64> {
        v.as_ref().map(|v| if v.len() == 1 { v[0] } else { v[c] })
    }

    /// Human-readable bounds, e.g. `abs 1e-6 or rel 1e-5`.
    pub fn describe(&self) -> String {
        let f = |name: &str, v: &Option<Vec<f64>>| {
            v.as_ref().map(|v| {
                format!(
                    "{name} {}",
                    v.iter()
                        .map(|x| format!("{x:e}"))
                        .collect::<Vec<_>>()
                        .join("/")
                )
            })
        };
        let parts: Vec<String> = [
            f("abs", &self.abs),
            f("rel", &self.rel),
            f("ulp", &self.ulp).map(|s| s.replace("e0", "")),
        ]
        .into_iter()
        .flatten()
        .collect();
        if parts.is_empty() {
            "exact".into()
        } else {
            parts.join(" or ")
        }
    }
}

/// One point, for reports.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PointReport {
    /// Index in sweep order.
    pub index: usize,
    /// The sweep parameters, `name=value, ...`.
    pub params: String,
    pub got: Vec<f64>,
    pub want: Vec<f64>,
    /// The component with the largest badness.
    pub component: usize,
    pub abs: f64,
    pub rel: f64,
    pub ulp: f64,
    /// The expected value of that component is near zero (|x| ≤ 2⁻²³, the
    /// spacing of f32 at 1), where a relative error means nothing: reports
    /// show the absolute error there and say so.
    pub near_zero: bool,
}

/// Whether an expected value is near zero (see [`PointReport::near_zero`]).
pub fn near_zero(want: f64) -> bool {
    want.abs() <= f64::from(f32::EPSILON)
}

/// Statistics of one comparison (against the reference or a golden).
#[derive(Clone, Debug, PartialEq, Serialize, Default)]
pub struct Stats {
    pub points: usize,
    /// Points not compared (expected non-finite under `NanPolicy::Skip`).
    pub skipped: usize,
    pub failed: usize,
    pub fail_share: f64,
    pub max_abs: f64,
    pub max_rel: f64,
    pub max_ulp: f64,
    pub rms_abs: f64,
    /// Largest error / bound ratio (see the module doc); 0 when exact.
    pub worst_badness: f64,
    /// Tolerance ÷ measured: ∞ when nothing moved.
    pub headroom: f64,
    /// The tolerance is more than 100× looser than the worst error measured.
    pub stale_tolerance: bool,
    pub worst: Option<PointReport>,
    pub first_failures: Vec<PointReport>,
    /// Non-finite results where the expected value is finite (always failures).
    pub nonfinite: usize,
    pub first_nonfinite: Vec<PointReport>,
    /// Points whose bits differ at all (goldens only).
    pub changed: Option<usize>,
    /// Output components compared at each point.
    pub components: usize,
    /// The exact sum of squared absolute errors behind `rms_abs`, so that
    /// shards of a check merge into the statistics of the whole
    /// ([`ExactSum`]: the same bits in any order).
    pub sum_sq: ExactSum,
}

/// How many failing (and non-finite) points are listed.
pub const LISTED: usize = 5;

/// Spacing of f32 (or f16) values at |x|, in f64: a power of two, that of
/// the binade `|x|` rounds into (the smallest one's below the normal range,
/// the largest finite one's for values that round to infinity, so that an
/// error near the format's largest value still counts in ULPs).
pub fn ulp_at(x: f64, half: bool) -> f64 {
    if half {
        let e = i64::from((half::f16::from_f64(x.abs()).to_bits() >> 10) & 0x1f).clamp(1, 30);
        // f16: 10 fraction bits, exponent bias 15.
        f64::from_bits(((e - 25 + 1023) as u64) << 52)
    } else {
        1.0 / inv_ulp_f32(x)
    }
}

/// `1 / ulp_at(x, false)`, exactly: the f32 spacing is `2^(e − 150)` for
/// the biased exponent `e` (clamped to the finite normal range) of `|x|`
/// rounded to f32, so its reciprocal is the power of two `2^(150 − e)` and
/// `err * inv_ulp_f32(x)` is bit for bit `err / ulp_at(x, false)` (both are
/// the correctly rounded value of the same real number).
#[inline(always)]
fn inv_ulp_f32(x: f64) -> f64 {
    let f = x.abs() as f32;
    let e = i64::from(((f.to_bits() >> 23) & 0xff) as u16).clamp(1, 254);
    f64::from_bits(((150 - e + 1023) as u64) << 52)
}

fn same_nonfinite(a: f64, b: f64) -> bool {
    (a.is_nan() && b.is_nan()) || (a.is_infinite() && a == b)
}

/// The worst point while [`compare`] runs: index, badness, component and
/// its (abs, rel, ULP) errors.
type Worst = (usize, f64, usize, (f64, f64, f64));

/// Compare `got` with `want` (one column per output component, same
/// lengths). `half` selects f16 ULPs. `describe(i)` names point i's
/// parameters for the listed points.
///
/// Long columns are judged in parts of 32,768 points on every core and the
/// parts' statistics merged in order ([`Stats::absorb`]), which gives the
/// same statistics, bit for bit, as one pass (tested).
pub fn compare(
    got: &[Vec<f64>],
    want: &[Vec<f64>],
    tol: &Tolerance,
    half: bool,
    describe: &(dyn Fn(usize) -> String + Sync),
) -> Stats {
    use rayon::prelude::*;
    let n = got.first().map_or(0, |c| c.len());
    if n < 2 * PART || rayon::current_num_threads() == 1 {
        return compare_with(got, want, tol, half, describe, true, 0);
    }
    let parts: Vec<Stats> = (0..n.div_ceil(PART))
        .into_par_iter()
        .map(|k| {
            let r = k * PART..n.min((k + 1) * PART);
            let g: Vec<&[f64]> = got.iter().map(|c| &c[r.clone()]).collect();
            let w: Vec<&[f64]> = want.iter().map(|c| &c[r.clone()]).collect();
            compare_with(&g, &w, tol, half, describe, true, r.start)
        })
        .collect();
    let mut s = Stats::default();
    for p in &parts {
        s.absorb(p);
    }
    s.finish(tol);
    s
}

/// Points per part of a long comparison (see [`compare`]).
const PART: usize = 1 << 15;

/// [`compare`] in one pass, with or without the division-free path for
/// points below the floor (`quick`; the tests compare the two). Point `i`
/// of the columns is point `first + i` of the comparison: its index and
/// description in the reports.
fn compare_with<C: AsRef<[f64]>>(
    got: &[C],
    want: &[C],
    tol: &Tolerance,
    half: bool,
    describe: &dyn Fn(usize) -> String,
    quick: bool,
    first: usize,
) -> Stats {
    let n = got.first().map_or(0, |c| c.as_ref().len());
    let comps = got.len();
    let mut s = Stats {
        points: n,
        components: comps,
        ..Stats::default()
    };
    let mut sum_sq = ExactSum::default();
    let mut bins = exact::Bins::default();
    let report = |i: usize, component: usize, abs: f64, rel: f64, ulp: f64| PointReport {
        index: first + i,
        params: describe(first + i),
        got: (0..comps).map(|c| got[c].as_ref()[i]).collect(),
        want: (0..comps).map(|c| want[c].as_ref()[i]).collect(),
        component,
        abs,
        rel,
        ulp,
        near_zero: near_zero(want[component].as_ref()[i]),
    };
    let bounds = Bounds::of(tol, comps);
    // The worst point so far: (index, badness, component, errors); its
    // report (which formats the point's parameters) is made once, at the end.
    let mut worst: Option<Worst> = None;
    // Points surely below `min(worst badness, 1)` need no badness: see
    // `Below`. Recomputed when the worst point changes.
    let mut below: Option<Below> = None;
    // The quick test runs over a block of points at once, with the floor
    // of the block's start. The floor only rises within the block (the
    // worst badness only grows, and is capped at 1), so a point below the
    // old floor is below the new one too; a point that is not goes to the
    // full judgement, which gives the same statistics either way.
    let mut block = Quick::default();
    let mut start = 0;
    while start < n {
        let len = QUICK_BLOCK.min(n - start);
        block.len = 0;
        if let Some(b) = &below {
            quick_block(Runs::best(), b, got, want, start, len, half, &mut block);
        }
        if block.len == len && block.below[..len].iter().all(|&b| b) {
            // Every point of the block is below: fold its errors in
            // vector steps. Below the floor they are finite or +∞ and never
            // NaN or −0 (`Below::component`), so the maxima do not depend
            // on the order; the exact sum never does.
            s.max_abs = max_of(s.max_abs, &block.max_abs[..len]);
            s.max_rel = max_of(s.max_rel, &block.max_rel[..len]);
            s.max_ulp = max_of(s.max_ulp, &block.max_ulp[..len]);
            for &v in &block.sum_sq[..len] {
                bins.add(v, &mut sum_sq);
            }
            start += len;
            continue;
        }
        for i in start..start + len {
            let j = i - start;
            if j < block.len && block.below[j] {
                s.max_abs = s.max_abs.max(block.max_abs[j]);
                s.max_rel = s.max_rel.max(block.max_rel[j]);
                s.max_ulp = s.max_ulp.max(block.max_ulp[j]);
                bins.add(block.sum_sq[j], &mut sum_sq);
                continue;
            }
            let p = bounds.assess(got, want, i, tol.nan, half);
            s.max_abs = s.max_abs.max(p.max_abs);
            s.max_rel = s.max_rel.max(p.max_rel);
            s.max_ulp = s.max_ulp.max(p.max_ulp);
            bins.add(p.sum_sq, &mut sum_sq);
            let (point_bad, point_comp, point_err, nonfinite, skip) =
                (p.badness, p.component, p.err, p.nonfinite, p.skip);
            if skip && point_bad == 0.0 {
                s.skipped += 1;
                continue;
            }
            if nonfinite {
                s.nonfinite += 1;
                if s.first_nonfinite.len() < LISTED {
                    s.first_nonfinite.push(report(
                        i,
                        point_comp,
                        point_err.0,
                        point_err.1,
                        point_err.2,
                    ));
                }
            }
            if point_bad > 1.0 {
                s.failed += 1;
                if s.first_failures.len() < LISTED && !nonfinite {
                    s.first_failures.push(report(
                        i,
                        point_comp,
                        point_err.0,
                        point_err.1,
                        point_err.2,
                    ));
                }
            }
            // Ties (every failing point infinitely over a zero tolerance, say)
            // go to the larger error, so the worst point is the worst.
            let worse = match &worst {
                None => point_bad > 0.0,
                Some((_, bad, _, err)) => {
                    point_bad > *bad
                        || (point_bad == *bad && (point_err.2, point_err.0) > (err.2, err.0))
                }
            };
            if worse {
                worst = Some((i, point_bad, point_comp, point_err));
                below = Below::new(&bounds, point_bad.min(1.0)).filter(|_| quick);
            }
        }
        start += len;
    }
    if let Some((i, bad, comp, err)) = worst {
        s.worst_badness = bad;
        s.worst = Some(report(i, comp, err.0, err.1, err.2));
    }
    bins.flush(&mut sum_sq);
    s.sum_sq = sum_sq;
    s.finish(tol);
    s
}

impl Stats {
    /// Add the statistics of the points that follow these (start from the
    /// first part's; then the next segment
    /// or shard of the same comparison, its point indices already in sweep
    /// order): counts add, maxima and the exact sums merge, the worst point
    /// by [`compare`]'s rule (a later point replaces it only when strictly
    /// worse), and the first listed points in order. Call
    /// [`Stats::finish`] after the last part; merging parts in order gives
    /// the statistics of one comparison over all their points.
    pub fn absorb(&mut self, p: &Stats) {
        let s = self;
        s.components = s.components.max(p.components);
        s.changed = match (s.changed, p.changed) {
            (Some(a), Some(b)) => Some(a + b),
            _ => None,
        };
        s.points += p.points;
        s.skipped += p.skipped;
        s.failed += p.failed;
        s.nonfinite += p.nonfinite;
        s.max_abs = s.max_abs.max(p.max_abs);
        s.max_rel = s.max_rel.max(p.max_rel);
        s.max_ulp = s.max_ulp.max(p.max_ulp);
        s.sum_sq.merge(&p.sum_sq);
        if let Some(w) = &p.worst {
            let worse = match &s.worst {
                None => p.worst_badness > 0.0,
                Some(cur) => {
                    p.worst_badness > s.worst_badness
                        || (p.worst_badness == s.worst_badness
                            && (w.ulp, w.abs) > (cur.ulp, cur.abs))
                }
            };
            if worse {
                s.worst_badness = p.worst_badness;
                s.worst = Some(w.clone());
            }
        }
        for f in &p.first_failures {
            if s.first_failures.len() < LISTED {
                s.first_failures.push(f.clone());
            }
        }
        for f in &p.first_nonfinite {
            if s.first_nonfinite.len() < LISTED {
                s.first_nonfinite.push(f.clone());
            }
        }
    }

    /// Move every listed point's index by `first` (the part's first point
    /// in the sweep).
    pub fn offset(&mut self, first: usize) {
        for p in self
            .worst
            .iter_mut()
            .chain(&mut self.first_failures)
            .chain(&mut self.first_nonfinite)
        {
            p.index += first;
        }
    }

    /// The figures derived from the counts, maxima and the sum: failing
    /// share, RMS, headroom and the stale-tolerance flag (by
    /// [`compare`], and again after shards are merged).
    pub fn finish(&mut self, tol: &Tolerance) {
        let s = self;
        let compared = s.points - s.skipped;
        s.fail_share = if compared > 0 {
            s.failed as f64 / compared as f64
        } else {
            0.0
        };
        s.rms_abs = if compared > 0 {
            (s.sum_sq.value() / (compared * s.components.max(1)) as f64).sqrt()
        } else {
            0.0
        };
        s.headroom = if s.worst_badness > 0.0 {
            1.0 / s.worst_badness
        } else {
            f64::INFINITY
        };
        // A zero tolerance cannot be loose; otherwise flag > 100× headroom.
        let zero_tol = [&tol.abs, &tol.rel, &tol.ulp]
            .iter()
            .all(|t| t.as_ref().is_none_or(|v| v.iter().all(|x| *x == 0.0)));
        s.stale_tolerance = !zero_tol && s.failed == 0 && s.headroom > 100.0;
    }
}

/// One point judged against a tolerance (see the module doc).
#[derive(Clone, Copy, Debug, Default)]
pub struct Assessment {
    /// Largest badness over the components; > 1 fails, ∞ for non-finite.
    pub badness: f64,
    /// The component with that badness, and its (abs, rel, ULP) error.
    pub component: usize,
    pub err: (f64, f64, f64),
    /// A non-finite result where the expected value is finite.
    pub nonfinite: bool,
    /// A component was not compared (expected non-finite under `Skip`).
    pub skip: bool,
    /// Over the finite components: largest errors and the sum of squared
    /// absolute errors.
    pub max_abs: f64,
    pub max_rel: f64,
    pub max_ulp: f64,
    pub sum_sq: f64,
}

impl Assessment {
    pub fn fails(&self) -> bool {
        self.badness > 1.0
    }
}

/// Judge point `i` of `got` against `want`.
pub fn assess(
    got: &[Vec<f64>],
    want: &[Vec<f64>],
    i: usize,
    tol: &Tolerance,
    half: bool,
) -> Assessment {
    Bounds::of(tol, got.len()).assess(got, want, i, tol.nan, half)
}

/// A tolerance's bounds picked per component once, for judging many points.
struct Bounds(Vec<[Option<f64>; 3]>);

impl Bounds {
    fn of(tol: &Tolerance, components: usize) -> Bounds {
        Bounds(
            (0..components)
                .map(|c| {
                    [
                        Tolerance::pick(&tol.abs, c),
                        Tolerance::pick(&tol.rel, c),
                        Tolerance::pick(&tol.ulp, c),
                    ]
                })
                .collect(),
        )
    }

    /// [`assess`] with the bounds picked.
    fn assess<C: AsRef<[f64]>>(
        &self,
        got: &[C],
        want: &[C],
        i: usize,
        nan: NanPolicy,
        half: bool,
    ) -> Assessment {
        let mut p = Assessment::default();
        let inf = (f64::INFINITY, f64::INFINITY, f64::INFINITY);
        for (c, bounds) in self.0.iter().enumerate() {
            let (g, w) = (got[c].as_ref()[i], want[c].as_ref()[i]);
            if !w.is_finite() {
                match nan {
                    NanPolicy::Skip => p.skip = true,
                    NanPolicy::Match => {
                        if !same_nonfinite(g, w) {
                            (p.badness, p.component, p.err) = (f64::INFINITY, c, inf);
                        }
                    }
                }
                continue;
            }
            if !g.is_finite() {
                p.nonfinite = true;
                (p.badness, p.component, p.err) = (f64::INFINITY, c, inf);
                continue;
            }
            let abs = (g - w).abs();
            if abs == 0.0 {
                // Every error and the badness are 0: nothing to record.
                continue;
            }
            let rel = rel_error(abs, w);
            let ulp = ulp_error(abs, w, half);
            p.max_abs = p.max_abs.max(abs);
            p.max_rel = p.max_rel.max(rel);
            p.max_ulp = p.max_ulp.max(ulp);
            p.sum_sq += abs * abs;
            let mut bad = f64::INFINITY;
            for (err, bound) in [abs, rel, ulp].into_iter().zip(bounds) {
                if let Some(t) = bound {
                    bad = bad.min(ratio(err, *t));
                }
            }
            if bad > p.badness {
                (p.badness, p.component, p.err) = (bad, c, (abs, rel, ulp));
            }
        }
        p
    }
}

/// Points per block of the quick test ([`quick_block`]).
const QUICK_BLOCK: usize = 64;

/// The errors of a block of points without their badness: what [`compare`]
/// needs of a point that can neither fail nor be the worst, and whether
/// each point is one.
struct Quick {
    /// Points of the block filled in.
    len: usize,
    below: [bool; QUICK_BLOCK],
    max_abs: [f64; QUICK_BLOCK],
    max_rel: [f64; QUICK_BLOCK],
    max_ulp: [f64; QUICK_BLOCK],
    sum_sq: [f64; QUICK_BLOCK],
}

impl Default for Quick {
    fn default() -> Quick {
        Quick {
            len: 0,
            below: [false; QUICK_BLOCK],
            max_abs: [0.0; QUICK_BLOCK],
            max_rel: [0.0; QUICK_BLOCK],
            max_ulp: [0.0; QUICK_BLOCK],
            sum_sq: [0.0; QUICK_BLOCK],
        }
    }
}

/// Thresholds below which an error's ratio to its bound is surely under a
/// floor `f` (`0 < f ≤ 1`, the worst badness so far capped at 1): per
/// component and bound, `f · t · (1 − 10⁻¹²)` (−1 for an absent bound).
/// An error under it has `err / t < f` in exact arithmetic with a margin far
/// wider than the division's rounding, so the rounded ratio is under `f`
/// too. A point whose every component has some error under its threshold
/// has a badness under `f`: it does not fail (`f ≤ 1`) and is not the worst
/// (`f` ≤ the worst badness), so [`compare`] needs only its maxima and sum,
/// which cost no division by a bound. Every other point is judged by
/// [`Bounds::assess`], so the statistics are bit for bit the same.
struct Below(Vec<[f64; 3]>);

at_widths! {
    /// For the `len` points from `start` (`len ≤ QUICK_BLOCK`): whether
    /// each is surely below the floor with every value finite, and if so its
    /// maxima and sum, into `q`. The errors are those of
    /// [`Bounds::assess`], in the same operations, and a component with no
    /// error adds nothing, as there; the relative error is divided out for
    /// every point (branch-free, so the loop vectorises), which leaves the
    /// largest one the same.
    ///
    /// Compiled for every width and run at `at`, the widest the machine runs
    /// in [`compare`]: the same IEEE operations at any vector width, so the
    /// same bits (tested).
    #[allow(clippy::too_many_arguments)]
    fn quick_block<C: AsRef<[f64]>>(
        at: Runs,
        b: &Below,
        got: &[C],
        want: &[C],
        start: usize,
        len: usize,
        half: bool,
        q: &mut Quick,
    ) {
        q.len = len;
        // One copy per format, so neither holds the other's branch (which
        // kept the loop from vectorising).
        if half {
            b.steps::<true, C>(got, want, start, q);
        } else {
            b.steps::<false, C>(got, want, start, q);
        }
    }
}

impl Below {
    fn new(bounds: &Bounds, floor: f64) -> Option<Below> {
        if floor.is_nan() || floor <= 0.0 {
            return None;
        }
        Some(Below(
            bounds
                .0
                .iter()
                .map(|b| b.map(|t| t.map_or(-1.0, |t| floor * t * (1.0 - 1e-12))))
                .collect(),
        ))
    }

    /// [`quick_block`] in one format: eight points at a time, every
    /// component's errors folded in registers and each result stored once,
    /// then the rest one at a time.
    #[inline(always)]
    fn steps<const HALF: bool, C: AsRef<[f64]>>(
        &self,
        got: &[C],
        want: &[C],
        start: usize,
        q: &mut Quick,
    ) {
        let mut j = 0;
        while j + LANE <= q.len {
            self.lanes::<HALF, LANE, C>(got, want, start, j, q);
            j += LANE;
        }
        while j < q.len {
            self.lanes::<HALF, 1, C>(got, want, start, j, q);
            j += 1;
        }
    }

    /// Points `j..j + N` of the block (from point `start` of the columns)
    /// into `q`: whether each is below, and its errors summed and
    /// maximised over the components in order.
    #[inline(always)]
    fn lanes<const HALF: bool, const N: usize, C: AsRef<[f64]>>(
        &self,
        got: &[C],
        want: &[C],
        start: usize,
        j: usize,
        q: &mut Quick,
    ) {
        let mut below = [true; N];
        let (mut max_abs, mut max_rel, mut max_ulp, mut sum_sq) =
            ([0.0; N], [0.0; N], [0.0; N], [0.0; N]);
        for (c, thr) in self.0.iter().enumerate() {
            let at = start + j..start + j + N;
            let g: &[f64; N] = got[c].as_ref()[at.clone()].try_into().expect("N points");
            let w: &[f64; N] = want[c].as_ref()[at].try_into().expect("N points");
            for l in 0..N {
                let (g, w) = (g[l], w[l]);
                let abs = (g - w).abs();
                let aw = w.abs();
                let ulp = ulp_error(abs, w, HALF);
                let zero = abs == 0.0;
                let under = (abs < thr[0]) | (abs < thr[1] * aw) | (ulp < thr[2]);
                below[l] &= w.is_finite() & g.is_finite() & (zero | under);
                let (abs, rel, ulp) = if zero {
                    (0.0, 0.0, 0.0)
                } else {
                    (abs, rel_error(abs, w), ulp)
                };
                max_abs[l] = f64::max(max_abs[l], abs);
                max_rel[l] = f64::max(max_rel[l], rel);
                max_ulp[l] = f64::max(max_ulp[l], ulp);
                sum_sq[l] += abs * abs;
            }
        }
        q.below[j..j + N].copy_from_slice(&below);
        q.max_abs[j..j + N].copy_from_slice(&max_abs);
        q.max_rel[j..j + N].copy_from_slice(&max_rel);
        q.max_ulp[j..j + N].copy_from_slice(&max_ulp);
        q.sum_sq[j..j + N].copy_from_slice(&sum_sq);
    }
}

/// Points per step of [`quick_block`]: one AVX-512 register of f64.
const LANE: usize = 8;

/// The largest of `m` and `xs` by `f64::max`, eight lanes at a time. Equal
/// to folding `xs` into `m` one at a time when no value is NaN and no
/// zero is negative (the order then cannot change the result).
#[inline(always)]
fn max_of(m: f64, xs: &[f64]) -> f64 {
    let mut acc = [m; 8];
    let mut chunks = xs.chunks_exact(8);
    for c in &mut chunks {
        for (a, &x) in acc.iter_mut().zip(c) {
            *a = a.max(x);
        }
    }
    let m = chunks.remainder().iter().fold(m, |m, &x| m.max(x));
    acc.iter().fold(m, |m, &a| m.max(a))
}

/// The relative error of a non-zero absolute error `abs` against `w` (∞
/// where `w` is 0); [`Bounds::assess`] and [`quick_block`] share it, so
/// both compute the same bits.
#[inline(always)]
fn rel_error(abs: f64, w: f64) -> f64 {
    if w != 0.0 {
        abs / w.abs()
    } else {
        f64::INFINITY
    }
}

/// The error `abs` in ULPs of the format at `w` (f16 when `half`).
#[inline(always)]
fn ulp_error(abs: f64, w: f64, half: bool) -> f64 {
    if half {
        abs / ulp_at(w, true)
    } else {
        abs * inv_ulp_f32(w)
    }
}

fn ratio(err: f64, bound: f64) -> f64 {
    if err == 0.0 {
        0.0
    } else if bound == 0.0 {
        f64::INFINITY
    } else {
        err / bound
    }
}

/// Count points whose output bits differ at all.
pub fn changed_bits(a: &[Vec<u32>], b: &[Vec<u32>]) -> usize {
    let n = a.first().map_or(0, |c| c.len());
    (0..n)
        .filter(|&i| a.iter().zip(b).any(|(x, y)| x[i] != y[i]))
        .count()
}

/// π as it is often mistyped: 3.14 (written as a quotient so it is not taken
/// for an approximation of π meant here).
const PI_AS_3_14: f64 = 314.0 / 100.0;

/// Known constant factors a wrong formula tends to introduce, with what
/// each usually means (`got / want`).
const FACTORS: &[(f64, &str)] = &[
    (std::f64::consts::PI, "π (a missing 1/π?)"),
    (1.0 / std::f64::consts::PI, "1/π (an extra 1/π?)"),
    (2.0, "2"),
    (0.5, "1/2"),
    (4.0, "4 (the 1/(4 n·l n·v) denominator?)"),
    (0.25, "1/4 (the 1/(4 n·l n·v) denominator applied twice?)"),
    (
        std::f64::consts::PI / PI_AS_3_14,
        "π/3.14 (dividing by 3.14 instead of π?)",
    ),
    (
        PI_AS_3_14 / std::f64::consts::PI,
        "3.14/π (3.14 written for π?)",
    ),
    (
        std::f64::consts::PI / (22.0 / 7.0),
        "π/(22/7) (dividing by 22/7 instead of π?)",
    ),
    (
        (22.0 / 7.0) / std::f64::consts::PI,
        "(22/7)/π (22/7 written for π?)",
    ),
];

/// A factor between results and expected values (see [`constant_factor`]).
#[derive(Clone, Debug, PartialEq)]
pub struct Factor {
    /// The ratio result / expected, the same on every point it explains.
    pub factor: f64,
    /// A known factor it matches.
    pub named: Option<&'static str>,
    /// Failing points it explains (those with an expected value far enough
    /// from zero for a ratio to mean something).
    pub points: usize,
}

/// If `got / want` is one constant on every failing point, name it.
///
/// The ratio must be constant: its spread over the points (at least three
/// distinct expected values, each at least 1e-6 of the largest expected
/// magnitude, so near-zero values cannot fake a factor) must be under 1e-3
/// of the ratio, and, for a ratio near 1, under a tenth of its distance from
/// 1 (rounding noise moves the ratio as much as it moves it away from 1; a
/// real factor such as π/3.14 = 1.000507 moves every point the same way).
pub fn constant_factor(got: &[Vec<f64>], want: &[Vec<f64>], failing: &[usize]) -> Option<Factor> {
    let scale = failing
        .iter()
        .flat_map(|&i| want.iter().map(move |c| c[i].abs()))
        .filter(|w| w.is_finite())
        .fold(0.0, f64::max);
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    let mut distinct: Vec<f64> = Vec::new();
    let mut points = 0;
    for &i in failing {
        let mut used = false;
        for c in 0..got.len() {
            let (g, w) = (got[c][i], want[c][i]);
            if !g.is_finite() || !w.is_finite() {
                return None; // not a factor: a non-finite result
            }
            if w.abs() > 1e-6 * scale && w != 0.0 {
                let r = g / w;
                lo = lo.min(r);
                hi = hi.max(r);
                used = true;
                if distinct.len() < 3 && !distinct.contains(&w) {
                    distinct.push(w);
                }
            }
        }
        points += usize::from(used);
    }
    if distinct.len() < 3 || lo <= 0.0 || (hi - lo) > 1e-3 * lo {
        return None;
    }
    let r = (lo + hi) / 2.0;
    if (hi - lo) > 0.1 * (r - 1.0).abs() {
        return None; // rounding noise around 1, not a factor
    }
    let named = FACTORS
        .iter()
        .find(|(f, _)| ((r - f) / f).abs() < 1e-3 * (f - 1.0).abs().max(1e-2))
        .map(|(_, n)| *n);
    Some(Factor {
        factor: r,
        named,
        points,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn d(_: usize) -> String {
        String::new()
    }

    /// Expected values over many scales, results with errors spread over
    /// many scales (some exactly at a bound, some zero, some non-finite),
    /// results whose errors grow point by point, and tolerances with one,
    /// two or three bounds, zero bounds and none.
    #[allow(clippy::type_complexity)]
    fn error_cases(
        n: usize,
        seed: u64,
    ) -> (Vec<Vec<f64>>, Vec<Vec<f64>>, Vec<Vec<f64>>, Vec<Tolerance>) {
        let mut rng = crate::sweep::Rng::new(seed);
        let want: Vec<Vec<f64>> = (0..3)
            .map(|_| {
                (0..n)
                    .map(|_| (rng.unit() - 0.2) * 10f64.powi((rng.next() % 9) as i32 - 4))
                    .collect()
            })
            .collect();
        let got: Vec<Vec<f64>> = want
            .iter()
            .map(|col| {
                col.iter()
                    .enumerate()
                    .map(|(i, &w)| match rng.next() % 400 {
                        0..=9 => w,
                        10 => f64::NAN,
                        11..=14 => w + 1e-3,
                        15..=18 => w * (1.0 + 1e-4),
                        19..=30 => w * (1.0 + (rng.unit() - 0.5) * 10f64.powi(-((i % 9) as i32))),
                        _ => w * (1.0 + (rng.unit() - 0.5) * 1e-7),
                    })
                    .collect()
            })
            .collect();
        // A second set whose errors grow point by point (each a new
        // maximum), all inside the looser bounds.
        let rising: Vec<Vec<f64>> = want
            .iter()
            .map(|col| {
                col.iter()
                    .enumerate()
                    .map(|(i, &w)| w * (1.0 + 1e-9 * i as f64))
                    .collect()
            })
            .collect();
        let tol = |abs: Option<f64>, rel: Option<f64>, ulp: Option<f64>| Tolerance {
            abs: abs.map(|x| vec![x]),
            rel: rel.map(|x| vec![x]),
            ulp: ulp.map(|x| vec![x]),
            ..Tolerance::exact("test")
        };
        let tols = vec![
            tol(Some(1e-3), None, None),
            tol(None, Some(1e-4), None),
            tol(Some(1e-6), Some(1e-4), None),
            tol(None, None, Some(4.0)),
            tol(Some(1e-2), Some(1e-1), Some(1e6)),
            tol(Some(0.0), None, None),
            tol(None, None, None),
            Tolerance {
                rel: Some(vec![1e-5, 1e-1, 0.0]),
                ..tol(None, None, None)
            },
        ];
        (want, got, rising, tols)
    }

    #[test]
    fn the_division_free_path_changes_no_statistic() {
        // Against every tolerance the statistics with the quick path are
        // those of judging every point in full.
        let (want, got, rising, tols) = error_cases(4000, 5);
        for t in &tols {
            for half in [false, true] {
                // Most points pass well inside the bounds, so the floor
                // settles early and the quick path is taken.
                for got in [&got, &rising] {
                    let fast = compare_with(got, &want, t, half, &d, true, 0);
                    let full = compare_with(got, &want, t, half, &d, false, 0);
                    // Debug text: NaN results in the listed points compare equal.
                    assert_eq!(
                        format!("{fast:?}"),
                        format!("{full:?}"),
                        "{t:?} half {half}"
                    );
                }
            }
        }
    }

    #[test]
    fn whole_blocks_below_the_floor_keep_their_largest_errors() {
        // The first point's relative error of 1e-6 sets the floor; the
        // others' of 1e-8 are below it. One point with a large `want` has
        // the largest absolute error (and ULPs) but a tiny relative one, so
        // it is below the floor too, in a block that is all below. Wherever
        // it lies in its block, the maxima must include it, as judging
        // every point in full does.
        let n = 8 * QUICK_BLOCK;
        let t = Tolerance {
            rel: Some(vec![1e-4]),
            ..Tolerance::exact("test")
        };
        for at in [
            4 * QUICK_BLOCK,
            4 * QUICK_BLOCK + 1,
            4 * QUICK_BLOCK + 31,
            5 * QUICK_BLOCK - 1,
            n - 1,
        ] {
            let mut want = vec![1.0; n];
            let mut got = vec![1.0 + 1e-8; n];
            got[0] = 1.0 + 1e-6;
            want[at] = 1e6;
            got[at] = 1e6 + 1e-2;
            let fast = compare_with(&[&got[..]], &[&want[..]], &t, false, &d, true, 0);
            let full = compare_with(&[&got[..]], &[&want[..]], &t, false, &d, false, 0);
            assert_eq!(format!("{fast:?}"), format!("{full:?}"), "at {at}");
            assert_eq!(fast.max_abs, (1e6f64 + 1e-2) - 1e6, "at {at}");
        }
    }

    #[test]
    fn parts_on_several_cores_give_the_statistics_of_one_pass() {
        // Over three parts and a ragged end, with the points named by their
        // index: the merged statistics (worst and listed points, their
        // descriptions, the exact sum) are those of one pass.
        let n = 3 * PART + 777;
        let (want, got, rising, tols) = error_cases(n, 11);
        let name = |i: usize| format!("point {i}");
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(2)
            .build()
            .expect("pool");
        for t in &tols {
            for got in [&got, &rising] {
                let parts = pool.install(|| compare(got, &want, t, false, &name));
                let one = compare_with(got, &want, t, false, &name, true, 0);
                assert_eq!(format!("{parts:?}"), format!("{one:?}"), "{t:?}");
            }
        }
    }

    #[test]
    fn the_quick_test_gives_the_same_bits_at_every_vector_width() {
        // Every copy this machine runs against the baseline copy.
        let (want, got, rising, tols) = error_cases(3 * QUICK_BLOCK + 9, 23);
        for t in &tols {
            let Some(b) = Below::new(&Bounds::of(t, 3), 0.5) else {
                continue;
            };
            for half in [false, true] {
                for got in [&got, &rising] {
                    for start in (0..want[0].len()).step_by(QUICK_BLOCK) {
                        let len = QUICK_BLOCK.min(want[0].len() - start);
                        let run = |at: Runs| {
                            let mut q = Quick::default();
                            quick_block(at, &b, got, &want, start, len, half, &mut q);
                            q
                        };
                        let (baseline, wider) = Runs::all()
                            .split_first()
                            .map(|(b, w)| (*b, w.to_vec()))
                            .expect("the baseline runs");
                        assert_eq!(baseline.width(), crate::widths::Width::Baseline);
                        let base = run(baseline);
                        for at in wider {
                            let q = run(at);
                            let width = at.width();
                            assert_eq!(q.below, base.below, "{width:?}");
                            for (x, y) in [
                                (q.max_abs, base.max_abs),
                                (q.max_rel, base.max_rel),
                                (q.max_ulp, base.max_ulp),
                                (q.sum_sq, base.sum_sq),
                            ] {
                                assert_eq!(
                                    x.map(f64::to_bits),
                                    y.map(f64::to_bits),
                                    "{width:?} {t:?}"
                                );
                            }
                        }
                    }
                }
            }
        }
    }

    #[test]
    fn spacings_are_the_formats_own() {
        // IEEE 754 binary32 / binary16: 1 has spacing 2^-23 / 2^-10; the
        // smallest subnormal is the spacing below the normal range; the
        // largest finite values 3.4028235e38 / 65504 have spacing 2^104 / 32.
        assert_eq!(ulp_at(1.0, false), 2f64.powi(-23));
        assert_eq!(ulp_at(-1.5, false), 2f64.powi(-23));
        assert_eq!(ulp_at(0.0, false), 2f64.powi(-149));
        assert_eq!(ulp_at(1e-42, false), 2f64.powi(-149));
        assert_eq!(ulp_at(f64::from(f32::MAX), false), 2f64.powi(104));
        assert_eq!(ulp_at(1e300, false), 2f64.powi(104));
        assert_eq!(ulp_at(1.0, true), 2f64.powi(-10));
        assert_eq!(ulp_at(0.0, true), 2f64.powi(-24));
        assert_eq!(ulp_at(65504.0, true), 32.0);
        assert_eq!(ulp_at(1e9, true), 32.0);
        // A value that rounds up into the next binade takes its spacing.
        assert_eq!(ulp_at(2.0 - 1e-12, false), 2f64.powi(-22));
        // Against the neighbours of every f32 in a sample of binades.
        for k in 1..5000u32 {
            let f = f32::from_bits(k * 427_000);
            if f.is_finite() && f < f32::MAX {
                let next = f32::from_bits(f.to_bits() + 1);
                assert_eq!(
                    ulp_at(f64::from(f), false),
                    f64::from(next) - f64::from(f),
                    "{f:e}"
                );
            }
        }
    }

    #[test]
    fn the_reciprocal_f32_spacing_is_exact() {
        // Every binade's edges and middle, zero, subnormals, the largest
        // finite value and values that round to infinity: the product with
        // the reciprocal is bit for bit the quotient by the spacing.
        let mut xs = vec![
            0.0,
            f64::MIN_POSITIVE,
            1e-300,
            1e300,
            f64::from(f32::MAX),
            3.5e38,
        ];
        for e in -150..=128 {
            let p = 2f64.powi(e);
            xs.extend([
                p,
                p * 1.5,
                p * (1.0 - f64::EPSILON),
                p * (1.0 + f64::EPSILON),
            ]);
        }
        xs.extend((1..1000).map(|k| f64::from(f32::from_bits(k * 4_294_967))));
        for &x in &xs {
            for x in [x, -x] {
                for err in [1.0, 0.1, 3e-310, 7e-45, 1.0e30, f64::MAX] {
                    assert_eq!(
                        (err * inv_ulp_f32(x)).to_bits(),
                        (err / ulp_at(x, false)).to_bits(),
                        "x = {x:e}, err = {err:e}"
                    );
                }
            }
        }
    }

    #[test]
    fn a_point_passes_when_any_bound_holds() {
        let tol = Tolerance {
            abs: Some(vec![1e-3]),
            rel: Some(vec![1e-6]),
            reason: "r".into(),
            ..Tolerance::default()
        };
        let s = compare(&[vec![1.0005, 2.0]], &[vec![1.0, 2.01]], &tol, false, &d);
        assert_eq!(s.failed, 1); // 2.0 vs 2.01: abs 0.01 and rel 5e-3 both exceed
        assert_eq!(s.worst.as_ref().unwrap().index, 1);
        assert!((s.max_abs - 0.01).abs() < 1e-12);
    }

    #[test]
    fn nonfinite_results_are_failures_and_listed() {
        let tol = Tolerance {
            abs: Some(vec![1.0]),
            reason: "r".into(),
            ..Tolerance::default()
        };
        let s = compare(
            &[vec![f64::NAN, 1.0, f64::NAN]],
            &[vec![1.0, 1.0, f64::NAN]],
            &tol,
            false,
            &d,
        );
        assert_eq!((s.failed, s.nonfinite), (1, 1));
        assert_eq!(s.first_nonfinite[0].index, 0);
        let skip = Tolerance {
            nan: NanPolicy::Skip,
            ..tol
        };
        let s = compare(
            &[vec![1.0, 5.0]],
            &[vec![f64::INFINITY, 5.0]],
            &skip,
            false,
            &d,
        );
        assert_eq!((s.failed, s.skipped), (0, 1));
    }

    #[test]
    fn headroom_and_stale_tolerances() {
        let tol = Tolerance {
            ulp: Some(vec![1000.0]),
            reason: "r".into(),
            ..Tolerance::default()
        };
        let got = vec![f64::from(f32::from_bits(1.0f32.to_bits() + 2))];
        let s = compare(&[got], &[vec![1.0]], &tol, false, &d);
        assert!((s.max_ulp - 2.0).abs() < 1e-9);
        assert!((s.headroom - 500.0).abs() < 1e-6);
        assert!(s.stale_tolerance);
    }

    #[test]
    fn constant_factors_are_named() {
        let want = vec![vec![1.0, 2.0, 3.0, 4.0]];
        let got = vec![want[0].iter().map(|x| x * std::f64::consts::PI).collect()];
        let f = constant_factor(&got, &want, &[0, 1, 2, 3]).unwrap();
        assert_eq!(f.named, Some("π (a missing 1/π?)"));
        assert_eq!(f.points, 4);
        assert!(
            constant_factor(&[vec![1.0, 4.0, 9.0]], &[vec![1.0, 2.0, 3.0]], &[0, 1, 2]).is_none()
        );
    }

    #[test]
    fn the_worst_point_is_the_worst_even_against_an_exact_tolerance() {
        // Every changed point is infinitely over a zero bound; the worst is
        // the one with the largest error, not the first.
        let one = f64::from(f32::from_bits(1.0f32.to_bits() + 1));
        let three = f64::from(f32::from_bits(1.0f32.to_bits() + 3));
        let s = compare(
            &[vec![one, three, one]],
            &[vec![1.0, 1.0, 1.0]],
            &Tolerance::exact("r"),
            false,
            &d,
        );
        assert_eq!(s.failed, 3);
        assert_eq!(s.worst.as_ref().unwrap().index, 1);
    }

    #[test]
    fn near_1_factors_are_named_only_when_constant() {
        let want = vec![vec![0.1, 0.2, 0.3, 0.4]];
        let got = vec![want[0]
            .iter()
            .map(|x| x * std::f64::consts::PI / PI_AS_3_14)
            .collect()];
        let f = constant_factor(&got, &want, &[0, 1, 2, 3]).unwrap();
        assert_eq!(f.named, Some("π/3.14 (dividing by 3.14 instead of π?)"));
        // Rounding noise of either sign is no factor.
        let noisy = vec![vec![
            0.1 * (1.0 + 1e-7),
            0.2 * (1.0 - 1e-7),
            0.3 * (1.0 + 2e-7),
        ]];
        assert!(constant_factor(&noisy, &[vec![0.1, 0.2, 0.3]], &[0, 1, 2]).is_none());
        // Three points sharing one near-zero expected value are no factor.
        let tiny = vec![vec![1e-12, 1e-12, 1e-12, 1.0]];
        assert!(constant_factor(&[vec![0.08, 0.08, 0.08, 1.0]], &tiny, &[0, 1, 2]).is_none());
    }
}
