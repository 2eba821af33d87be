//! Reports of a run, in four formats, all read from [`crate::gate::RunResult`] only:
//!
//! - [`text`]: the terminal report, with colour only when asked for (the CLI asks when
//!   standard output is a terminal and `NO_COLOR` is not set);
//! - [`json`]: the whole result, for scripts;
//! - [`junit`]: JUnit XML (one test case per check), the format CI systems import;
//! - [`ledger`]: the Markdown tolerance ledger, every check with its accepted tolerance, the
//!   written reason and the measured worst error.
//!
//! Library code never prints: each function returns the text. The one exception is
//! [`Progress`], which the CLI creates to show a long run advancing on a terminal.

use std::fmt::Write as _;

use crate::compare::{NanPolicy, PointReport, Stats, Tolerance};
use crate::gate::{CheckResult, Comparison, RunResult, Verdict};

/// ANSI styling, or none.
#[derive(Clone, Copy)]
struct Style {
    on: bool,
}

impl Style {
    fn paint(&self, code: &str, s: &str) -> String {
        if self.on {
            format!("\x1b[{code}m{s}\x1b[0m")
        } else {
            s.to_string()
        }
    }
    fn green(&self, s: &str) -> String {
        self.paint("32;1", s)
    }
    fn red(&self, s: &str) -> String {
        self.paint("31;1", s)
    }
    fn yellow(&self, s: &str) -> String {
        self.paint("33", s)
    }
    fn dim(&self, s: &str) -> String {
        self.paint("2", s)
    }
    fn bold(&self, s: &str) -> String {
        self.paint("1", s)
    }
}

/// A number for people: up to 4 significant digits, exponent form when far from 1.
pub fn num(x: f64) -> String {
    if x.is_nan() {
        return "NaN".into();
    }
    if x.is_infinite() {
        return if x > 0.0 { "inf".into() } else { "-inf".into() };
    }
    if x == 0.0 {
        return "0".into();
    }
    let a = x.abs();
    if (1e-3..1e5).contains(&a) {
        let digits = (3 - a.log10().floor() as i32).clamp(0, 6) as usize;
        let s = format!("{x:.digits$}");
        if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s
        }
    } else {
        let s = format!("{x:.3e}");
        // 1.500e-7 -> 1.5e-7
        match s.split_once('e') {
            Some((m, e)) => {
                let m = if m.contains('.') {
                    m.trim_end_matches('0').trim_end_matches('.')
                } else {
                    m
                };
                format!("{m}e{e}")
            }
            None => s,
        }
    }
}

