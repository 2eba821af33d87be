//! Module scope: constants, overrides and the initialisers of private
//! variables, computed once per batch in the prologue.

use naga::{Expression as E, Handle, Literal};

use crate::eval::ir::Op;
use crate::eval::ty::{ScalarKind as K, Ty};

use super::builtins::lane_bits;
use super::{Compiler, Val, R};

impl<'m> Compiler<'m> {
    /// A module-scope (constant, override or private initialiser) expression,
    /// computed once per batch in the prologue.
    pub(super) fn global_expr(&mut self, h: Handle<naga::Expression>) -> R<Val> {
        if let Some(v) = self.globals.get(&h) {
            return Ok(v.clone());
        }
        let saved = self.span;
        self.span = self.module.global_expressions.get_span(h);
        let ty = match &self.shader.info[h] {
            naga::proc::TypeResolution::Handle(t) => self.ty_of_handle(*t, self.span)?,
            naga::proc::TypeResolution::Value(inner) => self.ty_of_inner(inner, self.span)?,
        };
        let expr = &self.module.global_expressions[h];
        let mut pro = std::mem::take(&mut self.prologue);
        let v = match expr {
            E::Literal(l) => self.literal(&mut pro, l)?,
            E::Constant(c) => self.global_expr(self.module.constants[*c].init)?,
            E::Override(o) => self.override_val(*o)?,
            E::ZeroValue(_) => Val {
                slots: (0..ty.leaf_count())
                    .map(|_| self.fill(&mut pro, 0))
                    .collect(),
                ty,
            },
            E::Compose { components, .. } => {
                let mut slots = Vec::new();
                for &c in components {
                    slots.extend(self.global_expr(c)?.slots);
                }
                Val { ty, slots }
            }
            E::Splat { size, value } => {
                let v = self.global_expr(*value)?;
                Val {
                    ty,
                    slots: vec![v.slots[0]; *size as usize],
                }
            }
            _ => {
                // Operations on overrides: evaluate through a throwaway frame-less path.
                self.prologue = pro;
                let v = self.global_op(h)?;
                self.span = saved;
                self.globals.insert(h, v.clone());
                return Ok(v);
            }
        };
        self.prologue.extend(pro);
        self.span = saved;
        self.globals.insert(h, v.clone());
        Ok(v)
    }

    /// Module-scope operations (only overrides leave these un-folded).
    pub(super) fn global_op(&mut self, h: Handle<naga::Expression>) -> R<Val> {
        let expr = self.module.global_expressions[h].clone();
        let ty = match &self.shader.info[h] {
            naga::proc::TypeResolution::Handle(t) => self.ty_of_handle(*t, self.span)?,
            naga::proc::TypeResolution::Value(inner) => self.ty_of_inner(inner, self.span)?,
        };
        let mut pro = Vec::new();
        let v = match expr {
            E::Binary { op, left, right } => {
                let (l, r) = (self.global_expr(left)?, self.global_expr(right)?);
                self.binary(&mut pro, op, &l, &r, &ty)?
            }
            E::Unary { op, expr } => {
                let v = self.global_expr(expr)?;
                self.unary(&mut pro, op, &v)?
            }
            E::As {
                expr,
                kind,
                convert,
            } => {
                let v = self.global_expr(expr)?;
                self.convert(&mut pro, &v, kind, convert, &ty)?
            }
            E::Select {
                condition,
                accept,
                reject,
            } => {
                let (c, a, r) = (
                    self.global_expr(condition)?,
                    self.global_expr(accept)?,
                    self.global_expr(reject)?,
                );
                self.select(&mut pro, &c, &a, &r)
            }
            E::Math {
                fun,
                arg,
                arg1,
                arg2,
                arg3,
            } => {
                let mut args = vec![self.global_expr(arg)?];
                for a in [arg1, arg2, arg3].into_iter().flatten() {
                    args.push(self.global_expr(a)?);
                }
                self.math(&mut pro, fun, &args, &ty)?
            }
            E::AccessIndex { base, index } => {
                let b = self.global_expr(base)?;
                self.access_index_val(&b, index)?
            }
            other => return Err(self.unsupported(&format!("module-scope expression {other:?}"))),
        };
        self.prologue.extend(pro);
        Ok(v)
    }

    pub(super) fn override_val(&mut self, oh: Handle<naga::Override>) -> R<Val> {
        if let Some(v) = self.overrides.get(&oh) {
            return Ok(v.clone());
        }
        let o = &self.module.overrides[oh];
        let ty = self.ty_of_handle(o.ty, self.module.overrides.get_span(oh))?;
        let name = o.name.clone().unwrap_or_default();
        let id_key = o.id.map(|i| i.to_string());
        let given = self
            .override_values
            .get(&name)
            .or_else(|| id_key.as_ref().and_then(|k| self.override_values.get(k)));
        let v = match (given, o.init) {
            (Some(&x), _) => {
                let k = ty.scalar_kind().unwrap_or(K::F32);
                let bits = lane_bits(k, x);
                let dst = self.slot();
                self.consts.push((dst, bits));
                Val {
                    ty,
                    slots: vec![dst],
                }
            }
            (None, Some(init)) => self.global_expr(init)?,
            (None, None) => {
                return Err(self.shader.diagnostic(
                    self.module.overrides.get_span(oh),
                    format!("override `{name}` has no default; give it a value"),
                ))
            }
        };
        self.used_overrides.push(name);
        self.overrides.insert(oh, v.clone());
        Ok(v)
    }

    pub(super) fn literal(&mut self, out: &mut Vec<Op>, l: &Literal) -> R<Val> {
        let (k, bits) = match *l {
            Literal::F32(x) => (K::F32, x.to_bits()),
            Literal::F16(x) => (K::F16, x.to_f32().to_bits()),
            Literal::I32(x) => (K::I32, x as u32),
            Literal::U32(x) => (K::U32, x),
            Literal::Bool(b) => (K::Bool, u32::from(b)),
            Literal::AbstractFloat(x) => (K::F32, (x as f32).to_bits()),
            Literal::AbstractInt(x) => (K::I32, x as i32 as u32),
            other => return Err(self.unsupported(&format!("literal {other:?}"))),
        };
        Ok(Val {
            ty: Ty::Scalar(k),
            slots: vec![self.fill(out, bits)],
        })
    }
}
