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
//! cross, length, normalize, vec3, mix.
//!
//! A *reference expression* ([`Expr::parse_reference`]) may also call the
//! reference models of [`crate::reference`] by name: `lambert * n_dot_l`,
//! `ggx_ndf(alpha = roughness ^ 2)`, `schlick_fresnel(n_dot_v) + sheen`.
//! A model's arguments are positional, named (`alpha = ...`) or left out; a
//! left-out one is filled by [`Expr::fill_models`] (the suite fills it from
//! `reference_args`, `args` or the sweep parameter of the same name). A model
//! inside an expression gives a scalar or a vec3 (one or three outputs).

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

struct Parser<'a> {
    s: &'a [u8],
    i: usize,
    /// Open nesting levels (parentheses, calls, unary minus, `^`) right now:
    /// bounds the parser's recursion.
    nest: u32,
    /// The `expression_depth` limit: bounds both `nest` and the height of the
    /// tree (a chain `x + x + …` is built in a loop but is as tall as it is
    /// long, and every later walk of the tree recurses).
    limit: u32,
    /// Whether reference models may be called (a reference expression).
    models: bool,
}

/// A parsed node and the height of its tree.
type Parsed = (Node, u32);

const FUNCTIONS: &[(&str, usize)] = &[
    ("sqrt", 1),
    ("abs", 1),
    ("sin", 1),
    ("cos", 1),
    ("tan", 1),
    ("asin", 1),
    ("acos", 1),
    ("atan", 1),
    ("atan2", 2),
    ("exp", 1),
    ("log", 1),
    ("pow", 2),
    ("min", 2),
    ("max", 2),
    ("clamp", 3),
    ("saturate", 1),
    ("radians", 1),
    ("degrees", 1),
    ("dot", 2),
    ("cross", 2),
    ("length", 1),
    ("normalize", 1),
    ("vec3", 3),
    ("mix", 3),
];

impl<'a> Parser<'a> {
    fn err<T>(&self, msg: impl Into<String>) -> Result<T, ExprError> {
        Err(ExprError {
            offset: self.i,
            message: msg.into(),
        })
    }

    fn ws(&mut self) {
        while self.i < self.s.len() && self.s[self.i].is_ascii_whitespace() {
            self.i += 1;
        }
    }

    fn peek(&mut self) -> Option<u8> {
        self.ws();
        self.s.get(self.i).copied()
    }

    fn eat(&mut self, c: u8) -> bool {
        if self.peek() == Some(c) {
            self.i += 1;
            true
        } else {
            false
        }
    }

    /// The error of an expression nested deeper than the limit.
    fn too_deep<T>(&self) -> Result<T, ExprError> {
        let l = crate::limits::Limit::ExpressionDepth;
        self.err(format!(
            "the expression is nested deeper than {} levels (the `{l}` limit); {}",
            self.limit,
            l.how_to_raise()
        ))
    }

    /// Open one nesting level (checked before recursing).
    fn open(&mut self) -> Result<(), ExprError> {
        self.nest += 1;
        if self.nest > self.limit {
            return self.too_deep();
        }
        Ok(())
    }

    /// A node whose tree is `h` high, refused above the limit.
    fn node(&self, n: Node, h: u32) -> Result<Parsed, ExprError> {
        if h > self.limit {
            return self.too_deep();
        }
        Ok((n, h))
    }

    fn expr(&mut self) -> Result<Parsed, ExprError> {
        let (mut l, mut h) = self.term()?;
        loop {
            match self.peek() {
                Some(c @ (b'+' | b'-')) => {
                    self.i += 1;
                    let (r, rh) = self.term()?;
                    (l, h) = self.node(Node::Bin(c as char, l.into(), r.into()), h.max(rh) + 1)?;
                }
                _ => return Ok((l, h)),
            }
        }
    }

