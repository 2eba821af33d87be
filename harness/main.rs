//! The `shadegate` command: a thin layer over the library. Every subcommand
//! is a library call a `cargo test` user can make too. Exit codes: 0 all
//! checks pass, 1 a check failed, 2 bad input or usage.
//!
//! Longer than the house's 800 lines on purpose: a third of it is the
//! command declarations with their help text (what `--help` prints), which
//! read best in one place beside the dispatcher that maps each command to its
//! few library calls; splitting them would only put the two halves of each
//! command in different files.

use std::collections::BTreeMap;
use std::io::Write as _;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::{Parser, Subcommand, ValueEnum};
use shadegate::eval::{Arithmetic, Program};
use shadegate::gate::{self, table, RunResult};
use shadegate::suite::{self, Check, Suite};
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
    /// Allow golden paths outside the suite's folder (absolute, or climbing
    /// out with `..`); by default a golden is read and written only inside it.
    #[arg(long, global = true)]
    golden_outside: bool,
}

/// `--golden-outside`, read by `load_suite`.
static GOLDEN_OUTSIDE: std::sync::atomic::AtomicBool = std::sync::atomic::AtomicBool::new(false);

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
        /// Also write one self-contained HTML page of the run (findings, tolerance
        /// ledger, error maps, lobes, per-check details) into this folder.
        #[arg(long, value_name = "DIR")]
        html: Option<PathBuf>,
        /// Write each failing comparison's failing points as CSV into this folder
        /// (`<check>.<against>.csv`).
        #[arg(long, value_name = "DIR")]
        failing_points: Option<PathBuf>,
        /// Reports without timings, so two runs of the same code give identical files
        /// (the default when the CI environment variable is set).
        #[arg(long)]
        deterministic: bool,
        /// Add a precision analysis of each check's function to the report: which
        /// lines carry the error, cancellations, hidden overflows, cures (slow:
        /// one f64 shadow run and one re-run per line).
        #[arg(long)]
        precision: bool,
        /// Run only shard K of N of every check's points (contiguous ranges;
        /// the N shards together are every point once), for parallel CI
        /// jobs; write `--format json` and join the N reports with `merge`.
        #[arg(long, value_name = "K/N")]
        shard: Option<String>,
    },
    /// Join the JSON reports of `run --shard K/N` for K = 1..N into the
    /// report one run of the whole suite gives (exit code included).
    Merge {
        /// The shards' JSON reports, in any order.
        #[arg(required = true)]
        reports: Vec<PathBuf>,
        #[arg(long, value_enum, default_value = "text")]
        format: Format,
        /// Write the report here instead of standard output.
        #[arg(long)]
        output: Option<PathBuf>,
        /// Reports without timings (the default when CI is set).
        #[arg(long)]
        deterministic: bool,
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
        /// Other WGSL files the function needs (their functions, structs and
        /// constants), joined with SHADER in order before it; repeatable. With
        /// --check the check's own files are used.
        #[arg(long = "with", value_name = "FILE")]
        with: Vec<PathBuf>,
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
        /// Write float values as bit patterns (`0x3f800000`) instead of decimals.
        #[arg(long)]
        bits: bool,
        /// With --check: add the check's expected values (reference model, else
        /// golden), the error in ULP and relative, and a pass column per point.
        #[arg(long, requires = "check")]
        judge: bool,
    },
    /// Which line of one function loses precision, over a sweep: per line and
    /// operation the rounding error, cancellation, overflow and underflow,
    /// amplifiers, each line's share of the final error (shares add up), and
    /// known cures. With --check, for a function computing in f16: each
    /// line's part of the check's tolerance and the inputs that miss it.
    Precision {
        /// The WGSL file.
        shader: PathBuf,
        /// The function to analyse.
        function: String,
        /// Other WGSL files the function needs (their functions, structs and
        /// constants), joined with SHADER in order before it; repeatable. With
        /// --check the check's own files are used.
        #[arg(long = "with", value_name = "FILE")]
        with: Vec<PathBuf>,
        /// A point as `name=value,...` (vectors as `n=0;0;1`); repeatable.
        #[arg(long = "point")]
        points: Vec<String>,
        /// A CSV file with one column per argument leaf.
        #[arg(long)]
        input: Option<PathBuf>,
        /// Use the sweep of this check of the suite (and, for an f16 function,
        /// its tolerance and twin for the budget).
        #[arg(long)]
        check: Option<String>,
        #[arg(long, default_value = "shadegate.toml")]
        suite: PathBuf,
        /// A rewritten form of the function in the same file, taking the same
        /// arguments: its measured error is shown beside each hint.
        #[arg(long)]
        twin: Option<String>,
        /// Override values as `name=value`; repeatable.
        #[arg(long = "override")]
        overrides: Vec<String>,
        #[arg(long, value_enum, default_value = "text")]
        format: Format,
        /// Write the report here instead of standard output.
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
    /// Draw one picture of a check into an SVG or PNG file (the extension
    /// chooses): its error map over two sweep parameters, its lobes in the
    /// plane of incidence, or a property check's result against a parameter.
    Plot {
        /// The check's name.
        check: String,
        #[arg(long, default_value = "shadegate.toml")]
        suite: PathBuf,
        #[arg(long, value_enum, default_value = "map")]
        kind: PlotKind,
        /// The map's horizontal parameter (default: the sweep's first); for a
        /// property chart, the parameter the curves run over.
        #[arg(long)]
        x: Option<String>,
        /// The map's vertical parameter (default: the sweep's second).
        #[arg(long)]
        y: Option<String>,
        /// What the map shows per point.
        #[arg(long, value_enum, default_value = "tolerance")]
        measure: PlotMeasure,
        /// The map's colour scale (both read in grey and for colour-blind readers).
        #[arg(long, value_enum, default_value = "viridis")]
        scale: PlotScale,
        /// The map's comparison: the first whose label contains this text
        /// (`golden`, `reference`; default: the first).
        #[arg(long)]
        against: Option<String>,
        /// Lobes at these roughnesses, comma-separated (default: the sweep's
        /// first, middle and last).
        #[arg(long, value_delimiter = ',')]
        roughness: Vec<f64>,
        /// Lobes with the view this many degrees from the normal.
        #[arg(long, default_value_t = 30.0)]
        view_angle: f64,
        /// The picture's file: NAME.svg or NAME.png.
        #[arg(long)]
        output: PathBuf,
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

#[derive(Clone, Copy, ValueEnum)]
enum PlotKind {
    /// Error over two sweep parameters, the others reduced by the worst case.
    Map,
    /// The function against its reference in the plane of incidence.
    Lobes,
    /// A property check's result against one parameter.
    Property,
}

#[derive(Clone, Copy, ValueEnum)]
enum PlotMeasure {
    /// Error ÷ tolerance: above 1 fails.
    Tolerance,
    /// Error in ULP of the expected value.
    Ulp,
    /// Relative error.
    Relative,
}

#[derive(Clone, Copy, ValueEnum)]
enum PlotScale {
    Viridis,
    Cividis,
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
    GOLDEN_OUTSIDE.store(cli.golden_outside, std::sync::atomic::Ordering::Relaxed);
    match dispatch(cli.command) {
        Ok(code) => ExitCode::from(code),
        Err(Bad(msg)) => {
            eprintln!("{}", msg.trim_end());
            ExitCode::from(2)
        }
    }
}

/// The check named `name` of suite `s` (read from `path`).
fn find_check<'s>(s: &'s Suite, name: &str, path: &Path) -> Result<&'s Check, Bad> {
    s.checks.iter().find(|c| c.name == name).ok_or_else(|| {
        Bad(format!(
            "no check named `{name}` in {} (see `shadegate list`)",
            path.display()
        ))
    })
}

