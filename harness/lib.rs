//! shadegate: evaluate WGSL shading functions on the CPU and check them against
//! independent f64 reference models and recorded golden data.

pub mod arith;
pub mod eval;
pub mod reference;
pub mod wgsl;
