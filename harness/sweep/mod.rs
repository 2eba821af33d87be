//! Parameter sweeps: named domains combined as a cartesian grid, plus seeded
//! random points, plus unit directions built from angles.
//!
//! Domains: evenly spaced (`linear`), log-spaced (`log`), explicit `list`,
//! `edges` (the values that break shading code: both ends, the next f32 inside
//! each end, 1e-4 inside each end, the middle) and `direction` (θ, φ in
//! degrees from the +z axis → the unit vector (sin θ cos φ, sin θ sin φ, cos θ)),
//! and `every_f16` / `every_f32` (every value of the format in a range, in order:
//! [`every`]).
//! Points are produced as f64 columns, one per scalar component.

pub mod columns;
pub mod every;
pub mod expr;
pub mod shard;

use std::fmt;

pub use expr::{Expr, ExprError, Value};
pub use shard::Shard;

/// The values one sweep parameter takes.
#[derive(Clone, Debug, PartialEq)]
pub enum Domain {
    Linear {
        lo: f64,
        hi: f64,
        n: usize,
    },
    Log {
        lo: f64,
        hi: f64,
        n: usize,
    },
    List(Vec<f64>),
    Edges {
        lo: f64,
        hi: f64,
    },
    /// Every value of `format` in [lo, hi], in increasing order.
    Every {
        lo: f64,
        hi: f64,
        format: every::Format,
    },
    /// A unit vector from polar angle θ and azimuth φ, both in degrees.
    Direction {
        theta: Box<Domain>,
        phi: Box<Domain>,
    },
}

/// Seeded random points added after the grid.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Random {
    pub count: usize,
    pub seed: u64,
}

/// A sweep: parameters in order (the grid varies the last fastest) and
/// optional random points.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct Sweep {
    pub params: Vec<(String, Domain)>,
    pub random: Option<Random>,
}

/// The generated points: per parameter, its width (1 or 3) and one f64 column
/// per component.
#[derive(Clone, Debug, Default)]
pub struct Points {
    pub names: Vec<String>,
    pub widths: Vec<usize>,
    pub columns: Vec<Vec<Vec<f64>>>,
    pub len: usize,
}

impl Points {
    /// Value of parameter `p` at point `i`.
    pub fn value(&self, p: usize, i: usize) -> Value {
        let c = &self.columns[p];
        if self.widths[p] == 1 {
            Value::S(c[0][i])
        } else {
            Value::V([c[0][i], c[1][i], c[2][i]])
        }
    }

    /// `name=value, ...` for point `i`.
    pub fn describe(&self, i: usize) -> String {
        (0..self.names.len())
            .map(|p| match self.value(p, i) {
                Value::S(x) => format!("{}={}", self.names[p], fmt_num(x)),
                Value::V(v) => format!(
                    "{}=({}, {}, {})",
                    self.names[p],
                    fmt_num(v[0]),
                    fmt_num(v[1]),
                    fmt_num(v[2])
                ),
            })
            .collect::<Vec<_>>()
            .join(", ")
    }
}

/// Short decimal for reports (6 significant digits).
pub fn fmt_num(x: f64) -> String {
    if x == 0.0 || (1e-4..1e6).contains(&x.abs()) {
        let s = format!("{x:.6}");
        let s = s.trim_end_matches('0').trim_end_matches('.');
        if s.is_empty() || s == "-" {
            "0".into()
        } else {
            s.to_string()
        }
    } else {
        format!("{x:.5e}")
    }
}

impl Domain {
    pub fn width(&self) -> usize {
        match self {
            Domain::Direction { .. } => 3,
            _ => 1,
        }
    }

