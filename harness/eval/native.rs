//! Native code for the executor's straight-line stretches.
//!
//! The executor runs one operation at a time over a whole batch, so every
//! intermediate value goes to memory and back between operations. Here each
//! maximal stretch of top-level operations that native code can express (the
//! float and integer arithmetic of [`supported`], copies, fills, masked copies,
//! exits and `if`s made only of those) is compiled with Cranelift into one
//! function: a loop over the batch, four lanes at a time, whose values stay in
//! registers from operation to operation. Only the slots a later step or the
//! batch driver reads are stored; operations outside the set (`pow`, the
//! transcendental functions, loops, indexing, f16 operations, the spec-bound
//! number model's perturbations) run in the executor between the stretches.
//!
//! ## Same bits as the executor
//! Each operation is emitted as the lane kernel of [`super::lanes`] computes
//! it, operand order included (an x86-64 arithmetic instruction returns its
//! first NaN operand, so the order decides which NaN comes out): a fused
//! chain becomes its two plain operations, `min`, `max` and `clamp` the same
//! compare-and-select, booleans 0 or 1. Both sides of an `if` run for every
//! lane: every operation here computes all lanes anyway, and a side whose
//! mask is empty changes no lane through its masked copies and exits. The
//! tests in this module and `tests/eval/native.rs` compare the two tiers bit
//! for bit, NaN payloads included, on every operation and every function of
//! the demo library.
//!
//! ## Memory
//! A compiled stretch reads and writes exactly the columns the executor would:
//! the machine's slot table (`*const *mut Lanes`) gives one column per slot,
//! `LANES` lanes each, and the code touches lanes `0..LANES` of the slots its
//! operations name, all below the code's slot count (the verifier's rule 1).
//! Input slots are only read (rule 4), so bound read-only columns stay
//! untouched. Generated code cannot run under Miri; there the executor
//! interprets every operation (this module is not compiled).

use std::collections::{BTreeSet, HashMap};
use std::sync::atomic::{AtomicU8, Ordering};

use cranelift_codegen::ir::condcodes::{FloatCC, IntCC};
use cranelift_codegen::ir::{types, AbiParam, Endianness, InstBuilder, MemFlagsData, Value};
use cranelift_codegen::settings::{self, Configurable};
use cranelift_frontend::{FunctionBuilder, FunctionBuilderContext};
use cranelift_jit::{JITBuilder, JITModule};
use cranelift_module::{Linkage, Module};

use super::ir::{Code, Op, Slot, Use};
use super::lanes::{Lanes, Opcode, LANES};

/// A compiled stretch: runs over the batch whose columns the slot table
/// gives.
pub(crate) type Entry = unsafe extern "C" fn(*const *mut Lanes);

/// One step of a program's run: a compiled stretch, or the top-level op at
/// this index, interpreted.
#[derive(Clone, Copy)]
pub(crate) enum Step {
    Native(Entry),
    Op(usize),
}

/// A program's steps, and the module that owns their code.
pub(crate) struct Native {
    pub steps: Vec<Step>,
    /// The slot count of the code compiled.
    pub slot_count: usize,
    /// Freed on drop, with the steps that point into it.
    module: Option<JITModule>,
}

// SAFETY: after `finalize_definitions` the module's code is immutable and
// is only executed (from any thread) through the entries in `steps`; the
// module itself is touched only by `drop`, which has `&mut self`.
unsafe impl Send for Native {}
unsafe impl Sync for Native {}

impl Drop for Native {
    fn drop(&mut self) {
        self.steps.clear();
        if let Some(m) = self.module.take() {
            // SAFETY: the only pointers into the module's code were in
            // `steps`, cleared above, and a `Native` is dropped only when no
            // machine uses it (machines hold it through an `Arc`).
            unsafe { m.free_memory() };
        }
    }
}

/// Which tier runs a program's code.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Tier {
    /// Every operation in the executor.
    Interpret,
    /// Straight-line stretches as native code, the rest in the executor.
    Native,
}

/// 0: automatic (native code for evaluations of at least [`NATIVE_MIN`]
/// points); otherwise `1 + Tier as u8`.
static TIER: AtomicU8 = AtomicU8::new(0);

