//! Differential property test for control flow: seeded random WGSL functions
//! with statements (local `var`s, assignments and compound assignments,
//! `if`/`else`, `switch` with several selectors per case, `default` and
//! early returns in case bodies, `loop` with `break`, `continue` and
//! `continuing { break if .. }`, `for` and `while`, early `return`s, nested
//! calls of generated helpers, helpers that write `ptr<function, T>`
//! arguments) are evaluated by `shadegate::eval::Program` over batches of
//! random points and, point by point, by the tree-walking interpreter in
//! `interp.rs`, which reads the same naga module and shares no code with the
//! evaluator. Results must agree bit for bit.
//!
//! Every loop is bounded by construction (an explicit counter the generated
//! code never writes), and the main function returns a digest of every
//! variable in scope (floats with NaN made canonical in WGSL itself, since
//! the spec pins no NaN payload), so a wrong value anywhere shows.
//!
//! Batches are evaluated at full sizes (multiples of `LANES`) and at ragged
//! ones, with inputs drawn so that different lanes take different paths
//! through branches, switches and loops: the evaluator runs divergent lanes
//! under masks, the interpreter one point at a time.
//!
//! `SHADEGATE_ORACLE_PROGRAMS` raises the number of programs for longer
//! local runs; the seeds are fixed, so a run is reproducible.

use std::collections::BTreeMap;
use std::fmt::Write as _;

use shadegate::eval::{IssueKind, Program, LANES};
use shadegate::sweep::Rng;
use shadegate::wgsl::Shader;

use crate::interp::{Fault, Interp, Value, EVENTS};

// ------------------------------------------------------------ program text

/// Scalar types of generated values.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum T {
    F,
    I,
    U,
    B,
}

impl T {
    fn wgsl(self) -> &'static str {
        match self {
            T::F => "f32",
            T::I => "i32",
            T::U => "u32",
            T::B => "bool",
        }
    }
}

/// A node of the generated text: a line, or a construct with one or more
/// headed bodies (`if .. {` body `} else {` body) and a closing line. The
/// shrinker removes or flattens nodes.
#[derive(Clone, Debug)]
enum Node {
    Line(String),
    Block(Vec<(String, Vec<Node>)>, String),
}

fn render(nodes: &[Node]) -> String {
    fn go(out: &mut String, nodes: &[Node], depth: usize) {
        for n in nodes {
            match n {
                Node::Line(l) => {
                    let _ = writeln!(out, "{:w$}{l}", "", w = depth * 4);
                }
                Node::Block(parts, tail) => {
                    for (head, body) in parts {
                        let _ = writeln!(out, "{:w$}{head}", "", w = depth * 4);
                        go(out, body, depth + 1);
                    }
                    let _ = writeln!(out, "{:w$}{tail}", "", w = depth * 4);
                }
            }
        }
    }
    let mut s = String::new();
    go(&mut s, nodes, 0);
    s
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Kind {
    /// A value parameter (read only).
    Param,
    /// A `var` of this function.
    Local,
    /// A loop counter: read freely, written only by its loop.
    Counter,
    /// A `ptr<function, T>` parameter: read as `(*p)`, written as `*p`.
    Ptr,
}

#[derive(Clone, Debug)]
struct Var {
    name: String,
    ty: T,
    kind: Kind,
}

impl Var {
    fn read(&self) -> String {
        match self.kind {
            Kind::Ptr => format!("(*{})", self.name),
            _ => self.name.clone(),
        }
    }
    fn place(&self) -> String {
        match self.kind {
            Kind::Ptr => format!("*{}", self.name),
            _ => self.name.clone(),
        }
    }
    fn writable(&self) -> bool {
        matches!(self.kind, Kind::Local | Kind::Ptr)
    }
}

/// A generated helper's signature.
#[derive(Clone, Debug)]
struct Helper {
    name: String,
    /// (type, by pointer)
    params: Vec<(T, bool)>,
    ret: T,
}

/// What the function being generated returns.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Ret {
    /// The main function: a digest of every variable in scope.
    Digest,
    /// A plain f32 expression (main functions only, for variety).
    Float,
    /// A helper's value.
    Value(T),
}

struct Gen {
    rng: Rng,
    helpers: Vec<Helper>,
    /// Helpers the current function may call (those defined before it).
    callable: usize,
    vars: Vec<Var>,
    fresh: usize,
    /// Enclosing loops (of the current function) that `break`/`continue`
    /// may target, innermost last; 0 inside a `continuing` block.
    loops: usize,
    /// Inside a switch case (so `break` is allowed) but not in a loop nested
    /// inside it.
    in_switch: bool,
    /// Inside a `continuing` block: no `return`.
    in_continuing: bool,
    ret: Ret,
    /// Statements still to generate in this function.
    budget: i32,
    /// Whether the expression being generated reads a variable or calls.
    dynamic: bool,
    /// Generating a helper (not `f`).
    helper: bool,
}

impl Gen {
    fn below(&mut self, n: usize) -> usize {
        (self.rng.next() % n as u64) as usize
    }
    fn chance(&mut self, p: f64) -> bool {
        self.rng.unit() < p
    }
    fn name(&mut self, prefix: &str) -> String {
        self.fresh += 1;
        format!("{prefix}{}", self.fresh)
    }
    fn pick_var(&mut self, ty: T, pred: impl Fn(&Var) -> bool) -> Option<Var> {
        let c: Vec<Var> = self
            .vars
            .iter()
            .filter(|v| v.ty == ty && pred(v))
            .cloned()
            .collect();
        if c.is_empty() {
            None
        } else {
            let i = self.below(c.len());
            Some(c[i].clone())
        }
    }

    // ------------------------------------------------------ expressions