    /// The grid values of a scalar domain (angles for directions' parts).
    pub fn values(&self) -> Vec<f64> {
        match self {
            Domain::Linear { lo, hi, n } => match n {
                0 => vec![],
                1 => vec![*lo],
                _ => (0..*n)
                    .map(|i| lo + (hi - lo) * i as f64 / (*n - 1) as f64)
                    .collect(),
            },
            Domain::Log { lo, hi, n } => match n {
                0 => vec![],
                1 => vec![*lo],
                _ => (0..*n)
                    .map(|i| lo * (hi / lo).powf(i as f64 / (*n - 1) as f64))
                    .collect(),
            },
            Domain::List(v) => v.clone(),
            Domain::Every { lo, hi, format } => match format.span(*lo, *hi) {
                Some((a, b)) => (a..=b).map(|k| format.value(k)).collect(),
                None => vec![],
            },
            Domain::Edges { lo, hi } => {
                let (l32, h32) = (*lo as f32, *hi as f32);
                let next_up = f64::from(f32::from_bits(if l32 >= 0.0 {
                    l32.to_bits() + 1
                } else {
                    l32.to_bits() - 1
                }));
                let next_down = f64::from(f32::from_bits(if h32 > 0.0 {
                    h32.to_bits() - 1
                } else {
                    h32.to_bits() + 1
                }));
                let mut v = vec![
                    *lo,
                    next_up,
                    lo + 1e-4,
                    (lo + hi) / 2.0,
                    hi - 1e-4,
                    next_down,
                    *hi,
                ];
                v.retain(|x| *x >= *lo && *x <= *hi);
                v.sort_by(f64::total_cmp);
                v.dedup();
                v
            }
            Domain::Direction { .. } => vec![],
        }
    }

    /// Number of grid values (without generating them).
    pub fn count(&self) -> usize {
        self.checked_count()
            .and_then(|n| usize::try_from(n).ok())
            .unwrap_or(usize::MAX)
    }

    /// Number of grid values, `None` when it does not fit in 64 bits.
    pub fn checked_count(&self) -> Option<u64> {
        match self {
            Domain::Linear { n, .. } | Domain::Log { n, .. } => Some(*n as u64),
            Domain::List(v) => Some(v.len() as u64),
            Domain::Every { lo, hi, format } => Some(format.count(*lo, *hi)),
            Domain::Direction { theta, phi } => {
                theta.checked_count()?.checked_mul(phi.checked_count()?)
            }
            d @ Domain::Edges { .. } => Some(d.values().len() as u64),
        }
    }

    /// Whether `other` is this domain, bit for bit (`==` would call two
    /// lists holding a NaN different).
    fn same_as(&self, other: &Domain) -> bool {
        let eq = |a: &f64, b: &f64| a.to_bits() == b.to_bits();
        match (self, other) {
            (Domain::Linear { lo, hi, n }, Domain::Linear { lo: l, hi: h, n: m })
            | (Domain::Log { lo, hi, n }, Domain::Log { lo: l, hi: h, n: m }) => {
                eq(lo, l) && eq(hi, h) && n == m
            }
            (Domain::List(a), Domain::List(b)) => {
                a.len() == b.len() && a.iter().zip(b).all(|(x, y)| eq(x, y))
            }
            (Domain::Edges { lo, hi }, Domain::Edges { lo: l, hi: h }) => eq(lo, l) && eq(hi, h),
            (
                Domain::Every { lo, hi, format },
                Domain::Every {
                    lo: l,
                    hi: h,
                    format: f,
                },
            ) => eq(lo, l) && eq(hi, h) && format == f,
            (Domain::Direction { theta, phi }, Domain::Direction { theta: t, phi: p }) => {
                theta.same_as(t) && phi.same_as(p)
            }
            _ => false,
        }
    }

    /// Where [`Sweep::points_in`] reads the grid values: an exhaustive
    /// domain computes each from its ordinal, the others look it up in their
    /// [`Domain::cache`].
    fn source(&self) -> Source {
        match self {
            Domain::Every { lo, hi, format } => {
                Source::Every(*format, format.span(*lo, *hi).map_or(0, |(a, _)| a))
            }
            d => Source::Table(d.cache()),
        }
    }

