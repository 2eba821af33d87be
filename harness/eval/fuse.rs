//! Fusion: a peephole pass that replaces common chains of two float
//! operations by one fused kernel ([`Opcode::FMulAdd`], ...) computing the
//! same bits in one pass over the lanes, so the intermediate column is never
//! written or read.
//!
//! A chain is fused where the intermediate is dead after its one use: an
//! `Op::Kernel` writes a slot that nothing else in the program writes and
//! exactly one later kernel of the same block reads, once, within
//! [`WINDOW`] ops, with only kernels in between that write none of the first
//! op's operands. Both ops are f32 (`half` false): the fused kernels round
//! after each operation exactly as the plain ones do, and in the plain ops'
//! operand order, so NaN payloads are the same too; there is never a single
//! rounding like `fma`. The fused op takes the second op's site.
//!
//! Then two single-op forms that read one column less: `x * x` becomes
//! [`Opcode::FSq`] and `1 - x` (the first operand a constant slot holding
//! 1.0) [`Opcode::FOneMinus`].
//!
//! Only the executor runs fused code. The shadow executor, the precision
//! analysis and NaN tracing run the lowered code, one op per source
//! operation: the analysis reports each operation's rounding at its own
//! site, and tracing names the first operation that produced a NaN, which a
//! fused op would hide.

use std::collections::HashMap;

use super::ir::{Code, Op, Slot, Use};
use super::lanes::Opcode;

/// How far after the first op of a chain its reader may be.
const WINDOW: usize = 3;

/// The fused form of `first` (operands `x`, `y`, result `t`) followed by
/// `second` reading `t` at operand `pos` and `z` at the other: the fused
/// opcode and its three operands in the order its row in `lanes` takes them.
fn chain(first: Opcode, second: Opcode, pos: usize) -> Option<(Opcode, Order)> {
    use Opcode as O;
    Some(match (first, second, pos) {
        (O::FMul, O::FAdd, 0) => (O::FMulAdd, Order::ProductFirst),
        (O::FMul, O::FAdd, 1) => (O::FAddMul, Order::ProductLast),
        (O::FMul, O::FSub, 0) => (O::FMulSub, Order::ProductFirst),
        (O::FMul, O::FSub, 1) => (O::FSubMul, Order::ProductLast),
        (O::FMul, O::FMul, 0) => (O::FMulMul, Order::ProductFirst),
        (O::FMul, O::FMul, 1) => (O::FMulBy, Order::ProductLast),
        (O::FMul, O::FDiv, 1) => (O::FDivBy, Order::ProductLast),
        (O::FSub, O::FMul, 0) => (O::FDiffMul, Order::ProductFirst),
        _ => return None,
    })
}

/// Operand order of a fused op: the first op's operands first, `(x, y, z)`,
/// or last, `(z, x, y)`.
#[derive(Clone, Copy)]
enum Order {
    ProductFirst,
    ProductLast,
}

/// Forward copies, drop unread callee masks and fuse the chains of `code`
/// (see the module doc).
pub(crate) fn fuse(mut code: Code) -> Code {
    forward_copies(&mut code);
    drop_unread_masks(&mut code);
    let counts = Counts::of(&mut code);
    let one: Vec<Slot> = code
        .consts
        .iter()
        .filter(|c| c.1 == 1f32.to_bits())
        .map(|c| c.0)
        .collect();
    fuse_block(&mut code.ops, &counts, &one);
    code
}

