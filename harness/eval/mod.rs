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
pub mod perturb;
pub mod text;
pub mod ty;

use std::collections::BTreeMap;
use std::path::PathBuf;

pub use lanes::LANES;
pub use text::{format_value, parse_value};
pub use ty::{bits_to_f64, f64_to_bits, ScalarKind, Ty};

use crate::arith;
use crate::wgsl::{Diagnostic, Shader};
use exec::{Machine, Site};
use lanes::Lanes;

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
    /// The offending point's arguments, `name=value, ...` (leaf names as in
    /// [`Program::input_leaves`]).
    pub inputs: String,
}

/// A compiled function, ready to evaluate.
/// The number model a program evaluates with.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Arithmetic {
    /// IEEE 754 results, correctly rounded where the operation allows, libm's
    /// transcendental functions otherwise: what a careful GPU computes.
    #[default]
    Exact,
    /// Every inexact float operation moved, per point and pseudo-randomly from
    /// `seed`, anywhere within the WGSL spec's accuracy bound (see
    /// [`perturb`]): what the least accurate conforming GPU may compute.
    SpecBounds { seed: u64 },
}

pub struct Program {
    seed: u64,
    code: compile::Compiled,
    own_output: Vec<bool>,
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
    pub fn compile(
        shader: &Shader,
        function: &str,
        overrides: &BTreeMap<String, f64>,
    ) -> Result<Program, Diagnostic> {
        Self::compile_with(shader, function, overrides, Arithmetic::Exact)
    }