    /// The grid values, computed once per sweep: a scalar domain's values,
    /// or a direction domain's unit vectors (θ slowest), one column per
    /// component, so no point recomputes a sine or cosine.
    fn cache(&self) -> Vec<Vec<f64>> {
        match self {
            Domain::Direction { theta, phi } => {
                let (t, p) = (theta.values(), phi.values());
                let mut cols: Vec<Vec<f64>> = (0..3)
                    .map(|_| Vec::with_capacity(t.len() * p.len()))
                    .collect();
                for &a in &t {
                    for &b in &p {
                        for (c, x) in cols.iter_mut().zip(direction(a, b).components()) {
                            c.push(x);
                        }
                    }
                }
                cols
            }
            d => vec![d.values()],
        }
    }

    /// How many numbers [`Domain::random`] draws from the generator.
    fn draws(&self) -> u64 {
        match self {
            Domain::Direction { theta, phi } => theta.draws() + phi.draws(),
            _ => 1,
        }
    }

    /// A uniformly random value of the domain's range.
    fn random(&self, rng: &mut Rng) -> Value {
        match self {
            Domain::Linear { lo, hi, .. } | Domain::Edges { lo, hi } => {
                Value::S(lo + (hi - lo) * rng.unit())
            }
            Domain::Log { lo, hi, .. } => Value::S(lo * (hi / lo).powf(rng.unit())),
            Domain::List(v) => Value::S(v[(rng.next() % v.len().max(1) as u64) as usize]),
            // Uniform over the format's values in the range, not over the reals.
            Domain::Every { lo, hi, format } => match format.span(*lo, *hi) {
                Some((a, b)) => {
                    Value::S(format.value(a + (rng.next() % (b - a + 1) as u64) as i64))
                }
                None => Value::S(f64::NAN),
            },
            Domain::Direction { theta, phi } => {
                let (Value::S(t), Value::S(p)) = (theta.random(rng), phi.random(rng)) else {
                    unreachable!()
                };
                direction(t, p)
            }
        }
    }
}

/// The unit vector at polar angle `theta` and azimuth `phi`, in degrees.
pub fn direction(theta: f64, phi: f64) -> Value {
    let (t, p) = (theta.to_radians(), phi.to_radians());
    Value::V([t.sin() * p.cos(), t.sin() * p.sin(), t.cos()])
}

/// SplitMix64: a small, well-known generator; the same seed gives the same
/// points on every platform. Also the deterministic point source of tests and
/// benchmarks that need repeatable pseudo-random inputs.
pub struct Rng(u64);

impl Rng {
    /// The increment of the state per draw.
    const GAMMA: u64 = 0x9e37_79b9_7f4a_7c15;

    pub fn new(seed: u64) -> Rng {
        Rng(seed)
    }

    #[allow(clippy::should_implement_trait)]
    pub fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(Rng::GAMMA);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }

    /// A uniform value in [0, 1) with 53 random bits.
    pub fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
}

impl Sweep {
    /// Number of points (grid size plus random points), `None` when the
    /// product of the domains' counts does not fit in 64 bits. The suite
    /// checks this against the `points_per_check` limit before any point is
    /// generated.
    pub fn checked_len(&self) -> Option<u64> {
        // No parameters: one point (a function without arguments), the
        // empty product.
        let mut grid: u64 = 1;
        for (_, d) in &self.params {
            grid = grid.checked_mul(d.checked_count()?)?;
        }
        grid.checked_add(self.random.map_or(0, |r| r.count as u64))
    }

    /// Number of points: grid size plus random points.
    pub fn len(&self) -> usize {
        let grid: usize = self.params.iter().map(|(_, d)| d.count()).product();
        grid + self.random.map_or(0, |r| r.count)
    }

    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Generate every point.
    pub fn points(&self) -> Points {
        self.points_in(0..self.len())
    }

    /// Generate the points with indices in `range` (clipped to the sweep),
    /// the same values [`Sweep::points`] gives there, without generating the
    /// others: a grid point comes from its index, and the random generator
    /// jumps straight to the first random point of the range (SplitMix64's
    /// state after k draws is the seed plus k times its increment).
    pub fn points_in(&self, range: std::ops::Range<usize>) -> Points {
        self.points_in_grid(&self.grid_with(false, false), range)
    }

