//! Numbers and phrases shared by the report formats, so the terminal report, the JUnit
//! failure text and the ledger say the same thing the same way.

use crate::compare::{NanPolicy, PointReport, Stats, Tolerance};
use std::fmt::Write as _;

use crate::gate::{Confined, Finding, FindingKind, Remap};
use crate::sweep::fmt_num;

/// An error or statistic: up to 3 significant digits, exponent form far from 1,
/// `NaN` / `inf` / `-inf` for non-finite values.
pub fn num(x: f64) -> String {
    sig(x, 3)
}

/// A computed or expected value: an f32 value in its shortest form that reads back to
/// the same f32 (what the shader produced), anything else with 9 significant digits.
pub fn value(x: f64) -> String {
    if !x.is_finite() || x == 0.0 {
        return sig(x, 3);
    }
    let f = x as f32;
    if f64::from(f) == x {
        let a = f.abs();
        if (1e-4..1e7).contains(&a) {
            format!("{f}")
        } else {
            format!("{f:e}")
        }
    } else {
        sig(x, 9)
    }
}

/// `x` with `digits` significant digits, trailing zeros dropped.
fn sig(x: f64, digits: usize) -> String {
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
        let decimals = (digits as i32 - 1 - a.log10().floor() as i32).max(0) as usize;
        trim(&format!("{x:.decimals$}"))
    } else {
        let s = format!("{x:.*e}", digits - 1);
        match s.split_once('e') {
            Some((m, e)) => format!("{}e{e}", trim(m)),
            None => s,
        }
    }
}

/// Drop trailing zeros after a decimal point (`1.500` → `1.5`, `2.000` → `2`).
fn trim(s: &str) -> String {
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s.to_string()
    }
}

