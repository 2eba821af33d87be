//! Leaf-by-leaf distance between two sets of output columns (one from the
//! CPU evaluator, one from a device), in units in the last place.
//!
//! For a float leaf the distance of one point is
//! [`crate::arith::ulp_distance_f32`] / [`crate::arith::ulp_distance_f16`]:
//! the number of representable values between the two results, so +0 and -0
//! are 0 apart, two NaNs are 0 apart and a NaN against a number is
//! `u64::MAX`. For an integer leaf it is the absolute difference of the two
//! integers (one integer step is that type's unit in the last place); for a
//! bool leaf 0 or 1. "Exact" means bit-identical, which is stricter than
//! distance 0 (it tells -0 from +0 and one NaN payload from another).

use crate::arith::{ulp_distance_f16, ulp_distance_f32};
use crate::values::{bits_to_f64, ScalarKind};

/// Distance of one point's results of one leaf.
pub fn leaf_distance(kind: ScalarKind, a: u32, b: u32) -> u64 {
    match kind {
        ScalarKind::F32 => ulp_distance_f32(f32::from_bits(a), f32::from_bits(b)),
        ScalarKind::F16 => ulp_distance_f16(
            crate::arith::f16_from_bits(a as u16),
            crate::arith::f16_from_bits(b as u16),
        ),
        ScalarKind::I32 => i64::from(a as i32).abs_diff(i64::from(b as i32)),
        ScalarKind::U32 => u64::from(a.abs_diff(b)),
        ScalarKind::Bool => u64::from((a != 0) != (b != 0)),
    }
}

/// The distance distribution of one output leaf.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct LeafUlp {
    /// Leaf name as in [`crate::eval::Program::output_leaves`] (`result.x`, ...).
    pub leaf: String,
    pub kind: ScalarKind,
    pub points: usize,
    /// Points whose two results are bit-identical.
    pub exact: usize,
    /// Points at most 2 ULP apart (includes the exact ones).
    pub within_2: usize,
    /// Largest distance seen (`u64::MAX`: a NaN against a number).
    pub worst: u64,
    /// The first point with the largest distance; `None` when every point is exact.
    pub worst_point: Option<usize>,
    /// The two results at `worst_point`, as numbers (first set, second set).
    pub worst_values: Option<(f64, f64)>,
}

impl LeafUlp {
    /// Share of bit-identical points, in [0, 1] (1 for an empty column).
    pub fn exact_share(&self) -> f64 {
        share(self.exact, self.points)
    }

    /// Share of points at most 2 ULP apart.
    pub fn within_2_share(&self) -> f64 {
        share(self.within_2, self.points)
    }
}

fn share(n: usize, of: usize) -> f64 {
    if of == 0 {
        1.0
    } else {
        n as f64 / of as f64
    }
}

/// Compare two column sets leaf by leaf. `leaves` names and types the
/// columns (both sets have one column per leaf, all of one length).
///
/// # Panics
/// When the column counts or lengths differ.
pub fn ulp_summary(
    leaves: &[(String, ScalarKind)],
    a: &[Vec<u32>],
    b: &[Vec<u32>],
) -> Vec<LeafUlp> {
    assert_eq!(a.len(), leaves.len(), "one column per leaf (first set)");
    assert_eq!(b.len(), leaves.len(), "one column per leaf (second set)");
    leaves
        .iter()
        .zip(a.iter().zip(b))
        .map(|((name, kind), (ca, cb))| {
            assert_eq!(ca.len(), cb.len(), "columns of `{name}` differ in length");
            let mut s = LeafUlp {
                leaf: name.clone(),
                kind: *kind,
                points: ca.len(),
                exact: 0,
                within_2: 0,
                worst: 0,
                worst_point: None,
                worst_values: None,
            };
            for (i, (&x, &y)) in ca.iter().zip(cb).enumerate() {
                let same = if *kind == ScalarKind::F16 {
                    x as u16 == y as u16
                } else {
                    x == y
                };
                if same {
                    s.exact += 1;
                    s.within_2 += 1;
                    continue;
                }
                let d = leaf_distance(*kind, x, y);
                if d <= 2 {
                    s.within_2 += 1;
                }
                if s.worst_point.is_none() || d > s.worst {
                    s.worst = d;
                    s.worst_point = Some(i);
                    s.worst_values = Some((bits_to_f64(*kind, x), bits_to_f64(*kind, y)));
                }
            }
            s
        })
        .collect()
}

