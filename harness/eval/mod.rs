//! CPU evaluation of WGSL functions over batches of points.
//!
//! [`Program::compile`] turns one naga function (with everything it calls
//! inlined) into a flat slot program once; [`Program::eval`] runs it over
//! columns of inputs, [`LANES`] points at a time per thread, on all cores.
//!
//! Columns at this API are in the column encoding of [`crate::values::encoding`]: one `u32`
//! per point per scalar leaf. The value types, the encoding and the text forms live in
//! [`crate::values`]; they are re-exported here (`eval::ty`, `eval::text` included) so
//! code written against the evaluator keeps its paths.

pub(crate) mod alloc;
mod batch;
pub(crate) mod exec;
pub(crate) mod fuse;
pub(crate) mod ir;
pub(crate) mod lanes;
pub(crate) mod lower;
#[cfg(all(target_arch = "x86_64", not(miri)))]
pub(crate) mod native;
pub(crate) mod perturb;
pub(crate) mod shadow;
#[cfg(test)]
mod tests;
pub(crate) mod texture;
pub(crate) mod verify;

use std::collections::BTreeMap;
use std::path::PathBuf;

pub use crate::values::{bits_to_f64, f64_to_bits, format_value, parse_value, ScalarKind, Ty};
pub use crate::values::{text, types as ty};
pub use lanes::LANES;

use crate::arith;
use crate::diagnostic::Diagnostic;
use crate::limits::Limits;
use crate::wgsl::Shader;
use batch::OutCol;
use exec::{Machine, Verified};

pub use lanes::{set_width, Width};
#[cfg(all(target_arch = "x86_64", not(miri)))]
pub use native::{set_tier, Tier, NATIVE_MIN};

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
    /// `perturb`): what the least accurate conforming GPU may compute.
    SpecBounds { seed: u64 },
}

/// A program's leaves, named and typed ([`Program::leaves`]), shared.
pub type Leaves = std::sync::Arc<[(String, ScalarKind)]>;

pub struct Program {
    seed: u64,
    /// The lowered code, one slot per value and one op per source
    /// operation: what the shadow executor, the precision analysis and NaN
    /// tracing run.
    code: Verified,
    /// The same code fused and with slots shared by liveness
    /// ([`fuse`], [`alloc`]): what the executor runs.
    fast: Verified,
    own_output: Vec<bool>,
    /// The kinds of `fast`'s input and output leaves, in slot order.
    in_kinds: Vec<ScalarKind>,
    /// [`Program::input_leaves`] and [`Program::output_leaves`], named
    /// once at compile time and shared with every evaluation's result.
    in_leaves: Leaves,
    out_leaves: Leaves,
    out_kinds: Vec<ScalarKind>,
    path: PathBuf,
    function: String,
    step_budget: u64,
    /// `fast`'s straight-line stretches as native code, compiled on the
    /// first evaluation that runs that tier (`None` inside: nothing to
    /// compile).
    #[cfg(all(target_arch = "x86_64", not(miri)))]
    native: std::sync::OnceLock<Option<std::sync::Arc<native::Native>>>,
    /// Points evaluated so far, over every call, and those announced
    /// ([`Program::announce`]): chooses the tier; read only where native
    /// code exists.
    #[cfg_attr(not(all(target_arch = "x86_64", not(miri))), allow(dead_code))]
    evaluated: std::sync::atomic::AtomicUsize,
    /// Set by the evaluation that compiles `native`, so that in the
    /// automatic tier the others interpret meanwhile instead of waiting.
    #[cfg_attr(not(all(target_arch = "x86_64", not(miri))), allow(dead_code))]
    compiling: std::sync::atomic::AtomicBool,
}

/// The native code an evaluation runs with ([`Program::native_for`]).
#[cfg(all(target_arch = "x86_64", not(miri)))]
type Compiled = Option<std::sync::Arc<native::Native>>;
/// Without a native code generator, nothing.
#[cfg(not(all(target_arch = "x86_64", not(miri))))]
type Compiled = Option<()>;

