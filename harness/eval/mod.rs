//! CPU evaluation of WGSL functions over batches of points.
//!
//! [`Program::compile`] turns one naga function (with everything it calls
//! inlined) into a flat slot program once; [`Program::eval`] runs it over
//! columns of inputs, [`LANES`] points at a time per thread, on all cores.
//!
//! Column encoding at this API: one `u32` per point per scalar leaf, holding
//! the value's bit pattern: f32 bits, f16 as its 16-bit pattern in the low
//! half, i32 two's complement, bool 0 or 1. [`f64_to_bits`] and
//! [`bits_to_f64`] convert.

pub mod compile;
pub mod exec;
pub mod lanes;
pub mod ty;

use std::collections::BTreeMap;
use std::path::PathBuf;

use rayon::prelude::*;

pub use lanes::LANES;
pub use ty::{bits_to_f64, f64_to_bits, ScalarKind, Ty};

use crate::arith;
use crate::wgsl::{Diagnostic, Shader};
use exec::{Machine, Site};

/// What went wrong for one point.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum IssueKind {
    /// A dynamic index outside the array, vector or matrix.
    OutOfBounds,
    /// A loop ran past the step budget; the point has no result.
    StepBudget,
    /// The result is NaN or infinite although every input was finite.
    NonFinite,
}

/// A per-point problem, located in the source.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize)]
pub struct LaneIssue {
    pub point: usize,
    pub kind: IssueKind,
    pub message: String,
    pub line: u32,
    pub column: u32,
}

/// A compiled function, ready to evaluate.
pub struct Program {
    code: compile::Compiled,
    path: PathBuf,
    function: String,
    step_budget: u32,
}

// SAFETY: `Program` holds only plain data and function pointers; the raw
// pointer inside `Machine` is created per run and never stored here.
unsafe impl Sync for Program {}
unsafe impl Send for Program {}

/// Points per parallel work item (several batches, so scheduling is cheap).
const CHUNK: usize = LANES * 32;

impl Program {
    /// Compile `function` of `shader`. `overrides` sets pipeline-overridable
    /// constants by name (or numeric id); the others take their defaults.
    pub fn compile(shader: &Shader, function: &str, overrides: &BTreeMap<String, f64>) -> Result<Program, Diagnostic> {
        let code = compile::Compiler::compile(shader, function, overrides)?;
        Ok(Program { code, path: shader.path.clone(), function: function.to_string(), step_budget: 1 << 16 })
    }

    /// Maximum iterations of any one loop per point before the point is
    /// abandoned with a [`IssueKind::StepBudget`] issue.
    pub fn set_step_budget(&mut self, budget: u32) {
        self.step_budget = budget;
    }

    pub fn function(&self) -> &str {
        &self.function
    }

    pub fn params(&self) -> &[(String, Ty)] {
        &self.code.params
    }

    /// The result type; functions without a result cannot be evaluated usefully
    /// but still compile (their outputs are empty).
    pub fn result(&self) -> Option<&Ty> {
        self.code.result.as_ref()
    }

    /// Flattened argument leaves in order, named `arg.x`, `arg[1]`, ...
    pub fn input_leaves(&self) -> Vec<(String, ScalarKind)> {
        self.code
            .params
            .iter()
            .flat_map(|(name, ty)| ty.leaf_names(name).into_iter().zip(ty.leaves()))
            .collect()
    }

    /// Flattened result leaves, named `result`, `result.x`, `result.field`, ...
    pub fn output_leaves(&self) -> Vec<(String, ScalarKind)> {
        match &self.code.result {
            Some(ty) => ty.leaf_names("result").into_iter().zip(ty.leaves()).collect(),
            None => Vec::new(),
        }
    }

    /// Number of slots (columns of [`LANES`] u32) one thread works in.
    pub fn slot_count(&self) -> usize {
        self.code.slot_count
    }

