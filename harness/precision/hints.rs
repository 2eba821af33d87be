//! Known cures, from the measured symptoms and the shape of the code: never
//! applied, each with the evidence that triggered it.

use super::observe::Acc;
use super::{Hint, Options};
use crate::eval::ir::{At, Op, Slot};
use crate::eval::lanes::Opcode;
use crate::eval::Program;

/// The defining kernel of each slot written once by a kernel.
fn definitions(ops: &[Op], defs: &mut std::collections::HashMap<Slot, (Opcode, [Slot; 4])>) {
    for op in ops {
        match op {
            Op::Kernel { op, dst, args, .. } => {
                defs.insert(*dst, (*op, *args));
            }
            Op::If { accept, reject, .. } => {
                definitions(accept, defs);
                definitions(reject, defs);
            }
            Op::Loop {
                body, continuing, ..
            } => {
                definitions(body, defs);
                definitions(continuing, defs);
            }
            Op::Switch { cases, .. } => {
                for c in cases {
                    definitions(&c.body, defs);
                }
            }
            _ => {}
        }
    }
}

/// The site of each kernel op, to find an operation's operands.
fn kernel_sites(ops: &[Op], out: &mut Vec<(At, Opcode, [Slot; 4])>) {
    for op in ops {
        match op {
            Op::Kernel { op, args, at, .. } => out.push((*at, *op, *args)),
            Op::If { accept, reject, .. } => {
                kernel_sites(accept, out);
                kernel_sites(reject, out);
            }
            Op::Loop {
                body, continuing, ..
            } => {
                kernel_sites(body, out);
                kernel_sites(continuing, out);
            }
            Op::Switch { cases, .. } => {
                for c in cases {
                    kernel_sites(&c.body, out);
                }
            }
            _ => {}
        }
    }
}

/// Known cures, from the measured symptoms and the shape of the code.
pub(super) fn hints(
    program: &Program,
    acc: &[Acc],
    opts: &Options,
    mean_rel: f64,
    twin: Option<f64>,
    describe: &dyn Fn(usize) -> String,
) -> Vec<Hint> {
    let code = program.code();
    let mut defs = std::collections::HashMap::new();
    definitions(&code.ops, &mut defs);
    let mut ks = Vec::new();
    kernel_sites(&code.ops, &mut ks);
    let one = |s: Slot| {
        code.consts
            .iter()
            .any(|&(c, b)| c == s && f32::from_bits(b) == 1.0)
    };
    let measured = twin.map(|t| (mean_rel, t));
    let mut out: Vec<Hint> = Vec::new();
    let mut push = |h: Hint| {
        if !out.iter().any(|o| o.line == h.line && o.cure == h.cure) {
            out.push(h);
        }
    };
    for &(at, op, args) in &ks {
        let a = &acc[at as usize];
        let line = code.sites[at as usize].line;
        if a.count == 0 {
            continue;
        }
        if op == Opcode::FSub && a.max_cancel >= opts.cancel_bits && one(args[0]) {
            if let Some(&(Opcode::FMul, [x, y, ..])) = defs.get(&args[1]) {
                if x == y {
                    let from_dot = matches!(defs.get(&x), Some((Opcode::FAdd, _)));
                    let p = a.cancel_at.as_ref().map(|c| c.0).unwrap_or(0);
                    let evidence = format!(
                        "`1 - x*x` on {} cancels up to {:.1} bits (at {}); {} of {} evaluations lose {} bits or more",
                        super::place(&opts.files, line),
                        a.max_cancel,
                        describe(p),
                        a.cancellations,
                        a.count,
                        opts.cancel_bits
                    );
                    if from_dot {
                        push(Hint {
                            line,
                            cure: "x is a dot product of unit vectors: form 1 - (n·h)² as the squared length of the cross product, dot(c, c) with c = cross(n, h), which does not cancel".into(),
                            evidence: evidence.clone(),
                            measured,
                        });
                    }
                    push(Hint {
                        line,
                        cure: "write 1 - x*x as (1 - x) * (1 + x): 1 - x is exact near x = 1, so no bits cancel".into(),
                        evidence,
                        measured,
                    });
                }
            }
        }
        if let Some(o) = a.overflow_at.as_ref() {
            if a.op.is_some_and(|o| o.1) && matches!(op, Opcode::FMul | Opcode::FDiv | Opcode::FAdd)
            {
                push(Hint {
                    line,
                    cure: "reorder so intermediate values stay below 65504 in f16 (divide before multiplying, or scale the operands)".into(),
                    evidence: format!(
                        "{} on {} overflows f16 at {} of {} points (first at {}, f64 value {:.6e}){}",
                        op.name(),
                        super::place(&opts.files, line),
                        a.overflow,
                        a.count,
                        describe(o.0),
                        o.1,
                        if a.hidden > 0 {
                            format!("; a later operation hides it at {} of them", a.hidden)
                        } else {
                            String::new()
                        }
                    ),
                    measured,
                });
            }
        }
        if let (Opcode::FDiv, Some(g), true) = (op, a.amp_at.as_ref(), a.amp_rel > 1e-2) {
            push(Hint {
                line,
                cure: "clamp the denominator away from zero (e.g. max(d, 1e-4)): a small denominator turns its absolute error into a large relative one".into(),
                evidence: format!(
                    "division on {} by denominators down to {:.3e}; the quotient's relative error there reaches {:.3e} (at {})",
                    super::place(&opts.files, line),
                    a.amp_factor, a.amp_rel, describe(g.0)
                ),
                measured,
            });
        }
    }
    out
}