    /// The grid values of every parameter, for generating many ranges of
    /// this sweep with [`Sweep::points_in_grid`] without computing them
    /// (a direction's sines and cosines) again for each; and for each
    /// parameter whose values repeat within [`PATTERN`] points, one period
    /// of its columns, which a range copies.
    pub fn grid(&self) -> Grid {
        self.grid_with(true, false)
    }

    /// [`Sweep::grid`] for points rounded to f32: the kept periods are
    /// rounded once here, and [`Sweep::points_in_grid`] rounds the values
    /// it computes, so each point is `f64::from(v as f32)` of the
    /// unrounded sweep's.
    pub fn grid_f32(&self) -> Grid {
        self.grid_with(true, true)
    }

    fn grid_with(&self, patterns: bool, f32: bool) -> Grid {
        let sources: Vec<Source> = self.params.iter().map(|(_, d)| d.source()).collect();
        let mut pats: Vec<Option<Vec<Vec<f64>>>> = vec![None; sources.len()];
        let mut stride = 1usize;
        for p in (0..sources.len()).rev() {
            let (count, width) = (self.params[p].1.count(), self.params[p].1.width());
            let period = stride.saturating_mul(count);
            if patterns && period <= PATTERN && count > 0 {
                // Whole periods, enough for runs of `PATTERN_RUN` points
                // (below `2 · PATTERN_RUN` ≤ `PATTERN` points when one
                // period is shorter).
                let len = period * PATTERN_RUN.div_ceil(period);
                let mut cols: Vec<Vec<f64>> = (0..width).map(|_| Vec::with_capacity(len)).collect();
                fill(&sources[p], count, stride, &mut cols, 0, len);
                if f32 {
                    cols.iter_mut().for_each(|c| round_to_f32(c));
                }
                pats[p] = Some(cols);
            }
            stride = period;
        }
        Grid {
            of: self.params.clone(),
            sources,
            patterns: pats,
            f32,
        }
    }

    /// [`Sweep::points_in`] with the grid values of [`Sweep::grid`].
    ///
    /// # Panics
    /// If `grid` is not this sweep's.
    pub fn points_in_grid(&self, grid: &Grid, range: std::ops::Range<usize>) -> Points {
        assert!(
            grid.of.len() == self.params.len()
                && grid
                    .of
                    .iter()
                    .zip(&self.params)
                    .all(|(a, b)| a.0 == b.0 && a.1.same_as(&b.1)),
            "a grid of another sweep"
        );
        let (sources, patterns, f32) = (&grid.sources, &grid.patterns, grid.f32);
        let n_all = self.len();
        let (start, end) = (
            range.start.min(n_all),
            range.end.min(n_all).max(range.start.min(n_all)),
        );
        let n = end - start;
        let grid = n_all - self.random.map_or(0, |r| r.count);
        // Grid values by table (an exhaustive domain's values from their
        // ordinals, never listed).
        let counts: Vec<usize> = self.params.iter().map(|(_, d)| d.count()).collect();
        let mut columns: Vec<Vec<Vec<f64>>> = self
            .params
            .iter()
            .map(|(_, d)| (0..d.width()).map(|_| crate::scratch::column(n)).collect())
            .collect();
        if start < grid {
            // Parameter p's value index at point i is (i / stride) % count,
            // the last parameter fastest.
            let last = end.min(grid);
            let mut stride = 1;
            for p in (0..counts.len()).rev() {
                match &patterns[p] {
                    // Values that repeat with a short period: copied from
                    // one period, in runs up to its end.
                    Some(pat) => {
                        let period = pat[0].len();
                        let mut i = start;
                        while i < last {
                            let off = i % period;
                            let run = (period - off).min(last - i);
                            for (c, t) in columns[p].iter_mut().zip(pat) {
                                c.extend_from_slice(&t[off..off + run]);
                            }
                            i += run;
                        }
                    }
                    None => fill(&sources[p], counts[p], stride, &mut columns[p], start, last),
                }
                stride *= counts[p];
            }
        }
        if f32 {
            // The grid points' values not copied from a (rounded) period.
            for (p, cols) in columns.iter_mut().enumerate() {
                if patterns[p].is_none() {
                    cols.iter_mut().for_each(|c| round_to_f32(c));
                }
            }
        }
        if let Some(r) = self.random {
            let (first, last) = (start.max(grid) - grid, end.max(grid) - grid);
            let draws: u64 = self.params.iter().map(|(_, d)| d.draws()).sum();
            let skipped = (first as u64).wrapping_mul(draws);
            let mut rng = Rng(r.seed.wrapping_add(skipped.wrapping_mul(Rng::GAMMA)));
            for _ in first..last {
                for (p, (_, d)) in self.params.iter().enumerate() {
                    push(&mut columns[p], d.random(&mut rng));
                }
            }
            if f32 {
                // The random points follow the range's grid points.
                let from_grid = n - (last - first);
                for col in columns.iter_mut().flatten() {
                    round_to_f32(&mut col[from_grid..]);
                }
            }
        }
        Points {
            names: self.params.iter().map(|(n, _)| n.clone()).collect(),
            widths: self.params.iter().map(|(_, d)| d.width()).collect(),
            columns,
            len: n,
        }
    }
}