/// A count with thousands separators.
pub fn count(n: usize) -> String {
    let s = n.to_string();
    let mut out = String::new();
    for (i, c) in s.chars().enumerate() {
        if i > 0 && (s.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    out
}

fn percent(share: f64) -> String {
    let p = share * 100.0;
    if p == 0.0 {
        "0 %".into()
    } else if p < 0.1 {
        format!("{p:.3} %")
    } else {
        format!("{p:.1} %")
    }
}

fn values(v: &[f64]) -> String {
    if v.len() == 1 {
        num(v[0])
    } else {
        format!(
            "({})",
            v.iter().map(|x| num(*x)).collect::<Vec<_>>().join(", ")
        )
    }
}

/// The accepted bounds in words, e.g. `rel 2e-6 or abs 1e-9`.
pub fn accepted(t: &Tolerance) -> String {
    let mut parts = Vec::new();
    let f = |v: &[f64]| {
        if v.len() == 1 {
            num(v[0])
        } else {
            format!(
                "[{}]",
                v.iter().map(|x| num(*x)).collect::<Vec<_>>().join(", ")
            )
        }
    };
    if let Some(v) = &t.abs {
        parts.push(format!("abs {}", f(v)));
    }
    if let Some(v) = &t.rel {
        parts.push(format!("rel {}", f(v)));
    }
    if let Some(v) = &t.ulp {
        if v.iter().all(|x| *x == 0.0) && t.abs.is_none() && t.rel.is_none() {
            parts.push("bit-exact".into());
        } else {
            parts.push(format!("{} ULP", f(v)));
        }
    }
    let mut s = parts.join(" or ");
    if t.nan == NanPolicy::Skip {
        s.push_str(" (points with a non-finite expected value skipped)");
    }
    s
}

/// The measured worst error in the terms of the tolerance's own bounds.
pub fn measured(t: &Tolerance, s: &Stats) -> String {
    let mut parts = Vec::new();
    if t.ulp.is_some() {
        parts.push(format!("{} ULP", num(s.max_ulp)));
    }
    if t.rel.is_some() {
        parts.push(format!("rel {}", num(s.max_rel)));
    }
    if t.abs.is_some() {
        parts.push(format!("abs {}", num(s.max_abs)));
    }
    if parts.is_empty() {
        parts.push(format!("abs {}", num(s.max_abs)));
    }
    parts.join(", ")
}

fn headroom(s: &Stats) -> String {
    if s.headroom.is_infinite() {
        "unbounded (no error at all)".into()
    } else {
        format!("{}×", num(s.headroom))
    }
}

fn point_line(p: &PointReport, components: &[&str]) -> String {
    let comp = if p.got.len() > 1 {
        let name = components.get(p.component).copied().unwrap_or("?");
        format!(" [{name}]")
    } else {
        String::new()
    };
    format!(
        "#{} {}: got {} want {}{}, abs {}, rel {}, {} ULP",
        p.index,
        p.params,
        values(&p.got),
        values(&p.want),
        comp,
        num(p.abs),
        num(p.rel),
        num(p.ulp)
    )
}

const RGB: [&str; 4] = ["x", "y", "z", "w"];

fn verdict_label(v: Verdict, st: Style) -> String {
    match v {
        Verdict::Pass => st.green("PASS "),
        Verdict::Fail => st.red("FAIL "),
        Verdict::Error => st.red("ERROR"),
    }
}

fn comparison_text(out: &mut String, c: &Comparison, st: Style, show: usize) {
    let s = &c.stats;
    let t = &c.tolerance;
    let compared = s.points - s.skipped;
    if s.failed == 0 {
        let _ = write!(
            out,
            "      {}: worst {} · accepted {} · headroom {}",
            c.against,
            measured(t, s),
            accepted(t),
            headroom(s)
        );
        if let Some(ch) = s.changed {
            let _ = write!(
                out,
                " · {} of {} points changed bits",
                count(ch),
                count(s.points)
            );
        }
        out.push('\n');
        if s.stale_tolerance {
            let _ = writeln!(
                out,
                "      {}",
                st.yellow(&format!(
                    "stale tolerance: accepted is {} looser than the worst error measured; tighten it so it can catch a regression",
                    headroom(s)
                ))
            );
        }
        return;
    }
    let _ = writeln!(
        out,
        "      {}: {} of {} points ({}) outside {}",
        c.against,
        count(s.failed),
        count(compared),
        percent(s.fail_share),
        accepted(t)
    );
    let _ = writeln!(
        out,
        "        max abs {} · max rel {} · max {} ULP · rms {}",
        num(s.max_abs),
        num(s.max_rel),
        num(s.max_ulp),
        num(s.rms_abs)
    );
    if let Some(ch) = s.changed {
        let _ = writeln!(
            out,
            "        {} of {} points changed bits",
            count(ch),
            count(s.points)
        );
    }
    if let Some(w) = &s.worst {
        let _ = writeln!(out, "        worst {}", point_line(w, &RGB));
    }
    if s.nonfinite > 0 {
        let _ = writeln!(
            out,
            "        {}",
            st.red(&format!(
                "{} points give NaN or infinity where the expected value is finite",
                count(s.nonfinite)
            ))
        );
        for p in s.first_nonfinite.iter().take(show) {
            let _ = writeln!(out, "          {}", point_line(p, &RGB));
        }
    }
    if !s.first_failures.is_empty() {
        let _ = writeln!(out, "        first failing points in sweep order:");
        for p in s.first_failures.iter().take(show) {
            let _ = writeln!(out, "          {}", point_line(p, &RGB));
        }
    }
}

/// How many failing points the terminal report lists per comparison.
pub const SHOWN: usize = 5;

/// Whether the terminal report should be coloured: standard output is a terminal and
/// `NO_COLOR` is unset or empty (the convention documented at no-color.org).
pub fn use_colour() -> bool {
    use std::io::IsTerminal as _;
    std::io::stdout().is_terminal() && std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty())
}

/// Progress of a run on standard error, shown only when standard error is a terminal:
/// one line, rewritten as each check starts, cleared at the end.
pub struct Progress {
    on: bool,
    shown: std::cell::Cell<bool>,
}

impl Progress {
    /// Progress on standard error if it is a terminal, otherwise silent.
    pub fn new() -> Progress {
        use std::io::IsTerminal as _;
        Progress {
            on: std::io::stderr().is_terminal(),
            shown: std::cell::Cell::new(false),
        }
    }

    /// Check `i` (1-based) of `n`, called `name`, is starting.
    pub fn step(&self, i: usize, n: usize, name: &str) {
        if !self.on {
            return;
        }
        eprint!("\r\x1b[2K[{i}/{n}] {name}");
        self.shown.set(true);
    }
}

impl Default for Progress {
    fn default() -> Self {
        Progress::new()
    }
}

impl Drop for Progress {
    fn drop(&mut self) {
        if self.shown.get() {
            eprint!("\r\x1b[2K");
        }
    }
}

/// The terminal report.
pub fn text(run: &RunResult, color: bool) -> String {
    text_with(run, color, SHOWN)
}

/// The terminal report, listing at most `show` points per comparison.
pub fn text_with(run: &RunResult, color: bool, show: usize) -> String {
    let st = Style { on: color };
    let mut out = String::new();
    let _ = writeln!(
        out,
        "{} {} · {} checks",
        st.bold("shadegate"),
        run.suite,
        run.checks.len()
    );
    for c in &run.checks {
        out.push('\n');
        check_text(&mut out, c, st, show);
    }
    out.push('\n');
    let summary = format!(
        "{} passed, {} failed, {} could not run",
        run.passed(),
        run.failed(),
        run.errors()
    );
    let summary = match run.exit_code() {
        0 => st.green(&summary),
        _ => st.red(&summary),
    };
    let points: usize = run.checks.iter().map(|c| c.points).sum();
    let secs: f64 = run.checks.iter().map(|c| c.seconds).sum();
    let _ = writeln!(out, "{summary} · {} points in {:.2} s", count(points), secs);
    out
}

fn check_text(out: &mut String, c: &CheckResult, st: Style, show: usize) {
    let _ = writeln!(
        out,
        "{} {}  {} points  {}  {}",
        verdict_label(c.verdict, st),
        st.bold(&c.name),
        count(c.points),
        st.dim(&format!("{} in {}", c.function, c.shader)),
        st.dim(&format!("{:.2} s", c.seconds))
    );
    if let Some(e) = &c.error {
        for line in e.lines() {
            let _ = writeln!(out, "      {line}");
        }
    }
    for cmp in &c.comparisons {
        comparison_text(out, cmp, st, show);
    }
    for g in &c.issues {
        let _ = writeln!(
            out,
            "      {} {} at {}: {} (e.g. {})",
            st.yellow(&format!("{}×", count(g.count))),
            g.kind,
            g.location,
            g.message,
            g.example
        );
    }
    if !c.findings.is_empty() && c.verdict != Verdict::Pass {
        let _ = writeln!(out, "      why:");
        for f in &c.findings {
            let _ = writeln!(out, "        - {f}");
        }
    }
}

/// The whole result as pretty JSON. Non-finite numbers (an unbounded headroom, a NaN
/// result) are written as `null`, JSON having no spelling for them.
pub fn json(run: &RunResult) -> String {
    serde_json::to_string_pretty(run).expect("a run result serialises")
}

/// Escape text for XML content and attribute values; characters XML 1.0 cannot carry
/// (control characters other than tab, newline and carriage return) are dropped.
pub fn xml_escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            '\t' | '\n' | '\r' => out.push(c),
            c if (c as u32) < 0x20 => {}
            c => out.push(c),
        }
    }
    out
}

