//! naga IR → flat slot program.
//!
//! Every value is scalarised: a `vec3<f32>` is three slots, a matrix is its
//! entries column-major, arrays and structs their leaves in order. Swizzles,
//! `Compose`, `Splat`, constant member access and `transpose` are pure slot
//! renaming and cost nothing at run time. Calls are inlined (WGSL has no
//! recursion), so pointer arguments resolve to the caller's variables at
//! compile time. Control flow becomes masked [`Op`] trees (see `exec`).

use std::collections::{BTreeMap, HashMap};
use std::rc::Rc;

use naga::{
    BinaryOperator as BO, Expression as E, Handle, Literal, MathFunction as MF, ScalarKind as NK,
    Statement as S, TypeInner,
};

use super::ir::{Case, Code, Kernel, Op, Site, Slot};
use super::lanes::*;
use super::perturb::{Bound, Perturb};
use super::ty::{ScalarKind as K, Ty};
use crate::arith;
use crate::limits::{Limit, Limits};
use crate::wgsl::{Diagnostic, Shader};

mod texture;

/// A compiled value: its type and one slot per leaf.
#[derive(Clone, Debug)]
pub struct Val {
    pub ty: Ty,
    pub slots: Vec<Slot>,
}

/// A compile-time pointer: `ty`'s leaves start at `region[dyn + offset]`.
#[derive(Clone, Debug)]
struct Place {
    region: Rc<[Slot]>,
    offset: usize,
    /// Per-lane leaf offset from dynamic indexing, already bounds-checked.
    dynamic: Option<Slot>,
    ty: Ty,
    /// Whether the region is a local of the function instance being compiled.
    own_local: bool,
}

#[derive(Clone, Debug)]
enum Item {
    Value(Val),
    Place(Place),
}

#[derive(Clone, Copy, Debug, PartialEq)]
enum Role {
    Root,
    Loop,
    Iter,
    Switch,
    Branch,
}

/// Per inlined function instance.
struct Frame<'m> {
    func: &'m naga::Function,
    info: &'m naga::valid::FunctionInfo,
    args: Vec<Item>,
    locals: HashMap<Handle<naga::LocalVariable>, Rc<[Slot]>>,
    cache: HashMap<Handle<naga::Expression>, Item>,
    result: Option<Vec<Slot>>,
    root: Slot,
}

type R<T> = Result<T, Diagnostic>;

pub struct Compiler<'m> {
    shader: &'m Shader,
    module: &'m naga::Module,
    next: Slot,
    prologue: Vec<Op>,
    consts: Vec<(Slot, u32)>,
    /// Per function being compiled (innermost last): exits (break, continue,
    /// return) emitted so far in it.
    exits: Vec<usize>,
    /// Per function being compiled: set when it ends in its only return; the
    /// returned value's slots are then its result, with no copy or mask work.
    direct_result: Vec<Option<Vec<Slot>>>,
    sites: Vec<Site>,
    globals: HashMap<Handle<naga::Expression>, Val>,
    privates: HashMap<Handle<naga::GlobalVariable>, Rc<[Slot]>>,
    overrides: HashMap<Handle<naga::Override>, Val>,
    override_values: &'m BTreeMap<String, f64>,
    used_overrides: Vec<String>,
    /// Mask stack: (role, slot); the top is the current mask.
    masks: Vec<(Role, Slot)>,
    /// The mask stacks of the calling frames (outermost first) while a
    /// callee is inlined.
    outer_masks: Vec<Slot>,
    /// The span used for diagnostics of the expression being compiled.
    span: naga::Span,
    depth: usize,
    /// Whether inexact operations get `Op::Perturb` after them.
    spec_bounds: bool,
    /// Program size and variable limits (`program_ops`, `program_slots`).
    limits: &'m Limits,
    /// Operations emitted so far (inlined calls included).
    op_count: u64,
    /// Leaves of arguments, results and variables allocated so far.
    variable_leaves: u64,
    /// The look-up tables and samplers the check binds to texture and
    /// sampler variables.
    bindings: &'m crate::table::Bindings,
}

impl<'m> Compiler<'m> {
    pub fn compile(
        shader: &'m Shader,
        name: &str,
        overrides: &'m BTreeMap<String, f64>,
        spec_bounds: bool,
        limits: &'m Limits,
        bindings: &'m crate::table::Bindings,
    ) -> R<Code> {
        let module = &shader.module;
        // A plain function, or an entry point (its `@location`/`@builtin`
        // parameters become ordinary inputs).
        let found = module
            .functions
            .iter()
            .find(|(_, f)| f.name.as_deref() == Some(name))
            .map(|(fh, f)| (f, &shader.info[fh], module.functions.get_span(fh)))
            .or_else(|| {
                let i = module.entry_points.iter().position(|e| e.name == name)?;
                let ep = &module.entry_points[i];
                let span = ep
                    .function
                    .body
                    .span_iter()
                    .next()
                    .map(|(_, s)| *s)
                    .unwrap_or_default();
                Some((&ep.function, shader.info.get_entry_point(i), span))
            });
        let Some((func, info, fspan)) = found else {
            let known = shader.function_names().join(", ");
            return Err(Diagnostic::without_position(
                &shader.path,
                format!("no function named `{name}` (functions in this file: {known})"),
            ));
        };
        let mut c = Compiler {
            shader,
            module,
            next: 0,
            prologue: Vec::new(),
            consts: Vec::new(),
            exits: vec![0],
            direct_result: vec![None],
            sites: Vec::new(),
            globals: HashMap::new(),
            privates: HashMap::new(),
            overrides: HashMap::new(),
            override_values: overrides,
            used_overrides: Vec::new(),
            spec_bounds,
            masks: Vec::new(),
            outer_masks: Vec::new(),
            span: fspan,
            depth: 0,
            limits,
            op_count: 0,
            variable_leaves: 0,
            bindings,
        };
        for key in overrides.keys() {
            // A pipeline constant is keyed by the override's name or by its
            // numeric `@id` (WebGPU "GPUProgrammableStage.constants").
            if !module.overrides.iter().any(|(_, o)| {
                o.name.as_deref() == Some(key.as_str())
                    || o.id.is_some_and(|id| id.to_string() == *key)
            }) {
                let known: Vec<_> = module
                    .overrides
                    .iter()
                    .filter_map(|(_, o)| o.name.clone())
                    .collect();
                return Err(Diagnostic::without_position(
                    &shader.path,
                    format!(
                        "override `{key}` is not declared in this file (declared: {})",
                        known.join(", ")
                    ),
                ));
            }
        }
        let root = c.slot();
        let mut params = Vec::new();
        let mut input_slots = Vec::new();
        let mut args = Vec::new();
        for (i, a) in func.arguments.iter().enumerate() {
            let span = fspan;
            let ty = c.ty_of_handle(a.ty, span)?;
            let slots = c.variable_slots(ty.leaf_count(), "this argument")?;
            input_slots.extend(&slots);
            params.push((
                a.name.clone().unwrap_or_else(|| format!("arg{i}")),
                ty.clone(),
            ));
            args.push(Item::Value(Val { ty, slots }));
        }
        let result = match &func.result {
            Some(r) => Some(c.ty_of_handle(r.ty, fspan)?),
            None => None,
        };
        let output_slots = match &result {
            Some(t) => c.variable_slots(t.leaf_count(), "the result")?,
            None => Vec::new(),
        };
        let mut body = Vec::new();
        // Private variables are per invocation: initialise them for every batch.
        for (gh, g) in module.global_variables.iter() {
            if g.space == naga::AddressSpace::Private {
                c.span = module.global_variables.get_span(gh);
                let ty = c.ty_of_handle(g.ty, c.span)?;
                let slots: Rc<[Slot]> = c
                    .variable_slots(ty.leaf_count(), "this private variable")?
                    .into();
                let init = match g.init {
                    Some(e) => Some(c.global_expr(e)?),
                    None => None,
                };
                for (i, &s) in slots.iter().enumerate() {
                    match &init {
                        Some(v) => c.emit_prologue(Op::Copy {
                            dst: s,
                            src: v.slots[i],
                        }),
                        None => c.emit_prologue(Op::Fill { dst: s, bits: 0 }),
                    }
                }
                c.privates.insert(gh, slots);
            }
        }
        c.span = fspan;
        let mut frame = Frame {
            func,
            info,
            args,
            locals: HashMap::new(),
            cache: HashMap::new(),
            result: Some(output_slots.clone()),
            root,
        };
        c.masks.push((Role::Root, root));
        c.init_locals(&mut frame, &mut body)?;
        c.block(&mut frame, &func.body, &mut body)?;
        c.masks.pop();
        let mut ops = std::mem::take(&mut c.prologue);
        let output_slots = match c.direct_result[0].take() {
            Some(direct) => direct,
            None => {
                // Returns copy into the result under their masks: start it
                // from zero so no lane reads what an earlier batch left.
                ops.extend(output_slots.iter().map(|&dst| Op::Fill { dst, bits: 0 }));
                output_slots
            }
        };
        ops.extend(body);
        Ok(Code {
            consts: std::mem::take(&mut c.consts),
            ops,
            slot_count: c.next as usize,
            sites: c.sites,
            params,
            input_slots,
            result,
            output_slots,
            root_mask: root,
        })
    }

    // ------------------------------------------------------------ helpers

    fn slot(&mut self) -> Slot {
        let s = self.next;
        self.next += 1;
        s
    }

    fn slots(&mut self, n: usize) -> Vec<Slot> {
        (0..n).map(|_| self.slot()).collect()
    }

    /// Slots for the leaves of an argument, result or variable, refused
    /// before anything is allocated when they would pass `program_slots`.
    fn variable_slots(&mut self, n: usize, what: &str) -> R<Vec<Slot>> {
        let limit = self.limits.program_slots;
        let total = self.variable_leaves.saturating_add(n as u64);
        if total > limit {
            return Err(self.err(format!(
                "{what} needs {n} scalar slots, which with the {} already used passes the \
                 limit of {limit} (`{}`); {}",
                self.variable_leaves,
                Limit::ProgramSlots,
                Limit::ProgramSlots.how_to_raise()
            )));
        }
        self.variable_leaves = total;
        Ok(self.slots(n))
    }

    /// Append `op` to `out`, counting it against `program_ops`.
    fn emit(&mut self, out: &mut Vec<Op>, op: Op) {
        self.op_count += 1;
        out.push(op);
    }

    fn emit_prologue(&mut self, op: Op) {
        self.op_count += 1;
        self.prologue.push(op);
    }

    /// Refuse to go on once the program has passed `program_ops` (checked
    /// per statement and per inlined call, before the program grows further).
    fn check_size(&self) -> R<()> {
        let limit = self.limits.program_ops;
        if self.op_count > limit {
            return Err(self.err(format!(
                "the program grows past {limit} operations here once every call is inlined \
                 (limit `{}`); {}",
                Limit::ProgramOps,
                Limit::ProgramOps.how_to_raise()
            )));
        }
        Ok(())
    }