/// A sweep's grid values ([`Sweep::grid`]), and the parameters they are of.
pub struct Grid {
    of: Vec<(String, Domain)>,
    sources: Vec<Source>,
    /// Per parameter, whole periods of its columns where one period is at
    /// most [`PATTERN`] points: as many as make [`PATTERN_RUN`] points or
    /// more, so that a segment copies them in few runs.
    patterns: Vec<Option<Vec<Vec<f64>>>>,
    /// Points from this grid are rounded to f32 ([`Sweep::grid_f32`]).
    f32: bool,
}

impl Grid {
    /// Whether points from this grid are rounded to f32
    /// ([`Sweep::grid_f32`]).
    pub fn is_f32(&self) -> bool {
        self.f32
    }
}

/// Round every value to the nearest f32 (as an f64).
pub fn round_to_f32(col: &mut [f64]) {
    for x in col {
        *x = f64::from(*x as f32);
    }
}

/// The longest period of a parameter's values that [`Sweep::grid`] keeps
/// whole (per component column: 512 KiB).
pub const PATTERN: usize = 1 << 16;

/// The fewest points a kept pattern holds (whole periods of a shorter
/// one): a parameter whose values repeat every 2 points is copied into a
/// segment in runs of this many, not 2.
pub const PATTERN_RUN: usize = 1 << 12;
const _: () = assert!(2 * PATTERN_RUN <= PATTERN);

/// Append a grid parameter's values at the points `start..last` to its
/// columns: value index `(i / stride) % count` at point `i`, run by run (a
/// run repeats one grid value `stride` times; consecutive values where
/// `stride` is 1).
fn fill(
    source: &Source,
    count: usize,
    stride: usize,
    cols: &mut [Vec<f64>],
    start: usize,
    last: usize,
) {
    let mut k = (start / stride) % count;
    let mut i = start;
    while i < last {
        if stride == 1 {
            let run = (count - k).min(last - i);
            source.extend(cols, k..k + run);
            i += run;
            k = 0;
            continue;
        }
        let run = (stride - i % stride).min(last - i);
        source.repeat(cols, k, run);
        i += run;
        k = if k + 1 == count { 0 } else { k + 1 };
    }
}

/// A domain's grid values for [`Sweep::points_in`].
enum Source {
    /// One column per component.
    Table(Vec<Vec<f64>>),
    /// The format and the ordinal of the first value.
    Every(every::Format, i64),
}

impl Source {
    /// Append grid values `ks` (in order) to a parameter's columns.
    fn extend(&self, cols: &mut [Vec<f64>], ks: std::ops::Range<usize>) {
        match self {
            Source::Table(t) => {
                for (c, t) in cols.iter_mut().zip(t) {
                    c.extend_from_slice(&t[ks.clone()]);
                }
            }
            Source::Every(format, first) => {
                cols[0].extend(ks.map(|k| format.value(first + k as i64)));
            }
        }
    }

