//! The compiled program and its executor.
//!
//! A program is a tree of [`Op`]s over numbered slots; each slot is one column
//! of [`LANES`] 32-bit patterns. Straight-line operations run for every lane
//! (they are pure, and WGSL gives every integer and float operation a value, so
//! nothing traps); control flow keeps a boolean *mask* slot per construct and
//! only masked operations (stores, returns, checks) look at it. A construct
//! whose mask is empty is skipped.

use super::lanes::{Lanes, K1, K2, K3, K4, LANES};

pub type Slot = u32;

/// Index into the compiled program's site table: where in the source an
/// operation came from.
pub type At = u32;

/// A source position attached to operations that can report per-lane issues.
#[derive(Clone, Debug)]
pub struct Site {
    pub line: u32,
    pub column: u32,
    /// What happens there, e.g. "sqrt", "division", "index".
    pub what: String,
    /// The mask slot active where the operation runs (for NaN tracing).
    pub mask: Slot,
}

/// Per-lane kernel that reads and writes several slots (packing built-ins,
/// frexp, modf): `f(args, outs)` for one lane.
pub type LaneFn = fn(&[u32], &mut [u32]);

#[derive(Clone)]
pub enum Op {
    Fill {
        dst: Slot,
        bits: u32,
    },
    Copy {
        dst: Slot,
        src: Slot,
    },
    U {
        k: K1,
        dst: Slot,
        a: Slot,
        at: At,
    },
    B {
        k: K2,
        dst: Slot,
        a: Slot,
        b: Slot,
        at: At,
    },
    T {
        k: K3,
        dst: Slot,
        a: Slot,
        b: Slot,
        c: Slot,
        at: At,
    },
    Q {
        k: K4,
        dst: Slot,
        a: Slot,
        b: Slot,
        c: Slot,
        d: Slot,
    },
    PerLane {
        f: LaneFn,
        dst: Box<[Slot]>,
        args: Box<[Slot]>,
    },
    /// `dst = mask ? src : dst` per lane.
    MaskedCopy {
        dst: Slot,
        src: Slot,
        mask: Slot,
    },
    /// `dst[j] = src[offset + j]` per lane; `offset` counts leaves and is in range.
    Gather {
        dst: Box<[Slot]>,
        src: Box<[Slot]>,
        offset: Slot,
    },
    /// `dst[offset + j] = src[j]` for lanes in `mask`.
    Scatter {
        dst: Box<[Slot]>,
        src: Box<[Slot]>,
        offset: Slot,
        mask: Slot,
    },
    /// `dst = idx` where `idx < len` (as u32), else 0 with an issue for lanes in `mask`.
    CheckIndex {
        dst: Slot,
        idx: Slot,
        len: u32,
        mask: Slot,
        at: At,
    },
    If {
        cond: Slot,
        parent: Slot,
        then_mask: Slot,
        else_mask: Slot,
        accept: Vec<Op>,
        reject: Vec<Op>,
    },
    Loop {
        parent: Slot,
        lmask: Slot,
        imask: Slot,
        body: Vec<Op>,
        continuing: Vec<Op>,
        break_if: Option<Slot>,
        /// Every mask a lane must leave when it runs out of iterations.
        kill: Box<[Slot]>,
        at: At,
    },
    Switch {
        sel: Slot,
        parent: Slot,
        smask: Slot,
        cases: Vec<Case>,
    },
    /// Lanes in `current` leave every mask in `masks` (break, continue, return).
    Exit {
        current: Slot,
        masks: Box<[Slot]>,
    },
    /// Spec-bound number model only: move a result within its accuracy bound.
    Perturb(super::perturb::Perturb),
}

#[derive(Clone)]
pub struct Case {
    pub values: Vec<u32>,
    pub default: bool,
    pub fall_through: bool,
    pub mask: Slot,
    pub body: Vec<Op>,
}

/// One per-lane problem found while running.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct RawIssue {
    pub lane: usize,
    pub at: At,
    pub detail: String,
}

/// Scratch state of one thread: the slot memory and the issue log.
pub struct Machine {
    slots: Vec<Lanes>,
    /// Where each slot's lanes live: normally `slots[i]`, or a bound column.
    ptrs: Vec<*mut Lanes>,
    pub issues: Vec<RawIssue>,
    pub step_budget: u32,
    /// Seed of the spec-bound number model (unused by exact programs).
    pub seed: u64,
    /// When set, the first operation per lane that turned non-NaN operands
    /// into a NaN or infinity is recorded (slower; used to explain failures).
    pub trace: Option<Vec<Option<At>>>,
    pub sites: *const [Site],
}

