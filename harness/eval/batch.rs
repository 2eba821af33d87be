//! The batch driver: runs a [`Program`] over a range of points, one batch of
//! [`LANES`] at a time, on one machine.
//!
//! Every batch goes through the same fixed order: bind or load the inputs and
//! bind the outputs, **run**, **trace** (re-run with NaN tracing when a
//! result is not finite although its inputs are), **mark** the abandoned
//! points (those that ran out of steps), **copy out** (the outputs not bound,
//! then NaN or 0 over every abandoned point). Nothing writes an output column
//! after the abandoned points are marked, so an abandoned point never comes
//! back as a number.
//!
//! Output columns are reached only through raw pointers ([`OutCol`]) derived
//! from one `as_mut_ptr` per column per evaluation: the machine writes bound
//! ones, the copy-out writes the others, and no `&mut` to a column is alive
//! while the machine holds a pointer into it.

use super::exec::{Machine, RawKind};
use super::ir::Code;
use super::lanes::{Lanes, LANES};
use super::{in_place, to_external, to_lane, IssueKind, LaneIssue, Program, ScalarKind};

/// The exponent bits of binary32: all ones in NaN and the infinities, and
/// nowhere else (IEEE 754); f16 lives in lanes as f32, so the same test
/// serves both.
pub(crate) const EXP: u32 = 0x7f80_0000;

/// Whether any of the float lanes is NaN or infinite (a branch-free OR).
fn any_nonfinite(lanes: &[u32]) -> bool {
    lanes.iter().fold(0, |a, &b| a | u32::from(b & EXP == EXP)) != 0
}

/// The start of one output column's range, valid for writes of the range's
/// length and written by nothing else while the range runs.
#[derive(Clone, Copy)]
pub(crate) struct OutCol(pub *mut u32);

// SAFETY: worker threads receive disjoint ranges of the columns (one chunk
// index is taken once), so an `OutCol` moved to another thread is the only
// writer of its range.
unsafe impl Send for OutCol {}
unsafe impl Sync for OutCol {}

impl Program {
    /// Run consecutive batches over `ins` (all `n` long), writing `outs`
    /// (each valid for `n` writes). `first_point` numbers the issues.
    pub(crate) fn run_range(
        &self,
        m: &mut Machine,
        ins: &[&[u32]],
        outs: &[OutCol],
        n: usize,
        first_point: usize,
    ) -> Vec<LaneIssue> {
        let code = &self.fast;
        let (in_kinds, out_kinds) = (&self.in_kinds[..], &self.out_kinds[..]);
        let mut issues = Vec::new();
        let mut start = 0;
        #[cfg(all(target_arch = "x86_64", not(miri)))]
        if let Some((done, nonfinite)) = self.run_whole(m, ins, outs, n, in_kinds) {
            // Batches with a result that is not finite run again one at a
            // time (the same bits), for their issues.
            for b in (0..done).step_by(LANES) {
                if nonfinite && Self::batch_nonfinite(outs, out_kinds, b) {
                    self.run_batch(
                        m,
                        ins,
                        outs,
                        n,
                        first_point,
                        b,
                        in_kinds,
                        out_kinds,
                        &mut issues,
                    );
                }
            }
            start = done;
        }
        while start < n {
            self.run_batch(
                m,
                ins,
                outs,
                n,
                first_point,
                start,
                in_kinds,
                out_kinds,
                &mut issues,
            );
            start += LANES.min(n - start);
        }
        for &slot in code.input_slots.iter().chain(&code.output_slots) {
            m.unbind(slot);
        }
        issues
    }