    fn err(&self, msg: impl Into<String>) -> Diagnostic {
        self.shader.diagnostic(self.span, msg)
    }

    fn unsupported(&self, what: &str) -> Diagnostic {
        self.err(format!("{what} is not supported in CPU evaluation"))
    }

    fn current(&self) -> Slot {
        self.masks.last().expect("mask stack").1
    }

    /// A site for per-lane reports; `what` empty means "not traced for NaN".
    fn site(&mut self, what: &str) -> u32 {
        let (line, column) = self.shader.line_col(self.span);
        let mask = self.masks.last().map(|m| m.1).unwrap_or(0);
        self.sites.push(Site {
            line,
            column,
            what: what.to_string(),
            mask,
        });
        (self.sites.len() - 1) as u32
    }

    /// A fresh slot holding a constant. Constants are written once when a
    /// thread's machine is created, never per batch.
    fn fill(&mut self, _out: &mut Vec<Op>, bits: u32) -> Slot {
        let dst = self.slot();
        self.consts.push((dst, bits));
        dst
    }

    fn k1(&mut self, out: &mut Vec<Op>, k: K1, a: Slot, what: &str) -> Slot {
        let dst = self.slot();
        let at = self.site(what);
        self.emit(
            out,
            Op::Kernel {
                kernel: Kernel::Unary(k),
                dst,
                args: [a, 0, 0, 0],
                at,
            },
        );
        dst
    }

    fn k2(&mut self, out: &mut Vec<Op>, k: K2, a: Slot, b: Slot, what: &str) -> Slot {
        let dst = self.slot();
        let at = self.site(what);
        self.emit(
            out,
            Op::Kernel {
                kernel: Kernel::Binary(k),
                dst,
                args: [a, b, 0, 0],
                at,
            },
        );
        dst
    }

    fn k3(&mut self, out: &mut Vec<Op>, k: K3, a: Slot, b: Slot, c: Slot, what: &str) -> Slot {
        let dst = self.slot();
        let at = self.site(what);
        self.emit(
            out,
            Op::Kernel {
                kernel: Kernel::Ternary(k),
                dst,
                args: [a, b, c, 0],
                at,
            },
        );
        dst
    }

    /// Under the spec-bound number model, let each of `dst` move within `bound`
    /// (see `perturb`); `args[i]` is the argument of `dst[i]`.
    fn perturb(
        &mut self,
        out: &mut Vec<Op>,
        dst: &[Slot],
        args: &[Slot],
        bound: Option<Bound>,
        half: bool,
    ) {
        let Some(bound) = bound.filter(|_| self.spec_bounds) else {
            return;
        };
        for (i, &d) in dst.iter().enumerate() {
            let site = self.sites.len() as u32;
            let arg = if args.len() == 1 { args[0] } else { args[i] };
            self.emit(
                out,
                Op::Perturb(Perturb {
                    dst: d,
                    arg,
                    bound,
                    half,
                    site,
                }),
            );
            let (line, column) = self.shader.line_col(self.span);
            self.sites.push(Site {
                line,
                column,
                what: String::new(),
                mask: 0,
            });
        }
    }

    fn ty_of_handle(&self, h: Handle<naga::Type>, span: naga::Span) -> R<Ty> {
        Ty::from_naga(self.module, h).map_err(|m| {
            self.shader
                .diagnostic(span, format!("{m} in CPU evaluation"))
        })
    }

    fn ty_of_inner(&self, inner: &TypeInner, span: naga::Span) -> R<Ty> {
        Ty::from_naga_inner(self.module, inner, None).map_err(|m| {
            self.shader
                .diagnostic(span, format!("{m} in CPU evaluation"))
        })
    }

    fn expr_ty(&self, frame: &Frame, h: Handle<naga::Expression>) -> R<Ty> {
        match &frame.info[h].ty {
            naga::proc::TypeResolution::Handle(t) => self.ty_of_handle(*t, self.span),
            naga::proc::TypeResolution::Value(inner) => self.ty_of_inner(inner, self.span),
        }
    }

    // ------------------------------------------------------------ module scope

    /// A module-scope (constant, override or private initialiser) expression,
    /// computed once per batch in the prologue.
    fn global_expr(&mut self, h: Handle<naga::Expression>) -> R<Val> {
        if let Some(v) = self.globals.get(&h) {
            return Ok(v.clone());
        }
        let saved = self.span;
        self.span = self.module.global_expressions.get_span(h);
        let ty = match &self.shader.info[h] {
            naga::proc::TypeResolution::Handle(t) => self.ty_of_handle(*t, self.span)?,
            naga::proc::TypeResolution::Value(inner) => self.ty_of_inner(inner, self.span)?,
        };
        let expr = &self.module.global_expressions[h];
        let mut pro = std::mem::take(&mut self.prologue);
        let v = match expr {
            E::Literal(l) => self.literal(&mut pro, l)?,
            E::Constant(c) => self.global_expr(self.module.constants[*c].init)?,
            E::Override(o) => self.override_val(*o)?,
            E::ZeroValue(_) => Val {
                slots: (0..ty.leaf_count())
                    .map(|_| self.fill(&mut pro, 0))
                    .collect(),
                ty,
            },
            E::Compose { components, .. } => {
                let mut slots = Vec::new();
                for &c in components {
                    slots.extend(self.global_expr(c)?.slots);
                }
                Val { ty, slots }
            }
            E::Splat { size, value } => {
                let v = self.global_expr(*value)?;
                Val {
                    ty,
                    slots: vec![v.slots[0]; *size as usize],
                }
            }
            _ => {
                // Operations on overrides: evaluate through a throwaway frame-less path.
                self.prologue = pro;
                let v = self.global_op(h)?;
                self.span = saved;
                self.globals.insert(h, v.clone());
                return Ok(v);
            }
        };
        self.prologue.extend(pro);
        self.span = saved;
        self.globals.insert(h, v.clone());
        Ok(v)
    }

    /// Module-scope operations (only overrides leave these un-folded).
    fn global_op(&mut self, h: Handle<naga::Expression>) -> R<Val> {
        let expr = self.module.global_expressions[h].clone();
        let ty = match &self.shader.info[h] {
            naga::proc::TypeResolution::Handle(t) => self.ty_of_handle(*t, self.span)?,
            naga::proc::TypeResolution::Value(inner) => self.ty_of_inner(inner, self.span)?,
        };
        let mut pro = Vec::new();
        let v = match expr {
            E::Binary { op, left, right } => {
                let (l, r) = (self.global_expr(left)?, self.global_expr(right)?);
                self.binary(&mut pro, op, &l, &r, &ty)?
            }
            E::Unary { op, expr } => {
                let v = self.global_expr(expr)?;
                self.unary(&mut pro, op, &v)?
            }
            E::As {
                expr,
                kind,
                convert,
            } => {
                let v = self.global_expr(expr)?;
                self.convert(&mut pro, &v, kind, convert, &ty)?
            }
            E::Select {
                condition,
                accept,
                reject,
            } => {
                let (c, a, r) = (
                    self.global_expr(condition)?,
                    self.global_expr(accept)?,
                    self.global_expr(reject)?,
                );
                self.select(&mut pro, &c, &a, &r)
            }
            E::Math {
                fun,
                arg,
                arg1,
                arg2,
                arg3,
            } => {
                let mut args = vec![self.global_expr(arg)?];
                for a in [arg1, arg2, arg3].into_iter().flatten() {
                    args.push(self.global_expr(a)?);
                }
                self.math(&mut pro, fun, &args, &ty)?
            }
            E::AccessIndex { base, index } => {
                let b = self.global_expr(base)?;
                self.access_index_val(&b, index)?
            }
            other => return Err(self.unsupported(&format!("module-scope expression {other:?}"))),
        };
        self.prologue.extend(pro);
        Ok(v)
    }

    fn override_val(&mut self, oh: Handle<naga::Override>) -> R<Val> {
        if let Some(v) = self.overrides.get(&oh) {
            return Ok(v.clone());
        }
        let o = &self.module.overrides[oh];
        let ty = self.ty_of_handle(o.ty, self.module.overrides.get_span(oh))?;
        let name = o.name.clone().unwrap_or_default();
        let id_key = o.id.map(|i| i.to_string());
        let given = self
            .override_values
            .get(&name)
            .or_else(|| id_key.as_ref().and_then(|k| self.override_values.get(k)));
        let v = match (given, o.init) {
            (Some(&x), _) => {
                let k = ty.scalar_kind().unwrap_or(K::F32);
                let bits = lane_bits(k, x);
                let dst = self.slot();
                self.consts.push((dst, bits));
                Val {
                    ty,
                    slots: vec![dst],
                }
            }
            (None, Some(init)) => self.global_expr(init)?,
            (None, None) => {
                return Err(self.shader.diagnostic(
                    self.module.overrides.get_span(oh),
                    format!("override `{name}` has no default; give it a value"),
                ))
            }
        };
        self.used_overrides.push(name);
        self.overrides.insert(oh, v.clone());
        Ok(v)
    }

    fn literal(&mut self, out: &mut Vec<Op>, l: &Literal) -> R<Val> {
        let (k, bits) = match *l {
            Literal::F32(x) => (K::F32, x.to_bits()),
            Literal::F16(x) => (K::F16, x.to_f32().to_bits()),
            Literal::I32(x) => (K::I32, x as u32),
            Literal::U32(x) => (K::U32, x),
            Literal::Bool(b) => (K::Bool, u32::from(b)),
            Literal::AbstractFloat(x) => (K::F32, (x as f32).to_bits()),
            Literal::AbstractInt(x) => (K::I32, x as i32 as u32),
            other => return Err(self.unsupported(&format!("literal {other:?}"))),
        };
        Ok(Val {
            ty: Ty::Scalar(k),
            slots: vec![self.fill(out, bits)],
        })
    }

    // ------------------------------------------------------------ functions

    fn init_locals(&mut self, frame: &mut Frame<'m>, out: &mut Vec<Op>) -> R<()> {
        for (lh, l) in frame.func.local_variables.iter() {
            self.span = frame.func.local_variables.get_span(lh);
            let ty = self.ty_of_handle(l.ty, self.span)?;
            let slots: Rc<[Slot]> = self
                .variable_slots(ty.leaf_count(), "this local variable")?
                .into();
            let init = match l.init {
                Some(e) => Some(self.value(frame, e, out)?),
                None => None,
            };
            for (i, &s) in slots.iter().enumerate() {
                match &init {
                    Some(v) => self.emit(
                        out,
                        Op::Copy {
                            dst: s,
                            src: v.slots[i],
                        },
                    ),
                    None => self.emit(out, Op::Fill { dst: s, bits: 0 }),
                }
            }
            frame.locals.insert(lh, slots);
        }
        Ok(())
    }