    /// Append grid value `k` to a parameter's columns `times` times.
    fn repeat(&self, cols: &mut [Vec<f64>], k: usize, times: usize) {
        match self {
            Source::Table(t) => {
                for (c, t) in cols.iter_mut().zip(t) {
                    c.extend(std::iter::repeat_n(t[k], times));
                }
            }
            Source::Every(format, first) => {
                let v = format.value(first + k as i64);
                cols[0].extend(std::iter::repeat_n(v, times));
            }
        }
    }
}

impl Sweep {
    /// The points at `indices` (ascending indices into the whole sweep), in
    /// that order: each run of consecutive indices generated as
    /// [`Sweep::points_in`] generates it, so point `i` has the same values
    /// here as there.
    pub fn points_at(&self, indices: &[usize]) -> Points {
        // One grid for every run (no periods: runs are short and few).
        let grid = self.grid_with(false, false);
        let mut out = self.points_in_grid(&grid, 0..0);
        for run in runs(indices) {
            out.append(self.points_in_grid(&grid, run));
        }
        out
    }
}

/// The runs of consecutive values of ascending `indices`, as ranges:
/// `[1, 2, 3, 7, 9, 10]` gives `1..4`, `7..8`, `9..11`.
pub fn runs(indices: &[usize]) -> impl Iterator<Item = std::ops::Range<usize>> + '_ {
    let mut k = 0;
    std::iter::from_fn(move || {
        let start = *indices.get(k)?;
        let mut end = start + 1;
        k += 1;
        while indices.get(k) == Some(&end) {
            end += 1;
            k += 1;
        }
        Some(start..end)
    })
}

impl Points {
    /// Round every value of every point to the nearest f32 ([`round_to_f32`]).
    pub fn round_to_f32(&mut self) {
        self.columns
            .iter_mut()
            .flatten()
            .for_each(|c| round_to_f32(c));
    }

    /// Append `other`'s points (the same parameters) after these.
    pub fn append(&mut self, other: Points) {
        debug_assert_eq!(self.names, other.names);
        for (mine, theirs) in self.columns.iter_mut().zip(other.columns) {
            for (a, b) in mine.iter_mut().zip(theirs) {
                a.extend(b);
            }
        }
        self.len += other.len;
    }
}

fn push(cols: &mut [Vec<f64>], v: Value) {
    for (c, x) in cols.iter_mut().zip(v.components()) {
        c.push(x);
    }
}

impl fmt::Display for Domain {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Domain::Linear { lo, hi, n } => write!(f, "linear({lo:?}, {hi:?}, {n})"),
            Domain::Log { lo, hi, n } => write!(f, "log({lo:?}, {hi:?}, {n})"),
            Domain::List(v) => write!(
                f,
                "list({})",
                v.iter()
                    .map(|x| format!("{x:?}"))
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
            Domain::Edges { lo, hi } => write!(f, "edges({lo:?}, {hi:?})"),
            Domain::Every { lo, hi, format } => write!(f, "every_{format}({lo:?}, {hi:?})"),
            Domain::Direction { theta, phi } => write!(f, "direction(theta {theta}, phi {phi})"),
        }
    }
}

/// Canonical text of a sweep, written into golden headers and compared when
/// a golden is read back.
impl fmt::Display for Sweep {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut parts: Vec<String> = self
            .params
            .iter()
            .map(|(n, d)| format!("{n} = {d}"))
            .collect();
        if let Some(r) = self.random {
            parts.push(format!("random({} points, seed {})", r.count, r.seed));
        }
        f.write_str(&parts.join("; "))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn grid_is_cartesian_with_the_last_parameter_fastest() {
        let s = Sweep {
            params: vec![
                ("a".into(), Domain::List(vec![1.0, 2.0])),
                (
                    "b".into(),
                    Domain::Linear {
                        lo: 0.0,
                        hi: 1.0,
                        n: 3,
                    },
                ),
            ],
            random: None,
        };
        let p = s.points();
        assert_eq!(p.len, 6);
        assert_eq!(p.columns[0][0], vec![1.0, 1.0, 1.0, 2.0, 2.0, 2.0]);
        assert_eq!(p.columns[1][0], vec![0.0, 0.5, 1.0, 0.0, 0.5, 1.0]);
    }