/// A count with thousands separators: `120,000`.
pub fn count(n: usize) -> String {
    let s = n.to_string();
    let mut out = String::with_capacity(s.len() + s.len() / 3);
    for (i, c) in s.chars().enumerate() {
        if i > 0 && (s.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// `1 check`, `3 checks`.
pub fn counted(n: usize, noun: &str) -> String {
    format!("{} {noun}{}", count(n), if n == 1 { "" } else { "s" })
}

/// A share (0..=1) as a percentage: `12.5 %`, `0.0042 %`.
pub fn percent(share: f64) -> String {
    let p = share * 100.0;
    if p == 0.0 || p >= 0.1 {
        format!("{} %", trim(&format!("{p:.1}")))
    } else {
        format!("{} %", sig(p, 2))
    }
}

/// Seconds for people: `41 ms`, `2.35 s`.
pub fn duration(seconds: f64) -> String {
    if !seconds.is_finite() || seconds < 0.0 {
        "? s".into()
    } else if seconds < 1.0 {
        format!("{:.0} ms", seconds * 1000.0)
    } else {
        format!("{seconds:.2} s")
    }
}

/// One or more components: `0.25` or `(0.25, 0.5, 1)`.
pub fn values(v: &[f64]) -> String {
    let parts: Vec<String> = v.iter().map(|x| value(*x)).collect();
    if parts.len() == 1 {
        parts[0].clone()
    } else {
        format!("({})", parts.join(", "))
    }
}

/// The tolerance in the suite's own terms ([`Tolerance::describe`]), with what its NaN
/// policy and a bit-exact bound mean.
pub fn tolerance(t: &Tolerance) -> String {
    let mut s = t.describe();
    let exact = t.abs.is_none()
        && t.rel.is_none()
        && t.ulp.as_ref().is_none_or(|v| v.iter().all(|x| *x == 0.0));
    if exact {
        s.push_str(" (bit-exact)");
    }
    if t.nan == NanPolicy::Skip {
        s.push_str(", points expected non-finite skipped");
    }
    s
}

/// Headroom as a factor: `∞` when nothing moved, `8.2×`, `0.0012×` when failing.
pub fn headroom(s: &Stats) -> String {
    if s.headroom.is_infinite() {
        "∞".into()
    } else if exact_bound_exceeded(s) {
        "none (exact tolerance)".into()
    } else {
        format!("{}×", num(s.headroom))
    }
}

/// A finite error against a zero (exact) bound: no headroom factor exists,
/// yet nothing is unboundedly wrong.
fn exact_bound_exceeded(s: &Stats) -> bool {
    s.headroom == 0.0 && s.nonfinite == 0 && s.max_ulp > 0.0 && s.max_ulp.is_finite()
}

/// What the headroom means, in words.
pub fn headroom_words(s: &Stats) -> String {
    if s.headroom.is_infinite() {
        "no error at all".into()
    } else if s.headroom >= 1.0 {
        format!("the tolerance is {} the worst error", headroom(s))
    } else if s.headroom > 0.0 {
        format!(
            "the worst point is {}× over the tolerance",
            num(1.0 / s.headroom)
        )
    } else if s.nonfinite > 0 {
        "results are NaN or infinite where finite values are expected".into()
    } else if exact_bound_exceeded(s) {
        format!(
            "the tolerance is exact and the worst point is {} ULP off",
            num(s.max_ulp)
        )
    } else {
        "a point is unboundedly wrong (a non-finite value where another is expected, \
         or an error against a zero bound)"
            .into()
    }
}

/// The warning for a tolerance flagged stale, or `None`.
pub fn stale_warning(s: &Stats) -> Option<String> {
    if !s.stale_tolerance {
        None
    } else if s.headroom.is_infinite() {
        Some(
            "stale tolerance: nothing moved at all, yet the tolerance accepts error; \
             a bit-exact bound would catch any change"
                .into(),
        )
    } else {
        Some(format!(
            "stale tolerance: it is {} looser than the worst error measured; \
             tighten it so it catches a regression of that size",
            headroom(s)
        ))
    }
}

/// The three worst errors: `max abs 1.2e-7 · max rel 3e-7 · max 2.5 ULP`.
pub fn worst_errors(s: &Stats) -> String {
    format!(
        "max abs {} · max rel {} · max {} ULP",
        num(s.max_abs),
        num(s.max_rel),
        num(s.max_ulp)
    )
}

/// Points actually compared (those not skipped by the NaN policy).
pub fn compared(s: &Stats) -> usize {
    s.points.saturating_sub(s.skipped)
}

/// `12 of 1,000 points fail (1.2 %)`.
pub fn failing(s: &Stats) -> String {
    format!(
        "{} of {} fail ({})",
        count(s.failed),
        counted(compared(s), "point"),
        percent(s.fail_share)
    )
}

const COMPONENTS: [&str; 4] = ["x", "y", "z", "w"];

/// One listed point: `#12 roughness=0.5: got 0.1 want 0.12 · abs 0.02 · rel 0.167 · 2.1e5 ULP`.
/// For several output components, the component whose error is reported is named.
pub fn point(p: &PointReport) -> String {
    let params = if p.params.is_empty() {
        String::new()
    } else {
        format!(" {}", p.params)
    };
    let component = if p.got.len() > 1 {
        let c = COMPONENTS
            .get(p.component)
            .map_or_else(|| p.component.to_string(), |c| c.to_string());
        // `result.x`, not `x`: a sweep parameter may be called x.
        format!(" · in result.{c}")
    } else {
        String::new()
    };
    let rel = if p.near_zero {
        "rel not shown (expected value near zero: see abs)".to_string()
    } else {
        format!("rel {}", num(p.rel))
    };
    format!(
        "#{}{params}: got {} want {}{component} · abs {} · {rel} · {} ULP",
        p.index,
        values(&p.got),
        values(&p.want),
        num(p.abs),
        num(p.ulp)
    )
}

/// A finding in words: what it says and how much of the failure it explains.
pub fn finding(f: &Finding) -> String {
    let text = match &f.kind {
        FindingKind::EvaluatedOn { backend } => format!("evaluated on {backend}"),
        FindingKind::BackendAgreement {
            leaf,
            points,
            exact,
            within_2,
            worst_ulp,
            worst_at,
        } => {
            let share = |x: usize| 100.0 * x as f64 / (*points).max(1) as f64;
            let worst = match (worst_ulp, worst_at) {
                (_, None) => "every point bit-identical".to_string(),
                (None, Some(at)) => format!("worst NaN against a number at {at}"),
                (Some(w), Some(at)) => format!("worst {w} ULP at {at}"),
            };
            format!(
                "device vs CPU evaluator, {leaf}: {:.1} % bit-identical, {:.1} % within 2 ULP, {worst}",
                share(*exact),
                share(*within_2)
            )
        }
        FindingKind::InputsRounded {
            parameters,
            computed,
        } => {
            let mut parts = Vec::new();
            if !parameters.is_empty() {
                parts.push(format!(
                    "{} rounded to f16 for both sides (an f16 argument takes {})",
                    parameters.join(", "),
                    if parameters.len() == 1 { "it" } else { "them" }
                ));
            }
            if !computed.is_empty() {
                parts.push(format!(
                    "f16 argument(s) {} rounded after their expression; the other side sees the unrounded value",
                    computed.join(", ")
                ));
            }
            parts.join("; ")
        }
        FindingKind::ShaderChanged { recorded, current } => format!(
            "the shader changed since the golden was recorded (hash {recorded} → {current})"
        ),
        FindingKind::NonFinite { points, site } => format!(
            "{} point(s) give NaN or infinity where the expected value is finite{}",
            count(*points),
            site.as_ref()
                .map(|s| format!(" (first produced at {s})"))
                .unwrap_or_default()
        ),
        FindingKind::ConstantFactor { factor, named } => format!(
            "every failing result is the expected value times {factor:.6}{}",
            named.as_ref().map(|n| format!(" = {n}")).unwrap_or_default()
        ),
        FindingKind::Confined {
            which,
            parameter,
            lo,
            hi,
            swept_lo,
            swept_hi,
        } => format!(
            "{} have {parameter} in [{}, {}] (swept [{}, {}])",
            match which {
                Confined::Failures => "all failing points",
                Confined::LargestErrors => "the largest errors (top 1 % of failures)",
            },
            fmt_num(*lo),
            fmt_num(*hi),
            fmt_num(*swept_lo),
            fmt_num(*swept_hi)
        ),
        FindingKind::Remap {
            parameter,
            replaced_by,
            meaning,
            passing,
        } => format!(
            "with `{parameter}` replaced by `{replaced_by}` in the reference arguments, {:.1} % of points pass: {}",
            100.0 * passing,
            match meaning {
                Remap::SquaringSkipped => format!(
                    "the shader seems to skip one squaring of `{parameter}` (e.g. alpha = {parameter} instead of {parameter}²)"
                ),
                Remap::SquaredTwice => format!(
                    "the shader seems to square `{parameter}` once more than the reference (a remap applied twice?)"
                ),
            }
        ),
        FindingKind::BehavesLike {
            reference,
            change,
            explained,
            kept,
            ..
        } => {
            let mut t = format!("behaves like {reference} with {change}");
            if *explained < 1.0 || *kept < 1.0 {
                let _ = write!(
                    t,
                    " (partly: {:.1} % of failing points explained, {:.1} % of passing points kept)",
                    100.0 * explained,
                    100.0 * kept
                );
            }
            t
        }
        FindingKind::CalleeDeviates {
            callee,
            check,
            reference,
            line,
            failing_reached,
            deviating_failing,
            behaves_like,
            ..
        } => format!(
            "its call to {callee} at line {line} deviates from {reference} (check `{check}`) at the arguments it receives, on {} of {} failing point(s) that reach it{}",
            count(*deviating_failing),
            count(*failing_reached),
            behaves_like
                .as_ref()
                .map(|b| format!("; {callee} behaves like {reference} with {b}"))
                .unwrap_or_default()
        ),
    };
    let against = if f.against.is_empty() {
        String::new()
    } else {
        format!("against the {}: ", f.against)
    };
    match f.explains {
        Some(x) if x < 1.0 => format!(
            "{against}{text} [explains {:.1} % of failing points]",
            100.0 * x
        ),
        _ => format!("{against}{text}"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_read_well() {
        assert_eq!(num(0.0), "0");
        assert_eq!(num(1.5e-7), "1.5e-7");
        assert_eq!(num(1.23456), "1.23");
        assert_eq!(num(12.5), "12.5");
        assert_eq!(num(1234.6), "1235");
        assert_eq!(num(2.0e6), "2e6");
        assert_eq!(num(f64::INFINITY), "inf");
        assert_eq!(num(f64::NEG_INFINITY), "-inf");
        assert_eq!(num(f64::NAN), "NaN");
    }

    #[test]
    fn values_show_f32_results_in_their_shortest_form() {
        assert_eq!(value(f64::from(0.1f32)), "0.1");
        assert_eq!(value(f64::from(1e-30f32)), "1e-30");
        assert_eq!(value(0.1), "0.1");
        assert_eq!(value(1.0 / 3.0), "0.333333333");
        assert_eq!(values(&[1.0, f64::NAN]), "(1, NaN)");
    }

    #[test]
    fn counts_shares_and_durations() {
        assert_eq!(count(1234567), "1,234,567");
        assert_eq!(count(123), "123");
        assert_eq!(percent(0.125), "12.5 %");
        assert_eq!(percent(1.0), "100 %");
        assert_eq!(percent(0.0), "0 %");
        assert_eq!(percent(4.2e-5), "0.0042 %");
        assert_eq!(duration(0.0412), "41 ms");
        assert_eq!(duration(2.345), "2.35 s");
    }

    #[test]
    fn headroom_in_words() {
        let s = |h: f64| Stats {
            headroom: h,
            ..Stats::default()
        };
        assert_eq!(headroom(&s(f64::INFINITY)), "∞");
        assert_eq!(
            headroom_words(&s(8.0)),
            "the tolerance is 8× the worst error"
        );
        assert_eq!(
            headroom_words(&s(0.01)),
            "the worst point is 100× over the tolerance"
        );
        let nan = Stats {
            nonfinite: 2,
            ..s(0.0)
        };
        assert_eq!(
            headroom_words(&nan),
            "results are NaN or infinite where finite values are expected"
        );
    }

    #[test]
    fn a_finite_error_against_an_exact_tolerance_is_not_unbounded() {
        let s = Stats {
            headroom: 0.0,
            max_ulp: 1.0,
            failed: 1,
            ..Stats::default()
        };
        assert_eq!(headroom(&s), "none (exact tolerance)");
        assert_eq!(
            headroom_words(&s),
            "the tolerance is exact and the worst point is 1 ULP off"
        );
    }
}