fn load_suite(path: &Path) -> Result<Suite, Bad> {
    let golden_outside = GOLDEN_OUTSIDE.load(std::sync::atomic::Ordering::Relaxed);
    suite::load_with(path, suite::Options { golden_outside }).map_err(|d| Bad(d.rendered))
}

fn emit(text: &str, output: Option<&Path>) -> Result<(), Bad> {
    match output {
        Some(p) => {
            std::fs::write(p, text).map_err(|e| Bad(format!("{}: cannot write: {e}", p.display())))
        }
        None => {
            let mut out = std::io::stdout().lock();
            match out.write_all(text.as_bytes()).and_then(|()| out.flush()) {
                // The reader went away (`| head`): what it wanted it has; not an error.
                Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
                r => r.map_err(|e| Bad(format!("standard output: {e}"))),
            }
        }
    }
}

fn render(run: &RunResult, format: Format, to_file: bool) -> String {
    render_with(run, format, to_file, report::Timings::Show)
}

fn render_with(run: &RunResult, format: Format, to_file: bool, t: report::Timings) -> String {
    match format {
        Format::Text => report::text_with(run, !to_file && report::use_colour(), t),
        Format::Json => report::json_with(run, t),
        Format::Junit => report::junit_with(run, t),
    }
}

fn plural(n: usize, noun: &str) -> String {
    format!("{n} {noun}{}", if n == 1 { "" } else { "s" })
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
            html,
            failing_points,
            deterministic,
            precision,
            shard,
        } => {
            let s = load_suite(&suite)?;
            let s = match shard {
                None => s,
                Some(text) => {
                    let shard = shadegate::sweep::Shard::parse(&text).map_err(Bad)?;
                    if precision || html.is_some() || failing_points.is_some() || gpu {
                        return Err(Bad(format!(
                            "--shard {shard}: --precision, --html, --failing-points and --gpu need the whole sweep; run them without --shard"
                        )));
                    }
                    gate::shard::sharded(&s, shard)
                }
            };
            warn_unused_parameters(&s, filter.as_deref());
            let progress = report::Progress::new();
            let run = if gpu {
                run_gpu(&s, filter.as_deref(), adapter.as_deref(), &progress)?
            } else {
                // A long check announces its estimated time and reports its
                // progress on standard error, terminal or not.
                let pace = report::Pace::new(Box::new(std::io::stderr()));
                gate::run_reporting(
                    &s,
                    filter.as_deref(),
                    |i, n, name| {
                        pace.begin(name);
                        progress.step(i, n, name)
                    },
                    Some(&|done, total| pace.points(done, total)),
                    None,
                )
            };
            if run.checks.is_empty() {
                return Err(Bad(format!(
                    "no check of {} matches `{}`",
                    suite.display(),
                    filter.unwrap_or_default()
                )));
            }
            let timings = if deterministic || std::env::var_os("CI").is_some() {
                report::Timings::Omit
            } else {
                report::Timings::Show
            };
            let mut run = run;
            if precision {
                for r in run.checks.iter_mut().filter(|r| r.error.is_none()) {
                    let Some(c) = s.checks.iter().find(|c| c.name == r.name) else {
                        continue;
                    };
                    match shadegate::precision::of_check(&s, c) {
                        Ok(a) => r.precision = Some(a),
                        Err(e) => {
                            eprintln!("warning: check `{}`: no precision analysis: {e}", r.name)
                        }
                    }
                }
            }
            let text = render_with(&run, format, output.is_some(), timings);
            if let Some(dir) = &failing_points {
                write_failing_points(&s, &run, dir)?;
            }
            if let Some(dir) = &html {
                let page = shadegate::report::html(&s, &run, timings);
                let path = write_in(dir, &html_name(&s), &page)?;
                eprintln!("report page: {}", path.display());
            }
            emit(&text, output.as_deref())?;
            Ok(exit_of(&run))
        }
        Command::Merge {
            reports,
            format,
            output,
            deterministic,
        } => {
            let mut parts = Vec::new();
            for path in &reports {
                let file = path.display().to_string();
                let text = std::fs::read_to_string(path)
                    .map_err(|e| Bad(format!("{file}: cannot read: {e}")))?;
                let run = gate::shard::read_report(&file, &text).map_err(Bad)?;
                parts.push(gate::shard::Part { file, run });
            }
            let run = gate::shard::merge(&parts).map_err(Bad)?;
            let timings = if deterministic || std::env::var_os("CI").is_some() {
                report::Timings::Omit
            } else {
                report::Timings::Show
            };
            let text = render_with(&run, format, output.is_some(), timings);
            emit(&text, output.as_deref())?;
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
                let r = gate::record(&s, c).map_err(Bad)?;
                eprintln!(
                    "recorded {} ({} points) -> {} ({} bytes)",
                    c.name,
                    c.sweep.len(),
                    r.path.display(),
                    r.bytes
                );
                if let Some(summary) = &r.summary {
                    eprintln!("  summary -> {}", summary.display());
                }
                if let Some(w) = &r.warning {
                    eprintln!("warning: {w}");
                }
            }
            if !any {
                return Err(Bad("no check with a `golden` dataset matches".into()));
            }
            Ok(0)
        }
        Command::Eval {
            shader,
            function,
            with,
            points,
            input,
            check,
            suite,
            overrides,
            spec_bounds,
            output,
            bits,
            judge,
        } => {
            let ov = table::parse_overrides(&overrides).map_err(Bad)?;
            let arith =
                spec_bounds.map_or(Arithmetic::Exact, |seed| Arithmetic::SpecBounds { seed });
            let files = shader_files(&shader, with, check.is_some())?;
            let (csv, issues) = eval_csv(
                &files,
                &function,
                &points,
                input.as_deref(),
                check.as_deref(),
                &suite,
                &ov,
                arith,
                Columns { bits, judge },
            )?;
            emit(&csv, output.as_deref())?;
            // The CSV is complete either way; exit 1 says some points had issues.
            Ok(u8::from(issues > 0))
        }
        Command::Precision {
            shader,
            function,
            with,
            points,
            input,
            check,
            suite,
            twin,
            overrides,
            format,
            output,
        } => {
            let ov = table::parse_overrides(&overrides).map_err(Bad)?;
            let shader_files = shader_files(&shader, with, check.is_some())?;
            let sources = usize::from(!points.is_empty())
                + usize::from(input.is_some())
                + usize::from(check.is_some());
            if sources != 1 {
                return Err(Bad(
                    "give the points one way: --point (repeatable), --input FILE.csv or --check NAME"
                        .into(),
                ));
            }
            // The source and files lines are reported in: the check's own
            // files when it has several (SHADER alone may not compile then:
            // it can call functions of the check's other files).
            // The twin is compiled from the same files as the function: the
            // check's own when it has several.
            let twin_of = |sh: &Shader| -> Result<Option<Program>, Bad> {
                twin.as_ref()
                    .map(|t| {
                        Program::compile_with(sh, t, &ov, Arithmetic::Exact)
                            .map_err(|d| Bad(d.rendered))
                    })
                    .transpose()
            };
            let (program, cols, budget, source, files, twin) = if let Some(name) = check {
                let s = load_suite(&suite)?;
                let (c, ev) = evaluate_as_check(
                    &s,
                    &name,
                    &suite,
                    &shader,
                    &function,
                    &ov,
                    Arithmetic::Exact,
                )?;
                let budget = shadegate::precision::budget_of_check(&s, &c, &ev).map_err(Bad)?;
                let files = shadegate::precision::files_of(&ev.build.shader);
                let source = ev.build.shader.source.clone();
                let twin = twin_of(&ev.build.shader)?;
                (
                    ev.program,
                    ev.input_columns,
                    Some(budget),
                    source,
                    files,
                    twin,
                )
            } else {
                let sh = Shader::load_files_with(&shader_files, &Default::default())
                    .map_err(|d| Bad(d.rendered))?;
                let program = Program::compile_with(&sh, &function, &ov, Arithmetic::Exact)
                    .map_err(|d| Bad(d.rendered))?;
                let cols = match input {
                    Some(path) => table::read_program_csv(&path, &program).map_err(Bad)?,
                    None => table::columns_of_points(&program, &points).map_err(Bad)?,
                };
                (
                    std::sync::Arc::new(program),
                    cols,
                    None,
                    sh.source.clone(),
                    shadegate::precision::files_of(&sh),
                    twin_of(&sh)?,
                )
            };
            let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
            let a = shadegate::precision::analyse(
                &program,
                &refs,
                &source,
                twin.as_ref(),
                &shadegate::precision::Options {
                    budget,
                    files,
                    ..Default::default()
                },
            )
            .map_err(|e| Bad(format!("{}: {e}", shader.display())))?;
            let text = match format {
                Format::Json => {
                    serde_json::to_string_pretty(&a).map_err(|e| Bad(e.to_string()))? + "\n"
                }
                Format::Text => shadegate::precision::text(&a),
                Format::Junit => {
                    return Err(Bad("precision reports are text or json".into()));
                }
            };
            emit(&text, output.as_deref())?;
            // An internal error (working values that differ from the
            // evaluator's) is the tool's own failure.
            Ok(if a.internal_errors.is_empty() { 0 } else { 2 })
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
            let c = find_check(&s, &check, &suite)?;
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
        Command::Plot {
            check,
            suite,
            kind,
            x,
            y,
            measure,
            scale,
            against,
            roughness,
            view_angle,
            output,
        } => {
            use shadegate::plot::{ImageFormat, Measure, Picture, Scale};
            let format = ImageFormat::of_path(&output).map_err(Bad)?;
            let s = load_suite(&suite)?;
            let c = find_check(&s, &check, &suite)?;
            let picture = match kind {
                PlotKind::Map => Picture::Map {
                    x,
                    y,
                    measure: match measure {
                        PlotMeasure::Tolerance => Measure::Tolerance,
                        PlotMeasure::Ulp => Measure::Ulp,
                        PlotMeasure::Relative => Measure::Relative,
                    },
                    scale: match scale {
                        PlotScale::Viridis => Scale::Viridis,
                        PlotScale::Cividis => Scale::Cividis,
                    },
                    against,
                },
                PlotKind::Lobes => Picture::Lobes {
                    roughness,
                    view_theta: view_angle,
                },
                PlotKind::Property => Picture::Property { x },
            };
            let bytes = shadegate::plot::draw(&s, c, &picture, format).map_err(Bad)?;
            std::fs::write(&output, bytes)
                .map_err(|e| Bad(format!("{}: cannot write: {e}", output.display())))?;
            Ok(0)
        }
        Command::List { suite } => {
            let s = load_suite(&suite)?;
            let mut out = String::new();
            for c in &s.checks {
                // Each comparison with the tolerance that applies to it.
                let against: Vec<String> = c
                    .reference
                    .map(|m| {
                        format!(
                            "reference {} within {} ({})",
                            m.name,
                            c.tolerance.describe(),
                            c.tolerance.reason
                        )
                    })
                    .into_iter()
                    .chain(c.golden.as_ref().map(|g| {
                        format!(
                            "golden {} within {} ({})",
                            g.display(),
                            c.golden_tolerance.describe(),
                            c.golden_tolerance.reason
                        )
                    }))
                    .chain(c.twin.as_ref().map(|t| format!("twin {}", t.function)))
                    .chain(
                        c.property
                            .as_ref()
                            .map(|p| format!("property {}", p.property.label())),
                    )
                    .collect();
                out.push_str(&format!(
                    "{}  {}::{}  {}  against {}\n",
                    c.name,
                    c.shader_label(),
                    c.function,
                    plural(c.sweep.len(), "point"),
                    against.join(" and ")
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
            Ok(exit_of(&run))
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

/// What `eval` writes besides inputs and results.
#[derive(Clone, Copy)]
struct Columns {
    /// Floats as bit patterns.
    bits: bool,
    /// Expected values, errors and pass/fail (needs a check).
    judge: bool,
}

/// Warn (on standard error) about sweep parameters that no argument uses: each one
/// multiplies the point count without testing anything new.
fn warn_unused_parameters(s: &Suite, filter: Option<&str>) {
    for c in s
        .checks
        .iter()
        .filter(|c| filter.is_none_or(|f| c.name.contains(f)))
    {
        // A check that cannot compile is reported by the run itself.
        let Ok(unused) = shadegate::detail::unused_parameters(s, c) else {
            continue;
        };
        for (name, n) in unused {
            eprintln!(
                "warning: {}:{}: check `{}`: sweep parameter `{name}` is used by no argument of the function or the reference; its {n} values multiply the point count without testing anything new",
                s.path.display(),
                c.line,
                c.name
            );
        }
    }
}

/// Write `text` as `dir/name`, creating `dir`.
fn write_in(dir: &Path, name: &str, text: &str) -> Result<PathBuf, Bad> {
    std::fs::create_dir_all(dir)
        .map_err(|e| Bad(format!("{}: cannot create: {e}", dir.display())))?;
    let path = dir.join(name);
    std::fs::write(&path, text)
        .map_err(|e| Bad(format!("{}: cannot write: {e}", path.display())))?;
    Ok(path)
}

/// The report page's file name: the suite file's stem, `.html`.
fn html_name(s: &Suite) -> String {
    let stem = s
        .path
        .file_stem()
        .map_or_else(|| "shadegate".into(), |x| x.to_string_lossy().into_owned());
    format!("{stem}.html")
}

/// For each failing comparison of the run: its failing points as CSV in `dir`.
fn write_failing_points(s: &Suite, run: &RunResult, dir: &Path) -> Result<(), Bad> {
    for r in run
        .checks
        .iter()
        .filter(|r| r.verdict == gate::Verdict::Fail)
    {
        let Some(c) = s.checks.iter().find(|c| c.name == r.name) else {
            continue;
        };
        let detail = shadegate::detail::CheckPoints::of(s, c).map_err(Bad)?;
        for e in &detail.expected {
            if let Some(csv) = detail.failing_csv(e) {
                let path = write_in(dir, &format!("{}.{}.csv", c.name, e.kind), &csv)?;
                eprintln!("failing points: {}", path.display());
            }
        }
    }
    Ok(())
}

/// Check `name` of the suite with `function`, the extra `overrides` and
/// `arith` in place of its own, evaluated over its sweep from its files with
/// `shader` standing in for the one it is a version of
/// ([`gate::files_with`]): `eval --check` and `precision --check`.
fn evaluate_as_check(
    s: &Suite,
    name: &str,
    suite_path: &Path,
    shader: &Path,
    function: &str,
    overrides: &BTreeMap<String, f64>,
    arith: Arithmetic,
) -> Result<(Check, gate::Evaluated), Bad> {
    let mut c = find_check(s, name, suite_path)?.clone();
    c.function = function.to_string();
    c.overrides.extend(overrides.clone());
    c.arithmetic = arith;
    let files = gate::files_with(s, &c, &[shader]).map_err(Bad)?;
    let ev = gate::evaluate(s, &c, Some(&files[0])).map_err(Bad)?;
    Ok((c, ev))
}

/// SHADER after the `--with` files, in order; `--with` is refused with
/// `--check`, whose own files are used.
fn shader_files(shader: &Path, with: Vec<PathBuf>, check: bool) -> Result<Vec<PathBuf>, Bad> {
    if check && !with.is_empty() {
        return Err(Bad(
            "--with is for --point and --input: with --check the check's own files are used".into(),
        ));
    }
    let mut files = with;
    files.push(shader.to_path_buf());
    Ok(files)
}

#[allow(clippy::too_many_arguments)]
fn eval_csv(
    shader: &[PathBuf],
    function: &str,
    points: &[String],
    input: Option<&Path>,
    check: Option<&str>,
    suite_path: &Path,
    overrides: &BTreeMap<String, f64>,
    arith: Arithmetic,
    want: Columns,
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
    // With --judge: header names and per-point text of the extra columns.
    let mut judged: Option<(Vec<String>, Vec<Vec<String>>)> = None;
    let (mut leaves, mut cols, program, issues) = if let Some(name) = check {
        let s = load_suite(suite_path)?;
        let [shader] = shader else {
            unreachable!("--with is refused with --check")
        };
        let (c, ev) = evaluate_as_check(&s, name, suite_path, shader, function, overrides, arith)?;
        if want.judge {
            let detail = shadegate::detail::CheckPoints::judge(&s, &c, ev).map_err(Bad)?;
            judged = Some(detail.judge_columns());
            let ev = detail.ev;
            let mut cols = ev.input_columns;
            cols.extend(ev.output_columns);
            (ev.inputs.to_vec(), cols, ev.program, ev.issues)
        } else {
            let mut cols = ev.input_columns;
            cols.extend(ev.output_columns);
            (ev.inputs.to_vec(), cols, ev.program, ev.issues)
        }
    } else {
        let sh =
            Shader::load_files_with(shader, &Default::default()).map_err(|d| Bad(d.rendered))?;
        let program =
            Program::compile_with(&sh, function, overrides, arith).map_err(|d| Bad(d.rendered))?;
        let leaves = program.input_leaves();
        let mut cols = match input {
            Some(path) => table::read_program_csv(path, &program).map_err(Bad)?,
            None => table::columns_of_points(&program, points).map_err(Bad)?,
        };
        let refs: Vec<&[u32]> = cols.iter().map(|c| &c[..]).collect();
        let mut out = Vec::new();
        let issues = program.try_eval(&refs, &mut out).map_err(Bad)?;
        cols.append(&mut out);
        (leaves, cols, std::sync::Arc::new(program), issues)
    };
    print_issues(&issues);
    leaves.extend(program.output_leaves());
    let extra = judged.as_ref().map(|(n, rows)| (&n[..], &rows[..]));
    let csv = table::write_csv_with(&leaves, &cols, want.bits, extra).map_err(Bad)?;
    cols.clear();
    Ok((csv, issues.len()))
}

/// The shader file to evaluate a check's function in: `shader`, or `None`
/// (the check's own files, all of them in order) when the check lists
/// several files and `shader` is one of them.
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
