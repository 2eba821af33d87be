//! GPU back end: run a WGSL function on a real WebGPU implementation (through
//! `wgpu`) over the same argument columns the CPU evaluator takes, and hand
//! back result columns in the evaluator's encoding, so the two back ends can
//! be compared leaf by leaf.
//!
//! ```text
//! Shader + function ──wrap──▶ source + generated @compute entry point
//!                                 │ create_shader_module / pipeline (overrides as constants)
//! argument columns ──upload──▶ storage buffer ──dispatch (chunks within the limits)──▶
//!                                              output buffer ──read back──▶ result columns
//! ```
//!
//! [`Gpu::new`] picks an adapter (the default one, or the first whose name
//! contains the given text), creates a device with the adapter's own limits
//! and the `shader-f16` feature when the adapter has it, and records
//! [`AdapterReport`] (name, driver, driver info, backend) for reports: data
//! derived from a driver is only meaningful next to the driver's identity.
//!
//! Validation layers are never enabled: debug builds of `wgpu` would
//! otherwise turn them on, and with Mesa's software Vulkan driver they report
//! spurious errors. [`device_required`] reads `SHADEGATE_REQUIRE_GPU`, which
//! CI sets so that "no adapter" fails instead of skipping.
//!
//! A driver may compute floats differently from the CPU within the latitude
//! the WGSL spec grants (reassociation, fusion, per-operation accuracy, flush
//! of subnormals: "Floating Point Evaluation"); compare floats with
//! [`ulp_summary`] and a bound per check, integers and bits exactly.

mod error;
pub mod wrap;

use std::collections::BTreeMap;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::{mpsc, Arc, Mutex};
use std::time::{Duration, Instant};

use crate::values::{ScalarKind, Ty};
use crate::wgsl::Shader;

pub use crate::compare::ulp::{describe_point, format_table, leaf_distance, ulp_summary, LeafUlp};
pub use error::GpuError;
pub use wrap::{wrap, Wrapped, WORKGROUP_SIZE};

/// Environment variable that turns "no adapter" from a skip into a failure.
pub const REQUIRE_GPU_VAR: &str = "SHADEGATE_REQUIRE_GPU";

/// Whether the environment demands a device (`SHADEGATE_REQUIRE_GPU=1`).
pub fn device_required() -> bool {
    std::env::var(REQUIRE_GPU_VAR).is_ok_and(|v| v.trim() == "1")
}

/// Identity of the adapter and driver, for reports.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize)]
pub struct AdapterReport {
    pub name: String,
    pub driver: String,
    pub driver_info: String,
    /// `Vulkan`, `Metal`, `Dx12`, ...
    pub backend: String,
    /// `Cpu` for software drivers, `DiscreteGpu`, `IntegratedGpu`, ...
    pub device_type: String,
    pub vendor: u32,
    pub device: u32,
    /// Whether the device was created with `shader-f16`.
    pub shader_f16: bool,
}

impl std::fmt::Display for AdapterReport {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "{} ({}, {}; driver {} {}; f16 {})",
            self.name,
            self.backend,
            self.device_type,
            self.driver,
            self.driver_info,
            if self.shader_f16 { "yes" } else { "no" }
        )
    }
}

/// The part of the device limits the GPU back end plans its dispatches with.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct DispatchLimits {
    /// Bytes one storage buffer binding may span.
    pub max_binding_bytes: u64,
    /// Workgroups per dispatch dimension.
    pub max_workgroups_per_dimension: u32,
    /// Points per dispatch (a choice of ours, not a device limit).
    pub max_points_per_dispatch: usize,
}

/// Points per dispatch unless set otherwise: keeps one dispatch's buffers at a
/// few tens of MiB and one submission short. Operating systems reset a GPU
/// whose single submission runs for about two seconds (common practice).
pub const DEFAULT_POINTS_PER_DISPATCH: usize = 1 << 20;

