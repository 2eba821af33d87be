//! The argument expression language of suite files.
//!
//! A check feeds each function argument and each reference parameter from a
//! small expression over the sweep parameters, e.g. `roughness * roughness`,
//! `normalize(v + l)`, `dot(n, h)`, `vec3(0.04, 0.04, 0.04)`. Values are f64
//! scalars or 3-vectors; evaluation is in f64.
//!
//! Grammar: `expr := term (('+'|'-') term)*`, `term := unary (('*'|'/') unary)*`,
//! `unary := '-' unary | power`, `power := postfix ('^' unary)?`,
//! `postfix := primary ('.' ('x'|'y'|'z'))*`,
//! `primary := number | name | name '(' args ')' | '(' expr ')'`.
//! Constants: `pi`. Functions: sqrt, abs, sin, cos, tan, asin, acos, atan,
//! atan2, exp, log, pow, min, max, clamp, saturate, radians, degrees, dot,
//! cross, length, normalize, vec3 (`vec3(x)` is the splat), mix. A function argument may
//! also be a constructor of its type as a whole ([`Expr::parse_arg`], see `shape`).
//!
//! A *reference expression* ([`Expr::parse_reference`]) may also call the
//! reference models of [`crate::reference`] by name: `lambert * n_dot_l`,
//! `ggx_ndf(alpha = roughness ^ 2)`, `schlick_fresnel(n_dot_v) + sheen`.
//! A model's arguments are positional, named (`alpha = ...`) or left out; a
//! left-out one is filled by [`Expr::fill_models`] (the suite fills it from
//! `reference_args`, `args` or the sweep parameter of the same name). A model
//! inside an expression gives a scalar or a vec3 (one or three outputs).
//!
//! One file per job: this one holds the types ([`Value`], [`Expr`], [`ExprError`]) and the
//! walks over a parsed tree (variables, models, filling, binding, substitution); `parse`
//! the recursive-descent parser with its depth bound; `eval` the evaluation of a tree and
//! [`BoundExpr`].

mod eval;
mod parse;
mod shape;

pub use eval::BoundExpr;

use eval::eval;
use std::collections::BTreeMap;
use std::fmt;

/// A value: scalar or 3-vector.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Value {
    S(f64),
    V([f64; 3]),
}

impl Value {
    /// Flattened components (1 or 3).
    pub fn components(&self) -> Vec<f64> {
        match *self {
            Value::S(x) => vec![x],
            Value::V(v) => v.to_vec(),
        }
    }

    pub fn width(&self) -> usize {
        match self {
            Value::S(_) => 1,
            Value::V(_) => 3,
        }
    }
}

/// A parse error at a byte offset of the expression text.
#[derive(Clone, Debug, PartialEq)]
pub struct ExprError {
    pub offset: usize,
    pub message: String,
}

impl fmt::Display for ExprError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "at column {}: {}", self.offset + 1, self.message)
    }
}

#[derive(Clone, Debug, PartialEq)]
pub(super) enum Node {
    Num(f64),
    Var(String),
    /// A variable resolved to a position by [`Expr::bind`].
    Idx(usize),
    Neg(Box<Node>),
    Bin(char, Box<Node>, Box<Node>),
    Call(String, Vec<Node>),
    Member(Box<Node>, usize),
    /// A constructor of a function argument (`Material(...)`, `vec4(...)`,
    /// `mat3x3(...)`, `array(...)`; see `shape`): its name as written (type
    /// parameters included) and its parts with their texts. Only
    /// `gate::args` takes it apart; evaluating it is an error.
    Construct(String, Vec<(Node, String)>),
    /// A reference model called with its arguments (named or positional
    /// until [`Expr::fill_models`] puts them all in parameter order).
    Model(ModelRef, Vec<(Option<String>, Node)>),
}

/// A registry model inside an expression (compared by identity, shown by name).
#[derive(Clone, Copy)]
pub(super) struct ModelRef(&'static crate::reference::Model);

impl PartialEq for ModelRef {
    fn eq(&self, other: &ModelRef) -> bool {
        std::ptr::eq(self.0, other.0)
    }
}

impl fmt::Debug for ModelRef {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.0.name)
    }
}

