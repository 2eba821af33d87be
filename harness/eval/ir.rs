//! The evaluator's intermediate representation: what lowering produces, the
//! verifier checks and the executor runs.
//!
//! A [`Code`] is a tree of [`Op`]s over numbered *slots*. Each slot is one
//! column of [`LANES`](super::lanes::LANES) 32-bit lane values (one per point
//! of a batch). Straight-line operations ([`Op::Kernel`] and the data moves)
//! compute every lane; control flow ([`Op::If`], [`Op::Loop`],
//! [`Op::Switch`], [`Op::Exit`]) keeps one boolean *mask* slot per construct,
//! and only masked operations (stores, returns, checks) look at it.
//!
//! The executor trusts exactly what [`verify`](super::verify::verify) proves of
//! a `Code`: slot numbers in range, no kernel destination among its operands,
//! the masks of a construct distinct, input slots never written, and every
//! slot read only after it was written on every path. A `Code` is built only
//! by lowering and run only after it has been verified (see
//! [`Program`](super::Program)).

use super::lanes::Opcode;
use crate::values::Ty;

/// A slot number: an index into the slot arena of one machine.
pub(crate) type Slot = u32;

/// Index into [`Code::sites`]: where in the source an operation came from.
pub(crate) type At = u32;

/// A source position attached to operations that can report per-lane issues.
#[derive(Clone, Debug)]
pub(crate) struct Site {
    pub line: u32,
    pub column: u32,
    /// What happens there, e.g. "sqrt", "division", "index"; empty when the
    /// operation is not traced for NaN.
    pub what: String,
    /// The mask slot active where the operation runs (for NaN tracing).
    pub mask: Slot,
}

/// Per-lane function that reads and writes several slots (packing built-ins,
/// frexp, modf): `f(args, outs)` for one lane.
pub(crate) type LaneFn = fn(&[u32], &mut [u32]);

#[derive(Clone)]
pub(crate) enum Op {
    /// `dst = bits` in every lane.
    Fill { dst: Slot, bits: u32 },
    /// `dst = src` in every lane.
    Copy { dst: Slot, src: Slot },
    /// An inlined callee's root mask: `mask = parent` in every lane.
    Enter { mask: Slot, parent: Slot },
    /// `dst = op(args[..op.arity()])` in every lane; with `half`, the f16
    /// version (the result rounded to binary16), which only opcodes with
    /// [`Opcode::has_half`] have. The loop run is `op.kernel(half)`, never
    /// chosen separately. `at` is the site traced when the result becomes NaN
    /// or infinite.
    Kernel {
        op: Opcode,
        half: bool,
        dst: Slot,
        args: [Slot; 4],
        at: At,
    },
    /// Several results per lane (`dst`) from several operands (`args`), at
    /// most [`PER_LANE_MAX`] of each.
    PerLane {
        f: LaneFn,
        dst: Box<[Slot]>,
        args: Box<[Slot]>,
    },
    /// `dst = mask ? src : dst` per lane.
    MaskedCopy { dst: Slot, src: Slot, mask: Slot },
    /// `dst[j] = src[offset + j]` per lane; `offset` counts leaves and comes
    /// from a [`Op::CheckIndex`], so it is in range.
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
    /// `dst = idx` where `idx < len` (as u32), else 0 with an issue for lanes
    /// in `mask`.
    CheckIndex {
        dst: Slot,
        idx: Slot,
        len: u32,
        mask: Slot,
        at: At,
    },
    /// Both sides run, each under its mask (`parent & cond`, `parent & !cond`);
    /// a side whose mask is empty is skipped.
    If {
        cond: Slot,
        parent: Slot,
        then_mask: Slot,
        else_mask: Slot,
        accept: Vec<Op>,
        reject: Vec<Op>,
    },
    /// `lmask` holds the lanes still looping, `imask` those still in this
    /// iteration. Every iteration costs each live lane one step of its
    /// per-point budget.
    Loop {
        parent: Slot,
        lmask: Slot,
        imask: Slot,
        body: Vec<Op>,
        continuing: Vec<Op>,
        break_if: Option<Slot>,
        /// Every mask a lane must leave when it runs out of steps.
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
    Exit { current: Slot, masks: Box<[Slot]> },
    /// Spec-bound number model only: move `dst` (a result just computed from
    /// `arg`) within its accuracy bound.
    Perturb(super::perturb::Perturb),
    /// A texture built-in on a bound table, per lane (see [`super::texture::TextureOp`]).
    Texture(Box<super::texture::TextureOp>),
}

/// Most operands or results of one [`Op::PerLane`].
pub(crate) const PER_LANE_MAX: usize = 8;

#[derive(Clone)]
pub(crate) struct Case {
    pub values: Vec<u32>,
    pub default: bool,
    pub fall_through: bool,
    pub mask: Slot,
    pub body: Vec<Op>,
}

/// One lowered function: the program a machine runs.
#[derive(Clone)]
pub(crate) struct Code {
    pub ops: Vec<Op>,
    pub slot_count: usize,
    pub sites: Vec<Site>,
    pub params: Vec<(String, Ty)>,
    /// One slot per input leaf, in [`Code::params`] order.
    pub input_slots: Vec<Slot>,
    pub result: Option<Ty>,
    /// The `ptr<function, T>` parameters (also in `params`: their initial
    /// values are inputs), whose final values are outputs after the result's.
    pub out_params: Vec<(String, Ty)>,
    /// One slot per output leaf (may be an input or constant slot when the
    /// function returns one unchanged).
    pub output_slots: Vec<Slot>,
    /// All lanes of the batch that hold a point (1) or padding (0).
    pub root_mask: Slot,
    /// Constant slots and their bit patterns, written once per machine.
    pub consts: Vec<(Slot, u32)>,
}

impl Code {
    /// The kind of every output leaf: the result's, then each pointer
    /// parameter's final value.
    pub fn output_kinds(&self) -> Vec<crate::values::ScalarKind> {
        let mut kinds = self.result.as_ref().map(|t| t.leaves()).unwrap_or_default();
        for (_, t) in &self.out_params {
            kinds.extend(t.leaves());
        }
        kinds
    }
}

/// How an operation uses one of its slots (see [`Op::own_slots`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Use {
    /// Read.
    Read,
    /// Written in every lane.
    Write,
    /// Written in some lanes only, the others keeping their value: a read
    /// and a write (masked copies, scatters, perturbations).
    Update,
    /// A mask of a construct, read or written by the construct, an exit or
    /// a step-budget kill.
    Mask,
    /// A loop's `break if` condition, read after its continuing block.
    BreakIf,
}

