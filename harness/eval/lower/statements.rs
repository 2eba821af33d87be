//! Statements: locals, blocks, control flow as masked op trees, stores and
//! inlined calls.

use std::collections::HashMap;
use std::rc::Rc;

use naga::{Handle, Statement as S};

use crate::eval::ir::{Case, Op, Slot};

use super::unsupported::{atomic_name, barrier_name};
use super::{Compiler, Frame, Item, Lowered, Place, Role, Scope, Val};

impl<'m> Compiler<'m> {
    pub(super) fn init_locals(&mut self, frame: &mut Frame<'m>, out: &mut Vec<Op>) -> Lowered<()> {
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

    pub(super) fn block(
        &mut self,
        frame: &mut Frame<'m>,
        block: &'m naga::Block,
        out: &mut Vec<Op>,
    ) -> Lowered<()> {
        for (stmt, span) in block.span_iter() {
            self.span = *span;
            self.statement(frame, stmt, out)?;
        }
        Ok(())
    }

    pub(super) fn exit_to(
        &mut self,
        out: &mut Vec<Op>,
        target: &[Role],
        what: &str,
    ) -> Lowered<()> {
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

    pub(super) fn statement(
        &mut self,
        frame: &mut Frame<'m>,
        stmt: &'m S,
        out: &mut Vec<Op>,
    ) -> Lowered<()> {
        self.check_size()?;
        match stmt {
            S::Emit(range) => {
                for h in range.clone() {
                    let saved = self.span;
                    self.span = frame.func.expressions.get_span(h);
                    let item = self.expr(&mut Scope::Function(frame), h, out)?;
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

    pub(super) fn store(&mut self, out: &mut Vec<Op>, place: &Place, v: &Val, root: Slot) {
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

    pub(super) fn call(
        &mut self,
        fh: Handle<naga::Function>,
        args: Vec<Item>,
        out: &mut Vec<Op>,
    ) -> Lowered<Option<Vec<Slot>>> {
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
}