/// Evaluations of fewer points are interpreted when the tier is automatic:
/// compiling costs about as much as interpreting this many points of a
/// large function.
pub const NATIVE_MIN: usize = 16_384;

/// Force a tier for every evaluation (`None`: automatic, the default).
/// Process-wide; a test and benchmark hook, since both tiers give the same
/// bits (tests compare them).
pub fn set_tier(tier: Option<Tier>) {
    TIER.store(tier.map_or(0, |t| 1 + t as u8), Ordering::Relaxed);
}

/// The tier an evaluation of `points` points runs with.
pub(crate) fn tier_for(points: usize) -> Tier {
    match TIER.load(Ordering::Relaxed) {
        1 => Tier::Interpret,
        2 => Tier::Native,
        _ if points >= NATIVE_MIN => Tier::Native,
        _ => Tier::Interpret,
    }
}

/// The lane operations native code computes (their f32 forms only).
pub(crate) const SUPPORTED: &[Opcode] = {
    use Opcode::*;
    &[
        FNeg, FAbs, FSqrt, FAdd, FSub, FMul, FDiv, FSq, FOneMinus, FMulAdd, FAddMul, FMulSub,
        FSubMul, FMulMul, FMulBy, FDivBy, FDiffMul, FMin, FMax, FClamp, FSaturate, FMix, FEq, FNe,
        FLt, FLe, FGt, FGe, Select, BNot, UAnd, UOr, UXor, IAdd, ISub, IEq, INe, SLt, SLe, SGt,
        SGe, SMin, SMax, UMin, UMax, FToB, BToF, IToB, BToI, IToF,
    ]
};

fn supported(op: Opcode) -> bool {
    SUPPORTED.contains(&op)
}

/// Whether native code computes `op` (recursively, for an `if`).
fn expressible(op: &Op) -> bool {
    match op {
        Op::Fill { .. }
        | Op::Copy { .. }
        | Op::Enter { .. }
        | Op::MaskedCopy { .. }
        | Op::Exit { .. } => true,
        Op::Kernel { op, half, .. } => !half && supported(*op),
        Op::If { accept, reject, .. } => accept.iter().chain(reject).all(expressible),
        _ => false,
    }
}

/// Whether `op` computes something (a stretch of bare moves is not worth a
/// call).
fn computes(op: &Op) -> bool {
    match op {
        Op::Kernel { .. } => true,
        Op::If { accept, reject, .. } => accept.iter().chain(reject).any(computes),
        _ => false,
    }
}

/// Call `f` on every slot the ops name, at any depth, with its use.
fn each_slot(ops: &[Op], f: &mut dyn FnMut(Slot, Use)) {
    let mut ops = ops.to_vec();
    walk(&mut ops, f);
    fn walk(ops: &mut [Op], f: &mut dyn FnMut(Slot, Use)) {
        for op in ops {
            op.own_slots(&mut |s, u| f(*s, u));
            for b in op.blocks_mut() {
                walk(b, f);
            }
        }
    }
}

/// The bit patterns `op` fills slots with, at any depth.
fn fills(op: &Op, out: &mut BTreeSet<u32>) {
    match op {
        Op::Fill { bits, .. } => {
            out.insert(*bits);
        }
        Op::If { accept, reject, .. } => accept.iter().chain(reject).for_each(|o| fills(o, out)),
        _ => {}
    }
}

