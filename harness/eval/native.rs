//! Native code for the executor's straight-line stretches.
//!
//! The executor runs one operation at a time over a whole batch, so every
//! intermediate value goes to memory and back between operations. Here each
//! maximal stretch of top-level operations that native code can express (the
//! operations of [`SUPPORTED`], `pow` with a constant integral exponent of
//! magnitude at most 32, copies, fills, masked copies, exits and `if`s made
//! only of those) is compiled with Cranelift into one function: a loop over
//! the batch, four lanes at a time, whose values stay in registers from
//! operation to operation. Only the slots a later step or the batch driver
//! reads are stored; everything else (other `pow`s, the transcendental
//! functions, loops, indexing, f16 operations, the spec-bound number model's
//! perturbations) runs in the executor between the stretches. A program that
//! is one stretch also gets [`Native::whole`], which runs whole ranges of
//! full batches straight in the caller's columns.
//!
//! ## Same bits as the executor
//! Each operation is emitted as the lane kernel of [`super::lanes`] computes
//! it, operand order included (an x86-64 arithmetic instruction returns its
//! first NaN operand, so the order decides which NaN comes out): a fused
//! chain becomes its two plain operations, `min`, `max` and `clamp` the same
//! compare-and-select, booleans 0 or 1. Both sides of an `if` run for every
//! lane: every operation here computes all lanes anyway, and a side whose
//! mask is empty changes no lane through its masked copies and exits. The
//! tests in this module and in `tests/eval/straightforward.rs` compare the
//! two tiers bit for bit, NaN payloads included, on every operation at every
//! vector width and on every function of the demo library.
//!
//! ## Memory
//! A compiled stretch reads and writes exactly the columns the executor would:
//! the machine's slot table (`*const *mut Lanes`) gives one column per slot,
//! `LANES` lanes each, and the code touches lanes `0..LANES` of the slots its
//! operations name, all below the code's slot count (the verifier's rule 1).
//! Input slots are only read (rule 4), so bound read-only columns stay
//! untouched. [`Native::whole`] touches only the input and output columns
//! its table gives, over the length it is given (checked when it is
//! compiled: it loads no other slot and stores no other slot). Generated code
//! cannot run under Miri; there the executor interprets every operation (this
//! module is not compiled).

use std::collections::{BTreeSet, HashMap};
use std::sync::atomic::{AtomicU8, Ordering};

use cranelift_codegen::ir::condcodes::{FloatCC, IntCC};
use cranelift_codegen::ir::{types, AbiParam, Endianness, InstBuilder, MemFlagsData, Value};
use cranelift_codegen::settings::{self, Configurable};
use cranelift_frontend::{FunctionBuilder, FunctionBuilderContext};
use cranelift_jit::{JITBuilder, JITModule};
use cranelift_module::{Linkage, Module};

use super::batch::EXP;
use super::ir::{Code, Op, Slot, Use};
use super::lanes::{Lanes, Opcode, LANES};

/// A compiled stretch: runs over the batch whose columns the slot table
/// gives.
pub(crate) type Entry = unsafe extern "C" fn(*const *mut Lanes);

/// See [`Native::whole`].
pub(crate) type Whole = unsafe extern "C" fn(*const *mut u32, usize) -> u32;

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
    /// The whole program over `bytes / 4` lanes from the start of each
    /// input and output column, every lane a point (the root mask all
    /// ones): `whole(table, bytes)`, where `table` has one entry per slot,
    /// the column of each input and output slot at its first lane, and
    /// `bytes` is a multiple of `16 * UNROLL`; returns non-zero when a float
    /// output holds NaN or an infinity somewhere (and, rarely, when finite
    /// outputs overflowed the sums it tests them with). Present when the program
    /// is one stretch that loads only input slots and stores only output
    /// slots.
    pub whole: Option<Whole>,
    /// The slot count of the code compiled.
    pub slot_count: usize,
    /// Freed on drop, with the steps that point into it.
    module: Option<JITModule>,
}

// SAFETY: after `finalize_definitions` the module's code is immutable and
// is only executed (from any thread) through the entries in `steps` and
// `whole`; the module itself is touched only by `drop`, which has
// `&mut self`.
unsafe impl Send for Native {}
unsafe impl Sync for Native {}

