//! shadegate: evaluate WGSL shading functions on the CPU and check them against
//! independent f64 reference models and recorded golden data.
//!
//! # Use from another project
//!
//! Everything the `shadegate` command does is a library call. The shortest way to gate
//! a shading library in a project's own `cargo test` is one call that loads a suite
//! file, runs every check, and panics with the rendered report when a check fails or
//! cannot run:
//!
//! ```no_run
//! #[test]
//! fn shading_math_matches_its_references() {
//!     shadegate::check_suite("shadegate.toml");
//! }
//! ```
//!
//! The steps one by one — load, run, assert or render — are as public as the shortcut:
//!
//! ```
//! use shadegate::{gate, report, suite};
//!
//! // The demo suite of this repository (paths in a suite are relative to its file).
//! let path = concat!(env!("CARGO_MANIFEST_DIR"), "/shadegate.toml");
//! let suite = suite::load(path.as_ref()).expect("the suite file is valid");
//! let run = gate::run(&suite, Some("lambert"), |_, _, _| {});
//! assert_eq!(run.checks.len(), 1);
//! assert_eq!(run.exit_code(), 0, "{}", report::text(&run, false));
//! // Reports are plain strings: text, JSON, JUnit XML, the Markdown ledger, HTML.
//! let junit = report::junit_with(&run, report::Timings::Omit);
//! assert!(junit.contains("lambert_diffuse"));
//! ```
//!
//! [`check_suite`] returns the [`gate::RunResult`] of a passing run, for further
//! assertions.

pub mod arith;
pub mod compare;
pub mod detail;
pub mod diagnose;
pub mod diagnostic;
pub mod eval;
pub mod gate;
pub mod golden;
#[cfg(feature = "gpu")]
pub mod gpu;
pub mod limits;
pub mod plot;
pub mod precision;
pub mod reference;
pub mod report;
pub mod scratch;
pub mod suite;
pub mod sweep;
pub mod table;
pub mod values;
pub mod wgsl;
pub mod widths;

/// Load the suite file at `path`, run all its checks on the CPU, and return the result;
/// **panic** with the rendered text report (no colour, no timings) when the suite
/// cannot be loaded, a check fails, or a check cannot run. Meant for a `#[test]` in
/// another project (see the crate documentation).
#[track_caller]
pub fn check_suite(path: impl AsRef<std::path::Path>) -> gate::RunResult {
    let path = path.as_ref();
    let suite = match suite::load(path) {
        Ok(s) => s,
        Err(d) => panic!("shadegate: cannot load the suite\n{}", d.rendered),
    };
    let run = gate::run(&suite, None, |_, _, _| {});
    if run.exit_code() != 0 {
        panic!(
            "shadegate: {} of {} checks did not pass\n\n{}",
            run.failed() + run.errors(),
            run.checks.len(),
            report::text_with(&run, false, report::Timings::Omit)
        );
    }
    run
}