    fn literal(&mut self, ty: T) -> String {
        match ty {
            T::F => {
                const L: [f32; 10] = [0.0, 1.0, -2.5, 0.5, 1e-3, 3.0e5, 2.0, -1.0, 1e30, 7.0];
                let x = if self.chance(0.7) {
                    L[self.below(L.len())]
                } else {
                    ((self.rng.unit() * 200.0 - 100.0) as f32 * 8.0).round() / 8.0
                };
                if x < 0.0 || (x == 0.0 && x.is_sign_negative()) {
                    format!("(-{:?}f)", -x)
                } else {
                    format!("{x:?}f")
                }
            }
            T::I => {
                const L: [i32; 10] = [0, 1, -1, 2, 3, 7, -7, 100, i32::MAX, i32::MIN];
                let x = if self.chance(0.7) {
                    L[self.below(L.len())]
                } else {
                    self.below(41) as i32 - 20
                };
                match x {
                    i32::MIN => "(-2147483647i - 1i)".into(),
                    x if x < 0 => format!("(-{}i)", -x),
                    x => format!("{x}i"),
                }
            }
            T::U => {
                const L: [u32; 8] = [0, 1, 2, 3, 7, 31, 100, u32::MAX];
                let x = if self.chance(0.7) {
                    L[self.below(L.len())]
                } else {
                    self.below(40) as u32
                };
                format!("{x}u")
            }
            T::B => if self.chance(0.5) { "true" } else { "false" }.into(),
        }
    }

    fn leaf(&mut self, ty: T) -> String {
        if self.chance(0.8) {
            if let Some(v) = self.pick_var(ty, |_| true) {
                self.dynamic = true;
                return v.read();
            }
        }
        self.literal(ty)
    }

    /// A call of a value-only helper returning `ty`, if there is one.
    fn call_expr(&mut self, ty: T, depth: u32) -> Option<String> {
        let c: Vec<Helper> = self.helpers[..self.callable]
            .iter()
            .filter(|h| h.ret == ty && h.params.iter().all(|p| !p.1))
            .cloned()
            .collect();
        if c.is_empty() {
            return None;
        }
        let h = &c[self.below(c.len())];
        let args: Vec<String> = h.params.iter().map(|p| self.expr(p.0, depth)).collect();
        self.dynamic = true;
        Some(format!("{}({})", h.name, args.join(", ")))
    }

    /// An expression of type `ty`. No sub-expression but a single literal
    /// is constant: naga folds constant sub-expressions and rejects those
    /// that overflow or divide by zero, so a constant composite is replaced
    /// by a variable.
    fn expr(&mut self, ty: T, depth: u32) -> String {
        let saved = self.dynamic;
        self.dynamic = false;
        let (s, literal) = self.expr_inner(ty, depth);
        let s = if self.dynamic || literal {
            s
        } else {
            self.var_leaf(ty)
        };
        self.dynamic |= saved;
        s
    }

    /// An expression that is never constant (a divisor, say: a constant zero
    /// divisor is a shader-creation error, a runtime one is defined).
    fn dynamic_expr(&mut self, ty: T, depth: u32) -> String {
        let saved = self.dynamic;
        self.dynamic = false;
        let s = self.expr(ty, depth);
        let s = if self.dynamic { s } else { self.var_leaf(ty) };
        self.dynamic |= saved;
        s
    }

    /// Some variable in scope, converted to `ty`.
    fn var_leaf(&mut self, ty: T) -> String {
        self.dynamic = true;
        if let Some(v) = self.pick_var(ty, |_| true) {
            return v.read();
        }
        let k = self.below(self.vars.len());
        let v = self.vars[k].clone();
        let r = v.read();
        match (v.ty, ty) {
            (T::B, T::F) => format!("select(0.0f, 1.0f, {r})"),
            (T::B, T::I) => format!("select(0i, 1i, {r})"),
            (T::B, T::U) => format!("select(0u, 1u, {r})"),
            (T::F, T::B) => format!("({r} > 0.0f)"),
            (T::I, T::B) => format!("({r} > 0i)"),
            (T::U, T::B) => format!("({r} > 0u)"),
            (_, t) => format!("{}({r})", t.wgsl()),
        }
    }

