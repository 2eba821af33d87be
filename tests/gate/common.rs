//! Shared by the gate tests: running the `shadegate` binary as a user would.

use std::path::Path;
use std::process::{Command, Output};

/// Run `shadegate ARGS` in `dir`, outside CI and without colour.
pub fn shadegate(args: &[&str], dir: &Path) -> Output {
    Command::new(env!("CARGO_BIN_EXE_shadegate"))
        .args(args)
        .current_dir(dir)
        .env_remove("CI")
        .env("NO_COLOR", "1")
        .output()
        .expect("run shadegate")
}