    fn block(&mut self, frame: &mut Frame<'m>, block: &'m naga::Block, out: &mut Vec<Op>) -> R<()> {
        for (stmt, span) in block.span_iter() {
            self.span = *span;
            self.statement(frame, stmt, out)?;
        }
        Ok(())
    }

    fn exit_to(&mut self, out: &mut Vec<Op>, target: &[Role], what: &str) -> R<()> {
        *self.exits.last_mut().expect("function frame") += 1;
        let current = self.current();
        let mut masks = Vec::new();
        for &(role, slot) in self.masks.iter().rev() {
            masks.push(slot);
            if target.contains(&role) {
                // Snapshot the exiting lanes: `current` is cleared too.
                let snap = self.slot();
                self.emit(
                    out,
                    Op::Copy {
                        dst: snap,
                        src: current,
                    },
                );
                self.emit(
                    out,
                    Op::Exit {
                        current: snap,
                        masks: masks.into(),
                    },
                );
                return Ok(());
            }
        }
        Err(self.err(format!("`{what}` outside of a construct it can leave")))
    }

    fn statement(&mut self, frame: &mut Frame<'m>, stmt: &'m S, out: &mut Vec<Op>) -> R<()> {
        self.check_size()?;
        match stmt {
            S::Emit(range) => {
                for h in range.clone() {
                    let saved = self.span;
                    self.span = frame.func.expressions.get_span(h);
                    let item = self.expr(frame, h, out)?;
                    frame.cache.insert(h, item);
                    self.span = saved;
                }
            }
            S::Block(b) => self.block(frame, b, out)?,
            S::If {
                condition,
                accept,
                reject,
            } => {
                let cond = self.value(frame, *condition, out)?.slots[0];
                let parent = self.current();
                let (then_mask, else_mask) = (self.slot(), self.slot());
                let mut a = Vec::new();
                let mut r = Vec::new();
                self.masks.push((Role::Branch, then_mask));
                self.block(frame, accept, &mut a)?;
                self.masks.pop();
                self.masks.push((Role::Branch, else_mask));
                self.block(frame, reject, &mut r)?;
                self.masks.pop();
                self.emit(
                    out,
                    Op::If {
                        cond,
                        parent,
                        then_mask,
                        else_mask,
                        accept: a,
                        reject: r,
                    },
                );
            }
            S::Switch { selector, cases } => {
                let sel = self.value(frame, *selector, out)?.slots[0];
                let parent = self.current();
                let smask = self.slot();
                self.masks.push((Role::Switch, smask));
                let mut cs = Vec::new();
                for case in cases {
                    let mask = self.slot();
                    let mut body = Vec::new();
                    self.masks.push((Role::Branch, mask));
                    self.block(frame, &case.body, &mut body)?;
                    self.masks.pop();
                    let (values, default) = match case.value {
                        naga::SwitchValue::I32(v) => (vec![v as u32], false),
                        naga::SwitchValue::U32(v) => (vec![v], false),
                        naga::SwitchValue::Default => (vec![], true),
                    };
                    cs.push(Case {
                        values,
                        default,
                        fall_through: case.fall_through,
                        mask,
                        body,
                    });
                }
                self.masks.pop();
                self.emit(
                    out,
                    Op::Switch {
                        sel,
                        parent,
                        smask,
                        cases: cs,
                    },
                );
            }
            S::Loop {
                body,
                continuing,
                break_if,
            } => {
                let parent = self.current();
                let (lmask, imask) = (self.slot(), self.slot());
                let at = self.site("");
                // A lane out of budget leaves every construct it is in, in
                // the callers' frames too, so they do not go on computing
                // with its unfinished values.
                let kill: Box<[Slot]> = self
                    .outer_masks
                    .iter()
                    .copied()
                    .chain(self.masks.iter().map(|m| m.1))
                    .chain([lmask, imask])
                    .collect();
                let mut b = Vec::new();
                let mut c = Vec::new();
                self.masks.push((Role::Loop, lmask));
                self.masks.push((Role::Iter, imask));
                self.block(frame, body, &mut b)?;
                self.masks.pop();
                self.block(frame, continuing, &mut c)?;
                let break_if = match break_if {
                    Some(h) => Some(self.value(frame, *h, &mut c)?.slots[0]),
                    None => None,
                };
                self.masks.pop();
                self.emit(
                    out,
                    Op::Loop {
                        parent,
                        lmask,
                        imask,
                        body: b,
                        continuing: c,
                        break_if,
                        kill,
                        at,
                    },
                );
            }
            S::Break => self.exit_to(out, &[Role::Loop, Role::Switch], "break")?,
            S::Continue => self.exit_to(out, &[Role::Iter], "continue")?,
            S::Return { value } => {
                let last_at_top = self.masks.len() == 1
                    && self.exits.last() == Some(&0)
                    && std::ptr::eq(frame.func.body.last().unwrap_or(stmt), stmt);
                if let (Some(v), true) = (value, last_at_top) {
                    // Every lane that is still live returns here, and none left
                    // before: the value itself is the result.
                    let v = self.value(frame, *v, out)?;
                    *self.direct_result.last_mut().expect("function frame") = Some(v.slots);
                    return Ok(());
                }
                if let Some(v) = value {
                    let v = self.value(frame, *v, out)?;
                    let mask = self.current();
                    for (&dst, &src) in frame
                        .result
                        .as_ref()
                        .expect("result slots")
                        .iter()
                        .zip(&v.slots)
                    {
                        self.emit(out, Op::MaskedCopy { dst, src, mask });
                    }
                }
                self.exit_to(out, &[Role::Root], "return")?;
            }
            S::Store { pointer, value } => {
                let place = self.place(frame, *pointer, out)?;
                let v = self.value(frame, *value, out)?;
                self.store(out, &place, &v, frame.root);
            }
            S::Call {
                function,
                arguments,
                result,
            } => {
                let mut args = Vec::new();
                for &a in arguments {
                    args.push(match self.expr_cached(frame, a, out)? {
                        Item::Value(v) => Item::Value(v),
                        Item::Place(p) => Item::Place(Place {
                            own_local: false,
                            ..p
                        }),
                    });
                }
                let slots = self.call(*function, args, out)?;
                if let (Some(r), Some(slots)) = (result, slots) {
                    let ty = self.expr_ty(frame, *r)?;
                    frame.cache.insert(*r, Item::Value(Val { ty, slots }));
                }
            }
            S::Kill => return Err(self.unsupported("`discard`")),
            S::ControlBarrier(b) | S::MemoryBarrier(b) => {
                return Err(self.unsupported(barrier_name(*b)))
            }
            S::ImageStore { .. } => return Err(self.unsupported("`textureStore`")),
            S::Atomic { fun, .. } => return Err(self.unsupported(atomic_name(fun))),
            S::ImageAtomic { .. } => {
                return Err(self.unsupported("`textureAtomic*` (an atomic texture operation)"))
            }
            S::WorkGroupUniformLoad { .. } => {
                return Err(self.unsupported("`workgroupUniformLoad`"))
            }
            S::SubgroupBallot { .. }
            | S::SubgroupGather { .. }
            | S::SubgroupCollectiveOperation { .. } => {
                return Err(self.unsupported("a subgroup operation"))
            }
            other => return Err(self.unsupported(&format!("statement {other:?}"))),
        }
        Ok(())
    }

    fn store(&mut self, out: &mut Vec<Op>, place: &Place, v: &Val, root: Slot) {
        let mask = self.current();
        let region = &place.region[place.offset..];
        match place.dynamic {
            None => {
                // A function's own local written at its top level: lanes that
                // already returned never read it again, so no mask is needed.
                let plain = place.own_local && mask == root;
                for (i, &src) in v.slots.iter().enumerate() {
                    let dst = region[i];
                    out.push(if plain {
                        Op::Copy { dst, src }
                    } else {
                        Op::MaskedCopy { dst, src, mask }
                    });
                }
            }
            Some(offset) => self.emit(
                out,
                Op::Scatter {
                    dst: region.into(),
                    src: v.slots.clone().into(),
                    offset,
                    mask,
                },
            ),
        }
    }

    fn call(
        &mut self,
        fh: Handle<naga::Function>,
        args: Vec<Item>,
        out: &mut Vec<Op>,
    ) -> R<Option<Vec<Slot>>> {
        self.check_size()?;
        self.depth += 1;
        if self.depth > 64 {
            return Err(self.err("calls nested more than 64 deep"));
        }
        let func = &self.module.functions[fh];
        let info = &self.shader.info[fh];
        let result = match &func.result {
            Some(r) => {
                let ty = self.ty_of_handle(r.ty, self.span)?;
                Some(self.variable_slots(ty.leaf_count(), "this call's result")?)
            }
            None => None,
        };
        let root = self.slot();
        self.emit(
            out,
            Op::Enter {
                mask: root,
                parent: self.current(),
            },
        );
        let mut frame = Frame {
            func,
            info,
            args,
            locals: HashMap::new(),
            cache: HashMap::new(),
            result: result.clone(),
            root,
        };
        let saved_masks = std::mem::replace(&mut self.masks, vec![(Role::Root, root)]);
        let outer_len = self.outer_masks.len();
        self.outer_masks.extend(saved_masks.iter().map(|m| m.1));
        let saved_span = self.span;
        self.exits.push(0);
        self.direct_result.push(None);
        let entry = out.len();
        self.init_locals(&mut frame, out)?;
        self.block(&mut frame, &func.body, out)?;
        self.exits.pop();
        let direct = self.direct_result.pop().flatten();
        if let (None, Some(result)) = (&direct, &result) {
            // Returns copy into the result under their masks: start it from
            // zero so no lane reads what an earlier batch left.
            out.splice(
                entry..entry,
                result.iter().map(|&dst| Op::Fill { dst, bits: 0 }),
            );
        }
        self.masks = saved_masks;
        self.outer_masks.truncate(outer_len);
        self.span = saved_span;
        self.depth -= 1;
        Ok(direct.or(result))
    }

    // ------------------------------------------------------------ expressions

    fn expr_cached(
        &mut self,
        frame: &mut Frame<'m>,
        h: Handle<naga::Expression>,
        out: &mut Vec<Op>,
    ) -> R<Item> {
        if let Some(i) = frame.cache.get(&h) {
            return Ok(i.clone());
        }
        let saved = self.span;
        self.span = frame.func.expressions.get_span(h);
        let expr = &frame.func.expressions[h];
        // Expressions outside any Emit are constant-like (naga folds the rest):
        // literals and constants go to the prologue and are cached; anything
        // else is recomputed where it is used, never shared across blocks.
        let constant = matches!(
            expr,
            E::Literal(_) | E::Constant(_) | E::Override(_) | E::ZeroValue(_)
        );
        let item = if constant {
            let mut pro = Vec::new();
            let item = self.expr(frame, h, &mut pro)?;
            self.prologue.extend(pro);
            frame.cache.insert(h, item.clone());
            item
        } else {
            let item = self.expr(frame, h, out)?;
            if matches!(
                expr,
                E::FunctionArgument(_) | E::LocalVariable(_) | E::GlobalVariable(_)
            ) {
                frame.cache.insert(h, item.clone());
            }
            item
        };
        self.span = saved;
        Ok(item)
    }

