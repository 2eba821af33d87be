//! The `shadegate` command: a thin layer over the library. Every subcommand
//! is a library call a `cargo test` user can make too. Exit codes: 0 all
//! checks pass, 1 a check failed, 2 bad input or usage.

use std::collections::BTreeMap;
use std::io::Write as _;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::{Parser, Subcommand, ValueEnum};
use shadegate::eval::{Arithmetic, Program};
use shadegate::gate::{self, table, RunResult};
use shadegate::suite::{self, Suite};
use shadegate::wgsl::Shader;
use shadegate::{reference, report};

#[derive(Parser)]
#[command(
    name = "shadegate",
    version,
    about = "Check WGSL shading math on the CPU against f64 reference models and golden data"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Clone, Copy, ValueEnum)]
enum Format {
    /// Readable report (colour on a terminal unless NO_COLOR is set).
    Text,
    Json,
    /// JUnit XML, for CI systems.
    Junit,
}

#[derive(Subcommand)]
enum Command {
    /// Run the checks of a suite.
    Run {
        /// The suite file.
        #[arg(long, default_value = "shadegate.toml")]
        suite: PathBuf,
        /// Only checks whose name contains this text.
        filter: Option<String>,
        #[arg(long, value_enum, default_value = "text")]
        format: Format,
        /// Write the report here instead of standard output.
        #[arg(long)]
        output: Option<PathBuf>,
        /// Evaluate on a WebGPU device (wgpu) instead of the CPU evaluator;
        /// needs a build with `--features gpu`.
        #[arg(long)]
        gpu: bool,
        /// With --gpu: the first adapter whose name contains this text.
        #[arg(long, requires = "gpu")]
        adapter: Option<String>,
    },
    /// Record the golden datasets of a suite's checks (refused when CI is set).
    Record {
        #[arg(long, default_value = "shadegate.toml")]
        suite: PathBuf,
        /// Only checks whose name contains this text.
        filter: Option<String>,
    },
    /// Evaluate one function over points and write a CSV of inputs and results
    /// (exit code 1 when some points reported issues: out-of-bounds index,
    /// step budget, NaN/Inf from finite inputs).
    Eval {
        /// The WGSL file.
        shader: PathBuf,
        /// The function to evaluate.
        function: String,
        /// A point as `name=value,...` (vectors as `n=0;0;1`); repeatable.
        #[arg(long = "point")]
        points: Vec<String>,
        /// A CSV file with one column per argument leaf (`n.x`, `alpha`, ...).
        #[arg(long)]
        input: Option<PathBuf>,
        /// Use the sweep of this check of the suite instead.
        #[arg(long)]
        check: Option<String>,
        #[arg(long, default_value = "shadegate.toml")]
        suite: PathBuf,
        /// Override values as `name=value`; repeatable.
        #[arg(long = "override")]
        overrides: Vec<String>,
        /// Evaluate with every inexact operation moved within the WGSL spec's
        /// accuracy bounds (seeded).
        #[arg(long)]
        spec_bounds: Option<u64>,
        /// Write the CSV here instead of standard output.
        #[arg(long)]
        output: Option<PathBuf>,
    },
    /// Compare two versions of a WGSL file over a check's sweep.
    Compare {
        old: PathBuf,
        new: PathBuf,
        /// The check whose function, sweep and arguments to use.
        #[arg(long)]
        check: String,
        /// Compare two functions instead of the check's one: the first is
        /// looked up in OLD, the second in NEW (give the same file twice for
        /// two functions of one file).
        #[arg(long, num_args = 2, value_names = ["OLD_FUNCTION", "NEW_FUNCTION"])]
        functions: Option<Vec<String>>,
        #[arg(long, default_value = "shadegate.toml")]
        suite: PathBuf,
        #[arg(long, value_enum, default_value = "text")]
        format: Format,
    },
    /// List the checks of a suite.
    List {
        #[arg(long, default_value = "shadegate.toml")]
        suite: PathBuf,
    },
    /// List the reference models.
    Models,
    /// Write the Markdown tolerance ledger of a suite (runs its checks).
    Ledger {
        #[arg(long, default_value = "shadegate.toml")]
        suite: PathBuf,
        #[arg(long)]
        output: Option<PathBuf>,
    },
}

/// A usage or input error: message for stderr, exit code 2.
struct Bad(String);