    /// One batch from `start` through the fixed order above.
    #[allow(clippy::too_many_arguments)]
    fn run_batch(
        &self,
        m: &mut Machine,
        ins: &[&[u32]],
        outs: &[OutCol],
        n: usize,
        first_point: usize,
        start: usize,
        in_kinds: &[ScalarKind],
        out_kinds: &[ScalarKind],
        issues: &mut Vec<LaneIssue>,
    ) {
        let code = &self.fast;
        let len = LANES.min(n - start);
        // Full batches of 32-bit leaves are read and written in place.
        let bound = len == LANES;
        for (i, (&slot, &k)) in code.input_slots.iter().zip(in_kinds).enumerate() {
            if bound && in_place(k) {
                // SAFETY: the verifier proved input slots are never
                // written, so a read-only column may be bound; `ins[i]`
                // has `LANES` values from `start` and outlives the batch.
                unsafe { m.bind(slot, ins[i][start..].as_ptr() as *mut Lanes) };
            } else {
                m.unbind(slot);
            }
        }
        for (j, &slot) in code.output_slots.iter().enumerate() {
            if bound && self.own_output[j] {
                // SAFETY: `outs[j]` is valid for `n` writes and reached
                // by nothing but this machine until the copy-out below,
                // which uses the same raw pointer; `start + LANES <= n`.
                unsafe { m.bind(slot, outs[j].0.add(start) as *mut Lanes) };
            } else if self.own_output[j] {
                m.unbind(slot);
            }
        }

        // Run.
        self.load_batch(m, code, ins, in_kinds, start, len, bound);
        m.issues.clear();
        m.run(code);
        let mut abandoned = [false; LANES];
        let mut any_abandoned = false;
        let mut flagged = [false; LANES];
        for raw in m.issues.drain(..) {
            if raw.lane >= len {
                continue;
            }
            flagged[raw.lane] = true;
            let kind = match raw.kind {
                RawKind::StepBudget => {
                    abandoned[raw.lane] = true;
                    any_abandoned = true;
                    IssueKind::StepBudget
                }
                RawKind::OutOfBounds => IssueKind::OutOfBounds,
            };
            let site = &code.sites[raw.at as usize];
            issues.push(LaneIssue {
                point: first_point + start + raw.lane,
                kind,
                message: raw.detail,
                line: site.line,
                column: site.column,
                inputs: self.describe_point(ins, start + raw.lane),
            });
        }

        // Trace (re-runs the batch on a machine of its own; it computes
        // the same bits).
        if let Some(suspicious) = self.nonfinite_lanes(m, in_kinds, out_kinds, len, &flagged) {
            issues.extend(self.trace_batch(ins, in_kinds, start, len, &suspicious, first_point));
        }

        // Mark abandoned points and copy out: after this nothing writes
        // this batch's range of the output columns.
        for (j, (&slot, &k)) in code.output_slots.iter().zip(out_kinds).enumerate() {
            // SAFETY: the range `start..start + len` of column `j` is
            // valid for writes (`outs` contract); the machine is done
            // with it for this batch and every write goes through the
            // same raw pointer the machine was bound to.
            let dst = unsafe { outs[j].0.add(start) };
            if !(bound && self.own_output[j]) {
                let col = m.lanes(slot);
                for (lane, &b) in col[..len].iter().enumerate() {
                    // SAFETY: as above; `lane < len`.
                    unsafe { *dst.add(lane) = to_external(k, b) };
                }
            }
            if !any_abandoned {
                continue;
            }
            let none = if k.is_float() {
                to_external(k, f32::NAN.to_bits())
            } else {
                0
            };
            for (lane, _) in abandoned[..len].iter().enumerate().filter(|(_, &a)| a) {
                // SAFETY: as above; `lane < len`.
                unsafe { *dst.add(lane) = none };
            }
        }
    }

    /// Run the full batches of the range in one call of the machine's
    /// [`Native::whole`](super::native::Native::whole) code, straight in the
    /// caller's columns, when it has one and every input and output column
    /// is read and written in place; the number of points done (a multiple
    /// of `LANES`) and whether a float output is not finite somewhere in
    /// them, or `None`.
    #[cfg(all(target_arch = "x86_64", not(miri)))]
    fn run_whole(
        &self,
        m: &Machine,
        ins: &[&[u32]],
        outs: &[OutCol],
        n: usize,
        in_kinds: &[ScalarKind],
    ) -> Option<(usize, bool)> {
        let whole = m.native.as_ref()?.whole?;
        let code = &self.fast;
        if !in_kinds.iter().all(|&k| in_place(k)) || !self.own_output.iter().all(|&o| o) {
            return None;
        }
        let done = n / LANES * LANES;
        if done == 0 {
            return None;
        }
        let mut table = vec![std::ptr::null_mut::<u32>(); code.slot_count];
        for (&slot, col) in code.input_slots.iter().zip(ins) {
            table[slot as usize] = col.as_ptr() as *mut u32;
        }
        for (&slot, col) in code.output_slots.iter().zip(outs) {
            table[slot as usize] = col.0;
        }
        // SAFETY: `whole` reads lanes `0..done` of the input slots' columns
        // (each `n >= done` long) and writes lanes `0..done` of the output
        // slots' columns (`outs` valid for `n` writes, reached by nothing
        // else during the call, distinct since each output is the machine's
        // own slot); it touches no other entry of the table (`Native::whole`'s
        // condition, checked when it was compiled), and input columns are
        // only read (the verifier's rule 4).
        let nonfinite = unsafe { whole(table.as_ptr(), done * 4) } != 0;
        Some((done, nonfinite))
    }