impl Drop for Native {
    fn drop(&mut self) {
        self.steps.clear();
        self.whole = None;
        if let Some(m) = self.module.take() {
            // SAFETY: the only pointers into the module's code were in
            // `steps` and `whole`, cleared above, and a `Native` is dropped
            // only when no machine uses it (machines hold it through an
            // `Arc`).
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

/// 0: automatic (native code once a program has evaluated [`NATIVE_MIN`]
/// points in all); otherwise `1 + Tier as u8`.
static TIER: AtomicU8 = AtomicU8::new(0);

/// When the tier is automatic, a program is interpreted until it has
/// evaluated this many points in all (over every call: a streamed check
/// evaluates in segments of 4,096), then compiled: by then interpreting has
/// cost about what compiling does, so a program never costs much more than
/// twice its best. Both grow with the program's operations: compiling the
/// demo BRDF (about 80 operations) took 5.4 ms and interpreting it 22 ns a
/// point; the GGX NDF (8) 1.5 ms and 1.5 ns (release build, one run each).
/// A caller that knows how many points are to come announces them
/// (`Program::announce`, as a check does for its sweep), and a program
/// announced to reach this many compiles at once. While one evaluation
/// compiles, the others interpret rather than wait (unless a tier is
/// forced).
pub const NATIVE_MIN: usize = 1 << 18;

/// Force a tier for every evaluation (`None`: automatic, the default).
/// Process-wide; a test and benchmark hook, since both tiers give the same
/// bits (tests compare them).
pub fn set_tier(tier: Option<Tier>) {
    TIER.store(tier.map_or(0, |t| 1 + t as u8), Ordering::Relaxed);
}

/// Whether a tier is forced ([`set_tier`]): then an evaluation that wants
/// native code waits for its compilation rather than interpret meanwhile.
pub(crate) fn forced() -> bool {
    TIER.load(Ordering::Relaxed) != 0
}

/// The tier an evaluation runs with, by the points the program has evaluated
/// in all, this evaluation's included.
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

/// Whether native code computes `op` (recursively, for an `if`), given the
/// constant slots no op writes.
fn expressible(op: &Op, consts: &HashMap<Slot, u32>) -> bool {
    match op {
        Op::Fill { .. }
        | Op::Copy { .. }
        | Op::Enter { .. }
        | Op::MaskedCopy { .. }
        | Op::Exit { .. } => true,
        Op::Kernel {
            op: Opcode::FPow,
            half: false,
            args,
            ..
        } => consts
            .get(&args[1])
            .is_some_and(|&b| small_power(b).is_some()),
        Op::Kernel { op, half, .. } => !half && supported(*op),
        Op::If { accept, reject, .. } => {
            accept.iter().chain(reject).all(|o| expressible(o, consts))
        }
        _ => false,
    }
}

/// The exponent of `pow` that `arith::pow` computes by repeated f64
/// multiplication (an integral float of magnitude at most 32), as an integer.
fn small_power(bits: u32) -> Option<i32> {
    let b = f32::from_bits(bits);
    (b.abs() <= 32.0 && b == (b as i32) as f32).then_some(b as i32)
}

/// `arith::pow` of four lanes, for the lanes native code leaves to it.
///
/// # Safety
/// `out` and `a` must be valid for four `u32`s each.
unsafe extern "C" fn pow_lanes(out: *mut u32, a: *const u32, b: u32) {
    for i in 0..4 {
        // SAFETY: the caller's contract; i < 4.
        unsafe {
            let x = f32::from_bits(*a.add(i));
            *out.add(i) = crate::arith::pow(x, f32::from_bits(b)).to_bits();
        }
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
    let stretches = stretches(&code.ops, &consts);
    if stretches.is_empty() {
        return None;
    }

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
            Emit::function(
                b,
                &code.ops[range.clone()],
                &consts,
                &later,
                ptr,
                &module,
                None,
            );
        }
        let id = module
            .declare_function(&format!("stretch{k}"), Linkage::Local, &ctx.func.signature)
            .ok()?;
        module.define_function(id, &mut ctx).ok()?;
        module.clear_context(&mut ctx);
        ids.push(id);
    }
    // A program that is one stretch, reading only its inputs once the root
    // mask is known to be all ones and writing only its outputs, also runs
    // over whole ranges of full batches in the caller's columns.
    let mut whole = None;
    if stretches.len() == 1 && stretches[0] == (0..code.ops.len()) {
        let mut consts = consts.clone();
        consts.insert(code.root_mask, 1);
        let later: BTreeSet<Slot> = code.output_slots.iter().copied().collect();
        ctx.func.signature.params.clear();
        ctx.func.signature.params.push(AbiParam::new(ptr));
        ctx.func.signature.params.push(AbiParam::new(ptr));
        ctx.func.signature.returns.push(AbiParam::new(types::I32));
        let kinds = code.output_kinds();
        let float_outputs: BTreeSet<Slot> = code
            .output_slots
            .iter()
            .zip(&kinds)
            .filter(|(_, k)| k.is_float())
            .map(|(&s, _)| s)
            .collect();
        let (loaded, stored) = {
            let b = FunctionBuilder::new(&mut ctx.func, &mut fctx);
            Emit::function(
                b,
                &code.ops,
                &consts,
                &later,
                ptr,
                &module,
                Some(&float_outputs),
            )
        };
        let inputs: BTreeSet<Slot> = code.input_slots.iter().copied().collect();
        if loaded.is_subset(&inputs) && stored == later {
            let id = module
                .declare_function("whole", Linkage::Local, &ctx.func.signature)
                .ok()?;
            module.define_function(id, &mut ctx).ok()?;
            whole = Some(id);
        }
        module.clear_context(&mut ctx);
    }
    module.finalize_definitions().ok()?;
    let whole = whole.map(|id| {
        // SAFETY: built above with the signature `(pointer, pointer) -> ()`
        // in the platform's default calling convention, `extern "C"`.
        unsafe { std::mem::transmute::<*const u8, Whole>(module.get_finalized_function(id)) }
    });

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
        whole,
        slot_count: code.slot_count,
        module: Some(module),
    })
}