impl Machine {
    pub fn new(slot_count: usize, step_budget: u32, consts: &[(Slot, u32)]) -> Machine {
        let mut slots = vec![[0; LANES]; slot_count];
        for &(s, bits) in consts {
            slots[s as usize] = [bits; LANES];
        }
        let ptrs = slots.iter_mut().map(|s| s as *mut Lanes).collect();
        Machine {
            slots,
            ptrs,
            issues: Vec::new(),
            step_budget,
            seed: 0,
            trace: None,
            sites: &[] as *const [Site],
        }
    }

    #[inline(always)]
    fn ptr(&mut self) -> *const *mut Lanes {
        self.ptrs.as_ptr()
    }

    /// The lanes of slot `s` (which may live in a caller's column).
    #[inline(always)]
    pub fn lanes(&self, s: Slot) -> &Lanes {
        // SAFETY: every pointer in `ptrs` is valid for the machine's current
        // batch: either into `slots` or into a column bound by `bind`.
        unsafe { &*self.ptrs[s as usize] }
    }

    #[inline(always)]
    pub fn lanes_mut(&mut self, s: Slot) -> &mut Lanes {
        // SAFETY: as in `lanes`; `&mut self` makes the borrow unique.
        unsafe { &mut *self.ptrs[s as usize] }
    }

    /// Let slot `s` read and write `col` directly for this batch (saves the
    /// copy of full batches of inputs and outputs).
    ///
    /// # Safety
    /// `col` must stay valid and otherwise unused until [`Machine::unbind`].
    pub unsafe fn bind(&mut self, s: Slot, col: *mut Lanes) {
        self.ptrs[s as usize] = col;
    }

    /// Point slot `s` back at the machine's own memory.
    pub fn unbind(&mut self, s: Slot) {
        self.ptrs[s as usize] = &mut self.slots[s as usize] as *mut Lanes;
    }

    #[inline(always)]
    fn any(&self, m: Slot) -> bool {
        self.lanes(m).iter().fold(0, |a, &x| a | x) != 0
    }

    pub fn run(&mut self, ops: &[Op]) {
        for op in ops {
            self.step(op);
        }
    }

