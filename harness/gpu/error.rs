//! The GPU back end's errors: what went wrong, naming the adapter, file and function
//! involved, and how each is worded.

/// What went wrong, naming the adapter, file and function involved.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum GpuError {
    /// No WebGPU adapter at all (no GPU and no software driver installed).
    NoAdapter { detail: String },
    /// An adapter was asked for by name and none matched.
    AdapterNotFound {
        wanted: String,
        available: Vec<String>,
    },
    /// The adapter refused to create a device.
    Device { adapter: String, detail: String },
    /// The module needs something the adapter lacks (e.g. `shader-f16`).
    Unsupported {
        adapter: String,
        file: String,
        function: String,
        what: String,
    },
    /// The function cannot be wrapped (no such function, resources, pointer parameters).
    Wrap {
        file: String,
        function: String,
        detail: String,
    },
    /// The driver (or wgpu's validation) rejected the generated module or pipeline.
    Pipeline {
        adapter: String,
        file: String,
        function: String,
        detail: String,
    },
    /// The argument columns do not match the function's parameters.
    Inputs {
        file: String,
        function: String,
        detail: String,
    },
    /// A dispatch, copy or read-back failed.
    Dispatch {
        adapter: String,
        file: String,
        function: String,
        detail: String,
    },
}

impl GpuError {
    /// True when the machine simply has no adapter: tests skip on this
    /// (unless [`super::device_required`]).
    pub fn is_no_adapter(&self) -> bool {
        matches!(self, GpuError::NoAdapter { .. })
    }
}

impl std::fmt::Display for GpuError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            GpuError::NoAdapter { detail } => write!(
                f,
                "no WebGPU adapter found ({detail}); install a GPU driver, or Mesa's software \
                 Vulkan driver (Debian packages mesa-vulkan-drivers and libvulkan1)"
            ),
            GpuError::AdapterNotFound { wanted, available } => write!(
                f,
                "no adapter whose name contains `{wanted}` (adapters: {})",
                if available.is_empty() {
                    "none".to_string()
                } else {
                    available.join("; ")
                }
            ),
            GpuError::Device { adapter, detail } => {
                write!(f, "adapter `{adapter}` could not create a device: {detail}")
            }
            GpuError::Unsupported {
                adapter,
                file,
                function,
                what,
            } => write!(
                f,
                "{file}: `{function}` needs {what}, which adapter `{adapter}` does not support"
            ),
            GpuError::Wrap {
                file,
                function,
                detail,
            } => write!(f, "{file}: cannot run `{function}`: {detail}"),
            GpuError::Pipeline {
                adapter,
                file,
                function,
                detail,
            } => write!(
                f,
                "{file}: adapter `{adapter}` rejected the generated module for `{function}`: {detail}"
            ),
            GpuError::Inputs {
                file,
                function,
                detail,
            } => write!(f, "{file}: `{function}`: {detail}"),
            GpuError::Dispatch {
                adapter,
                file,
                function,
                detail,
            } => write!(
                f,
                "{file}: running on the GPU `{function}` on adapter `{adapter}` failed: {detail}"
            ),
        }
    }
}

impl std::error::Error for GpuError {}
