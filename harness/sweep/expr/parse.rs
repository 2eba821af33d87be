//! The recursive-descent parser of the expression language (grammar in the parent's module
//! doc). Every open nesting level and every tree height is counted against the
//! `expression_depth` limit, so neither parsing nor a later walk of the tree can overflow
//! the stack.

use super::{ExprError, ModelRef, Node};

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

pub(super) const FUNCTIONS: &[(&str, usize)] = &[
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
                    if name == "vec3" && args.len() == 1 {
                        // The splat: one value in every component.
                        let x = args.remove(0);
                        return self.node(Node::Call(name, vec![x.clone(), x.clone(), x]), h + 1);
                    }
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

/// Parses `text` into a tree under `depth_limit`; `models` allows calls of reference models.
pub(super) fn parse(text: &str, depth_limit: u32, models: bool) -> Result<Node, ExprError> {
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
    Ok(root)
}