/// Compile the straight-line stretches of `code`, or `None` when it has none
/// (or this machine has no native code generator).
pub(crate) fn compile(code: &Code) -> Option<Native> {
    let stretches = stretches(&code.ops);
    if stretches.is_empty() {
        return None;
    }
    // Constant slots no op writes are immediates.
    let mut writes = BTreeSet::new();
    each_slot(&code.ops, &mut |s, u| {
        if u != Use::Read {
            writes.insert(s);
        }
    });
    let consts: HashMap<Slot, u32> = code
        .consts
        .iter()
        .filter(|(s, _)| !writes.contains(s))
        .copied()
        .collect();

    let mut flags = settings::builder();
    flags.set("opt_level", "speed").ok()?;
    let isa = cranelift_native::builder()
        .ok()?
        .finish(settings::Flags::new(flags))
        .ok()?;
    let mut module = JITModule::new(JITBuilder::with_isa(
        isa,
        cranelift_module::default_libcall_names(),
    ));
    let mut ctx = module.make_context();
    let mut fctx = FunctionBuilderContext::new();
    let ptr = module.target_config().pointer_type();

    let mut ids = Vec::new();
    for (k, range) in stretches.iter().enumerate() {
        // What the steps after this stretch, and the batch driver, read.
        let mut later = BTreeSet::new();
        each_slot(&code.ops[range.end..], &mut |s, _| {
            later.insert(s);
        });
        later.extend(code.output_slots.iter().copied());
        ctx.func.signature.params.clear();
        ctx.func.signature.params.push(AbiParam::new(ptr));
        {
            let b = FunctionBuilder::new(&mut ctx.func, &mut fctx);
            Emit::function(b, &code.ops[range.clone()], &consts, &later, ptr, &module);
        }
        let id = module
            .declare_function(&format!("stretch{k}"), Linkage::Local, &ctx.func.signature)
            .ok()?;
        module.define_function(id, &mut ctx).ok()?;
        module.clear_context(&mut ctx);
        ids.push(id);
    }
    module.finalize_definitions().ok()?;

    let mut steps = Vec::new();
    let mut next = 0;
    for (range, id) in stretches.iter().zip(ids) {
        steps.extend((next..range.start).map(Step::Op));
        let f = module.get_finalized_function(id);
        // SAFETY: the function was built above with the signature
        // `(pointer) -> ()` in the platform's default calling convention,
        // which is `extern "C"`.
        steps.push(Step::Native(unsafe {
            std::mem::transmute::<*const u8, Entry>(f)
        }));
        next = range.end;
    }
    steps.extend((next..code.ops.len()).map(Step::Op));
    Some(Native {
        steps,
        slot_count: code.slot_count,
        module: Some(module),
    })
}

/// The maximal runs of top-level ops native code expresses that compute
/// something.
fn stretches(ops: &[Op]) -> Vec<std::ops::Range<usize>> {
    let mut out = Vec::new();
    let mut i = 0;
    while i < ops.len() {
        if !expressible(&ops[i]) {
            i += 1;
            continue;
        }
        let start = i;
        while i < ops.len() && expressible(&ops[i]) {
            i += 1;
        }
        if ops[start..i].iter().any(computes) {
            out.push(start..i);
        }
    }
    out
}

/// A lane value: four 32-bit lanes, last seen as floats or as integers.
#[derive(Clone, Copy)]
enum V {
    F(Value),
    I(Value),
}

struct Emit<'a> {
    b: FunctionBuilder<'a>,
    /// The column of each slot the stretch names, loaded once per call.
    bases: HashMap<Slot, Value>,
    /// Byte offset of the current four lanes.
    at: Value,
    /// The current value of each slot read or written so far in this pass.
    vals: HashMap<Slot, V>,
    consts: &'a HashMap<Slot, u32>,
    /// Every constant the stretch uses, in every lane, made once per call.
    splats: HashMap<u32, Value>,
    /// Slots written by the stretch, in first-write order.
    dirty: Vec<Slot>,
}

fn flags() -> MemFlagsData {
    MemFlagsData::new().with_notrap()
}

fn lanes_order() -> MemFlagsData {
    MemFlagsData::new().with_endianness(Endianness::Little)
}

