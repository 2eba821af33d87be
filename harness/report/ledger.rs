//! The tolerance ledger: a Markdown document of every error the suite accepts, why, and
//! how close the measured error comes to it, so a reviewer can see in one table which
//! tolerances are earned and which have gone stale.

use std::fmt::Write as _;

use super::format::{self, count, num};
use crate::compare::Stats;
use crate::gate::{CheckResult, RunResult, Verdict};

/// The ledger of a run: one table row per comparison (a check that could not run and
/// has no comparison gets one row saying why), then a note listing stale tolerances.
///
/// Columns: check, function (and shader), compared against, tolerance
/// ([`crate::compare::Tolerance::describe`]), reason, worst abs / rel / ULP measured,
/// headroom, verdict. Text from the suite is escaped so it cannot break the table
/// (`|`, line breaks) or turn into markup.
pub fn ledger(run: &RunResult) -> String {
    let mut out = String::new();
    let comparisons: usize = run.checks.iter().map(|c| c.comparisons.len()).sum();
    let _ = writeln!(out, "# Tolerance ledger\n");
    let _ = writeln!(
        out,
        "Suite {}: {}, {}; {} passed, {} failed, {} could not run.\n",
        code(&run.suite),
        format::counted(run.checks.len(), "check"),
        format::counted(comparisons, "comparison"),
        run.passed(),
        run.failed(),
        run.errors()
    );
    let _ = writeln!(
        out,
        "Each row is one comparison: what a check's results are compared against, the error \
         it accepts and the written reason, and the worst error measured in this run. \
         Headroom is tolerance ÷ measured: below 1× the check fails; above 100× the \
         tolerance is marked **stale**, because a regression that size would still pass.\n"
    );
    let _ = writeln!(
        out,
        "| Check | Function | Compared against | Tolerance | Reason | Worst abs | Worst rel | Worst ULP | Headroom | Verdict |"
    );
    let _ = writeln!(out, "|---|---|---|---|---|---:|---:|---:|---:|---|");
    let mut stale = Vec::new();
    for c in &run.checks {
        let function = format!("{} in {}", code(&c.function), code(&c.shader));
        if c.comparisons.is_empty() {
            // The first line says what went wrong; the rest (a source snippet) would
            // not read in a table cell.
            let why = c
                .error
                .as_deref()
                .and_then(|e| e.lines().next())
                .unwrap_or("nothing was compared");
            let _ = writeln!(
                out,
                "| {} | {function} | — | — | {} | — | — | — | — | {} |",
                code(&c.name),
                cell(&format!("could not run: {why}")),
                verdict(c, None)
            );
            continue;
        }
        for k in &c.comparisons {
            let s = &k.stats;
            let _ = writeln!(
                out,
                "| {} | {function} | {} | {} | {} | {} | {} | {} | {} | {} |",
                code(&c.name),
                cell(&k.against),
                cell(&format::tolerance(&k.tolerance)),
                cell(&k.tolerance.reason),
                num(s.max_abs),
                num(s.max_rel),
                num(s.max_ulp),
                format::headroom(s),
                verdict(c, Some(s))
            );
            if s.stale_tolerance {
                stale.push(format!(
                    "- {} against {}: tolerance {}, worst measured {} (headroom {})",
                    code(&c.name),
                    cell(&k.against),
                    cell(&k.tolerance.describe()),
                    format::worst_errors(s),
                    format::headroom(s)
                ));
            }
        }
    }
    out.push('\n');
    if stale.is_empty() {
        let _ = writeln!(
            out,
            "No stale tolerances: every tolerance is within 100× of the worst error measured."
        );
    } else {
        let _ = writeln!(
            out,
            "**Stale tolerances** ({}): each accepts more than 100× the worst error measured. \
             Tighten them so they catch a regression.\n",
            stale.len()
        );
        for line in stale {
            let _ = writeln!(out, "{line}");
        }
    }
    out
}

/// The verdict of one row: the comparison's own when the check ran.
fn verdict(c: &CheckResult, s: Option<&Stats>) -> String {
    match (c.verdict, s) {
        (Verdict::Error, _) => "error".into(),
        (Verdict::Fail, None) => "**fail**".into(),
        (Verdict::Pass, None) => "pass".into(),
        (_, Some(s)) if s.failed > 0 => format!(
            "**fail** ({} of {} points)",
            count(s.failed),
            count(format::compared(s))
        ),
        (_, Some(s)) if s.stale_tolerance => "pass, **stale**".into(),
        (_, Some(_)) => "pass".into(),
    }
}

/// Prose for a table cell: one line, `|` escaped so the row keeps its columns, and the
/// characters Markdown would read as markup escaped so they show as written.
pub(crate) fn cell(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '\\' | '`' | '*' | '_' | '|' | '<' | '>' | '[' | ']' | '~' | '&' => {
                out.push('\\');
                out.push(c);
            }
            '\r' => {}
            '\n' => out.push(' '),
            c => out.push(c),
        }
    }
    out
}

/// A code span (names, paths): fenced with more backticks than the text contains in a
/// row, `|` escaped (tables split cells before reading code spans), one line.
pub(crate) fn code(s: &str) -> String {
    let s = s.replace(['\r', '\n'], " ").replace('|', "\\|");
    let mut longest = 0;
    let mut run = 0;
    for c in s.chars() {
        run = if c == '`' { run + 1 } else { 0 };
        longest = longest.max(run);
    }
    let fence = "`".repeat(longest + 1);
    if s.starts_with('`') || s.ends_with('`') {
        format!("{fence} {s} {fence}")
    } else {
        format!("{fence}{s}{fence}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cells_keep_the_table_intact() {
        assert_eq!(cell("a | b\nc"), "a \\| b c");
        assert_eq!(cell("x*y_z <1e-3>"), "x\\*y\\_z \\<1e-3\\>");
        assert_eq!(code("d_ggx"), "`d_ggx`");
        assert_eq!(code("a`b"), "``a`b``");
        assert_eq!(code("`x"), "`` `x ``");
        assert_eq!(code("a|b"), "`a\\|b`");
    }
}