impl Op {
    /// Call `f` on every slot this operation names itself (not those of the
    /// ops nested in it), with how it is used. The one list of an op's
    /// slots for the passes that analyse or renumber them
    /// ([`super::alloc`], [`super::fuse`]).
    pub fn own_slots(&mut self, f: &mut dyn FnMut(&mut Slot, Use)) {
        match self {
            Op::Fill { dst, .. } => f(dst, Use::Write),
            Op::Copy { dst, src } => {
                f(src, Use::Read);
                f(dst, Use::Write);
            }
            Op::Enter { mask, parent } => {
                f(parent, Use::Mask);
                f(mask, Use::Mask);
            }
            Op::Kernel { op, dst, args, .. } => {
                for a in &mut args[..op.arity()] {
                    f(a, Use::Read);
                }
                f(dst, Use::Write);
            }
            Op::PerLane { dst, args, .. } => {
                for a in args.iter_mut() {
                    f(a, Use::Read);
                }
                for d in dst.iter_mut() {
                    f(d, Use::Write);
                }
            }
            Op::MaskedCopy { dst, src, mask } => {
                f(src, Use::Read);
                f(mask, Use::Mask);
                f(dst, Use::Update);
            }
            Op::Gather { dst, src, offset } => {
                f(offset, Use::Read);
                for s in src.iter_mut() {
                    f(s, Use::Read);
                }
                for d in dst.iter_mut() {
                    f(d, Use::Write);
                }
            }
            Op::Scatter {
                dst,
                src,
                offset,
                mask,
            } => {
                f(offset, Use::Read);
                f(mask, Use::Mask);
                for s in src.iter_mut() {
                    f(s, Use::Read);
                }
                for d in dst.iter_mut() {
                    f(d, Use::Update);
                }
            }
            Op::CheckIndex { dst, idx, mask, .. } => {
                f(idx, Use::Read);
                f(mask, Use::Mask);
                f(dst, Use::Write);
            }
            Op::If {
                cond,
                parent,
                then_mask,
                else_mask,
                ..
            } => {
                f(cond, Use::Read);
                f(parent, Use::Mask);
                f(then_mask, Use::Mask);
                f(else_mask, Use::Mask);
            }
            Op::Loop {
                parent,
                lmask,
                imask,
                break_if,
                kill,
                ..
            } => {
                f(parent, Use::Mask);
                f(lmask, Use::Mask);
                f(imask, Use::Mask);
                for m in kill.iter_mut() {
                    f(m, Use::Mask);
                }
                if let Some(b) = break_if {
                    f(b, Use::BreakIf);
                }
            }
            Op::Switch {
                sel,
                parent,
                smask,
                cases,
            } => {
                f(sel, Use::Read);
                f(parent, Use::Mask);
                f(smask, Use::Mask);
                for c in cases.iter_mut() {
                    f(&mut c.mask, Use::Mask);
                }
            }
            Op::Exit { current, masks } => {
                f(current, Use::Mask);
                for m in masks.iter_mut() {
                    f(m, Use::Mask);
                }
            }
            Op::Perturb(p) => {
                f(&mut p.arg, Use::Read);
                f(&mut p.dst, Use::Update);
            }
            Op::Texture(t) => {
                for c in &mut t.coords {
                    f(c, Use::Read);
                }
                if let Some(l) = &mut t.level {
                    f(l, Use::Read);
                }
                f(&mut t.mask, Use::Mask);
                for d in &mut t.dst {
                    f(d, Use::Write);
                }
            }
        }
    }

    /// The blocks nested in this op, in the order the executor runs them
    /// (a loop's body, then its continuing block).
    pub fn blocks_mut(&mut self) -> Vec<&mut Vec<Op>> {
        match self {
            Op::If { accept, reject, .. } => vec![accept, reject],
            Op::Loop {
                body, continuing, ..
            } => vec![body, continuing],
            Op::Switch { cases, .. } => cases.iter_mut().map(|c| &mut c.body).collect(),
            _ => Vec::new(),
        }
    }
}
