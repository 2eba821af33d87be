//! A deliberately simple tree-walking interpreter of naga IR, written only as
//! an oracle for tests: one point at a time, scalars only, plain Rust
//! `f32`/`i32`/`u32`/`bool` with WGSL's rules written out here. It shares no
//! code with shadegate's evaluator (no lowering, no lanes, no `arith`), so a
//! disagreement between the two is a bug in one of them.
//!
//! It walks a validated `naga::Module` as naga documents its IR (crate root
//! docs, "Expression evaluation time"): `Literal`, `Constant`, `ZeroValue`,
//! `FunctionArgument` and `LocalVariable` are available on entry; every other
//! expression gets its value when the `Emit` covering it runs (or, for a
//! `CallResult`, when its `Call` runs), and keeps it until re-emitted. A local
//! variable is one cell of a stack of cells; a pointer is a cell's index, so
//! `ptr<function, T>` arguments write the caller's variables.
//!
//! Anything the statement generator in `programs.rs` never produces
//! (vectors, matrices, arrays, structs, globals, f16, most built-ins) is
//! refused with a panic naming it: this is a test tool, not a second
//! evaluator.

use naga::{
    BinaryOperator as BO, Expression as E, Handle, Literal, MathFunction as MF, ScalarKind,
    Statement as S, TypeInner, UnaryOperator as UO,
};

/// One scalar value, or a pointer to a variable's cell.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Value {
    F32(f32),
    I32(i32),
    U32(u32),
    Bool(bool),
    Ptr(usize),
}

impl Value {
    /// The value in shadegate's column encoding (f32 bits, i32 two's
    /// complement, bool 0/1).
    pub fn bits(self) -> u32 {
        match self {
            Value::F32(x) => x.to_bits(),
            Value::I32(x) => x as u32,
            Value::U32(x) => x,
            Value::Bool(b) => u32::from(b),
            Value::Ptr(_) => panic!("a pointer has no column encoding"),
        }
    }

    fn f(self) -> f32 {
        match self {
            Value::F32(x) => x,
            v => panic!("expected f32, got {v:?}"),
        }
    }
    fn b(self) -> bool {
        match self {
            Value::Bool(x) => x,
            v => panic!("expected bool, got {v:?}"),
        }
    }
    fn ptr(self) -> usize {
        match self {
            Value::Ptr(x) => x,
            v => panic!("expected a pointer, got {v:?}"),
        }
    }
}

/// A rule the interpreter can be told to break, so a test can show that the
/// comparison with the evaluator notices a wrong oracle (the mirror image of
/// planting a bug in the evaluator).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Fault {
    None,
    /// `break if c` leaves the loop when `c` is false.
    BreakIfInverted,
    /// `continue` jumps past the `continuing` block to the next iteration.
    ContinueSkipsContinuing,
    /// A switch case never falls through (`case 1, 2:` runs only for 2).
    NoFallThrough,
    /// A store through a pointer argument is dropped.
    PointerStoreLost,
    /// `i32` division by zero gives 0 instead of the dividend.
    DivideByZeroGivesZero,
}

/// Events the interpreter saw, so a test can check that the generated
/// programs exercise each rule at run time, not only in their text.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum Event {
    BreakIfTaken,
    ContinueTaken,
    BreakTaken,
    FellThrough,
    DefaultTaken,
    ReturnFromLoop,
    StoreThroughPointer,
    NestedCall,
    DivideByZero,
    MinOverMinusOne,
}

/// Every [`Event`], for coverage checks.
pub const EVENTS: [Event; 10] = [
    Event::BreakIfTaken,
    Event::ContinueTaken,
    Event::BreakTaken,
    Event::FellThrough,
    Event::DefaultTaken,
    Event::ReturnFromLoop,
    Event::StoreThroughPointer,
    Event::NestedCall,
    Event::DivideByZero,
    Event::MinOverMinusOne,
];

/// How a block ended.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Flow {
    Next,
    Break,
    Continue,
    Return(Option<Value>),
}

struct Frame<'m> {
    func: &'m naga::Function,
    args: Vec<Value>,
    /// Values of emitted expressions, by handle index.
    vals: Vec<Option<Value>>,
    /// Cell of the function's first local variable.
    base: usize,
}

