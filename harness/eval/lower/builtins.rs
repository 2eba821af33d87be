//! Built-in functions (WGSL "Built-in Functions"): the numeric, bit,
//! packing and matrix built-ins, scalarised.

use naga::MathFunction as MF;

use crate::arith;
use crate::eval::ir::{Op, Slot};
use crate::eval::lanes::Opcode;
use crate::eval::perturb::{spec_bound, Bound};
use crate::values::{ScalarKind as K, Ty};

use super::{plain, Compiler, LaneOp, Lowered, Val};

impl<'m> Compiler<'m> {
    pub(super) fn math(
        &mut self,
        out: &mut Vec<Op>,
        fun: MF,
        args: &[Val],
        ty: &Ty,
    ) -> Lowered<Val> {
        let k = args[0]
            .ty
            .scalar_kind()
            .ok_or_else(|| self.err(format!("{fun:?} on a composite")))?;
        let f16 = k == K::F16;
        let n = args[0].slots.len();
        let pick = |v: &Val, i: usize| {
            if v.slots.len() == 1 {
                v.slots[0]
            } else {
                v.slots[i]
            }
        };
        macro_rules! fk1 {
            ($t:ident) => {
                LaneOp {
                    op: Opcode::$t,
                    half: f16,
                }
            };
        }
        macro_rules! fk2 {
            ($t:ident) => {
                LaneOp {
                    op: Opcode::$t,
                    half: f16,
                }
            };
        }
        macro_rules! fk3 {
            ($t:ident) => {
                LaneOp {
                    op: Opcode::$t,
                    half: f16,
                }
            };
        }
        let name = wgsl_builtin_name(fun);
        let name = name.as_str();
        let unary = |c: &mut Self, out: &mut Vec<Op>, kern: LaneOp| -> Val {
            let what = if k.is_float() { name } else { "" };
            Val {
                ty: ty.clone(),
                slots: args[0]
                    .slots
                    .iter()
                    .map(|&s| c.k1(out, kern, s, what))
                    .collect(),
            }
        };
        let float1 = if k.is_float() {
            float_unary(fun, f16)
        } else {
            None
        };
        if let Some(kern) = float1 {
            let v = unary(self, out, kern);
            self.perturb(out, &v.slots, &args[0].slots, spec_bound(fun, f16), f16);
            return Ok(v);
        }
        let int1: Option<LaneOp> = match (fun, k) {
            (MF::Abs, K::I32) => Some(plain(Opcode::IAbs)),
            (MF::Abs, K::U32) => {
                return Ok(Val {
                    ty: ty.clone(),
                    slots: args[0].slots.clone(),
                })
            }
            (MF::Sign, K::I32) => Some(plain(Opcode::ISign)),
            (MF::CountOneBits, K::I32 | K::U32) => Some(plain(Opcode::UCountOnes)),
            (MF::CountLeadingZeros, K::I32 | K::U32) => Some(plain(Opcode::UClz)),
            (MF::CountTrailingZeros, K::I32 | K::U32) => Some(plain(Opcode::UCtz)),
            (MF::ReverseBits, K::I32 | K::U32) => Some(plain(Opcode::UReverse)),
            (MF::FirstLeadingBit, K::U32) => Some(plain(Opcode::UFirstLeading)),
            (MF::FirstLeadingBit, K::I32) => Some(plain(Opcode::IFirstLeading)),
            (MF::FirstTrailingBit, K::I32 | K::U32) => Some(plain(Opcode::UFirstTrailing)),
            _ => None,
        };
        if let Some(kern) = int1 {
            return Ok(unary(self, out, kern));
        }
        // Component-wise binary and ternary built-ins (scalars broadcast).
        let bin: Option<(LaneOp, &str)> = match (fun, k) {
            (MF::Min, K::F32 | K::F16) => Some((fk2!(FMin), "min")),
            (MF::Max, K::F32 | K::F16) => Some((fk2!(FMax), "max")),
            (MF::Min, K::I32) => Some((plain(Opcode::SMin), "")),
            (MF::Max, K::I32) => Some((plain(Opcode::SMax), "")),
            (MF::Min, K::U32) => Some((plain(Opcode::UMin), "")),
            (MF::Max, K::U32) => Some((plain(Opcode::UMax), "")),
            (MF::Atan2, K::F32 | K::F16) => Some((fk2!(FAtan2), "atan2")),
            (MF::Pow, K::F32 | K::F16) => Some((fk2!(FPow), "pow")),
            (MF::Step, K::F32 | K::F16) => Some((fk2!(FStep), "")),
            (MF::Ldexp, K::F32 | K::F16) => Some((fk2!(FLdexp), "ldexp")),
            (MF::Dot4I8Packed, _) => Some((plain(Opcode::IDot4I8), "")),
            (MF::Dot4U8Packed, _) => Some((plain(Opcode::IDot4U8), "")),
            _ => None,
        };
        if let Some((kern, what)) = bin {
            let m = n.max(args[1].slots.len());
            let slots: Vec<Slot> = (0..m)
                .map(|i| self.k2(out, kern, pick(&args[0], i), pick(&args[1], i), what))
                .collect();
            if k.is_float() {
                self.perturb(out, &slots, &args[0].slots, spec_bound(fun, f16), f16);
            }
            return Ok(Val {
                ty: ty.clone(),
                slots,
            });
        }
        let tern: Option<(LaneOp, &str)> = match (fun, k) {
            (MF::Clamp, K::F32 | K::F16) => Some((fk3!(FClamp), "clamp")),
            (MF::Clamp, K::I32) => Some((plain(Opcode::SClamp), "")),
            (MF::Clamp, K::U32) => Some((plain(Opcode::UClamp), "")),
            (MF::Mix, K::F32) => Some((plain(Opcode::FMix), "mix")),
            (MF::SmoothStep, K::F32) => Some((plain(Opcode::FSmooth), "smoothstep")),
            // The f16 forms round after every step of the spec's formula.
            (MF::Mix, K::F16) => Some((plain(Opcode::HMix), "mix")),
            (MF::SmoothStep, K::F16) => Some((plain(Opcode::HSmooth), "smoothstep")),
            (MF::Fma, K::F32) => Some((plain(Opcode::FFma), "fma")),
            (MF::Fma, K::F16) => Some((plain(Opcode::HFma), "fma")),
            (MF::ExtractBits, K::U32) => Some((plain(Opcode::UExtract), "")),
            (MF::ExtractBits, K::I32) => Some((plain(Opcode::SExtract), "")),
            _ => None,
        };
        if let Some((kern, what)) = tern {
            let m = args.iter().map(|a| a.slots.len()).max().unwrap();
            let slots = (0..m)
                .map(|i| {
                    self.k3(
                        out,
                        kern,
                        pick(&args[0], i),
                        pick(&args[1], i),
                        pick(&args[2], i),
                        what,
                    )
                })
                .collect();
            return Ok(Val {
                ty: ty.clone(),
                slots,
            });
        }
        let (mul, add, sub) = if k.is_float() {
            (fk2!(FMul), fk2!(FAdd), fk2!(FSub))
        } else {
            (
                plain(Opcode::IMul),
                plain(Opcode::IAdd),
                plain(Opcode::ISub),
            )
        };
        let (div, sqrt): (LaneOp, LaneOp) = (fk2!(FDiv), fk1!(FSqrt));
        let scalar = |s: Slot| Val {
            ty: ty.clone(),
            slots: vec![s],
        };
        Ok(match fun {
            MF::InsertBits => {
                let dst = self.slot();
                let mut slots = Vec::new();
                let _ = dst;
                for i in 0..n {
                    let d = self.slot();
                    let at = self.site("");
                    self.emit(
                        out,
                        Op::Kernel {
                            op: Opcode::UInsert,
                            half: false,
                            dst: d,
                            args: [
                                pick(&args[0], i),
                                pick(&args[1], i),
                                args[2].slots[0],
                                args[3].slots[0],
                            ],
                            at,
                        },
                    );
                    slots.push(d);
                }
                Val {
                    ty: ty.clone(),
                    slots,
                }
            }
            MF::Dot => {
                let terms: Vec<_> = (0..n)
                    .map(|i| (args[0].slots[i], args[1].slots[i]))
                    .collect();
                scalar(self.sum_products(out, mul, add, &terms))
            }
            MF::Length => {
                if n == 1 {
                    return Ok(unary(self, out, fk1!(FAbs)));
                }
                let terms: Vec<_> = (0..n)
                    .map(|i| (args[0].slots[i], args[0].slots[i]))
                    .collect();
                let d = self.sum_products(out, mul, add, &terms);
                let r = self.k1(out, sqrt, d, "sqrt in length");
                self.perturb(out, &[r], &[d], spec_bound(MF::Sqrt, f16), f16);
                scalar(r)
            }
            MF::Distance => {
                let diff: Vec<_> = (0..n)
                    .map(|i| self.k2(out, sub, args[0].slots[i], args[1].slots[i], "subtraction"))
                    .collect();
                if n == 1 {
                    return Ok(scalar(self.k1(out, fk1!(FAbs), diff[0], "")));
                }
                let terms: Vec<_> = diff.iter().map(|&d| (d, d)).collect();
                let d = self.sum_products(out, mul, add, &terms);
                let r = self.k1(out, sqrt, d, "sqrt in distance");
                self.perturb(out, &[r], &[d], spec_bound(MF::Sqrt, f16), f16);
                scalar(r)
            }
            MF::Normalize => {
                // normalize(e) = e / length(e) (17.5 "normalize").
                let terms: Vec<_> = (0..n)
                    .map(|i| (args[0].slots[i], args[0].slots[i]))
                    .collect();
                let d = self.sum_products(out, mul, add, &terms);
                let len = self.k1(out, sqrt, d, "sqrt in normalize");
                self.perturb(out, &[len], &[d], spec_bound(MF::Sqrt, f16), f16);
                let slots: Vec<Slot> = args[0]
                    .slots
                    .iter()
                    .map(|&s| self.k2(out, div, s, len, "division in normalize"))
                    .collect();
                self.perturb(out, &slots, &[len], Some(Bound::Ulp(2.5)), f16);
                Val {
                    ty: ty.clone(),
                    slots,
                }
            }
            MF::Cross => {
                let (a, b) = (&args[0].slots, &args[1].slots);
                let mut c = |i: usize, j: usize| {
                    let p = self.k2(out, mul, a[i], b[j], "multiplication");
                    let q = self.k2(out, mul, a[j], b[i], "multiplication");
                    self.k2(out, sub, p, q, "subtraction")
                };
                let slots = vec![c(1, 2), c(2, 0), c(0, 1)];
                Val {
                    ty: ty.clone(),
                    slots,
                }
            }
            MF::FaceForward => {
                // faceForward(e1, e2, e3) = e1 if dot(e2, e3) < 0 else -e1.
                let terms: Vec<_> = (0..n)
                    .map(|i| (args[1].slots[i], args[2].slots[i]))
                    .collect();
                let d = self.sum_products(out, mul, add, &terms);
                let zero = self.fill(out, 0);
                let neg = self.k2(out, plain(Opcode::FLt), d, zero, "");
                let slots = args[0]
                    .slots
                    .iter()
                    .map(|&e| {
                        let m = self.k1(out, plain(Opcode::FNeg), e, "");
                        self.k3(out, plain(Opcode::Select), m, e, neg, "")
                    })
                    .collect();
                Val {
                    ty: ty.clone(),
                    slots,
                }
            }
            MF::Reflect => {
                // reflect(e1, e2) = e1 - 2 * dot(e2, e1) * e2.
                let terms: Vec<_> = (0..n)
                    .map(|i| (args[1].slots[i], args[0].slots[i]))
                    .collect();
                let d = self.sum_products(out, mul, add, &terms);
                let two = self.fill(out, float_bits(k, 2.0));
                let t = self.k2(out, mul, two, d, "multiplication");
                let slots = (0..n)
                    .map(|i| {
                        let p = self.k2(out, mul, t, args[1].slots[i], "multiplication");
                        self.k2(out, sub, args[0].slots[i], p, "subtraction")
                    })
                    .collect();
                Val {
                    ty: ty.clone(),
                    slots,
                }
            }
            MF::Refract => {
                // k = 1 - e3² (1 - dot(e2,e1)²); k < 0 → 0, else
                // e3·e1 - (e3·dot(e2,e1) + sqrt(k))·e2 (17.5 "refract").
                let eta = args[2].slots[0];
                let terms: Vec<_> = (0..n)
                    .map(|i| (args[1].slots[i], args[0].slots[i]))
                    .collect();
                let d = self.sum_products(out, mul, add, &terms);
                let one = self.fill(out, float_bits(k, 1.0));
                let zero = self.fill(out, 0);
                let dd = self.k2(out, mul, d, d, "multiplication");
                let omd = self.k2(out, sub, one, dd, "subtraction");
                let ee = self.k2(out, mul, eta, eta, "multiplication");
                let eeo = self.k2(out, mul, ee, omd, "multiplication");
                let kk = self.k2(out, sub, one, eeo, "subtraction");
                let neg = self.k2(out, plain(Opcode::FLt), kk, zero, "");
                // sqrt(k) only matters where k >= 0; not traced for NaN.
                let sq = self.k1(out, sqrt, kk, "");
                let ed = self.k2(out, mul, eta, d, "multiplication");
                let coef = self.k2(out, add, ed, sq, "");
                let slots = (0..n)
                    .map(|i| {
                        let a = self.k2(out, mul, eta, args[0].slots[i], "");
                        let b = self.k2(out, mul, coef, args[1].slots[i], "");
                        let r = self.k2(out, sub, a, b, "");
                        self.k3(out, plain(Opcode::Select), r, zero, neg, "")
                    })
                    .collect();
                Val {
                    ty: ty.clone(),
                    slots,
                }
            }
            MF::Outer => {
                let (a, b) = (&args[0].slots, &args[1].slots);
                let mut slots = Vec::new();
                for &bj in b.iter() {
                    for &ai in a.iter() {
                        slots.push(self.k2(out, mul, ai, bj, "multiplication"));
                    }
                }
                Val {
                    ty: ty.clone(),
                    slots,
                }
            }
            MF::Transpose => {
                let Ty::Matrix { columns, rows, .. } = args[0].ty else {
                    return Err(self.err("transpose of a non-matrix"));
                };
                let (c, r) = (columns as usize, rows as usize);
                let mut slots = Vec::new();
                for row in 0..r {
                    for col in 0..c {
                        slots.push(args[0].slots[col * r + row]);
                    }
                }
                Val {
                    ty: ty.clone(),
                    slots,
                }
            }
            MF::Determinant => {
                let Ty::Matrix { columns, .. } = args[0].ty else {
                    return Err(self.err("determinant of a non-matrix"));
                };
                let m = args[0].slots.clone();
                let dim = columns as usize;
                scalar(self.det(out, &m, dim, (0..dim).collect(), mul, add, sub))
            }
            MF::Modf | MF::Frexp => {
                let mut a = Vec::new();
                let mut b = Vec::new();
                for &s in &args[0].slots {
                    let dst = self.slots(2);
                    fn modf32(i: &[u32], o: &mut [u32]) {
                        let (f, w) = arith::modf(f32::from_bits(i[0]));
                        o[0] = f.to_bits();
                        o[1] = w.to_bits();
                    }
                    fn frexp32(i: &[u32], o: &mut [u32]) {
                        let (f, e) = arith::frexp(f32::from_bits(i[0]));
                        o[0] = f.to_bits();
                        o[1] = e as u32;
                    }
                    let f: crate::eval::ir::LaneFn = if fun == MF::Modf { modf32 } else { frexp32 };
                    self.emit(
                        out,
                        Op::PerLane {
                            f,
                            dst: dst.clone().into(),
                            args: vec![s].into(),
                        },
                    );
                    a.push(dst[0]);
                    b.push(dst[1]);
                }
                a.extend(b);
                Val {
                    ty: ty.clone(),
                    slots: a,
                }
            }
            MF::Pack4x8snorm
            | MF::Pack4x8unorm
            | MF::Pack2x16snorm
            | MF::Pack2x16unorm
            | MF::Pack2x16float
            | MF::Pack4xI8
            | MF::Pack4xU8
            | MF::Pack4xI8Clamp
            | MF::Pack4xU8Clamp => {
                let f: crate::eval::ir::LaneFn = match fun {
                    MF::Pack4x8snorm => |i, o| {
                        o[0] = arith::pack4x8snorm(std::array::from_fn(|j| f32::from_bits(i[j])))
                    },
                    MF::Pack4x8unorm => |i, o| {
                        o[0] = arith::pack4x8unorm(std::array::from_fn(|j| f32::from_bits(i[j])))
                    },
                    MF::Pack2x16snorm => |i, o| {
                        o[0] = arith::pack2x16snorm(std::array::from_fn(|j| f32::from_bits(i[j])))
                    },
                    MF::Pack2x16unorm => |i, o| {
                        o[0] = arith::pack2x16unorm(std::array::from_fn(|j| f32::from_bits(i[j])))
                    },
                    MF::Pack2x16float => |i, o| {
                        o[0] = arith::pack2x16float(std::array::from_fn(|j| f32::from_bits(i[j])))
                    },
                    MF::Pack4xI8 => {
                        |i, o| o[0] = arith::pack4xi8(std::array::from_fn(|j| i[j] as i32))
                    }
                    MF::Pack4xU8 => |i, o| o[0] = arith::pack4xu8(std::array::from_fn(|j| i[j])),
                    MF::Pack4xI8Clamp => {
                        |i, o| o[0] = arith::pack4xi8_clamp(std::array::from_fn(|j| i[j] as i32))
                    }
                    _ => |i, o| o[0] = arith::pack4xu8_clamp(std::array::from_fn(|j| i[j])),
                };
                let dst = self.slot();
                self.emit(
                    out,
                    Op::PerLane {
                        f,
                        dst: vec![dst].into(),
                        args: args[0].slots.clone().into(),
                    },
                );
                scalar(dst)
            }
            MF::Unpack4x8snorm
            | MF::Unpack4x8unorm
            | MF::Unpack2x16snorm
            | MF::Unpack2x16unorm
            | MF::Unpack2x16float
            | MF::Unpack4xI8
            | MF::Unpack4xU8 => {
                let f: crate::eval::ir::LaneFn = match fun {
                    MF::Unpack4x8snorm => |i, o| put_f32(o, &arith::unpack4x8snorm(i[0])),
                    MF::Unpack4x8unorm => |i, o| put_f32(o, &arith::unpack4x8unorm(i[0])),
                    MF::Unpack2x16snorm => |i, o| put_f32(o, &arith::unpack2x16snorm(i[0])),
                    MF::Unpack2x16unorm => |i, o| put_f32(o, &arith::unpack2x16unorm(i[0])),
                    MF::Unpack2x16float => |i, o| put_f32(o, &arith::unpack2x16float(i[0])),
                    MF::Unpack4xI8 => |i, o| {
                        for (d, v) in o.iter_mut().zip(arith::unpack4xi8(i[0])) {
                            *d = v as u32
                        }
                    },
                    _ => |i, o| o.copy_from_slice(&arith::unpack4xu8(i[0])),
                };
                let dst = self.slots(ty.leaf_count());
                self.emit(
                    out,
                    Op::PerLane {
                        f,
                        dst: dst.clone().into(),
                        args: vec![args[0].slots[0]].into(),
                    },
                );
                Val {
                    ty: ty.clone(),
                    slots: dst,
                }
            }
            MF::Inverse => return Err(self.unsupported("`inverse` (not a WGSL built-in)")),
            other => return Err(self.unsupported(&format!("built-in {other:?} on {}", k.wgsl()))),
        })
    }

