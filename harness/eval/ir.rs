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