    fn term(&mut self) -> Result<Parsed, ExprError> {
        let (mut l, mut h) = self.unary()?;
        loop {
            match self.peek() {
                Some(c @ (b'*' | b'/')) => {
                    self.i += 1;
                    let (r, rh) = self.unary()?;
                    (l, h) = self.node(Node::Bin(c as char, l.into(), r.into()), h.max(rh) + 1)?;
                }
                _ => return Ok((l, h)),
            }
        }
    }

    fn unary(&mut self) -> Result<Parsed, ExprError> {
        if self.eat(b'-') {
            self.open()?;
            let (a, h) = self.unary()?;
            self.nest -= 1;
            return self.node(Node::Neg(a.into()), h + 1);
        }
        let (base, bh) = self.postfix()?;
        if self.eat(b'^') {
            self.open()?;
            let (e, eh) = self.unary()?;
            self.nest -= 1;
            return self.node(Node::Bin('^', base.into(), e.into()), bh.max(eh) + 1);
        }
        Ok((base, bh))
    }

    fn postfix(&mut self) -> Result<Parsed, ExprError> {
        let (mut n, mut h) = self.primary()?;
        while self.eat(b'.') {
            let at = self.i;
            let name = self.ident();
            let k = match name.as_str() {
                "x" => 0,
                "y" => 1,
                "z" => 2,
                _ => {
                    return Err(ExprError {
                        offset: at,
                        message: format!(
                            "expected a component x, y or z after `.`, found `{name}`"
                        ),
                    })
                }
            };
            (n, h) = self.node(Node::Member(n.into(), k), h + 1)?;
        }
        Ok((n, h))
    }

    fn ident(&mut self) -> String {
        self.ws();
        let start = self.i;
        while self.i < self.s.len()
            && (self.s[self.i].is_ascii_alphanumeric() || self.s[self.i] == b'_')
        {
            self.i += 1;
        }
        String::from_utf8_lossy(&self.s[start..self.i]).into_owned()
    }

    fn primary(&mut self) -> Result<Parsed, ExprError> {
        match self.peek() {
            Some(b'(') => {
                self.i += 1;
                self.open()?;
                let e = self.expr()?;
                self.nest -= 1;
                if !self.eat(b')') {
                    return self.err("expected `)`");
                }
                Ok(e)
            }
            Some(c) if c.is_ascii_digit() || c == b'.' => {
                let start = self.i;
                while self.i < self.s.len()
                    && (self.s[self.i].is_ascii_digit() || self.s[self.i] == b'.')
                {
                    self.i += 1;
                }
                if self.i < self.s.len() && (self.s[self.i] == b'e' || self.s[self.i] == b'E') {
                    self.i += 1;
                    if self.i < self.s.len() && (self.s[self.i] == b'-' || self.s[self.i] == b'+') {
                        self.i += 1;
                    }
                    while self.i < self.s.len() && self.s[self.i].is_ascii_digit() {
                        self.i += 1;
                    }
                }
                let text = String::from_utf8_lossy(&self.s[start..self.i]);
                text.parse::<f64>()
                    .map(|x| (Node::Num(x), 1))
                    .map_err(|_| ExprError {
                        offset: start,
                        message: format!("`{text}` is not a number"),
                    })
            }
            Some(c) if c.is_ascii_alphabetic() || c == b'_' => {
                let at = self.i;
                let name = self.ident();
                let model = if self.models && !FUNCTIONS.iter().any(|(f, _)| *f == name) {
                    crate::reference::find(&name)
                } else {
                    None
                };
                if let Some(m) = model {
                    return self.model_call(m);
                }
                if self.eat(b'(') {
                    let Some(&(_, arity)) = FUNCTIONS.iter().find(|(f, _)| *f == name) else {
                        let known: Vec<_> = FUNCTIONS.iter().map(|f| f.0).collect();
                        return Err(ExprError {
                            offset: at,
                            message: format!(
                                "unknown function `{name}` (known: {})",
                                known.join(", ")
                            ),
                        });
                    };
                    let mut args = Vec::new();
                    let mut h = 0;
                    self.open()?;
                    if !self.eat(b')') {
                        loop {
                            let (a, ah) = self.expr()?;
                            h = h.max(ah);
                            args.push(a);
                            if self.eat(b')') {
                                break;
                            }
                            if !self.eat(b',') {
                                return self.err("expected `,` or `)`");
                            }
                        }
                    }
                    self.nest -= 1;
                    if args.len() != arity {
                        return Err(ExprError {
                            offset: at,
                            message: format!(
                                "`{name}` takes {arity} argument(s), got {}",
                                args.len()
                            ),
                        });
                    }
                    self.node(Node::Call(name, args), h + 1)
                } else if name == "pi" {
                    Ok((Node::Num(std::f64::consts::PI), 1))
                } else {
                    Ok((Node::Var(name), 1))
                }
            }
            Some(c) => self.err(format!("unexpected `{}`", c as char)),
            None => self.err("unexpected end of expression"),
        }
    }

