//! Renderings of an [`Analysis`]: the full text report ([`text`]) and the
//! few lines a run's report carries ([`summary`]).

use std::fmt::Write as _;

use super::observe::eps;
use super::{Analysis, Budget, Line};

/// ` ± 1.2 %` (two standard errors) for an estimated share, nothing for an exact one.
fn plus_minus(err: f64) -> String {
    if err > 0.0 {
        format!(" ± {:.1} %", 200.0 * err)
    } else {
        String::new()
    }
}

/// How the shares add up, and what they cost.
fn adds_up(a: &Analysis) -> String {
    let how = if a.share_exhaustive {
        format!("exact Shapley values over all {} orders", a.share_orders)
    } else {
        format!(
            "Shapley values estimated over {} random orders, each share within ±{:.1} % (two standard errors)",
            a.share_orders,
            100.0 * a.share_margin
        )
    };
    format!(
        "{how}; they add up to 100 % of the error{}",
        if a.unattributed.abs() > 1e-12 {
            format!(" less {:.2} % rounded on no line", 100.0 * a.unattributed)
        } else {
            String::new()
        }
    )
}

/// The heading of the share list: what a share is, on which points, at
/// what cost.
fn shares_heading(a: &Analysis) -> String {
    if a.share_runs == 0 {
        return "shares not measured".into();
    }
    format!(
        "share of the mean relative error ({:.3e}, working arithmetic emulated in f64, on {} of the {} points{}): each line's drop of it when made exact, averaged over orders of making lines exact ({}); cost {} re-runs of those points in the f64 model",
        a.emulated_mean_rel,
        a.share_points,
        a.points,
        if a.share_points < a.points {
            ", drawn at random"
        } else {
            ""
        },
        adds_up(a),
        a.share_runs
    )
}

/// The f16 budget in full.
fn budget_text(b: &Budget, files: &[(String, u32)]) -> String {
    let at = |l: u32| super::place(files, l);
    let column = |l: u32| super::place_column(files, l);
    let mut s = String::new();
    let _ = writeln!(
        s,
        "f16 budget against {} (tolerance {}): {} of {} points miss it{}",
        b.against,
        b.tolerance,
        b.failing,
        b.points,
        if b.failing > 0 {
            format!(" (worst {:.3e}× the tolerance)", b.max_use)
        } else {
            format!(" (at most {:.3}× the tolerance)", b.max_use)
        }
    );
    let _ = writeln!(
        s,
        "  mean use of the tolerance on the share points {:.3}× (each point's capped at {}×), {:.3}× of it left with every line exact (the reference's own difference)",
        b.mean_use,
        super::USE_CAP,
        b.reference_part
    );
    let mut order: Vec<_> = b.lines.iter().collect();
    order.sort_by(|x, y| y.mean.total_cmp(&x.mean).then(y.max.total_cmp(&x.max)));
    for l in order {
        let _ = writeln!(
            s,
            "  {} uses {:>8.3}× of the tolerance on average, at most {:.3}× (at {})",
            column(l.line),
            l.mean,
            l.max,
            l.max_inputs
        );
    }
    for m in &b.misses {
        let _ = writeln!(
            s,
            "  misses at {}: {:.3e}× the tolerance (got {:e}, expected {:e}, output {}){}",
            m.inputs,
            m.used,
            m.got,
            m.want,
            m.component,
            match m.line {
                Some(l) => format!("; {} accounts for {:.3}× of it", at(l), m.line_part),
                None => String::new(),
            }
        );
    }
    s
}

/// The budget in a run's report: the count, the worst misses with their
/// line, the `top` lines by use.
fn budget_summary(b: &Budget, top: usize, files: &[(String, u32)]) -> Vec<String> {
    let at = |l: u32| super::place(files, l);
    let column = |l: u32| super::place_column(files, l);
    let mut out = vec![format!(
        "  f16 budget against {} (tolerance {}): {} of {} points miss it",
        b.against, b.tolerance, b.failing, b.points
    )];
    let mut order: Vec<_> = b.lines.iter().filter(|l| l.max > 0.0).collect();
    order.sort_by(|x, y| y.mean.total_cmp(&x.mean).then(y.max.total_cmp(&x.max)));
    for l in order.into_iter().take(top) {
        out.push(format!(
            "    {} uses {:.3}× of the tolerance on average, at most {:.3}×",
            column(l.line),
            l.mean,
            l.max
        ));
    }
    for m in b.misses.iter().take(top) {
        out.push(format!(
            "    misses at {}: {:.3e}× the tolerance{}",
            m.inputs,
            m.used,
            m.line
                .map_or(String::new(), |l| format!(", mostly {}", at(l)))
        ));
    }
    out
}