impl<T: std::fmt::Display> From<T> for Bad {
    fn from(e: T) -> Bad {
        Bad(e.to_string())
    }
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match dispatch(cli.command) {
        Ok(code) => ExitCode::from(code),
        Err(Bad(msg)) => {
            eprintln!("{}", msg.trim_end());
            ExitCode::from(2)
        }
    }
}

fn load_suite(path: &Path) -> Result<Suite, Bad> {
    suite::load(path).map_err(|d| Bad(d.rendered))
}

fn emit(text: &str, output: Option<&Path>) -> Result<(), Bad> {
    match output {
        Some(p) => {
            std::fs::write(p, text).map_err(|e| Bad(format!("{}: cannot write: {e}", p.display())))
        }
        None => {
            let mut out = std::io::stdout().lock();
            out.write_all(text.as_bytes())
                .map_err(|e| Bad(e.to_string()))
        }
    }
}

fn render(run: &RunResult, format: Format, to_file: bool) -> String {
    match format {
        Format::Text => report::text(run, !to_file && report::use_colour()),
        Format::Json => report::json(run),
        Format::Junit => report::junit(run),
    }
}

fn exit_of(run: &RunResult) -> u8 {
    run.exit_code() as u8
}

fn dispatch(cmd: Command) -> Result<u8, Bad> {
    match cmd {
        Command::Run {
            suite,
            filter,
            format,
            output,
            gpu,
            adapter,
        } => {
            let s = load_suite(&suite)?;
            let progress = report::Progress::new();
            let run = if gpu {
                run_gpu(&s, filter.as_deref(), adapter.as_deref(), &progress)?
            } else {
                gate::run(&s, filter.as_deref(), |i, n, name| {
                    progress.step(i, n, name)
                })
            };
            if run.checks.is_empty() {
                return Err(Bad(format!(
                    "no check of {} matches `{}`",
                    suite.display(),
                    filter.unwrap_or_default()
                )));
            }
            emit(&render(&run, format, output.is_some()), output.as_deref())?;
            Ok(exit_of(&run))
        }
        Command::Record { suite, filter } => {
            let s = load_suite(&suite)?;
            let mut any = false;
            for c in s
                .checks
                .iter()
                .filter(|c| filter.as_deref().is_none_or(|f| c.name.contains(f)))
            {
                if c.golden.is_none() {
                    continue;
                }
                any = true;
                let path = gate::record(&s, c).map_err(Bad)?;
                eprintln!(
                    "recorded {} ({} points) -> {}",
                    c.name,
                    c.sweep.len(),
                    path.display()
                );
            }
            if !any {
                return Err(Bad("no check with a `golden` dataset matches".into()));
            }
            Ok(0)
        }
        Command::Eval {
            shader,
            function,
            points,
            input,
            check,
            suite,
            overrides,
            spec_bounds,
            output,
        } => {
            let ov = table::parse_overrides(&overrides).map_err(Bad)?;
            let arith =
                spec_bounds.map_or(Arithmetic::Exact, |seed| Arithmetic::SpecBounds { seed });
            let (csv, issues) = eval_csv(
                &shader,
                &function,
                &points,
                input.as_deref(),
                check.as_deref(),
                &suite,
                &ov,
                arith,
            )?;
            emit(&csv, output.as_deref())?;
            // The CSV is complete either way; exit 1 says some points had issues.
            Ok(u8::from(issues > 0))
        }
        Command::Compare {
            old,
            new,
            check,
            functions,
            suite,
            format,
        } => {
            let s = load_suite(&suite)?;
            let c =
                s.checks.iter().find(|c| c.name == check).ok_or_else(|| {
                    Bad(format!("no check named `{check}` in {}", suite.display()))
                })?;
            let r = match functions.as_deref() {
                Some([a, b]) => gate::compare_functions(&s, c, (&old, a), (&new, b)),
                _ => gate::compare_versions(&s, c, &old, &new),
            }
            .map_err(Bad)?;
            let run = RunResult {
                suite: s.path.display().to_string(),
                checks: vec![r],
            };
            emit(&render(&run, format, false), None)?;
            Ok(exit_of(&run))
        }
        Command::List { suite } => {
            let s = load_suite(&suite)?;
            let mut out = String::new();
            for c in &s.checks {
                let against: Vec<String> = c
                    .reference
                    .map(|m| format!("reference {}", m.name))
                    .into_iter()
                    .chain(c.golden.as_ref().map(|g| format!("golden {}", g.display())))
                    .chain(c.twin.as_ref().map(|t| format!("twin {}", t.function)))
                    .chain(
                        c.property
                            .as_ref()
                            .map(|p| format!("property {}", p.property.label())),
                    )
                    .collect();
                out.push_str(&format!(
                    "{}  {}::{}  {} points  against {}  tolerance {} ({})\n",
                    c.name,
                    c.shader.display(),
                    c.function,
                    c.sweep.len(),
                    against.join(" and "),
                    c.tolerance.describe(),
                    c.tolerance.reason
                ));
            }
            emit(&out, None)?;
            Ok(0)
        }
        Command::Models => {
            emit(&reference::listing(), None)?;
            Ok(0)
        }
        Command::Ledger { suite, output } => {
            let s = load_suite(&suite)?;
            let run = gate::run(&s, None, |_, _, _| {});
            emit(&report::ledger(&run), output.as_deref())?;
            Ok(0)
        }
    }
}

