//! Operators: unary and binary operators, `select`, relational built-ins,
//! conversions and bitcasts, each per scalar leaf.

use naga::{BinaryOperator as BO, ScalarKind as NK};

use crate::arith;
use crate::eval::ir::{Op, Slot};
use crate::eval::lanes::Opcode;
use crate::eval::perturb::Bound;
use crate::values::{ScalarKind as K, Ty};

use super::{half, plain, Compiler, LaneOp, Lowered, Val};

impl<'m> Compiler<'m> {
    pub(super) fn unary(
        &mut self,
        out: &mut Vec<Op>,
        op: naga::UnaryOperator,
        v: &Val,
    ) -> Lowered<Val> {
        let k =
            v.ty.scalar_kind()
                .ok_or_else(|| self.err("unary operator on a composite"))?;
        let (kern, what): (LaneOp, &str) = match (op, k) {
            (naga::UnaryOperator::Negate, K::F32) => (plain(Opcode::FNeg), "negation"),
            (naga::UnaryOperator::Negate, K::F16) => (plain(Opcode::FNeg), "negation"),
            (naga::UnaryOperator::Negate, K::I32) => (plain(Opcode::INeg), ""),
            (naga::UnaryOperator::LogicalNot, K::Bool) => (plain(Opcode::BNot), ""),
            (naga::UnaryOperator::BitwiseNot, K::I32 | K::U32) => (plain(Opcode::UNot), ""),
            (op, k) => return Err(self.err(format!("unary {op:?} on {}", k.wgsl()))),
        };
        let slots = v
            .slots
            .iter()
            .map(|&a| self.k1(out, kern, a, what))
            .collect();
        Ok(Val {
            ty: v.ty.clone(),
            slots,
        })
    }

    pub(super) fn bin_kernel(&self, op: BO, k: K) -> Lowered<(LaneOp, &'static str)> {
        use K::*;
        Ok(match (op, k) {
            (BO::Add, F32) => (plain(Opcode::FAdd), "addition"),
            (BO::Subtract, F32) => (plain(Opcode::FSub), "subtraction"),
            (BO::Multiply, F32) => (plain(Opcode::FMul), "multiplication"),
            (BO::Divide, F32) => (plain(Opcode::FDiv), "division"),
            (BO::Modulo, F32) => (plain(Opcode::FRem), "remainder"),
            (BO::Add, F16) => (half(Opcode::FAdd), "addition"),
            (BO::Subtract, F16) => (half(Opcode::FSub), "subtraction"),
            (BO::Multiply, F16) => (half(Opcode::FMul), "multiplication"),
            (BO::Divide, F16) => (half(Opcode::FDiv), "division"),
            // Inherited from e1 - e2 * trunc(e1 / e2), each step rounded to f16.
            (BO::Modulo, F16) => (plain(Opcode::HRem), "remainder"),
            (BO::Equal, F32 | F16) => (plain(Opcode::FEq), ""),
            (BO::NotEqual, F32 | F16) => (plain(Opcode::FNe), ""),
            (BO::Less, F32 | F16) => (plain(Opcode::FLt), ""),
            (BO::LessEqual, F32 | F16) => (plain(Opcode::FLe), ""),
            (BO::Greater, F32 | F16) => (plain(Opcode::FGt), ""),
            (BO::GreaterEqual, F32 | F16) => (plain(Opcode::FGe), ""),
            (BO::Add, I32 | U32) => (plain(Opcode::IAdd), ""),
            (BO::Subtract, I32 | U32) => (plain(Opcode::ISub), ""),
            (BO::Multiply, I32 | U32) => (plain(Opcode::IMul), ""),
            (BO::Divide, I32) => (plain(Opcode::SDiv), ""),
            (BO::Modulo, I32) => (plain(Opcode::SRem), ""),
            (BO::Divide, U32) => (plain(Opcode::UDiv), ""),
            (BO::Modulo, U32) => (plain(Opcode::URem), ""),
            (BO::Equal, I32 | U32 | Bool) => (plain(Opcode::IEq), ""),
            (BO::NotEqual, I32 | U32 | Bool) => (plain(Opcode::INe), ""),
            (BO::Less, I32) => (plain(Opcode::SLt), ""),
            (BO::LessEqual, I32) => (plain(Opcode::SLe), ""),
            (BO::Greater, I32) => (plain(Opcode::SGt), ""),
            (BO::GreaterEqual, I32) => (plain(Opcode::SGe), ""),
            (BO::Less, U32) => (plain(Opcode::ULt), ""),
            (BO::LessEqual, U32) => (plain(Opcode::ULe), ""),
            (BO::Greater, U32) => (plain(Opcode::UGt), ""),
            (BO::GreaterEqual, U32) => (plain(Opcode::UGe), ""),
            (BO::And | BO::LogicalAnd, I32 | U32 | Bool) => (plain(Opcode::UAnd), ""),
            (BO::InclusiveOr | BO::LogicalOr, I32 | U32 | Bool) => (plain(Opcode::UOr), ""),
            (BO::ExclusiveOr, I32 | U32 | Bool) => (plain(Opcode::UXor), ""),
            (BO::ShiftLeft, I32 | U32) => (plain(Opcode::UShl), ""),
            (BO::ShiftRight, U32) => (plain(Opcode::UShr), ""),
            (BO::ShiftRight, I32) => (plain(Opcode::SShr), ""),
            (op, k) => return Err(self.err(format!("binary {op:?} on {}", k.wgsl()))),
        })
    }

