//! Each line's share of the final error, additive by construction.
//!
//! The *game*: for a set S of lines, re-run the sampled points in the
//! emulated working arithmetic (`Mode::Values`: every operation in f64,
//! rounded to its working type unless its line is in S) and measure the
//! error there, per point, by one or more *metrics* (the mean relative error
//! against the f64 model; for an f16 budget, the error over the tolerance).
//! v(∅) is the working arithmetic's error; v(all lines) is 0 up to what
//! rounds on no line (reported as unattributed).
//!
//! One *order* of the lines makes them exact one by one; a line's
//! contribution in that order is what the error drops when it joins
//! (v(before) − v(before ∪ line)). The contributions of one order telescope:
//! they add up to v(∅) − v(all), exactly, at every point. A line's **share**
//! is its contribution averaged over orders: its Shapley value (Shapley
//! 1953, "A value for n-person games", Contributions to the Theory of Games
//! II), which credits interacting lines fairly, where "the error that
//! disappears when this line alone is exact" double-counts or misses what
//! two lines do together.
//!
//! With up to [`ENUMERATE_UP_TO`] lines every order is run, so the shares
//! are the Shapley values themselves. With more, random orders are drawn in
//! antithetic pairs (an order and its reverse; SplitMix64 from a fixed
//! seed, so a report is repeatable), and each share is an estimate whose
//! standard error over the pairs is reported.

use crate::eval::Program;
use crate::sweep::Rng;

/// Lines up to which every order is run (4! = 24 orders).
pub const ENUMERATE_UP_TO: usize = 4;

/// The per-point error of one evaluation, one vector per metric.
pub(super) type Metrics<'a> = dyn Fn(&[Vec<f64>]) -> Vec<Vec<f64>> + Sync + 'a;

/// What the orders measured.
pub(super) struct Attribution {
    /// `[metric][point]`: the error with no line exact and with all exact.
    pub none: Vec<Vec<f64>>,
    pub all: Vec<Vec<f64>>,
    /// `[metric][line][point]`: the line's contribution averaged over orders.
    pub phi: Vec<Vec<Vec<f64>>>,
    /// `[metric][line]`: mean over the first `sample` points of the
    /// contribution, one entry per unit (an order, or an antithetic pair).
    pub units: Vec<Vec<Vec<f64>>>,
    /// `[metric][line][point]`: the error that disappears when the line
    /// alone is exact.
    pub alone: Vec<Vec<Vec<f64>>>,
    /// Orders run, and whether they were all of them.
    pub orders: usize,
    pub exhaustive: bool,
    /// Re-runs of the sampled points (the cost, in evaluations of them).
    pub runs: usize,
}

/// How many points and orders the shares use.
#[derive(Clone, Copy, Debug)]
pub(super) struct Plan {
    /// How many of the leading points make the means of
    /// [`Attribution::units`]; the points after them (points of interest
    /// appended by the caller) get per-point values only.
    pub sample: usize,
    /// Antithetic pairs of random orders (more than [`ENUMERATE_UP_TO`]
    /// lines).
    pub pairs: usize,
    pub seed: u64,
}

/// Every order of `0..k` (Heap's algorithm), for small `k`.
fn permutations(k: usize) -> Vec<Vec<usize>> {
    fn go(n: usize, a: &mut Vec<usize>, out: &mut Vec<Vec<usize>>) {
        if n <= 1 {
            out.push(a.clone());
            return;
        }
        for i in 0..n - 1 {
            go(n - 1, a, out);
            if n.is_multiple_of(2) {
                a.swap(i, n - 1);
            } else {
                a.swap(0, n - 1);
            }
        }
        go(n - 1, a, out);
    }
    let mut out = Vec::new();
    go(k, &mut (0..k).collect(), &mut out);
    out
}

/// The orders to run: all of them for few lines, else `pairs` random
/// orders each followed by its reverse.
fn orders(k: usize, pairs: usize, seed: u64) -> (Vec<Vec<usize>>, bool) {
    if k <= ENUMERATE_UP_TO {
        return (permutations(k), true);
    }
    let mut rng = Rng::new(seed);
    let mut out = Vec::new();
    for _ in 0..pairs.max(1) {
        let mut o: Vec<usize> = (0..k).collect();
        // Fisher-Yates.
        for i in (1..k).rev() {
            let j = (rng.next() % (i as u64 + 1)) as usize;
            o.swap(i, j);
        }
        let r: Vec<usize> = o.iter().rev().copied().collect();
        out.push(o);
        out.push(r);
    }
    (out, false)
}