/// What one call of the interpreted function gave.
#[derive(Clone, Copy, Debug)]
pub struct Outcome {
    pub result: Option<Value>,
    /// An indeterminate value was made (WGSL "Indeterminate values": a NaN
    /// converted to an integer); the point's result is not pinned.
    pub indeterminate: bool,
    /// Loop iterations run in all.
    pub steps: u64,
    /// A loop ran past the interpreter's own limit (only a broken rule, see
    /// [`Fault`], can make a generated loop do that); `result` is `None`.
    pub ran_away: bool,
    /// Bit `e as u32` set for each [`Event`] seen.
    pub seen: u32,
}

pub struct Interp<'m> {
    module: &'m naga::Module,
    fault: Fault,
    cells: Vec<Value>,
    indeterminate: bool,
    steps: u64,
    ran_away: bool,
    seen: u32,
    /// Function calls in progress.
    depth: u32,
    /// Loop iterations allowed before the interpreter gives up (the
    /// generator bounds every loop, so reaching this is a generator bug).
    max_steps: u64,
}

impl<'m> Interp<'m> {
    /// An interpreter of `module` that gives up after `max_steps` loop
    /// iterations per call (`Outcome::ran_away`).
    pub fn new(module: &'m naga::Module, fault: Fault, max_steps: u64) -> Self {
        Interp {
            module,
            fault,
            cells: Vec::new(),
            indeterminate: false,
            steps: 0,
            ran_away: false,
            seen: 0,
            depth: 0,
            max_steps,
        }
    }

    /// Call function `name` with scalar `args`.
    pub fn call_named(&mut self, name: &str, args: &[Value]) -> Outcome {
        let (fh, _) = self
            .module
            .functions
            .iter()
            .find(|(_, f)| f.name.as_deref() == Some(name))
            .unwrap_or_else(|| panic!("no function `{name}`"));
        self.cells.clear();
        self.indeterminate = false;
        self.steps = 0;
        self.ran_away = false;
        self.seen = 0;
        let result = self.call(fh, args.to_vec());
        Outcome {
            result,
            indeterminate: self.indeterminate,
            steps: self.steps,
            ran_away: self.ran_away,
            seen: self.seen,
        }
    }

    fn see(&mut self, e: Event) {
        self.seen |= 1 << e as u32;
    }

    fn call(&mut self, fh: Handle<naga::Function>, args: Vec<Value>) -> Option<Value> {
        let func = &self.module.functions[fh];
        self.depth += 1;
        if self.depth > 2 {
            self.see(Event::NestedCall);
        }
        let base = self.cells.len();
        let mut frame = Frame {
            func,
            args,
            vals: vec![None; func.expressions.len()],
            base,
        };
        // Locals exist from entry: the initialiser (a constant expression of
        // this function) or the type's zero value.
        for (_, local) in func.local_variables.iter() {
            let v = match local.init {
                Some(h) => self.get(&frame, h),
                None => self.zero(local.ty),
            };
            self.cells.push(v);
        }
        let flow = self.block(&mut frame, &func.body);
        self.cells.truncate(base);
        self.depth -= 1;
        match flow {
            Flow::Return(v) => v,
            _ if self.ran_away => None,
            // Falling off the end is allowed only without a result.
            Flow::Next => {
                assert!(func.result.is_none(), "fell off the end of a function");
                None
            }
            f => panic!("{f:?} escaped a function"),
        }
    }

    fn zero(&self, ty: Handle<naga::Type>) -> Value {
        match self.module.types[ty].inner {
            TypeInner::Scalar(s) => match (s.kind, s.width) {
                (ScalarKind::Float, 4) => Value::F32(0.0),
                (ScalarKind::Sint, 4) => Value::I32(0),
                (ScalarKind::Uint, 4) => Value::U32(0),
                (ScalarKind::Bool, _) => Value::Bool(false),
                other => panic!("unsupported scalar {other:?}"),
            },
            ref other => panic!("unsupported type {other:?}"),
        }
    }

    fn block(&mut self, frame: &mut Frame<'m>, block: &'m naga::Block) -> Flow {
        for stmt in block.iter() {
            let flow = self.statement(frame, stmt);
            if flow != Flow::Next {
                return flow;
            }
        }
        Flow::Next
    }