    /// Whether a float output of the batch from `start` holds NaN or an
    /// infinity.
    #[cfg(all(target_arch = "x86_64", not(miri)))]
    fn batch_nonfinite(outs: &[OutCol], out_kinds: &[ScalarKind], start: usize) -> bool {
        outs.iter().zip(out_kinds).any(|(col, k)| {
            // SAFETY: the batch's `LANES` values from `start` were written by
            // `run_whole` (`start + LANES <= done <= n`), and no `&mut` to the
            // column is alive.
            let lanes = unsafe { std::slice::from_raw_parts(col.0.add(start), LANES) };
            k.is_float() && any_nonfinite(lanes)
        })
    }

    #[allow(clippy::too_many_arguments)]
    fn load_batch(
        &self,
        m: &mut Machine,
        code: &Code,
        ins: &[&[u32]],
        kinds: &[ScalarKind],
        start: usize,
        len: usize,
        bound: bool,
    ) {
        for (i, (&slot, &k)) in code.input_slots.iter().zip(kinds).enumerate() {
            if bound && in_place(k) {
                continue;
            }
            let col = &ins[i][start..start + len];
            let dst = m.own_mut(slot);
            for (d, &b) in dst.iter_mut().zip(col) {
                *d = to_lane(k, b);
            }
            // Padding lanes repeat the first point so they compute nothing odd.
            let first = dst[0];
            dst[len..].fill(first);
        }
        let root = m.own_mut(code.root_mask);
        root[..len].fill(1);
        root[len..].fill(0);
    }

    fn nonfinite_lanes(
        &self,
        m: &Machine,
        in_kinds: &[ScalarKind],
        out_kinds: &[ScalarKind],
        len: usize,
        flagged: &[bool; LANES],
    ) -> Option<[bool; LANES]> {
        // Branch-free OR over the batch first: the common case is "all
        // finite".
        let floats = || {
            self.fast
                .output_slots
                .iter()
                .zip(out_kinds)
                .filter(|(_, k)| k.is_float())
                .map(|(&o, _)| &m.lanes(o)[..len])
        };
        if !floats().any(any_nonfinite) {
            return None;
        }
        let mut bad = [0u32; LANES];
        for col in floats() {
            for (b, &x) in bad.iter_mut().zip(col) {
                *b |= u32::from(x & EXP == EXP);
            }
        }
        let mut s = [false; LANES];
        for lane in 0..len {
            if bad[lane] == 0 || flagged[lane] {
                continue;
            }
            s[lane] = self
                .fast
                .input_slots
                .iter()
                .zip(in_kinds)
                .all(|(&i, k)| !k.is_float() || m.lanes(i)[lane] & EXP != EXP);
        }
        s.iter().any(|&x| x).then_some(s)
    }

    /// Re-run the batch with NaN tracing on the lowered code (one op per
    /// source operation, so the first operation that made a NaN is named
    /// even where the executor's code fuses it with the next), on a machine
    /// of its own with nothing bound.
    fn trace_batch(
        &self,
        ins: &[&[u32]],
        in_kinds: &[ScalarKind],
        start: usize,
        len: usize,
        suspicious: &[bool; LANES],
        first_point: usize,
    ) -> Vec<LaneIssue> {
        let mut m = Machine::new(&self.code, self.step_budget);
        m.seed = self.seed;
        self.load_batch(&mut m, &self.code, ins, in_kinds, start, len, false);
        m.trace = Some(vec![None; LANES]);
        m.run(&self.code);
        m.issues.clear();
        let trace = m.trace.take().expect("trace");
        let mut out = Vec::new();
        for lane in 0..len {
            if !suspicious[lane] {
                continue;
            }
            let (message, line, column) = match trace[lane] {
                Some(at) => {
                    let site = &self.code.sites[at as usize];
                    (
                        format!("result is not finite although every input is; first NaN/Inf produced by {}", site.what),
                        site.line,
                        site.column,
                    )
                }
                None => (
                    "result is not finite although every input is".to_string(),
                    0,
                    0,
                ),
            };
            out.push(LaneIssue {
                point: first_point + start + lane,
                kind: IssueKind::NonFinite,
                message,
                line,
                column,
                inputs: self.describe_point(ins, start + lane),
            });
        }
        out
    }
}