impl<'a> Emit<'a> {
    fn function(
        mut b: FunctionBuilder<'a>,
        ops: &[Op],
        consts: &'a HashMap<Slot, u32>,
        later: &BTreeSet<Slot>,
        ptr: types::Type,
        module: &JITModule,
    ) {
        // Everything loop-invariant first, in the entry block: the column of
        // every slot the stretch names, and every constant it uses.
        let mut slots = BTreeSet::new();
        each_slot(ops, &mut |s, _| {
            slots.insert(s);
        });
        let mut bits: BTreeSet<u32> = [0, 1, 1.0f32.to_bits()].into();
        ops.iter().for_each(|o| fills(o, &mut bits));
        bits.extend(slots.iter().filter_map(|s| consts.get(s)));

        let entry = b.create_block();
        b.append_block_params_for_function_params(entry);
        b.switch_to_block(entry);
        let table = b.block_params(entry)[0];
        let mut bases = HashMap::new();
        for &s in slots.iter().filter(|s| !consts.contains_key(s)) {
            let offset = s as usize * std::mem::size_of::<*mut Lanes>();
            let v = b
                .ins()
                .load(ptr, flags().with_readonly(), table, offset as i32);
            bases.insert(s, v);
        }
        let mut splats = HashMap::new();
        for &x in &bits {
            let c = b.ins().iconst(types::I32, i64::from(x));
            splats.insert(x, b.ins().splat(types::I32X4, c));
        }
        let zero = b.ins().iconst(ptr, 0);
        let header = b.create_block();
        b.append_block_param(header, ptr);
        let exit = b.create_block();
        b.ins().jump(header, &[zero.into()]);

        b.switch_to_block(header);
        let at = b.block_params(header)[0];
        let mut e = Emit {
            b,
            bases,
            at,
            vals: HashMap::new(),
            consts,
            splats,
            dirty: Vec::new(),
        };
        for op in ops {
            e.op(op);
        }
        let dirty = std::mem::take(&mut e.dirty);
        for s in dirty.into_iter().filter(|s| later.contains(s)) {
            let v = match e.vals[&s] {
                V::F(v) | V::I(v) => v,
            };
            let addr = e.addr(s);
            e.b.ins().store(flags(), v, addr, 0);
        }
        let next = e.b.ins().iadd_imm_s(e.at, 16);
        let end = e.b.ins().iconst(ptr, (LANES * 4) as i64);
        let more = e.b.ins().icmp(IntCC::UnsignedLessThan, next, end);
        e.b.ins().brif(more, header, &[next.into()], exit, &[]);
        e.b.switch_to_block(exit);
        e.b.ins().return_(&[]);
        e.b.seal_all_blocks();
        e.b.finalize(module.target_config());
    }

    /// The address of the current four lanes of slot `s`.
    fn addr(&mut self, s: Slot) -> Value {
        let base = self.bases[&s];
        self.b.ins().iadd(base, self.at)
    }

    /// `bits` in every lane, as integers.
    fn splat(&mut self, bits: u32) -> Value {
        self.splats[&bits]
    }

    fn get(&mut self, s: Slot) -> V {
        if let Some(&v) = self.vals.get(&s) {
            return v;
        }
        if let Some(&bits) = self.consts.get(&s) {
            return V::I(self.splat(bits));
        }
        let addr = self.addr(s);
        let v = self.b.ins().load(types::I32X4, flags(), addr, 0);
        self.vals.insert(s, V::I(v));
        V::I(v)
    }

    fn f(&mut self, s: Slot) -> Value {
        let v = self.get(s);
        self.as_f(v)
    }

    fn i(&mut self, s: Slot) -> Value {
        let v = self.get(s);
        self.as_i(v)
    }

    fn as_f(&mut self, v: V) -> Value {
        match v {
            V::F(v) => v,
            V::I(v) => self.b.ins().bitcast(types::F32X4, lanes_order(), v),
        }
    }

    fn as_i(&mut self, v: V) -> Value {
        match v {
            V::I(v) => v,
            V::F(v) => self.b.ins().bitcast(types::I32X4, lanes_order(), v),
        }
    }

    fn set(&mut self, s: Slot, v: V) {
        self.vals.insert(s, v);
        if !self.dirty.contains(&s) {
            self.dirty.push(s);
        }
    }

    fn fconst(&mut self, x: f32) -> Value {
        let v = self.splat(x.to_bits());
        self.as_f(V::I(v))
    }

    /// A lane mask (all ones where true) as 0 or 1.
    fn bool01(&mut self, mask: Value) -> V {
        let one = self.splat(1);
        V::I(self.b.ins().band(mask, one))
    }