/// `d = copy s`, where `d` is written by nothing else and `s` by at most
/// one op before it (or is an input or constant, never written): every read
/// of `d` reads `s` instead and the copy goes. Sound because the verifier
/// proved `s` written before the copy and `d` before each of its reads in
/// op order within the same iteration of any loop around them, and `s` has
/// no later write that could change it in between.
fn forward_copies(code: &mut Code) {
    let counts = Counts::of(code);
    let read_only: std::collections::HashSet<Slot> = code
        .input_slots
        .iter()
        .chain(code.consts.iter().map(|c| &c.0))
        .copied()
        .collect();
    // Masks change without being written (exits, kills): never forwarded.
    let masks: std::collections::HashSet<Slot> = counts
        .mask_uses
        .keys()
        .chain(code.sites.iter().map(|s| &s.mask))
        .chain([&code.root_mask])
        .copied()
        .collect();
    let mut to: HashMap<Slot, Slot> = HashMap::new();
    find_copies(&code.ops, &mut |dst, src| {
        let single = counts.writes.get(&src).copied().unwrap_or(0) <= 1 || read_only.contains(&src);
        if single
            && !masks.contains(&src)
            && !counts.pinned.contains(&dst)
            && counts.writes.get(&dst) == Some(&1)
        {
            to.insert(dst, src);
        }
    });
    if to.is_empty() {
        return;
    }
    let resolve = |mut s: Slot| {
        while let Some(&t) = to.get(&s) {
            s = t;
        }
        s
    };
    forward_block(&mut code.ops, &to, &resolve);
}

fn find_copies(ops: &[Op], f: &mut dyn FnMut(Slot, Slot)) {
    for op in ops {
        match op {
            Op::Copy { dst, src } => f(*dst, *src),
            Op::If { accept, reject, .. } => {
                find_copies(accept, f);
                find_copies(reject, f);
            }
            Op::Loop {
                body, continuing, ..
            } => {
                find_copies(body, f);
                find_copies(continuing, f);
            }
            Op::Switch { cases, .. } => {
                for c in cases {
                    find_copies(&c.body, f);
                }
            }
            _ => {}
        }
    }
}

fn forward_block(ops: &mut Vec<Op>, to: &HashMap<Slot, Slot>, resolve: &dyn Fn(Slot) -> Slot) {
    ops.retain(|op| !matches!(op, Op::Copy { dst, .. } if to.contains_key(dst)));
    for op in ops.iter_mut() {
        op.own_slots(&mut |s, u| {
            if matches!(u, Use::Read | Use::BreakIf) {
                *s = resolve(*s);
            }
        });
        for b in op.blocks_mut() {
            forward_block(b, to, resolve);
        }
    }
}

/// An inlined callee's mask that no op reads (the callee never returns
/// early, so nothing clears it) equals its parent throughout: the `Enter`
/// that copies it goes, and the sites that name it name the parent.
fn drop_unread_masks(code: &mut Code) {
    let counts = Counts::of(code);
    let mut to: HashMap<Slot, Slot> = HashMap::new();
    drop_enters(&mut code.ops, &counts, &mut to);
    for site in &mut code.sites {
        while let Some(&p) = to.get(&site.mask) {
            site.mask = p;
        }
    }
}

fn drop_enters(ops: &mut Vec<Op>, counts: &Counts, to: &mut HashMap<Slot, Slot>) {
    ops.retain(|op| match *op {
        Op::Enter { mask, parent } if counts.mask_uses.get(&mask) == Some(&1) => {
            to.insert(mask, parent);
            false
        }
        _ => true,
    });
    for op in ops.iter_mut() {
        for b in op.blocks_mut() {
            drop_enters(b, counts, to);
        }
    }
}

/// How often each slot is read and written in the whole program.
#[derive(Default)]
struct Counts {
    reads: HashMap<Slot, u32>,
    writes: HashMap<Slot, u32>,
    /// Uses as a mask, by constructs, exits and kills (not by sites).
    mask_uses: HashMap<Slot, u32>,
    /// Slots that are never intermediates: inputs, outputs, constants, masks.
    pinned: std::collections::HashSet<Slot>,
}

impl Counts {
    fn of(code: &mut Code) -> Counts {
        let mut counts = Counts::default();
        counts.pinned.extend(
            code.input_slots
                .iter()
                .chain(&code.output_slots)
                .chain(code.consts.iter().map(|c| &c.0))
                .chain([&code.root_mask])
                .chain(code.sites.iter().map(|s| &s.mask))
                .copied(),
        );
        counts.block(&mut code.ops);
        counts
    }

