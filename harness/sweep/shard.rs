//! A share of a sweep's points for one of N parallel jobs (`run --shard K/N`).
//!
//! Shard K of N (1-based) takes the contiguous index range
//! `[⌊(K−1)·n/N⌋, ⌊K·n/N⌋)` of a sweep of n points: the N ranges are
//! disjoint, in order, and their union is exactly `0..n`, whatever n and N
//! (a shard may be empty when N > n). Contiguous ranges keep a shard's
//! points in sweep order, so the first failing points of the whole are the
//! first failing points of the shards taken in order.

use std::fmt;
use std::ops::Range;

/// Shard `index` (1-based) of `of`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct Shard {
    pub index: usize,
    pub of: usize,
}

impl Shard {
    /// Read `K/N` (1 ≤ K ≤ N); the error says what is wrong with it.
    pub fn parse(text: &str) -> Result<Shard, String> {
        let bad = |why: &str| {
            format!("shard `{text}`: {why}; write K/N, e.g. 2/3 for the second of three")
        };
        let (k, n) = text.split_once('/').ok_or_else(|| bad("no `/`"))?;
        let k: usize = k
            .trim()
            .parse()
            .map_err(|_| bad("K is not a whole number"))?;
        let n: usize = n
            .trim()
            .parse()
            .map_err(|_| bad("N is not a whole number"))?;
        if n == 0 {
            return Err(bad("N must be at least 1"));
        }
        if k == 0 || k > n {
            return Err(bad(&format!("K must be between 1 and {n}")));
        }
        Ok(Shard { index: k, of: n })
    }

    /// This shard's point indices in a sweep of `total` points.
    pub fn range(&self, total: usize) -> Range<usize> {
        let at = |k: usize| ((k as u128 * total as u128) / self.of as u128) as usize;
        at(self.index - 1)..at(self.index)
    }
}

impl fmt::Display for Shard {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}/{}", self.index, self.of)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shards_cover_every_point_once_in_order() {
        for total in [0, 1, 2, 7, 100, 1001] {
            for of in 1..=9 {
                let mut next = 0;
                for index in 1..=of {
                    let r = Shard { index, of }.range(total);
                    assert_eq!(r.start, next, "{index}/{of} of {total}");
                    // Sizes differ by at most one.
                    assert!(r.len() <= total / of + 1 && r.len() >= total / of);
                    next = r.end;
                }
                assert_eq!(next, total);
            }
        }
    }

    #[test]
    fn bad_specs_say_what_is_wrong() {
        assert_eq!(Shard::parse("2/3"), Ok(Shard { index: 2, of: 3 }));
        for (text, why) in [
            ("0/3", "between 1 and 3"),
            ("4/3", "between 1 and 3"),
            ("x", "no `/`"),
            ("x/3", "K is not"),
            ("1/y", "N is not"),
            ("1/0", "at least 1"),
            ("-1/3", "K is not"),
        ] {
            let e = Shard::parse(text).unwrap_err();
            assert!(e.contains(why) && e.contains(text), "{text}: {e}");
        }
    }
}