fn check_details(c: &CheckResult) -> String {
    let mut s = String::new();
    check_text(&mut s, c, Style { on: false }, 5);
    s
}

/// JUnit XML: one `<testsuite>` for the suite, one `<testcase>` per check; a failing check
/// carries a `<failure>`, a check that could not run an `<error>`.
pub fn junit(run: &RunResult) -> String {
    let mut out = String::new();
    let time: f64 = run.checks.iter().map(|c| c.seconds).sum();
    out.push_str("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    let _ = writeln!(
        out,
        "<testsuites name=\"shadegate\" tests=\"{}\" failures=\"{}\" errors=\"{}\" time=\"{:.3}\">",
        run.checks.len(),
        run.failed(),
        run.errors(),
        time
    );
    let _ = writeln!(
        out,
        "  <testsuite name=\"{}\" tests=\"{}\" failures=\"{}\" errors=\"{}\" skipped=\"0\" time=\"{:.3}\">",
        xml_escape(&run.suite),
        run.checks.len(),
        run.failed(),
        run.errors(),
        time
    );
    for c in &run.checks {
        let _ = write!(
            out,
            "    <testcase name=\"{}\" classname=\"shadegate.{}\" time=\"{:.3}\"",
            xml_escape(&c.name),
            xml_escape(&c.function),
            c.seconds
        );
        let details = check_details(c);
        match c.verdict {
            Verdict::Pass => {
                out.push_str(">\n");
                let _ = writeln!(
                    out,
                    "      <system-out>{}</system-out>",
                    xml_escape(&details)
                );
            }
            Verdict::Fail => {
                out.push_str(">\n");
                let message = c
                    .comparisons
                    .iter()
                    .filter(|k| k.stats.failed > 0)
                    .map(|k| {
                        format!(
                            "{}: {} of {} points outside {}",
                            k.against,
                            count(k.stats.failed),
                            count(k.stats.points - k.stats.skipped),
                            accepted(&k.tolerance)
                        )
                    })
                    .collect::<Vec<_>>()
                    .join("; ");
                let _ = writeln!(
                    out,
                    "      <failure message=\"{}\" type=\"tolerance\">{}</failure>",
                    xml_escape(&message),
                    xml_escape(&details)
                );
            }
            Verdict::Error => {
                out.push_str(">\n");
                let message = c
                    .error
                    .as_deref()
                    .and_then(|e| e.lines().next())
                    .unwrap_or("the check could not run");
                let _ = writeln!(
                    out,
                    "      <error message=\"{}\" type=\"input\">{}</error>",
                    xml_escape(message),
                    xml_escape(&details)
                );
            }
        }
        out.push_str("    </testcase>\n");
    }
    out.push_str("  </testsuite>\n</testsuites>\n");
    out
}