    fn value(
        &mut self,
        frame: &mut Frame<'m>,
        h: Handle<naga::Expression>,
        out: &mut Vec<Op>,
    ) -> R<Val> {
        match self.expr_cached(frame, h, out)? {
            Item::Value(v) => Ok(v),
            Item::Place(_) => Err(self.err("expected a value, found a pointer")),
        }
    }

    fn place(
        &mut self,
        frame: &mut Frame<'m>,
        h: Handle<naga::Expression>,
        out: &mut Vec<Op>,
    ) -> R<Place> {
        match self.expr_cached(frame, h, out)? {
            Item::Place(p) => Ok(p),
            Item::Value(_) => Err(self.err("expected a pointer, found a value")),
        }
    }

    fn expr(
        &mut self,
        frame: &mut Frame<'m>,
        h: Handle<naga::Expression>,
        out: &mut Vec<Op>,
    ) -> R<Item> {
        let expr = &frame.func.expressions[h];
        let v = match expr {
            E::Literal(l) => self.literal(out, l)?,
            E::Constant(c) => self.global_expr(self.module.constants[*c].init)?,
            E::Override(o) => self.override_val(*o)?,
            E::ZeroValue(_) => {
                let ty = self.expr_ty(frame, h)?;
                Val {
                    slots: (0..ty.leaf_count()).map(|_| self.fill(out, 0)).collect(),
                    ty,
                }
            }
            E::Compose { components, .. } => {
                let ty = self.expr_ty(frame, h)?;
                let mut slots = Vec::new();
                for &c in components {
                    slots.extend(self.value(frame, c, out)?.slots);
                }
                Val { ty, slots }
            }
            E::Splat { size, value } => {
                let v = self.value(frame, *value, out)?;
                Val {
                    ty: Ty::Vector(*size as u8, v.ty.scalar_kind().unwrap()),
                    slots: vec![v.slots[0]; *size as usize],
                }
            }
            E::Swizzle {
                size,
                vector,
                pattern,
            } => {
                let v = self.value(frame, *vector, out)?;
                let k = v.ty.scalar_kind().unwrap();
                let slots = pattern[..*size as usize]
                    .iter()
                    .map(|c| v.slots[*c as usize])
                    .collect();
                Val {
                    ty: Ty::Vector(*size as u8, k),
                    slots,
                }
            }
            E::FunctionArgument(i) => return Ok(frame.args[*i as usize].clone()),
            E::LocalVariable(l) => {
                let region = frame.locals[l].clone();
                let lv = &frame.func.local_variables[*l];
                let ty = self.ty_of_handle(lv.ty, self.span)?;
                return Ok(Item::Place(Place {
                    region,
                    offset: 0,
                    dynamic: None,
                    ty,
                    own_local: true,
                }));
            }
            E::GlobalVariable(g) => {
                let gv = &self.module.global_variables[*g];
                match self.privates.get(g) {
                    Some(region) => {
                        let ty = self.ty_of_handle(gv.ty, self.span)?;
                        return Ok(Item::Place(Place {
                            region: region.clone(),
                            offset: 0,
                            dynamic: None,
                            ty,
                            own_local: false,
                        }));
                    }
                    None => {
                        let name = gv.name.clone().unwrap_or_default();
                        return Err(self.unsupported(&global_name(&name, gv.space)));
                    }
                }
            }
            E::Load { pointer } => {
                let p = self.place(frame, *pointer, out)?;
                self.load(out, &p)
            }
            E::AccessIndex { base, index } => match self.expr_cached(frame, *base, out)? {
                Item::Value(b) => self.access_index_val(&b, *index)?,
                Item::Place(p) => {
                    let (ty, off) = self.member(&p.ty, *index)?;
                    return Ok(Item::Place(Place {
                        offset: p.offset + off,
                        ty,
                        ..p
                    }));
                }
            },
            E::Access { base, index } => {
                let idx = self.value(frame, *index, out)?.slots[0];
                match self.expr_cached(frame, *base, out)? {
                    Item::Value(b) => {
                        let (ety, len) = self.element(&b.ty)?;
                        let n = ety.leaf_count();
                        let off = self.dynamic_offset(out, idx, len, n, None);
                        let dst = self.slots(n);
                        self.emit(
                            out,
                            Op::Gather {
                                dst: dst.clone().into(),
                                src: b.slots.clone().into(),
                                offset: off,
                            },
                        );
                        Val {
                            ty: ety,
                            slots: dst,
                        }
                    }
                    Item::Place(p) => {
                        let (ety, len) = self.element(&p.ty)?;
                        let n = ety.leaf_count();
                        let off = self.dynamic_offset(out, idx, len, n, p.dynamic);
                        return Ok(Item::Place(Place {
                            dynamic: Some(off),
                            ty: ety,
                            ..p
                        }));
                    }
                }
            }
            E::Unary { op, expr } => {
                let v = self.value(frame, *expr, out)?;
                self.unary(out, *op, &v)?
            }
            E::Binary { op, left, right } => {
                let ty = self.expr_ty(frame, h)?;
                let (l, r) = (
                    self.value(frame, *left, out)?,
                    self.value(frame, *right, out)?,
                );
                self.binary(out, *op, &l, &r, &ty)?
            }
            E::Select {
                condition,
                accept,
                reject,
            } => {
                let c = self.value(frame, *condition, out)?;
                let a = self.value(frame, *accept, out)?;
                let r = self.value(frame, *reject, out)?;
                self.select(out, &c, &a, &r)
            }
            E::Relational { fun, argument } => {
                let v = self.value(frame, *argument, out)?;
                self.relational(out, *fun, &v)?
            }
            E::Math {
                fun,
                arg,
                arg1,
                arg2,
                arg3,
            } => {
                let ty = self.expr_ty(frame, h)?;
                let mut args = vec![self.value(frame, *arg, out)?];
                for a in [arg1, arg2, arg3].into_iter().flatten() {
                    args.push(self.value(frame, *a, out)?);
                }
                self.math(out, *fun, &args, &ty)?
            }
            E::As {
                expr,
                kind,
                convert,
            } => {
                let ty = self.expr_ty(frame, h)?;
                let v = self.value(frame, *expr, out)?;
                self.convert(out, &v, *kind, *convert, &ty)?
            }
            E::CallResult(_) => return Err(self.err("call result used before the call")),
            // Look-up tables bound in place of textures (compile/texture.rs).
            E::ImageSample { .. } | E::ImageLoad { .. } => return self.texture(frame, expr, out),
            E::ImageQuery { query, .. } => {
                let name = match query {
                    naga::ImageQuery::Size { .. } => "`textureDimensions`",
                    naga::ImageQuery::NumLevels => "`textureNumLevels`",
                    naga::ImageQuery::NumLayers => "`textureNumLayers`",
                    naga::ImageQuery::NumSamples => "`textureNumSamples`",
                };
                return Err(self.unsupported(name));
            }
            E::Derivative { axis, ctrl, .. } => {
                return Err(self.unsupported(&derivative_name(*axis, *ctrl)))
            }
            E::AtomicResult { .. } => return Err(self.unsupported("an atomic operation's result")),
            E::WorkGroupUniformLoadResult { .. } => {
                return Err(self.unsupported("`workgroupUniformLoad`"))
            }
            E::ArrayLength(_) => return Err(self.unsupported("`arrayLength`")),
            other => return Err(self.unsupported(&format!("expression {other:?}"))),
        };
        Ok(Item::Value(v))
    }

    fn load(&mut self, out: &mut Vec<Op>, p: &Place) -> Val {
        let n = p.ty.leaf_count();
        let dst = self.slots(n);
        let region = &p.region[p.offset..];
        match p.dynamic {
            None => {
                for (i, &d) in dst.iter().enumerate() {
                    self.emit(
                        out,
                        Op::Copy {
                            dst: d,
                            src: region[i],
                        },
                    );
                }
            }
            Some(offset) => self.emit(
                out,
                Op::Gather {
                    dst: dst.clone().into(),
                    src: region.into(),
                    offset,
                },
            ),
        }
        Val {
            ty: p.ty.clone(),
            slots: dst,
        }
    }

    /// Checked per-lane leaf offset `prev + idx * stride`.
    fn dynamic_offset(
        &mut self,
        out: &mut Vec<Op>,
        idx: Slot,
        len: u32,
        stride: usize,
        prev: Option<Slot>,
    ) -> Slot {
        let at = self.site("");
        let mask = self.current();
        let checked = self.slot();
        self.emit(
            out,
            Op::CheckIndex {
                dst: checked,
                idx,
                len,
                mask,
                at,
            },
        );
        let scaled = if stride == 1 {
            checked
        } else {
            let s = self.fill(out, stride as u32);
            self.k2(out, run2::<IMul>, checked, s, "")
        };
        match prev {
            None => scaled,
            Some(p) => self.k2(out, run2::<IAdd>, p, scaled, ""),
        }
    }

    /// Element type and count for dynamic indexing.
    fn element(&self, ty: &Ty) -> R<(Ty, u32)> {
        Ok(match ty {
            Ty::Vector(n, k) => (Ty::Scalar(*k), *n as u32),
            Ty::Matrix {
                columns,
                rows,
                kind,
            } => (Ty::Vector(*rows, *kind), *columns as u32),
            Ty::Array(t, n) => ((**t).clone(), *n),
            _ => return Err(self.err(format!("cannot index into {ty}"))),
        })
    }

    /// Member type and leaf offset for constant indexing.
    fn member(&self, ty: &Ty, index: u32) -> R<(Ty, usize)> {
        let i = index as usize;
        Ok(match ty {
            Ty::Vector(_, k) => (Ty::Scalar(*k), i),
            Ty::Matrix { rows, kind, .. } => (Ty::Vector(*rows, *kind), i * *rows as usize),
            Ty::Array(t, _) => ((**t).clone(), i * t.leaf_count()),
            Ty::Struct { members, .. } => {
                let off = members[..i].iter().map(|(_, t)| t.leaf_count()).sum();
                (members[i].1.clone(), off)
            }
            Ty::Scalar(_) => return Err(self.err("cannot index a scalar")),
        })
    }

    fn access_index_val(&self, b: &Val, index: u32) -> R<Val> {
        let (ty, off) = self.member(&b.ty, index)?;
        let n = ty.leaf_count();
        Ok(Val {
            ty,
            slots: b.slots[off..off + n].to_vec(),
        })
    }

