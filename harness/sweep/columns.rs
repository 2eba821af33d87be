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

use std::ops::Range;

use super::expr::{BoundExpr, Node};
use super::Points;

/// A value over the range: a scalar column or three.
enum Col {
    S(Vec<f64>),
    V([Vec<f64>; 3]),
}

fn map(a: Col, f: impl Fn(f64) -> f64) -> Col {
    let m = |v: Vec<f64>| v.into_iter().map(&f).collect();
    match a {
        Col::S(x) => Col::S(m(x)),
        Col::V([x, y, z]) => Col::V([m(x), m(y), m(z)]),
    }
}

fn pair(a: &[f64], b: &[f64], f: &impl Fn(f64, f64) -> f64) -> Vec<f64> {
    a.iter().zip(b).map(|(&x, &y)| f(x, y)).collect()
}

/// The point-at-a-time `zip`: a scalar meets each component of a vector.
fn zip(a: Col, b: Col, f: impl Fn(f64, f64) -> f64) -> Col {
    match (a, b) {
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
fn dot(a: &[Vec<f64>; 3], b: &[Vec<f64>; 3]) -> Vec<f64> {
    (0..a[0].len())
        .map(|i| a[0][i] * b[0][i] + a[1][i] * b[1][i] + a[2][i] * b[2][i])
        .collect()
}

fn scalar(c: Col) -> Option<Vec<f64>> {
    match c {
        Col::S(x) => Some(x),
        Col::V(_) => None,
    }
}

fn vector(c: Col) -> Option<[Vec<f64>; 3]> {
    match c {
        Col::V(x) => Some(x),
        Col::S(_) => None,
    }
}

fn eval(n: &Node, points: &Points, range: &Range<usize>) -> Option<Col> {
    let len = range.len();
    let ev = |n: &Node| eval(n, points, range);
    Some(match n {
        Node::Num(x) => Col::S(vec![*x; len]),
        Node::Idx(i) => {
            let c = &points.columns[*i];
            if points.widths[*i] == 1 {
                Col::S(c[0][range.clone()].to_vec())
            } else {
                Col::V([
                    c[0][range.clone()].to_vec(),
                    c[1][range.clone()].to_vec(),
                    c[2][range.clone()].to_vec(),
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
                _ => zip(a, Col::S(scalar(b)?), f64::powf),
            }
        }
        Node::Call(f, args) => {
            let mut a: Vec<Col> = args.iter().map(ev).collect::<Option<_>>()?;
            let mut take = |k: usize| std::mem::replace(&mut a[k], Col::S(Vec::new()));
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
                    };
                    let w = zip(Col::S(vec![1.0; len]), t, |o, t| o - t);
                    zip(zip(x, w, |x, w| x * w), zip(y, t2, |y, t| y * t), |p, q| {
                        p + q
                    })
                }
                "dot" => {
                    let (x, y) = (vector(take(0))?, vector(take(1))?);
                    Col::S(dot(&x, &y))
                }
                "cross" => {
                    let (x, y) = (vector(take(0))?, vector(take(1))?);
                    let c = |i: usize, j: usize| -> Vec<f64> {
                        (0..len)
                            .map(|p| x[i][p] * y[j][p] - x[j][p] * y[i][p])
                            .collect()
                    };
                    Col::V([c(1, 2), c(2, 0), c(0, 1)])
                }
                "length" => match take(0) {
                    Col::S(x) => map(Col::S(x), f64::abs),
                    Col::V(v) => Col::S(dot(&v, &v).into_iter().map(f64::sqrt).collect()),
                },
                "normalize" => {
                    let v = vector(take(0))?;
                    let l: Vec<f64> = dot(&v, &v).into_iter().map(f64::sqrt).collect();
                    Col::V(v.map(|c| pair(&c, &l, &|c, l| c / l)))
                }
                "vec3" => Col::V([scalar(take(0))?, scalar(take(1))?, scalar(take(2))?]),
                _ => return None,
            }
        }
    })
}

/// The expression's value at points `range` of `points`, one column per
/// component (1 or 3); `None` when the expression holds something only the
/// point-at-a-time evaluation handles (a reference model, an unresolved name)
/// or a type it would reject there.
pub fn eval_range(e: &BoundExpr, points: &Points, range: Range<usize>) -> Option<Vec<Vec<f64>>> {
    if range.end > points.len || range.start > range.end {
        return None;
    }
    Some(match eval(&e.root, points, &range)? {
        Col::S(x) => vec![x],
        Col::V(v) => v.into(),
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