#[cfg(feature = "gpu")]
fn run_gpu(
    s: &Suite,
    filter: Option<&str>,
    adapter: Option<&str>,
    progress: &report::Progress,
) -> Result<RunResult, Bad> {
    let device = shadegate::gpu::Gpu::new(adapter).map_err(|e| Bad(format!("--gpu: {e}")))?;
    eprintln!("device: {}", device.adapter());
    Ok(device.run_suite(s, filter, |i, n, name| progress.step(i, n, name)))
}

#[cfg(not(feature = "gpu"))]
fn run_gpu(
    _: &Suite,
    _: Option<&str>,
    _: Option<&str>,
    _: &report::Progress,
) -> Result<RunResult, Bad> {
    Err(Bad("--gpu needs a build with the GPU back end: cargo run --release --features gpu -- run --gpu".into()))
}

#[allow(clippy::too_many_arguments)]
fn eval_csv(
    shader: &Path,
    function: &str,
    points: &[String],
    input: Option<&Path>,
    check: Option<&str>,
    suite_path: &Path,
    overrides: &BTreeMap<String, f64>,
    arith: Arithmetic,
) -> Result<(String, usize), Bad> {
    let sources = usize::from(!points.is_empty())
        + usize::from(input.is_some())
        + usize::from(check.is_some());
    if sources != 1 {
        return Err(Bad(
            "give the points one way: --point (repeatable), --input FILE.csv or --check NAME"
                .into(),
        ));
    }
    let (mut leaves, mut cols, program, issues) = if let Some(name) = check {
        let s = load_suite(suite_path)?;
        let c = s.checks.iter().find(|c| c.name == name).ok_or_else(|| {
            Bad(format!(
                "no check named `{name}` in {}",
                suite_path.display()
            ))
        })?;
        let mut c = c.clone();
        c.function = function.to_string();
        c.overrides.extend(overrides.clone());
        c.arithmetic = arith;
        let ev = gate::evaluate(&s, &c, Some(shader)).map_err(Bad)?;
        let mut cols = ev.input_columns;
        cols.extend(ev.output_columns);
        (ev.inputs, cols, ev.program, ev.issues)
    } else {
        let sh = Shader::load(shader).map_err(|d| Bad(d.rendered))?;
        let program =
            Program::compile_with(&sh, function, overrides, arith).map_err(|d| Bad(d.rendered))?;
        let leaves = program.input_leaves();
        let mut cols = match input {
            Some(path) => table::read_csv(path, &leaves).map_err(Bad)?,
            None => table::columns_of_points(&program, points).map_err(Bad)?,
        };
        let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
        let mut out = Vec::new();
        let issues = program.try_eval(&refs, &mut out).map_err(Bad)?;
        cols.append(&mut out);
        (leaves, cols, program, issues)
    };
    print_issues(&issues);
    leaves.extend(program.output_leaves());
    let csv = table::write_csv(&leaves, &cols).map_err(Bad)?;
    cols.clear();
    Ok((csv, issues.len()))
}

fn print_issues(issues: &[shadegate::eval::LaneIssue]) {
    for i in issues.iter().take(10) {
        eprintln!(
            "warning: point {}: {} (line {}, column {}; inputs {})",
            i.point, i.message, i.line, i.column, i.inputs
        );
    }
    if issues.len() > 10 {
        eprintln!("warning: {} more point issues", issues.len() - 10);
    }
}