    // ------------------------------------------------------------ operators

    fn unary(&mut self, out: &mut Vec<Op>, op: naga::UnaryOperator, v: &Val) -> R<Val> {
        let k =
            v.ty.scalar_kind()
                .ok_or_else(|| self.err("unary operator on a composite"))?;
        let (kern, what): (K1, &str) = match (op, k) {
            (naga::UnaryOperator::Negate, K::F32) => (run1::<FNeg>, "negation"),
            (naga::UnaryOperator::Negate, K::F16) => (run1::<FNeg>, "negation"),
            (naga::UnaryOperator::Negate, K::I32) => (run1::<INeg>, ""),
            (naga::UnaryOperator::LogicalNot, K::Bool) => (run1::<BNot>, ""),
            (naga::UnaryOperator::BitwiseNot, K::I32 | K::U32) => (run1::<UNot>, ""),
            (op, k) => return Err(self.err(format!("unary {op:?} on {}", k.wgsl()))),
        };
        let slots = v
            .slots
            .iter()
            .map(|&a| self.k1(out, kern, a, what))
            .collect();
        Ok(Val {
            ty: v.ty.clone(),
            slots,
        })
    }

    fn bin_kernel(&self, op: BO, k: K) -> R<(K2, &'static str)> {
        use K::*;
        Ok(match (op, k) {
            (BO::Add, F32) => (run2::<FAdd>, "addition"),
            (BO::Subtract, F32) => (run2::<FSub>, "subtraction"),
            (BO::Multiply, F32) => (run2::<FMul>, "multiplication"),
            (BO::Divide, F32) => (run2::<FDiv>, "division"),
            (BO::Modulo, F32) => (run2::<FRem>, "remainder"),
            (BO::Add, F16) => (run2::<H<FAdd>>, "addition"),
            (BO::Subtract, F16) => (run2::<H<FSub>>, "subtraction"),
            (BO::Multiply, F16) => (run2::<H<FMul>>, "multiplication"),
            (BO::Divide, F16) => (run2::<H<FDiv>>, "division"),
            // Inherited from e1 - e2 * trunc(e1 / e2), each step rounded to f16.
            (BO::Modulo, F16) => (run2::<HRem>, "remainder"),
            (BO::Equal, F32 | F16) => (run2::<FEq>, ""),
            (BO::NotEqual, F32 | F16) => (run2::<FNe>, ""),
            (BO::Less, F32 | F16) => (run2::<FLt>, ""),
            (BO::LessEqual, F32 | F16) => (run2::<FLe>, ""),
            (BO::Greater, F32 | F16) => (run2::<FGt>, ""),
            (BO::GreaterEqual, F32 | F16) => (run2::<FGe>, ""),
            (BO::Add, I32 | U32) => (run2::<IAdd>, ""),
            (BO::Subtract, I32 | U32) => (run2::<ISub>, ""),
            (BO::Multiply, I32 | U32) => (run2::<IMul>, ""),
            (BO::Divide, I32) => (run2::<SDiv>, ""),
            (BO::Modulo, I32) => (run2::<SRem>, ""),
            (BO::Divide, U32) => (run2::<UDiv>, ""),
            (BO::Modulo, U32) => (run2::<URem>, ""),
            (BO::Equal, I32 | U32 | Bool) => (run2::<IEq>, ""),
            (BO::NotEqual, I32 | U32 | Bool) => (run2::<INe>, ""),
            (BO::Less, I32) => (run2::<SLt>, ""),
            (BO::LessEqual, I32) => (run2::<SLe>, ""),
            (BO::Greater, I32) => (run2::<SGt>, ""),
            (BO::GreaterEqual, I32) => (run2::<SGe>, ""),
            (BO::Less, U32) => (run2::<ULt>, ""),
            (BO::LessEqual, U32) => (run2::<ULe>, ""),
            (BO::Greater, U32) => (run2::<UGt>, ""),
            (BO::GreaterEqual, U32) => (run2::<UGe>, ""),
            (BO::And | BO::LogicalAnd, I32 | U32 | Bool) => (run2::<UAnd>, ""),
            (BO::InclusiveOr | BO::LogicalOr, I32 | U32 | Bool) => (run2::<UOr>, ""),
            (BO::ExclusiveOr, I32 | U32 | Bool) => (run2::<UXor>, ""),
            (BO::ShiftLeft, I32 | U32) => (run2::<UShl>, ""),
            (BO::ShiftRight, U32) => (run2::<UShr>, ""),
            (BO::ShiftRight, I32) => (run2::<SShr>, ""),
            (op, k) => return Err(self.err(format!("binary {op:?} on {}", k.wgsl()))),
        })
    }

    fn binary(&mut self, out: &mut Vec<Op>, op: BO, l: &Val, r: &Val, ty: &Ty) -> R<Val> {
        let lk =
            l.ty.scalar_kind()
                .ok_or_else(|| self.err("binary operator on a composite"))?;
        if op == BO::Multiply {
            match (&l.ty, &r.ty) {
                (
                    Ty::Matrix {
                        columns,
                        rows,
                        kind,
                    },
                    Ty::Vector(..),
                ) => {
                    // (M·v)[r] = Σ_c M[c][r]·v[c], summed in column order.
                    let (c, rr) = (*columns as usize, *rows as usize);
                    let (mul, add) = (
                        self.bin_kernel(BO::Multiply, *kind)?.0,
                        self.bin_kernel(BO::Add, *kind)?.0,
                    );
                    let slots = (0..rr)
                        .map(|row| {
                            let terms: Vec<_> = (0..c)
                                .map(|col| (l.slots[col * rr + row], r.slots[col]))
                                .collect();
                            self.sum_products(out, mul, add, &terms)
                        })
                        .collect();
                    return Ok(Val {
                        ty: ty.clone(),
                        slots,
                    });
                }
                (
                    Ty::Vector(..),
                    Ty::Matrix {
                        columns,
                        rows,
                        kind,
                    },
                ) => {
                    // (v·M)[c] = Σ_r v[r]·M[c][r] = dot(v, column c).
                    let (c, rr) = (*columns as usize, *rows as usize);
                    let (mul, add) = (
                        self.bin_kernel(BO::Multiply, *kind)?.0,
                        self.bin_kernel(BO::Add, *kind)?.0,
                    );
                    let slots = (0..c)
                        .map(|col| {
                            let terms: Vec<_> = (0..rr)
                                .map(|row| (l.slots[row], r.slots[col * rr + row]))
                                .collect();
                            self.sum_products(out, mul, add, &terms)
                        })
                        .collect();
                    return Ok(Val {
                        ty: ty.clone(),
                        slots,
                    });
                }
                (
                    Ty::Matrix {
                        columns: lc,
                        rows: lr,
                        kind,
                    },
                    Ty::Matrix { columns: rc, .. },
                ) => {
                    let (lc, lr, rc) = (*lc as usize, *lr as usize, *rc as usize);
                    let (mul, add) = (
                        self.bin_kernel(BO::Multiply, *kind)?.0,
                        self.bin_kernel(BO::Add, *kind)?.0,
                    );
                    let mut slots = Vec::new();
                    for col in 0..rc {
                        for row in 0..lr {
                            let terms: Vec<_> = (0..lc)
                                .map(|k| (l.slots[k * lr + row], r.slots[col * lc + k]))
                                .collect();
                            slots.push(self.sum_products(out, mul, add, &terms));
                        }
                    }
                    return Ok(Val {
                        ty: ty.clone(),
                        slots,
                    });
                }
                _ => {}
            }
        }
        let (kern, what) = self.bin_kernel(op, lk)?;
        let n = l.slots.len().max(r.slots.len());
        let pick = |v: &Val, i: usize| {
            if v.slots.len() == 1 {
                v.slots[0]
            } else {
                v.slots[i]
            }
        };
        let slots: Vec<Slot> = (0..n)
            .map(|i| self.k2(out, kern, pick(l, i), pick(r, i), what))
            .collect();
        if op == BO::Divide && lk.is_float() {
            // x / y: 2.5 ULP (WGSL "Floating Point Accuracy").
            let rs = (0..n).map(|i| pick(r, i)).collect::<Vec<_>>();
            self.perturb(out, &slots, &rs, Some(Bound::Ulp(2.5)), lk == K::F16);
        }
        Ok(Val {
            ty: ty.clone(),
            slots,
        })
    }

    /// Σ aᵢ·bᵢ, left to right: ((a0·b0 + a1·b1) + a2·b2) ...
    fn sum_products(
        &mut self,
        out: &mut Vec<Op>,
        mul: K2,
        add: K2,
        terms: &[(Slot, Slot)],
    ) -> Slot {
        let mut acc = self.k2(out, mul, terms[0].0, terms[0].1, "multiplication");
        for &(a, b) in &terms[1..] {
            let p = self.k2(out, mul, a, b, "multiplication");
            acc = self.k2(out, add, acc, p, "addition");
        }
        acc
    }

    fn select(&mut self, out: &mut Vec<Op>, c: &Val, a: &Val, r: &Val) -> Val {
        let slots = (0..a.slots.len())
            .map(|i| {
                let cs = if c.slots.len() == 1 {
                    c.slots[0]
                } else {
                    c.slots[i]
                };
                self.k3(out, run3::<Select>, r.slots[i], a.slots[i], cs, "")
            })
            .collect();
        Val {
            ty: a.ty.clone(),
            slots,
        }
    }

    fn relational(&mut self, out: &mut Vec<Op>, fun: naga::RelationalFunction, v: &Val) -> R<Val> {
        use naga::RelationalFunction as RF;
        let slots = match fun {
            RF::All | RF::Any => {
                let kern: K2 = if fun == RF::All {
                    run2::<UAnd>
                } else {
                    run2::<UOr>
                };
                let mut acc = v.slots[0];
                for &s in &v.slots[1..] {
                    acc = self.k2(out, kern, acc, s, "");
                }
                return Ok(Val {
                    ty: Ty::Scalar(K::Bool),
                    slots: vec![acc],
                });
            }
            RF::IsNan => v
                .slots
                .iter()
                .map(|&s| self.k1(out, run1::<FIsNan>, s, ""))
                .collect(),
            RF::IsInf => v
                .slots
                .iter()
                .map(|&s| self.k1(out, run1::<FIsInf>, s, ""))
                .collect(),
        };
        let n = v.slots.len() as u8;
        Ok(Val {
            ty: if n == 1 {
                Ty::Scalar(K::Bool)
            } else {
                Ty::Vector(n, K::Bool)
            },
            slots,
        })
    }

