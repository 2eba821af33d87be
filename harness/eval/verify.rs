//! The verifier: run on every lowered [`Code`] before it may be executed.
//!
//! The executor reads and writes slot memory without bounds checks and hands
//! kernels a `&mut` destination next to `&` operands. That is sound only for
//! programs with the properties checked here, so lowering establishes them and
//! this module proves them (lowering may not be trusted to; a violation is a
//! bug in lowering, reported as an error instead of undefined behaviour):
//!
//! 1. **In range**: every slot an operation names is below `slot_count`, and
//!    so are the input, output, constant and root-mask slots.
//! 2. **Fresh destination**: no operation's destination is among its operands
//!    (kernels, copies, masked copies, gathers, index checks, per-lane
//!    functions, texture ops, perturbations' argument), so a `&mut` to the destination
//!    never aliases a `&` to an operand.
//! 3. **Distinct masks**: the masks a construct writes (`then`/`else`, loop
//!    and iteration, switch and case masks) are distinct from each other,
//!    from the parent mask and from the condition or selector, and no mask
//!    slot is written by anything but its construct, [`Op::Exit`] or a loop's
//!    step-budget kill.
//! 4. **Inputs are read-only**: no operation writes an input slot (full
//!    batches bind input slots to the caller's read-only columns) or a
//!    constant slot (written once per machine).
//! 5. **Defined before use**: every slot read was written before on every
//!    path (a side of an `If`, a loop body or a switch case may not run, so
//!    what it writes counts as written only inside it), so no value left
//!    over from an earlier batch is ever read.
//! 6. **Kernels exist**: an [`Op::Kernel`] asks for the f16 version only of
//!    an opcode that has one ([`Opcode::has_half`]), so the executor's
//!    `op.kernel(half)` always finds its loop.

use std::collections::HashSet;

use super::ir::{Code, Op, Slot, PER_LANE_MAX};
#[cfg(doc)]
use super::lanes::Opcode;

/// A broken IR property: which rule and where (a path of op indices).
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct VerifyError {
    pub rule: Rule,
    pub message: String,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Rule {
    SlotInRange,
    FreshDestination,
    DistinctMasks,
    InputsReadOnly,
    DefinedBeforeUse,
    KernelExists,
}

impl std::fmt::Display for VerifyError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "evaluator IR broken ({:?}): {}", self.rule, self.message)
    }
}

/// Check every property the executor relies on; the first violation found.
pub(crate) fn verify(code: &Code) -> Result<(), VerifyError> {
    let mut v = Verifier {
        code,
        read_only: HashSet::new(),
        masks: HashSet::new(),
        path: Vec::new(),
    };
    let top = [code.root_mask]
        .iter()
        .chain(&code.input_slots)
        .chain(&code.output_slots)
        .chain(code.consts.iter().map(|c| &c.0))
        .copied()
        .collect::<Vec<_>>();
    for s in top.into_iter().chain(code.sites.iter().map(|s| s.mask)) {
        v.in_range(s)?;
    }
    v.read_only.extend(code.input_slots.iter().copied());
    v.read_only.extend(code.consts.iter().map(|c| c.0));
    v.masks.insert(code.root_mask);
    v.collect_masks(&code.ops)?;
    let mut defined = vec![false; code.slot_count];
    for &s in v.read_only.iter().chain([&code.root_mask]) {
        defined[s as usize] = true;
    }
    v.block(&code.ops, &mut defined)?;
    for &s in &code.output_slots {
        v.read(s, &defined)?;
    }
    Ok(())
}

struct Verifier<'c> {
    code: &'c Code,
    /// Input and constant slots.
    read_only: HashSet<Slot>,
    /// Every slot some construct uses as its mask.
    masks: HashSet<Slot>,
    /// Op indices from the top to the op being checked.
    path: Vec<usize>,
}

