//! The regression gate: runs the checks of a suite (evaluate the WGSL over the
//! sweep, evaluate the reference, read the golden, compare, explain).

pub mod result;

pub use result::{CheckResult, Comparison, IssueGroup, RunResult, Verdict};
