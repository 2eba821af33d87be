//! Module scope: constants, overrides and the initialisers of private
//! variables, computed once per batch in the prologue.

use naga::{Handle, Literal};

use crate::eval::ir::Op;
use crate::values::{ScalarKind as K, Ty};

use super::builtins::lane_bits;
use super::{Compiler, Item, Lowered, Scope, Val};

impl<'m> Compiler<'m> {
    /// A module-scope (constant, override or private initialiser) expression,
    /// lowered once (through the one dispatcher, [`Compiler::expr`]) into the
    /// prologue, which runs once per batch.
    pub(super) fn global_expr(&mut self, h: Handle<naga::Expression>) -> Lowered<Val> {
        if let Some(v) = self.globals.get(&h) {
            return Ok(v.clone());
        }
        let saved = self.span;
        self.span = self.module.global_expressions.get_span(h);
        let mut pro = Vec::new();
        let v = match self.expr(&mut Scope::Module, h, &mut pro)? {
            Item::Value(v) => v,
            Item::Place(_) => return Err(self.err("expected a value, found a pointer")),
        };
        self.prologue.extend(pro);
        self.span = saved;
        self.globals.insert(h, v.clone());
        Ok(v)
    }

    pub(super) fn override_val(&mut self, oh: Handle<naga::Override>) -> Lowered<Val> {
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

    pub(super) fn literal(&mut self, out: &mut Vec<Op>, l: &Literal) -> Lowered<Val> {
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