impl Verifier<'_> {
    fn fail(&self, rule: Rule, what: String) -> VerifyError {
        let at: Vec<String> = self.path.iter().map(|i| i.to_string()).collect();
        VerifyError {
            rule,
            message: format!("op {}: {what}", at.join(".")),
        }
    }

    fn in_range(&self, s: Slot) -> Result<(), VerifyError> {
        if (s as usize) < self.code.slot_count {
            Ok(())
        } else {
            Err(self.fail(
                Rule::SlotInRange,
                format!(
                    "slot {s} is not below the slot count {}",
                    self.code.slot_count
                ),
            ))
        }
    }

    /// Rule 3, first half: the masks of each construct are fresh and
    /// distinct; remembers every mask slot for the write check.
    fn collect_masks(&mut self, ops: &[Op]) -> Result<(), VerifyError> {
        for (i, op) in ops.iter().enumerate() {
            self.path.push(i);
            let (own, others, children): (Vec<Slot>, Vec<Slot>, Vec<&[Op]>) = match op {
                Op::If {
                    cond,
                    parent,
                    then_mask,
                    else_mask,
                    accept,
                    reject,
                } => (
                    vec![*then_mask, *else_mask],
                    vec![*cond, *parent],
                    vec![accept, reject],
                ),
                Op::Loop {
                    parent,
                    lmask,
                    imask,
                    body,
                    continuing,
                    ..
                } => (vec![*lmask, *imask], vec![*parent], vec![body, continuing]),
                Op::Switch {
                    sel,
                    parent,
                    smask,
                    cases,
                } => (
                    [*smask]
                        .into_iter()
                        .chain(cases.iter().map(|c| c.mask))
                        .collect(),
                    vec![*sel, *parent],
                    cases.iter().map(|c| &c.body[..]).collect(),
                ),
                Op::Enter { mask, parent } => (vec![*mask], vec![*parent], vec![]),
                _ => (vec![], vec![], vec![]),
            };
            for (j, &m) in own.iter().enumerate() {
                self.in_range(m)?;
                if own[..j].contains(&m) || others.contains(&m) || !self.masks.insert(m) {
                    return Err(self.fail(
                        Rule::DistinctMasks,
                        format!("mask slot {m} is shared with another mask or operand"),
                    ));
                }
            }
            for c in children {
                self.collect_masks(c)?;
            }
            self.path.pop();
        }
        Ok(())
    }

    fn read(&self, s: Slot, defined: &[bool]) -> Result<(), VerifyError> {
        self.in_range(s)?;
        if defined[s as usize] {
            Ok(())
        } else {
            Err(self.fail(
                Rule::DefinedBeforeUse,
                format!("slot {s} is read before it is written on every path"),
            ))
        }
    }

    /// A write by an ordinary (non-control) operation.
    fn write(&self, s: Slot, operands: &[Slot], defined: &mut [bool]) -> Result<(), VerifyError> {
        self.in_range(s)?;
        if operands.contains(&s) {
            return Err(self.fail(
                Rule::FreshDestination,
                format!("destination slot {s} is also an operand"),
            ));
        }
        if self.read_only.contains(&s) {
            return Err(self.fail(
                Rule::InputsReadOnly,
                format!("slot {s} is an input or constant and is written"),
            ));
        }
        if self.masks.contains(&s) {
            return Err(self.fail(
                Rule::DistinctMasks,
                format!("mask slot {s} is written by an ordinary operation"),
            ));
        }
        defined[s as usize] = true;
        Ok(())
    }

    /// A write of a construct's own mask (or an exit clearing lanes from one).
    fn write_mask(&self, s: Slot, defined: &mut [bool]) -> Result<(), VerifyError> {
        self.in_range(s)?;
        if self.read_only.contains(&s) {
            return Err(self.fail(
                Rule::InputsReadOnly,
                format!("slot {s} is an input or constant and is written"),
            ));
        }
        defined[s as usize] = true;
        Ok(())
    }

    fn block(&mut self, ops: &[Op], defined: &mut [bool]) -> Result<(), VerifyError> {
        for (i, op) in ops.iter().enumerate() {
            self.path.push(i);
            self.op(op, defined)?;
            self.path.pop();
        }
        Ok(())
    }

    /// Check one op given the slots `defined` before it; update `defined` to
    /// the slots written after it on every path.
    fn op(&mut self, op: &Op, defined: &mut [bool]) -> Result<(), VerifyError> {
        match op {
            Op::Fill { dst, .. } => self.write(*dst, &[], defined)?,
            Op::Enter { mask, parent } => {
                self.read(*parent, defined)?;
                if mask == parent {
                    return Err(self.fail(
                        Rule::DistinctMasks,
                        format!("a callee's mask {mask} is its caller's"),
                    ));
                }
                self.write_mask(*mask, defined)?;
            }
            Op::Copy { dst, src } => {
                self.read(*src, defined)?;
                self.write(*dst, &[*src], defined)?;
            }
            Op::Kernel {
                op,
                half,
                dst,
                args,
                ..
            } => {
                if *half && !op.has_half() {
                    return Err(self.fail(
                        Rule::KernelExists,
                        format!("{} has no f16 version", op.name()),
                    ));
                }
                let args = &args[..op.arity()];
                for &a in args {
                    self.read(a, defined)?;
                }
                self.write(*dst, args, defined)?;
            }
            Op::PerLane { dst, args, .. } => {
                if dst.len() > PER_LANE_MAX || args.len() > PER_LANE_MAX {
                    return Err(self.fail(
                        Rule::SlotInRange,
                        format!("a per-lane function has more than {PER_LANE_MAX} slots"),
                    ));
                }
                for &a in args.iter() {
                    self.read(a, defined)?;
                }
                for (j, &d) in dst.iter().enumerate() {
                    let mut operands = args.to_vec();
                    operands.extend(&dst[..j]);
                    self.write(d, &operands, defined)?;
                }
            }
            Op::MaskedCopy { dst, src, mask } => {
                self.read(*src, defined)?;
                self.read(*mask, defined)?;
                // Lanes outside the mask keep their value: the destination
                // is read too.
                self.read(*dst, defined)?;
                self.write(*dst, &[*src, *mask], defined)?;
            }
            Op::Gather { dst, src, offset } => {
                self.read(*offset, defined)?;
                for &s in src.iter() {
                    self.read(s, defined)?;
                }
                for (j, &d) in dst.iter().enumerate() {
                    let mut operands = src.to_vec();
                    operands.push(*offset);
                    operands.extend(&dst[..j]);
                    self.write(d, &operands, defined)?;
                }
            }
            Op::Scatter {
                dst,
                src,
                offset,
                mask,
            } => {
                self.read(*offset, defined)?;
                self.read(*mask, defined)?;
                for &s in src.iter().chain(dst.iter()) {
                    // Lanes outside the mask and leaves not hit keep their
                    // values: every destination is read too.
                    self.read(s, defined)?;
                }
                // The value stored may be leaves of the same region (its
                // slots are read lane by lane before each write); only the
                // offset and mask must stay apart from the destination.
                for &d in dst.iter() {
                    self.write(d, &[*offset, *mask], defined)?;
                }
            }
            Op::CheckIndex { dst, idx, mask, .. } => {
                self.read(*idx, defined)?;
                self.read(*mask, defined)?;
                self.write(*dst, &[*idx, *mask], defined)?;
            }
            Op::Texture(t) => {
                let operands = t.operands();
                for &a in &operands {
                    self.read(a, defined)?;
                }
                for (j, &d) in t.dst.iter().enumerate() {
                    let mut others = operands.clone();
                    others.extend(&t.dst[..j]);
                    self.write(d, &others, defined)?;
                }
            }
            Op::Perturb(pt) => {
                self.read(pt.arg, defined)?;
                self.read(pt.dst, defined)?;
                self.write(pt.dst, &[pt.arg], defined)?;
            }
            Op::Exit { current, masks } => {
                self.read(*current, defined)?;
                for &m in masks.iter() {
                    self.read(m, defined)?;
                    if m == *current {
                        return Err(self.fail(
                            Rule::DistinctMasks,
                            format!("an exit clears its own lanes' mask {m}"),
                        ));
                    }
                    if !self.masks.contains(&m) {
                        return Err(self.fail(
                            Rule::DistinctMasks,
                            format!("an exit clears slot {m}, which is no construct's mask"),
                        ));
                    }
                    self.write_mask(m, defined)?;
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
                self.read(*cond, defined)?;
                self.read(*parent, defined)?;
                self.write_mask(*then_mask, defined)?;
                self.write_mask(*else_mask, defined)?;
                // Either side may be skipped: what it writes is defined only
                // inside it.
                let mut inner = defined.to_vec();
                self.path.push(0);
                self.block(accept, &mut inner)?;
                self.path.pop();
                let mut inner = defined.to_vec();
                self.path.push(1);
                self.block(reject, &mut inner)?;
                self.path.pop();
            }
            Op::Loop {
                parent,
                lmask,
                imask,
                body,
                continuing,
                break_if,
                kill,
                ..
            } => {
                self.read(*parent, defined)?;
                for &m in kill.iter() {
                    if !self.masks.contains(&m) {
                        return Err(self.fail(
                            Rule::DistinctMasks,
                            format!("a loop's budget kill clears slot {m}, which is no mask"),
                        ));
                    }
                    if m != *lmask && m != *imask {
                        self.read(m, defined)?;
                    }
                }
                self.write_mask(*lmask, defined)?;
                self.write_mask(*imask, defined)?;
                let mut inner = defined.to_vec();
                self.path.push(0);
                self.block(body, &mut inner)?;
                self.path.pop();
                self.path.push(1);
                self.block(continuing, &mut inner)?;
                if let Some(b) = break_if {
                    self.read(*b, &inner)?;
                }
                self.path.pop();
            }
            Op::Switch {
                sel,
                parent,
                smask,
                cases,
            } => {
                self.read(*sel, defined)?;
                self.read(*parent, defined)?;
                self.write_mask(*smask, defined)?;
                for c in cases {
                    self.write_mask(c.mask, defined)?;
                }
                for (j, c) in cases.iter().enumerate() {
                    let mut inner = defined.to_vec();
                    self.path.push(j);
                    self.block(&c.body, &mut inner)?;
                    self.path.pop();
                }
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    //! Hand-made programs, each breaking one rule; and the same programs
    //! repaired, which the verifier accepts (so each rejection is for the
    //! rule named, not for some other flaw of the program).
    use super::*;
    use crate::eval::ir::Site;
    use crate::eval::lanes::Opcode;

    /// Slots: 0 root mask, 1 and 2 inputs, then `extra` more.
    fn code(ops: Vec<Op>, extra: usize, outputs: Vec<Slot>) -> Code {
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
            input_slots: vec![1, 2],
            result: None,
            out_params: Vec::new(),
            output_slots: outputs,
            root_mask: 0,
            consts: Vec::new(),
        }
    }

    fn add(dst: Slot, a: Slot, b: Slot) -> Op {
        Op::Kernel {
            op: Opcode::FAdd,
            half: false,
            dst,
            args: [a, b, 0, 0],
            at: 0,
        }
    }

    #[track_caller]
    fn rejects(code: Code, rule: Rule) {
        match verify(&code) {
            Err(e) => assert_eq!(e.rule, rule, "{e}"),
            Ok(()) => panic!("accepted a program breaking {rule:?}"),
        }
    }

    #[track_caller]
    fn accepts(code: Code) {
        if let Err(e) = verify(&code) {
            panic!("rejected a sound program: {e}");
        }
    }

    #[test]
    fn a_slot_out_of_range_is_rejected() {
        accepts(code(vec![add(3, 1, 2)], 1, vec![3]));
        rejects(code(vec![add(3, 1, 9)], 1, vec![3]), Rule::SlotInRange);
        rejects(code(vec![add(4, 1, 2)], 1, vec![3]), Rule::SlotInRange);
        rejects(code(vec![add(3, 1, 2)], 1, vec![7]), Rule::SlotInRange);
    }

    #[test]
    fn a_destination_among_its_operands_is_rejected() {
        let ok = vec![add(3, 1, 2), add(4, 3, 1)];
        accepts(code(ok, 2, vec![4]));
        let bad = vec![add(3, 1, 2), add(3, 3, 1)];
        rejects(code(bad, 1, vec![3]), Rule::FreshDestination);
        let bad = vec![add(3, 1, 2), Op::Copy { dst: 3, src: 3 }];
        rejects(code(bad, 1, vec![3]), Rule::FreshDestination);
    }

    fn branch(then_mask: Slot, else_mask: Slot, accept: Vec<Op>) -> Op {
        Op::If {
            cond: 1,
            parent: 0,
            then_mask,
            else_mask,
            accept,
            reject: Vec::new(),
        }
    }

    #[test]
    fn masks_shared_or_written_by_plain_ops_are_rejected() {
        accepts(code(vec![branch(3, 4, vec![])], 2, vec![]));
        // then == else
        rejects(
            code(vec![branch(3, 3, vec![])], 2, vec![]),
            Rule::DistinctMasks,
        );
        // the parent reused as a branch mask
        rejects(
            code(vec![branch(0, 4, vec![])], 2, vec![]),
            Rule::DistinctMasks,
        );
        // two constructs share a mask
        let twice = vec![branch(3, 4, vec![]), branch(3, 5, vec![])];
        rejects(code(twice, 3, vec![]), Rule::DistinctMasks);
        // an ordinary op overwrites a mask
        let clobber = vec![branch(3, 4, vec![add(3, 1, 2)])];
        rejects(code(clobber, 2, vec![]), Rule::DistinctMasks);
    }

    #[test]
    fn an_f16_version_of_an_opcode_without_one_is_rejected() {
        let kernel = |op: Opcode, half: bool| Op::Kernel {
            op,
            half,
            dst: 3,
            args: [1, 2, 0, 0],
            at: 0,
        };
        accepts(code(vec![kernel(Opcode::FAdd, true)], 1, vec![3]));
        // A comparison's result is a boolean; HMix already rounds to f16.
        for op in [Opcode::FLt, Opcode::IAdd] {
            rejects(code(vec![kernel(op, true)], 1, vec![3]), Rule::KernelExists);
        }
        let mix = Op::Kernel {
            op: Opcode::HMix,
            half: true,
            dst: 3,
            args: [1, 2, 1, 0],
            at: 0,
        };
        rejects(code(vec![mix], 1, vec![3]), Rule::KernelExists);
    }

    #[test]
    fn a_write_to_an_input_slot_is_rejected() {
        rejects(code(vec![add(1, 2, 2)], 0, vec![]), Rule::InputsReadOnly);
        rejects(
            code(vec![Op::Fill { dst: 2, bits: 0 }], 0, vec![]),
            Rule::InputsReadOnly,
        );
    }

    #[test]
    fn a_read_before_a_write_on_some_path_is_rejected() {
        // Slot 5 is read but never written.
        rejects(code(vec![add(3, 1, 5)], 3, vec![3]), Rule::DefinedBeforeUse);
        // Written only on the `then` side, which may not run.
        let one_side = vec![branch(3, 4, vec![add(5, 1, 2)]), add(6, 5, 1)];
        rejects(code(one_side, 4, vec![6]), Rule::DefinedBeforeUse);
        // A masked copy reads its destination's other lanes.
        let masked = vec![Op::MaskedCopy {
            dst: 3,
            src: 1,
            mask: 0,
        }];
        rejects(code(masked, 1, vec![3]), Rule::DefinedBeforeUse);
        let repaired = vec![
            Op::Fill { dst: 3, bits: 0 },
            Op::MaskedCopy {
                dst: 3,
                src: 1,
                mask: 0,
            },
        ];
        accepts(code(repaired, 1, vec![3]));
        // An output never written.
        rejects(code(vec![], 1, vec![3]), Rule::DefinedBeforeUse);
    }

    fn texture(dst: [Slot; 4], coords: [Slot; 2], level: Option<Slot>) -> Op {
        use crate::eval::texture::{TextureAccess, TextureOp};
        let table = crate::table::Table::new(1, 1, 1, vec![0.5]).unwrap();
        Op::Texture(Box::new(TextureOp {
            table: std::sync::Arc::new(table),
            access: TextureAccess::Sample(crate::table::Sampler::default()),
            coords,
            level,
            dst,
            mask: 0,
            at: 0,
        }))
    }

    #[test]
    fn texture_ops_are_checked_like_any_op() {
        accepts(code(vec![texture([3, 4, 5, 6], [1, 2], None)], 4, vec![6]));
        // A destination that is a coordinate, the level, the mask or another
        // destination of the same op.
        rejects(
            code(
                vec![add(3, 1, 2), texture([3, 4, 5, 6], [3, 2], None)],
                4,
                vec![6],
            ),
            Rule::FreshDestination,
        );
        rejects(
            code(
                vec![add(3, 1, 2), texture([4, 3, 5, 6], [1, 2], Some(3))],
                4,
                vec![6],
            ),
            Rule::FreshDestination,
        );
        rejects(
            code(vec![texture([3, 4, 4, 6], [1, 2], None)], 4, vec![6]),
            Rule::FreshDestination,
        );
        rejects(
            code(vec![texture([3, 4, 5, 0], [1, 2], None)], 4, vec![6]),
            Rule::FreshDestination,
        );
        // Writing an input, reading an unwritten level, a slot out of range.
        rejects(
            code(vec![texture([3, 4, 5, 1], [1, 2], None)], 4, vec![6]),
            Rule::FreshDestination,
        );
        rejects(
            code(vec![texture([3, 4, 5, 6], [1, 2], Some(7))], 5, vec![6]),
            Rule::DefinedBeforeUse,
        );
        rejects(
            code(vec![texture([3, 4, 5, 9], [1, 2], None)], 4, vec![6]),
            Rule::SlotInRange,
        );
    }
}
