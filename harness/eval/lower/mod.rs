//! Lowering: naga IR → the evaluator's IR (a flat slot program, `ir::Code`).
//!
//! One [`Compiler`] lowers one function with everything it calls; its
//! methods are spread by what they lower: `module_scope` (constants,
//! overrides, private initialisers), `statements`, `expressions` (the one
//! dispatcher over naga expressions), `operators`, `builtins`, and
//! `unsupported` (how unsupported constructs are named in diagnostics). The
//! spec's accuracy bounds live with their documentation in `perturb`.
//!
//! Every value is scalarised: a `vec3<f32>` is three slots, a matrix is its
//! entries column-major, arrays and structs their leaves in order. Swizzles,
//! `Compose`, `Splat`, constant member access and `transpose` are pure slot
//! renaming and cost nothing at run time. Calls are inlined (WGSL has no
//! recursion), so pointer arguments resolve to the caller's variables at
//! compile time. Control flow becomes masked [`Op`] trees (see `exec`).

use std::collections::{BTreeMap, HashMap};
use std::rc::Rc;

use naga::{Handle, TypeInner};

use super::ir::{Code, Op, Site, Slot};
use super::lanes::Opcode;
use super::perturb::{Bound, Perturb};
use crate::diagnostic::Diagnostic;
use crate::limits::{Limit, Limits};
use crate::values::Ty;
use crate::wgsl::Shader;

mod builtins;
mod expressions;
mod module_scope;
mod operators;
mod statements;
mod texture;
mod unsupported;

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