    /// (text, whether it is a single literal)
    fn expr_inner(&mut self, ty: T, depth: u32) -> (String, bool) {
        if depth == 0 || self.chance(0.25) {
            let before = self.dynamic;
            self.dynamic = false;
            let s = self.leaf(ty);
            let literal = !self.dynamic;
            self.dynamic |= before;
            return (s, literal);
        }
        let d = depth - 1;
        let s = match ty {
            T::F => match self.below(14) {
                0 => format!("({} + {})", self.expr(T::F, d), self.expr(T::F, d)),
                1 => format!("({} - {})", self.expr(T::F, d), self.expr(T::F, d)),
                2 => format!("({} * {})", self.expr(T::F, d), self.expr(T::F, d)),
                3 => format!("({} / {})", self.expr(T::F, d), self.dynamic_expr(T::F, d)),
                4 => format!("(-{})", self.expr(T::F, d)),
                5 => format!("abs({})", self.expr(T::F, d)),
                6 => format!("min({}, {})", self.expr(T::F, d), self.expr(T::F, d)),
                7 => format!("max({}, {})", self.expr(T::F, d), self.expr(T::F, d)),
                8 => format!(
                    "clamp({}, {}, {})",
                    self.expr(T::F, d),
                    self.expr(T::F, d),
                    self.dynamic_expr(T::F, d)
                ),
                9 => format!(
                    "select({}, {}, {})",
                    self.expr(T::F, d),
                    self.expr(T::F, d),
                    self.expr(T::B, d)
                ),
                10 => format!("f32({})", self.expr(T::I, d)),
                11 => format!("f32({})", self.expr(T::U, d)),
                12 => self.call_expr(T::F, d).unwrap_or_else(|| self.leaf(T::F)),
                _ => self.leaf(T::F),
            },
            T::I => match self.below(17) {
                0 => format!("({} + {})", self.expr(T::I, d), self.expr(T::I, d)),
                1 => format!("({} - {})", self.expr(T::I, d), self.expr(T::I, d)),
                2 => format!("({} * {})", self.expr(T::I, d), self.expr(T::I, d)),
                3 => format!("({} / {})", self.expr(T::I, d), self.dynamic_expr(T::I, d)),
                4 => format!("({} % {})", self.expr(T::I, d), self.dynamic_expr(T::I, d)),
                5 => format!("(-{})", self.expr(T::I, d)),
                6 => format!("abs({})", self.expr(T::I, d)),
                7 => format!("min({}, {})", self.expr(T::I, d), self.expr(T::I, d)),
                8 => format!("max({}, {})", self.expr(T::I, d), self.expr(T::I, d)),
                9 => format!(
                    "clamp({}, {}, {})",
                    self.expr(T::I, d),
                    self.expr(T::I, d),
                    self.dynamic_expr(T::I, d)
                ),
                10 => format!(
                    "select({}, {}, {})",
                    self.expr(T::I, d),
                    self.expr(T::I, d),
                    self.expr(T::B, d)
                ),
                11 => format!("i32({})", self.expr(T::F, d)),
                12 => format!("i32({})", self.expr(T::U, d)),
                13 => format!(
                    "({} {} ({} & 31u))",
                    self.expr(T::I, d),
                    if self.chance(0.5) { "<<" } else { ">>" },
                    self.expr(T::U, d)
                ),
                14 => format!(
                    "({} {} {})",
                    self.expr(T::I, d),
                    ["&", "|", "^"][self.below(3)],
                    self.expr(T::I, d)
                ),
                15 => self.call_expr(T::I, d).unwrap_or_else(|| self.leaf(T::I)),
                _ => self.leaf(T::I),
            },
            T::U => match self.below(15) {
                0 => format!("({} + {})", self.expr(T::U, d), self.expr(T::U, d)),
                1 => format!("({} - {})", self.expr(T::U, d), self.expr(T::U, d)),
                2 => format!("({} * {})", self.expr(T::U, d), self.expr(T::U, d)),
                3 => format!("({} / {})", self.expr(T::U, d), self.dynamic_expr(T::U, d)),
                4 => format!("({} % {})", self.expr(T::U, d), self.dynamic_expr(T::U, d)),
                5 => format!("(~{})", self.expr(T::U, d)),
                6 => format!("min({}, {})", self.expr(T::U, d), self.expr(T::U, d)),
                7 => format!("max({}, {})", self.expr(T::U, d), self.expr(T::U, d)),
                8 => format!(
                    "select({}, {}, {})",
                    self.expr(T::U, d),
                    self.expr(T::U, d),
                    self.expr(T::B, d)
                ),
                9 => format!("u32({})", self.expr(T::F, d)),
                10 => format!("u32({})", self.expr(T::I, d)),
                11 => format!(
                    "({} {} ({} & 31u))",
                    self.expr(T::U, d),
                    if self.chance(0.5) { "<<" } else { ">>" },
                    self.expr(T::U, d)
                ),
                12 => format!("countOneBits({})", self.expr(T::U, d)),
                13 => self.call_expr(T::U, d).unwrap_or_else(|| self.leaf(T::U)),
                _ => self.leaf(T::U),
            },
            T::B => match self.below(8) {
                0..=2 => {
                    let t = [T::F, T::I, T::U][self.below(3)];
                    let op = ["<", "<=", ">", ">=", "==", "!="][self.below(6)];
                    format!("({} {op} {})", self.expr(t, d), self.expr(t, d))
                }
                3 => format!("(!{})", self.expr(T::B, d)),
                // Short-circuit operators become control flow in naga.
                4 => format!("({} && {})", self.expr(T::B, d), self.expr(T::B, d)),
                5 => format!("({} || {})", self.expr(T::B, d), self.expr(T::B, d)),
                6 => format!("({} != {})", self.expr(T::B, d), self.expr(T::B, d)),
                _ => self.leaf(T::B),
            },
        };
        (s, false)
    }

    /// A condition that often differs between points: a comparison of a
    /// variable with a small constant.
    fn cond(&mut self) -> String {
        if self.chance(0.5) {
            let t = [T::F, T::I, T::U][self.below(3)];
            if let Some(v) = self.pick_var(t, |_| true) {
                let op = ["<", "<=", ">", ">=", "==", "!="][self.below(6)];
                let k = match t {
                    T::F => self.literal(T::F),
                    T::I => format!("{}i", self.below(7) as i32 - 2),
                    _ => format!("{}u", self.below(6)),
                };
                return format!("{} {op} {k}", v.read());
            }
        }
        self.expr(T::B, 2)
    }

    // ------------------------------------------------------ statements

    fn block(&mut self, max: usize, depth: u32) -> Vec<Node> {
        let mark = self.vars.len();
        let n = 1 + self.below(max);
        let mut out = Vec::new();
        for _ in 0..n {
            if self.budget <= 0 {
                break;
            }
            self.budget -= 1;
            self.statement(depth, &mut out);
        }
        self.vars.truncate(mark);
        out
    }

    fn exit(&mut self) -> Option<String> {
        let mut c = Vec::new();
        if self.loops > 0 || self.in_switch {
            c.push("break;".to_string());
        }
        if self.loops > 0 {
            c.push("continue;".to_string());
        }
        // Returns are rarer than the other exits.
        if !self.in_continuing && self.chance(0.3) {
            c.push(self.return_stmt());
        }
        if c.is_empty() {
            None
        } else {
            let i = self.below(c.len());
            Some(c.swap_remove(i))
        }
    }