/// The maximal runs of top-level ops native code expresses that compute
/// something.
fn stretches(ops: &[Op], consts: &HashMap<Slot, u32>) -> Vec<std::ops::Range<usize>> {
    let mut out = Vec::new();
    let mut i = 0;
    while i < ops.len() {
        if !expressible(&ops[i], consts) {
            i += 1;
            continue;
        }
        let start = i;
        while i < ops.len() && expressible(&ops[i], consts) {
            i += 1;
        }
        if ops[start..i].iter().any(computes) {
            out.push(start..i);
        }
    }
    out
}

/// Groups of four lanes per loop iteration. A batch (`LANES * 4` bytes) and
/// every `Native::whole` length (a multiple of `LANES`) hold whole
/// iterations.
const UNROLL: usize = 2;

/// At most this many sums of output values in [`Native::whole`]'s loop.
const SUMS: usize = 4;

const _: () = assert!(LANES.is_multiple_of(4 * UNROLL));

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
    /// Byte offset of the current iteration's first four lanes.
    at: Value,
    /// Byte offset of the current four lanes from `at`.
    off: i32,
    /// The current value of each slot read or written so far in this pass.
    vals: HashMap<Slot, V>,
    consts: &'a HashMap<Slot, u32>,
    /// Every constant the stretch uses, in every lane, made once per call.
    splats: HashMap<u32, Value>,
    /// Slots written by the stretch, in first-write order.
    dirty: Vec<Slot>,
    ptr: types::Type,
    /// The calling convention of calls out of generated code.
    call_conv: cranelift_codegen::isa::CallConv,
    /// Slots read from memory (read before the stretch writes them).
    loaded: BTreeSet<Slot>,
}

fn flags() -> MemFlagsData {
    MemFlagsData::new().with_notrap()
}

fn lanes_order() -> MemFlagsData {
    MemFlagsData::new().with_endianness(Endianness::Little)
}

