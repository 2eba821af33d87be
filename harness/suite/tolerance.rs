//! `[check.tolerance]` and `[check.golden_tolerance]`: bounds per component
//! and the written reason.

use toml::Spanned;

use super::locate::Ctx;
use super::raw::{OneOrMany, RawTolerance};
use crate::compare::{NanPolicy, Tolerance};
use crate::diagnostic::Diagnostic;

pub(super) fn tolerance_of(
    cx: &Ctx,
    t: Spanned<RawTolerance>,
    key: &str,
) -> Result<Tolerance, Diagnostic> {
    let span = t.span();
    let t = t.into_inner();
    let reason = match t.reason {
        Some(r) if !r.get_ref().trim().is_empty() => r.into_inner(),
        Some(r) => {
            return Err(cx.err(
                r.span(),
                format!(
                    "key `{key}.reason`: the reason is empty; say why this much error is accepted"
                ),
            ))
        }
        None => {
            return Err(cx.err(
                span,
                format!("key `{key}.reason` is missing: every tolerance needs a written reason"),
            ))
        }
    };
    let nan = match t.nan.as_ref().map(|n| (n.get_ref().as_str(), n.span())) {
        None | Some(("match", _)) => NanPolicy::Match,
        Some(("skip", _)) => NanPolicy::Skip,
        Some((o, s)) => {
            return Err(cx.err(
                s,
                format!("key `{key}.nan`: expected \"match\" or \"skip\", found \"{o}\""),
            ))
        }
    };
    let tol = Tolerance {
        abs: t.abs.map(OneOrMany::vec),
        rel: t.rel.map(OneOrMany::vec),
        ulp: t.ulp.map(OneOrMany::vec),
        nan,
        reason,
    };
    if tol.abs.is_none() && tol.rel.is_none() && tol.ulp.is_none() {
        return Err(cx.err(
            span,
            format!("key `{key}`: give at least one of `abs`, `rel`, `ulp`"),
        ));
    }
    for v in [&tol.abs, &tol.rel, &tol.ulp].into_iter().flatten() {
        if v.is_empty() || v.iter().any(|x| x.is_nan() || *x < 0.0) {
            return Err(cx.err(
                span,
                format!("key `{key}`: bounds must be non-negative numbers"),
            ));
        }
    }
    Ok(tol)
}