    /// Determinant by cofactor expansion along the first used column.
    #[allow(clippy::too_many_arguments)]
    pub(super) fn det(
        &mut self,
        out: &mut Vec<Op>,
        m: &[Slot],
        dim: usize,
        rows: Vec<usize>,
        mul: LaneOp,
        add: LaneOp,
        sub: LaneOp,
    ) -> Slot {
        let col = dim - rows.len();
        let at = |r: usize, c: usize| m[c * dim + r];
        if rows.len() == 2 {
            let a = self.k2(
                out,
                mul,
                at(rows[0], col),
                at(rows[1], col + 1),
                "multiplication",
            );
            let b = self.k2(
                out,
                mul,
                at(rows[1], col),
                at(rows[0], col + 1),
                "multiplication",
            );
            return self.k2(out, sub, a, b, "subtraction");
        }
        let mut acc: Option<Slot> = None;
        for (i, &r) in rows.iter().enumerate() {
            let rest: Vec<usize> = rows.iter().copied().filter(|&x| x != r).collect();
            let minor = self.det(out, m, dim, rest, mul, add, sub);
            let term = self.k2(out, mul, at(r, col), minor, "multiplication");
            acc = Some(match acc {
                None => term,
                Some(a) if i % 2 == 1 => self.k2(out, sub, a, term, "subtraction"),
                Some(a) => self.k2(out, add, a, term, "addition"),
            });
        }
        acc.unwrap()
    }
}