    fn return_stmt(&mut self) -> String {
        match self.ret {
            Ret::Digest => format!("return {};", self.digest()),
            Ret::Float => format!("return {};", self.expr(T::F, 3)),
            Ret::Value(t) => format!("return {};", self.expr(t, 3)),
        }
    }

    /// Every variable in scope folded into one u32 (FNV-style), floats by
    /// their bits with NaN made canonical first.
    fn digest(&self) -> String {
        let mut h = "2166136261u".to_string();
        for v in &self.vars {
            let r = v.read();
            let e = match v.ty {
                T::U => r,
                T::I => format!("u32({r})"),
                T::B => format!("select(0u, 1u, {r})"),
                T::F => format!("select(bitcast<u32>({r}), 0x7fc00000u, {r} != {r})"),
            };
            h = format!("(({h} ^ {e}) * 16777619u)");
        }
        h
    }

    fn assign_op(&mut self, ty: T) -> &'static str {
        match ty {
            T::F => ["=", "+=", "-=", "*=", "/="][self.below(5)],
            T::I | T::U => ["=", "+=", "-=", "*=", "/=", "%=", "&=", "|=", "^="][self.below(9)],
            T::B => "=",
        }
    }

    fn statement(&mut self, depth: u32, out: &mut Vec<Node>) {
        let nested = depth < 3;
        let k = match self.below(if nested { 15 } else { 8 }) {
            // calls twice as often as the other simple statements
            7 if !nested => 4,
            14 => 4,
            k => k,
        };
        match k {
            // var declaration (with or without an initialiser)
            0 => {
                let ty = [T::F, T::I, T::U, T::B][self.below(4)];
                let name = self.name("v");
                let line = if self.chance(0.15) {
                    format!("var {name}: {};", ty.wgsl())
                } else {
                    format!("var {name}: {} = {};", ty.wgsl(), self.expr(ty, 2))
                };
                out.push(Node::Line(line));
                self.vars.push(Var {
                    name,
                    ty,
                    kind: Kind::Local,
                });
            }
            // assignment and compound assignment
            1 | 2 => {
                let ty = [T::F, T::I, T::U, T::B][self.below(4)];
                let Some(v) = self.pick_var(ty, Var::writable) else {
                    return self.statement(depth, out);
                };
                let op = self.assign_op(ty);
                let rhs = if op == "/=" || op == "%=" {
                    self.dynamic_expr(ty, 3)
                } else {
                    self.expr(ty, 3)
                };
                out.push(Node::Line(format!("{} {op} {rhs};", v.place())));
            }
            3 => {
                let ty = [T::I, T::U][self.below(2)];
                match self.pick_var(ty, Var::writable) {
                    Some(v) if self.chance(0.5) => {
                        let op = if self.chance(0.5) { "++" } else { "--" };
                        out.push(Node::Line(format!("{}{op};", v.place())));
                    }
                    Some(v) => {
                        let op = if self.chance(0.5) { "<<=" } else { ">>=" };
                        let amount = self.expr(T::U, 1);
                        out.push(Node::Line(format!("{} {op} ({amount} & 31u);", v.place())));
                    }
                    None => self.statement(depth, out),
                }
            }
            // a call statement (helpers with pointer arguments only here)
            4 => {
                if self.callable == 0 {
                    return self.statement(depth, out);
                }
                let k = self.below(self.callable);
                let h = self.helpers[k].clone();
                let mut used: Vec<String> = Vec::new();
                let mut args = Vec::new();
                for &(t, by_ptr) in &h.params {
                    if by_ptr {
                        let Some(v) = self.pick_var(t, |v| v.writable() && !used.contains(&v.name))
                        else {
                            return self.statement(depth, out);
                        };
                        used.push(v.name.clone());
                        args.push(match v.kind {
                            // A pointer parameter is passed on as it is.
                            Kind::Ptr => v.name.clone(),
                            _ => format!("&{}", v.name),
                        });
                    } else {
                        args.push(self.expr(t, 2));
                    }
                }
                let call = format!("{}({})", h.name, args.join(", "));
                let target = self.pick_var(h.ret, |v| v.writable() && !used.contains(&v.name));
                out.push(Node::Line(match target {
                    Some(v) if self.chance(0.7) => format!("{} = {call};", v.place()),
                    _ => format!("_ = {call};"),
                }));
            }
            // an exit (break / continue / return), under a condition
            5 | 6 if self.chance(0.5) => {
                let Some(e) = self.exit() else {
                    return self.statement(depth, out);
                };
                let c = self.cond();
                out.push(Node::Block(
                    vec![(format!("if {c} {{"), vec![Node::Line(e)])],
                    "}".into(),
                ));
            }
            // if / else / else if
            7 | 8 => {
                let c = self.cond();
                let mut parts = vec![(format!("if {c} {{"), self.block(4, depth + 1))];
                if self.chance(0.3) {
                    let c2 = self.cond();
                    parts.push((format!("}} else if {c2} {{"), self.block(3, depth + 1)));
                }
                if self.chance(0.5) {
                    parts.push(("} else {".into(), self.block(3, depth + 1)));
                }
                out.push(Node::Block(parts, "}".into()));
            }
            5 | 6 => self.statement(depth, out),
            // at most two loops deep in `f`, one in a helper
            10.. if self.loops >= if self.helper { 1 } else { 2 } => self.statement(depth, out),
            9 => self.switch(depth, out),
            _ => self.looped(depth, out),
        }
    }

    fn switch(&mut self, depth: u32, out: &mut Vec<Node>) {
        let signed = self.chance(0.5);
        let ty = if signed { T::I } else { T::U };
        let base = match self.pick_var(ty, |_| true) {
            Some(v) if self.chance(0.6) => v.read(),
            _ => self.expr(ty, 2),
        };
        let sel = match self.below(3) {
            0 => base,
            1 if signed => format!("({base} % 5i)"),
            1 => format!("({base} % 5u)"),
            _ if signed => format!("({base} & 7i)"),
            _ => format!("({base} & 7u)"),
        };
        // Distinct selector values, shared out among 1..=4 clauses; the
        // default joins one clause or stands alone.
        let mut values: Vec<i32> = (-2..=6).collect();
        for i in (1..values.len()).rev() {
            let j = self.below(i + 1);
            values.swap(i, j);
        }
        if !signed {
            values.retain(|v| *v >= 0);
        }
        let clauses = 1 + self.below(4);
        let default_at = self.below(clauses + 1);
        let saved = (self.in_switch, self.loops);
        self.in_switch = true;
        let mut cases = Vec::new();
        let mut next = 0;
        for c in 0..=clauses {
            let mut sels = Vec::new();
            if c < clauses {
                let n = 1 + self.below(3);
                for _ in 0..n {
                    if next < values.len() {
                        let v = values[next];
                        next += 1;
                        sels.push(if signed {
                            if v < 0 {
                                format!("-{}i", -v)
                            } else {
                                format!("{v}i")
                            }
                        } else {
                            format!("{v}u")
                        });
                    }
                }
            }
            if c == default_at {
                sels.push("default".into());
            }
            if sels.is_empty() {
                continue;
            }
            let head = if sels == ["default"] {
                "default: {".to_string()
            } else {
                format!("case {}: {{", sels.join(", "))
            };
            cases.push(Node::Block(
                vec![(head, self.block(3, depth + 1))],
                "}".into(),
            ));
        }
        (self.in_switch, self.loops) = saved;
        out.push(Node::Block(
            vec![(format!("switch {sel} {{"), cases)],
            "}".into(),
        ));
    }

    /// `for`, `while` or `loop`, each bounded by a counter the generated
    /// statements never write.
    fn looped(&mut self, depth: u32, out: &mut Vec<Node>) {
        let c = self.name("c");
        // The bound: a constant, or a value in 0..=7 computed per point and
        // re-evaluated each iteration.
        // Bounds shrink inside loops and helpers, so the iterations of a
        // point (a product over nested loops and calls) stay small.
        let (most, mask) = if self.loops == 0 && !self.helper {
            (6, 7)
        } else {
            (4, 3)
        };
        let bound = if self.chance(0.5) {
            format!("{}i", self.below(most))
        } else {
            format!("({} & {mask}i)", self.expr(T::I, 2))
        };
        let saved = (self.in_switch, self.loops);
        self.in_switch = false;
        self.loops += 1;
        let counter = Var {
            name: c.clone(),
            ty: T::I,
            kind: Kind::Counter,
        };
        match self.below(3) {
            0 => {
                self.vars.push(counter);
                let body = self.block(4, depth + 1);
                self.vars.pop();
                out.push(Node::Block(
                    vec![(
                        format!("for (var {c}: i32 = 0i; {c} < {bound}; {c}++) {{"),
                        body,
                    )],
                    "}".into(),
                ));
            }
            1 => {
                out.push(Node::Line(format!("var {c}: i32 = 0i;")));
                self.vars.push(counter);
                let mut body = vec![Node::Line(format!("{c}++;"))];
                body.extend(self.block(4, depth + 1));
                out.push(Node::Block(
                    vec![(format!("while {c} < {bound} {{"), body)],
                    "}".into(),
                ));
            }
            _ => {
                out.push(Node::Line(format!("var {c}: i32 = 0i;")));
                self.vars.push(counter);
                let mut body = vec![
                    Node::Block(
                        vec![(
                            format!("if {c} >= {bound} {{"),
                            vec![Node::Line("break;".into())],
                        )],
                        "}".into(),
                    ),
                    Node::Line(format!("{c}++;")),
                ];
                let mark = self.vars.len();
                body.extend(self.block(4, depth + 1));
                self.vars.truncate(mark);
                if self.chance(0.7) {
                    // The continuing block sees only what was in scope at the
                    // loop (a `continue` must not skip a declaration it uses)
                    // and may not leave the loop except by `break if`.
                    let saved_c = (self.loops, self.in_continuing);
                    self.loops = 0;
                    self.in_continuing = true;
                    let mut cont = if self.chance(0.7) {
                        self.block(2, depth + 1)
                    } else {
                        Vec::new()
                    };
                    (self.loops, self.in_continuing) = saved_c;
                    if self.chance(0.7) {
                        let b = self.cond();
                        cont.push(Node::Line(format!("break if {b};")));
                    }
                    body.push(Node::Block(vec![("continuing {".into(), cont)], "}".into()));
                }
                out.push(Node::Block(vec![("loop {".into(), body)], "}".into()));
            }
        }
        (self.in_switch, self.loops) = saved;
        // A `while`/`loop` counter stays in scope after its loop (readable).
    }
}

