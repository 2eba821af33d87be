//! Slot allocation by liveness: temporaries whose lives do not overlap share
//! one slot, so the columns a program works in stay few and in the first
//! level of cache.
//!
//! Lowering gives every value a slot of its own; [`allocate`] renumbers the
//! slots of a [`Code`] the executor runs. Ops are numbered in the order the
//! executor meets them (an op, then the blocks nested in it; a loop's
//! `break if` condition after its continuing block; the outputs, read after
//! the last op). A slot's *life* runs from its first to its last use in that
//! order, and two slots whose lives are disjoint get the same new number.
//!
//! Why that is sound, given what the verifier proves of the code it runs on
//! (the input of this pass is verified, and so is its output):
//!
//! - A slot first used inside a construct (a side of an `If`, a loop, a
//!   switch case) is defined only inside it (verifier rule 5), so it is not
//!   read after the construct; every read follows, in this order, a write in
//!   every lane that runs whenever the read does (branches skip whole blocks,
//!   never single ops).
//! - A masked write ([`Use::Update`]: masked copies, scatters,
//!   perturbations) keeps the old value in other lanes, so it is a read too:
//!   it extends the life of the value before it.
//! - A slot used inside a loop whose life starts before the loop is live on
//!   the loop's back edge: its life is stretched to the loop's end, so no
//!   value of a later iteration can overwrite it.
//! - A slot first written inside a loop and read later in the same loop is
//!   written before it is read in every iteration (rule 5 for the first
//!   iteration; the same straight-line order for every later one), so a
//!   value from the previous iteration is never needed.
//! - Inputs, constants, outputs, the root mask and every mask keep a slot
//!   of their own for the whole program: inputs and outputs may be bound to
//!   the caller's columns, constants are written once per machine, and masks
//!   are read by sites (NaN tracing) and by constructs at times this
//!   ordering does not see.
//! - Operands and the destination of one op are both live at that op, so
//!   they never share a slot (verifier rule 2 still holds).

use std::cmp::Reverse;
use std::collections::BinaryHeap;

use super::ir::{Code, Op, Slot, Use};

/// Never assigned: marks a slot number not yet renumbered.
const NONE: Slot = Slot::MAX;

/// The life of one slot in op order, both ends included.
#[derive(Clone, Copy)]
struct Life {
    first: usize,
    last: usize,
}

/// Renumber the slots of `code` so that slots with disjoint lives share a
/// number. Returns the code with its new `slot_count`.
pub(crate) fn allocate(mut code: Code) -> Code {
    let n = code.slot_count;
    let mut pinned = vec![false; n];
    for &s in code
        .input_slots
        .iter()
        .chain(&code.output_slots)
        .chain(code.consts.iter().map(|c| &c.0))
        .chain([&code.root_mask])
        .chain(code.sites.iter().map(|s| &s.mask))
    {
        pinned[s as usize] = true;
    }
    let mut walk = Walk {
        lives: vec![None; n],
        pinned,
        loops: Vec::new(),
        pos: 0,
    };
    walk.block(&mut code.ops);
    let end = walk.pos;
    for &s in &code.output_slots {
        walk.touch(s, end);
    }
    let Walk {
        mut lives,
        pinned,
        loops,
        ..
    } = walk;
    stretch_over_loops(&mut lives, &loops);

    // Pinned slots first, in their old order, each a number of its own.
    let mut map = vec![NONE; n];
    let mut next: Slot = 0;
    for (s, &p) in pinned.iter().enumerate() {
        if p {
            map[s] = next;
            next += 1;
        }
    }
    // Then the others, by linear scan over lives sorted by start.
    let mut order: Vec<(Life, usize)> = lives
        .iter()
        .enumerate()
        .filter(|&(s, l)| !pinned[s] && l.is_some())
        .map(|(s, l)| (l.expect("filtered"), s))
        .collect();
    order.sort_by_key(|&(l, s)| (l.first, s));
    // Slots in use, by the end of their life; numbers free again.
    let mut active: BinaryHeap<Reverse<(usize, Slot)>> = BinaryHeap::new();
    let mut free: BinaryHeap<Reverse<Slot>> = BinaryHeap::new();
    for (life, s) in order {
        while let Some(&Reverse((last, slot))) = active.peek() {
            if last >= life.first {
                break;
            }
            active.pop();
            free.push(Reverse(slot));
        }
        let slot = match free.pop() {
            Some(Reverse(f)) => f,
            None => {
                next += 1;
                next - 1
            }
        };
        map[s] = slot;
        active.push(Reverse((life.last, slot)));
    }

    let rename = |s: &mut Slot| {
        let m = map[*s as usize];
        assert_ne!(m, NONE, "slot {s} is used but was given no new number");
        *s = m;
    };
    rename_block(&mut code.ops, &rename);
    for s in code
        .input_slots
        .iter_mut()
        .chain(code.output_slots.iter_mut())
        .chain(code.consts.iter_mut().map(|c| &mut c.0))
        .chain([&mut code.root_mask])
        .chain(code.sites.iter_mut().map(|s| &mut s.mask))
    {
        rename(s);
    }
    code.slot_count = next as usize;
    code
}