    fn statement(&mut self, frame: &mut Frame<'m>, stmt: &'m S) -> Flow {
        match *stmt {
            S::Emit(ref range) => {
                for h in range.clone() {
                    let v = self.eval(frame, h);
                    frame.vals[h.index()] = Some(v);
                }
                Flow::Next
            }
            S::Block(ref b) => self.block(frame, b),
            S::If {
                condition,
                ref accept,
                ref reject,
            } => {
                if self.get(frame, condition).b() {
                    self.block(frame, accept)
                } else {
                    self.block(frame, reject)
                }
            }
            S::Switch {
                selector,
                ref cases,
            } => {
                let sel = self.get(frame, selector);
                let hits = |v: &naga::SwitchValue| match (*v, sel) {
                    (naga::SwitchValue::I32(c), Value::I32(s)) => c == s,
                    (naga::SwitchValue::U32(c), Value::U32(s)) => c == s,
                    (naga::SwitchValue::Default, _) => false,
                    (c, s) => panic!("case {c:?} for selector {s:?}"),
                };
                // The case whose selector matches, else `default` (WGSL
                // "Switch Statement"); then fall through while the IR says so.
                let start = cases
                    .iter()
                    .position(|c| hits(&c.value))
                    .or_else(|| {
                        self.see(Event::DefaultTaken);
                        cases
                            .iter()
                            .position(|c| c.value == naga::SwitchValue::Default)
                    })
                    .expect("a switch has a default case");
                for (k, case) in cases[start..].iter().enumerate() {
                    if k > 0 {
                        self.see(Event::FellThrough);
                    }
                    match self.block(frame, &case.body) {
                        Flow::Next => {}
                        // `break` leaves the switch; `continue` and `return`
                        // go on to the enclosing loop or function.
                        Flow::Break => return Flow::Next,
                        other => return other,
                    }
                    if !case.fall_through || self.fault == Fault::NoFallThrough {
                        break;
                    }
                }
                Flow::Next
            }
            S::Loop {
                ref body,
                ref continuing,
                break_if,
            } => {
                loop {
                    self.steps += 1;
                    if self.ran_away || self.steps > self.max_steps {
                        // Unwind every frame; the caller sees `ran_away`.
                        self.ran_away = true;
                        return Flow::Return(None);
                    }
                    match self.block(frame, body) {
                        Flow::Break => {
                            self.see(Event::BreakTaken);
                            break;
                        }
                        Flow::Return(v) => {
                            self.see(Event::ReturnFromLoop);
                            return Flow::Return(v);
                        }
                        Flow::Continue => {
                            self.see(Event::ContinueTaken);
                            if self.fault == Fault::ContinueSkipsContinuing {
                                continue;
                            }
                        }
                        Flow::Next => {}
                    }
                    // `continuing` may not leave the loop except by `break if`.
                    let f = self.block(frame, continuing);
                    if self.ran_away {
                        return Flow::Return(None);
                    }
                    assert_eq!(f, Flow::Next, "continuing block left its loop");
                    if let Some(c) = break_if {
                        let c = self.get(frame, c).b();
                        if c != (self.fault == Fault::BreakIfInverted) {
                            self.see(Event::BreakIfTaken);
                            break;
                        }
                    }
                }
                Flow::Next
            }
            S::Break => Flow::Break,
            S::Continue => Flow::Continue,
            S::Return { value } => Flow::Return(value.map(|h| self.get(frame, h))),
            S::Store { pointer, value } => {
                let v = self.get(frame, value);
                let through_argument =
                    matches!(frame.func.expressions[pointer], E::FunctionArgument(_));
                if through_argument {
                    self.see(Event::StoreThroughPointer);
                }
                if !(through_argument && self.fault == Fault::PointerStoreLost) {
                    let p = self.get(frame, pointer).ptr();
                    self.cells[p] = v;
                }
                Flow::Next
            }
            S::Call {
                function,
                ref arguments,
                result,
            } => {
                let args = arguments.iter().map(|&a| self.get(frame, a)).collect();
                let r = self.call(function, args);
                if self.ran_away {
                    return Flow::Return(None);
                }
                if let Some(h) = result {
                    frame.vals[h.index()] = Some(r.expect("the callee returns a value"));
                }
                Flow::Next
            }
            ref other => panic!("unsupported statement {other:?}"),
        }
    }

