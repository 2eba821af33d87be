//! Evaluation of a parsed expression in f64 (scalar broadcast over vec3), by name
//! ([`super::Expr::eval`]) or by bound position ([`BoundExpr`]).

use super::{Node, Value};
use std::collections::BTreeMap;

fn scalar(v: Value, what: &str) -> Result<f64, String> {
    match v {
        Value::S(x) => Ok(x),
        Value::V(_) => Err(format!("{what} needs a scalar, got a vec3")),
    }
}

fn vector(v: Value, what: &str) -> Result<[f64; 3], String> {
    match v {
        Value::V(x) => Ok(x),
        Value::S(_) => Err(format!("{what} needs a vec3, got a scalar")),
    }
}

/// Component-wise combination with scalar broadcast.
fn zip(a: Value, b: Value, f: impl Fn(f64, f64) -> f64) -> Value {
    match (a, b) {
        (Value::S(x), Value::S(y)) => Value::S(f(x, y)),
        (Value::V(x), Value::S(y)) => Value::V(x.map(|c| f(c, y))),
        (Value::S(x), Value::V(y)) => Value::V(y.map(|c| f(x, c))),
        (Value::V(x), Value::V(y)) => Value::V([f(x[0], y[0]), f(x[1], y[1]), f(x[2], y[2])]),
    }
}

fn map(a: Value, f: impl Fn(f64) -> f64) -> Value {
    match a {
        Value::S(x) => Value::S(f(x)),
        Value::V(v) => Value::V(v.map(f)),
    }
}

fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

/// An expression with its variables resolved (see [`super::Expr::bind`]).
#[derive(Clone, Debug)]
pub struct BoundExpr {
    pub(in crate::sweep) root: Node,
    /// 1 (scalar) or 3 (vec3), as the trial run found.
    pub width: usize,
    /// `Some(i)` when the expression is just the variable at position `i`.
    pub var: Option<usize>,
}

impl BoundExpr {
    /// The same expression bound the same way (so over the same points it
    /// gives the same values). A NaN constant is never the same as itself,
    /// which only costs a second evaluation.
    pub fn same_as(&self, other: &BoundExpr) -> bool {
        self.width == other.width && self.var == other.var && self.root == other.root
    }

    /// Evaluate with one value per bound name.
    pub fn eval(&self, vals: &[Value]) -> Result<Value, String> {
        eval(&self.root, &BTreeMap::new(), vals)
    }
}

pub(super) fn eval(
    n: &Node,
    vars: &BTreeMap<&str, Value>,
    vals: &[Value],
) -> Result<Value, String> {
    let eval = |n: &Node| eval(n, vars, vals);
    Ok(match n {
        Node::Num(x) => Value::S(*x),
        Node::Idx(i) => vals[*i],
        Node::Var(v) => *vars.get(v.as_str()).ok_or_else(|| {
            let known: Vec<_> = vars.keys().copied().collect();
            format!(
                "unknown name `{v}` (sweep parameters: {})",
                known.join(", ")
            )
        })?,
        Node::Neg(a) => map(eval(a)?, |x| -x),
        Node::Member(a, k) => Value::S(vector(eval(a)?, "`.x/.y/.z`")?[*k]),
        Node::Bin(op, a, b) => {
            let (a, b) = (eval(a)?, eval(b)?);
            match op {
                '+' => zip(a, b, |x, y| x + y),
                '-' => zip(a, b, |x, y| x - y),
                '*' => zip(a, b, |x, y| x * y),
                '/' => zip(a, b, |x, y| x / y),
                _ => zip(a, Value::S(scalar(b, "`^`")?), f64::powf),
            }
        }
        Node::Model(m, args) => {
            let m = m.0;
            if args.len() != m.params.len() {
                return Err(format!(
                    "model `{}` has {} of its {} arguments (fill_models completes them)",
                    m.name,
                    args.len(),
                    m.params.len()
                ));
            }
            let mut flat = Vec::with_capacity(m.arity());
            for ((_, a), p) in args.iter().zip(m.params) {
                let v = eval(a)?;
                if v.width() != p.kind.width() {
                    return Err(format!(
                        "model `{}`: parameter `{}` takes {} value(s), its argument gives {}",
                        m.name,
                        p.name,
                        p.kind.width(),
                        v.width()
                    ));
                }
                flat.extend(v.components());
            }
            let mut out = [0.0; 3];
            match m.outputs {
                1 => {
                    (m.eval)(&flat, &mut out[..1]);
                    Value::S(out[0])
                }
                3 => {
                    (m.eval)(&flat, &mut out);
                    Value::V(out)
                }
                n => {
                    return Err(format!(
                        "model `{}` gives {n} values; inside an expression a model must give 1 or 3 (use it alone as the reference)",
                        m.name
                    ))
                }
            }
        }
        Node::Construct(name, _) => {
            return Err(format!(
                "`{name}(...)` constructs a value for a function argument; it can only stand as a whole argument of the function (or a part of one), not inside an expression"
            ))
        }
        Node::Call(f, args) => {
            let a: Vec<Value> = args.iter().map(eval).collect::<Result<_, _>>()?;
            match f.as_str() {
                "sqrt" => map(a[0], f64::sqrt),
                "abs" => map(a[0], f64::abs),
                "sin" => map(a[0], f64::sin),
                "cos" => map(a[0], f64::cos),
                "tan" => map(a[0], f64::tan),
                "asin" => map(a[0], f64::asin),
                "acos" => map(a[0], f64::acos),
                "atan" => map(a[0], f64::atan),
                "atan2" => zip(a[0], a[1], f64::atan2),
                "exp" => map(a[0], f64::exp),
                "log" => map(a[0], f64::ln),
                "pow" => zip(a[0], a[1], f64::powf),
                "min" => zip(a[0], a[1], f64::min),
                "max" => zip(a[0], a[1], f64::max),
                "clamp" => zip(zip(a[0], a[1], f64::max), a[2], f64::min),
                "saturate" => map(a[0], |x| x.clamp(0.0, 1.0)),
                "radians" => map(a[0], f64::to_radians),
                "degrees" => map(a[0], f64::to_degrees),
                "mix" => {
                    let t = a[2];
                    zip(
                        zip(a[0], zip(Value::S(1.0), t, |o, t| o - t), |x, w| x * w),
                        zip(a[1], t, |y, t| y * t),
                        |p, q| p + q,
                    )
                }
                "dot" => Value::S(dot(vector(a[0], "dot")?, vector(a[1], "dot")?)),
                "cross" => {
                    let (x, y) = (vector(a[0], "cross")?, vector(a[1], "cross")?);
                    Value::V([
                        x[1] * y[2] - x[2] * y[1],
                        x[2] * y[0] - x[0] * y[2],
                        x[0] * y[1] - x[1] * y[0],
                    ])
                }
                "length" => match a[0] {
                    Value::S(x) => Value::S(x.abs()),
                    Value::V(v) => Value::S(dot(v, v).sqrt()),
                },
                "normalize" => {
                    let v = vector(a[0], "normalize")?;
                    let l = dot(v, v).sqrt();
                    Value::V(v.map(|c| c / l))
                }
                _ => Value::V([
                    scalar(a[0], "vec3")?,
                    scalar(a[1], "vec3")?,
                    scalar(a[2], "vec3")?,
                ]),
            }
        }
    })
}