/// Parameters of the generated main function `f`, in order.
const MAIN_PARAMS: [(&str, T); 7] = [
    ("x0", T::F),
    ("x1", T::F),
    ("n0", T::I),
    ("n1", T::I),
    ("m0", T::U),
    ("m1", T::U),
    ("q0", T::B),
];

/// A generated module: helpers, then `f`.
#[derive(Clone, Debug)]
struct Generated {
    nodes: Vec<Node>,
    /// Whether `f` returns f32 (else the u32 digest).
    float_result: bool,
}

fn generate(seed: u64) -> Generated {
    let mut g = Gen {
        rng: Rng::new(seed),
        helpers: Vec::new(),
        callable: 0,
        vars: Vec::new(),
        fresh: 0,
        loops: 0,
        in_switch: false,
        in_continuing: false,
        ret: Ret::Digest,
        budget: 0,
        dynamic: false,
        helper: true,
    };
    let mut nodes = Vec::new();
    let helpers = g.below(4);
    for k in 0..helpers {
        let mut params = Vec::new();
        let mut sig = Vec::new();
        g.vars.clear();
        for p in 0..1 + g.below(3) {
            let by_ptr = p > 0 && g.chance(0.5);
            let t = if by_ptr {
                [T::F, T::I, T::U][g.below(3)]
            } else {
                [T::F, T::I, T::U, T::B][g.below(4)]
            };
            let name = format!("a{p}");
            sig.push(if by_ptr {
                format!("{name}: ptr<function, {}>", t.wgsl())
            } else {
                format!("{name}: {}", t.wgsl())
            });
            g.vars.push(Var {
                name,
                ty: t,
                kind: if by_ptr { Kind::Ptr } else { Kind::Param },
            });
            params.push((t, by_ptr));
        }
        let ret = [T::F, T::I, T::U][g.below(3)];
        let name = format!("h{k}");
        g.callable = k;
        g.ret = Ret::Value(ret);
        g.budget = 8;
        let mut body = g.block(5, 1);
        // Pointer parameters are mostly written (the caller's variable
        // changes), sometimes only read.
        for v in g.vars.clone() {
            if v.kind == Kind::Ptr && g.chance(0.7) {
                let op = g.assign_op(v.ty);
                let rhs = g.dynamic_expr(v.ty, 2);
                body.push(Node::Line(format!("{} {op} {rhs};", v.place())));
            }
        }
        body.push(Node::Line(g.return_stmt()));
        nodes.push(Node::Block(
            vec![(
                format!("fn {name}({}) -> {} {{", sig.join(", "), ret.wgsl()),
                body,
            )],
            "}".into(),
        ));
        g.helpers.push(Helper { name, params, ret });
    }
    g.callable = helpers;
    g.helper = false;
    g.vars = MAIN_PARAMS
        .iter()
        .map(|(n, t)| Var {
            name: n.to_string(),
            ty: *t,
            kind: Kind::Param,
        })
        .collect();
    let float_result = g.chance(0.2);
    g.ret = if float_result {
        Ret::Float
    } else {
        Ret::Digest
    };
    g.budget = 24;
    // The top-level block keeps its declarations in scope for the final
    // digest.
    // Locals of every type, so statements have variables to write.
    let mut body = Vec::new();
    for (k, (p, t)) in MAIN_PARAMS.iter().enumerate().step_by(2) {
        let name = format!("w{k}");
        body.push(Node::Line(format!("var {name}: {} = {p};", t.wgsl())));
        g.vars.push(Var {
            name,
            ty: *t,
            kind: Kind::Local,
        });
    }
    for _ in 0..6 + g.below(8) {
        if g.budget <= 0 {
            break;
        }
        g.budget -= 1;
        g.statement(0, &mut body);
    }
    body.push(Node::Line(g.return_stmt()));
    let params: Vec<String> = MAIN_PARAMS
        .iter()
        .map(|(n, t)| format!("{n}: {}", t.wgsl()))
        .collect();
    let ret = if float_result { "f32" } else { "u32" };
    nodes.push(Node::Block(
        vec![(format!("fn f({}) -> {ret} {{", params.join(", ")), body)],
        "}".into(),
    ));
    Generated {
        nodes,
        float_result,
    }
}