    /// Evaluate every point on all cores. `inputs[i]` is the column of input
    /// leaf i; all columns have the same length. `outputs` is resized to one
    /// column per output leaf. Issues are sorted by point.
    pub fn eval(&self, inputs: &[&[u32]], outputs: &mut Vec<Vec<u32>>) -> Vec<LaneIssue> {
        let n = self.prepare(inputs, outputs);
        let out_ptrs: Vec<SendPtr> = outputs.iter_mut().map(|c| SendPtr(c.as_mut_ptr())).collect();
        let chunks = n.div_ceil(CHUNK);
        let mut issues: Vec<LaneIssue> = (0..chunks)
            .into_par_iter()
            .map_init(
                || Machine::new(self.code.slot_count, self.step_budget),
                |m, c| {
                    let start = c * CHUNK;
                    let len = CHUNK.min(n - start);
                    // SAFETY: chunks cover disjoint ranges of every output column.
                    let mut outs: Vec<&mut [u32]> = out_ptrs
                        .iter()
                        .map(|p| unsafe { std::slice::from_raw_parts_mut(p.0.add(start), len) })
                        .collect();
                    let ins: Vec<&[u32]> = inputs.iter().map(|c| &c[start..start + len]).collect();
                    self.run_range(m, &ins, &mut outs, start)
                },
            )
            .flatten()
            .collect();
        issues.sort_by_key(|i| i.point);
        issues
    }

    /// Evaluate on the calling thread only (for benchmarks and tests).
    pub fn eval_serial(&self, inputs: &[&[u32]], outputs: &mut Vec<Vec<u32>>) -> Vec<LaneIssue> {
        let n = self.prepare(inputs, outputs);
        let mut m = Machine::new(self.code.slot_count, self.step_budget);
        let mut outs: Vec<&mut [u32]> = outputs.iter_mut().map(|c| &mut c[..]).collect();
        let _ = n;
        self.run_range(&mut m, inputs, &mut outs, 0)
    }

    fn prepare(&self, inputs: &[&[u32]], outputs: &mut Vec<Vec<u32>>) -> usize {
        assert_eq!(inputs.len(), self.code.input_slots.len(), "one input column per input leaf");
        let n = inputs.first().map_or(1, |c| c.len());
        assert!(inputs.iter().all(|c| c.len() == n), "input columns differ in length");
        outputs.resize_with(self.code.output_slots.len(), Vec::new);
        for c in outputs.iter_mut() {
            c.clear();
            c.resize(n, 0);
        }
        n
    }

    /// Run consecutive batches over `ins` (all the same length), writing `outs`.
    fn run_range(&self, m: &mut Machine, ins: &[&[u32]], outs: &mut [&mut [u32]], first_point: usize) -> Vec<LaneIssue> {
        let n = ins.first().map_or(outs.first().map_or(0, |o| o.len()), |c| c.len());
        let in_kinds: Vec<ScalarKind> = self.code.params.iter().flat_map(|(_, t)| t.leaves()).collect();
        let out_kinds: Vec<ScalarKind> = self.code.result.as_ref().map(|t| t.leaves()).unwrap_or_default();
        let mut issues = Vec::new();
        m.sites = &self.code.sites[..] as *const [Site];
        let mut start = 0;
        while start < n {
            let len = LANES.min(n - start);
            self.load_batch(m, ins, &in_kinds, start, len);
            m.issues.clear();
            m.run(&self.code.ops);
            let mut flagged = [false; LANES];
            for raw in m.issues.drain(..) {
                if raw.lane < len {
                    flagged[raw.lane] = true;
                    let site = &self.code.sites[raw.at as usize];
                    let kind = if raw.detail.contains("step budget") { IssueKind::StepBudget } else { IssueKind::OutOfBounds };
                    issues.push(LaneIssue {
                        point: first_point + start + raw.lane,
                        kind,
                        message: raw.detail,
                        line: site.line,
                        column: site.column,
                    });
                }
            }
            // Results of abandoned points are NaN (floats) or 0.
            for (j, (&slot, &k)) in self.code.output_slots.iter().zip(&out_kinds).enumerate() {
                let col = &m.slots[slot as usize];
                for lane in 0..len {
                    outs[j][start + lane] = if flagged[lane] && issues.iter().any(|i| i.kind == IssueKind::StepBudget && i.point == first_point + start + lane) {
                        if k.is_float() { to_external(k, f32::NAN.to_bits()) } else { 0 }
                    } else {
                        to_external(k, col[lane])
                    };
                }
            }
            let suspicious = self.nonfinite_lanes(m, &in_kinds, &out_kinds, len, &flagged);
            if suspicious.iter().any(|&s| s) {
                issues.extend(self.trace_batch(m, ins, &in_kinds, start, len, &suspicious, first_point));
            }
            start += len;
        }
        m.sites = &[] as *const [Site];
        issues
    }