    pub(super) fn binary(
        &mut self,
        out: &mut Vec<Op>,
        op: BO,
        l: &Val,
        r: &Val,
        ty: &Ty,
    ) -> Lowered<Val> {
        let lk =
            l.ty.scalar_kind()
                .ok_or_else(|| self.err("binary operator on a composite"))?;
        if op == BO::Multiply {
            match (&l.ty, &r.ty) {
                (
                    Ty::Matrix {
                        columns,
                        rows,
                        kind,
                    },
                    Ty::Vector(..),
                ) => {
                    // (M·v)[r] = Σ_c M[c][r]·v[c], summed in column order.
                    let (c, rr) = (*columns as usize, *rows as usize);
                    let (mul, add) = (
                        self.bin_kernel(BO::Multiply, *kind)?.0,
                        self.bin_kernel(BO::Add, *kind)?.0,
                    );
                    let slots = (0..rr)
                        .map(|row| {
                            let terms: Vec<_> = (0..c)
                                .map(|col| (l.slots[col * rr + row], r.slots[col]))
                                .collect();
                            self.sum_products(out, mul, add, &terms)
                        })
                        .collect();
                    return Ok(Val {
                        ty: ty.clone(),
                        slots,
                    });
                }
                (
                    Ty::Vector(..),
                    Ty::Matrix {
                        columns,
                        rows,
                        kind,
                    },
                ) => {
                    // (v·M)[c] = Σ_r v[r]·M[c][r] = dot(v, column c).
                    let (c, rr) = (*columns as usize, *rows as usize);
                    let (mul, add) = (
                        self.bin_kernel(BO::Multiply, *kind)?.0,
                        self.bin_kernel(BO::Add, *kind)?.0,
                    );
                    let slots = (0..c)
                        .map(|col| {
                            let terms: Vec<_> = (0..rr)
                                .map(|row| (l.slots[row], r.slots[col * rr + row]))
                                .collect();
                            self.sum_products(out, mul, add, &terms)
                        })
                        .collect();
                    return Ok(Val {
                        ty: ty.clone(),
                        slots,
                    });
                }
                (
                    Ty::Matrix {
                        columns: lc,
                        rows: lr,
                        kind,
                    },
                    Ty::Matrix { columns: rc, .. },
                ) => {
                    let (lc, lr, rc) = (*lc as usize, *lr as usize, *rc as usize);
                    let (mul, add) = (
                        self.bin_kernel(BO::Multiply, *kind)?.0,
                        self.bin_kernel(BO::Add, *kind)?.0,
                    );
                    let mut slots = Vec::new();
                    for col in 0..rc {
                        for row in 0..lr {
                            let terms: Vec<_> = (0..lc)
                                .map(|k| (l.slots[k * lr + row], r.slots[col * lc + k]))
                                .collect();
                            slots.push(self.sum_products(out, mul, add, &terms));
                        }
                    }
                    return Ok(Val {
                        ty: ty.clone(),
                        slots,
                    });
                }
                _ => {}
            }
        }
        let (kern, what) = self.bin_kernel(op, lk)?;
        let n = l.slots.len().max(r.slots.len());
        let pick = |v: &Val, i: usize| {
            if v.slots.len() == 1 {
                v.slots[0]
            } else {
                v.slots[i]
            }
        };
        let slots: Vec<Slot> = (0..n)
            .map(|i| self.k2(out, kern, pick(l, i), pick(r, i), what))
            .collect();
        if op == BO::Divide && lk.is_float() {
            // x / y: 2.5 ULP (WGSL "Floating Point Accuracy").
            let rs = (0..n).map(|i| pick(r, i)).collect::<Vec<_>>();
            self.perturb(out, &slots, &rs, Some(Bound::Ulp(2.5)), lk == K::F16);
        }
        Ok(Val {
            ty: ty.clone(),
            slots,
        })
    }

