//! The gate end to end: suite errors, goldens, the CLI, the demo and planted suites, report formats, and the house rules (tidy). One test crate for the whole concern.

mod albedo_table;
mod cli;
mod cli_extra;
mod common;
mod compact_golden;
mod demo;
mod diagnose;
mod exhaustive;
mod golden;
mod hardening;
mod html;
mod oracles;
mod planted;
mod plots;
mod precision_cli;
mod quadrature;
mod quillmere;
mod references;
mod report_formats;
mod runner;
mod shapes;
mod shards;
mod stream;
mod suite_errors;
mod textures;
mod tidy;