/// A device ready to run functions.
pub struct Gpu {
    device: wgpu::Device,
    queue: wgpu::Queue,
    report: AdapterReport,
    limits: DispatchLimits,
    setup: Duration,
    /// Errors no error scope caught (e.g. from another thread's work).
    uncaptured: Arc<Mutex<Vec<String>>>,
    /// Pipelines compiled by [`Gpu::prepare`] so far (successful or not).
    compiled: AtomicUsize,
}

impl std::fmt::Debug for Gpu {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Gpu")
            .field("adapter", &self.report)
            .field("limits", &self.limits)
            .finish_non_exhaustive()
    }
}

/// A function compiled into a pipeline on one device.
pub struct Kernel<'r> {
    gpu: &'r Gpu,
    wrapped: Wrapped,
    pipeline: wgpu::ComputePipeline,
    layout: wgpu::BindGroupLayout,
    file: String,
    function: String,
    compile: Duration,
}

impl Gpu {
    /// Pick an adapter and create a device. `adapter_name`: `None` for the
    /// default adapter, or text the adapter's name must contain (case-insensitive).
    pub fn new(adapter_name: Option<&str>) -> Result<Gpu, GpuError> {
        let start = Instant::now();
        let mut desc = wgpu::InstanceDescriptor::new_without_display_handle();
        // No validation layers, no debug labels: see the module doc.
        desc.flags = wgpu::InstanceFlags::VALIDATION_INDIRECT_CALL;
        let instance = wgpu::Instance::new(desc);
        let adapter = match adapter_name {
            None => pollster::block_on(
                instance.request_adapter(&wgpu::RequestAdapterOptions::default()),
            )
            .map_err(|e| GpuError::NoAdapter {
                detail: e.to_string(),
            })?,
            Some(wanted) => {
                let all = pollster::block_on(instance.enumerate_adapters(wgpu::Backends::all()));
                let lower = wanted.to_lowercase();
                let names: Vec<String> = all
                    .iter()
                    .map(|a| {
                        let i = a.get_info();
                        format!("{} ({:?})", i.name, i.backend)
                    })
                    .collect();
                all.into_iter()
                    .find(|a| a.get_info().name.to_lowercase().contains(&lower))
                    .ok_or(GpuError::AdapterNotFound {
                        wanted: wanted.to_string(),
                        available: names,
                    })?
            }
        };
        let info = adapter.get_info();
        let f16 = adapter.features().contains(wgpu::Features::SHADER_F16);
        let required_features = if f16 {
            wgpu::Features::SHADER_F16
        } else {
            wgpu::Features::empty()
        };
        let (device, queue) = pollster::block_on(adapter.request_device(&wgpu::DeviceDescriptor {
            label: Some("shadegate gpu"),
            required_features,
            // The adapter's own limits: the largest buffers it allows.
            required_limits: adapter.limits(),
            experimental_features: wgpu::ExperimentalFeatures::disabled(),
            memory_hints: wgpu::MemoryHints::Performance,
            trace: wgpu::Trace::Off,
        }))
        .map_err(|e| GpuError::Device {
            adapter: info.name.clone(),
            detail: e.to_string(),
        })?;
        let uncaptured = Arc::new(Mutex::new(Vec::new()));
        let sink = uncaptured.clone();
        device.on_uncaptured_error(Arc::new(move |e: wgpu::Error| {
            if let Ok(mut v) = sink.lock() {
                v.push(e.to_string());
            }
        }));
        let l = device.limits();
        let limits = DispatchLimits {
            max_binding_bytes: l.max_storage_buffer_binding_size.min(l.max_buffer_size),
            max_workgroups_per_dimension: l.max_compute_workgroups_per_dimension,
            max_points_per_dispatch: DEFAULT_POINTS_PER_DISPATCH,
        };
        let report = AdapterReport {
            name: info.name.clone(),
            driver: info.driver.clone(),
            driver_info: info.driver_info.clone(),
            backend: format!("{:?}", info.backend),
            device_type: format!("{:?}", info.device_type),
            vendor: info.vendor,
            device: info.device,
            shader_f16: f16,
        };
        Ok(Gpu {
            device,
            queue,
            report,
            limits,
            setup: start.elapsed(),
            uncaptured,
            compiled: AtomicUsize::new(0),
        })
    }

