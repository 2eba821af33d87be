//! shadegate: evaluate WGSL shading functions on the CPU and check them against
//! independent f64 reference models and recorded golden data.

pub mod arith;
pub mod compare;
pub mod diagnose;
pub mod eval;
pub mod gate;
pub mod golden;
#[cfg(feature = "gpu")]
pub mod gpu;
pub mod limits;
pub mod reference;
pub mod report;
pub mod suite;
pub mod sweep;
pub mod wgsl;