/// Where an expression lives: module scope (constants, overrides, private
/// initialisers, lowered once into the prologue) or a function being inlined.
enum Scope<'f, 'm> {
    Module,
    Function(&'f mut Frame<'m>),
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

/// The result of lowering one construct: the value, or the located reason it cannot be lowered.
type Lowered<T> = Result<T, Diagnostic>;

/// What one [`Op::Kernel`] computes: an opcode and whether its f16 version
/// (the result rounded to binary16) is meant.
#[derive(Clone, Copy)]
struct LaneOp {
    op: Opcode,
    half: bool,
}

/// The f32 (or integer, or boolean) form of `op`.
fn plain(op: Opcode) -> LaneOp {
    LaneOp { op, half: false }
}

/// The f16 version of `op`: computed in f32, the result rounded to binary16.
fn half(op: Opcode) -> LaneOp {
    LaneOp { op, half: true }
}

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
    ) -> Lowered<Code> {
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
                format!(
                    "no function named `{name}` (functions in {}: {known})",
                    if shader.parts.len() > 1 {
                        "these files"
                    } else {
                        "this file"
                    }
                ),
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
        // A `ptr<function, T>` parameter (an out- or in-out parameter) is a
        // variable of this call: its initial value is an input like any
        // argument's, copied into the variable first, and its final value is
        // an output after the result's.
        let mut out_params = Vec::new();
        let mut out_regions: Vec<(Vec<Slot>, Rc<[Slot]>)> = Vec::new();
        for (i, a) in func.arguments.iter().enumerate() {
            let span = fspan;
            let name = a.name.clone().unwrap_or_else(|| format!("arg{i}"));
            if let TypeInner::Pointer { base, space } = module.types[a.ty].inner {
                if space != naga::AddressSpace::Function {
                    return Err(c.err(format!(
                        "parameter `{name}` points into the {space:?} address space; only \
                         `ptr<function, T>` parameters can be evaluated (they are read back \
                         as extra outputs)"
                    )));
                }
                let ty = c.ty_of_handle(base, span)?;
                let init = c.variable_slots(ty.leaf_count(), "this pointer parameter")?;
                let region: Rc<[Slot]> = c
                    .variable_slots(ty.leaf_count(), "this pointer parameter")?
                    .into();
                input_slots.extend(&init);
                params.push((name.clone(), ty.clone()));
                out_params.push((name, ty.clone()));
                out_regions.push((init, region.clone()));
                args.push(Item::Place(Place {
                    region,
                    offset: 0,
                    dynamic: None,
                    ty,
                    own_local: false,
                }));
                continue;
            }
            let ty = c.ty_of_handle(a.ty, span)?;
            let slots = c.variable_slots(ty.leaf_count(), "this argument")?;
            input_slots.extend(&slots);
            params.push((name, ty.clone()));
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
        for (init, region) in &out_regions {
            for (&src, &dst) in init.iter().zip(region.iter()) {
                c.emit(&mut body, Op::Copy { dst, src });
            }
        }
        c.init_locals(&mut frame, &mut body)?;
        c.block(&mut frame, &func.body, &mut body)?;
        c.masks.pop();
        let mut ops = std::mem::take(&mut c.prologue);
        let mut output_slots = match c.direct_result[0].take() {
            Some(direct) => direct,
            None => {
                // Returns copy into the result under their masks: start it
                // from zero so no lane reads what an earlier batch left.
                ops.extend(output_slots.iter().map(|&dst| Op::Fill { dst, bits: 0 }));
                output_slots
            }
        };
        for (_, region) in &out_regions {
            output_slots.extend(region.iter());
        }
        ops.extend(body);
        Ok(Code {
            consts: std::mem::take(&mut c.consts),
            ops,
            slot_count: c.next as usize,
            sites: c.sites,
            params,
            out_params,
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
    fn variable_slots(&mut self, n: usize, what: &str) -> Lowered<Vec<Slot>> {
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
    fn check_size(&self) -> Lowered<()> {
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

    fn k1(&mut self, out: &mut Vec<Op>, k: LaneOp, a: Slot, what: &str) -> Slot {
        debug_assert_eq!(k.op.arity(), 1, "{:?}", k.op);
        let dst = self.slot();
        let at = self.site(what);
        self.emit(
            out,
            Op::Kernel {
                op: k.op,
                half: k.half,
                dst,
                args: [a, 0, 0, 0],
                at,
            },
        );
        dst
    }

    fn k2(&mut self, out: &mut Vec<Op>, k: LaneOp, a: Slot, b: Slot, what: &str) -> Slot {
        debug_assert_eq!(k.op.arity(), 2, "{:?}", k.op);
        let dst = self.slot();
        let at = self.site(what);
        self.emit(
            out,
            Op::Kernel {
                op: k.op,
                half: k.half,
                dst,
                args: [a, b, 0, 0],
                at,
            },
        );
        dst
    }

    fn k3(&mut self, out: &mut Vec<Op>, k: LaneOp, a: Slot, b: Slot, c: Slot, what: &str) -> Slot {
        debug_assert_eq!(k.op.arity(), 3, "{:?}", k.op);
        let dst = self.slot();
        let at = self.site(what);
        self.emit(
            out,
            Op::Kernel {
                op: k.op,
                half: k.half,
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

    fn ty_of_handle(&self, h: Handle<naga::Type>, span: naga::Span) -> Lowered<Ty> {
        Ty::from_naga(self.module, h).map_err(|m| {
            self.shader
                .diagnostic(span, format!("{m} in CPU evaluation"))
        })
    }

    fn ty_of_inner(&self, inner: &TypeInner, span: naga::Span) -> Lowered<Ty> {
        Ty::from_naga_inner(self.module, inner, None).map_err(|m| {
            self.shader
                .diagnostic(span, format!("{m} in CPU evaluation"))
        })
    }

    fn expr_ty(&self, frame: &Frame, h: Handle<naga::Expression>) -> Lowered<Ty> {
        match &frame.info[h].ty {
            naga::proc::TypeResolution::Handle(t) => self.ty_of_handle(*t, self.span),
            naga::proc::TypeResolution::Value(inner) => self.ty_of_inner(inner, self.span),
        }
    }
}
