//! The terminal report: one status line per check, the full explanation under each
//! check that failed or could not run, one short line per comparison of a passing
//! check, and a closing summary.

use std::fmt::Write as _;

use super::format::{self, count, duration, num, point};
use super::{Style, Timings};
use crate::gate::{AlbedoTable, CheckResult, Comparison, FindingKind, RunResult, Verdict};

/// Indentation of everything under a status line.
const UNDER: &str = "       ";

/// The readable report of a run, with ANSI colour only when `colour` is true.
///
/// ```text
/// PASS   ggx_lobe  d_ggx in shaders/lib.wgsl · 12,000 points · 41 ms
///        reference ggx: max abs 1.2e-7 · max rel 3e-7 · max 2.5 ULP · headroom 6.4×
/// FAIL   fresnel   f_schlick in shaders/lib.wgsl · 2,000 points · 12 ms
///        reference fresnel_schlick, tolerance abs 1e-6 or rel 1e-5
///          reason: ...
/// ```
///
/// Control characters in the run's texts (an ESC in a message, say) are shown as `�`, so
/// data can never move the cursor or colour the terminal, with or without `colour`.
pub fn text(run: &RunResult, colour: bool) -> String {
    text_with(run, colour, Timings::Show)
}

/// [`text()`], with or without the timings (without: same code, same bytes).
pub fn text_with(run: &RunResult, colour: bool, timings: Timings) -> String {
    let run = &terminal_safe(run);
    let st = Style { on: colour };
    let mut out = String::new();
    let _ = writeln!(
        out,
        "{} · suite {} · {}",
        st.bold("shadegate"),
        run.suite,
        format::counted(run.checks.len(), "check")
    );
    out.push('\n');
    let width = run
        .checks
        .iter()
        .map(|c| c.name.chars().count())
        .max()
        .unwrap_or(0);
    for c in &run.checks {
        check(&mut out, c, st, width, timings);
    }
    out.push('\n');
    let summary = format!(
        "{} passed · {} failed · {} could not run",
        run.passed(),
        run.failed(),
        run.errors()
    );
    let summary = match run.exit_code() {
        0 => st.pass(&summary),
        1 => st.fail(&summary),
        _ => st.error(&summary),
    };
    let points: usize = run.checks.iter().map(|c| c.points).sum();
    let seconds: f64 = run.checks.iter().map(|c| c.seconds).sum();
    let took = match timings {
        Timings::Show => format!(" in {}", duration(seconds)),
        Timings::Omit => String::new(),
    };
    let _ = writeln!(
        out,
        "{summary} {}",
        st.dim(&format!("({}{took})", format::counted(points, "point")))
    );
    out
}

/// The explanation of one check without its status line and without colour: the body
/// of a JUnit failure (whose XML escaping deals with control characters itself).
pub(crate) fn details(c: &CheckResult) -> String {
    let mut out = String::new();
    body(&mut out, c, Style { on: false });
    out.lines()
        .map(|l| l.strip_prefix(UNDER).unwrap_or(l))
        .fold(String::new(), |mut acc, l| {
            acc.push_str(l);
            acc.push('\n');
            acc
        })
}

fn check(out: &mut String, c: &CheckResult, st: Style, width: usize, timings: Timings) {
    let label = match c.verdict {
        Verdict::Pass => st.pass("PASS "),
        Verdict::Fail => st.fail("FAIL "),
        Verdict::Error => st.error("ERROR"),
    };
    let pad = width.saturating_sub(c.name.chars().count());
    let _ = writeln!(
        out,
        "{label}  {}{}  {}",
        st.bold(&c.name),
        " ".repeat(pad),
        st.dim(&format!(
            "{} in {} · {}{}",
            c.function,
            c.shader,
            format::counted(c.points, "point"),
            match timings {
                Timings::Show => format!(" · {}", duration(c.seconds)),
                Timings::Omit => String::new(),
            }
        ))
    );
    body(out, c, st);
}