    /// All ones where the lane (a boolean) is not 0.
    fn truth(&mut self, x: Value) -> Value {
        let zero = self.splat(0);
        self.b.ins().icmp(IntCC::NotEqual, x, zero)
    }

    /// WGSL `min` as `arith::fmin`: `b` if `b < a`, else `a`.
    fn fmin(&mut self, a: Value, b: Value) -> Value {
        let lt = self.b.ins().fcmp(FloatCC::LessThan, b, a);
        let lt = self.b.ins().bitcast(types::F32X4, lanes_order(), lt);
        self.b.ins().bitselect(lt, b, a)
    }

    /// WGSL `max` as `arith::fmax`: `b` if `a < b`, else `a`.
    fn fmax(&mut self, a: Value, b: Value) -> Value {
        let lt = self.b.ins().fcmp(FloatCC::LessThan, a, b);
        let lt = self.b.ins().bitcast(types::F32X4, lanes_order(), lt);
        self.b.ins().bitselect(lt, b, a)
    }

    fn op(&mut self, op: &Op) {
        match op {
            Op::Fill { dst, bits } => {
                let v = self.splat(*bits);
                self.set(*dst, V::I(v));
            }
            Op::Copy { dst, src } => {
                let v = self.get(*src);
                self.set(*dst, v);
            }
            Op::Enter { mask, parent } => {
                let v = self.get(*parent);
                self.set(*mask, v);
            }
            Op::MaskedCopy { dst, src, mask } => {
                // As the executor: all = 0 - m; d = (s & all) | (d & !all).
                let m = self.i(*mask);
                let zero = self.splat(0);
                let all = self.b.ins().isub(zero, m);
                let s = self.i(*src);
                let d = self.i(*dst);
                let v = self.b.ins().bitselect(all, s, d);
                self.set(*dst, V::I(v));
            }
            Op::Exit { current, masks } => {
                let cur = self.i(*current);
                let one = self.splat(1);
                let keep = self.b.ins().bxor(cur, one);
                for &m in masks.iter() {
                    let mv = self.i(m);
                    let v = self.b.ins().band(mv, keep);
                    self.set(m, V::I(v));
                }
            }
            Op::If {
                cond,
                parent,
                then_mask,
                else_mask,
                accept,
                reject,
            } => {
                let c = self.i(*cond);
                let p = self.i(*parent);
                let t = self.b.ins().band(p, c);
                self.set(*then_mask, V::I(t));
                let one = self.splat(1);
                let nc = self.b.ins().bxor(c, one);
                let e = self.b.ins().band(p, nc);
                self.set(*else_mask, V::I(e));
                for o in accept.iter().chain(reject) {
                    self.op(o);
                }
            }
            Op::Kernel {
                op, dst, args: a, ..
            } => {
                let v = self.kernel(*op, a);
                self.set(*dst, v);
            }
            _ => unreachable!("only expressible ops reach the emitter"),
        }
    }