    /// The value of `h` where an operand reads it: available-on-entry
    /// expressions are computed, the others must have been emitted.
    fn get(&mut self, frame: &Frame<'m>, h: Handle<naga::Expression>) -> Value {
        match frame.func.expressions[h] {
            E::Literal(_)
            | E::Constant(_)
            | E::ZeroValue(_)
            | E::FunctionArgument(_)
            | E::LocalVariable(_) => self.eval(frame, h),
            _ => frame.vals[h.index()].unwrap_or_else(|| {
                panic!(
                    "expression {h:?} ({:?}) read before it was emitted",
                    frame.func.expressions[h]
                )
            }),
        }
    }

    fn literal(l: Literal) -> Value {
        match l {
            Literal::F32(x) => Value::F32(x),
            Literal::I32(x) => Value::I32(x),
            Literal::U32(x) => Value::U32(x),
            Literal::Bool(x) => Value::Bool(x),
            other => panic!("unsupported literal {other:?}"),
        }
    }

    fn eval(&mut self, frame: &Frame<'m>, h: Handle<naga::Expression>) -> Value {
        match frame.func.expressions[h] {
            E::Literal(l) => Self::literal(l),
            E::Constant(c) => {
                let init = self.module.constants[c].init;
                match self.module.global_expressions[init] {
                    E::Literal(l) => Self::literal(l),
                    E::ZeroValue(ty) => self.zero(ty),
                    ref other => panic!("unsupported constant {other:?}"),
                }
            }
            E::ZeroValue(ty) => self.zero(ty),
            E::FunctionArgument(i) => frame.args[i as usize],
            E::LocalVariable(l) => Value::Ptr(frame.base + l.index()),
            E::Load { pointer } => {
                let p = self.get(frame, pointer).ptr();
                self.cells[p]
            }
            E::Unary { op, expr } => unary(op, self.get(frame, expr)),
            E::Binary { op, left, right } => {
                let (l, r) = (self.get(frame, left), self.get(frame, right));
                self.binary(op, l, r)
            }
            E::Select {
                condition,
                accept,
                reject,
            } => {
                // Both operands are evaluated (they were emitted); select
                // picks one (WGSL `select(f, t, cond)`).
                let (t, f) = (self.get(frame, accept), self.get(frame, reject));
                if self.get(frame, condition).b() {
                    t
                } else {
                    f
                }
            }
            E::Math {
                fun,
                arg,
                arg1,
                arg2,
                ..
            } => {
                let a = self.get(frame, arg);
                let b = arg1.map(|x| self.get(frame, x));
                let c = arg2.map(|x| self.get(frame, x));
                math(fun, a, b, c)
            }
            E::As {
                expr,
                kind,
                convert,
            } => {
                let v = self.get(frame, expr);
                self.convert(v, kind, convert)
            }
            ref other => panic!("unsupported expression {other:?}"),
        }
    }

    fn binary(&mut self, op: BO, l: Value, r: Value) -> Value {
        use Value::*;
        match (l, r) {
            (F32(a), F32(b)) => match op {
                // IEEE 754 binary32, round to nearest even: Rust's operators.
                BO::Add => F32(a + b),
                BO::Subtract => F32(a - b),
                BO::Multiply => F32(a * b),
                BO::Divide => F32(a / b),
                _ => Bool(compare(op, a.partial_cmp(&b))),
            },
            (I32(a), I32(b)) => match op {
                // Concrete integer overflow wraps (WGSL "Integer Types").
                BO::Add => I32(a.wrapping_add(b)),
                BO::Subtract => I32(a.wrapping_sub(b)),
                BO::Multiply => I32(a.wrapping_mul(b)),
                // The special cases are in `int_divide`.
                BO::Divide | BO::Modulo if b == 0 => {
                    self.see(Event::DivideByZero);
                    self.int_divide(op, a, b)
                }
                BO::Divide | BO::Modulo if a == i32::MIN && b == -1 => {
                    self.see(Event::MinOverMinusOne);
                    self.int_divide(op, a, b)
                }
                BO::Divide | BO::Modulo => self.int_divide(op, a, b),
                BO::And => I32(a & b),
                BO::InclusiveOr => I32(a | b),
                BO::ExclusiveOr => I32(a ^ b),
                _ => Bool(compare(op, Some(a.cmp(&b)))),
            },
            (U32(a), U32(b)) => match op {
                BO::Add => U32(a.wrapping_add(b)),
                BO::Subtract => U32(a.wrapping_sub(b)),
                BO::Multiply => U32(a.wrapping_mul(b)),
                // e1 / 0 is e1 and e1 % 0 is 0, as for i32.
                BO::Divide => U32(a.checked_div(b).unwrap_or(a)),
                BO::Modulo => U32(if b == 0 { 0 } else { a % b }),
                BO::And => U32(a & b),
                BO::InclusiveOr => U32(a | b),
                BO::ExclusiveOr => U32(a ^ b),
                // Runtime shift amounts are taken modulo 32 ("Bit
                // Expressions"); `>>` of u32 is logical.
                BO::ShiftLeft => U32(a << (b % 32)),
                BO::ShiftRight => U32(a >> (b % 32)),
                _ => Bool(compare(op, Some(a.cmp(&b)))),
            },
            (I32(a), U32(b)) => match op {
                BO::ShiftLeft => I32(a << (b % 32)),
                // `>>` of i32 is arithmetic (sign-extending).
                BO::ShiftRight => I32(a >> (b % 32)),
                _ => panic!("unsupported {op:?} on i32, u32"),
            },
            (Bool(a), Bool(b)) => Bool(match op {
                BO::Equal => a == b,
                BO::NotEqual => a != b,
                BO::LogicalAnd | BO::And => a & b,
                BO::LogicalOr | BO::InclusiveOr => a | b,
                _ => panic!("unsupported {op:?} on bool"),
            }),
            (l, r) => panic!("unsupported {op:?} on {l:?}, {r:?}"),
        }
    }

