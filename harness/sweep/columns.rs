//! Argument expressions evaluated over a whole range of points at once: one
//! pass over the expression tree per range, each operation a loop over the
//! range's columns, instead of one tree walk (and one allocation per call)
//! per point.
//!
//! Every operation computes, element by element, exactly what
//! `expr.rs`'s point-at-a-time evaluation computes at one point (the same
//! f64 operations in the same order), so the columns are bit for bit the
//! per-point values (a test compares them on every function). Reference
//! models inside an expression and unresolved names are not handled here:
//! [`eval_range`] says `None` and the caller evaluates point by point.

use std::borrow::Cow;
use std::ops::Range;

use super::expr::{BoundExpr, Node};
use super::Points;
use crate::scratch;

/// A value over the range: a scalar column or three, each borrowed from the
/// points (a parameter) or computed; or one number standing for a scalar
/// column that holds it at every point (a constant, kept unexpanded until
/// it meets a column).
enum Col<'p> {
    S(Cow<'p, [f64]>),
    V([Cow<'p, [f64]>; 3]),
    K(f64),
}

/// A computed column of `f` at every value of `a`, from the column pool.
fn each(a: &[f64], f: impl Fn(f64) -> f64) -> Cow<'static, [f64]> {
    let mut v = scratch::column(a.len());
    v.extend(a.iter().map(|&x| f(x)));
    Cow::Owned(v)
}

fn map<'p>(a: Col<'p>, f: impl Fn(f64) -> f64) -> Col<'p> {
    match a {
        Col::S(x) => Col::S(each(&x, f)),
        Col::V(v) => Col::V(v.map(|c| each(&c, &f))),
        Col::K(x) => Col::K(f(x)),
    }
}

fn pair(a: &[f64], b: &[f64], f: &impl Fn(f64, f64) -> f64) -> Cow<'static, [f64]> {
    let mut v = scratch::column(a.len());
    v.extend(a.iter().zip(b).map(|(&x, &y)| f(x, y)));
    Cow::Owned(v)
}

/// The point-at-a-time `zip`: a scalar meets each component of a vector.
/// A constant meets each value of a column as its expanded column would.
fn zip<'p>(a: Col<'p>, b: Col<'p>, f: impl Fn(f64, f64) -> f64) -> Col<'p> {
    match (a, b) {
        (Col::K(x), Col::K(y)) => Col::K(f(x, y)),
        (Col::K(x), Col::S(y)) => Col::S(each(&y, |y| f(x, y))),
        (Col::S(x), Col::K(y)) => Col::S(each(&x, |x| f(x, y))),
        (Col::K(x), Col::V(y)) => Col::V(y.map(|c| each(&c, |y| f(x, y)))),
        (Col::V(x), Col::K(y)) => Col::V(x.map(|c| each(&c, |x| f(x, y)))),
        (Col::S(x), Col::S(y)) => Col::S(pair(&x, &y, &f)),
        (Col::V(x), Col::S(y)) => Col::V(x.map(|c| pair(&c, &y, &f))),
        (Col::S(x), Col::V(y)) => Col::V(y.map(|c| pair(&x, &c, &f))),
        (Col::V(x), Col::V(y)) => Col::V([
            pair(&x[0], &y[0], &f),
            pair(&x[1], &y[1], &f),
            pair(&x[2], &y[2], &f),
        ]),
    }
}

/// `a[0]*b[0] + a[1]*b[1] + a[2]*b[2]`, left to right, per point.
fn dot(a: &[Cow<[f64]>; 3], b: &[Cow<[f64]>; 3]) -> Vec<f64> {
    (0..a[0].len())
        .map(|i| a[0][i] * b[0][i] + a[1][i] * b[1][i] + a[2][i] * b[2][i])
        .collect()
}

/// A scalar as a column of `len` values.
fn scalar(c: Col, len: usize) -> Option<Cow<[f64]>> {
    match c {
        Col::S(x) => Some(x),
        Col::K(x) => Some(Cow::Owned(scratch::filled(len, x))),
        Col::V(_) => None,
    }
}

/// A scalar, left as it is (a column or a constant).
fn scalar_col(c: Col) -> Option<Col> {
    match c {
        Col::V(_) => None,
        c => Some(c),
    }
}

fn vector(c: Col) -> Option<[Cow<[f64]>; 3]> {
    match c {
        Col::V(x) => Some(x),
        Col::S(_) | Col::K(_) => None,
    }
}