    pub fn adapter(&self) -> &AdapterReport {
        &self.report
    }

    /// How many times [`Gpu::prepare`] has compiled a function into a
    /// pipeline on this device.
    pub fn pipelines_compiled(&self) -> usize {
        self.compiled.load(Ordering::Relaxed)
    }

    /// Time [`Gpu::new`] took (instance, adapter, device).
    pub fn setup_time(&self) -> Duration {
        self.setup
    }

    pub fn limits(&self) -> DispatchLimits {
        self.limits
    }

    /// Plan smaller dispatches than the device allows (never larger): at most
    /// `points` points and `workgroups` workgroups per dimension. Lets tests
    /// exercise chunking and two-dimensional dispatch grids.
    pub fn restrict_dispatch(&mut self, points: usize, workgroups: u32) {
        self.limits.max_points_per_dispatch = points.max(1);
        self.limits.max_workgroups_per_dimension =
            workgroups.clamp(1, self.limits.max_workgroups_per_dimension);
    }

    /// Compile `function` of `shader` into a pipeline; `overrides` set
    /// pipeline-overridable constants by name or numeric id.
    pub fn prepare(
        &self,
        shader: &Shader,
        function: &str,
        overrides: &BTreeMap<String, f64>,
    ) -> Result<Kernel<'_>, GpuError> {
        let start = Instant::now();
        self.compiled.fetch_add(1, Ordering::Relaxed);
        let file = shader.path.display().to_string();
        let wrapped = wrap::wrap(shader, function).map_err(|e| GpuError::Wrap {
            file: file.clone(),
            function: function.to_string(),
            detail: e.0,
        })?;
        if wrapped.uses_f16 && !self.report.shader_f16 {
            return Err(GpuError::Unsupported {
                adapter: self.report.name.clone(),
                file,
                function: function.to_string(),
                what: "f16 (the WebGPU feature `shader-f16`)".into(),
            });
        }
        let pipeline_error = |detail: String| GpuError::Pipeline {
            adapter: self.report.name.clone(),
            file: file.clone(),
            function: function.to_string(),
            detail,
        };
        let scope = self.device.push_error_scope(wgpu::ErrorFilter::Validation);
        // WebGPU keys an override that has an `@id` by that number only; the
        // evaluator takes its name too, so translate names of such overrides.
        let keys: Vec<(String, f64)> = overrides
            .iter()
            .map(|(k, v)| {
                let id = shader
                    .module
                    .overrides
                    .iter()
                    .find(|(_, o)| o.name.as_deref() == Some(k.as_str()))
                    .and_then(|(_, o)| o.id);
                (id.map_or_else(|| k.clone(), |n| n.to_string()), *v)
            })
            .collect();
        let constants: Vec<(&str, f64)> = keys.iter().map(|(k, v)| (k.as_str(), *v)).collect();
        // naga's translation for the driver runs inside these calls and
        // panics on some valid modules (its SPIR-V writer on a pointer to an
        // array element or struct member passed to a function): report that
        // as this function's failure instead of taking the process down.
        let built = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
            let module = self
                .device
                .create_shader_module(wgpu::ShaderModuleDescriptor {
                    label: Some("shadegate gpu module"),
                    source: wgpu::ShaderSource::Wgsl(wrapped.source.as_str().into()),
                });
            let pipeline = self
                .device
                .create_compute_pipeline(&wgpu::ComputePipelineDescriptor {
                    label: Some("shadegate gpu pipeline"),
                    layout: None,
                    module: &module,
                    entry_point: Some(&wrapped.entry_point),
                    compilation_options: wgpu::PipelineCompilationOptions {
                        constants: &constants,
                        zero_initialize_workgroup_memory: true,
                    },
                    cache: None,
                });
            (module, pipeline)
        }));
        let (module, pipeline) = match built {
            Ok(b) => b,
            Err(payload) => {
                drop(scope);
                let what = payload
                    .downcast_ref::<String>()
                    .map(String::as_str)
                    .or_else(|| payload.downcast_ref::<&str>().copied())
                    .unwrap_or("(no message)");
                return Err(pipeline_error(format!(
                    "the shader translator inside wgpu panicked: {what}"
                )));
            }
        };
        if let Some(e) = pollster::block_on(scope.pop()) {
            let info = pollster::block_on(module.get_compilation_info());
            let mut detail = e.to_string();
            for m in info.messages {
                let place = match m.location {
                    Some(loc) if loc.line_number as usize > wrapped.original_lines => {
                        format!("generated entry point, line {}", loc.line_number)
                    }
                    Some(loc) => format!("{file}:{}:{}", loc.line_number, loc.line_position),
                    None => "module".into(),
                };
                detail.push_str(&format!("\n  {place}: {}", m.message));
            }
            return Err(pipeline_error(detail));
        }
        let layout = pipeline.get_bind_group_layout(wrapped.group);
        Ok(Kernel {
            gpu: self,
            wrapped,
            pipeline,
            layout,
            file,
            function: function.to_string(),
            compile: start.elapsed(),
        })
    }

    /// [`Gpu::prepare`] then [`Kernel::eval`].
    pub fn eval(
        &self,
        shader: &Shader,
        function: &str,
        overrides: &BTreeMap<String, f64>,
        inputs: &[&[u32]],
    ) -> Result<Vec<Vec<u32>>, GpuError> {
        self.prepare(shader, function, overrides)?.eval(inputs)
    }

    /// Compile a check's function from its [`crate::gate::Build`]: the
    /// check's overrides reach the pipeline; a number model other than exact
    /// arithmetic is refused (the device has only its own).
    pub fn prepare_build(&self, build: &crate::gate::Build) -> Result<Kernel<'_>, String> {
        if build.arithmetic != crate::eval::Arithmetic::Exact {
            return Err(format!(
                "`{}` in {}: the device evaluates with its own arithmetic; a check with a different number model ({:?}) runs only on the CPU evaluator",
                build.function,
                build.shader.path.display(),
                build.arithmetic
            ));
        }
        if let Some(at) = &build.textures_at {
            return Err(format!(
                "{at}: `{}` in {}: the check binds look-up tables in place of textures; \
                 table-bound checks run only on the CPU evaluator (the device back end does \
                 not upload them)",
                build.function,
                build.shader.path.display()
            ));
        }
        self.prepare(&build.shader, &build.function, &build.overrides)
            .map_err(|e| e.to_string())
    }

    /// Run the checks of `suite` whose name contains `filter` with this
    /// device as the back end (see [`crate::gate::run_on`]).
    ///
    /// A check reaches the device segment by segment; each function is
    /// compiled once and its pipeline reused for the following segments (the
    /// last [`KEPT_KERNELS`] functions are kept, so a twin check's two sides
    /// both stay compiled).
    pub fn run_suite(
        &self,
        suite: &crate::suite::Suite,
        filter: Option<&str>,
        progress: impl FnMut(usize, usize, &str),
    ) -> crate::gate::RunResult {
        let label = self.adapter().to_string();
        // Most recently used last. The device runs one segment at a time, so
        // the lock is held through compilation and evaluation.
        let kernels: Mutex<Vec<(KernelKey, Kernel<'_>)>> = Mutex::new(Vec::new());
        let call = |build: &crate::gate::Build,
                    inputs: &[&[u32]]|
         -> Result<(Vec<Vec<u32>>, String), String> {
            let mut kept = kernels
                .lock()
                .map_err(|_| "the device lock is poisoned".to_string())?;
            let key = KernelKey::of(build);
            let at = match kept.iter().position(|(k, _)| *k == key) {
                Some(i) => {
                    let hit = kept.remove(i);
                    kept.push(hit);
                    kept.len() - 1
                }
                None => {
                    let kernel = self.prepare_build(build)?;
                    if kept.len() == KEPT_KERNELS {
                        kept.remove(0);
                    }
                    kept.push((key, kernel));
                    kept.len() - 1
                }
            };
            let cols = kept[at].1.eval(inputs).map_err(|e| e.to_string())?;
            Ok((cols, label.clone()))
        };
        crate::gate::run_on(suite, filter, progress, Some(&call))
    }

    fn take_uncaptured(&self) -> Option<String> {
        let mut v = self.uncaptured.lock().ok()?;
        if v.is_empty() {
            None
        } else {
            Some(std::mem::take(&mut *v).join("; "))
        }
    }
}