    fn block(&mut self, ops: &mut [Op]) {
        for op in ops {
            op.own_slots(&mut |s, u| {
                let s = *s;
                match u {
                    Use::Read | Use::BreakIf => *self.reads.entry(s).or_default() += 1,
                    Use::Write => *self.writes.entry(s).or_default() += 1,
                    Use::Update => {
                        *self.reads.entry(s).or_default() += 1;
                        *self.writes.entry(s).or_default() += 1;
                    }
                    Use::Mask => {
                        self.pinned.insert(s);
                        *self.mask_uses.entry(s).or_default() += 1;
                    }
                }
            });
            for b in op.blocks_mut() {
                self.block(b);
            }
        }
    }

    /// Whether `t` is written once, read once, and no input, output,
    /// constant or mask.
    fn dead_after_one_use(&self, t: Slot) -> bool {
        !self.pinned.contains(&t)
            && self.writes.get(&t) == Some(&1)
            && self.reads.get(&t) == Some(&1)
    }
}

fn fuse_block(ops: &mut Vec<Op>, counts: &Counts, one: &[Slot]) {
    for op in ops.iter_mut() {
        for b in op.blocks_mut() {
            fuse_block(b, counts, one);
        }
    }
    let mut i = 0;
    while i < ops.len() {
        if fuse_at(ops, i, counts) {
            // The reader is now the fused op; ops between keep their order.
            ops.remove(i);
        } else {
            i += 1;
        }
    }
    for op in ops.iter_mut() {
        single(op, one);
    }
}

/// Try to fuse the kernel at `i` into a later reader; on success (`true`)
/// the reader is the fused op and the op at `i` is to be removed.
fn fuse_at(ops: &mut [Op], i: usize, counts: &Counts) -> bool {
    let Op::Kernel {
        op: first,
        half: false,
        dst: t,
        args: [x, y, ..],
        ..
    } = ops[i]
    else {
        return false;
    };
    if first.arity() != 2 || !counts.dead_after_one_use(t) {
        return false;
    }
    for j in i + 1..ops.len().min(i + 1 + WINDOW) {
        let Op::Kernel {
            op: second,
            half,
            dst,
            args,
            at,
        } = ops[j]
        else {
            return false;
        };
        let reads_t = second.arity() == 2 && (args[0] == t || args[1] == t);
        if !reads_t {
            // An op in between must leave the chain's operands alone.
            if dst == x || dst == y {
                return false;
            }
            continue;
        }
        let pos = usize::from(args[1] == t);
        let z = args[1 - pos];
        if half || dst == x || dst == y {
            return false;
        }
        let Some((fused, order)) = chain(first, second, pos) else {
            return false;
        };
        let args = match order {
            Order::ProductFirst => [x, y, z, 0],
            Order::ProductLast => [z, x, y, 0],
        };
        ops[j] = Op::Kernel {
            op: fused,
            half: false,
            dst,
            args,
            at,
        };
        return true;
    }
    false
}

/// `x * x` to `FSq(x)`, `1 - x` to `FOneMinus(x)` (f32 only).
fn single(op: &mut Op, one: &[Slot]) {
    if let Op::Kernel {
        op: code,
        half: false,
        args,
        ..
    } = op
    {
        match *code {
            Opcode::FMul if args[0] == args[1] => *code = Opcode::FSq,
            Opcode::FSub if one.contains(&args[0]) => {
                *code = Opcode::FOneMinus;
                args[0] = args[1];
            }
            _ => return,
        }
        args[1] = 0;
    }
}

#[cfg(test)]
pub(crate) mod tests {
    //! Each fused kernel against its chain of plain kernels, bit for bit,
    //! over special values; and the pass: what it fuses, what it leaves.
    use super::*;
    use crate::eval::alloc::tests::{code, k, run};
    use crate::eval::lanes::{Kernel, Lanes, LANES};