fn md_cell(s: &str) -> String {
    s.replace('\\', "\\\\")
        .replace('|', "\\|")
        .replace(['\n', '\r'], " ")
}

/// The Markdown tolerance ledger: the suite's numeric contract, written down.
pub fn ledger(run: &RunResult) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "# Tolerance ledger: {}\n", md_cell(&run.suite));
    let _ = writeln!(
        out,
        "Every check of the suite, what it is compared with, the error it accepts and why, and the \
         worst error measured in this run. Headroom is accepted ÷ measured: above 100× the \
         tolerance is flagged as stale, because it would let a regression through.\n"
    );
    let _ = writeln!(
        out,
        "| check | function | points | compared with | accepted | reason | measured worst | headroom | status |"
    );
    let _ = writeln!(out, "|---|---|---:|---|---|---|---|---:|---|");
    for c in &run.checks {
        if c.comparisons.is_empty() {
            let _ = writeln!(
                out,
                "| {} | `{}` | {} | — | — | — | — | — | could not run: {} |",
                md_cell(&c.name),
                md_cell(&c.function),
                count(c.points),
                md_cell(c.error.as_deref().unwrap_or("unknown error"))
            );
            continue;
        }
        for k in &c.comparisons {
            let s = &k.stats;
            let status = if s.failed > 0 {
                format!(
                    "FAIL: {} of {} points",
                    count(s.failed),
                    count(s.points - s.skipped)
                )
            } else if s.stale_tolerance {
                "pass, stale tolerance".to_string()
            } else {
                "pass".to_string()
            };
            let mut worst = measured(&k.tolerance, s);
            if let Some(ch) = s.changed {
                worst.push_str(&format!("; {} points changed bits", count(ch)));
            }
            let _ = writeln!(
                out,
                "| {} | `{}` | {} | {} | {} | {} | {} | {} | {} |",
                md_cell(&c.name),
                md_cell(&c.function),
                count(s.points),
                md_cell(&k.against),
                md_cell(&accepted(&k.tolerance)),
                md_cell(&k.tolerance.reason),
                md_cell(&worst),
                md_cell(&headroom(s)),
                status
            );
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_read_well() {
        assert_eq!(num(0.0), "0");
        assert_eq!(num(1.5e-7), "1.5e-7");
        assert_eq!(num(3.14159265), "3.142");
        assert_eq!(num(12.5), "12.5");
        assert_eq!(num(1234.6), "1235");
        assert_eq!(num(f64::INFINITY), "inf");
        assert_eq!(count(1234567), "1,234,567");
        assert_eq!(count(12), "12");
    }

    #[test]
    fn xml_escaping_covers_markup_and_control_characters() {
        assert_eq!(
            xml_escape("a<b & \"c\" 'd' >\u{1}\n"),
            "a&lt;b &amp; &quot;c&quot; &apos;d&apos; &gt;\n"
        );
    }

    #[test]
    fn markdown_cells_keep_the_table_intact() {
        assert_eq!(md_cell("a | b\nc"), "a \\| b c");
    }
}