fn eval<'p>(n: &Node, points: &'p Points, range: &Range<usize>) -> Option<Col<'p>> {
    let len = range.len();
    let ev = |n: &Node| eval(n, points, range);
    Some(match n {
        Node::Num(x) => Col::K(*x),
        Node::Idx(i) => {
            let c = &points.columns[*i];
            if points.widths[*i] == 1 {
                Col::S(Cow::Borrowed(&c[0][range.clone()]))
            } else {
                Col::V([
                    Cow::Borrowed(&c[0][range.clone()]),
                    Cow::Borrowed(&c[1][range.clone()]),
                    Cow::Borrowed(&c[2][range.clone()]),
                ])
            }
        }
        Node::Var(_) | Node::Model(..) | Node::Construct(..) => return None,
        Node::Neg(a) => map(ev(a)?, |x| -x),
        Node::Member(a, k) => {
            let [x, y, z] = vector(ev(a)?)?;
            Col::S([x, y, z].into_iter().nth(*k)?)
        }
        Node::Bin(op, a, b) => {
            let (a, b) = (ev(a)?, ev(b)?);
            match op {
                '+' => zip(a, b, |x, y| x + y),
                '-' => zip(a, b, |x, y| x - y),
                '*' => zip(a, b, |x, y| x * y),
                '/' => zip(a, b, |x, y| x / y),
                _ => zip(a, scalar_col(b)?, f64::powf),
            }
        }
        Node::Call(f, args) => {
            let mut a: Vec<Col> = args.iter().map(ev).collect::<Option<_>>()?;
            let mut take = |k: usize| std::mem::replace(&mut a[k], Col::K(0.0));
            match f.as_str() {
                "sqrt" => map(take(0), f64::sqrt),
                "abs" => map(take(0), f64::abs),
                "sin" => map(take(0), f64::sin),
                "cos" => map(take(0), f64::cos),
                "tan" => map(take(0), f64::tan),
                "asin" => map(take(0), f64::asin),
                "acos" => map(take(0), f64::acos),
                "atan" => map(take(0), f64::atan),
                "atan2" => zip(take(0), take(1), f64::atan2),
                "exp" => map(take(0), f64::exp),
                "log" => map(take(0), f64::ln),
                "pow" => zip(take(0), take(1), f64::powf),
                "min" => zip(take(0), take(1), f64::min),
                "max" => zip(take(0), take(1), f64::max),
                "clamp" => {
                    let (x, lo, hi) = (take(0), take(1), take(2));
                    zip(zip(x, lo, f64::max), hi, f64::min)
                }
                "saturate" => map(take(0), |x| x.clamp(0.0, 1.0)),
                "radians" => map(take(0), f64::to_radians),
                "degrees" => map(take(0), f64::to_degrees),
                "mix" => {
                    let (x, y, t) = (take(0), take(1), take(2));
                    let t2 = match &t {
                        Col::S(v) => Col::S(v.clone()),
                        Col::V(v) => Col::V(v.clone()),
                        Col::K(v) => Col::K(*v),
                    };
                    let w = zip(Col::K(1.0), t, |o, t| o - t);
                    zip(zip(x, w, |x, w| x * w), zip(y, t2, |y, t| y * t), |p, q| {
                        p + q
                    })
                }
                "dot" => {
                    let (x, y) = (vector(take(0))?, vector(take(1))?);
                    Col::S(Cow::Owned(dot(&x, &y)))
                }
                "cross" => {
                    let (x, y) = (vector(take(0))?, vector(take(1))?);
                    let c = |i: usize, j: usize| -> Cow<[f64]> {
                        Cow::Owned(
                            (0..len)
                                .map(|p| x[i][p] * y[j][p] - x[j][p] * y[i][p])
                                .collect(),
                        )
                    };
                    Col::V([c(1, 2), c(2, 0), c(0, 1)])
                }
                "length" => match take(0) {
                    Col::V(v) => Col::S(each(&dot(&v, &v), f64::sqrt)),
                    c => map(c, f64::abs),
                },
                "normalize" => {
                    let v = vector(take(0))?;
                    let l: Vec<f64> = dot(&v, &v).into_iter().map(f64::sqrt).collect();
                    Col::V(v.map(|c| pair(&c, &l, &|c, l| c / l)))
                }
                "vec3" => Col::V([
                    scalar(take(0), len)?,
                    scalar(take(1), len)?,
                    scalar(take(2), len)?,
                ]),
                _ => return None,
            }
        }
    })
}

/// A column as an owned vector (a borrowed one copied into a pooled one).
fn owned(c: Cow<[f64]>) -> Vec<f64> {
    match c {
        Cow::Owned(v) => v,
        Cow::Borrowed(x) => {
            let mut v = scratch::column(x.len());
            v.extend_from_slice(x);
            v
        }
    }
}

