//! The report page: one self-contained HTML file per run (no script, no outside file;
//! pictures inline as `data:` URIs), to keep as a CI artefact. It holds the summary, the
//! findings of every failing check first, the tolerance ledger, and per check its
//! details, its error map over its first two sweep parameters (error ÷ tolerance, failing
//! cells crossed) and, for a check with view and light directions and a roughness, its
//! lobes in the plane of incidence.
//!
//! Unlike the other renderers it needs the suite as well as the run: the pictures need
//! every point, which a [`RunResult`] does not keep, so they are computed again through
//! [`crate::detail`]. A picture that cannot be made is replaced by a line saying why.

use std::fmt::Write as _;

use super::format::{self, count};
use super::text::details;
use super::Timings;
use crate::gate::{CheckResult, RunResult, Verdict};
use crate::plot::{self, Axis, ErrorGrid, ImageFormat, Measure, Scale};
use crate::suite::{Check, Suite};

/// The page of `run` (made from `suite`); with [`Timings::Omit`] it carries no time.
pub fn html(suite: &Suite, run: &RunResult, timings: Timings) -> String {
    let mut o = String::new();
    o.push_str("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
    let _ = writeln!(o, "<title>shadegate · {}</title>", esc(&run.suite));
    o.push_str(STYLE);
    o.push_str("</head>\n<body>\n");
    let _ = writeln!(
        o,
        "<h1>shadegate · suite <code>{}</code></h1>",
        esc(&run.suite)
    );
    let verdict = match run.exit_code() {
        0 => "pass",
        1 => "fail",
        _ => "error",
    };
    let _ = write!(
        o,
        "<p class=\"summary {verdict}\">{}: {} passed, {} failed, {} could not run · {} points",
        format::counted(run.checks.len(), "check"),
        run.passed(),
        run.failed(),
        run.errors(),
        count(run.checks.iter().map(|c| c.points).sum())
    );
    if timings == Timings::Show {
        let s: f64 = run.checks.iter().map(|c| c.seconds).sum();
        let _ = write!(o, " · {}", format::duration(s));
    }
    o.push_str("</p>\n");
    let _ = writeln!(
        o,
        "<p class=\"model\">Evaluated on: {}</p>",
        esc(&evaluator(run))
    );

    // Findings of failing checks first: what a reader opens the page for.
    let bad: Vec<&CheckResult> = run
        .checks
        .iter()
        .filter(|c| c.verdict != Verdict::Pass)
        .collect();
    if !bad.is_empty() {
        o.push_str("<section id=\"findings\">\n<h2>Findings</h2>\n");
        for c in &bad {
            let _ = writeln!(
                o,
                "<div class=\"finding {}\"><h3><a href=\"#check-{}\">{}</a> · {}</h3>",
                verdict_class(c.verdict),
                anchor(&c.name),
                esc(&c.name),
                verdict_word(c.verdict)
            );
            if let Some(e) = &c.error {
                let _ = writeln!(o, "<pre>{}</pre>", esc(e));
            }
            let words: Vec<String> = c.findings.iter().map(format::finding).collect();
            list(&mut o, &words);
            for k in c.comparisons.iter().filter(|k| k.stats.failed > 0) {
                let _ = writeln!(
                    o,
                    "<p>{}: {} · {}</p>",
                    esc(&k.against),
                    esc(&format::failing(&k.stats)),
                    esc(&format::headroom_words(&k.stats))
                );
            }
            o.push_str("</div>\n");
        }
        o.push_str("</section>\n");
    }

    ledger(&mut o, run);

    o.push_str("<section id=\"checks\">\n<h2>Checks</h2>\n");
    for c in &run.checks {
        let check = suite.checks.iter().find(|k| k.name == c.name);
        section(&mut o, suite, check, c, timings);
    }
    o.push_str("</section>\n</body>\n</html>\n");
    o
}

const STYLE: &str = "<style>
body { font-family: sans-serif; margin: 2em auto; max-width: 72em; color: #1a1a1a; }
code, pre { font-family: monospace; }
pre { background: #f4f4f4; padding: 0.6em; overflow-x: auto; white-space: pre-wrap; }
.pass { color: #1b5e20; } .fail { color: #b71c1c; } .error { color: #6a1b9a; }
.finding { border-left: 4px solid #b71c1c; padding-left: 0.8em; margin-bottom: 1em; }
.finding.error { border-color: #6a1b9a; }
table { border-collapse: collapse; } td, th { border: 1px solid #ccc; padding: 0.3em 0.5em; text-align: left; vertical-align: top; }
img { max-width: 100%; display: block; margin: 0.5em 0; }
.note { color: #555; font-style: italic; }
</style>
";

/// Where the run's numbers were computed, from the run's own findings (a GPU run has
/// an `EvaluatedOn` finding).
fn evaluator(run: &RunResult) -> String {
    let device = run
        .checks
        .iter()
        .flat_map(|c| c.findings.iter())
        .find_map(|f| match &f.kind {
            crate::gate::FindingKind::EvaluatedOn { backend } => Some(backend.as_str()),
            _ => None,
        });
    match device {
        Some(d) => format!("{d} (GPU back end); references in f64"),
        None => "the CPU evaluator (WGSL f32/f16 arithmetic, bit-exact per the spec's rounding); references in f64".into(),
    }
}

fn ledger(o: &mut String, run: &RunResult) {
    o.push_str("<section id=\"ledger\">\n<h2>Tolerance ledger</h2>\n<table>\n");
    o.push_str("<tr><th>check</th><th>against</th><th>tolerance</th><th>reason</th><th>worst error</th><th>headroom</th><th>result</th></tr>\n");
    for c in &run.checks {
        for k in &c.comparisons {
            let s = &k.stats;
            let result = if s.failed > 0 {
                format!("<span class=\"fail\">{}</span>", esc(&format::failing(s)))
            } else {
                "<span class=\"pass\">pass</span>".into()
            };
            let _ = writeln!(
                o,
                "<tr><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{result}</td></tr>",
                esc(&c.name),
                esc(&k.against),
                esc(&format::tolerance(&k.tolerance)),
                esc(&k.tolerance.reason),
                esc(&format::worst_errors(s)),
                esc(&format::headroom(s)),
            );
        }
    }
    o.push_str("</table>\n</section>\n");
}

fn section(
    o: &mut String,
    suite: &Suite,
    check: Option<&Check>,
    c: &CheckResult,
    timings: Timings,
) {
    let _ = writeln!(
        o,
        "<section class=\"check\" id=\"check-{}\">\n<h3><span class=\"{}\">{}</span> {}</h3>",
        anchor(&c.name),
        verdict_class(c.verdict),
        verdict_word(c.verdict),
        esc(&c.name)
    );
    let _ = write!(
        o,
        "<p><code>{}</code> in <code>{}</code> · {}",
        esc(&c.function),
        esc(&c.shader),
        format::counted(c.points, "point")
    );
    if timings == Timings::Show {
        let _ = write!(o, " · {}", format::duration(c.seconds));
    }
    if let Some(k) = check {
        let _ = write!(o, " · number model: {}", esc(&number_model(k)));
    }
    o.push_str("</p>\n");
    let d = details(c);
    if !d.trim().is_empty() {
        let _ = writeln!(o, "<pre>{}</pre>", esc(&d));
    }
    if let (Some(k), Verdict::Pass | Verdict::Fail) = (check, c.verdict) {
        pictures(o, suite, k);
    }
    o.push_str("</section>\n");
}

fn number_model(k: &Check) -> String {
    match k.arithmetic {
        crate::eval::Arithmetic::Exact => "exact WGSL rounding".into(),
        crate::eval::Arithmetic::SpecBounds { seed } => {
            format!("results moved within the WGSL spec's accuracy bounds (seed {seed})")
        }
    }
}

fn pictures(o: &mut String, suite: &Suite, k: &Check) {
    let pair = Axis::default_pair(&k.sweep);
    if k.property.is_none() && pair.is_none() {
        return;
    }
    let detail = match crate::detail::CheckPoints::of(suite, k) {
        Ok(d) => d,
        Err(e) => {
            let _ = writeln!(
                o,
                "<p class=\"note\">no pictures: {}</p>",
                esc(first_line(&e))
            );
            return;
        }
    };
    if let Some(pc) = &k.property {
        property_picture(o, suite, k, pc, &detail);
    }
    let Some((x, y)) = pair else {
        return;
    };
    for e in &detail.expected {
        let title = format!("{} against {}", k.name, e.against);
        let grid =
            ErrorGrid::of_check(&title, &detail, e, x.clone(), y.clone(), Measure::Tolerance);
        match grid.svg(Scale::Viridis) {
            Ok(svg) => {
                let _ = writeln!(
                    o,
                    "<img alt=\"error map of {} against {}: worst error ÷ tolerance over {} and {}, {} failing points crossed\" src=\"data:image/svg+xml;base64,{}\">",
                    esc(&k.name),
                    esc(&e.against),
                    esc(&x.name),
                    esc(&y.name),
                    count(grid.failing_points() as usize),
                    base64(svg.as_bytes())
                );
            }
            Err(m) => {
                let _ = writeln!(o, "<p class=\"note\">no error map: {}</p>", esc(&m));
            }
        }
    }
    if plot::lobe_params(k).is_some() {
        let picks = plot::default_roughnesses(k);
        let drawn = plot::lobes(suite, k, &picks, 30.0).and_then(|l| {
            plot::lobes_svg(
                &format!("{}: lobes in the plane of incidence, view at 30°", k.name),
                &l,
            )
        });
        match drawn {
            Ok(svg) => {
                let _ = writeln!(
                    o,
                    "<img alt=\"lobes of {} against its reference\" src=\"data:image/svg+xml;base64,{}\">",
                    esc(&k.name),
                    base64(svg.as_bytes())
                );
            }
            Err(m) => {
                let _ = writeln!(o, "<p class=\"note\">no lobes: {}</p>", esc(first_line(&m)));
            }
        }
    }
}

/// A property check's result against its first varying parameter (the albedo of a
/// lobe against the view angle, say), beside what the property expects.
fn property_picture(
    o: &mut String,
    suite: &Suite,
    k: &Check,
    pc: &crate::suite::PropertyCheck,
    detail: &crate::detail::CheckPoints,
) {
    match plot::property_image(suite, k, detail, None, ImageFormat::Svg) {
        Ok(svg) => {
            let _ = writeln!(
                o,
                "<img alt=\"{} of {} against its first varying parameter, beside what the property expects\" src=\"data:image/svg+xml;base64,{}\">",
                esc(&pc.property.label()),
                esc(&k.name),
                base64(&svg)
            );
        }
        Err(m) => {
            let _ = writeln!(
                o,
                "<p class=\"note\">no property chart: {}</p>",
                esc(first_line(&m))
            );
        }
    }
}

fn first_line(s: &str) -> &str {
    s.lines().next().unwrap_or("")
}

fn list(o: &mut String, items: &[String]) {
    if items.is_empty() {
        return;
    }
    o.push_str("<ul>\n");
    for f in items {
        let _ = writeln!(o, "<li>{}</li>", esc(f));
    }
    o.push_str("</ul>\n");
}

fn verdict_word(v: Verdict) -> &'static str {
    match v {
        Verdict::Pass => "PASS",
        Verdict::Fail => "FAIL",
        Verdict::Error => "ERROR",
    }
}

fn verdict_class(v: Verdict) -> &'static str {
    match v {
        Verdict::Pass => "pass",
        Verdict::Fail => "fail",
        Verdict::Error => "error",
    }
}

/// A check name as an id: letters, digits, `-` and `_` kept, anything else `-`.
fn anchor(name: &str) -> String {
    name.chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '_' || c == '-' {
                c
            } else {
                '-'
            }
        })
        .collect()
}

/// Escape text for HTML element content and attribute values.
fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            // Control characters other than newline and tab cannot appear in HTML text.
            c if c.is_control() && c != '\n' && c != '\t' => out.push('\u{fffd}'),
            c => out.push(c),
        }
    }
    out
}

/// Standard base64 (RFC 4648, with padding).
pub(crate) fn base64(bytes: &[u8]) -> String {
    const A: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    let mut out = String::with_capacity(bytes.len().div_ceil(3) * 4);
    for ch in bytes.chunks(3) {
        let b = [ch[0], *ch.get(1).unwrap_or(&0), *ch.get(2).unwrap_or(&0)];
        let n = (u32::from(b[0]) << 16) | (u32::from(b[1]) << 8) | u32::from(b[2]);
        for k in 0..4 {
            if k <= ch.len() {
                out.push(A[((n >> (18 - 6 * k)) & 63) as usize] as char);
            } else {
                out.push('=');
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn base64_matches_rfc_4648_test_vectors() {
        // RFC 4648 section 10.
        for (i, o) in [
            ("", ""),
            ("f", "Zg=="),
            ("fo", "Zm8="),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg=="),
            ("fooba", "Zm9vYmE="),
            ("foobar", "Zm9vYmFy"),
        ] {
            assert_eq!(base64(i.as_bytes()), o);
        }
    }

    #[test]
    fn text_is_escaped() {
        assert_eq!(
            esc("<a href=\"x\">&'\u{1b}"),
            "&lt;a href=&quot;x&quot;&gt;&amp;&#39;\u{fffd}"
        );
        assert_eq!(anchor("a b/c"), "a-b-c");
    }
}