/// Compiled functions [`Gpu::run_suite`] keeps for reuse.
pub const KEPT_KERNELS: usize = 8;

/// What a pipeline is compiled from: the shader's files and text, the
/// function and the override values (by their bits).
#[derive(PartialEq)]
struct KernelKey {
    path: std::path::PathBuf,
    source: String,
    function: String,
    overrides: Vec<(String, u64)>,
}

impl KernelKey {
    fn of(build: &crate::gate::Build) -> KernelKey {
        KernelKey {
            path: build.shader.path.clone(),
            source: build.shader.source.clone(),
            function: build.function.clone(),
            overrides: build
                .overrides
                .iter()
                .map(|(k, v)| (k.clone(), v.to_bits()))
                .collect(),
        }
    }
}

/// How one chunk of points is laid out on the dispatch grid.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Grid {
    /// Workgroups along x and y.
    pub x: u32,
    pub y: u32,
    /// Invocations per grid row (`x * WORKGROUP_SIZE`).
    pub row: u32,
}

/// The grid for `points` points: one row while the workgroup count fits one
/// dimension, else full rows of `max_per_dim` workgroups.
pub fn grid(points: usize, max_per_dim: u32) -> Grid {
    let groups = points.div_ceil(WORKGROUP_SIZE as usize).max(1) as u64;
    let max = u64::from(max_per_dim.max(1));
    let (x, y) = if groups <= max {
        (groups, 1)
    } else {
        (max, groups.div_ceil(max))
    };
    Grid {
        x: x as u32,
        y: y as u32,
        row: (x * u64::from(WORKGROUP_SIZE)) as u32,
    }
}