fn rename_block(ops: &mut [Op], rename: &dyn Fn(&mut Slot)) {
    for op in ops {
        op.own_slots(&mut |s, _| rename(s));
        for b in op.blocks_mut() {
            rename_block(b, rename);
        }
    }
}

/// A loop's ops in op order: from the loop op to its `break if`.
struct LoopSpan {
    start: usize,
    end: usize,
}

/// A life that starts before a loop and reaches into it is live on the
/// back edge: it lasts to the loop's end. Repeated until nothing changes,
/// since stretching over an inner loop may reach into an outer one's end.
fn stretch_over_loops(lives: &mut [Option<Life>], loops: &[LoopSpan]) {
    let mut changed = true;
    while changed {
        changed = false;
        for l in lives.iter_mut().flatten() {
            for lp in loops {
                if l.first < lp.start && l.last >= lp.start && l.last < lp.end {
                    l.last = lp.end;
                    changed = true;
                }
            }
        }
    }
}

struct Walk {
    lives: Vec<Option<Life>>,
    pinned: Vec<bool>,
    loops: Vec<LoopSpan>,
    pos: usize,
}

impl Walk {
    fn touch(&mut self, s: Slot, at: usize) {
        let l = self.lives[s as usize].get_or_insert(Life {
            first: at,
            last: at,
        });
        l.first = l.first.min(at);
        l.last = l.last.max(at);
    }

    fn block(&mut self, ops: &mut [Op]) {
        for op in ops {
            let at = self.pos;
            self.pos += 1;
            let mut break_if = None;
            // (slot, whether it is a mask), collected first: the closure
            // cannot borrow `self`.
            let mut used = Vec::new();
            op.own_slots(&mut |s, u| match u {
                Use::BreakIf => break_if = Some(*s),
                Use::Mask => used.push((*s, true)),
                Use::Read | Use::Write | Use::Update => used.push((*s, false)),
            });
            for (s, mask) in used {
                if mask {
                    self.pinned[s as usize] = true;
                } else {
                    self.touch(s, at);
                }
            }
            let is_loop = matches!(op, Op::Loop { .. });
            for b in op.blocks_mut() {
                self.block(b);
            }
            if let Some(b) = break_if {
                let end = self.pos;
                self.pos += 1;
                self.touch(b, end);
            }
            if is_loop {
                self.loops.push(LoopSpan {
                    start: at,
                    end: self.pos - 1,
                });
            }
        }
    }
}

#[cfg(test)]
pub(crate) mod tests {
    //! Hand-made programs: temporaries share slots, and the reuses that
    //! would be wrong (a value a masked write blends, a value carried
    //! around a loop) are not made; each program computes the same before
    //! and after.
    use super::*;
    use crate::eval::exec::{Machine, Verified};
    use crate::eval::ir::{Code, Site};
    use crate::eval::lanes::{Lanes, Opcode, LANES};

    /// Slots: 0 root mask, 1 and 2 inputs, then `extra` more.
    pub(crate) fn code(
        ops: Vec<Op>,
        extra: usize,
        outputs: Vec<Slot>,
        consts: Vec<(Slot, u32)>,
    ) -> Code {
        Code {
            ops,
            slot_count: 3 + extra,
            sites: vec![Site {
                line: 1,
                column: 1,
                what: String::new(),
                mask: 0,
            }],
            params: Vec::new(),
            out_params: Vec::new(),
            input_slots: vec![1, 2],
            result: None,
            output_slots: outputs,
            root_mask: 0,
            consts,
        }
    }

    pub(crate) fn k(op: Opcode, dst: Slot, a: Slot, b: Slot) -> Op {
        Op::Kernel {
            op,
            half: false,
            dst,
            args: [a, b, 0, 0],
            at: 0,
        }
    }

    /// Inputs per lane: `a` = lane / 4, `b` = (LANES - 1 - lane) / 8 (f32),
    /// so `a < b` in the first lane and not in the last at any `LANES`.
    pub(crate) fn inputs() -> [Lanes; 2] {
        let mut a = [0; LANES];
        let mut b = [0; LANES];
        for l in 0..LANES {
            a[l] = (l as f32 / 4.0).to_bits();
            b[l] = ((LANES - 1 - l) as f32 / 8.0).to_bits();
        }
        [a, b]
    }

    /// Run `code` (verified) on [`inputs`]; its output columns.
    pub(crate) fn run(code: Code) -> Vec<Lanes> {
        let v = Verified::new(code).unwrap_or_else(|e| panic!("{e}"));
        let mut m = Machine::new(&v, 1000);
        let ins = inputs();
        for (&s, col) in v.input_slots.iter().zip(&ins) {
            *m.own_mut(s) = *col;
        }
        *m.own_mut(v.root_mask) = [1; LANES];
        m.run(&v);
        v.output_slots.iter().map(|&s| *m.lanes(s)).collect()
    }

