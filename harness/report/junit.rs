//! JUnit XML, the test-report format CI systems import: one `<testsuite>` for the
//! suite, one `<testcase>` per check. A failing check carries a `<failure>` whose
//! `message` is one line (what failed, against what, how badly) and whose text is the
//! full explanation of the terminal report; a check that could not run carries an
//! `<error>`. A passing check's one-line comparison summary (and any stale-tolerance
//! warning) goes into `<system-out>`.

use std::fmt::Write as _;

use super::format::{self, count, num};
use super::text::details;
use super::Timings;
use crate::gate::{CheckResult, RunResult, Verdict};

/// The run as JUnit XML.
///
/// `testcase` attributes: `name` is the check, `classname` is `shadegate.` followed by
/// the WGSL function, `file` the shader, `time` seconds. Counts on `<testsuites>` and
/// `<testsuite>`: `tests` checks, `failures` failed checks, `errors` checks that could
/// not run.
pub fn junit(run: &RunResult) -> String {
    junit_with(run, Timings::Show)
}

/// [`junit()`], with or without the `time` attributes (without: same code, same bytes).
pub fn junit_with(run: &RunResult, timings: Timings) -> String {
    let seconds = |s: f64| match timings {
        Timings::Show => format!(" time=\"{}\"", seconds(s)),
        Timings::Omit => String::new(),
    };
    let mut out = String::new();
    let time: f64 = run.checks.iter().map(|c| c.seconds).sum();
    let (tests, failures, errors) = (run.checks.len(), run.failed(), run.errors());
    out.push_str("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    let _ = writeln!(
        out,
        "<testsuites name=\"shadegate\" tests=\"{tests}\" failures=\"{failures}\" errors=\"{errors}\"{}>",
        seconds(time)
    );
    let _ = writeln!(
        out,
        "  <testsuite name=\"{}\" tests=\"{tests}\" failures=\"{failures}\" errors=\"{errors}\" skipped=\"0\"{}>",
        attr(&run.suite),
        seconds(time)
    );
    for c in &run.checks {
        testcase(&mut out, c, &seconds(c.seconds));
    }
    out.push_str("  </testsuite>\n</testsuites>\n");
    out
}

fn testcase(out: &mut String, c: &CheckResult, time: &str) {
    let _ = writeln!(
        out,
        "    <testcase name=\"{}\" classname=\"shadegate.{}\" file=\"{}\"{time}>",
        attr(&c.name),
        attr(&c.function),
        attr(&c.shader),
    );
    let body = details(c);
    match c.verdict {
        Verdict::Pass => {
            if !body.is_empty() {
                let _ = writeln!(out, "      <system-out>{}</system-out>", text(&body));
            }
        }
        Verdict::Fail => {
            let _ = writeln!(
                out,
                "      <failure message=\"{}\" type=\"tolerance\">{}</failure>",
                attr(&failure_message(c)),
                text(&body)
            );
        }
        Verdict::Error => {
            let message = c
                .error
                .as_deref()
                .and_then(|e| e.lines().next())
                .unwrap_or("the check could not run");
            let _ = writeln!(
                out,
                "      <error message=\"{}\" type=\"could_not_run\">{}</error>",
                attr(message),
                text(&body)
            );
        }
    }
    out.push_str("    </testcase>\n");
}

/// One line per failing comparison, joined: what failed and where it is worst.
fn failure_message(c: &CheckResult) -> String {
    let parts: Vec<String> = c
        .comparisons
        .iter()
        .filter(|k| k.stats.failed > 0)
        .map(|k| {
            let s = &k.stats;
            let mut m = format!(
                "against {}: {} outside {}",
                k.against,
                format::failing(s),
                k.tolerance.describe()
            );
            if s.nonfinite > 0 {
                let _ = write!(m, ", {} non-finite", count(s.nonfinite));
            }
            if let Some(w) = &s.worst {
                let _ = write!(m, "; worst abs {} at point #{}", num(w.abs), w.index);
                if !w.params.is_empty() {
                    let _ = write!(m, " ({})", w.params);
                }
            }
            m
        })
        .collect();
    if parts.is_empty() {
        "the check failed".into()
    } else {
        parts.join("; ")
    }
}

fn seconds(s: f64) -> String {
    if s.is_finite() && s >= 0.0 {
        format!("{s:.3}")
    } else {
        "0.000".into()
    }
}

/// Escape for XML element text.
pub(crate) fn text(s: &str) -> String {
    escape(s, false)
}

/// Escape for a double-quoted XML attribute value. Tabs and line breaks become
/// character references, which a parser keeps (literal ones it would turn into spaces).
pub(crate) fn attr(s: &str) -> String {
    escape(s, true)
}

fn escape(s: &str, attribute: bool) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' if attribute => out.push_str("&quot;"),
            '\'' if attribute => out.push_str("&apos;"),
            '\n' if attribute => out.push_str("&#10;"),
            '\t' if attribute => out.push_str("&#9;"),
            // A literal carriage return is read back as a line feed, even in text.
            '\r' => out.push_str("&#13;"),
            '\n' | '\t' => out.push(c),
            // XML 1.0 cannot carry these at all, not even as references: say something
            // was there rather than drop it silently.
            c if (c as u32) < 0x20 || c == '\u{FFFE}' || c == '\u{FFFF}' => out.push('\u{FFFD}'),
            c => out.push(c),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn markup_and_control_characters_are_escaped() {
        assert_eq!(text("a<b & c>\"d\"\n"), "a&lt;b &amp; c&gt;\"d\"\n");
        assert_eq!(
            attr("a<b & \"c\" 'd'\n\t\r\u{1b}"),
            "a&lt;b &amp; &quot;c&quot; &apos;d&apos;&#10;&#9;&#13;\u{FFFD}"
        );
    }
}