    /// Special f32 values (IEEE 754 binary32): NaNs with payloads and
    /// signs (quiet and signalling), infinities, zeros, subnormals, the
    /// extremes of the normal range, and a few ordinary numbers.
    pub(crate) const SPECIAL: [u32; 18] = [
        0x7fc0_0000, // quiet NaN
        0xffc0_0001, // negative quiet NaN with a payload
        0x7f80_0001, // signalling NaN
        0x7f80_0000, // +inf
        0xff80_0000, // -inf
        0x0000_0000, // +0
        0x8000_0000, // -0
        0x0000_0001, // smallest subnormal
        0x807f_ffff, // largest subnormal, negative
        0x0080_0000, // smallest normal
        0x7f7f_ffff, // largest finite
        0xff7f_ffff, // most negative finite
        0x3f80_0000, // 1
        0xbf80_0000, // -1
        0x3f80_0001, // 1 + ulp
        0x3eaa_aaab, // 1/3
        0x5f00_0000, // 2^63 (its square overflows with a factor 2^65)
        0x1f80_0000, // 2^-64 (its square is subnormal territory)
    ];

    fn un(op: Opcode, a: &Lanes) -> Lanes {
        let mut d = [0; LANES];
        match op.kernel(false) {
            Kernel::Unary(f) => f(&mut d, a),
            _ => panic!("{} is not unary", op.name()),
        }
        d
    }

    fn bin(op: Opcode, a: &Lanes, b: &Lanes) -> Lanes {
        let mut d = [0; LANES];
        match op.kernel(false) {
            Kernel::Binary(f) => f(&mut d, a, b),
            _ => panic!("{} is not binary", op.name()),
        }
        d
    }

    fn ter(op: Opcode, a: &Lanes, b: &Lanes, c: &Lanes) -> Lanes {
        let mut d = [0; LANES];
        match op.kernel(false) {
            Kernel::Ternary(f) => f(&mut d, a, b, c),
            _ => panic!("{} is not ternary", op.name()),
        }
        d
    }

    /// The lanes as they are compared: bit for bit, except under Miri,
    /// which picks NaN payloads at random as Rust allows (so the plain
    /// kernels have no fixed payload there): every NaN is one NaN.
    fn payloads(l: Lanes) -> Lanes {
        if cfg!(miri) {
            l.map(|b| {
                if f32::from_bits(b).is_nan() {
                    0x7fc0_0000
                } else {
                    b
                }
            })
        } else {
            l
        }
    }

    /// Every (x, y, z) of `values` (three columns), `LANES` at a time.
    pub(crate) fn triples(values: &[u32]) -> Vec<[Lanes; 3]> {
        let n = values.len();
        let all: Vec<[u32; 3]> = (0..n * n * n)
            .map(|i| [values[i / (n * n)], values[i / n % n], values[i % n]])
            .collect();
        all.chunks(LANES)
            .map(|c| {
                let mut cols = [[0; LANES]; 3];
                for (l, t) in c.iter().enumerate() {
                    for (col, &v) in cols.iter_mut().zip(t) {
                        col[l] = v;
                    }
                }
                cols
            })
            .collect()
    }

    #[test]
    fn each_fused_kernel_is_its_chain_bit_for_bit() {
        for width in crate::eval::Width::available() {
            crate::eval::set_width(Some(width));
            fused_against_chains();
        }
        crate::eval::set_width(None);
    }

    fn fused_against_chains() {
        use Opcode as O;
        let firsts = [O::FMul, O::FSub, O::FAdd, O::FDiv];
        let seconds = [O::FAdd, O::FSub, O::FMul, O::FDiv];
        let mut fused = 0;
        for first in firsts {
            for second in seconds {
                for pos in 0..2 {
                    let Some((op, order)) = chain(first, second, pos) else {
                        continue;
                    };
                    fused += 1;
                    for [x, y, z] in triples(&SPECIAL) {
                        let t = bin(first, &x, &y);
                        let want = if pos == 0 {
                            bin(second, &t, &z)
                        } else {
                            bin(second, &z, &t)
                        };
                        let (want, got) = (
                            payloads(want),
                            payloads(match order {
                                Order::ProductFirst => ter(op, &x, &y, &z),
                                Order::ProductLast => ter(op, &z, &x, &y),
                            }),
                        );
                        assert_eq!(
                            got,
                            want,
                            "{} against {} then {}",
                            op.name(),
                            first.name(),
                            second.name()
                        );
                    }
                }
            }
        }
        assert_eq!(fused, 8, "every row of `chain` was tested");
        for [x, ..] in triples(&SPECIAL) {
            assert_eq!(un(O::FSq, &x), bin(O::FMul, &x, &x));
            assert_eq!(
                un(O::FOneMinus, &x),
                bin(O::FSub, &[1f32.to_bits(); LANES], &x)
            );
        }
    }