/// A parsed expression.
#[derive(Clone, Debug, PartialEq)]
pub struct Expr {
    pub text: String,
    root: Node,
}

impl Expr {
    /// Parse `text` under the default `expression_depth` limit.
    pub fn parse(text: &str) -> Result<Expr, ExprError> {
        Self::parse_with(text, crate::limits::Limits::default().expression_depth)
    }

    /// Parse `text`, refusing nesting (parentheses, calls, unary operators,
    /// operator chains) deeper than `depth_limit` levels with an error, so
    /// neither the parser nor a later walk of the tree can overflow the stack.
    pub fn parse_with(text: &str, depth_limit: u32) -> Result<Expr, ExprError> {
        Self::parse_in(text, depth_limit, false)
    }

    /// Parse a function argument's expression: [`Expr::parse_with`], or a
    /// constructor of the argument's type as a whole (`Material(...)`,
    /// `vec4(c, 1)`, `mat3x3(...)`, `array(...)`; `vec3(x)` is the splat).
    pub fn parse_arg(text: &str, depth_limit: u32) -> Result<Expr, ExprError> {
        Ok(Expr {
            text: text.to_string(),
            root: shape::parse_arg(text, depth_limit)?,
        })
    }

    /// A constructor's name as written (`Material`, `vec4<f32>`) and its
    /// parts, each an expression of its own; `None` for an ordinary
    /// expression.
    pub fn constructor(&self) -> Option<(&str, Vec<Expr>)> {
        match &self.root {
            Node::Construct(name, parts) => Some((
                name,
                parts
                    .iter()
                    .map(|(n, t)| Expr {
                        text: t.clone(),
                        root: n.clone(),
                    })
                    .collect(),
            )),
            _ => None,
        }
    }

    /// Parse a reference expression: [`Expr::parse_with`] where the names
    /// of reference models may also be used (see the module doc).
    pub fn parse_reference(text: &str, depth_limit: u32) -> Result<Expr, ExprError> {
        Self::parse_in(text, depth_limit, true)
    }

    fn parse_in(text: &str, depth_limit: u32, models: bool) -> Result<Expr, ExprError> {
        Ok(Expr {
            text: text.to_string(),
            root: parse::parse(text, depth_limit, models)?,
        })
    }

    /// Names of the variables the expression reads.
    pub fn variables(&self) -> Vec<String> {
        fn walk(n: &Node, out: &mut Vec<String>) {
            match n {
                Node::Var(v) => {
                    if !out.contains(v) {
                        out.push(v.clone())
                    }
                }
                Node::Num(_) | Node::Idx(_) => {}
                Node::Neg(a) | Node::Member(a, _) => walk(a, out),
                Node::Bin(_, a, b) => {
                    walk(a, out);
                    walk(b, out)
                }
                Node::Call(_, args) => args.iter().for_each(|a| walk(a, out)),
                Node::Construct(_, parts) => parts.iter().for_each(|(a, _)| walk(a, out)),
                Node::Model(_, args) => args.iter().for_each(|(_, a)| walk(a, out)),
            }
        }
        let mut out = Vec::new();
        walk(&self.root, &mut out);
        out
    }

