//! Shared by the gate tests: running the `shadegate` binary as a user would, and
//! scratch projects of one WGSL file and one suite.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use shadegate::gate::{self, CheckResult};
use shadegate::suite::{self, Suite};
use shadegate::wgsl::Diagnostic;

/// The demo suite (`shadegate.toml` at the project's root) and a copy of
/// its check `name`.
pub fn demo_check(name: &str) -> (Suite, suite::Check) {
    let s = suite::load(&Path::new(env!("CARGO_MANIFEST_DIR")).join("shadegate.toml"))
        .unwrap_or_else(|d| panic!("{d}"));
    let check = s
        .checks
        .iter()
        .find(|c| c.name == name)
        .unwrap_or_else(|| panic!("the demo suite has no check `{name}`"))
        .clone();
    (s, check)
}

/// A scratch project: `lib.wgsl` holding `lib` and `shadegate.toml` holding
/// `suite_text`, in a folder unique to the test file (`area`), the test and the
/// process; the folder and the loaded suite.
pub fn project(
    area: &str,
    test: &str,
    lib: &str,
    suite_text: &str,
) -> Result<(PathBuf, Suite), Diagnostic> {
    let dir = std::env::temp_dir().join(format!(
        "shadegate-gate-{area}-{}-{test}",
        std::process::id()
    ));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join("lib.wgsl"), lib).unwrap();
    std::fs::write(dir.join("shadegate.toml"), suite_text).unwrap();
    let s = suite::load(&dir.join("shadegate.toml"))?;
    Ok((dir, s))
}

/// Run the first check of a [`project`] (which must load).
pub fn run_first(area: &str, test: &str, lib: &str, suite_text: &str) -> CheckResult {
    let (_dir, s) =
        project(area, test, lib, suite_text).unwrap_or_else(|d| panic!("{}", d.rendered));
    gate::run_check(&s, &s.checks[0])
}

/// Run `shadegate ARGS` in `dir`, outside CI and without colour.
pub fn shadegate(args: &[&str], dir: &Path) -> Output {
    shadegate_ci(dir, args, false)
}

/// Run `shadegate ARGS` in `dir` without colour, under CI (`CI=true`) or
/// outside it.
pub fn shadegate_ci(dir: &Path, args: &[&str], ci: bool) -> Output {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_shadegate"));
    cmd.args(args).current_dir(dir).env("NO_COLOR", "1");
    if ci {
        cmd.env("CI", "true");
    } else {
        cmd.env_remove("CI");
    }
    cmd.output().expect("the shadegate binary runs")
}

/// A command's exit code, standard output and standard error, for
/// assertion messages.
pub fn output_text(o: &Output) -> String {
    format!(
        "exit {:?}\nstdout:\n{}\nstderr:\n{}",
        o.status.code(),
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    )
}