// ------------------------------------------------------------ points

/// One point's arguments, in `MAIN_PARAMS` order.
type Point = [Value; 7];

fn point(rng: &mut Rng) -> Point {
    let f = |rng: &mut Rng| {
        let r = rng.next();
        Value::F32(match r % 16 {
            0 => 0.0,
            1 => -0.0,
            2 => f32::NAN,
            3 => f32::INFINITY,
            4 => f32::NEG_INFINITY,
            5 => f32::MAX,
            6 => 1.0e-40,
            7 => f32::MIN_POSITIVE,
            8..=11 => ((r >> 8) % 9) as f32 - 3.0,
            _ => ((rng.unit() * 2.0 - 1.0) * 1.0e3) as f32,
        })
    };
    let i = |rng: &mut Rng| {
        let r = rng.next();
        Value::I32(match r % 10 {
            0 => i32::MIN,
            1 => i32::MAX,
            2 => -1,
            3 => (r >> 8) as i32,
            _ => ((r >> 8) % 11) as i32 - 3,
        })
    };
    let u = |rng: &mut Rng| {
        let r = rng.next();
        Value::U32(match r % 8 {
            0 => u32::MAX,
            1 => (r >> 8) as u32,
            _ => ((r >> 8) % 9) as u32,
        })
    };
    let x0 = f(rng);
    let x1 = f(rng);
    let n0 = i(rng);
    let n1 = i(rng);
    let m0 = u(rng);
    let m1 = u(rng);
    let q0 = Value::Bool(rng.next().is_multiple_of(2));
    [x0, x1, n0, n1, m0, m1, q0]
}