    #[test]
    fn fused_kernels_have_no_f16_form() {
        for op in [
            Opcode::FSq,
            Opcode::FOneMinus,
            Opcode::FMulAdd,
            Opcode::FDivBy,
        ] {
            assert!(!op.has_half(), "{}", op.name());
        }
    }

    /// The kernels of `ops` (top level), by opcode.
    fn opcodes(c: &Code) -> Vec<Opcode> {
        c.ops
            .iter()
            .filter_map(|o| match o {
                Op::Kernel { op, .. } => Some(*op),
                _ => None,
            })
            .collect()
    }

    #[test]
    fn a_chain_with_a_dead_intermediate_is_fused_and_computes_the_same() {
        use Opcode::*;
        // t = a * b; u = b + a; out = u - t: the reader of t is two ops on.
        let c = code(
            vec![k(FMul, 3, 1, 2), k(FAdd, 4, 2, 1), k(FSub, 5, 4, 3)],
            3,
            vec![5],
            vec![],
        );
        let before = run(c.clone());
        let f = fuse(c);
        assert_eq!(opcodes(&f), vec![FAdd, FSubMul]);
        assert_eq!(run(f), before);
    }

    #[test]
    fn a_chain_is_left_alone_where_fusing_would_be_wrong() {
        use Opcode::*;
        // t read twice.
        let twice = code(vec![k(FMul, 3, 1, 2), k(FAdd, 4, 3, 3)], 2, vec![4], vec![]);
        assert_eq!(opcodes(&fuse(twice)), vec![FMul, FAdd]);
        // t an output.
        let out = code(
            vec![k(FMul, 3, 1, 2), k(FAdd, 4, 3, 1)],
            2,
            vec![4, 3],
            vec![],
        );
        assert_eq!(opcodes(&fuse(out)), vec![FMul, FAdd]);
        // An f16 operation: the intermediate would round to binary16.
        let mut half = code(vec![k(FMul, 3, 1, 2), k(FAdd, 4, 3, 1)], 2, vec![4], vec![]);
        if let Op::Kernel { half, .. } = &mut half.ops[1] {
            *half = true;
        }
        assert_eq!(opcodes(&fuse(half)), vec![FMul, FAdd]);
        // An op in between overwrites an operand of the first (through a
        // variable written twice, so the copy is not forwarded either).
        let clobber = code(
            vec![
                Op::Copy { dst: 6, src: 1 },
                k(FMul, 3, 6, 2),
                Op::Copy { dst: 6, src: 2 },
                k(FAdd, 4, 3, 6),
            ],
            4,
            vec![4],
            vec![],
        );
        let before = run(clobber.clone());
        let f = fuse(clobber);
        assert_eq!(opcodes(&f), vec![FMul, FAdd]);
        assert_eq!(run(f), before);
    }

    #[test]
    fn copies_are_forwarded_and_unread_callee_masks_dropped() {
        use Opcode::*;
        // m = enter(root); x = copy a; out = x * b.
        let mut c = code(
            vec![
                Op::Enter { mask: 5, parent: 0 },
                Op::Copy { dst: 3, src: 1 },
                k(FMul, 4, 3, 2),
            ],
            3,
            vec![4],
            vec![],
        );
        c.sites[0].mask = 5;
        let before = run(c.clone());
        let f = fuse(c);
        assert_eq!(f.ops.len(), 1, "only the product is left");
        assert!(matches!(
            f.ops[0],
            Op::Kernel {
                args: [1, 2, ..],
                ..
            }
        ));
        assert_eq!(f.sites[0].mask, 0, "the site names the parent mask");
        assert_eq!(run(f), before);
    }
}
