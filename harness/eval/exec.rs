//! The executor: runs verified [`Code`] over one batch of [`LANES`] points.
//!
//! Slot memory is one [`Arena`]: a single allocation whose every pointer is
//! derived from one base pointer, plus a table saying where each slot's lanes
//! live (its own column in the arena, or a caller's column *bound* for one
//! batch so full batches of inputs and outputs need no copy). Nothing takes a
//! reference to the arena as a whole, so a `&mut` to one slot never
//! invalidates the pointers to the others.
//!
//! The `unsafe` blocks rely on two things only: what the verifier proved of
//! the code ([`Verified`]), and the binding contract of [`Machine::bind`].

use super::ir::{At, Code, Op, Site, Slot, PER_LANE_MAX};
use super::lanes::Kernel;
use super::lanes::{Lanes, LANES};
use super::verify::{verify, VerifyError};

/// Code the verifier accepted. Only [`Verified::new`] makes one, so a machine
/// never runs code whose slot numbers, destinations and masks were not
/// checked.
pub(crate) struct Verified(Code);

impl Verified {
    pub fn new(code: Code) -> Result<Verified, VerifyError> {
        verify(&code)?;
        Ok(Verified(code))
    }
}

impl std::ops::Deref for Verified {
    type Target = Code;
    fn deref(&self) -> &Code {
        &self.0
    }
}

/// One slot's lanes, starting on a cache line: a whole-register load or
/// store of 64 bytes (AVX-512) then never straddles two lines, which costs
/// about twice as much.
#[derive(Clone, Copy)]
#[repr(C, align(64))]
struct Column(Lanes);

/// The slot memory of one machine.
struct Arena {
    /// Start of the machine's own columns (`len` of them), from
    /// `Box::into_raw`; freed in `drop`.
    base: *mut Lanes,
    len: usize,
    /// Where each slot's lanes live: `base + slot`, or a bound column.
    ptrs: Box<[*mut Lanes]>,
}

impl Arena {
    fn new(len: usize) -> Arena {
        let own: Box<[Column]> = vec![Column([0; LANES]); len].into_boxed_slice();
        // `Column` is `Lanes` aligned to a cache line (`repr(C)`, one field).
        let base = Box::into_raw(own) as *mut Column as *mut Lanes;
        // SAFETY: `base` points to `len` columns; `base + i` for i < len is
        // in bounds.
        let ptrs = (0..len).map(|i| unsafe { base.add(i) }).collect();
        Arena { base, len, ptrs }
    }

    /// The machine's own column of slot `s` (whether or not `s` is bound).
    fn own(&self, s: Slot) -> *mut Lanes {
        assert!((s as usize) < self.len, "slot {s} out of range");
        // SAFETY: just checked to be within the allocation.
        unsafe { self.base.add(s as usize) }
    }
}

impl Drop for Arena {
    fn drop(&mut self) {
        // SAFETY: `base` and `len` came from `Box::into_raw` of a boxed
        // slice of `len` columns, and this is the only place that frees it.
        unsafe {
            drop(Box::from_raw(std::ptr::slice_from_raw_parts_mut(
                self.base as *mut Column,
                self.len,
            )))
        };
    }
}

/// Why a lane was reported while running.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum RawKind {
    OutOfBounds,
    /// The lane was abandoned: it has no result.
    StepBudget,
}

/// One per-lane problem found while running.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct RawIssue {
    pub lane: usize,
    pub at: At,
    pub kind: RawKind,
    pub detail: String,
}

/// Scratch state of one thread: the slot arena, per-lane step counts and the
/// issue log.
pub(crate) struct Machine {
    arena: Arena,
    pub issues: Vec<RawIssue>,
    /// Loop iterations each lane has run in this batch, over every loop and
    /// inlined call.
    steps: [u64; LANES],
    /// Whether any loop ran since `steps` was last cleared.
    stepped: bool,
    pub step_budget: u64,
    /// Seed of the spec-bound number model (unused by exact programs).
    pub seed: u64,
    /// When set, the first operation per lane that turned non-NaN operands
    /// into a NaN or infinity is recorded (slower; used to explain failures).
    pub trace: Option<Vec<Option<At>>>,
    /// The code's straight-line stretches as native code (not with
    /// `trace`, which needs every operation's result).
    #[cfg(all(target_arch = "x86_64", not(miri)))]
    pub native: Option<std::sync::Arc<super::native::Native>>,
}