    /// [`Program::compile`] with a chosen number model.
    pub fn compile_with(
        shader: &Shader,
        function: &str,
        overrides: &BTreeMap<String, f64>,
        arithmetic: Arithmetic,
    ) -> Result<Program, Diagnostic> {
        let (spec_bounds, seed) = match arithmetic {
            Arithmetic::Exact => (false, 0),
            Arithmetic::SpecBounds { seed } => (true, seed),
        };
        let code = compile::Compiler::compile(shader, function, overrides, spec_bounds)?;
        // An output slot may be written straight into the output column when
        // it belongs to no input, constant or other output.
        let out_kinds = code.result.as_ref().map(|t| t.leaves()).unwrap_or_default();
        let own_output = code
            .output_slots
            .iter()
            .zip(&out_kinds)
            .map(|(s, &k)| {
                in_place(k)
                    && !code.input_slots.contains(s)
                    && !code.consts.iter().any(|c| c.0 == *s)
                    && code.output_slots.iter().filter(|o| *o == s).count() == 1
            })
            .collect();
        Ok(Program {
            code,
            own_output,
            path: shader.path.clone(),
            function: function.to_string(),
            step_budget: 1 << 16,
            seed,
        })
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
            Some(ty) => ty
                .leaf_names("result")
                .into_iter()
                .zip(ty.leaves())
                .collect(),
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
    ///
    /// # Panics
    /// When the columns do not match [`Program::input_leaves`]; use
    /// [`Program::try_eval`] for inputs that come from users.
    pub fn eval(&self, inputs: &[&[u32]], outputs: &mut Vec<Vec<u32>>) -> Vec<LaneIssue> {
        let n = self.prepare(inputs, outputs);
        let out_ptrs: Vec<SendPtr> = outputs
            .iter_mut()
            .map(|c| SendPtr(c.as_mut_ptr()))
            .collect();
        let chunks = n.div_ceil(CHUNK);
        // One machine per worker thread; workers take chunks from a shared
        // counter until none are left (balances points that loop longer).
        let next = std::sync::atomic::AtomicUsize::new(0);
        let workers = rayon::current_num_threads().min(chunks).max(1);
        let found = std::sync::Mutex::new(Vec::new());
        rayon::scope(|s| {
            for _ in 0..workers {
                s.spawn(|_| {
                    let mut m = self.machine();
                    let mut mine = Vec::new();
                    loop {
                        let c = next.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
                        if c >= chunks {
                            break;
                        }
                        let start = c * CHUNK;
                        let len = CHUNK.min(n - start);
                        // SAFETY: each chunk index is taken once, so chunks
                        // cover disjoint ranges of every output column.
                        let mut outs: Vec<&mut [u32]> = out_ptrs
                            .iter()
                            .map(|p| unsafe { std::slice::from_raw_parts_mut(p.0.add(start), len) })
                            .collect();
                        let ins: Vec<&[u32]> =
                            inputs.iter().map(|c| &c[start..start + len]).collect();
                        mine.extend(self.run_range(&mut m, &ins, &mut outs, start));
                    }
                    found.lock().expect("issue list").extend(mine);
                });
            }
        });
        let mut issues = found.into_inner().expect("issue list");
        issues.sort_by_key(|i| i.point);
        issues
    }

    /// Evaluate on the calling thread only (for benchmarks and tests). Same
    /// results and issues, in the same order, as [`Program::eval`].
    pub fn eval_serial(&self, inputs: &[&[u32]], outputs: &mut Vec<Vec<u32>>) -> Vec<LaneIssue> {
        let n = self.prepare(inputs, outputs);
        let mut m = self.machine();
        let mut outs: Vec<&mut [u32]> = outputs.iter_mut().map(|c| &mut c[..]).collect();
        let _ = n;
        let mut issues = self.run_range(&mut m, inputs, &mut outs, 0);
        // Within a batch, index and budget issues come before the non-finite
        // ones; sort by point (stably) as `eval` does.
        issues.sort_by_key(|i| i.point);
        issues
    }

    fn machine(&self) -> Machine {
        let mut m = Machine::new(self.code.slot_count, self.step_budget, &self.code.consts);
        m.seed = self.seed;
        m
    }

    fn prepare(&self, inputs: &[&[u32]], outputs: &mut Vec<Vec<u32>>) -> usize {
        assert_eq!(
            inputs.len(),
            self.code.input_slots.len(),
            "one input column per input leaf"
        );
        let n = inputs.first().map_or(1, |c| c.len());
        assert!(
            inputs.iter().all(|c| c.len() == n),
            "input columns differ in length"
        );
        outputs.resize_with(self.code.output_slots.len(), Vec::new);
        for c in outputs.iter_mut() {
            c.clear();
            c.resize(n, 0);
        }
        n
    }

    /// Run consecutive batches over `ins` (all the same length), writing `outs`.
    fn run_range(
        &self,
        m: &mut Machine,
        ins: &[&[u32]],
        outs: &mut [&mut [u32]],
        first_point: usize,
    ) -> Vec<LaneIssue> {
        let n = ins
            .first()
            .map_or(outs.first().map_or(0, |o| o.len()), |c| c.len());
        let in_kinds: Vec<ScalarKind> = self
            .code
            .params
            .iter()
            .flat_map(|(_, t)| t.leaves())
            .collect();
        let out_kinds: Vec<ScalarKind> = self
            .code
            .result
            .as_ref()
            .map(|t| t.leaves())
            .unwrap_or_default();
        let mut issues = Vec::new();
        m.sites = &self.code.sites[..] as *const [Site];
        let mut start = 0;
        while start < n {
            let len = LANES.min(n - start);
            // Full batches of 32-bit leaves are read and written in place.
            let bound = len == LANES;
            for (i, (&slot, &k)) in self.code.input_slots.iter().zip(&in_kinds).enumerate() {
                if bound && in_place(k) {
                    // SAFETY: input slots are never written (arguments are
                    // values), and `ins[i]` outlives this batch.
                    unsafe { m.bind(slot, ins[i][start..].as_ptr() as *mut Lanes) };
                } else {
                    m.unbind(slot);
                }
            }
            for (j, &slot) in self.code.output_slots.iter().enumerate() {
                if bound && self.own_output[j] {
                    // SAFETY: the slot is written only by this program's ops
                    // during this batch, and the column range is this chunk's.
                    unsafe { m.bind(slot, outs[j][start..].as_mut_ptr() as *mut Lanes) };
                } else if self.own_output[j] {
                    m.unbind(slot);
                }
            }
            self.load_batch(m, ins, &in_kinds, start, len, bound);
            m.issues.clear();
            m.run(&self.code.ops);
            let mut flagged = [false; LANES];
            let any_flagged = !m.issues.is_empty();
            for raw in m.issues.drain(..) {
                if raw.lane < len {
                    flagged[raw.lane] = true;
                    let site = &self.code.sites[raw.at as usize];
                    let kind = if raw.detail.contains("step budget") {
                        IssueKind::StepBudget
                    } else {
                        IssueKind::OutOfBounds
                    };
                    issues.push(LaneIssue {
                        point: first_point + start + raw.lane,
                        kind,
                        message: raw.detail,
                        line: site.line,
                        column: site.column,
                        inputs: self.describe_point(ins, start + raw.lane),
                    });
                }
            }
            // Results of abandoned points are NaN (floats) or 0.
            let abandoned = |lane: usize| {
                flagged[lane]
                    && issues.iter().rev().any(|i: &LaneIssue| {
                        i.kind == IssueKind::StepBudget && i.point == first_point + start + lane
                    })
            };
            for (j, (&slot, &k)) in self.code.output_slots.iter().zip(&out_kinds).enumerate() {
                let col = &m.lanes(slot)[..len];
                let dst = &mut outs[j][start..start + len];
                if bound && self.own_output[j] {
                    // already in place
                } else if k == ScalarKind::F16 {
                    for (d, &b) in dst.iter_mut().zip(col) {
                        *d = to_external(k, b);
                    }
                } else {
                    dst.copy_from_slice(col);
                }
                if any_flagged {
                    for (lane, d) in dst.iter_mut().enumerate() {
                        if abandoned(lane) {
                            *d = if k.is_float() {
                                to_external(k, f32::NAN.to_bits())
                            } else {
                                0
                            };
                        }
                    }
                }
            }
            if let Some(suspicious) = self.nonfinite_lanes(m, &in_kinds, &out_kinds, len, &flagged)
            {
                issues.extend(self.trace_batch(
                    m,
                    ins,
                    &in_kinds,
                    start,
                    len,
                    &suspicious,
                    first_point,
                ));
            }
            start += len;
        }
        for &slot in self.code.input_slots.iter().chain(&self.code.output_slots) {
            m.unbind(slot);
        }
        m.sites = &[] as *const [Site];
        issues
    }

    fn load_batch(
        &self,
        m: &mut Machine,
        ins: &[&[u32]],
        kinds: &[ScalarKind],
        start: usize,
        len: usize,
        bound: bool,
    ) {
        for (i, (&slot, &k)) in self.code.input_slots.iter().zip(kinds).enumerate() {
            if bound && in_place(k) {
                continue;
            }
            let col = &ins[i][start..start + len];
            let dst = m.lanes_mut(slot);
            match k {
                ScalarKind::F32 | ScalarKind::I32 | ScalarKind::U32 => {
                    dst[..len].copy_from_slice(col)
                }
                _ => {
                    for (d, &b) in dst.iter_mut().zip(col) {
                        *d = to_lane(k, b);
                    }
                }
            }
            // Padding lanes repeat the first point so they compute nothing odd.
            let first = dst[0];
            dst[len..].fill(first);
        }
        let root = m.lanes_mut(self.code.root_mask);
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
        // An exponent of all ones marks NaN and infinity (IEEE 754 binary32);
        // f16 lives in lanes as f32, so the same test serves both.
        const EXP: u32 = 0x7f80_0000;
        let mut bad = [0u32; LANES];
        for (&o, k) in self.code.output_slots.iter().zip(out_kinds) {
            if k.is_float() {
                let col = m.lanes(o);
                for i in 0..LANES {
                    bad[i] |= u32::from(col[i] & EXP == EXP);
                }
            }
        }
        // Branch-free OR over the batch: the common case is "all finite".
        if bad[..len].iter().fold(0, |a, &b| a | b) == 0 {
            return None;
        }
        let mut s = [false; LANES];
        for lane in 0..len {
            if bad[lane] == 0 || flagged[lane] {
                continue;
            }
            s[lane] = self
                .code
                .input_slots
                .iter()
                .zip(in_kinds)
                .all(|(&i, k)| !k.is_float() || m.lanes(i)[lane] & EXP != EXP);
        }
        s.iter().any(|&x| x).then_some(s)
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
        self.load_batch(m, ins, in_kinds, start, len, len == LANES);
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

    /// `name=value, ...` for point `i` of `ins`.
    fn describe_point(&self, ins: &[&[u32]], i: usize) -> String {
        self.input_leaves()
            .iter()
            .zip(ins)
            .map(|((name, k), col)| format!("{name}={}", bits_to_f64(*k, col[i])))
            .collect::<Vec<_>>()
            .join(", ")
    }

    /// Check that `inputs` has one column per input leaf, all of one length.
    pub fn check_inputs(&self, inputs: &[&[u32]]) -> Result<usize, String> {
        let leaves = self.input_leaves();
        if inputs.len() != leaves.len() {
            let names: Vec<_> = leaves
                .iter()
                .map(|(n, k)| format!("{n}: {}", k.wgsl()))
                .collect();
            return Err(format!(
                "`{}` takes {} scalar inputs ({}), got {} columns",
                self.function,
                leaves.len(),
                names.join(", "),
                inputs.len()
            ));
        }
        let n = inputs.first().map_or(1, |c| c.len());
        if let Some((i, c)) = inputs.iter().enumerate().find(|(_, c)| c.len() != n) {
            return Err(format!(
                "input column {} (`{}`) has {} points, the first has {n}",
                i,
                leaves[i].0,
                c.len()
            ));
        }
        Ok(n)
    }

    /// [`Program::eval`] with the inputs checked first instead of asserted.
    pub fn try_eval(
        &self,
        inputs: &[&[u32]],
        outputs: &mut Vec<Vec<u32>>,
    ) -> Result<Vec<LaneIssue>, String> {
        self.check_inputs(inputs)?;
        Ok(self.eval(inputs, outputs))
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

/// Leaves whose column encoding equals their lane encoding.
fn in_place(k: ScalarKind) -> bool {
    matches!(k, ScalarKind::F32 | ScalarKind::I32 | ScalarKind::U32)
}

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