/// Plain-text rendering of an analysis.
pub fn text(a: &Analysis) -> String {
    let at = |l: u32| super::place(&a.files, l);
    let column = |l: u32| super::place_column(&a.files, l);
    let mut s = String::new();
    let fe = &a.final_error;
    let _ = writeln!(
        s,
        "precision of `{}` over {} points: final error max {:.1} ULP (relative {:.3e}) at {}, mean {:.2} ULP{}",
        a.function,
        a.points,
        fe.max_ulp,
        fe.max_rel,
        fe.worst_inputs,
        fe.mean_ulp,
        if fe.nonfinite > 0 {
            format!("; {} points not finite where f64 is", fe.nonfinite)
        } else {
            String::new()
        }
    );
    for e in &a.internal_errors {
        let _ = writeln!(s, "  {e}");
    }
    let _ = writeln!(s, "{}", shares_heading(a));
    let mut order: Vec<&Line> = a.lines.iter().collect();
    order.sort_by(|x, y| y.share.total_cmp(&x.share));
    for l in order {
        let local = l.ops.iter().map(|o| o.max_local_ulp).fold(0.0, f64::max);
        let carried = l.ops.iter().map(|o| o.max_carried_rel).fold(0.0, f64::max);
        let _ = writeln!(
            s,
            "  {}  share {:>6.1} %{}  {}\n             alone {:.1} %, {} operations, local error max {:.2} ULP, carried relative error max {:.3e}",
            column(l.line),
            100.0 * l.share,
            plus_minus(l.share_error),
            l.text,
            100.0 * l.alone,
            l.ops.len(),
            local,
            carried
        );
        for o in &l.ops {
            let mut notes = Vec::new();
            if o.max_cancel_bits >= a.cancel_bits {
                let at = o
                    .cancel_point
                    .as_ref()
                    .map(|w| format!(" at {} (operands {:?})", w.inputs, w.operands))
                    .unwrap_or_default();
                notes.push(format!(
                    "cancels up to {:.1} bits{at}; {} evaluations lose {} bits or more{}",
                    o.max_cancel_bits,
                    o.cancellations,
                    a.cancel_bits,
                    if o.max_carried_rel == 0.0 {
                        " (benign: the operands are exact, so is the difference)"
                    } else {
                        ""
                    }
                ));
            }
            if let Some(ov) = &o.overflow {
                let hidden = match (&ov.hidden_by, ov.hidden) {
                    (_, 0) => String::new(),
                    (Some((l, op)), h) => format!(", hidden by {op} on {} at {h} points", at(*l)),
                    (None, h) => format!(", hidden at {h} points"),
                };
                notes.push(format!(
                    "overflows at {} points (first at {}, f64 value {:.6e}){hidden}",
                    ov.count, ov.first.inputs, ov.first.value
                ));
            }
            if let Some(u) = &o.underflow {
                notes.push(format!(
                    "underflows at {} points ({} subnormal, {} flushed to zero; first at {}, f64 value {:.3e})",
                    u.subnormal + u.flushed,
                    u.subnormal,
                    u.flushed,
                    u.first.inputs,
                    u.first.value
                ));
            }
            if let Some(am) = o
                .amplifier
                .as_ref()
                .filter(|am| am.worst_rel > 16.0 * eps(o.half))
            {
                notes.push(if am.kind.starts_with("pow") {
                    format!(
                        "amplifier: {} multiplies its base's relative error by {}; the result's relative error reaches {:.3e} at {}",
                        am.kind, am.factor, am.worst_rel, am.point.inputs
                    )
                } else {
                    format!(
                        "amplifier: {}, down to {:.3e}; the quotient's relative error reaches {:.3e} at {}",
                        am.kind, am.factor, am.worst_rel, am.point.inputs
                    )
                });
            }
            if o.divergences > 0 {
                notes.push(format!(
                    "f64 comparison differs at {} points (first point {})",
                    o.divergences,
                    o.divergence_point.unwrap_or(0)
                ));
            }
            if notes.is_empty() {
                continue;
            }
            let _ = writeln!(
                s,
                "    {} {}{} (local error max {:.2} ULP, carried relative error max {:.3e})\n      {}",
                super::place_op(&a.files, o.line, o.column),
                o.op,
                if o.half { " f16" } else { "" },
                o.max_local_ulp,
                o.max_carried_rel,
                notes.join("\n      ")
            );
        }
    }
    if let Some(b) = &a.budget {
        s.push_str(&budget_text(b, &a.files));
    }
    for h in &a.hints {
        let _ = writeln!(
            s,
            "hint ({}): {}\n  because {}",
            at(h.line),
            h.cure,
            h.evidence
        );
        if let Some((f, t)) = h.measured {
            let _ = writeln!(
                s,
                "  measured on this sweep: mean relative error {f:.3e} as written, {t:.3e} in the rewritten twin"
            );
        }
    }
    s
}