    fn convert(
        &mut self,
        out: &mut Vec<Op>,
        v: &Val,
        kind: NK,
        convert: Option<u8>,
        ty: &Ty,
    ) -> R<Val> {
        let from =
            v.ty.scalar_kind()
                .ok_or_else(|| self.err("conversion of a composite"))?;
        let Some(width) = convert else {
            // bitcast: 32-bit patterns are shared by f32/i32/u32, so it is free.
            let to = ty.scalar_kind().unwrap();
            if from == K::F16 || to == K::F16 {
                return self.bitcast_f16(out, v, ty);
            }
            return Ok(Val {
                ty: ty.clone(),
                slots: v.slots.clone(),
            });
        };
        let to = match (kind, width) {
            (NK::Float, 4) => K::F32,
            (NK::Float, 2) => K::F16,
            (NK::Sint, 4) => K::I32,
            (NK::Uint, 4) => K::U32,
            (NK::Bool, _) => K::Bool,
            _ => return Err(self.unsupported(&format!("conversion to {kind:?}{width}"))),
        };
        use K::*;
        let kern: Option<K1> = match (from, to) {
            (a, b) if a == b => None,
            (I32, U32) | (U32, I32) => None,
            (F32, F16) => Some(run1::<FToH>),
            (F16, F32) => None,
            (F32 | F16, I32) => Some(run1::<FToI>),
            (F32 | F16, U32) => Some(run1::<FToU>),
            (F32 | F16, Bool) => Some(run1::<FToB>),
            (I32, F32) => Some(run1::<IToF>),
            (U32, F32) => Some(run1::<UToF>),
            (I32, F16) => Some(run1::<H<IToF>>),
            (U32, F16) => Some(run1::<H<UToF>>),
            (Bool, F32 | F16) => Some(run1::<BToF>),
            (I32 | U32, Bool) => Some(run1::<IToB>),
            (Bool, I32 | U32) => Some(run1::<BToI>),
            _ => {
                return Err(self.unsupported(&format!(
                    "conversion {} -> {}",
                    from.wgsl(),
                    to.wgsl()
                )))
            }
        };
        let slots = match kern {
            None => v.slots.clone(),
            Some(k) => v
                .slots
                .iter()
                .map(|&s| self.k1(out, k, s, "conversion"))
                .collect(),
        };
        Ok(Val {
            ty: ty.clone(),
            slots,
        })
    }

    /// bitcast between 32-bit scalars and vec2<f16> (and vec4<f16> ↔ vec2 of
    /// 32-bit), component 0 in the low half (WGSL 17.2 "bitcast").
    fn bitcast_f16(&mut self, out: &mut Vec<Op>, v: &Val, ty: &Ty) -> R<Val> {
        let from = v.ty.scalar_kind().unwrap();
        let to = ty.scalar_kind().unwrap();
        let n_out = ty.leaf_count();
        if from == K::F16 && to == K::F16 {
            return Ok(Val {
                ty: ty.clone(),
                slots: v.slots.clone(),
            });
        }
        let mut slots = Vec::new();
        if from == K::F16 {
            for pair in v.slots.chunks(2) {
                let dst = self.slot();
                fn pack(a: &[u32], o: &mut [u32]) {
                    o[0] = u32::from(arith::f16_bits(f32::from_bits(a[0])))
                        | (u32::from(arith::f16_bits(f32::from_bits(a[1]))) << 16);
                }
                self.emit(
                    out,
                    Op::PerLane {
                        f: pack,
                        dst: vec![dst].into(),
                        args: pair.into(),
                    },
                );
                slots.push(dst);
            }
        } else {
            for &s in &v.slots {
                let dst = self.slots(2);
                fn unpack(a: &[u32], o: &mut [u32]) {
                    o[0] = arith::f16_from_bits(a[0] as u16).to_bits();
                    o[1] = arith::f16_from_bits((a[0] >> 16) as u16).to_bits();
                }
                self.emit(
                    out,
                    Op::PerLane {
                        f: unpack,
                        dst: dst.clone().into(),
                        args: vec![s].into(),
                    },
                );
                slots.extend(dst);
            }
        }
        if slots.len() != n_out {
            return Err(self.err(format!("bitcast from {} to {ty}: sizes differ", v.ty)));
        }
        Ok(Val {
            ty: ty.clone(),
            slots,
        })
    }

    // ------------------------------------------------------------ built-ins