    /// The reference models the expression calls, each once, in order.
    pub fn models(&self) -> Vec<&'static crate::reference::Model> {
        fn walk(n: &Node, out: &mut Vec<&'static crate::reference::Model>) {
            match n {
                Node::Num(_) | Node::Idx(_) | Node::Var(_) => {}
                Node::Neg(a) | Node::Member(a, _) => walk(a, out),
                Node::Bin(_, a, b) => {
                    walk(a, out);
                    walk(b, out)
                }
                Node::Call(_, args) => args.iter().for_each(|a| walk(a, out)),
                Node::Construct(_, parts) => parts.iter().for_each(|(a, _)| walk(a, out)),
                Node::Model(m, args) => {
                    if !out.iter().any(|x| std::ptr::eq(*x, m.0)) {
                        out.push(m.0);
                    }
                    args.iter().for_each(|(_, a)| walk(a, out))
                }
            }
        }
        let mut out = Vec::new();
        walk(&self.root, &mut out);
        out
    }

    /// Every model call with all its arguments, in parameter order: a
    /// positional argument, else the named one, else `default(parameter)`.
    /// Refuses an argument given twice and one nobody gives.
    pub fn fill_models(&self, default: &dyn Fn(&str) -> Option<Expr>) -> Result<Expr, String> {
        fn fill(n: &Node, default: &dyn Fn(&str) -> Option<Expr>) -> Result<Node, String> {
            let f = |a: &Node| fill(a, default);
            Ok(match n {
                Node::Num(_) | Node::Idx(_) | Node::Var(_) => n.clone(),
                Node::Neg(a) => Node::Neg(f(a)?.into()),
                Node::Member(a, k) => Node::Member(f(a)?.into(), *k),
                Node::Bin(op, a, b) => Node::Bin(*op, f(a)?.into(), f(b)?.into()),
                Node::Call(name, args) => {
                    Node::Call(name.clone(), args.iter().map(f).collect::<Result<_, _>>()?)
                }
                Node::Construct(name, parts) => Node::Construct(
                    name.clone(),
                    parts
                        .iter()
                        .map(|(a, t)| Ok((f(a)?, t.clone())))
                        .collect::<Result<_, String>>()?,
                ),
                Node::Model(m, args) => {
                    let positional = args.iter().take_while(|(k, _)| k.is_none()).count();
                    if args[positional..].iter().any(|(k, _)| k.is_none()) {
                        return Err(format!(
                            "model `{}`: a positional argument follows a named one",
                            m.0.name
                        ));
                    }
                    let mut out = Vec::new();
                    for (i, p) in m.0.params.iter().enumerate() {
                        let named: Vec<_> = args
                            .iter()
                            .filter(|(k, _)| k.as_deref() == Some(p.name))
                            .collect();
                        if named.len() + usize::from(i < positional) > 1 {
                            return Err(format!(
                                "model `{}`: parameter `{}` is given twice",
                                m.0.name, p.name
                            ));
                        }
                        let node = if i < positional {
                            f(&args[i].1)?
                        } else if let Some((_, a)) = named.first() {
                            f(a)?
                        } else if let Some(e) = default(p.name) {
                            e.root
                        } else {
                            return Err(format!(
                                "model `{}` needs `{}`: give it in the call (`{}({} = ...)`), in `reference_args`, in `args` or as a sweep parameter",
                                m.0.name, p.name, m.0.name, p.name
                            ));
                        };
                        out.push((Some(p.name.to_string()), node));
                    }
                    Node::Model(*m, out)
                }
            })
        }
        Ok(Expr {
            text: self.text.clone(),
            root: fill(&self.root, default)?,
        })
    }

    /// Evaluate with the given variables.
    pub fn eval(&self, vars: &BTreeMap<&str, Value>) -> Result<Value, String> {
        eval(&self.root, vars, &[])
    }

    /// Resolve variables to positions in `names` for fast repeated
    /// evaluation; `example` (one value per name) is used for a trial run
    /// that reports type errors (scalar vs vec3) once, here.
    pub fn bind(&self, names: &[String], example: &[Value]) -> Result<BoundExpr, String> {
        fn resolve(n: &Node, names: &[String]) -> Result<Node, String> {
            Ok(match n {
                Node::Var(v) => match names.iter().position(|x| x == v) {
                    Some(i) => Node::Idx(i),
                    None => {
                        return Err(format!(
                            "unknown name `{v}` (sweep parameters: {})",
                            names.join(", ")
                        ))
                    }
                },
                Node::Num(_) | Node::Idx(_) => n.clone(),
                Node::Neg(a) => Node::Neg(resolve(a, names)?.into()),
                Node::Member(a, k) => Node::Member(resolve(a, names)?.into(), *k),
                Node::Bin(op, a, b) => {
                    Node::Bin(*op, resolve(a, names)?.into(), resolve(b, names)?.into())
                }
                Node::Call(f, args) => Node::Call(
                    f.clone(),
                    args.iter()
                        .map(|a| resolve(a, names))
                        .collect::<Result<_, _>>()?,
                ),
                Node::Construct(name, parts) => Node::Construct(
                    name.clone(),
                    parts
                        .iter()
                        .map(|(a, t)| Ok((resolve(a, names)?, t.clone())))
                        .collect::<Result<_, String>>()?,
                ),
                Node::Model(m, args) => Node::Model(
                    *m,
                    args.iter()
                        .map(|(k, a)| Ok((k.clone(), resolve(a, names)?)))
                        .collect::<Result<_, String>>()?,
                ),
            })
        }
        let root = resolve(&self.root, names)?;
        let width = eval(&root, &BTreeMap::new(), example)?.width();
        let var = match root {
            Node::Idx(i) => Some(i),
            _ => None,
        };
        Ok(BoundExpr { root, width, var })
    }

    /// The expression with variable `name` replaced by expression `with`
    /// (used to test "what if this parameter were remapped" hypotheses).
    pub fn substitute(&self, name: &str, with: &Expr) -> Expr {
        fn sub(n: &Node, name: &str, with: &Node) -> Node {
            match n {
                Node::Var(v) if v == name => with.clone(),
                Node::Var(_) | Node::Num(_) | Node::Idx(_) => n.clone(),
                Node::Neg(a) => Node::Neg(sub(a, name, with).into()),
                Node::Member(a, k) => Node::Member(sub(a, name, with).into(), *k),
                Node::Bin(op, a, b) => {
                    Node::Bin(*op, sub(a, name, with).into(), sub(b, name, with).into())
                }
                Node::Call(f, args) => {
                    Node::Call(f.clone(), args.iter().map(|a| sub(a, name, with)).collect())
                }
                Node::Construct(f, parts) => Node::Construct(
                    f.clone(),
                    parts
                        .iter()
                        .map(|(a, t)| (sub(a, name, with), t.clone()))
                        .collect(),
                ),
                Node::Model(m, args) => Node::Model(
                    *m,
                    args.iter()
                        .map(|(k, a)| (k.clone(), sub(a, name, with)))
                        .collect(),
                ),
            }
        }
        Expr {
            text: format!("{} [{name} := {}]", self.text, with.text),
            root: sub(&self.root, name, &with.root),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ev(text: &str, vars: &[(&'static str, Value)]) -> Value {
        let m: BTreeMap<&str, Value> = vars.iter().copied().collect();
        Expr::parse(text).unwrap().eval(&m).unwrap()
    }

    #[test]
    fn precedence_and_functions() {
        assert_eq!(ev("1 + 2 * 3", &[]), Value::S(7.0));
        assert_eq!(ev("-2 ^ 2", &[]), Value::S(-4.0));
        assert_eq!(ev("r * r", &[("r", Value::S(0.5))]), Value::S(0.25));
        assert_eq!(
            ev("dot(normalize(vec3(3, 0, 4)), vec3(0, 0, 1))", &[]),
            Value::S(0.8)
        );
        assert_eq!(
            ev(
                "(a + b).y",
                &[
                    ("a", Value::V([1.0, 2.0, 3.0])),
                    ("b", Value::V([1.0, 1.0, 1.0]))
                ]
            ),
            Value::S(3.0)
        );
        assert_eq!(ev("clamp(2, 0, 1)", &[]), Value::S(1.0));
        assert_eq!(ev("1e-4 * 2", &[]), Value::S(2e-4));
    }

    #[test]
    fn errors_name_the_position() {
        let e = Expr::parse("1 + ").unwrap_err();
        assert_eq!(e.offset, 4);
        let e = Expr::parse("sqr(x)").unwrap_err();
        assert!(e.message.contains("unknown function `sqr`"), "{e}");
        let e = Expr::parse("pow(x)").unwrap_err();
        assert!(e.message.contains("takes 2"), "{e}");
        let err = Expr::parse("x + y")
            .unwrap()
            .eval(&BTreeMap::from([("x", Value::S(1.0))]))
            .unwrap_err();
        assert!(err.contains("unknown name `y`"), "{err}");
    }

    #[test]
    fn substitution_rewrites_variables() {
        let e = Expr::parse("r * r")
            .unwrap()
            .substitute("r", &Expr::parse("sqrt(r)").unwrap());
        assert_eq!(
            e.eval(&BTreeMap::from([("r", Value::S(0.25))])).unwrap(),
            Value::S(0.25)
        );
    }
}
