//! The shared vocabulary of values, in one place: the value types ([`ScalarKind`], [`Ty`]),
//! their column encoding ([`encoding`]: one `u32` bit pattern per point and leaf) and their
//! text forms ([`text`]: what a person types and reads, and the exact form of golden files).
//! The evaluator, the golden format, the suite's point tables, the comparisons and the GPU
//! back end all use these; none defines its own.

pub mod encoding;
pub mod text;
pub mod types;

pub use encoding::{bits_to_f64, f64_to_bits};
pub use text::{format_exact, format_value, parse_exact, parse_value};
pub use types::{ScalarKind, Ty};