fn body(out: &mut String, c: &CheckResult, st: Style) {
    if let Some(e) = &c.error {
        let mut lines = e.lines();
        if let Some(first) = lines.next() {
            let _ = writeln!(out, "{UNDER}{} {first}", st.error("could not run:"));
        }
        for line in lines {
            let _ = writeln!(out, "{UNDER}  {line}");
        }
    }
    for k in &c.comparisons {
        if c.verdict == Verdict::Pass || k.stats.failed == 0 {
            short(out, k, st);
        } else {
            long(out, k, st);
        }
    }
    if let Some(t) = &c.albedo {
        albedo_table(out, t, st);
    }
    if !c.issues.is_empty() {
        if c.verdict == Verdict::Pass {
            for g in &c.issues {
                let _ = writeln!(
                    out,
                    "{UNDER}{} {}× {} at {}: {}",
                    st.warn("note:"),
                    count(g.count),
                    g.kind,
                    g.location,
                    g.message
                );
            }
        } else {
            let _ = writeln!(out, "{UNDER}evaluator issues:");
            for g in &c.issues {
                let _ = writeln!(
                    out,
                    "{UNDER}  {} {} at {}: {}",
                    st.warn(&format!("{}×", count(g.count))),
                    g.kind,
                    g.location,
                    g.message
                );
                let _ = writeln!(out, "{UNDER}    first at {}", g.example);
            }
        }
    }
    if let Some(a) = &c.precision {
        for line in crate::precision::summary(a, 5) {
            let _ = writeln!(out, "{UNDER}{line}");
        }
    }
    if !c.findings.is_empty() {
        if c.verdict == Verdict::Pass {
            for f in &c.findings {
                let _ = writeln!(out, "{UNDER}{} {}", st.warn("note:"), format::finding(f));
            }
        } else {
            let _ = writeln!(out, "{UNDER}what the numbers say:");
            for f in &c.findings {
                let _ = writeln!(out, "{UNDER}  - {}", format::finding(f));
            }
        }
    }
}

/// A table label: at most 4 decimals, no trailing zeros (sweep values are
/// rounded to f32, so 0.1 arrives as 0.10000000149).
fn label(x: f64) -> String {
    let s = format!("{x:.4}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".to_string()
    } else {
        s.to_string()
    }
}

/// An albedo property's table: a row per view angle, a column per
/// roughness, each cell the function's directional albedo and the reference
/// model's single-scattering albedo (`function / model`); `*` marks an
/// albedo above 1 (energy gained).
fn albedo_table(out: &mut String, t: &AlbedoTable, st: Style) {
    let with_model = t.reference.is_some();
    let _ = writeln!(
        out,
        "{UNDER}directional albedo over {} by view angle ({} from +z){}:",
        t.over,
        t.view,
        match (&t.roughness, with_model) {
            (Some(r), true) => format!(" and {r}, beside {} (single scattering)", t.model),
            (Some(r), false) => format!(" and {r}"),
            (None, true) => format!(", beside {} (single scattering)", t.model),
            (None, false) => String::new(),
        }
    );
    let cell = |r: usize, c: usize| {
        let a = t.albedo[r][c];
        let mark = if a > 1.0 { "*" } else { " " };
        let a = if a.is_nan() {
            "-".to_string()
        } else {
            format!("{a:.4}")
        };
        match &t.reference {
            Some(m) if m[r][c].is_finite() => format!("{a}{mark} / {:.4}", m[r][c]),
            Some(_) => format!("{a}{mark} / -"),
            None => format!("{a}{mark}"),
        }
    };
    let heads: Vec<String> = t
        .roughnesses
        .iter()
        .map(|x| match &t.roughness {
            Some(r) => format!("{r} {}", label(*x)),
            None => "albedo".to_string(),
        })
        .collect();
    let cells: Vec<Vec<String>> = (0..t.angles.len())
        .map(|r| (0..t.roughnesses.len()).map(|c| cell(r, c)).collect())
        .collect();
    let width: Vec<usize> = (0..heads.len())
        .map(|c| {
            cells
                .iter()
                .map(|row| row[c].chars().count())
                .chain([heads[c].chars().count()])
                .max()
                .unwrap_or(0)
        })
        .collect();
    let mut line = format!("{UNDER}  {:>8}", "");
    for (h, w) in heads.iter().zip(&width) {
        let _ = write!(line, "  {h:<w$}");
    }
    let _ = writeln!(out, "{}", line.trim_end());
    for (r, row) in cells.iter().enumerate() {
        let mut line = format!("{UNDER}  {:>8}", format!("{}°", label(t.angles[r])));
        for (x, w) in row.iter().zip(&width) {
            let _ = write!(line, "  {x:<w$}");
        }
        let _ = writeln!(out, "{}", line.trim_end());
    }
    if t.albedo.iter().flatten().any(|&a| a > 1.0) {
        let _ = writeln!(
            out,
            "{UNDER}  {}",
            st.warn("* above 1: the function gains energy")
        );
    }
    if let Some(n) = &t.note {
        let _ = writeln!(out, "{UNDER}  ({} not shown: {n})", t.model);
    }
}

/// A comparison within tolerance: one line, plus a warning when the tolerance is stale.
fn short(out: &mut String, k: &Comparison, st: Style) {
    let s = &k.stats;
    let _ = write!(
        out,
        "{UNDER}{}: {} · headroom {}",
        k.against,
        format::worst_errors(s),
        format::headroom(s)
    );
    if let Some(changed) = s.changed {
        let _ = write!(out, " · {} changed bits", format::counted(changed, "point"));
    }
    if s.skipped > 0 {
        let _ = write!(out, " · {} skipped", count(s.skipped));
    }
    out.push('\n');
    if let Some(w) = format::stale_warning(s) {
        let _ = writeln!(out, "{UNDER}{} {w}", st.warn("warning:"));
    }
}