    #[test]
    fn edges_hit_the_values_that_break_shading_code() {
        let v = Domain::Edges { lo: 0.0, hi: 1.0 }.values();
        assert_eq!(v[0], 0.0);
        assert_eq!(v[1], f64::from(f32::from_bits(1))); // smallest positive f32
        assert!(v.contains(&1e-4));
        assert!(v.contains(&f64::from(1.0f32 - f32::EPSILON / 2.0))); // just below 1 in f32
        assert_eq!(*v.last().unwrap(), 1.0);
    }

    #[test]
    fn log_and_directions() {
        let v = Domain::Log {
            lo: 0.01,
            hi: 1.0,
            n: 3,
        }
        .values();
        assert!((v[1] - 0.1).abs() < 1e-12);
        let Value::V(d) = direction(90.0, 90.0) else {
            panic!()
        };
        assert!(d[0].abs() < 1e-15 && (d[1] - 1.0).abs() < 1e-15 && d[2].abs() < 1e-15);
        let s = Sweep {
            params: vec![(
                "v".into(),
                Domain::Direction {
                    theta: Box::new(Domain::Linear {
                        lo: 0.0,
                        hi: 80.0,
                        n: 5,
                    }),
                    phi: Box::new(Domain::List(vec![0.0, 45.0])),
                },
            )],
            random: Some(Random { count: 10, seed: 3 }),
        };
        let p = s.points();
        assert_eq!(p.len, 20);
        for i in 0..p.len {
            let Value::V(d) = p.value(0, i) else { panic!() };
            assert!(((d[0] * d[0] + d[1] * d[1] + d[2] * d[2]) - 1.0).abs() < 1e-12);
        }
    }

    #[test]
    fn any_range_of_points_is_the_same_as_those_points_of_the_whole() {
        let s = Sweep {
            params: vec![
                ("a".into(), Domain::List(vec![1.0, 2.0, 3.0])),
                (
                    "v".into(),
                    Domain::Direction {
                        theta: Box::new(Domain::Linear {
                            lo: 0.0,
                            hi: 80.0,
                            n: 3,
                        }),
                        phi: Box::new(Domain::Log {
                            lo: 1.0,
                            hi: 90.0,
                            n: 2,
                        }),
                    },
                ),
            ],
            random: Some(Random {
                count: 25,
                seed: 11,
            }),
        };
        let whole = s.points();
        assert_eq!(whole.len, 3 * 6 + 25);
        // The grid part is the cartesian product, written out as nested loops.
        let dirs = s.params[1].1.cache();
        let mut k = 0;
        for a in [1.0, 2.0, 3.0] {
            for d in 0..6 {
                assert_eq!(whole.columns[0][0][k], a);
                for (got, want) in whole.columns[1].iter().zip(&dirs) {
                    assert_eq!(got[k], want[d]);
                }
                k += 1;
            }
        }
        for (a, b) in [
            (0, 43),
            (0, 0),
            (5, 17),
            (17, 19),
            (18, 30),
            (30, 43),
            (40, 99),
        ] {
            let part = s.points_in(a..b);
            let b = b.min(whole.len);
            assert_eq!(part.len, b - a);
            for p in 0..2 {
                for (c, col) in part.columns[p].iter().enumerate() {
                    assert_eq!(col[..], whole.columns[p][c][a..b], "{a}..{b}");
                }
            }
        }
    }