    fn step(&mut self, op: &Op) {
        let p = self.ptr();
        // SAFETY: the compiler allocates a fresh destination slot for every
        // kernel, so a destination never aliases an operand; all slot numbers
        // are below `slots.len()` (checked when the program is built).
        unsafe {
            match *op {
                Op::Fill { dst, bits } => (**p.add(dst as usize)).fill(bits),
                Op::Copy { dst, src } => **p.add(dst as usize) = **p.add(src as usize),
                Op::U { k, dst, a, at } => {
                    k(&mut **p.add(dst as usize), &**p.add(a as usize));
                    if self.trace.is_some() {
                        self.trace_nan(dst, &[a], at);
                    }
                }
                Op::B { k, dst, a, b, at } => {
                    k(
                        &mut **p.add(dst as usize),
                        &**p.add(a as usize),
                        &**p.add(b as usize),
                    );
                    if self.trace.is_some() {
                        self.trace_nan(dst, &[a, b], at);
                    }
                }
                Op::T {
                    k,
                    dst,
                    a,
                    b,
                    c,
                    at,
                } => {
                    k(
                        &mut **p.add(dst as usize),
                        &**p.add(a as usize),
                        &**p.add(b as usize),
                        &**p.add(c as usize),
                    );
                    if self.trace.is_some() {
                        self.trace_nan(dst, &[a, b, c], at);
                    }
                }
                Op::Q { k, dst, a, b, c, d } => k(
                    &mut **p.add(dst as usize),
                    &**p.add(a as usize),
                    &**p.add(b as usize),
                    &**p.add(c as usize),
                    &**p.add(d as usize),
                ),
                Op::PerLane {
                    f,
                    ref dst,
                    ref args,
                } => {
                    let mut a = [0u32; 8];
                    let mut o = [0u32; 8];
                    for lane in 0..LANES {
                        for (i, &s) in args.iter().enumerate() {
                            a[i] = (**p.add(s as usize))[lane];
                        }
                        f(&a[..args.len()], &mut o[..dst.len()]);
                        for (i, &s) in dst.iter().enumerate() {
                            (**p.add(s as usize))[lane] = o[i];
                        }
                    }
                }
                Op::MaskedCopy { dst, src, mask } => {
                    let d = &mut **p.add(dst as usize);
                    let s = &**p.add(src as usize);
                    let m = &**p.add(mask as usize);
                    for i in 0..LANES {
                        // Branch-free blend; masks are 0 or 1.
                        let all = 0u32.wrapping_sub(m[i]);
                        d[i] = (s[i] & all) | (d[i] & !all);
                    }
                }
                #[allow(clippy::manual_memcpy)] // the source slot varies per lane
                Op::Gather {
                    ref dst,
                    ref src,
                    offset,
                } => {
                    let off = **p.add(offset as usize);
                    for (j, &d) in dst.iter().enumerate() {
                        let d = &mut **p.add(d as usize);
                        for lane in 0..LANES {
                            let s = src[off[lane] as usize + j];
                            d[lane] = (**p.add(s as usize))[lane];
                        }
                    }
                }
                Op::Scatter {
                    ref dst,
                    ref src,
                    offset,
                    mask,
                } => {
                    let off = **p.add(offset as usize);
                    let m = **p.add(mask as usize);
                    for (j, &s) in src.iter().enumerate() {
                        let s = &**p.add(s as usize);
                        for lane in 0..LANES {
                            if m[lane] != 0 {
                                let d = dst[off[lane] as usize + j];
                                (**p.add(d as usize))[lane] = s[lane];
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
                    let ix = **p.add(idx as usize);
                    let m = **p.add(mask as usize);
                    let d = &mut **p.add(dst as usize);
                    for lane in 0..LANES {
                        if ix[lane] < len {
                            d[lane] = ix[lane];
                        } else {
                            d[lane] = 0;
                            if m[lane] != 0 {
                                self.issues.push(RawIssue {
                                    lane,
                                    at,
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
                    {
                        let c = **p.add(cond as usize);
                        let pm = **p.add(parent as usize);
                        let t = &mut **p.add(then_mask as usize);
                        for i in 0..LANES {
                            t[i] = pm[i] & c[i];
                        }
                        let e = &mut **p.add(else_mask as usize);
                        for i in 0..LANES {
                            e[i] = pm[i] & (c[i] ^ 1);
                        }
                    }
                    if self.any(then_mask) {
                        self.run(accept);
                    }
                    if self.any(else_mask) {
                        self.run(reject);
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
                    **p.add(lmask as usize) = **p.add(parent as usize);
                    let mut iterations: u32 = 0;
                    while self.any(lmask) {
                        if iterations >= self.step_budget {
                            let live = **p.add(lmask as usize);
                            for (lane, &l) in live.iter().enumerate() {
                                if l != 0 {
                                    self.issues.push(RawIssue {
                                        lane,
                                        at,
                                        detail: format!(
                                            "loop ran more than {} iterations (step budget)",
                                            self.step_budget
                                        ),
                                    });
                                }
                            }
                            for &m in kill.iter() {
                                let mm = &mut **p.add(m as usize);
                                for i in 0..LANES {
                                    mm[i] &= live[i] ^ 1;
                                }
                            }
                            break;
                        }
                        iterations += 1;
                        **p.add(imask as usize) = **p.add(lmask as usize);
                        self.run(body);
                        if self.any(lmask) {
                            self.run(continuing);
                            if let Some(b) = break_if {
                                let c = **p.add(b as usize);
                                let l = &mut **p.add(lmask as usize);
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
                    **p.add(smask as usize) = **p.add(parent as usize);
                    let s = **p.add(sel as usize);
                    let mut carried = [0u32; LANES];
                    for case in cases {
                        let sm = **p.add(smask as usize);
                        let cm = &mut **p.add(case.mask as usize);
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
                            self.run(&case.body);
                        }
                    }
                }
                Op::Perturb(ref pt) => {
                    let a = **p.add(pt.arg as usize);
                    pt.apply(&mut **p.add(pt.dst as usize), &a, self.seed);
                }
                Op::Exit { current, ref masks } => {
                    let cur = **p.add(current as usize);
                    for &m in masks.iter() {
                        let mm = &mut **p.add(m as usize);
                        for i in 0..LANES {
                            mm[i] &= cur[i] ^ 1;
                        }
                    }
                }
            }
        }
    }

    /// Record lanes where `dst` became NaN/∞ although every operand was finite.
    fn trace_nan(&mut self, dst: Slot, args: &[Slot], at: At) {
        // SAFETY: `sites` points into the program that owns this run.
        let site = unsafe { &(*self.sites)[at as usize] };
        if site.what.is_empty() {
            return;
        }
        let mask = *self.lanes(site.mask);
        let d = *self.lanes(dst);
        let trace = self.trace.as_mut().expect("tracing");
        for lane in 0..LANES {
            if mask[lane] == 0 || trace[lane].is_some() || f32::from_bits(d[lane]).is_finite() {
                continue;
            }
            let finite_in = args.iter().all(|&a| {
                // SAFETY: as in `lanes` (a field-disjoint borrow of `ptrs`).
                let col = unsafe { &*self.ptrs[a as usize] };
                f32::from_bits(col[lane]).is_finite()
            });
            if finite_in {
                trace[lane] = Some(at);
            }
        }
    }
}