/// WGSL spelling of a built-in: naga's variant name with a lower-case initial.
pub(super) fn wgsl_builtin_name(fun: MF) -> String {
    let s = format!("{fun:?}");
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_lowercase().chain(c).collect(),
        None => s,
    }
}

/// Kernel of a one-argument float built-in, f16 variants rounding every result.
pub(super) fn float_unary(fun: MF, f16: bool) -> Option<LaneOp> {
    macro_rules! fk {
        ($t:ident) => {
            LaneOp {
                op: Opcode::$t,
                half: f16,
            }
        };
    }
    Some(match fun {
        MF::Abs => fk!(FAbs),
        MF::Saturate => fk!(FSaturate),
        MF::Cos => fk!(FCos),
        MF::Cosh => fk!(FCosh),
        MF::Sin => fk!(FSin),
        MF::Sinh => fk!(FSinh),
        MF::Tan => fk!(FTan),
        MF::Tanh => fk!(FTanh),
        MF::Acos => fk!(FAcos),
        MF::Asin => fk!(FAsin),
        MF::Atan => fk!(FAtan),
        MF::Asinh => fk!(FAsinh),
        MF::Acosh => fk!(FAcosh),
        MF::Atanh => fk!(FAtanh),
        // f16: the spec's constant is itself rounded to f16 (see `arith`).
        MF::Radians if f16 => plain(Opcode::HRadians),
        MF::Degrees if f16 => plain(Opcode::HDegrees),
        MF::Radians => plain(Opcode::FRadians),
        MF::Degrees => plain(Opcode::FDegrees),
        MF::Ceil => fk!(FCeil),
        MF::Floor => fk!(FFloor),
        MF::Round => fk!(FRound),
        MF::Fract => fk!(FFract),
        MF::Trunc => fk!(FTrunc),
        MF::Exp => fk!(FExp),
        MF::Exp2 => fk!(FExp2),
        MF::Log => fk!(FLog),
        MF::Log2 => fk!(FLog2),
        MF::Sign => fk!(FSign),
        MF::Sqrt => fk!(FSqrt),
        MF::InverseSqrt => fk!(FInvSqrt),
        MF::QuantizeToF16 => plain(Opcode::FQuantize16),
        _ => return None,
    })
}

pub(super) fn put_f32(o: &mut [u32], v: &[f32]) {
    for (d, x) in o.iter_mut().zip(v) {
        *d = x.to_bits();
    }
}

pub(super) fn float_bits(_k: K, v: f32) -> u32 {
    v.to_bits()
}

/// Lane representation of an f64 value of `kind` (f16 lives as its f32 value).
pub fn lane_bits(kind: K, v: f64) -> u32 {
    match kind {
        K::F16 => half::f16::from_f64(v).to_f32().to_bits(),
        k => crate::values::f64_to_bits(k, v),
    }
}