    /// A model's name was read: `name`, or `name(arg, ..., key = arg, ...)`.
    fn model_call(&mut self, m: &'static crate::reference::Model) -> Result<Parsed, ExprError> {
        let mut args = Vec::new();
        let mut h = 0;
        if self.eat(b'(') {
            self.open()?;
            if !self.eat(b')') {
                loop {
                    // `key = expr` (the language has no `==`) or `expr`.
                    let save = self.i;
                    let key = self.ident();
                    let named = !key.is_empty() && self.eat(b'=');
                    if !named {
                        self.i = save;
                    } else if !m.params.iter().any(|p| p.name == key) {
                        let known: Vec<_> = m.params.iter().map(|p| p.name).collect();
                        return Err(ExprError {
                            offset: save,
                            message: format!(
                                "model `{}` has no parameter `{key}` (has: {})",
                                m.name,
                                known.join(", ")
                            ),
                        });
                    }
                    let (a, ah) = self.expr()?;
                    h = h.max(ah);
                    args.push((named.then_some(key), a));
                    if self.eat(b')') {
                        break;
                    }
                    if !self.eat(b',') {
                        return self.err("expected `,` or `)`");
                    }
                }
            }
            self.nest -= 1;
        }
        if args.len() > m.params.len() {
            return self.err(format!(
                "model `{}` takes {} argument(s), got {}",
                m.name,
                m.params.len(),
                args.len()
            ));
        }
        self.node(Node::Model(ModelRef(m), args), h + 1)
    }
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

    /// Parse a reference expression: [`Expr::parse_with`] where the names
    /// of reference models may also be used (see the module doc).
    pub fn parse_reference(text: &str, depth_limit: u32) -> Result<Expr, ExprError> {
        Self::parse_in(text, depth_limit, true)
    }

    fn parse_in(text: &str, depth_limit: u32, models: bool) -> Result<Expr, ExprError> {
        let mut p = Parser {
            s: text.as_bytes(),
            i: 0,
            nest: 0,
            limit: depth_limit,
            models,
        };
        let (root, _) = p.expr()?;
        if p.peek().is_some() {
            return p.err("unexpected text after the expression");
        }
        Ok(Expr {
            text: text.to_string(),
            root,
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

/// An expression with its variables resolved (see [`Expr::bind`]).
#[derive(Clone, Debug)]
pub struct BoundExpr {
    pub(super) root: Node,
    /// 1 (scalar) or 3 (vec3), as the trial run found.
    pub width: usize,
    /// `Some(i)` when the expression is just the variable at position `i`.
    pub var: Option<usize>,
}

impl BoundExpr {
    /// Evaluate with one value per bound name.
    pub fn eval(&self, vals: &[Value]) -> Result<Value, String> {
        eval(&self.root, &BTreeMap::new(), vals)
    }
}

fn eval(n: &Node, vars: &BTreeMap<&str, Value>, vals: &[Value]) -> Result<Value, String> {
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