// SAFETY: the raw pointers point into the machine's own arena or into
// columns bound for one batch by the thread that owns the machine.
unsafe impl Send for Machine {}

impl Machine {
    /// A machine for `code`, its constant slots written.
    pub fn new(code: &Verified, step_budget: u64) -> Machine {
        let arena = Arena::new(code.slot_count);
        for &(s, bits) in &code.consts {
            // SAFETY: the column is the arena's own and nothing else refers
            // to it yet.
            unsafe { *arena.own(s) = [bits; LANES] };
        }
        Machine {
            arena,
            issues: Vec::new(),
            steps: [0; LANES],
            stepped: false,
            step_budget,
            seed: 0,
            trace: None,
            #[cfg(all(target_arch = "x86_64", not(miri)))]
            native: None,
        }
    }

    /// The lanes of slot `s` (which may live in a bound column).
    #[inline(always)]
    pub fn lanes(&self, s: Slot) -> &Lanes {
        // SAFETY: every pointer in the table is valid for reads: the arena's
        // own column or a column bound under `bind`'s contract; writes go
        // through `&mut self`, so none happens while this borrow lives.
        unsafe { &*self.arena.ptrs[s as usize] }
    }

    /// The machine's own column of `s`, for loading inputs that are not
    /// bound.
    pub fn own_mut(&mut self, s: Slot) -> &mut Lanes {
        // SAFETY: the arena's own column; `&mut self` makes the borrow unique
        // and no bound pointer points into the arena.
        unsafe { &mut *self.arena.own(s) }
    }

    /// Let slot `s` read (and, for an output, write) `col` directly for this
    /// batch.
    ///
    /// # Safety
    /// `col` must be valid for reads of one column, and for writes too if
    /// the code writes `s` (the verifier proves that input slots are never
    /// written); it must not be accessed other than through this machine
    /// until [`Machine::unbind`] or the machine is dropped.
    pub unsafe fn bind(&mut self, s: Slot, col: *mut Lanes) {
        self.arena.ptrs[s as usize] = col;
    }

    /// Point slot `s` back at the machine's own column.
    pub fn unbind(&mut self, s: Slot) {
        self.arena.ptrs[s as usize] = self.arena.own(s);
    }

    #[inline(always)]
    fn any(&self, m: Slot) -> bool {
        self.lanes(m).iter().fold(0, |a, &x| a | x) != 0
    }

    /// Run `code` once over the current batch (inputs loaded or bound, root
    /// mask set). Step counts start from zero.
    pub fn run(&mut self, code: &Verified) {
        assert_eq!(
            code.slot_count, self.arena.len,
            "a machine runs the code it was built for"
        );
        if self.stepped {
            self.steps = [0; LANES];
            self.stepped = false;
        }
        #[cfg(all(target_arch = "x86_64", not(miri)))]
        if self.trace.is_none() {
            if let Some(native) = self.native.take() {
                assert_eq!(
                    native.slot_count, code.slot_count,
                    "native code runs with the code it was compiled from"
                );
                for step in &native.steps {
                    match *step {
                        super::native::Step::Op(i) => self.step(&code.sites, &code.ops[i]),
                        // SAFETY: the stretch was compiled from this code
                        // (same slot count, checked above) and touches lanes
                        // `0..LANES` of the columns of slots it names, all
                        // below `slot_count`, the table's length; those
                        // columns are valid (`bind`'s contract) and reached by
                        // nothing else during the call, and input columns are
                        // only read (the verifier's rule 4).
                        super::native::Step::Native(f) => unsafe { f(self.arena.ptrs.as_ptr()) },
                    }
                }
                self.native = Some(native);
                return;
            }
        }
        self.exec(&code.sites, &code.ops);
    }

    fn exec(&mut self, sites: &[Site], ops: &[Op]) {
        for op in ops {
            self.step(sites, op);
        }
    }