    #[test]
    fn ranges_from_a_grid_are_the_ranges_generated_alone() {
        // A grid keeps whole periods of each parameter that repeats within
        // PATTERN points (here `t` and `h`; `x`'s period is 300 · 513 · 3
        // points, past it, so it is filled run by run), at least
        // PATTERN_RUN points of them, and copies ranges from them: the same
        // values as generating the range alone, across the ends of the
        // kept periods too.
        let s = Sweep {
            params: vec![
                (
                    "x".into(),
                    Domain::Linear {
                        lo: 0.0,
                        hi: 1.0,
                        n: 300,
                    },
                ),
                (
                    "h".into(),
                    Domain::Every {
                        lo: 0.5,
                        hi: 0.75,
                        format: every::Format::F16,
                    },
                ),
                ("t".into(), Domain::List(vec![0.1, 2.0, 3.0])),
            ],
            random: Some(Random { count: 7, seed: 3 }),
        };
        let (grid, grid32) = (s.grid(), s.grid_f32());
        assert!(!grid.is_f32() && grid32.is_f32());
        assert!(grid.patterns[0].is_none());
        assert!(grid.patterns[1].is_some() && grid.patterns[2].is_some());
        let n = s.len();
        let period = s.params[1].1.count() * 3;
        assert_eq!(period, 513 * 3, "every f16 in [0.5, 0.75]: 2^-11 apart");
        let kept = |p: usize| grid.patterns[p].as_ref().expect("kept")[0].len();
        assert_eq!((kept(1), kept(2)), (3 * period, 3 * 1366), "whole periods");
        assert!(kept(1) >= PATTERN_RUN && kept(2) >= PATTERN_RUN);
        for (a, b) in [
            (0, 0),
            (0, 5000),
            (period - 1, period + 1),
            (3 * 1366 - 5, 3 * 1366 + 5),
            (3 * period - 2, 3 * period + 2),
            (3 * period - 2, 9 * period),
            (5 * period + 7, 9 * period + 11),
            (n - 100, n),
            (n - 9, n + 5),
        ] {
            let (from_grid, mut alone) = (s.points_in_grid(&grid, a..b), s.points_in(a..b));
            assert_eq!(from_grid.columns, alone.columns, "{a}..{b}");
            assert_eq!(from_grid.len, alone.len);
            // Rounded to f32: the same values rounded, the grid's and the
            // random points' alike, bit for bit.
            let rounded = s.points_in_grid(&grid32, a..b);
            alone.round_to_f32();
            let bits = |p: &Points| -> Vec<Vec<u64>> {
                p.columns
                    .iter()
                    .flatten()
                    .map(|c| c.iter().map(|x| x.to_bits()).collect())
                    .collect()
            };
            assert_eq!(bits(&rounded), bits(&alone), "{a}..{b}, rounded");
            assert!(
                bits(&rounded) != bits(&from_grid) || b <= a,
                "{a}..{b}: nothing to round"
            );
        }
    }

    #[test]
    #[should_panic(expected = "a grid of another sweep")]
    fn a_grid_serves_only_its_own_sweep() {
        let sweep = |x: f64| Sweep {
            params: vec![("t".into(), Domain::List(vec![x, f64::NAN]))],
            random: None,
        };
        // A NaN in a list is the same domain as itself...
        assert_eq!(sweep(1.0).points_in(0..2).len, 2);
        // ...and a list with another value is another sweep.
        sweep(1.0).points_in_grid(&sweep(2.0).grid(), 0..2);
    }

    #[test]
    fn runs_are_the_consecutive_stretches() {
        let r: Vec<_> = runs(&[1, 2, 3, 7, 9, 10]).collect();
        assert_eq!(r, vec![1..4, 7..8, 9..11]);
        assert_eq!(runs(&[]).count(), 0);
    }

    #[test]
    fn random_points_are_reproducible() {
        let s = Sweep {
            params: vec![(
                "x".into(),
                Domain::Linear {
                    lo: 2.0,
                    hi: 3.0,
                    n: 0,
                },
            )],
            random: Some(Random {
                count: 100,
                seed: 9,
            }),
        };
        let (a, b) = (s.points(), s.points());
        assert_eq!(a.columns, b.columns);
        assert!(a.columns[0][0].iter().all(|x| (2.0..=3.0).contains(x)));
    }
}