    fn math(&mut self, out: &mut Vec<Op>, fun: MF, args: &[Val], ty: &Ty) -> R<Val> {
        let k = args[0]
            .ty
            .scalar_kind()
            .ok_or_else(|| self.err(format!("{fun:?} on a composite")))?;
        let f16 = k == K::F16;
        let n = args[0].slots.len();
        let pick = |v: &Val, i: usize| {
            if v.slots.len() == 1 {
                v.slots[0]
            } else {
                v.slots[i]
            }
        };
        macro_rules! fk1 {
            ($t:ty) => {
                if f16 {
                    run1::<H<$t>> as K1
                } else {
                    run1::<$t> as K1
                }
            };
        }
        macro_rules! fk2 {
            ($t:ty) => {
                if f16 {
                    run2::<H<$t>> as K2
                } else {
                    run2::<$t> as K2
                }
            };
        }
        macro_rules! fk3 {
            ($t:ty) => {
                if f16 {
                    run3::<H<$t>> as K3
                } else {
                    run3::<$t> as K3
                }
            };
        }
        let name = wgsl_builtin_name(fun);
        let name = name.as_str();
        let unary = |c: &mut Self, out: &mut Vec<Op>, kern: K1| -> Val {
            let what = if k.is_float() { name } else { "" };
            Val {
                ty: ty.clone(),
                slots: args[0]
                    .slots
                    .iter()
                    .map(|&s| c.k1(out, kern, s, what))
                    .collect(),
            }
        };
        let float1 = if k.is_float() {
            float_unary(fun, f16)
        } else {
            None
        };
        if let Some(kern) = float1 {
            let v = unary(self, out, kern);
            self.perturb(out, &v.slots, &args[0].slots, spec_bound(fun, f16), f16);
            return Ok(v);
        }
        let int1: Option<K1> = match (fun, k) {
            (MF::Abs, K::I32) => Some(run1::<IAbs>),
            (MF::Abs, K::U32) => {
                return Ok(Val {
                    ty: ty.clone(),
                    slots: args[0].slots.clone(),
                })
            }
            (MF::Sign, K::I32) => Some(run1::<ISign>),
            (MF::CountOneBits, K::I32 | K::U32) => Some(run1::<UCountOnes>),
            (MF::CountLeadingZeros, K::I32 | K::U32) => Some(run1::<UClz>),
            (MF::CountTrailingZeros, K::I32 | K::U32) => Some(run1::<UCtz>),
            (MF::ReverseBits, K::I32 | K::U32) => Some(run1::<UReverse>),
            (MF::FirstLeadingBit, K::U32) => Some(run1::<UFirstLeading>),
            (MF::FirstLeadingBit, K::I32) => Some(run1::<IFirstLeading>),
            (MF::FirstTrailingBit, K::I32 | K::U32) => Some(run1::<UFirstTrailing>),
            _ => None,
        };
        if let Some(kern) = int1 {
            return Ok(unary(self, out, kern));
        }
        // Component-wise binary and ternary built-ins (scalars broadcast).
        let bin: Option<(K2, &str)> = match (fun, k) {
            (MF::Min, K::F32 | K::F16) => Some((fk2!(FMin), "min")),
            (MF::Max, K::F32 | K::F16) => Some((fk2!(FMax), "max")),
            (MF::Min, K::I32) => Some((run2::<SMin>, "")),
            (MF::Max, K::I32) => Some((run2::<SMax>, "")),
            (MF::Min, K::U32) => Some((run2::<UMin>, "")),
            (MF::Max, K::U32) => Some((run2::<UMax>, "")),
            (MF::Atan2, K::F32 | K::F16) => Some((fk2!(FAtan2), "atan2")),
            (MF::Pow, K::F32 | K::F16) => Some((fk2!(FPow), "pow")),
            (MF::Step, K::F32 | K::F16) => Some((fk2!(FStep), "")),
            (MF::Ldexp, K::F32 | K::F16) => Some((fk2!(FLdexp), "ldexp")),
            (MF::Dot4I8Packed, _) => Some((run2::<IDot4I8>, "")),
            (MF::Dot4U8Packed, _) => Some((run2::<IDot4U8>, "")),
            _ => None,
        };
        if let Some((kern, what)) = bin {
            let m = n.max(args[1].slots.len());
            let slots: Vec<Slot> = (0..m)
                .map(|i| self.k2(out, kern, pick(&args[0], i), pick(&args[1], i), what))
                .collect();
            if k.is_float() {
                self.perturb(out, &slots, &args[0].slots, spec_bound(fun, f16), f16);
            }
            return Ok(Val {
                ty: ty.clone(),
                slots,
            });
        }
        let tern: Option<(K3, &str)> = match (fun, k) {
            (MF::Clamp, K::F32 | K::F16) => Some((fk3!(FClamp), "clamp")),
            (MF::Clamp, K::I32) => Some((run3::<SClamp>, "")),
            (MF::Clamp, K::U32) => Some((run3::<UClamp>, "")),
            (MF::Mix, K::F32) => Some((run3::<FMix>, "mix")),
            (MF::SmoothStep, K::F32) => Some((run3::<FSmooth>, "smoothstep")),
            // The f16 forms round after every step of the spec's formula.
            (MF::Mix, K::F16) => Some((run3::<HMix>, "mix")),
            (MF::SmoothStep, K::F16) => Some((run3::<HSmooth>, "smoothstep")),
            (MF::Fma, K::F32) => Some((run3::<FFma>, "fma")),
            (MF::Fma, K::F16) => Some((run3::<HFma>, "fma")),
            (MF::ExtractBits, K::U32) => Some((run3::<UExtract>, "")),
            (MF::ExtractBits, K::I32) => Some((run3::<SExtract>, "")),
            _ => None,
        };
        if let Some((kern, what)) = tern {
            let m = args.iter().map(|a| a.slots.len()).max().unwrap();
            let slots = (0..m)
                .map(|i| {
                    self.k3(
                        out,
                        kern,
                        pick(&args[0], i),
                        pick(&args[1], i),
                        pick(&args[2], i),
                        what,
                    )
                })
                .collect();
            return Ok(Val {
                ty: ty.clone(),
                slots,
            });
        }
        let (mul, add, sub) = if k.is_float() {
            (fk2!(FMul), fk2!(FAdd), fk2!(FSub))
        } else {
            (run2::<IMul> as K2, run2::<IAdd> as K2, run2::<ISub> as K2)
        };
        let (div, sqrt): (K2, K1) = (fk2!(FDiv), fk1!(FSqrt));
        let scalar = |s: Slot| Val {
            ty: ty.clone(),
            slots: vec![s],
        };
        Ok(match fun {
            MF::InsertBits => {
                let dst = self.slot();
                let mut slots = Vec::new();
                let _ = dst;
                for i in 0..n {
                    let d = self.slot();
                    let at = self.site("");
                    self.emit(
                        out,
                        Op::Kernel {
                            kernel: Kernel::Quaternary(run4::<UInsert>),
                            dst: d,
                            args: [
                                pick(&args[0], i),
                                pick(&args[1], i),
                                args[2].slots[0],
                                args[3].slots[0],
                            ],
                            at,
                        },
                    );
                    slots.push(d);
                }
                Val {
                    ty: ty.clone(),
                    slots,
                }
            }
            MF::Dot => {
                let terms: Vec<_> = (0..n)
                    .map(|i| (args[0].slots[i], args[1].slots[i]))
                    .collect();
                scalar(self.sum_products(out, mul, add, &terms))
            }
            MF::Length => {
                if n == 1 {
                    return Ok(unary(self, out, fk1!(FAbs)));
                }
                let terms: Vec<_> = (0..n)
                    .map(|i| (args[0].slots[i], args[0].slots[i]))
                    .collect();
                let d = self.sum_products(out, mul, add, &terms);
                let r = self.k1(out, sqrt, d, "sqrt in length");
                self.perturb(out, &[r], &[d], spec_bound(MF::Sqrt, f16), f16);
                scalar(r)
            }
            MF::Distance => {
                let diff: Vec<_> = (0..n)
                    .map(|i| self.k2(out, sub, args[0].slots[i], args[1].slots[i], "subtraction"))
                    .collect();
                if n == 1 {
                    return Ok(scalar(self.k1(out, fk1!(FAbs), diff[0], "")));
                }
                let terms: Vec<_> = diff.iter().map(|&d| (d, d)).collect();
                let d = self.sum_products(out, mul, add, &terms);
                let r = self.k1(out, sqrt, d, "sqrt in distance");
                self.perturb(out, &[r], &[d], spec_bound(MF::Sqrt, f16), f16);
                scalar(r)
            }
            MF::Normalize => {
                // normalize(e) = e / length(e) (17.5 "normalize").
                let terms: Vec<_> = (0..n)
                    .map(|i| (args[0].slots[i], args[0].slots[i]))
                    .collect();
                let d = self.sum_products(out, mul, add, &terms);
                let len = self.k1(out, sqrt, d, "sqrt in normalize");
                self.perturb(out, &[len], &[d], spec_bound(MF::Sqrt, f16), f16);
                let slots: Vec<Slot> = args[0]
                    .slots
                    .iter()
                    .map(|&s| self.k2(out, div, s, len, "division in normalize"))
                    .collect();
                self.perturb(out, &slots, &[len], Some(Bound::Ulp(2.5)), f16);
                Val {
                    ty: ty.clone(),
                    slots,
                }
            }
            MF::Cross => {
                let (a, b) = (&args[0].slots, &args[1].slots);
                let mut c = |i: usize, j: usize| {
                    let p = self.k2(out, mul, a[i], b[j], "multiplication");
                    let q = self.k2(out, mul, a[j], b[i], "multiplication");
                    self.k2(out, sub, p, q, "subtraction")
                };
                let slots = vec![c(1, 2), c(2, 0), c(0, 1)];
                Val {
                    ty: ty.clone(),
                    slots,
                }
            }
            MF::FaceForward => {
                // faceForward(e1, e2, e3) = e1 if dot(e2, e3) < 0 else -e1.
                let terms: Vec<_> = (0..n)
                    .map(|i| (args[1].slots[i], args[2].slots[i]))
                    .collect();
                let d = self.sum_products(out, mul, add, &terms);
                let zero = self.fill(out, 0);
                let neg = self.k2(out, run2::<FLt>, d, zero, "");
                let slots = args[0]
                    .slots
                    .iter()
                    .map(|&e| {
                        let m = self.k1(out, run1::<FNeg>, e, "");
                        self.k3(out, run3::<Select>, m, e, neg, "")
                    })
                    .collect();
                Val {
                    ty: ty.clone(),
                    slots,
                }
            }
            MF::Reflect => {
                // reflect(e1, e2) = e1 - 2 * dot(e2, e1) * e2.
                let terms: Vec<_> = (0..n)
                    .map(|i| (args[1].slots[i], args[0].slots[i]))
                    .collect();
                let d = self.sum_products(out, mul, add, &terms);
                let two = self.fill(out, float_bits(k, 2.0));
                let t = self.k2(out, mul, two, d, "multiplication");
                let slots = (0..n)
                    .map(|i| {
                        let p = self.k2(out, mul, t, args[1].slots[i], "multiplication");
                        self.k2(out, sub, args[0].slots[i], p, "subtraction")
                    })
                    .collect();
                Val {
                    ty: ty.clone(),
                    slots,
                }
            }
            MF::Refract => {
                // k = 1 - e3² (1 - dot(e2,e1)²); k < 0 → 0, else
                // e3·e1 - (e3·dot(e2,e1) + sqrt(k))·e2 (17.5 "refract").
                let eta = args[2].slots[0];
                let terms: Vec<_> = (0..n)
                    .map(|i| (args[1].slots[i], args[0].slots[i]))
                    .collect();
                let d = self.sum_products(out, mul, add, &terms);
                let one = self.fill(out, float_bits(k, 1.0));
                let zero = self.fill(out, 0);
                let dd = self.k2(out, mul, d, d, "multiplication");
                let omd = self.k2(out, sub, one, dd, "subtraction");
                let ee = self.k2(out, mul, eta, eta, "multiplication");
                let eeo = self.k2(out, mul, ee, omd, "multiplication");
                let kk = self.k2(out, sub, one, eeo, "subtraction");
                let neg = self.k2(out, run2::<FLt>, kk, zero, "");
                // sqrt(k) only matters where k >= 0; not traced for NaN.
                let sq = self.k1(out, sqrt, kk, "");
                let ed = self.k2(out, mul, eta, d, "multiplication");
                let coef = self.k2(out, add, ed, sq, "");
                let slots = (0..n)
                    .map(|i| {
                        let a = self.k2(out, mul, eta, args[0].slots[i], "");
                        let b = self.k2(out, mul, coef, args[1].slots[i], "");
                        let r = self.k2(out, sub, a, b, "");
                        self.k3(out, run3::<Select>, r, zero, neg, "")
                    })
                    .collect();
                Val {
                    ty: ty.clone(),
                    slots,
                }
            }
            MF::Outer => {
                let (a, b) = (&args[0].slots, &args[1].slots);
                let mut slots = Vec::new();
                for &bj in b.iter() {
                    for &ai in a.iter() {
                        slots.push(self.k2(out, mul, ai, bj, "multiplication"));
                    }
                }
                Val {
                    ty: ty.clone(),
                    slots,
                }
            }
            MF::Transpose => {
                let Ty::Matrix { columns, rows, .. } = args[0].ty else {
                    return Err(self.err("transpose of a non-matrix"));
                };
                let (c, r) = (columns as usize, rows as usize);
                let mut slots = Vec::new();
                for row in 0..r {
                    for col in 0..c {
                        slots.push(args[0].slots[col * r + row]);
                    }
                }
                Val {
                    ty: ty.clone(),
                    slots,
                }
            }
            MF::Determinant => {
                let Ty::Matrix { columns, .. } = args[0].ty else {
                    return Err(self.err("determinant of a non-matrix"));
                };
                let m = args[0].slots.clone();
                let dim = columns as usize;
                scalar(self.det(out, &m, dim, (0..dim).collect(), mul, add, sub))
            }
            MF::Modf | MF::Frexp => {
                let mut a = Vec::new();
                let mut b = Vec::new();
                for &s in &args[0].slots {
                    let dst = self.slots(2);
                    fn modf32(i: &[u32], o: &mut [u32]) {
                        let (f, w) = arith::modf(f32::from_bits(i[0]));
                        o[0] = f.to_bits();
                        o[1] = w.to_bits();
                    }
                    fn frexp32(i: &[u32], o: &mut [u32]) {
                        let (f, e) = arith::frexp(f32::from_bits(i[0]));
                        o[0] = f.to_bits();
                        o[1] = e as u32;
                    }
                    let f: super::ir::LaneFn = if fun == MF::Modf { modf32 } else { frexp32 };
                    self.emit(
                        out,
                        Op::PerLane {
                            f,
                            dst: dst.clone().into(),
                            args: vec![s].into(),
                        },
                    );
                    a.push(dst[0]);
                    b.push(dst[1]);
                }
                a.extend(b);
                Val {
                    ty: ty.clone(),
                    slots: a,
                }
            }
            MF::Pack4x8snorm
            | MF::Pack4x8unorm
            | MF::Pack2x16snorm
            | MF::Pack2x16unorm
            | MF::Pack2x16float
            | MF::Pack4xI8
            | MF::Pack4xU8
            | MF::Pack4xI8Clamp
            | MF::Pack4xU8Clamp => {
                let f: super::ir::LaneFn = match fun {
                    MF::Pack4x8snorm => |i, o| {
                        o[0] = arith::pack4x8snorm(std::array::from_fn(|j| f32::from_bits(i[j])))
                    },
                    MF::Pack4x8unorm => |i, o| {
                        o[0] = arith::pack4x8unorm(std::array::from_fn(|j| f32::from_bits(i[j])))
                    },
                    MF::Pack2x16snorm => |i, o| {
                        o[0] = arith::pack2x16snorm(std::array::from_fn(|j| f32::from_bits(i[j])))
                    },
                    MF::Pack2x16unorm => |i, o| {
                        o[0] = arith::pack2x16unorm(std::array::from_fn(|j| f32::from_bits(i[j])))
                    },
                    MF::Pack2x16float => |i, o| {
                        o[0] = arith::pack2x16float(std::array::from_fn(|j| f32::from_bits(i[j])))
                    },
                    MF::Pack4xI8 => {
                        |i, o| o[0] = arith::pack4xi8(std::array::from_fn(|j| i[j] as i32))
                    }
                    MF::Pack4xU8 => |i, o| o[0] = arith::pack4xu8(std::array::from_fn(|j| i[j])),
                    MF::Pack4xI8Clamp => {
                        |i, o| o[0] = arith::pack4xi8_clamp(std::array::from_fn(|j| i[j] as i32))
                    }
                    _ => |i, o| o[0] = arith::pack4xu8_clamp(std::array::from_fn(|j| i[j])),
                };
                let dst = self.slot();
                self.emit(
                    out,
                    Op::PerLane {
                        f,
                        dst: vec![dst].into(),
                        args: args[0].slots.clone().into(),
                    },
                );
                scalar(dst)
            }
            MF::Unpack4x8snorm
            | MF::Unpack4x8unorm
            | MF::Unpack2x16snorm
            | MF::Unpack2x16unorm
            | MF::Unpack2x16float
            | MF::Unpack4xI8
            | MF::Unpack4xU8 => {
                let f: super::ir::LaneFn = match fun {
                    MF::Unpack4x8snorm => |i, o| put_f32(o, &arith::unpack4x8snorm(i[0])),
                    MF::Unpack4x8unorm => |i, o| put_f32(o, &arith::unpack4x8unorm(i[0])),
                    MF::Unpack2x16snorm => |i, o| put_f32(o, &arith::unpack2x16snorm(i[0])),
                    MF::Unpack2x16unorm => |i, o| put_f32(o, &arith::unpack2x16unorm(i[0])),
                    MF::Unpack2x16float => |i, o| put_f32(o, &arith::unpack2x16float(i[0])),
                    MF::Unpack4xI8 => |i, o| {
                        for (d, v) in o.iter_mut().zip(arith::unpack4xi8(i[0])) {
                            *d = v as u32
                        }
                    },
                    _ => |i, o| o.copy_from_slice(&arith::unpack4xu8(i[0])),
                };
                let dst = self.slots(ty.leaf_count());
                self.emit(
                    out,
                    Op::PerLane {
                        f,
                        dst: dst.clone().into(),
                        args: vec![args[0].slots[0]].into(),
                    },
                );
                Val {
                    ty: ty.clone(),
                    slots: dst,
                }
            }
            MF::Inverse => return Err(self.unsupported("`inverse` (not a WGSL built-in)")),
            other => return Err(self.unsupported(&format!("built-in {other:?} on {}", k.wgsl()))),
        })
    }