/// A few report lines: the final error, the `top` lines by share, and every
/// operation whose cancellation carries error, hidden overflow or underflow,
/// and the hints.
pub fn summary(a: &Analysis, top: usize) -> Vec<String> {
    let place = |l: u32| super::place(&a.files, l);
    let column = |l: u32| super::place_column(&a.files, l);
    let fe = &a.final_error;
    let mut out = vec![format!(
        "precision: final error max {:.1} ULP, mean {:.2} ULP (mean relative {:.3e}){}",
        fe.max_ulp,
        fe.mean_ulp,
        fe.mean_rel,
        if fe.nonfinite > 0 {
            format!("; {} points not finite where f64 is", fe.nonfinite)
        } else {
            String::new()
        }
    )];
    out.extend(a.internal_errors.iter().cloned());
    let mut order: Vec<&Line> = a.lines.iter().filter(|l| l.share.abs() >= 0.005).collect();
    order.sort_by(|x, y| y.share.total_cmp(&x.share));
    if !order.is_empty() {
        out.push(format!("  lines by share of the error ({}):", adds_up(a)));
    }
    for l in order.into_iter().take(top) {
        out.push(format!(
            "    {} {:>6.1} %{}  {}",
            column(l.line),
            100.0 * l.share,
            plus_minus(l.share_error),
            l.text
        ));
    }
    if let Some(b) = &a.budget {
        out.extend(budget_summary(b, top, &a.files));
    }
    for o in a.lines.iter().flat_map(|l| &l.ops) {
        if o.max_cancel_bits >= a.cancel_bits && o.max_carried_rel > 16.0 * eps(o.half) {
            let at = o
                .cancel_point
                .as_ref()
                .map_or(String::new(), |w| format!(" at {}", w.inputs));
            out.push(format!(
                "  {}: {} cancels up to {:.1} bits{at}",
                place(o.line),
                o.op,
                o.max_cancel_bits
            ));
        }
        if let Some(ov) = &o.overflow {
            out.push(format!(
                "  {}: {} overflows at {} points{} (first at {})",
                place(o.line),
                o.op,
                ov.count,
                match &ov.hidden_by {
                    Some((l, op)) if ov.hidden > 0 =>
                        format!(", hidden by {op} on {} at {}", place(*l), ov.hidden),
                    _ => String::new(),
                },
                ov.first.inputs
            ));
        }
        if let Some(u) = &o.underflow {
            out.push(format!(
                "  {}: {} underflows at {} points ({} flushed to zero)",
                place(o.line),
                o.op,
                u.subnormal + u.flushed,
                u.flushed
            ));
        }
    }
    for h in &a.hints {
        out.push(format!("  hint ({}): {}", place(h.line), h.cure));
    }
    out
}