    fn kernel(&mut self, op: Opcode, a: &[Slot; 4]) -> V {
        use Opcode::*;
        match op {
            FNeg => {
                let x = self.f(a[0]);
                V::F(self.b.ins().fneg(x))
            }
            FAbs => {
                let x = self.f(a[0]);
                V::F(self.b.ins().fabs(x))
            }
            FSqrt => {
                let x = self.f(a[0]);
                V::F(self.b.ins().sqrt(x))
            }
            FAdd | FSub | FMul | FDiv => {
                let (x, y) = (self.f(a[0]), self.f(a[1]));
                V::F(self.arith(op, x, y))
            }
            FSq => {
                let x = self.f(a[0]);
                V::F(self.b.ins().fmul(x, x))
            }
            FOneMinus => {
                let x = self.f(a[0]);
                let one = self.fconst(1.0);
                V::F(self.b.ins().fsub(one, x))
            }
            // Fused chains: their two plain operations, in the plain order.
            FMulAdd | FMulSub | FMulMul => {
                let (x, y, z) = (self.f(a[0]), self.f(a[1]), self.f(a[2]));
                let t = self.b.ins().fmul(x, y);
                let second = match op {
                    FMulAdd => FAdd,
                    FMulSub => FSub,
                    _ => FMul,
                };
                V::F(self.arith(second, t, z))
            }
            FAddMul | FSubMul | FMulBy | FDivBy => {
                let (z, x, y) = (self.f(a[0]), self.f(a[1]), self.f(a[2]));
                let t = self.b.ins().fmul(x, y);
                let second = match op {
                    FAddMul => FAdd,
                    FSubMul => FSub,
                    FMulBy => FMul,
                    _ => FDiv,
                };
                V::F(self.arith(second, z, t))
            }
            FDiffMul => {
                let (x, y, z) = (self.f(a[0]), self.f(a[1]), self.f(a[2]));
                let t = self.b.ins().fsub(x, y);
                V::F(self.b.ins().fmul(t, z))
            }
            FMin => {
                let (x, y) = (self.f(a[0]), self.f(a[1]));
                V::F(self.fmin(x, y))
            }
            FMax => {
                let (x, y) = (self.f(a[0]), self.f(a[1]));
                V::F(self.fmax(x, y))
            }
            FClamp => {
                let (x, lo, hi) = (self.f(a[0]), self.f(a[1]), self.f(a[2]));
                let m = self.fmax(x, lo);
                V::F(self.fmin(m, hi))
            }
            FSaturate => {
                let x = self.f(a[0]);
                let (lo, hi) = (self.fconst(0.0), self.fconst(1.0));
                let m = self.fmax(x, lo);
                V::F(self.fmin(m, hi))
            }
            FMix => {
                // arith::mix: x * (1 - t) + y * t, in this order.
                let (x, y, t) = (self.f(a[0]), self.f(a[1]), self.f(a[2]));
                let one = self.fconst(1.0);
                let u = self.b.ins().fsub(one, t);
                let p = self.b.ins().fmul(x, u);
                let q = self.b.ins().fmul(y, t);
                V::F(self.b.ins().fadd(p, q))
            }
            FEq | FNe | FLt | FLe | FGt | FGe => {
                let (x, y) = (self.f(a[0]), self.f(a[1]));
                let cc = match op {
                    FEq => FloatCC::Equal,
                    FNe => FloatCC::NotEqual,
                    FLt => FloatCC::LessThan,
                    FLe => FloatCC::LessThanOrEqual,
                    FGt => FloatCC::GreaterThan,
                    _ => FloatCC::GreaterThanOrEqual,
                };
                let m = self.b.ins().fcmp(cc, x, y);
                self.bool01(m)
            }
            FToB => {
                let x = self.f(a[0]);
                let zero = self.fconst(0.0);
                let m = self.b.ins().fcmp(FloatCC::NotEqual, x, zero);
                self.bool01(m)
            }
            BToF => {
                let x = self.i(a[0]);
                let m = self.truth(x);
                let (one, zero) = (self.splat(1.0f32.to_bits()), self.splat(0));
                V::I(self.b.ins().bitselect(m, one, zero))
            }
            IToB | BToI => {
                let x = self.i(a[0]);
                let m = self.truth(x);
                self.bool01(m)
            }
            BNot => {
                let x = self.i(a[0]);
                let zero = self.splat(0);
                let m = self.b.ins().icmp(IntCC::Equal, x, zero);
                self.bool01(m)
            }
            IToF => {
                let x = self.i(a[0]);
                V::F(self.b.ins().fcvt_from_sint(types::F32X4, x))
            }
            Select => {
                let (f, t, c) = (self.i(a[0]), self.i(a[1]), self.i(a[2]));
                let m = self.truth(c);
                V::I(self.b.ins().bitselect(m, t, f))
            }
            UAnd | UOr | UXor | IAdd | ISub | SMin | SMax | UMin | UMax => {
                let (x, y) = (self.i(a[0]), self.i(a[1]));
                let i = self.b.ins();
                V::I(match op {
                    UAnd => i.band(x, y),
                    UOr => i.bor(x, y),
                    UXor => i.bxor(x, y),
                    IAdd => i.iadd(x, y),
                    ISub => i.isub(x, y),
                    SMin => i.smin(x, y),
                    SMax => i.smax(x, y),
                    UMin => i.umin(x, y),
                    _ => i.umax(x, y),
                })
            }
            IEq | INe | SLt | SLe | SGt | SGe => {
                let (x, y) = (self.i(a[0]), self.i(a[1]));
                let cc = match op {
                    IEq => IntCC::Equal,
                    INe => IntCC::NotEqual,
                    SLt => IntCC::SignedLessThan,
                    SLe => IntCC::SignedLessThanOrEqual,
                    SGt => IntCC::SignedGreaterThan,
                    _ => IntCC::SignedGreaterThanOrEqual,
                };
                let m = self.b.ins().icmp(cc, x, y);
                self.bool01(m)
            }
            _ => unreachable!("{} is not among the supported operations", op.name()),
        }
    }