/// Points per chunk for `leaves_in` / `leaves_out` 32-bit words per point.
pub fn chunk_points(limits: &DispatchLimits, leaves_in: usize, leaves_out: usize) -> usize {
    let words = leaves_in.max(leaves_out).max(1) as u64;
    let by_binding = limits.max_binding_bytes / (4 * words);
    let max_dim = u64::from(limits.max_workgroups_per_dimension.max(1));
    let by_grid = max_dim * max_dim * u64::from(WORKGROUP_SIZE);
    // The shader indexes with u32: leaf * count + i must fit.
    let by_index = u64::from(u32::MAX) / words;
    (limits.max_points_per_dispatch as u64)
        .min(by_binding)
        .min(by_grid)
        .min(by_index)
        .max(1) as usize
}

impl Kernel<'_> {
    /// The function's parameters and result type, as the evaluator sees them.
    pub fn params(&self) -> &[(String, Ty)] {
        &self.wrapped.params
    }

    /// The return type; `None` for a function that only writes through
    /// `ptr<function, T>` parameters.
    pub fn result(&self) -> Option<&Ty> {
        self.wrapped.result.as_ref()
    }

    pub fn input_kinds(&self) -> &[ScalarKind] {
        &self.wrapped.input_kinds
    }

    pub fn output_kinds(&self) -> &[ScalarKind] {
        &self.wrapped.output_kinds
    }

    /// The generated WGSL module.
    pub fn source(&self) -> &str {
        &self.wrapped.source
    }

    /// Time [`Gpu::prepare`] took (wrapping, shader module, pipeline).
    pub fn compile_time(&self) -> Duration {
        self.compile
    }

    fn err(&self, detail: impl Into<String>) -> GpuError {
        GpuError::Dispatch {
            adapter: self.gpu.report.name.clone(),
            file: self.file.clone(),
            function: self.function.clone(),
            detail: detail.into(),
        }
    }

    /// Run every point; `inputs[i]` is the column of input leaf `i`, all of
    /// one length. Returns one column per output leaf.
    pub fn eval(&self, inputs: &[&[u32]]) -> Result<Vec<Vec<u32>>, GpuError> {
        let n_in = self.wrapped.input_kinds.len();
        let n_out = self.wrapped.output_kinds.len();
        if inputs.len() != n_in {
            let names: Vec<String> = self
                .wrapped
                .params
                .iter()
                .map(|(n, t)| format!("{n}: {t} ({} leaves)", t.leaf_count()))
                .collect();
            return Err(GpuError::Inputs {
                file: self.file.clone(),
                function: self.function.clone(),
                detail: format!(
                    "takes {n_in} scalar inputs ({}), got {} columns",
                    names.join(", "),
                    inputs.len()
                ),
            });
        }
        let points = inputs.first().map_or(1, |c| c.len());
        if let Some(i) = inputs.iter().position(|c| c.len() != points) {
            return Err(GpuError::Inputs {
                file: self.file.clone(),
                function: self.function.clone(),
                detail: format!(
                    "input column {i} has {} points, the first has {points}",
                    inputs[i].len()
                ),
            });
        }
        let mut out: Vec<Vec<u32>> = (0..n_out).map(|_| Vec::with_capacity(points)).collect();
        if points == 0 {
            return Ok(out);
        }
        let limits = self.gpu.limits;
        let chunk = chunk_points(&limits, n_in, n_out).min(points);
        let dev = &self.gpu.device;
        let scope = dev.push_error_scope(wgpu::ErrorFilter::OutOfMemory);
        let scope_v = dev.push_error_scope(wgpu::ErrorFilter::Validation);
        let in_buf = (n_in > 0).then(|| {
            dev.create_buffer(&wgpu::BufferDescriptor {
                label: Some("gpu input"),
                size: (chunk * n_in * 4) as u64,
                usage: wgpu::BufferUsages::STORAGE | wgpu::BufferUsages::COPY_DST,
                mapped_at_creation: false,
            })
        });
        let out_bytes = (chunk * n_out * 4) as u64;
        let out_buf = dev.create_buffer(&wgpu::BufferDescriptor {
            label: Some("gpu output"),
            size: out_bytes,
            usage: wgpu::BufferUsages::STORAGE | wgpu::BufferUsages::COPY_SRC,
            mapped_at_creation: false,
        });
        let staging = dev.create_buffer(&wgpu::BufferDescriptor {
            label: Some("gpu read-back"),
            size: out_bytes,
            usage: wgpu::BufferUsages::MAP_READ | wgpu::BufferUsages::COPY_DST,
            mapped_at_creation: false,
        });
        let count_buf = dev.create_buffer(&wgpu::BufferDescriptor {
            label: Some("gpu count"),
            size: 16,
            usage: wgpu::BufferUsages::UNIFORM | wgpu::BufferUsages::COPY_DST,
            mapped_at_creation: false,
        });
        let mut entries = vec![
            wgpu::BindGroupEntry {
                binding: 1,
                resource: out_buf.as_entire_binding(),
            },
            wgpu::BindGroupEntry {
                binding: 2,
                resource: count_buf.as_entire_binding(),
            },
        ];
        if let Some(b) = &in_buf {
            entries.push(wgpu::BindGroupEntry {
                binding: 0,
                resource: b.as_entire_binding(),
            });
        }
        let bind = dev.create_bind_group(&wgpu::BindGroupDescriptor {
            label: Some("gpu bindings"),
            layout: &self.layout,
            entries: &entries,
        });
        if let Some(e) = pollster::block_on(scope_v.pop()) {
            drop(scope);
            return Err(self.err(format!("creating buffers: {e}")));
        }
        if let Some(e) = pollster::block_on(scope.pop()) {
            return Err(self.err(format!(
                "out of device memory for {chunk} points per dispatch: {e}"
            )));
        }
        let mut start = 0;
        while start < points {
            let n = chunk.min(points - start);
            if let Some(b) = &in_buf {
                for (leaf, col) in inputs.iter().enumerate() {
                    self.gpu.queue.write_buffer(
                        b,
                        (leaf * n * 4) as u64,
                        bytemuck::cast_slice(&col[start..start + n]),
                    );
                }
            }
            let g = grid(n, limits.max_workgroups_per_dimension);
            let count = [n as u32, g.row, 0, 0];
            self.gpu
                .queue
                .write_buffer(&count_buf, 0, bytemuck::cast_slice(&count));
            let mut enc = dev.create_command_encoder(&wgpu::CommandEncoderDescriptor {
                label: Some("gpu dispatch"),
            });
            {
                let mut pass = enc.begin_compute_pass(&wgpu::ComputePassDescriptor {
                    label: Some("gpu"),
                    timestamp_writes: None,
                });
                pass.set_pipeline(&self.pipeline);
                pass.set_bind_group(self.wrapped.group, &bind, &[]);
                pass.dispatch_workgroups(g.x, g.y, 1);
            }
            let bytes = (n * n_out * 4) as u64;
            enc.copy_buffer_to_buffer(&out_buf, 0, &staging, 0, bytes);
            self.gpu.queue.submit([enc.finish()]);
            let (tx, rx) = mpsc::channel();
            staging.map_async(wgpu::MapMode::Read, 0..bytes, move |r| {
                let _ = tx.send(r);
            });
            dev.poll(wgpu::PollType::wait_indefinitely())
                .map_err(|e| self.err(format!("waiting for the device: {e}")))?;
            match rx.recv() {
                Ok(Ok(())) => {}
                Ok(Err(e)) => return Err(self.err(format!("reading results back: {e}"))),
                Err(_) => return Err(self.err("the read-back was dropped")),
            }
            {
                let view = staging
                    .get_mapped_range(0..bytes)
                    .map_err(|e| self.err(format!("reading results back: {e}")))?;
                let bytes: &[u8] = &view;
                for (leaf, col) in out.iter_mut().enumerate() {
                    let part = &bytes[leaf * n * 4..(leaf + 1) * n * 4];
                    match bytemuck::try_cast_slice::<u8, u32>(part) {
                        Ok(words) => col.extend_from_slice(words),
                        // A mapping not aligned to 4 bytes: copy word by word.
                        Err(_) => col.extend(
                            part.chunks_exact(4)
                                .map(|w| u32::from_ne_bytes([w[0], w[1], w[2], w[3]])),
                        ),
                    }
                }
            }
            staging.unmap();
            if let Some(e) = self.gpu.take_uncaptured() {
                return Err(self.err(e));
            }
            start += n;
        }
        // f16 results: only the low half is the value (the generated code
        // writes 0 above it; mask anyway so the encoding is exact).
        for (col, k) in out.iter_mut().zip(&self.wrapped.output_kinds) {
            if *k == ScalarKind::F16 {
                col.iter_mut().for_each(|w| *w &= 0xffff);
            }
        }
        Ok(out)
    }
}