/// A failing comparison, in full.
fn long(out: &mut String, k: &Comparison, st: Style) {
    let s = &k.stats;
    let t = &k.tolerance;
    let _ = writeln!(
        out,
        "{UNDER}{}, tolerance {}",
        st.bold(&k.against),
        format::tolerance(t)
    );
    let _ = writeln!(out, "{UNDER}  reason: {}", t.reason);
    let _ = writeln!(
        out,
        "{UNDER}  {} · headroom {}: {}",
        st.fail(&format::failing(s)),
        format::headroom(s),
        format::headroom_words(s)
    );
    let _ = writeln!(
        out,
        "{UNDER}  {} · rms abs {}",
        format::worst_errors(s),
        num(s.rms_abs)
    );
    if s.skipped > 0 {
        let _ = writeln!(
            out,
            "{UNDER}  {} skipped (expected value not finite)",
            format::counted(s.skipped, "point")
        );
    }
    if let Some(changed) = s.changed {
        let _ = writeln!(
            out,
            "{UNDER}  {} of {} changed bits",
            count(changed),
            format::counted(s.points, "point")
        );
    }
    if let Some(w) = &s.worst {
        let _ = writeln!(out, "{UNDER}  worst point {}", point(w));
    }
    if !s.first_failures.is_empty() {
        let _ = writeln!(out, "{UNDER}  first failing points, in sweep order:");
        for p in &s.first_failures {
            let _ = writeln!(out, "{UNDER}    {}", point(p));
        }
    }
    if s.nonfinite > 0 {
        let _ = writeln!(
            out,
            "{UNDER}  {}",
            st.fail(&format!(
                "{} points give NaN or infinity where the expected value is finite:",
                count(s.nonfinite)
            ))
        );
        for p in &s.first_nonfinite {
            let _ = writeln!(out, "{UNDER}    {}", point(p));
        }
    }
}

/// Every text of the run with its control characters (other than line feed and tab)
/// replaced by U+FFFD.
fn terminal_safe(run: &RunResult) -> RunResult {
    fn clean(s: &mut String) {
        if s.chars().any(unsafe_char) {
            *s = s
                .chars()
                .map(|c| if unsafe_char(c) { '\u{FFFD}' } else { c })
                .collect();
        }
    }
    fn unsafe_char(c: char) -> bool {
        c.is_control() && c != '\n' && c != '\t'
    }
    let mut run = run.clone();
    clean(&mut run.suite);
    for c in &mut run.checks {
        for s in [&mut c.name, &mut c.shader, &mut c.function] {
            clean(s);
        }
        if let Some(e) = &mut c.error {
            clean(e);
        }
        for f in &mut c.findings {
            clean(&mut f.against);
            match &mut f.kind {
                FindingKind::EvaluatedOn { backend: s }
                | FindingKind::ShaderChanged { recorded: s, .. }
                | FindingKind::Confined { parameter: s, .. } => clean(s),
                FindingKind::BackendAgreement { leaf, worst_at, .. } => {
                    clean(leaf);
                    worst_at.iter_mut().for_each(clean);
                }
                FindingKind::NonFinite { site, .. } => site.iter_mut().for_each(clean),
                FindingKind::InputsRounded {
                    parameters,
                    computed,
                } => parameters.iter_mut().chain(computed).for_each(clean),
                FindingKind::ConstantFactor { named, .. } => named.iter_mut().for_each(clean),
                FindingKind::Remap {
                    parameter,
                    replaced_by,
                    ..
                } => {
                    clean(parameter);
                    clean(replaced_by);
                }
                FindingKind::BehavesLike {
                    reference, change, ..
                } => {
                    clean(reference);
                    clean(change);
                }
                FindingKind::CalleeDeviates {
                    callee,
                    check,
                    reference,
                    behaves_like,
                    ..
                } => {
                    clean(callee);
                    clean(check);
                    clean(reference);
                    behaves_like.iter_mut().for_each(clean);
                }
            }
            if let FindingKind::ShaderChanged { current, .. } = &mut f.kind {
                clean(current);
            }
        }
        for g in &mut c.issues {
            for s in [&mut g.kind, &mut g.message, &mut g.location, &mut g.example] {
                clean(s);
            }
        }
        for k in &mut c.comparisons {
            clean(&mut k.against);
            clean(&mut k.tolerance.reason);
            let s = &mut k.stats;
            let points = s
                .worst
                .iter_mut()
                .chain(&mut s.first_failures)
                .chain(&mut s.first_nonfinite);
            for p in points {
                clean(&mut p.params);
            }
        }
    }
    run
}