    /// Σ aᵢ·bᵢ, left to right: ((a0·b0 + a1·b1) + a2·b2) ...
    pub(super) fn sum_products(
        &mut self,
        out: &mut Vec<Op>,
        mul: LaneOp,
        add: LaneOp,
        terms: &[(Slot, Slot)],
    ) -> Slot {
        let mut acc = self.k2(out, mul, terms[0].0, terms[0].1, "multiplication");
        for &(a, b) in &terms[1..] {
            let p = self.k2(out, mul, a, b, "multiplication");
            acc = self.k2(out, add, acc, p, "addition");
        }
        acc
    }

    pub(super) fn select(&mut self, out: &mut Vec<Op>, c: &Val, a: &Val, r: &Val) -> Val {
        let slots = (0..a.slots.len())
            .map(|i| {
                let cs = if c.slots.len() == 1 {
                    c.slots[0]
                } else {
                    c.slots[i]
                };
                self.k3(out, plain(Opcode::Select), r.slots[i], a.slots[i], cs, "")
            })
            .collect();
        Val {
            ty: a.ty.clone(),
            slots,
        }
    }

    pub(super) fn relational(
        &mut self,
        out: &mut Vec<Op>,
        fun: naga::RelationalFunction,
        v: &Val,
    ) -> Lowered<Val> {
        use naga::RelationalFunction as RF;
        let slots = match fun {
            RF::All | RF::Any => {
                let kern: LaneOp = if fun == RF::All {
                    plain(Opcode::UAnd)
                } else {
                    plain(Opcode::UOr)
                };
                let mut acc = v.slots[0];
                for &s in &v.slots[1..] {
                    acc = self.k2(out, kern, acc, s, "");
                }
                return Ok(Val {
                    ty: Ty::Scalar(K::Bool),
                    slots: vec![acc],
                });
            }
            RF::IsNan => v
                .slots
                .iter()
                .map(|&s| self.k1(out, plain(Opcode::FIsNan), s, ""))
                .collect(),
            RF::IsInf => v
                .slots
                .iter()
                .map(|&s| self.k1(out, plain(Opcode::FIsInf), s, ""))
                .collect(),
        };
        let n = v.slots.len() as u8;
        Ok(Val {
            ty: if n == 1 {
                Ty::Scalar(K::Bool)
            } else {
                Ty::Vector(n, K::Bool)
            },
            slots,
        })
    }