impl<'a> Emit<'a> {
    /// Emit one stretch as a function of the slot table: over one batch
    /// (`(table)`), or, with `whole` (the float output slots), over a byte
    /// length given as a second parameter (`(table, bytes)`; see
    /// [`Native::whole`]). Returns the slots it loads from memory and the
    /// slots it stores.
    fn function(
        mut b: FunctionBuilder<'a>,
        ops: &[Op],
        consts: &'a HashMap<Slot, u32>,
        later: &BTreeSet<Slot>,
        ptr: types::Type,
        module: &JITModule,
        whole: Option<&BTreeSet<Slot>>,
    ) -> (BTreeSet<Slot>, BTreeSet<Slot>) {
        // Everything loop-invariant first, in the entry block: the column of
        // every slot the stretch names, and every constant it uses.
        let mut slots = BTreeSet::new();
        each_slot(ops, &mut |s, _| {
            slots.insert(s);
        });
        let mut bits: BTreeSet<u32> = [0, 1, 1.0f32.to_bits(), EXP].into();
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
        let end = if whole.is_some() {
            b.block_params(entry)[1]
        } else {
            b.ins().iconst(ptr, (LANES * 4) as i64)
        };
        // The loop carries its lane offset and, for `whole`, `sums` float
        // sums of the float output values, each output of each group added
        // to one of them in turn. A NaN or an infinity among the values
        // makes its sum NaN or infinite for good; finite values can only
        // make a sum infinite by overflowing it. So "a sum is not finite",
        // which the function returns, holds whenever a value is not finite
        // (and rarely also without: the driver's exact scan then finds
        // nothing). One float addition per value, beside the
        // multiplications and divisions that bound such code, where an
        // integer test of each value's exponent took three operations
        // from them; several sums keep the additions carried from one
        // iteration to the next short.
        let sums = whole.map_or(0, |f| (UNROLL * f.len()).clamp(1, SUMS));
        let header = b.create_block();
        b.append_block_param(header, ptr);
        let exit = b.create_block();
        for _ in 0..sums {
            b.append_block_param(header, types::F32X4);
            b.append_block_param(exit, types::F32X4);
        }
        let any = b.ins().icmp(IntCC::UnsignedGreaterThan, end, zero);
        let none = b.ins().bitcast(types::F32X4, lanes_order(), splats[&0]);
        let start: Vec<_> = std::iter::once(zero)
            .chain(std::iter::repeat_n(none, sums))
            .map(Into::into)
            .collect();
        b.ins().brif(any, header, &start, exit, &start[1..]);

        b.switch_to_block(header);
        let at = b.block_params(header)[0];
        let mut carried = b.block_params(header)[1..].to_vec();
        let mut e = Emit {
            b,
            bases,
            at,
            vals: HashMap::new(),
            off: 0,
            consts,
            splats,
            dirty: Vec::new(),
            ptr,
            call_conv: module.isa().default_call_conv(),
            loaded: BTreeSet::new(),
        };
        // UNROLL groups of four lanes per iteration, each its own copy of
        // the code (independent chains for the processor to overlap).
        let mut stored = BTreeSet::new();
        let mut added = 0;
        for u in 0..UNROLL {
            e.off = 16 * u as i32;
            e.vals.clear();
            for op in ops {
                e.op(op);
            }
            let dirty = std::mem::take(&mut e.dirty);
            for s in dirty.into_iter().filter(|s| later.contains(s)) {
                let v = match e.vals[&s] {
                    V::F(v) | V::I(v) => v,
                };
                let addr = e.addr(s);
                e.b.ins().store(flags(), v, addr, e.off);
                stored.insert(s);
                if whole.is_some_and(|f| f.contains(&s)) {
                    let x = e.as_f(e.vals[&s]);
                    let k = added % sums;
                    carried[k] = e.b.ins().fadd(carried[k], x);
                    added += 1;
                }
            }
        }
        let next = e.b.ins().iadd_imm_s(e.at, 16 * UNROLL as i64);
        let more = e.b.ins().icmp(IntCC::UnsignedLessThan, next, end);
        let again: Vec<_> = std::iter::once(next)
            .chain(carried)
            .map(Into::into)
            .collect();
        e.b.ins().brif(more, header, &again, exit, &again[1..]);
        e.b.switch_to_block(exit);
        if whole.is_some() {
            // A sum is not finite exactly where `sum - sum` is NaN.
            let mut bad = None;
            for &sum in e.b.block_params(exit).to_vec().iter() {
                let d = e.b.ins().fsub(sum, sum);
                let nan = e.b.ins().fcmp(FloatCC::Unordered, d, d);
                bad = Some(bad.map_or(nan, |b| e.b.ins().bor(b, nan)));
            }
            let nan = bad.expect("at least one sum");
            let any = e.b.ins().vany_true(nan);
            let any = e.b.ins().uextend(types::I32, any);
            e.b.ins().return_(&[any]);
        } else {
            e.b.ins().return_(&[]);
        }
        e.b.seal_all_blocks();
        let loaded = std::mem::take(&mut e.loaded);
        e.b.finalize(module.target_config());
        (loaded, stored)
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
        let v = self.b.ins().load(types::I32X4, flags(), addr, self.off);
        self.loaded.insert(s);
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
            FPow => {
                let x = self.f(a[0]);
                let bits = self.consts[&a[1]];
                V::F(self.pow(x, bits))
            }
            _ => unreachable!("{} is not among the supported operations", op.name()),
        }
    }

    /// `arith::pow(x, b)` for a constant `b` that [`small_power`] accepts:
    /// for bases that are positive and finite, its repeated multiplication in
    /// f64 (the same products in the same order) rounded once to f32, two
    /// lanes per f64 vector; a group of four lanes with any other base calls
    /// `arith::pow` itself for all four.
    fn pow(&mut self, x: Value, b: u32) -> Value {
        let n = small_power(b).expect("checked by expressible");
        // Lanes 2 and 3 moved down, so both halves widen with
        // `fvpromote_low`.
        let bytes = |e: &mut Self, v: Value| e.b.ins().bitcast(types::I8X16, lanes_order(), v);
        let xb = bytes(self, x);
        let swap: Vec<u8> = (8..16).chain(0..8).collect();
        let swap = self.b.func.dfg.immediates.push(swap.into());
        let hi = self.b.ins().shuffle(xb, xb, swap);
        let hi = self.b.ins().bitcast(types::F32X4, lanes_order(), hi);
        let halves = [x, hi].map(|h| {
            let base = self.b.ins().fvpromote_low(h);
            // arith::pow: acc = 1, base = x; per bit of |n|, low first:
            // acc *= base if set, then base *= base.
            let one = self.b.ins().f64const(1.0);
            let mut acc = self.b.ins().splat(types::F64X2, one);
            let mut base = base;
            let mut m = n.unsigned_abs();
            while m > 0 {
                if m & 1 == 1 {
                    acc = self.b.ins().fmul(acc, base);
                }
                base = self.b.ins().fmul(base, base);
                m >>= 1;
            }
            if n < 0 {
                let one = self.b.ins().f64const(1.0);
                let one = self.b.ins().splat(types::F64X2, one);
                acc = self.b.ins().fdiv(one, acc);
            }
            let d = self.b.ins().fvdemote(acc);
            bytes(self, d)
        });
        let join: Vec<u8> = (0..8).chain(16..24).collect();
        let join = self.b.func.dfg.immediates.push(join.into());
        let fast = self.b.ins().shuffle(halves[0], halves[1], join);
        let fast = self.b.ins().bitcast(types::F32X4, lanes_order(), fast);

        // Every lane positive and finite (NaN compares false)?
        let zero = self.fconst(0.0);
        let inf = self.fconst(f32::from_bits(EXP));
        let pos = self.b.ins().fcmp(FloatCC::GreaterThan, x, zero);
        let fin = self.b.ins().fcmp(FloatCC::LessThan, x, inf);
        let ok = self.b.ins().band(pos, fin);
        let all = self.b.ins().vall_true(ok);
        let slow = self.b.create_block();
        let join = self.b.create_block();
        self.b.append_block_param(join, types::F32X4);
        self.b.ins().brif(all, join, &[fast.into()], slow, &[]);

        self.b.switch_to_block(slow);
        let slot = self
            .b
            .create_sized_stack_slot(cranelift_codegen::ir::StackSlotData::new(
                cranelift_codegen::ir::StackSlotKind::ExplicitSlot,
                32,
                4,
            ));
        let ptr = self.ptr;
        let input = self.b.ins().stack_addr(ptr, slot, 0);
        let output = self.b.ins().stack_addr(ptr, slot, 16);
        self.b.ins().store(flags(), x, input, 0);
        let mut sig = cranelift_codegen::ir::Signature::new(self.call_conv);
        sig.params.extend([
            AbiParam::new(ptr),
            AbiParam::new(ptr),
            AbiParam::new(types::I32),
        ]);
        let sig = self.b.import_signature(sig);
        let entry: unsafe extern "C" fn(*mut u32, *const u32, u32) = pow_lanes;
        let f = self.b.ins().iconst(ptr, entry as usize as i64);
        let bits = self.b.ins().iconst(types::I32, i64::from(b));
        self.b.ins().call_indirect(sig, f, &[output, input, bits]);
        let r = self.b.ins().load(types::F32X4, flags(), output, 0);
        self.b.ins().jump(join, &[r.into()]);

        self.b.switch_to_block(join);
        self.b.block_params(join)[0]
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
    use crate::eval::fuse::tests::{triples, SPECIAL};
    use std::sync::Arc;

    /// The float specials of the fused kernels' tests (NaNs with payloads
    /// and signs, infinities, signed zeros, subnormals, the ends of the
    /// normal range, ordinary numbers), another signalling NaN, pi, and
    /// integer and boolean patterns (2, -1, the largest i32; 0, 1 and the
    /// sign bit alone are among the specials).
    fn values() -> Vec<u32> {
        let more = [0x7fa0_0003, 0x4049_0fdb, 2, 0xffff_ffff, 0x7fff_ffff];
        SPECIAL.iter().chain(&more).copied().collect()
    }

    /// Slots: 0 root mask, 1..=3 inputs, the rest as the ops need.
    fn code(ops: Vec<Op>, slots: usize, outputs: Vec<Slot>, consts: Vec<(Slot, u32)>) -> Verified {
        let mut c = crate::eval::alloc::tests::code(ops, slots - 3, outputs, consts);
        c.input_slots.push(3);
        Verified::new(c).unwrap_or_else(|e| panic!("{e}"))
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

    #[test]
    fn every_supported_operation_gives_the_executors_bits() {
        // The executor at every vector width this machine runs.
        for width in crate::eval::Width::available() {
            crate::eval::set_width(Some(width));
            let r = std::panic::catch_unwind(|| every_supported_operation(width));
            crate::eval::set_width(None);
            if let Err(e) = r {
                std::panic::resume_unwind(e);
            }
        }
    }

    fn every_supported_operation(width: crate::eval::Width) {
        let batches = triples(&values());
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

    /// A stretch, an interpreted `pow` (its exponent is not integral) that
    /// reads what the stretch computed,
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
        let c = code(ops, 15, vec![13, 14, 4], vec![(12, 2.5f32.to_bits())]);
        let native = compile(&c).expect("two stretches");
        assert!(matches!(
            native.steps[..],
            [Step::Native(_), Step::Op(3), Step::Native(_)]
        ));
        for b in &triples(&values()) {
            let [want, got] = both(&c, b);
            assert_eq!(want, got);
        }
    }

    /// `pow` with a constant exponent: native code for small integral ones
    /// (bases over the whole positive range four lanes at a time, and
    /// groups of four holding a special, which go to `arith::pow`), the
    /// executor's for the others.
    #[test]
    fn pow_with_a_constant_exponent_gives_the_executors_bits() {
        // Positive finite bases spread over every exponent of binary32 (a
        // simple LCG over the bit patterns below +inf), then the specials.
        let mut state = 0x2545_f491_u64;
        let mut bases: Vec<u32> = (0..LANES * 40)
            .map(|_| {
                state = state
                    .wrapping_mul(6_364_136_223_846_793_005)
                    .wrapping_add(1);
                ((state >> 33) as u32 % 0x7f7f_ffff) + 1
            })
            .collect();
        let n = bases.len();
        for (k, &v) in values().iter().enumerate() {
            bases[k * 37 % n] = v;
        }
        let batches: Vec<[Lanes; 3]> = bases
            .chunks(LANES)
            .map(|c| [c.try_into().unwrap(), [0; LANES], [0; LANES]])
            .collect();
        for e in [
            5.0f32, 2.0, 3.0, 1.0, 0.0, -0.0, -1.0, -2.0, 7.0, 32.0, -32.0, 2.5, 33.0,
        ] {
            let c = code(
                vec![Op::Kernel {
                    op: Opcode::FPow,
                    half: false,
                    dst: 4,
                    args: [1, 5, 0, 0],
                    at: 0,
                }],
                6,
                vec![4],
                vec![(5, e.to_bits())],
            );
            let native = compile(&c);
            assert_eq!(native.is_some(), e.abs() <= 32.0 && e.fract() == 0.0, "{e}");
            if native.is_none() {
                continue;
            }
            for b in &batches {
                let [want, got] = both(&c, b);
                for lane in 0..LANES {
                    assert_eq!(want[0][lane], got[0][lane], "pow({:#x}, {e})", b[0][lane]);
                }
            }
        }
    }

    /// A one-stretch function runs its full batches in one call straight in
    /// the caller's columns (`Native::whole`); the ragged tail, and batches
    /// with a result that is not finite (run again one at a time for their
    /// NaN issues), take the per-batch path. Results and issues are the
    /// executor's, over ranges of every length around the batch size.
    #[test]
    fn whole_ranges_give_the_executors_results_and_issues() {
        use crate::eval::{set_tier, Program};
        use crate::wgsl::Shader;
        let _tier = tier_lock();
        let src = "fn f(x: f32, r: f32) -> f32 {
            let a = r * r;
            var y = a / (x * x - 0.25);
            if x > 2.0 { y = -y; }
            return y;
        }";
        let sh = Shader::from_source("whole.wgsl", src.to_string()).unwrap();
        let p = Program::compile(&sh, "f", &Default::default()).unwrap();
        let native = compile(&p.fast).expect("one stretch");
        assert!(native.whole.is_some(), "the function is one stretch");
        for n in [1, LANES - 1, LANES, LANES + 1, 3 * LANES + 5, 40 * LANES] {
            // x = 0.5 (a division by zero) at a few points, in full batches
            // and in the tail; +inf and NaN inputs (not finite, no issue).
            let x: Vec<u32> = (0..n)
                .map(|i| match i % 97 {
                    13 => 0.5f32,
                    50 => f32::INFINITY,
                    71 => f32::NAN,
                    _ => i as f32 / n as f32 * 4.0,
                })
                .map(f32::to_bits)
                .collect();
            let r: Vec<u32> = (0..n).map(|i| (i as f32 * 0.37).sin().to_bits()).collect();
            let mut runs = [Tier::Interpret, Tier::Native].map(|t| {
                set_tier(Some(t));
                let mut out = Vec::new();
                let issues = p.eval(&[&x, &r], &mut out);
                (out, issues)
            });
            set_tier(None);
            let native = runs[1].clone();
            let interpreted = std::mem::take(&mut runs[0]);
            assert_eq!(interpreted, native, "{n} points");
            assert_eq!(
                native.1.len(),
                x.iter().filter(|&&b| f32::from_bits(b) == 0.5).count(),
                "{n} points: one issue per division by zero"
            );
        }
    }

    #[test]
    fn whole_reports_every_value_that_is_not_finite() {
        use crate::eval::Program;
        use crate::wgsl::Shader;
        let _tier = tier_lock();
        let src = "fn f(x: f32) -> f32 { return x * 0.5; }";
        let sh = Shader::from_source("flag.wgsl", src.to_string()).unwrap();
        let p = Program::compile(&sh, "f", &Default::default()).unwrap();
        let native = compile(&p.fast).expect("one stretch");
        let whole = native.whole.expect("the function is one stretch");
        let n = 2 * LANES;
        let run = |x: &[f32]| {
            let mut out = vec![0u32; n];
            let mut table = vec![std::ptr::null_mut::<u32>(); p.fast.slot_count];
            table[p.fast.input_slots[0] as usize] = x.as_ptr() as *mut u32;
            table[p.fast.output_slots[0] as usize] = out.as_mut_ptr();
            // SAFETY: both columns hold `n` lanes, the length given.
            let flag = unsafe { whole(table.as_ptr(), n * 4) };
            (flag, out)
        };
        let ones = vec![1.0f32; n];
        assert_eq!(run(&ones).0, 0, "finite values");
        // One NaN or infinity in any lane (any group, any iteration).
        for bad in [f32::NAN, f32::INFINITY, f32::NEG_INFINITY] {
            for i in 0..n {
                let mut x = ones.clone();
                x[i] = bad;
                assert_ne!(run(&x).0, 0, "{bad} at lane {i}");
            }
        }
        // Finite outputs whose sum overflows may be reported; the driver's
        // exact scan then finds no issue, and the results are the
        // executor's.
        let big = vec![f32::MAX; n];
        let (flag, out) = run(&big);
        assert!(out.iter().all(|&b| f32::from_bits(b).is_finite()));
        assert_ne!(flag, 0, "sums of 2^127 overflow: the driver's scan runs");
        let mut runs = [Tier::Interpret, Tier::Native].map(|t| {
            crate::eval::set_tier(Some(t));
            let mut out = Vec::new();
            let bits: Vec<u32> = big.iter().map(|x| x.to_bits()).collect();
            let issues = p.eval(&[&bits], &mut out);
            (out, issues)
        });
        crate::eval::set_tier(None);
        assert_eq!(runs[0], runs[1]);
        assert!(std::mem::take(&mut runs[1]).1.is_empty());
    }

    /// Held by every test here that forces a tier ([`set_tier`] is
    /// process-wide) or needs the automatic one.
    fn tier_lock() -> std::sync::MutexGuard<'static, ()> {
        static TIER_TESTS: std::sync::Mutex<()> = std::sync::Mutex::new(());
        TIER_TESTS.lock().unwrap_or_else(|e| e.into_inner())
    }

    #[test]
    fn an_announced_program_compiles_at_once_and_others_interpret_meanwhile() {
        use crate::eval::Program;
        use crate::wgsl::Shader;
        use std::sync::atomic::Ordering;
        let _tier = tier_lock();
        let src = "fn f(x: f32, r: f32) -> f32 { return r * r / (x * x + 0.25); }";
        let sh = Shader::from_source("announce.wgsl", src.to_string()).unwrap();
        let fresh = || Program::compile(&sh, "f", &Default::default()).unwrap();
        let n = 3 * LANES + 1;
        let x: Vec<u32> = (0..n).map(|i| (i as f32 * 0.1).to_bits()).collect();
        let r: Vec<u32> = (0..n).map(|i| (i as f32 * 0.37).sin().to_bits()).collect();
        let eval = |p: &Program| {
            let mut out = Vec::new();
            let issues = p.eval(&[&x, &r], &mut out);
            (out, issues)
        };
        let compiled = |p: &Program| p.native.get().is_some_and(|n| n.is_some());

        // Automatic tier, nothing announced: a few points are interpreted.
        let p = fresh();
        let interpreted = eval(&p);
        assert!(p.native.get().is_none(), "compiled for {n} points");

        // Announced: the first evaluation compiles, and gives the same bits.
        let p = fresh();
        p.announce(NATIVE_MIN);
        assert_eq!(eval(&p), interpreted);
        assert!(compiled(&p), "not compiled after an announced sweep");

        // Announced, but another evaluation is compiling: this one
        // interprets, without waiting and without compiling.
        let p = fresh();
        p.announce(NATIVE_MIN);
        p.compiling.store(true, Ordering::Relaxed);
        assert_eq!(eval(&p), interpreted);
        assert!(p.native.get().is_none(), "compiled twice");

        // A forced native tier waits for the compilation instead.
        crate::eval::set_tier(Some(Tier::Native));
        let forced = eval(&p);
        crate::eval::set_tier(None);
        assert_eq!(forced, interpreted);
        assert!(compiled(&p), "a forced tier did not compile");
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