    /// Every destination written by the ops of `ops`, nested ones included.
    fn written(ops: &mut [Op], out: &mut Vec<Slot>) {
        for op in ops {
            op.own_slots(&mut |s, u| {
                if matches!(u, Use::Write | Use::Update) {
                    out.push(*s);
                }
            });
            for b in op.blocks_mut() {
                written(b, out);
            }
        }
    }

    #[test]
    fn temporaries_share_slots_and_the_result_is_the_same() {
        use Opcode::*;
        let ops = vec![
            k(FAdd, 3, 1, 2),
            k(FMul, 4, 3, 1),
            k(FAdd, 5, 4, 2),
            k(FMul, 6, 5, 5),
            k(FSub, 7, 6, 1),
        ];
        let c = code(ops, 5, vec![7], vec![]);
        let before = run(c.clone());
        let after = allocate(c);
        // Root, two inputs, the output; two temporaries alive at once.
        assert_eq!(after.slot_count, 6);
        assert_eq!(run(after), before);
    }

    #[test]
    fn a_value_a_masked_write_blends_keeps_its_slot() {
        use Opcode::*;
        // v = a; if a < b { t = a * b; u = t + b; v = u (masked) }; out = v + b.
        // Read as plain writes, v would be dead between its copy and the
        // masked copy, and t could take its slot.
        let ops = vec![
            k(FLt, 3, 1, 2),
            Op::Copy { dst: 4, src: 1 },
            Op::If {
                cond: 3,
                parent: 0,
                then_mask: 5,
                else_mask: 6,
                accept: vec![
                    k(FMul, 7, 1, 2),
                    k(FAdd, 8, 7, 2),
                    Op::MaskedCopy {
                        dst: 4,
                        src: 8,
                        mask: 5,
                    },
                ],
                reject: Vec::new(),
            },
            k(FAdd, 9, 4, 2),
        ];
        let c = code(ops, 7, vec![9], vec![]);
        let before = run(c.clone());
        let mut after = allocate(c);
        let Op::Copy { dst: v, .. } = after.ops[1] else {
            panic!("the copy moved")
        };
        let Op::If { accept, .. } = &mut after.ops[2] else {
            panic!("the branch moved")
        };
        let mut inside = Vec::new();
        written(accept, &mut inside);
        assert_eq!(
            inside.iter().filter(|&&s| s == v).count(),
            1,
            "only the blend writes v"
        );
        let out = run(after);
        assert_eq!(out, before);
        // Both sides really ran: some lanes took the branch, some did not.
        let [a, b] = inputs();
        let lane = |l: usize| f32::from_bits(out[0][l]);
        let (a0, b0) = (f32::from_bits(a[0]), f32::from_bits(b[0]));
        assert_eq!(lane(0), (a0 * b0 + b0) + b0);
        let l = LANES - 1;
        let (al, bl) = (f32::from_bits(a[l]), f32::from_bits(b[l]));
        assert!(al >= bl);
        assert_eq!(lane(l), al + bl);
    }

    /// `c = a * b; r = 0; n = 0; loop { t = c + a; w = t * t; r = w (masked);
    /// n = n + 1 (masked) } continuing { break if n >= 3 }; out = r`.
    /// `c` is last read at the top of the body; without stretching its life
    /// over the loop, `w` could take its slot and the second iteration
    /// would read `w` for `c`.
    pub(crate) fn loop_program() -> Code {
        use Opcode::*;
        let ops = vec![
            k(FMul, 3, 1, 2),
            Op::Fill { dst: 9, bits: 0 },
            Op::Fill { dst: 7, bits: 0 },
            Op::Loop {
                parent: 0,
                lmask: 4,
                imask: 5,
                body: vec![
                    k(FAdd, 6, 3, 1),
                    k(FMul, 8, 6, 6),
                    Op::MaskedCopy {
                        dst: 9,
                        src: 8,
                        mask: 5,
                    },
                    k(IAdd, 10, 7, 12),
                    Op::MaskedCopy {
                        dst: 7,
                        src: 10,
                        mask: 5,
                    },
                ],
                continuing: vec![k(UGe, 11, 7, 13)],
                break_if: Some(11),
                kill: vec![4, 5].into(),
                at: 0,
            },
        ];
        code(ops, 11, vec![9], vec![(12, 1), (13, 3)])
    }

    #[test]
    fn a_value_carried_around_a_loop_keeps_its_slot() {
        let c = loop_program();
        let before = run(c.clone());
        let mut after = allocate(c);
        let Op::Kernel { dst: c_slot, .. } = after.ops[0] else {
            panic!("the product moved")
        };
        let Op::Loop { body, .. } = &mut after.ops[3] else {
            panic!("the loop moved")
        };
        let mut inside = Vec::new();
        written(body, &mut inside);
        assert!(
            !inside.contains(&c_slot),
            "{c_slot} is overwritten in the loop"
        );
        assert!(after.slot_count < 3 + 11, "something is shared");
        let out = run(after);
        assert_eq!(out, before);
        let [a, b] = inputs();
        let (a1, b1) = (f32::from_bits(a[1]), f32::from_bits(b[1]));
        let t = a1 * b1 + a1;
        assert_eq!(f32::from_bits(out[0][1]), t * t);
    }
}