    fn step(&mut self, sites: &[Site], op: &Op) {
        let p = self.arena.ptrs.as_ptr();
        // The column of slot `s`, as a raw pointer.
        // SAFETY (of every `col` call below): the verifier proved every slot
        // an op names is below `slot_count` (rule 1), the table's length.
        let col = |s: Slot| unsafe { *p.add(s as usize) };
        // SAFETY (of every dereference below): columns are valid (`bind`'s
        // contract); a `&mut` to a destination never aliases a `&` to an
        // operand because the verifier proved no destination is among its
        // operands (rule 2), and input columns, which may be read-only
        // memory, are never written (rule 4). Masks are whole-column values
        // copied out before lanes are written (rule 3 keeps them distinct).
        unsafe {
            match *op {
                Op::Fill { dst, bits } => (*col(dst)).fill(bits),
                Op::Copy { dst, src } => *col(dst) = *col(src),
                Op::Enter { mask, parent } => *col(mask) = *col(parent),
                Op::Kernel {
                    op,
                    half,
                    dst,
                    args: [a, b, c, d],
                    at,
                } => {
                    // The verifier proved the f16 version exists (rule 6).
                    let kernel = op.kernel(half);
                    match kernel {
                        Kernel::Unary(k) => k(&mut *col(dst), &*col(a)),
                        Kernel::Binary(k) => k(&mut *col(dst), &*col(a), &*col(b)),
                        Kernel::Ternary(k) => k(&mut *col(dst), &*col(a), &*col(b), &*col(c)),
                        Kernel::Quaternary(k) => {
                            k(&mut *col(dst), &*col(a), &*col(b), &*col(c), &*col(d))
                        }
                    }
                    if self.trace.is_some() {
                        self.trace_nan(sites, dst, &[a, b, c, d][..kernel.arity()], at);
                    }
                }
                Op::PerLane {
                    f,
                    ref dst,
                    ref args,
                } => {
                    let mut a = [0u32; PER_LANE_MAX];
                    let mut o = [0u32; PER_LANE_MAX];
                    for lane in 0..LANES {
                        for (i, &s) in args.iter().enumerate() {
                            a[i] = (*col(s))[lane];
                        }
                        f(&a[..args.len()], &mut o[..dst.len()]);
                        for (i, &s) in dst.iter().enumerate() {
                            (*col(s))[lane] = o[i];
                        }
                    }
                }
                Op::MaskedCopy { dst, src, mask } => {
                    let d = &mut *col(dst);
                    let s = &*col(src);
                    let m = &*col(mask);
                    for i in 0..LANES {
                        // Branch-free blend; masks are 0 or 1.
                        let all = 0u32.wrapping_sub(m[i]);
                        d[i] = (s[i] & all) | (d[i] & !all);
                    }
                }
                Op::Gather {
                    ref dst,
                    ref src,
                    offset,
                } => {
                    let off = *col(offset);
                    for (j, &d) in dst.iter().enumerate() {
                        let d = col(d);
                        for lane in 0..LANES {
                            // `src[..]` is bounds-checked: the offset came
                            // from a `CheckIndex`, but a panic beats trust.
                            let s = src[off[lane] as usize + j];
                            (*d)[lane] = (*col(s))[lane];
                        }
                    }
                }
                Op::Scatter {
                    ref dst,
                    ref src,
                    offset,
                    mask,
                } => {
                    let off = *col(offset);
                    let m = *col(mask);
                    for (j, &s) in src.iter().enumerate() {
                        for lane in 0..LANES {
                            if m[lane] != 0 {
                                // The value may be leaves of the same
                                // region: read the lane, then write it,
                                // through raw places only.
                                let v = (*col(s))[lane];
                                let d = dst[off[lane] as usize + j];
                                (*col(d))[lane] = v;
                            }
                        }
                    }
                }
                Op::CheckIndex {
                    dst,
                    idx,
                    len,
                    mask,
                    at,
                } => {
                    let ix = *col(idx);
                    let m = *col(mask);
                    let d = &mut *col(dst);
                    for lane in 0..LANES {
                        if ix[lane] < len {
                            d[lane] = ix[lane];
                        } else {
                            d[lane] = 0;
                            if m[lane] != 0 {
                                self.issues.push(RawIssue {
                                    lane,
                                    at,
                                    kind: RawKind::OutOfBounds,
                                    detail: format!(
                                        "index {} is out of bounds for length {len}",
                                        ix[lane] as i32
                                    ),
                                });
                            }
                        }
                    }
                }
                Op::If {
                    cond,
                    parent,
                    then_mask,
                    else_mask,
                    ref accept,
                    ref reject,
                } => {
                    let c = *col(cond);
                    let pm = *col(parent);
                    let t = &mut *col(then_mask);
                    for i in 0..LANES {
                        t[i] = pm[i] & c[i];
                    }
                    let e = &mut *col(else_mask);
                    for i in 0..LANES {
                        e[i] = pm[i] & (c[i] ^ 1);
                    }
                    if self.any(then_mask) {
                        self.exec(sites, accept);
                    }
                    if self.any(else_mask) {
                        self.exec(sites, reject);
                    }
                }
                Op::Loop {
                    parent,
                    lmask,
                    imask,
                    ref body,
                    ref continuing,
                    break_if,
                    ref kill,
                    at,
                } => {
                    *col(lmask) = *col(parent);
                    self.stepped = true;
                    while self.any(lmask) {
                        // Each live lane pays one step per iteration, from
                        // one budget for all loops and calls of its point.
                        let live = *col(lmask);
                        let mut over = 0u32;
                        for (s, &l) in self.steps.iter_mut().zip(&live) {
                            *s += u64::from(l);
                            over |= u32::from(*s > self.step_budget);
                        }
                        if over != 0 {
                            let mut out = [0u32; LANES];
                            for (lane, o) in out.iter_mut().enumerate() {
                                if live[lane] != 0 && self.steps[lane] > self.step_budget {
                                    *o = 1;
                                    self.issues.push(RawIssue {
                                        lane,
                                        at,
                                        kind: RawKind::StepBudget,
                                        detail: format!(
                                            "the point ran more than {} loop iterations in \
                                             all (step budget `{}`); {}",
                                            self.step_budget,
                                            crate::limits::Limit::StepsPerPoint,
                                            crate::limits::Limit::StepsPerPoint.how_to_raise()
                                        ),
                                    });
                                }
                            }
                            // An abandoned lane leaves every construct it is
                            // in, so nothing goes on computing with it.
                            for &m in kill.iter() {
                                let mm = &mut *col(m);
                                for i in 0..LANES {
                                    mm[i] &= out[i] ^ 1;
                                }
                            }
                            if !self.any(lmask) {
                                break;
                            }
                        }
                        *col(imask) = *col(lmask);
                        self.exec(sites, body);
                        if self.any(lmask) {
                            self.exec(sites, continuing);
                            if let Some(b) = break_if {
                                let c = *col(b);
                                let l = &mut *col(lmask);
                                for i in 0..LANES {
                                    l[i] &= c[i] ^ 1;
                                }
                            }
                        }
                    }
                }
                Op::Switch {
                    sel,
                    parent,
                    smask,
                    ref cases,
                } => {
                    *col(smask) = *col(parent);
                    let s = *col(sel);
                    let mut carried = [0u32; LANES];
                    for case in cases {
                        let sm = *col(smask);
                        let cm = &mut *col(case.mask);
                        for i in 0..LANES {
                            let hit = if case.default {
                                !cases.iter().any(|c| !c.default && c.values.contains(&s[i]))
                            } else {
                                case.values.contains(&s[i])
                            };
                            cm[i] = (sm[i] & u32::from(hit)) | (carried[i] & sm[i]);
                        }
                        if case.fall_through {
                            carried = *cm;
                        } else {
                            carried = [0; LANES];
                        }
                        if self.any(case.mask) {
                            self.exec(sites, &case.body);
                        }
                    }
                }
                Op::Perturb(ref pt) => {
                    let a = *col(pt.arg);
                    pt.apply(&mut *col(pt.dst), &a, self.seed);
                }
                Op::Texture(ref t) => {
                    // Operands are copied out whole before any destination
                    // column is written (rule 2 keeps them apart anyway).
                    let out = t.run(|s| *col(s), &mut self.issues);
                    for (&d, o) in t.dst.iter().zip(&out) {
                        *col(d) = *o;
                    }
                }
                Op::Exit { current, ref masks } => {
                    let cur = *col(current);
                    for &m in masks.iter() {
                        let mm = &mut *col(m);
                        for i in 0..LANES {
                            mm[i] &= cur[i] ^ 1;
                        }
                    }
                }
            }
        }
    }

    /// Record lanes where `dst` became NaN/∞ although every operand was finite.
    fn trace_nan(&mut self, sites: &[Site], dst: Slot, args: &[Slot], at: At) {
        let site = &sites[at as usize];
        if site.what.is_empty() {
            return;
        }
        let mask = *self.lanes(site.mask);
        let d = *self.lanes(dst);
        let mut first = [false; LANES];
        for lane in 0..LANES {
            first[lane] = mask[lane] != 0
                && !f32::from_bits(d[lane]).is_finite()
                && args
                    .iter()
                    .all(|&a| f32::from_bits(self.lanes(a)[lane]).is_finite());
        }
        let trace = self.trace.as_mut().expect("tracing");
        for lane in 0..LANES {
            if first[lane] && trace[lane].is_none() {
                trace[lane] = Some(at);
            }
        }
    }
}