/// Points per parallel work item (several batches, so scheduling is cheap).
const CHUNK: usize = LANES * 32;

/// Points per work item for a program that native code runs whole: its cost
/// per point is the same everywhere, so larger items balance as well and
/// cost less to hand out.
#[cfg(all(target_arch = "x86_64", not(miri)))]
const WHOLE_CHUNK: usize = CHUNK * 16;

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
        Self::compile_limited(shader, function, overrides, arithmetic, &Limits::default())
    }

    /// [`Program::compile_with`] under `limits`: a program that would pass
    /// `program_ops` once every call is inlined, or whose arguments, result
    /// and variables need more than `program_slots` scalar slots, is refused
    /// with a located error; each point may run `steps_per_point` loop
    /// iterations in all.
    pub fn compile_limited(
        shader: &Shader,
        function: &str,
        overrides: &BTreeMap<String, f64>,
        arithmetic: Arithmetic,
        limits: &Limits,
    ) -> Result<Program, Diagnostic> {
        Self::compile_bound(
            shader,
            function,
            overrides,
            arithmetic,
            limits,
            &crate::table::Bindings::NONE,
        )
    }

    /// [`Program::compile_limited`] with look-up tables and sampler
    /// descriptions bound to the shader's `texture_2d<f32>` and `sampler`
    /// variables: `textureSampleLevel`, `textureSample` and `textureLoad` on
    /// them then evaluate as [`crate::table::sample`] defines. A texture
    /// access on a variable `bindings` does not name stays a located "not
    /// supported" error.
    pub fn compile_bound(
        shader: &Shader,
        function: &str,
        overrides: &BTreeMap<String, f64>,
        arithmetic: Arithmetic,
        limits: &Limits,
        bindings: &crate::table::Bindings,
    ) -> Result<Program, Diagnostic> {
        let (spec_bounds, seed) = match arithmetic {
            Arithmetic::Exact => (false, 0),
            Arithmetic::SpecBounds { seed } => (true, seed),
        };
        let code =
            lower::Compiler::compile(shader, function, overrides, spec_bounds, limits, bindings)?;
        let fast = alloc::allocate(fuse::fuse(code.clone()));
        let internal = |e: verify::VerifyError| {
            Diagnostic::without_position(
                &shader.path,
                format!("internal error lowering `{function}`: {e}"),
            )
        };
        let code = Verified::new(code).map_err(internal)?;
        let fast = Verified::new(fast).map_err(internal)?;
        // An output slot may be written straight into the output column when
        // it belongs to no input, constant or other output.
        let out_kinds = fast.output_kinds();
        let own_output = fast
            .output_slots
            .iter()
            .zip(&out_kinds)
            .map(|(s, &k)| {
                in_place(k)
                    && !fast.input_slots.contains(s)
                    && !fast.consts.iter().any(|c| c.0 == *s)
                    && fast.output_slots.iter().filter(|o| *o == s).count() == 1
            })
            .collect();
        let in_kinds = code.params.iter().flat_map(|(_, t)| t.leaves()).collect();
        let (in_leaves, out_leaves) = (input_leaves(&code).into(), output_leaves(&code).into());
        Ok(Program {
            code,
            fast,
            own_output,
            in_kinds,
            in_leaves,
            out_leaves,
            out_kinds,
            path: shader.path.clone(),
            function: function.to_string(),
            step_budget: limits.steps_per_point,
            seed,
            #[cfg(all(target_arch = "x86_64", not(miri)))]
            native: std::sync::OnceLock::new(),
            evaluated: std::sync::atomic::AtomicUsize::new(0),
            compiling: std::sync::atomic::AtomicBool::new(false),
        })
    }

    /// Maximum loop iterations per point, summed over every loop and inlined
    /// call, before the point is abandoned with a [`IssueKind::StepBudget`]
    /// issue (default: [`Limits::steps_per_point`]).
    pub fn set_step_budget(&mut self, budget: u64) {
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

    /// The kind of every input leaf, in the order of [`Program::input_leaves`]
    /// (kept from compilation: nothing is built per call).
    pub fn input_kinds(&self) -> &[ScalarKind] {
        &self.in_kinds
    }

    /// Flattened argument leaves in order, named `arg.x`, `arg[1]`, ...; a
    /// `ptr<function, T>` parameter's initial value is named `*arg`,
    /// `*arg.x`, ... (its final value is the output `arg`, `arg.x`, ...).
    pub fn input_leaves(&self) -> Vec<(String, ScalarKind)> {
        self.in_leaves.to_vec()
    }

    /// Flattened result leaves, named `result`, `result.x`, `result.field`, ...,
    /// then each `ptr<function, T>` parameter's final value, named after the
    /// parameter (`out_normal.x`, ...).
    pub fn output_leaves(&self) -> Vec<(String, ScalarKind)> {
        self.out_leaves.to_vec()
    }

    /// [`Program::input_leaves`] and [`Program::output_leaves`], shared
    /// (nothing is named or copied per call).
    pub fn leaves(&self) -> (Leaves, Leaves) {
        (self.in_leaves.clone(), self.out_leaves.clone())
    }

    /// The `ptr<function, T>` parameters: each is also in [`Program::params`]
    /// (its initial value is an input; a caller with nothing better passes
    /// zeros, which is what a fresh `var` holds) and its final value is read
    /// back as outputs after the result's ([`Program::output_leaves`]).
    pub fn out_params(&self) -> &[(String, Ty)] {
        &self.code.out_params
    }

    /// Number of slots (columns of [`LANES`] u32) one thread works in.
    pub fn slot_count(&self) -> usize {
        self.fast.slot_count
    }

    /// Number of slots of the lowered code, before fusion and sharing by
    /// liveness (one per value): what the shadow executor works in.
    pub fn lowered_slot_count(&self) -> usize {
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
        let native = self.native_for(n);
        let chunk = self.chunk(&native);
        let chunks = n.div_ceil(chunk);
        let workers = rayon::current_num_threads().min(chunks).max(1);
        if workers == 1 {
            // One work item (a streamed check's segment, say): on this
            // thread, without handing a job to the pool and waking a thread
            // that might take it.
            return self.serial(native, inputs, outputs, n);
        }
        // One raw pointer per output column, taken once: the only way any
        // thread reaches the columns until the evaluation ends.
        let out_ptrs: Vec<OutCol> = outputs.iter_mut().map(|c| OutCol(c.as_mut_ptr())).collect();
        // One machine per worker thread; workers take chunks from a shared
        // counter until none are left (balances points that loop longer).
        let next = std::sync::atomic::AtomicUsize::new(0);
        let found = std::sync::Mutex::new(Vec::new());
        rayon::scope(|s| {
            for _ in 0..workers {
                s.spawn(|_| {
                    let mut m = self.machine(native.clone());
                    let mut mine = Vec::new();
                    loop {
                        let c = next.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
                        if c >= chunks {
                            break;
                        }
                        let start = c * chunk;
                        let len = chunk.min(n - start);
                        // SAFETY: each chunk index is taken once, so chunks
                        // cover disjoint ranges of every output column, each
                        // `len` long from `start`.
                        let outs: Vec<OutCol> = out_ptrs
                            .iter()
                            .map(|p| OutCol(unsafe { p.0.add(start) }))
                            .collect();
                        let ins: Vec<&[u32]> =
                            inputs.iter().map(|c| &c[start..start + len]).collect();
                        mine.extend(self.run_range(&mut m, &ins, &outs, len, start));
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
        self.serial(self.native_for(n), inputs, outputs, n)
    }

    /// The `n` points of `inputs` (checked by [`Program::prepare`]) on this
    /// thread, with `native` code where given.
    fn serial(
        &self,
        native: Compiled,
        inputs: &[&[u32]],
        outputs: &mut [Vec<u32>],
        n: usize,
    ) -> Vec<LaneIssue> {
        let mut m = self.machine(native);
        let outs: Vec<OutCol> = outputs.iter_mut().map(|c| OutCol(c.as_mut_ptr())).collect();
        let mut issues = self.run_range(&mut m, inputs, &outs, n, 0);
        // Within a batch, index and budget issues come before the non-finite
        // ones; sort by point (stably) as `eval` does.
        issues.sort_by_key(|i| i.point);
        issues
    }

    /// The native code an evaluation of `points` more points runs with:
    /// `Some` when the program's tier is [`Tier::Native`] by then (counting
    /// those points) and it has straight-line stretches to compile.
    #[cfg(all(target_arch = "x86_64", not(miri)))]
    fn native_for(&self, points: usize) -> Compiled {
        let total = self
            .evaluated
            .fetch_add(points, std::sync::atomic::Ordering::Relaxed)
            .saturating_add(points);
        if native::tier_for(total) != native::Tier::Native {
            return None;
        }
        if let Some(done) = self.native.get() {
            return done.clone();
        }
        if !native::forced()
            && self
                .compiling
                .swap(true, std::sync::atomic::Ordering::AcqRel)
        {
            // Another evaluation is compiling: interpret this one (the
            // tiers give the same bits) rather than wait for it.
            return None;
        }
        self.native
            .get_or_init(|| native::compile(&self.fast).map(std::sync::Arc::new))
            .clone()
    }

    /// Announce `points` evaluations to come (a check's whole sweep): in
    /// the automatic tier, a program announced to evaluate
    /// [`NATIVE_MIN`] points or more is compiled on its first evaluation,
    /// instead of after that many points have been interpreted.
    pub fn announce(&self, points: usize) {
        self.evaluated
            .fetch_add(points, std::sync::atomic::Ordering::Relaxed);
    }

    /// Without a native code generator, every evaluation is interpreted.
    #[cfg(not(all(target_arch = "x86_64", not(miri))))]
    fn native_for(&self, _points: usize) -> Compiled {
        None
    }

    /// Points per work item of an evaluation running `native` code.
    #[cfg(all(target_arch = "x86_64", not(miri)))]
    fn chunk(&self, native: &Compiled) -> usize {
        match native {
            Some(n) if n.whole.is_some() => WHOLE_CHUNK,
            _ => CHUNK,
        }
    }

    /// Points per work item of an evaluation.
    #[cfg(not(all(target_arch = "x86_64", not(miri))))]
    fn chunk(&self, _native: &Compiled) -> usize {
        CHUNK
    }

    /// A machine for this program, running `native` code where given.
    #[cfg(all(target_arch = "x86_64", not(miri)))]
    fn machine(&self, native: Compiled) -> Machine {
        let mut m = Machine::new(&self.fast, self.step_budget);
        m.seed = self.seed;
        m.native = native;
        m
    }

    /// A machine for this program.
    #[cfg(not(all(target_arch = "x86_64", not(miri))))]
    fn machine(&self, _native: Compiled) -> Machine {
        let mut m = Machine::new(&self.fast, self.step_budget);
        m.seed = self.seed;
        m
    }

    /// Whether some of this program runs as native code when its tier is
    /// [`Tier::Native`] (compiling it now if not yet done).
    #[cfg(all(target_arch = "x86_64", not(miri)))]
    pub fn has_native_code(&self) -> bool {
        self.native
            .get_or_init(|| native::compile(&self.fast).map(std::sync::Arc::new))
            .is_some()
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
            // Every value is written by the evaluation (a bound output
            // column by the machine, the others by the copy-out), so a
            // column of the right length is reused as it is.
            if c.len() != n {
                c.clear();
                c.resize(n, 0);
            }
        }
        n
    }

    /// `name=value, ...` for point `i` of `ins`.
    pub(crate) fn describe_point(&self, ins: &[&[u32]], i: usize) -> String {
        self.in_leaves
            .iter()
            .zip(ins)
            .map(|((name, k), col)| format!("{name}={}", bits_to_f64(*k, col[i])))
            .collect::<Vec<_>>()
            .join(", ")
    }

    /// Check that `inputs` has one column per input leaf, all of one length.
    pub fn check_inputs(&self, inputs: &[&[u32]]) -> Result<usize, String> {
        let leaves = &self.in_leaves;
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

    /// Evaluate every point in the `f64` number model: every `f32`/`f16`
    /// operation and built-in computed in binary64 (see `shadow` for each
    /// operation's f64 reading; transcendentals from the `libm` crate's f64
    /// functions). One f64 column per output leaf (integer and boolean
    /// leaves as their value); a point that ran out of steps is NaN. The
    /// program's own number model (exact or spec-bound) plays no part.
    ///
    /// # Panics
    /// When the columns do not match [`Program::input_leaves`].
    pub fn eval_f64(&self, inputs: &[&[u32]]) -> Vec<Vec<f64>> {
        let exact = vec![true; self.code.sites.len()];
        self.eval_values(inputs, &exact)
    }

    /// Every value in f64, the operation at site `s` rounded to its working
    /// type unless `exact[s]` (the precision analysis' re-runs).
    pub(crate) fn eval_values(&self, inputs: &[&[u32]], exact: &[bool]) -> Vec<Vec<f64>> {
        use rayon::prelude::*;
        let n = self.check_inputs(inputs).unwrap_or_else(|e| panic!("{e}"));
        let chunks = n.div_ceil(CHUNK);
        let parts: Vec<Vec<Vec<f64>>> = (0..chunks)
            .into_par_iter()
            .map(|c| {
                let mut m = self.shadow_machine();
                let (lo, hi) = (c * CHUNK, ((c + 1) * CHUNK).min(n));
                let mut cols = vec![Vec::with_capacity(hi - lo); self.code.output_slots.len()];
                let mut start = lo;
                while start < hi {
                    let len = LANES.min(hi - start);
                    let ins: Vec<&[u32]> = inputs.iter().map(|c| &c[start..start + len]).collect();
                    let out = m.run(&ins, len, shadow::Mode::Values { exact }, &mut shadow::Deaf);
                    for (c, o) in cols.iter_mut().zip(out.shadow) {
                        c.extend(o);
                    }
                    start += len;
                }
                cols
            })
            .collect();
        let mut cols = vec![Vec::with_capacity(n); self.code.output_slots.len()];
        for part in parts {
            for (c, p) in cols.iter_mut().zip(part) {
                c.extend(p);
            }
        }
        cols
    }

    /// A shadow machine for this program (one thread's).
    pub(crate) fn shadow_machine(&self) -> shadow::Shadow<'_> {
        shadow::Shadow::new(&self.code, self.step_budget, self.seed)
    }

    /// The verified lowered code, one op per source operation (for the
    /// precision analysis; the executor runs its fused, liveness-allocated
    /// form).
    pub(crate) fn code(&self) -> &Verified {
        &self.code
    }

    /// Path of the shader this program came from.
    pub fn path(&self) -> &std::path::Path {
        &self.path
    }
}

/// The input leaves of `code` ([`Program::input_leaves`]).
fn input_leaves(code: &Verified) -> Vec<(String, ScalarKind)> {
    code.params
        .iter()
        .flat_map(|(name, ty)| {
            let pointer = code.out_params.iter().any(|(n, _)| n == name);
            let prefix = if pointer {
                format!("*{name}")
            } else {
                name.clone()
            };
            ty.leaf_names(&prefix).into_iter().zip(ty.leaves())
        })
        .collect()
}

/// The output leaves of `code` ([`Program::output_leaves`]).
fn output_leaves(code: &Verified) -> Vec<(String, ScalarKind)> {
    let mut leaves: Vec<(String, ScalarKind)> = match &code.result {
        Some(ty) => ty
            .leaf_names("result")
            .into_iter()
            .zip(ty.leaves())
            .collect(),
        None => Vec::new(),
    };
    for (name, ty) in &code.out_params {
        leaves.extend(ty.leaf_names(name).into_iter().zip(ty.leaves()));
    }
    leaves
}

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