    pub(super) fn convert(
        &mut self,
        out: &mut Vec<Op>,
        v: &Val,
        kind: NK,
        convert: Option<u8>,
        ty: &Ty,
    ) -> Lowered<Val> {
        let from =
            v.ty.scalar_kind()
                .ok_or_else(|| self.err("conversion of a composite"))?;
        let Some(width) = convert else {
            // bitcast: 32-bit patterns are shared by f32/i32/u32, so it is free.
            let to = ty.scalar_kind().unwrap();
            if from == K::F16 || to == K::F16 {
                return self.bitcast_f16(out, v, ty);
            }
            return Ok(Val {
                ty: ty.clone(),
                slots: v.slots.clone(),
            });
        };
        let to = match (kind, width) {
            (NK::Float, 4) => K::F32,
            (NK::Float, 2) => K::F16,
            (NK::Sint, 4) => K::I32,
            (NK::Uint, 4) => K::U32,
            (NK::Bool, _) => K::Bool,
            _ => return Err(self.unsupported(&format!("conversion to {kind:?}{width}"))),
        };
        use K::*;
        let kern: Option<LaneOp> = match (from, to) {
            (a, b) if a == b => None,
            (I32, U32) | (U32, I32) => None,
            (F32, F16) => Some(plain(Opcode::FToH)),
            (F16, F32) => None,
            (F32 | F16, I32) => Some(plain(Opcode::FToI)),
            (F32 | F16, U32) => Some(plain(Opcode::FToU)),
            (F32 | F16, Bool) => Some(plain(Opcode::FToB)),
            (I32, F32) => Some(plain(Opcode::IToF)),
            (U32, F32) => Some(plain(Opcode::UToF)),
            (I32, F16) => Some(half(Opcode::IToF)),
            (U32, F16) => Some(half(Opcode::UToF)),
            (Bool, F32 | F16) => Some(plain(Opcode::BToF)),
            (I32 | U32, Bool) => Some(plain(Opcode::IToB)),
            (Bool, I32 | U32) => Some(plain(Opcode::BToI)),
            _ => {
                return Err(self.unsupported(&format!(
                    "conversion {} -> {}",
                    from.wgsl(),
                    to.wgsl()
                )))
            }
        };
        let slots = match kern {
            None => v.slots.clone(),
            Some(k) => v
                .slots
                .iter()
                .map(|&s| self.k1(out, k, s, "conversion"))
                .collect(),
        };
        Ok(Val {
            ty: ty.clone(),
            slots,
        })
    }

    /// bitcast between 32-bit scalars and vec2<f16> (and vec4<f16> ↔ vec2 of
    /// 32-bit), component 0 in the low half (WGSL 17.2 "bitcast").
    pub(super) fn bitcast_f16(&mut self, out: &mut Vec<Op>, v: &Val, ty: &Ty) -> Lowered<Val> {
        let from = v.ty.scalar_kind().unwrap();
        let to = ty.scalar_kind().unwrap();
        let n_out = ty.leaf_count();
        if from == K::F16 && to == K::F16 {
            return Ok(Val {
                ty: ty.clone(),
                slots: v.slots.clone(),
            });
        }
        let mut slots = Vec::new();
        if from == K::F16 {
            for pair in v.slots.chunks(2) {
                let dst = self.slot();
                fn pack(a: &[u32], o: &mut [u32]) {
                    o[0] = u32::from(arith::f16_bits(f32::from_bits(a[0])))
                        | (u32::from(arith::f16_bits(f32::from_bits(a[1]))) << 16);
                }
                self.emit(
                    out,
                    Op::PerLane {
                        f: pack,
                        dst: vec![dst].into(),
                        args: pair.into(),
                    },
                );
                slots.push(dst);
            }
        } else {
            for &s in &v.slots {
                let dst = self.slots(2);
                fn unpack(a: &[u32], o: &mut [u32]) {
                    o[0] = arith::f16_from_bits(a[0] as u16).to_bits();
                    o[1] = arith::f16_from_bits((a[0] >> 16) as u16).to_bits();
                }
                self.emit(
                    out,
                    Op::PerLane {
                        f: unpack,
                        dst: dst.clone().into(),
                        args: vec![s].into(),
                    },
                );
                slots.extend(dst);
            }
        }
        if slots.len() != n_out {
            return Err(self.err(format!("bitcast from {} to {ty}: sizes differ", v.ty)));
        }
        Ok(Val {
            ty: ty.clone(),
            slots,
        })
    }
}
