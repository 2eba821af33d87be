//! The CPU evaluator: semantics, per-point issues, bad input, differential and property tests, accuracy, number models. One test crate (one link step) for the whole concern.

mod accuracy;
mod differential;
mod errors;
mod exprtree;
mod f64_model;
mod interp;
mod issues;
mod precision;
mod programs;
mod semantics;
mod spec_bounds;
mod straightforward;
mod textures;