fn describe(p: &Point) -> String {
    MAIN_PARAMS
        .iter()
        .zip(p)
        .map(|((n, _), v)| format!("{n}={v:?}"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// Batch sizes every program is evaluated at: ragged and full.
fn sizes() -> Vec<usize> {
    vec![1, LANES - 1, LANES, LANES + 3, 2 * LANES, 3 * LANES + 5]
}

// ------------------------------------------------------------ comparison

/// A disagreement between the evaluator and the interpreter.
#[derive(Debug)]
struct Mismatch {
    batch: usize,
    point: usize,
    inputs: String,
    evaluator: u32,
    /// `None`: the interpreter's loop ran away (a broken rule).
    interpreter: Option<u32>,
    float: bool,
    /// The evaluator's issue at the point, if it reported one.
    issue: Option<String>,
}

impl std::fmt::Display for Mismatch {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let show = |b: u32| {
            if self.float {
                format!("{:?} ({b:#010x})", f32::from_bits(b))
            } else {
                format!("{b} ({b:#010x})")
            }
        };
        write!(
            f,
            "point {} of a batch of {} ({}): evaluator {}, interpreter {}",
            self.point,
            self.batch,
            self.inputs,
            show(self.evaluator),
            self.interpreter
                .map_or("no result (a loop ran away)".into(), show)
        )?;
        match &self.issue {
            Some(i) => write!(f, "; the evaluator reported: {i}"),
            None => Ok(()),
        }
    }
}

enum Verdict {
    /// naga refused the text (a constant sub-expression overflowed, say).
    Rejected(String),
    /// A loop of the program ran past the interpreter's limit although the
    /// interpreter breaks no rule.
    RanAway,
    Agree {
        compared: usize,
        skipped: usize,
        iterations: u64,
        seen: u32,
    },
    Differ(Mismatch),
}

/// Evaluate `src` with the evaluator over `points` at every size in `sizes`
/// and with the interpreter (breaking `fault`), and compare.
fn compare(src: &str, float: bool, points: &[Point], sizes: &[usize], fault: Fault) -> Verdict {
    let shader = match Shader::from_source("programs.wgsl", src.to_string()) {
        Ok(s) => s,
        Err(d) => return Verdict::Rejected(d.message),
    };
    // Once naga accepts the module, the evaluator must compile it.
    let mut program = Program::compile(&shader, "f", &BTreeMap::new())
        .unwrap_or_else(|d| panic!("the evaluator refused a valid program: {d}\n{src}"));
    // Generated loops run a few thousand iterations per point at most; a
    // budget near the interpreter's own limit keeps a runaway loop (a
    // planted bug) cheap to report and to shrink.
    program.set_step_budget(MAX_STEPS);
    let n = sizes.iter().copied().max().unwrap_or(0).min(points.len());
    let mut iterations = 0;
    let mut seen = 0;
    let mut ran_away = false;
    let want: Vec<_> = points[..n]
        .iter()
        .map(|p| {
            let o = Interp::new(&shader.module, fault, MAX_STEPS).call_named("f", p);
            iterations += o.steps;
            seen |= o.seen;
            ran_away |= o.ran_away && fault == Fault::None;
            (o.result.map(Value::bits), o.indeterminate)
        })
        .collect();
    if ran_away {
        // Generated loops are bounded; only a shrink step that removed a
        // counter's increment (or a generator bug) gets here.
        return Verdict::RanAway;
    }
    let (mut compared, mut skipped) = (0, 0);
    for &size in sizes {
        let pts = &points[..size.min(n)];
        let cols: Vec<Vec<u32>> = (0..MAIN_PARAMS.len())
            .map(|k| pts.iter().map(|p| p[k].bits()).collect())
            .collect();
        let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
        let mut out = Vec::new();
        let issues = program.try_eval(&refs, &mut out).expect("inputs match");
        // A point the evaluator abandons (step budget) or finds out of
        // bounds has no counterpart in the interpreter: a mismatch.
        if let Some(i) = issues.iter().find(|i| i.kind != IssueKind::NonFinite) {
            return Verdict::Differ(Mismatch {
                batch: pts.len(),
                point: i.point,
                inputs: describe(&pts[i.point]),
                evaluator: out[0][i.point],
                interpreter: want[i.point].0,
                float,
                issue: Some(i.message.clone()),
            });
        }
        for (k, (&got, &(bits, indeterminate))) in out[0].iter().zip(&want).enumerate() {
            if indeterminate {
                skipped += 1;
                continue;
            }
            compared += 1;
            let same = bits.is_some_and(|bits| {
                got == bits
                    || (float && f32::from_bits(got).is_nan() && f32::from_bits(bits).is_nan())
            });
            if !same {
                return Verdict::Differ(Mismatch {
                    batch: pts.len(),
                    point: k,
                    inputs: describe(&pts[k]),
                    evaluator: got,
                    interpreter: bits,
                    float,
                    issue: None,
                });
            }
        }
    }
    Verdict::Agree {
        compared,
        skipped,
        iterations,
        seen,
    }
}

/// Greedily remove or flatten nodes while the program still differs on the
/// same points (each candidate is re-validated by naga, so removals that
/// break the program are simply not taken). Bounded, and only run on a
/// failure.
fn shrink(g: &Generated, points: &[Point], sizes: &[usize], fault: Fault) -> (String, Mismatch) {
    let differs =
        |nodes: &[Node]| match compare(&render(nodes), g.float_result, points, sizes, fault) {
            Verdict::Differ(m) => Some(m),
            _ => None,
        };
    // Paths to every node, as index lists through `Block` parts.
    fn paths(nodes: &[Node], prefix: &mut Vec<usize>, out: &mut Vec<Vec<usize>>) {
        for (i, n) in nodes.iter().enumerate() {
            prefix.push(i);
            out.push(prefix.clone());
            if let Node::Block(parts, _) = n {
                for (p, (_, body)) in parts.iter().enumerate() {
                    prefix.push(p);
                    paths(body, prefix, out);
                    prefix.pop();
                }
            }
            prefix.pop();
        }
    }
    fn edit(nodes: &mut Vec<Node>, path: &[usize], flatten: bool) -> bool {
        if path.len() == 1 {
            let i = path[0];
            if i >= nodes.len() {
                return false;
            }
            let n = nodes.remove(i);
            if flatten {
                let Node::Block(parts, _) = n else {
                    return false;
                };
                for (k, b) in parts.into_iter().flat_map(|p| p.1).enumerate() {
                    nodes.insert(i + k, b);
                }
            }
            return true;
        }
        match nodes.get_mut(path[0]) {
            Some(Node::Block(parts, _)) => match parts.get_mut(path[1]) {
                Some((_, body)) => edit(body, &path[2..], flatten),
                None => false,
            },
            _ => false,
        }
    }
    let mut best = g.nodes.clone();
    let mut last = differs(&best).expect("the failure reproduces");
    let mut tries = 0;
    loop {
        let mut progress = false;
        let mut ps = Vec::new();
        paths(&best, &mut Vec::new(), &mut ps);
        // Deepest last, so removing a node does not shift later paths.
        // Functions themselves (top-level nodes) are kept: `f` must exist.
        for p in ps.iter().rev().filter(|p| p.len() > 1) {
            for flatten in [false, true] {
                if tries > 400 {
                    return (render(&best), last);
                }
                let mut cand = best.clone();
                if !edit(&mut cand, p, flatten) {
                    continue;
                }
                tries += 1;
                if let Some(m) = differs(&cand) {
                    best = cand;
                    last = m;
                    progress = true;
                    break;
                }
            }
        }
        if !progress {
            return (render(&best), last);
        }
    }
}

/// Loop iterations per point, in the evaluator's budget and the
/// interpreter's limit alike.
const MAX_STEPS: u64 = 20_000;

/// Programs checked by the default run (fixed seeds); the environment
/// variable raises it.
fn program_count() -> u64 {
    std::env::var("SHADEGATE_ORACLE_PROGRAMS")
        .ok()
        .and_then(|s| s.trim().parse().ok())
        .unwrap_or(DEFAULT_PROGRAMS)
}

const DEFAULT_PROGRAMS: u64 = 240;

/// Totals of one run over many programs.
#[derive(Debug, Default)]
struct Tally {
    programs: usize,
    rejected: usize,
    compared: usize,
    skipped: usize,
    /// Loop iterations the interpreter ran, over all points.
    iterations: u64,
    /// `interp::Event`s seen, one bit each.
    seen: u32,
    /// One rejection message per distinct message.
    rejections: Vec<String>,
}

/// Run `count` programs from seed `first`; the first mismatch is returned
/// shrunk, with the program text.
fn run_programs(first: u64, count: u64, fault: Fault, shrunk: bool) -> Result<Tally, String> {
    let mut t = Tally::default();
    let sizes = sizes();
    for seed in first..first + count {
        let g = generate(seed);
        let src = render(&g.nodes);
        let mut rng = Rng::new(seed ^ 0x5eed_0f90_1d00);
        let n = sizes.iter().copied().max().unwrap_or(1);
        let points: Vec<Point> = (0..n).map(|_| point(&mut rng)).collect();
        match compare(&src, g.float_result, &points, &sizes, fault) {
            Verdict::Rejected(why) => {
                t.rejected += 1;
                if !t.rejections.contains(&why) {
                    t.rejections.push(why);
                }
            }
            Verdict::Agree {
                compared,
                skipped,
                iterations,
                seen,
            } => {
                t.seen |= seen;
                t.programs += 1;
                t.compared += compared;
                t.skipped += skipped;
                t.iterations += iterations;
            }
            Verdict::RanAway => {
                return Err(format!("seed {seed}: a generated loop ran away\n{src}"))
            }
            Verdict::Differ(m) if !shrunk => return Err(format!("seed {seed}: {m}\n{src}")),
            Verdict::Differ(m) => {
                let (small, sm) = shrink(&g, &points, &sizes, fault);
                return Err(format!("seed {seed}: {m}\n{src}\nshrunk: {sm}\n{small}"));
            }
        }
    }
    Ok(t)
}

#[test]
fn random_programs_match_the_interpreter() {
    let count = program_count();
    let t = run_programs(0, count, Fault::None, true).unwrap_or_else(|e| panic!("{e}"));
    eprintln!("{t:#?}");
    // The generator must mostly produce programs naga accepts, and most
    // points must be compared (indeterminate ones are skipped).
    assert!(
        t.programs as u64 * 10 >= count * 9,
        "too many programs rejected by naga: {t:?}"
    );
    assert!(
        t.compared >= 4 * t.skipped,
        "too many points skipped: {t:?}"
    );
    // Each rule is exercised at run time, not only present in the text.
    for e in EVENTS {
        assert!(t.seen & (1 << e as u32) != 0, "no point saw {e:?}: {t:?}");
    }
}

/// The comparison can fail: an interpreter that breaks one rule of WGSL is
/// caught by the same programs, for each rule in turn.
#[test]
fn an_interpreter_with_a_broken_rule_is_caught() {
    for fault in [
        Fault::BreakIfInverted,
        Fault::ContinueSkipsContinuing,
        Fault::NoFallThrough,
        Fault::PointerStoreLost,
        Fault::DivideByZeroGivesZero,
    ] {
        let caught = (0..DEFAULT_PROGRAMS)
            .step_by(10)
            .any(|start| run_programs(start, 10, fault, false).is_err());
        assert!(
            caught,
            "{fault:?} was not caught by {DEFAULT_PROGRAMS} programs"
        );
    }
}

/// The generator covers what it claims: over the default programs, every
/// construct appears.
#[test]
fn generated_programs_cover_the_statements() {
    let all: String = (0..DEFAULT_PROGRAMS)
        .map(|s| render(&generate(s).nodes))
        .collect();
    for needle in [
        "var ",
        "+=",
        "++;",
        "if ",
        "} else {",
        "switch ",
        "default",
        "case ",
        "loop {",
        "continuing {",
        "break if ",
        "for (",
        "while ",
        "break;",
        "continue;",
        "return ",
        "ptr<function, f32>",
        "ptr<function, i32>",
        "&&",
        "||",
        "select(",
        "clamp(",
        "min(",
        "abs(",
        "% ",
        "/ ",
    ] {
        assert!(
            all.contains(needle),
            "no generated program contains `{needle}`"
        );
    }
}