/// Attribute the error of `program` at the points of `inputs` to `lines`
/// (`site_lines[s]`: the line of site `s`).
pub(super) fn attribute(
    program: &Program,
    inputs: &[&[u32]],
    site_lines: &[u32],
    lines: &[u32],
    metrics: &Metrics<'_>,
    plan: Plan,
) -> Attribution {
    let Plan {
        sample,
        pairs,
        seed,
    } = plan;
    let k = lines.len();
    let mut runs = 0;
    let mut measure = |exact_lines: &[bool]| {
        let exact: Vec<bool> = site_lines
            .iter()
            .map(|l| {
                lines
                    .iter()
                    .position(|x| x == l)
                    .is_some_and(|i| exact_lines[i])
            })
            .collect();
        runs += 1;
        metrics(&program.eval_values(inputs, &exact))
    };
    let none = measure(&vec![false; k]);
    let all = measure(&vec![true; k]);
    let m = none.len();
    let n = none.first().map_or(0, Vec::len);
    let (ords, exhaustive) = orders(k, pairs, seed);
    let antithetic = !exhaustive;
    let mut phi = vec![vec![vec![0.0; n]; k]; m];
    let mut per_order: Vec<Vec<Vec<f64>>> = Vec::new(); // [order][metric][line]
    for o in &ords {
        let mut set = vec![false; k];
        let mut prev = none.clone();
        let mut means = vec![vec![0.0; k]; m];
        for (step, &l) in o.iter().enumerate() {
            set[l] = true;
            let cur = if step + 1 == k {
                all.clone()
            } else {
                measure(&set)
            };
            for j in 0..m {
                let mut sum = 0.0;
                for p in 0..n {
                    let c = prev[j][p] - cur[j][p];
                    phi[j][l][p] += c;
                    if p < sample {
                        sum += c;
                    }
                }
                means[j][l] = sum / sample.max(1) as f64;
            }
            prev = cur;
        }
        per_order.push(means);
    }
    let r = ords.len().max(1) as f64;
    for row in phi.iter_mut().flatten() {
        for x in row.iter_mut() {
            *x /= r;
        }
    }
    // Units: a pair of antithetic orders counts as one draw.
    let step = if antithetic { 2 } else { 1 };
    let mut units = vec![vec![Vec::new(); k]; m];
    for chunk in per_order.chunks(step) {
        for j in 0..m {
            for l in 0..k {
                let v = chunk.iter().map(|o| o[j][l]).sum::<f64>() / chunk.len() as f64;
                units[j][l].push(v);
            }
        }
    }
    let mut alone = vec![vec![Vec::new(); k]; m];
    for l in 0..k {
        let mut set = vec![false; k];
        set[l] = true;
        let e = if k == 1 { all.clone() } else { measure(&set) };
        for j in 0..m {
            alone[j][l] = none[j].iter().zip(&e[j]).map(|(a, b)| a - b).collect();
        }
    }
    Attribution {
        none,
        all,
        phi,
        units,
        alone,
        orders: ords.len(),
        exhaustive,
        runs,
    }
}

/// Mean and standard error of the mean of `v` (0 for fewer than two
/// values).
pub(super) fn mean_and_error(v: &[f64]) -> (f64, f64) {
    let n = v.len() as f64;
    if v.is_empty() {
        return (0.0, 0.0);
    }
    let m = v.iter().sum::<f64>() / n;
    if v.len() < 2 {
        return (m, 0.0);
    }
    let var = v.iter().map(|x| (x - m) * (x - m)).sum::<f64>() / (n - 1.0);
    (m, (var / n).sqrt())
}

/// `count` distinct indices of `0..n` drawn at random (SplitMix64 from
/// `seed`; Floyd's algorithm), in increasing order; all of them when `n <=
/// count`. Random rather than strided: a stride over a grid sweep (last
/// parameter fastest) would keep the inner parameters fixed.
pub(super) fn sample(n: usize, count: usize, seed: u64) -> Vec<usize> {
    if n <= count {
        return (0..n).collect();
    }
    let mut rng = Rng::new(seed);
    let mut set = std::collections::BTreeSet::new();
    for j in n - count..n {
        let t = (rng.next() % (j as u64 + 1)) as usize;
        if !set.insert(t) {
            set.insert(j);
        }
    }
    set.into_iter().collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_order_once() {
        for k in 0..=5 {
            let mut p = permutations(k);
            let total = p.len();
            p.sort();
            p.dedup();
            let fact: usize = (1..=k).product();
            assert_eq!((total, p.len()), (fact, fact), "k = {k}");
        }
    }

    #[test]
    fn random_orders_come_in_reversed_pairs() {
        let (o, all) = orders(7, 3, 1);
        assert!(!all);
        assert_eq!(o.len(), 6);
        for pair in o.chunks(2) {
            let mut r = pair[0].clone();
            r.reverse();
            assert_eq!(r, pair[1]);
            let mut s = pair[0].clone();
            s.sort();
            assert_eq!(s, (0..7).collect::<Vec<_>>());
        }
    }

    #[test]
    fn standard_error_of_a_known_sample() {
        // 1, 2, 3, 4: mean 2.5, sample variance 5/3, error sqrt(5/12).
        let (m, e) = mean_and_error(&[1.0, 2.0, 3.0, 4.0]);
        assert_eq!(m, 2.5);
        assert!((e - (5.0f64 / 12.0).sqrt()).abs() < 1e-15);
    }

    #[test]
    fn a_sample_is_distinct_sorted_and_spread() {
        assert_eq!(sample(3, 4, 1), vec![0, 1, 2]);
        let s = sample(1000, 100, 5);
        assert_eq!(s.len(), 100);
        assert!(s.windows(2).all(|w| w[0] < w[1]) && s[99] < 1000);
        // Spread over the range: each tenth holds some (a uniform draw
        // misses a tenth with probability 0.9^100, about 3e-5; the seed is
        // fixed).
        for d in 0..10 {
            assert!(s.iter().any(|&i| i / 100 == d), "{s:?}");
        }
    }
}