    /// i32 `/` and `%` per WGSL "Arithmetic Expressions": e1 / 0 is e1,
    /// MIN / -1 is MIN; e1 % 0 and MIN % -1 are 0; `/` truncates, `%` takes
    /// the sign of e1.
    fn int_divide(&self, op: BO, a: i32, b: i32) -> Value {
        let special = b == 0 || (a == i32::MIN && b == -1);
        Value::I32(match op {
            BO::Divide if b == 0 && self.fault == Fault::DivideByZeroGivesZero => 0,
            BO::Divide if special => a,
            BO::Divide => a / b,
            _ if special => 0,
            _ => a % b,
        })
    }

    /// WGSL value conversions (`T(e)`, "Floating Point Conversion") and
    /// `bitcast` (`convert: None`).
    fn convert(&mut self, v: Value, kind: ScalarKind, convert: Option<u8>) -> Value {
        use Value::*;
        if convert.is_none() {
            let bits = v.bits();
            return match kind {
                ScalarKind::Float => F32(f32::from_bits(bits)),
                ScalarKind::Sint => I32(bits as i32),
                ScalarKind::Uint => U32(bits),
                k => panic!("unsupported bitcast to {k:?}"),
            };
        }
        match (v, kind) {
            (F32(x), ScalarKind::Float) => F32(x),
            // Integer to float: the nearest f32 (the spec allows either
            // neighbour; nearest-even is what `as` gives and what a careful
            // GPU does).
            (I32(x), ScalarKind::Float) => F32(x as f32),
            (U32(x), ScalarKind::Float) => F32(x as f32),
            (Bool(b), ScalarKind::Float) => F32(if b { 1.0 } else { 0.0 }),
            // Float to integer: NaN is indeterminate; otherwise clamp to the
            // range representable in f32 and truncate: the bounds are
            // -2^31 and 2147483520 for i32, 0 and 4294967040 for u32 (the
            // spec's own examples: 1e20f → 2147483520 and 4294967040).
            (F32(x), ScalarKind::Sint) => {
                if x.is_nan() {
                    self.indeterminate = true;
                    I32(0)
                } else if x >= 2147483520.0 {
                    I32(2147483520)
                } else if x <= -2147483648.0 {
                    I32(i32::MIN)
                } else {
                    I32(x.trunc() as i32)
                }
            }
            (F32(x), ScalarKind::Uint) => {
                if x.is_nan() {
                    self.indeterminate = true;
                    U32(0)
                } else if x >= 4294967040.0 {
                    U32(4294967040)
                } else if x <= 0.0 {
                    U32(0)
                } else {
                    U32(x.trunc() as u32)
                }
            }
            // Between i32 and u32 a conversion keeps the bits.
            (I32(x), ScalarKind::Sint) => I32(x),
            (I32(x), ScalarKind::Uint) => U32(x as u32),
            (U32(x), ScalarKind::Uint) => U32(x),
            (U32(x), ScalarKind::Sint) => I32(x as i32),
            (Bool(b), ScalarKind::Sint) => I32(i32::from(b)),
            (Bool(b), ScalarKind::Uint) => U32(u32::from(b)),
            // bool(e) is e != 0 (NaN != 0 is true).
            (F32(x), ScalarKind::Bool) => Bool(x != 0.0),
            (I32(x), ScalarKind::Bool) => Bool(x != 0),
            (U32(x), ScalarKind::Bool) => Bool(x != 0),
            (Bool(b), ScalarKind::Bool) => Bool(b),
            (v, k) => panic!("unsupported conversion of {v:?} to {k:?}"),
        }
    }
}