    fn arith(&mut self, op: Opcode, x: Value, y: Value) -> Value {
        let i = self.b.ins();
        match op {
            Opcode::FAdd => i.fadd(x, y),
            Opcode::FSub => i.fsub(x, y),
            Opcode::FMul => i.fmul(x, y),
            _ => i.fdiv(x, y),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::eval::exec::{Machine, Verified};
    use crate::eval::ir::Site;
    use std::sync::Arc;

    /// Float specials (IEEE 754 binary32: NaNs with payloads and signs,
    /// quiet and signalling, infinities, signed zeros, subnormals, the ends
    /// of the normal range, ordinary numbers) and integer and boolean
    /// patterns (0, 1, 2, -1, the sign bit alone, the largest i32).
    const VALUES: [u32; 24] = [
        0x7fc0_0000,
        0xffc0_0001,
        0x7f80_0001,
        0x7fa0_0003,
        0x7f80_0000,
        0xff80_0000,
        0x0000_0000,
        0x8000_0000,
        0x0000_0001,
        0x807f_ffff,
        0x0080_0000,
        0x7f7f_ffff,
        0xff7f_ffff,
        0x3f80_0000,
        0xbf80_0000,
        0x3f80_0001,
        0x3eaa_aaab,
        0x5f00_0000,
        0x1f80_0000,
        0x4049_0fdb,
        1,
        2,
        0xffff_ffff,
        0x7fff_ffff,
    ];

    /// Slots: 0 root mask, 1..=3 inputs, the rest as the ops need.
    fn code(ops: Vec<Op>, slots: usize, outputs: Vec<Slot>, consts: Vec<(Slot, u32)>) -> Verified {
        Verified::new(Code {
            ops,
            slot_count: slots,
            sites: vec![Site {
                line: 1,
                column: 1,
                what: String::new(),
                mask: 0,
            }],
            params: Vec::new(),
            out_params: Vec::new(),
            input_slots: vec![1, 2, 3],
            result: None,
            output_slots: outputs,
            root_mask: 0,
            consts,
        })
        .unwrap_or_else(|e| panic!("{e}"))
    }

    /// Run `code` over `inputs` (three columns), interpreted and with native
    /// code; the output slots' lanes of each, and whether native code ran.
    fn both(code: &Verified, inputs: &[Lanes; 3]) -> [Vec<Lanes>; 2] {
        let native = compile(code).map(Arc::new);
        assert!(native.is_some(), "nothing was compiled");
        [None, native].map(|native| {
            let mut m = Machine::new(code, 1000);
            for (&s, col) in code.input_slots.iter().zip(inputs) {
                *m.own_mut(s) = *col;
            }
            *m.own_mut(code.root_mask) = [1; LANES];
            m.native = native;
            m.run(code);
            code.output_slots.iter().map(|&s| *m.lanes(s)).collect()
        })
    }

    /// Every (x, y, z) of [`VALUES`], `LANES` at a time.
    fn triples() -> Vec<[Lanes; 3]> {
        let n = VALUES.len();
        let all: Vec<[u32; 3]> = (0..n * n * n)
            .map(|i| [VALUES[i / (n * n)], VALUES[i / n % n], VALUES[i % n]])
            .collect();
        all.chunks(LANES)
            .map(|c| {
                let mut cols = [[0; LANES]; 3];
                for (l, t) in c.iter().enumerate() {
                    for (col, &v) in cols.iter_mut().zip(t) {
                        col[l] = v;
                    }
                }
                cols
            })
            .collect()
    }

    #[test]
    fn every_supported_operation_gives_the_executors_bits() {
        // The executor with every three-operand vector width this machine
        // runs. The baseline's two-operand SSE2 form lets the compiler swap
        // the operands of `+` and `*`, so where both are NaNs the baseline
        // kernels may return either NaN (the test shows they do); native
        // code, like the AVX kernels, returns the first.
        for width in crate::eval::Width::available() {
            if width == crate::eval::Width::Baseline {
                continue;
            }
            crate::eval::set_width(Some(width));
            let r = std::panic::catch_unwind(|| every_supported_operation(width));
            crate::eval::set_width(None);
            if let Err(e) = r {
                std::panic::resume_unwind(e);
            }
        }
    }

    fn every_supported_operation(width: crate::eval::Width) {
        let batches = triples();
        for &op in SUPPORTED {
            let c = code(
                vec![Op::Kernel {
                    op,
                    half: false,
                    dst: 4,
                    args: [1, 2, 3, 1],
                    at: 0,
                }],
                5,
                vec![4],
                Vec::new(),
            );
            for b in &batches {
                let [want, got] = both(&c, b);
                for lane in 0..LANES {
                    assert_eq!(
                        want[0][lane],
                        got[0][lane],
                        "{}({:#x}, {:#x}, {:#x}) at {:?}",
                        op.name(),
                        b[0][lane],
                        b[1][lane],
                        b[2][lane],
                        width
                    );
                }
            }
        }
    }

    /// A stretch, an interpreted `pow` that reads what the stretch computed,
    /// a second stretch with an `if` whose sides write the output through
    /// masked copies and leave through an exit, constants and fills.
    #[test]
    fn stretches_around_interpreted_ops_store_what_later_steps_read() {
        use Opcode::*;
        let k = |op: Opcode, dst: Slot, args: [Slot; 4]| Op::Kernel {
            op,
            half: false,
            dst,
            args,
            at: 0,
        };
        let ops = vec![
            k(FMul, 4, [1, 2, 0, 0]),
            k(FAbs, 5, [4, 0, 0, 0]),
            Op::Fill { dst: 13, bits: 0 },
            k(FPow, 6, [5, 12, 0, 0]),
            k(FAdd, 7, [6, 4, 0, 0]),
            k(FLt, 8, [7, 3, 0, 0]),
            Op::If {
                cond: 8,
                parent: 0,
                then_mask: 9,
                else_mask: 10,
                accept: vec![
                    k(FSq, 11, [7, 0, 0, 0]),
                    Op::MaskedCopy {
                        dst: 13,
                        src: 11,
                        mask: 9,
                    },
                    Op::Exit {
                        current: 9,
                        masks: vec![0].into(),
                    },
                ],
                reject: vec![Op::MaskedCopy {
                    dst: 13,
                    src: 12,
                    mask: 10,
                }],
            },
            Op::Copy { dst: 14, src: 0 },
        ];
        let c = code(ops, 15, vec![13, 14, 4], vec![(12, 3.0f32.to_bits())]);
        let native = compile(&c).expect("two stretches");
        assert!(matches!(
            native.steps[..],
            [Step::Native(_), Step::Op(3), Step::Native(_)]
        ));
        for b in &triples() {
            let [want, got] = both(&c, b);
            assert_eq!(want, got);
        }
    }

    #[test]
    fn code_without_supported_arithmetic_is_not_compiled() {
        let c = code(
            vec![
                Op::Kernel {
                    op: Opcode::FSin,
                    half: false,
                    dst: 4,
                    args: [1, 0, 0, 0],
                    at: 0,
                },
                Op::Copy { dst: 5, src: 4 },
            ],
            6,
            vec![5],
            Vec::new(),
        );
        assert!(compile(&c).is_none());
    }
}
