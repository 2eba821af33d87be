//! Expressions: the one dispatcher over naga expressions, values and places
//! (pointers resolved at compile time), loads and dynamic indexing.

use naga::{Expression as E, Handle};

use crate::eval::ir::{Op, Slot};
use crate::eval::lanes::Opcode;
use crate::values::Ty;

use super::unsupported::{derivative_name, global_name};
use super::{plain, Compiler, Frame, Item, Lowered, Place, Scope, Val};

impl<'m> Compiler<'m> {
    pub(super) fn expr_cached(
        &mut self,
        frame: &mut Frame<'m>,
        h: Handle<naga::Expression>,
        out: &mut Vec<Op>,
    ) -> Lowered<Item> {
        if let Some(i) = frame.cache.get(&h) {
            return Ok(i.clone());
        }
        let saved = self.span;
        self.span = frame.func.expressions.get_span(h);
        let expr = &frame.func.expressions[h];
        // Expressions outside any Emit are constant-like (naga folds the rest):
        // literals and constants go to the prologue and are cached; anything
        // else is recomputed where it is used, never shared across blocks.
        let constant = matches!(
            expr,
            E::Literal(_) | E::Constant(_) | E::Override(_) | E::ZeroValue(_)
        );
        let item = if constant {
            let mut pro = Vec::new();
            let item = self.expr(&mut Scope::Function(frame), h, &mut pro)?;
            self.prologue.extend(pro);
            frame.cache.insert(h, item.clone());
            item
        } else {
            let item = self.expr(&mut Scope::Function(frame), h, out)?;
            if matches!(
                expr,
                E::FunctionArgument(_) | E::LocalVariable(_) | E::GlobalVariable(_)
            ) {
                frame.cache.insert(h, item.clone());
            }
            item
        };
        self.span = saved;
        Ok(item)
    }

    pub(super) fn value(
        &mut self,
        frame: &mut Frame<'m>,
        h: Handle<naga::Expression>,
        out: &mut Vec<Op>,
    ) -> Lowered<Val> {
        match self.expr_cached(frame, h, out)? {
            Item::Value(v) => Ok(v),
            Item::Place(_) => Err(self.err("expected a value, found a pointer")),
        }
    }

    pub(super) fn place(
        &mut self,
        frame: &mut Frame<'m>,
        h: Handle<naga::Expression>,
        out: &mut Vec<Op>,
    ) -> Lowered<Place> {
        match self.expr_cached(frame, h, out)? {
            Item::Place(p) => Ok(p),
            Item::Value(_) => Err(self.err("expected a pointer, found a value")),
        }
    }