fn compare(op: BO, o: Option<std::cmp::Ordering>) -> bool {
    use std::cmp::Ordering::*;
    // `None` is an unordered float comparison (a NaN operand): only `!=`
    // holds.
    match op {
        BO::Equal => o == Some(Equal),
        BO::NotEqual => o != Some(Equal),
        BO::Less => o == Some(Less),
        BO::LessEqual => matches!(o, Some(Less | Equal)),
        BO::Greater => o == Some(Greater),
        BO::GreaterEqual => matches!(o, Some(Greater | Equal)),
        _ => panic!("unsupported operator {op:?}"),
    }
}

fn unary(op: UO, v: Value) -> Value {
    use Value::*;
    match (op, v) {
        // Negation flips the sign bit, NaN and zero included.
        (UO::Negate, F32(x)) => F32(-x),
        // -i32::MIN is i32::MIN (wrapping).
        (UO::Negate, I32(x)) => I32(x.wrapping_neg()),
        (UO::LogicalNot, Bool(b)) => Bool(!b),
        (UO::BitwiseNot, I32(x)) => I32(!x),
        (UO::BitwiseNot, U32(x)) => U32(!x),
        (op, v) => panic!("unsupported {op:?} of {v:?}"),
    }
}

/// WGSL "Numeric Built-in Functions", as the spec defines them.
fn math(fun: MF, a: Value, b: Option<Value>, c: Option<Value>) -> Value {
    use Value::*;
    // min(e1, e2) = e2 if e2 < e1 else e1; max(e1, e2) = e2 if e1 < e2 else
    // e1: written as comparisons, so NaN operands follow the formula.
    let fmin = |x: f32, y: f32| if y < x { y } else { x };
    let fmax = |x: f32, y: f32| if x < y { y } else { x };
    match (fun, a, b, c) {
        // abs clears the sign bit; abs(i32::MIN) is i32::MIN.
        (MF::Abs, F32(x), None, None) => F32(f32::from_bits(x.to_bits() & 0x7fff_ffff)),
        (MF::Abs, I32(x), None, None) => I32(x.wrapping_abs()),
        (MF::Abs, U32(x), None, None) => U32(x),
        (MF::Min, F32(x), Some(y), None) => F32(fmin(x, y.f())),
        (MF::Max, F32(x), Some(y), None) => F32(fmax(x, y.f())),
        (MF::Min, I32(x), Some(I32(y)), None) => I32(if y < x { y } else { x }),
        (MF::Max, I32(x), Some(I32(y)), None) => I32(if x < y { y } else { x }),
        (MF::Min, U32(x), Some(U32(y)), None) => U32(if y < x { y } else { x }),
        (MF::Max, U32(x), Some(U32(y)), None) => U32(if x < y { y } else { x }),
        // clamp(e, low, high) = min(max(e, low), high): the spec's first
        // formulation for floats (the median is also allowed; they differ
        // only when low > high, where shadegate documents this choice), the
        // only one for integers.
        (MF::Clamp, F32(x), Some(lo), Some(hi)) => F32(fmin(fmax(x, lo.f()), hi.f())),
        (MF::Clamp, I32(x), Some(I32(lo)), Some(I32(hi))) => {
            let m = if x < lo { lo } else { x };
            I32(if hi < m { hi } else { m })
        }
        (MF::Clamp, U32(x), Some(U32(lo)), Some(U32(hi))) => {
            let m = if x < lo { lo } else { x };
            U32(if hi < m { hi } else { m })
        }
        (MF::CountOneBits, U32(x), None, None) => U32(x.count_ones()),
        (MF::CountOneBits, I32(x), None, None) => I32(x.count_ones() as i32),
        (fun, a, b, c) => panic!("unsupported {fun:?}({a:?}, {b:?}, {c:?})"),
    }
}