/// The expression's value at points `range` of `points`, one column per
/// component (1 or 3); `None` when the expression holds something only the
/// point-at-a-time evaluation handles (a reference model, an unresolved name)
/// or a type it would reject there. The columns come from the column pool
/// ([`crate::scratch`]).
pub fn eval_range(e: &BoundExpr, points: &Points, range: Range<usize>) -> Option<Vec<Vec<f64>>> {
    if range.end > points.len || range.start > range.end {
        return None;
    }
    let len = range.len();
    Some(match eval(&e.root, points, &range)? {
        Col::S(x) => vec![owned(x)],
        Col::K(x) => vec![scratch::filled(len, x)],
        Col::V(v) => v.map(owned).into(),
    })
}

#[cfg(test)]
mod tests {
    use super::super::{Domain, Expr, Random, Sweep, Value};
    use super::*;

    /// Column evaluation equals point-by-point evaluation bit for bit, on
    /// every function and operator, over ranges that start anywhere.
    #[test]
    fn columns_equal_points_bit_for_bit() {
        let sweep = Sweep {
            params: vec![
                (
                    "x".into(),
                    Domain::Linear {
                        lo: -2.0,
                        hi: 3.0,
                        n: 7,
                    },
                ),
                (
                    "v".into(),
                    Domain::Direction {
                        theta: Box::new(Domain::Linear {
                            lo: 0.0,
                            hi: 179.0,
                            n: 5,
                        }),
                        phi: Box::new(Domain::List(vec![0.0, 100.0, 300.0])),
                    },
                ),
            ],
            random: Some(Random { count: 50, seed: 4 }),
        };
        let points = sweep.points();
        let names = points.names.clone();
        let example = [Value::S(0.5), Value::V([0.0, 0.6, 0.8])];
        let texts = [
            "x",
            "v",
            "-x",
            "v.y",
            "x + v",
            "v - x",
            "x * 2 / v",
            "x ^ 3",
            "v ^ 0.5",
            "sqrt(x)",
            "abs(x)",
            "sin(x)",
            "cos(v)",
            "tan(x)",
            "asin(x)",
            "acos(v.z)",
            "atan(x)",
            "atan2(x, v.x)",
            "exp(x)",
            "log(x)",
            "pow(x, v.z)",
            "min(x, v)",
            "max(v, 0.1)",
            "clamp(x, -1, v.y)",
            "saturate(v * x)",
            "radians(x)",
            "degrees(v)",
            "mix(x, v, 0.3)",
            "mix(v, vec3(1, 2, 3), x)",
            "dot(v, v * x)",
            "cross(v, vec3(x, 1, 2))",
            "length(x)",
            "length(v * x)",
            "normalize(v + x)",
            "vec3(x, x * 0.85, x * 0.7)",
            "vec3(0, 0, 1)",
            "-(x + 1) * (v.x - 2)",
            // Constants meeting columns, and constants alone to the end.
            "2 * 3 + x",
            "v * (1 - 0.25)",
            "vec3(1, 2, 3) * 2",
            "0.5",
            "-(1)",
            "length(2) ^ 0.5",
            "mix(0.2, 0.4, 0.5)",
            "mix(v, x, 0.5)",
            "pow(2, x)",
            "atan2(1, v.y)",
            "clamp(0.5, x, 1)",
            "vec3(x, 1, 2).y",
        ];
        for text in texts {
            let b = Expr::parse(text)
                .unwrap()
                .bind(&names, &example)
                .unwrap_or_else(|m| panic!("{text}: {m}"));
            for range in [0..points.len, 3..40, 17..18, 60..points.len] {
                let cols = eval_range(&b, &points, range.clone()).expect(text);
                assert_eq!(cols.len(), b.width, "{text}");
                for (j, i) in range.clone().enumerate() {
                    let vals: Vec<Value> = (0..names.len()).map(|p| points.value(p, i)).collect();
                    let want: Vec<f64> = b.eval(&vals).unwrap().components();
                    let got: Vec<f64> = cols.iter().map(|c| c[j]).collect();
                    let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
                    assert_eq!(bits(&got), bits(&want), "{text} at point {i}");
                }
            }
        }
    }

    #[test]
    fn ranges_outside_the_points_are_refused() {
        let points = Sweep {
            params: vec![("x".into(), Domain::List(vec![1.0, 2.0]))],
            random: None,
        }
        .points();
        let b = Expr::parse("x")
            .unwrap()
            .bind(&points.names, &[Value::S(0.5)])
            .unwrap();
        assert!(eval_range(&b, &points, 0..3).is_none());
        assert_eq!(eval_range(&b, &points, 1..2), Some(vec![vec![2.0]]));
    }
}