    /// The naga expression `h` of `scope`.
    fn expression(&self, scope: &Scope<'_, 'm>, h: Handle<naga::Expression>) -> &'m E {
        match scope {
            Scope::Module => &self.module.global_expressions[h],
            Scope::Function(frame) => &frame.func.expressions[h],
        }
    }

    /// The type of expression `h` of `scope`.
    fn scope_ty(&self, scope: &Scope<'_, 'm>, h: Handle<naga::Expression>) -> Lowered<Ty> {
        let resolution = match scope {
            Scope::Module => &self.shader.info[h],
            Scope::Function(frame) => &frame.info[h].ty,
        };
        match resolution {
            naga::proc::TypeResolution::Handle(t) => self.ty_of_handle(*t, self.span),
            naga::proc::TypeResolution::Value(inner) => self.ty_of_inner(inner, self.span),
        }
    }

    /// The function an expression belongs to; an error at module scope.
    fn frame_of<'s>(&self, scope: &'s mut Scope<'_, 'm>) -> Lowered<&'s mut Frame<'m>> {
        match scope {
            Scope::Module => Err(self.unsupported("this expression at module scope")),
            Scope::Function(frame) => Ok(frame),
        }
    }

    /// An operand of an expression of `scope`, lowered (or found cached).
    fn item(
        &mut self,
        scope: &mut Scope<'_, 'm>,
        h: Handle<naga::Expression>,
        out: &mut Vec<Op>,
    ) -> Lowered<Item> {
        match scope {
            Scope::Module => Ok(Item::Value(self.global_expr(h)?)),
            Scope::Function(frame) => self.expr_cached(frame, h, out),
        }
    }

    /// An operand of an expression of `scope` that must be a value.
    pub(super) fn operand(
        &mut self,
        scope: &mut Scope<'_, 'm>,
        h: Handle<naga::Expression>,
        out: &mut Vec<Op>,
    ) -> Lowered<Val> {
        match scope {
            Scope::Module => self.global_expr(h),
            Scope::Function(frame) => self.value(frame, h, out),
        }
    }

    /// An operand of an expression of `scope` that must be a pointer.
    fn place_in(
        &mut self,
        scope: &mut Scope<'_, 'm>,
        h: Handle<naga::Expression>,
        out: &mut Vec<Op>,
    ) -> Lowered<Place> {
        match scope {
            Scope::Module => Err(self.err("expected a pointer, found a value")),
            Scope::Function(frame) => self.place(frame, h, out),
        }
    }

    /// The one dispatcher over naga expressions, at module scope (constants,
    /// overrides, private initialisers; `out` is then the prologue) and in
    /// functions alike. Operands come through [`Compiler::operand`] and
    /// [`Compiler::item`], which cache per scope; expressions that need a
    /// function (arguments, locals, loads) are refused at module scope.
    pub(super) fn expr(
        &mut self,
        scope: &mut Scope<'_, 'm>,
        h: Handle<naga::Expression>,
        out: &mut Vec<Op>,
    ) -> Lowered<Item> {
        let expr = self.expression(scope, h);
        let v = match expr {
            E::Literal(l) => self.literal(out, l)?,
            E::Constant(c) => self.global_expr(self.module.constants[*c].init)?,
            E::Override(o) => self.override_val(*o)?,
            E::ZeroValue(_) => {
                let ty = self.scope_ty(scope, h)?;
                Val {
                    slots: (0..ty.leaf_count()).map(|_| self.fill(out, 0)).collect(),
                    ty,
                }
            }
            E::Compose { components, .. } => {
                let ty = self.scope_ty(scope, h)?;
                let mut slots = Vec::new();
                for &c in components {
                    slots.extend(self.operand(scope, c, out)?.slots);
                }
                Val { ty, slots }
            }
            E::Splat { size, value } => {
                let v = self.operand(scope, *value, out)?;
                Val {
                    ty: Ty::Vector(*size as u8, v.ty.scalar_kind().unwrap()),
                    slots: vec![v.slots[0]; *size as usize],
                }
            }
            E::Swizzle {
                size,
                vector,
                pattern,
            } => {
                let v = self.operand(scope, *vector, out)?;
                let k = v.ty.scalar_kind().unwrap();
                let slots = pattern[..*size as usize]
                    .iter()
                    .map(|c| v.slots[*c as usize])
                    .collect();
                Val {
                    ty: Ty::Vector(*size as u8, k),
                    slots,
                }
            }
            E::FunctionArgument(i) => return Ok(self.frame_of(scope)?.args[*i as usize].clone()),
            E::LocalVariable(l) => {
                let frame = self.frame_of(scope)?;
                let region = frame.locals[l].clone();
                let lv = &frame.func.local_variables[*l];
                let ty = self.ty_of_handle(lv.ty, self.span)?;
                return Ok(Item::Place(Place {
                    region,
                    offset: 0,
                    dynamic: None,
                    ty,
                    own_local: true,
                }));
            }
            E::GlobalVariable(g) => {
                let gv = &self.module.global_variables[*g];
                match self.privates.get(g) {
                    Some(region) => {
                        let ty = self.ty_of_handle(gv.ty, self.span)?;
                        return Ok(Item::Place(Place {
                            region: region.clone(),
                            offset: 0,
                            dynamic: None,
                            ty,
                            own_local: false,
                        }));
                    }
                    None => {
                        let name = gv.name.clone().unwrap_or_default();
                        return Err(self.unsupported(&global_name(&name, gv.space)));
                    }
                }
            }
            E::Load { pointer } => {
                let p = self.place_in(scope, *pointer, out)?;
                self.load(out, &p)
            }
            E::AccessIndex { base, index } => match self.item(scope, *base, out)? {
                Item::Value(b) => self.access_index_val(&b, *index)?,
                Item::Place(p) => {
                    let (ty, off) = self.member(&p.ty, *index)?;
                    return Ok(Item::Place(Place {
                        offset: p.offset + off,
                        ty,
                        ..p
                    }));
                }
            },
            E::Access { base, index } => {
                let idx = self.operand(scope, *index, out)?.slots[0];
                match self.item(scope, *base, out)? {
                    Item::Value(b) => {
                        let (ety, len) = self.element(&b.ty)?;
                        let n = ety.leaf_count();
                        let off = self.dynamic_offset(out, idx, len, n, None);
                        let dst = self.slots(n);
                        self.emit(
                            out,
                            Op::Gather {
                                dst: dst.clone().into(),
                                src: b.slots.clone().into(),
                                offset: off,
                            },
                        );
                        Val {
                            ty: ety,
                            slots: dst,
                        }
                    }
                    Item::Place(p) => {
                        let (ety, len) = self.element(&p.ty)?;
                        let n = ety.leaf_count();
                        let off = self.dynamic_offset(out, idx, len, n, p.dynamic);
                        return Ok(Item::Place(Place {
                            dynamic: Some(off),
                            ty: ety,
                            ..p
                        }));
                    }
                }
            }
            E::Unary { op, expr } => {
                let v = self.operand(scope, *expr, out)?;
                self.unary(out, *op, &v)?
            }
            E::Binary { op, left, right } => {
                let ty = self.scope_ty(scope, h)?;
                let (l, r) = (
                    self.operand(scope, *left, out)?,
                    self.operand(scope, *right, out)?,
                );
                self.binary(out, *op, &l, &r, &ty)?
            }
            E::Select {
                condition,
                accept,
                reject,
            } => {
                let c = self.operand(scope, *condition, out)?;
                let a = self.operand(scope, *accept, out)?;
                let r = self.operand(scope, *reject, out)?;
                self.select(out, &c, &a, &r)
            }
            E::Relational { fun, argument } => {
                let v = self.operand(scope, *argument, out)?;
                self.relational(out, *fun, &v)?
            }
            E::Math {
                fun,
                arg,
                arg1,
                arg2,
                arg3,
            } => {
                let ty = self.scope_ty(scope, h)?;
                let mut args = vec![self.operand(scope, *arg, out)?];
                for a in [arg1, arg2, arg3].into_iter().flatten() {
                    args.push(self.operand(scope, *a, out)?);
                }
                self.math(out, *fun, &args, &ty)?
            }
            E::As {
                expr,
                kind,
                convert,
            } => {
                let ty = self.scope_ty(scope, h)?;
                let v = self.operand(scope, *expr, out)?;
                self.convert(out, &v, *kind, *convert, &ty)?
            }
            E::CallResult(_) => return Err(self.err("call result used before the call")),
            // Look-up tables bound in place of textures (lower/texture.rs).
            E::ImageSample { .. } | E::ImageLoad { .. } => {
                return match scope {
                    Scope::Function(frame) => self.texture(frame, expr, out),
                    Scope::Module => Err(self.unsupported("a texture read at module scope")),
                }
            }
            E::ImageQuery { query, .. } => {
                let name = match query {
                    naga::ImageQuery::Size { .. } => "`textureDimensions`",
                    naga::ImageQuery::NumLevels => "`textureNumLevels`",
                    naga::ImageQuery::NumLayers => "`textureNumLayers`",
                    naga::ImageQuery::NumSamples => "`textureNumSamples`",
                };
                return Err(self.unsupported(name));
            }
            E::Derivative { axis, ctrl, .. } => {
                return Err(self.unsupported(&derivative_name(*axis, *ctrl)))
            }
            E::AtomicResult { .. } => return Err(self.unsupported("an atomic operation's result")),
            E::WorkGroupUniformLoadResult { .. } => {
                return Err(self.unsupported("`workgroupUniformLoad`"))
            }
            E::ArrayLength(_) => return Err(self.unsupported("`arrayLength`")),
            other => return Err(self.unsupported(&format!("expression {other:?}"))),
        };
        Ok(Item::Value(v))
    }

    pub(super) fn load(&mut self, out: &mut Vec<Op>, p: &Place) -> Val {
        let n = p.ty.leaf_count();
        let dst = self.slots(n);
        let region = &p.region[p.offset..];
        match p.dynamic {
            None => {
                for (i, &d) in dst.iter().enumerate() {
                    self.emit(
                        out,
                        Op::Copy {
                            dst: d,
                            src: region[i],
                        },
                    );
                }
            }
            Some(offset) => self.emit(
                out,
                Op::Gather {
                    dst: dst.clone().into(),
                    src: region.into(),
                    offset,
                },
            ),
        }
        Val {
            ty: p.ty.clone(),
            slots: dst,
        }
    }

    /// Checked per-lane leaf offset `prev + idx * stride`.
    pub(super) fn dynamic_offset(
        &mut self,
        out: &mut Vec<Op>,
        idx: Slot,
        len: u32,
        stride: usize,
        prev: Option<Slot>,
    ) -> Slot {
        let at = self.site("");
        let mask = self.current();
        let checked = self.slot();
        self.emit(
            out,
            Op::CheckIndex {
                dst: checked,
                idx,
                len,
                mask,
                at,
            },
        );
        let scaled = if stride == 1 {
            checked
        } else {
            let s = self.fill(out, stride as u32);
            self.k2(out, plain(Opcode::IMul), checked, s, "")
        };
        match prev {
            None => scaled,
            Some(p) => self.k2(out, plain(Opcode::IAdd), p, scaled, ""),
        }
    }

    /// Element type and count for dynamic indexing.
    pub(super) fn element(&self, ty: &Ty) -> Lowered<(Ty, u32)> {
        Ok(match ty {
            Ty::Vector(n, k) => (Ty::Scalar(*k), *n as u32),
            Ty::Matrix {
                columns,
                rows,
                kind,
            } => (Ty::Vector(*rows, *kind), *columns as u32),
            Ty::Array(t, n) => ((**t).clone(), *n),
            _ => return Err(self.err(format!("cannot index into {ty}"))),
        })
    }

    /// Member type and leaf offset for constant indexing.
    pub(super) fn member(&self, ty: &Ty, index: u32) -> Lowered<(Ty, usize)> {
        let i = index as usize;
        Ok(match ty {
            Ty::Vector(_, k) => (Ty::Scalar(*k), i),
            Ty::Matrix { rows, kind, .. } => (Ty::Vector(*rows, *kind), i * *rows as usize),
            Ty::Array(t, _) => ((**t).clone(), i * t.leaf_count()),
            Ty::Struct { members, .. } => {
                let off = members[..i].iter().map(|(_, t)| t.leaf_count()).sum();
                (members[i].1.clone(), off)
            }
            Ty::Scalar(_) => return Err(self.err("cannot index a scalar")),
        })
    }

    pub(super) fn access_index_val(&self, b: &Val, index: u32) -> Lowered<Val> {
        let (ty, off) = self.member(&b.ty, index)?;
        let n = ty.leaf_count();
        Ok(Val {
            ty,
            slots: b.slots[off..off + n].to_vec(),
        })
    }
}