    /// Determinant by cofactor expansion along the first used column.
    #[allow(clippy::too_many_arguments)]
    fn det(
        &mut self,
        out: &mut Vec<Op>,
        m: &[Slot],
        dim: usize,
        rows: Vec<usize>,
        mul: K2,
        add: K2,
        sub: K2,
    ) -> Slot {
        let col = dim - rows.len();
        let at = |r: usize, c: usize| m[c * dim + r];
        if rows.len() == 2 {
            let a = self.k2(
                out,
                mul,
                at(rows[0], col),
                at(rows[1], col + 1),
                "multiplication",
            );
            let b = self.k2(
                out,
                mul,
                at(rows[1], col),
                at(rows[0], col + 1),
                "multiplication",
            );
            return self.k2(out, sub, a, b, "subtraction");
        }
        let mut acc: Option<Slot> = None;
        for (i, &r) in rows.iter().enumerate() {
            let rest: Vec<usize> = rows.iter().copied().filter(|&x| x != r).collect();
            let minor = self.det(out, m, dim, rest, mul, add, sub);
            let term = self.k2(out, mul, at(r, col), minor, "multiplication");
            acc = Some(match acc {
                None => term,
                Some(a) if i % 2 == 1 => self.k2(out, sub, a, term, "subtraction"),
                Some(a) => self.k2(out, add, a, term, "addition"),
            });
        }
        acc.unwrap()
    }
}

/// The spec's accuracy bound of a float built-in, for the spec-bound number
/// model (see `perturb` for the table and its sources); `None` when the
/// built-in is correctly rounded or its bound is only inherited.
fn spec_bound(fun: MF, f16: bool) -> Option<Bound> {
    use std::f32::consts::PI;
    Some(match fun {
        MF::Exp => Bound::ExpLike {
            base: if f16 { 1.0 } else { 3.0 },
            log2: false,
        },
        MF::Exp2 | MF::Pow => Bound::ExpLike {
            base: if f16 { 1.0 } else { 3.0 },
            log2: true,
        },
        MF::Log | MF::Log2 => Bound::AbsInRange {
            abs: if f16 { 2f32.powi(-7) } else { 2f32.powi(-21) },
            lo: 0.5,
            hi: 2.0,
            outside: Some(3.0),
        },
        MF::Sin | MF::Cos => Bound::AbsInRange {
            abs: if f16 { 2f32.powi(-7) } else { 2f32.powi(-11) },
            lo: -PI,
            hi: PI,
            outside: None,
        },
        MF::InverseSqrt => Bound::Ulp(2.0),
        // Inherited from 1.0 / inverseSqrt(x): 2 ULP, then a 2.5 ULP division,
        // about 4.5 ULP of the result (more at the bottom of a binade; the
        // model stays on the mild side).
        MF::Sqrt => Bound::Ulp(4.5),
        MF::Atan | MF::Atan2 => Bound::Ulp(if f16 { 5.0 } else { 4096.0 }),
        MF::Acos => Bound::Abs(if f16 { 3.91e-3 } else { 6.77e-5 }),
        MF::Asin => Bound::Abs(if f16 { 3.91e-3 } else { 6.81e-5 }),
        MF::Tanh => Bound::Abs(1.0e-5),
        _ => return None,
    })
}

/// WGSL spelling of a built-in: naga's variant name with a lower-case initial.
fn wgsl_builtin_name(fun: MF) -> String {
    let s = format!("{fun:?}");
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_lowercase().chain(c).collect(),
        None => s,
    }
}

/// Kernel of a one-argument float built-in, f16 variants rounding every result.
fn float_unary(fun: MF, f16: bool) -> Option<K1> {
    macro_rules! fk {
        ($t:ty) => {
            if f16 {
                run1::<H<$t>> as K1
            } else {
                run1::<$t> as K1
            }
        };
    }
    Some(match fun {
        MF::Abs => fk!(FAbs),
        MF::Saturate => fk!(FSaturate),
        MF::Cos => fk!(FCos),
        MF::Cosh => fk!(FCosh),
        MF::Sin => fk!(FSin),
        MF::Sinh => fk!(FSinh),
        MF::Tan => fk!(FTan),
        MF::Tanh => fk!(FTanh),
        MF::Acos => fk!(FAcos),
        MF::Asin => fk!(FAsin),
        MF::Atan => fk!(FAtan),
        MF::Asinh => fk!(FAsinh),
        MF::Acosh => fk!(FAcosh),
        MF::Atanh => fk!(FAtanh),
        // f16: the spec's constant is itself rounded to f16 (see `arith`).
        MF::Radians if f16 => run1::<HRadians>,
        MF::Degrees if f16 => run1::<HDegrees>,
        MF::Radians => run1::<FRadians>,
        MF::Degrees => run1::<FDegrees>,
        MF::Ceil => fk!(FCeil),
        MF::Floor => fk!(FFloor),
        MF::Round => fk!(FRound),
        MF::Fract => fk!(FFract),
        MF::Trunc => fk!(FTrunc),
        MF::Exp => fk!(FExp),
        MF::Exp2 => fk!(FExp2),
        MF::Log => fk!(FLog),
        MF::Log2 => fk!(FLog2),
        MF::Sign => fk!(FSign),
        MF::Sqrt => fk!(FSqrt),
        MF::InverseSqrt => fk!(FInvSqrt),
        MF::QuantizeToF16 => run1::<FQuantize16>,
        _ => return None,
    })
}

fn put_f32(o: &mut [u32], v: &[f32]) {
    for (d, x) in o.iter_mut().zip(v) {
        *d = x.to_bits();
    }
}

fn float_bits(_k: K, v: f32) -> u32 {
    v.to_bits()
}

/// Lane representation of an f64 value of `kind` (f16 lives as its f32 value).
pub fn lane_bits(kind: K, v: f64) -> u32 {
    match kind {
        K::F16 => half::f16::from_f64(v).to_f32().to_bits(),
        k => super::ty::f64_to_bits(k, v),
    }
}

// ---------------------------------------------------------------- names of unsupported constructs

/// The WGSL built-in behind a naga `ImageSample` ("Texture Built-in Functions").
fn sample_name(
    gather: bool,
    level: &naga::SampleLevel,
    compare: bool,
    clamp_to_edge: bool,
) -> &'static str {
    use naga::SampleLevel as L;
    match (gather, compare, level) {
        (true, true, _) => "`textureGatherCompare`",
        (true, false, _) => "`textureGather`",
        (false, true, L::Zero) => "`textureSampleCompareLevel`",
        (false, true, _) => "`textureSampleCompare`",
        _ if clamp_to_edge => "`textureSampleBaseClampToEdge`",
        (false, false, L::Auto) => "`textureSample`",
        (false, false, L::Zero | L::Exact(_)) => "`textureSampleLevel`",
        (false, false, L::Bias(_)) => "`textureSampleBias`",
        (false, false, L::Gradient { .. }) => "`textureSampleGrad`",
    }
}

/// `dpdx`, `dpdyFine`, `fwidthCoarse`, ... ("Derivative Built-in Functions").
fn derivative_name(axis: naga::DerivativeAxis, ctrl: naga::DerivativeControl) -> String {
    let base = match axis {
        naga::DerivativeAxis::X => "dpdx",
        naga::DerivativeAxis::Y => "dpdy",
        naga::DerivativeAxis::Width => "fwidth",
    };
    let suffix = match ctrl {
        naga::DerivativeControl::Coarse => "Coarse",
        naga::DerivativeControl::Fine => "Fine",
        naga::DerivativeControl::None => "",
    };
    format!("`{base}{suffix}`")
}

/// `atomicAdd`, ... ("Atomic Built-in Functions").
fn atomic_name(fun: &naga::AtomicFunction) -> &'static str {
    use naga::AtomicFunction as A;
    match fun {
        A::Add => "`atomicAdd`",
        A::Subtract => "`atomicSub`",
        A::And => "`atomicAnd`",
        A::ExclusiveOr => "`atomicXor`",
        A::InclusiveOr => "`atomicOr`",
        A::Min => "`atomicMin`",
        A::Max => "`atomicMax`",
        A::Exchange { compare: None } => "`atomicExchange`",
        A::Exchange { compare: Some(_) } => "`atomicCompareExchangeWeak`",
    }
}

/// `workgroupBarrier`, ... ("Synchronization Built-in Functions").
fn barrier_name(b: naga::Barrier) -> &'static str {
    if b.contains(naga::Barrier::WORK_GROUP) {
        "`workgroupBarrier`"
    } else if b.contains(naga::Barrier::STORAGE) {
        "`storageBarrier`"
    } else if b.contains(naga::Barrier::TEXTURE) {
        "`textureBarrier`"
    } else if b.contains(naga::Barrier::SUB_GROUP) {
        "`subgroupBarrier`"
    } else {
        "a barrier"
    }
}

/// A module-scope variable outside the CPU subset, as declared in WGSL.
fn global_name(name: &str, space: naga::AddressSpace) -> String {
    use naga::AddressSpace as A;
    match space {
        A::Uniform => format!("`var<uniform> {name}` (a uniform buffer)"),
        A::Storage { .. } => format!("`var<storage> {name}` (a storage buffer)"),
        A::WorkGroup => format!("`var<workgroup> {name}` (workgroup memory)"),
        A::Handle => format!("the resource `{name}` (a texture or sampler binding)"),
        A::Immediate => format!("`var<immediate> {name}`"),
        other => format!("the global `{name}` in address space {other:?}"),
    }
}