/// `name=value, ...` of point `i` of the input columns.
pub fn describe_point(leaves: &[(String, ScalarKind)], inputs: &[&[u32]], i: usize) -> String {
    leaves
        .iter()
        .zip(inputs)
        .map(|((name, k), col)| format!("{name}={}", bits_to_f64(*k, col[i])))
        .collect::<Vec<_>>()
        .join(", ")
}

/// Input leaves and their columns, to show the inputs of the worst points.
pub type Inputs<'a> = (&'a [(String, ScalarKind)], &'a [&'a [u32]]);

/// A plain-text table, one row per leaf: points, exact share, share within
/// 2 ULP, worst distance and where it occurred (with the inputs when given).
pub fn format_table(rows: &[LeafUlp], inputs: Option<Inputs<'_>>) -> String {
    let mut out = format!(
        "{:<16} {:>5} {:>9} {:>9} {:>9} {:>10}  {}\n",
        "leaf", "type", "points", "exact", "<=2 ULP", "worst ULP", "worst point"
    );
    for r in rows {
        let worst = match r.worst {
            u64::MAX => "NaN/num".to_string(),
            w => w.to_string(),
        };
        let at = match (r.worst_point, r.worst_values) {
            (Some(p), Some((a, b))) => {
                let mut t = format!("#{p}: {a:e} vs {b:e}");
                if let Some((leaves, cols)) = inputs {
                    t.push_str(&format!(" at {}", describe_point(leaves, cols, p)));
                }
                t
            }
            _ => "-".to_string(),
        };
        out.push_str(&format!(
            "{:<16} {:>5} {:>9} {:>8.2}% {:>8.2}% {:>10}  {}\n",
            r.leaf,
            r.kind.wgsl(),
            r.points,
            100.0 * r.exact_share(),
            100.0 * r.within_2_share(),
            worst,
            at
        ));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn col(v: &[f32]) -> Vec<u32> {
        v.iter().map(|x| x.to_bits()).collect()
    }

    #[test]
    fn counts_exact_within_two_and_the_first_worst_point() {
        let one = 1.0f32;
        let up = |n: u32| f32::from_bits(one.to_bits() + n);
        let a = vec![col(&[one, one, one, one, one])];
        let b = vec![col(&[one, up(1), up(3), up(2), up(3)])];
        let leaves = vec![("result".to_string(), ScalarKind::F32)];
        let s = &ulp_summary(&leaves, &a, &b)[0];
        assert_eq!((s.points, s.exact, s.within_2, s.worst), (5, 1, 3, 3));
        assert_eq!(s.worst_point, Some(2));
        assert_eq!(s.exact_share(), 0.2);
    }

    #[test]
    fn signed_zeros_are_zero_apart_but_not_exact() {
        let leaves = vec![("r".to_string(), ScalarKind::F32)];
        let s = &ulp_summary(&leaves, &[col(&[0.0])], &[col(&[-0.0])])[0];
        assert_eq!((s.exact, s.within_2, s.worst), (0, 1, 0));
    }

    #[test]
    fn nan_against_a_number_is_the_largest_distance() {
        assert_eq!(
            leaf_distance(ScalarKind::F32, f32::NAN.to_bits(), 0),
            u64::MAX
        );
        let h_nan = 0x7e00;
        assert_eq!(leaf_distance(ScalarKind::F16, h_nan, 0x3c00), u64::MAX);
    }

    #[test]
    fn integer_distance_is_the_difference_of_values() {
        assert_eq!(leaf_distance(ScalarKind::I32, (-1i32) as u32, 1), 2);
        assert_eq!(
            leaf_distance(ScalarKind::I32, i32::MIN as u32, i32::MAX as u32),
            u32::MAX as u64
        );
        assert_eq!(leaf_distance(ScalarKind::U32, 0, u32::MAX), u32::MAX as u64);
        assert_eq!(leaf_distance(ScalarKind::Bool, 1, 0), 1);
    }

    #[test]
    fn f16_distance_counts_half_steps() {
        // 1.0h = 0x3c00; the next half up is 0x3c01.
        assert_eq!(leaf_distance(ScalarKind::F16, 0x3c00, 0x3c01), 1);
        assert_eq!(leaf_distance(ScalarKind::F16, 0x3c00, 0xbc00), 2 * 0x3c00);
    }
}
