//! shadegate: evaluate WGSL shading functions on the CPU and check them against
//! independent f64 reference models and recorded golden data.

pub mod arith;
pub mod compare;
pub mod eval;
pub mod gate;
pub mod golden;
pub mod reference;
#[cfg(feature = "replay")]
pub mod replay;
pub mod report;
pub mod suite;
pub mod sweep;
pub mod wgsl;