    fn load_batch(&self, m: &mut Machine, ins: &[&[u32]], kinds: &[ScalarKind], start: usize, len: usize) {
        for (i, (&slot, &k)) in self.code.input_slots.iter().zip(kinds).enumerate() {
            let col = &ins[i][start..start + len];
            let dst = &mut m.slots[slot as usize];
            for lane in 0..LANES {
                // Padding lanes repeat the first point so they compute nothing odd.
                let b = if lane < len { col[lane] } else { col[0] };
                dst[lane] = to_lane(k, b);
            }
        }
        let root = &mut m.slots[self.code.root_mask as usize];
        for (lane, r) in root.iter_mut().enumerate() {
            *r = u32::from(lane < len);
        }
    }

    fn nonfinite_lanes(&self, m: &Machine, in_kinds: &[ScalarKind], out_kinds: &[ScalarKind], len: usize, flagged: &[bool; LANES]) -> [bool; LANES] {
        let mut s = [false; LANES];
        for lane in 0..len {
            if flagged[lane] {
                continue;
            }
            let bad_out = self
                .code
                .output_slots
                .iter()
                .zip(out_kinds)
                .any(|(&o, k)| k.is_float() && !f32::from_bits(m.slots[o as usize][lane]).is_finite());
            if !bad_out {
                continue;
            }
            let finite_in = self
                .code
                .input_slots
                .iter()
                .zip(in_kinds)
                .all(|(&i, k)| !k.is_float() || f32::from_bits(m.slots[i as usize][lane]).is_finite());
            s[lane] = finite_in;
        }
        s
    }

    #[allow(clippy::too_many_arguments)]
    fn trace_batch(
        &self,
        m: &mut Machine,
        ins: &[&[u32]],
        in_kinds: &[ScalarKind],
        start: usize,
        len: usize,
        suspicious: &[bool; LANES],
        first_point: usize,
    ) -> Vec<LaneIssue> {
        self.load_batch(m, ins, in_kinds, start, len);
        m.trace = Some(vec![None; LANES]);
        m.run(&self.code.ops);
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
                None => ("result is not finite although every input is".to_string(), 0, 0),
            };
            out.push(LaneIssue { point: first_point + start + lane, kind: IssueKind::NonFinite, message, line, column });
        }
        out
    }

    /// Path of the shader this program came from.
    pub fn path(&self) -> &std::path::Path {
        &self.path
    }
}

#[derive(Clone, Copy)]
struct SendPtr(*mut u32);
// SAFETY: used only to hand disjoint output ranges to worker threads.
unsafe impl Send for SendPtr {}
unsafe impl Sync for SendPtr {}

/// External column encoding → lane encoding.
#[inline]
fn to_lane(k: ScalarKind, b: u32) -> u32 {
    match k {
        ScalarKind::F16 => arith::f16_from_bits(b as u16).to_bits(),
        ScalarKind::Bool => u32::from(b != 0),
        _ => b,
    }
}

/// Lane encoding → external column encoding.
#[inline]
fn to_external(k: ScalarKind, b: u32) -> u32 {
    match k {
        ScalarKind::F16 => u32::from(arith::f16_bits(f32::from_bits(b))),
        _ => b,
    }
}
