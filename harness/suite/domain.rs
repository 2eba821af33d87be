//! Sweep domains (`linear`, `log`, `list`, `edges`, `direction`) and the
//! `[limits]` table, each checked against the points limit before anything
//! is allocated.

use toml::Spanned;

use super::locate::{key_in, Ctx};
use crate::diagnostic::Diagnostic;
use crate::limits::{Limit, Limits};
use crate::sweep::Domain;

/// The `[limits]` table: each key a [`Limit::key`], each value a positive
/// whole number.
pub(super) fn limits_of(cx: &Ctx, t: &Spanned<toml::Table>) -> Result<Limits, Diagnostic> {
    let mut limits = Limits::default();
    for (key, value) in t.get_ref() {
        let at = key_in(cx.text, t.span(), key);
        let Some(l) = Limit::ALL.iter().copied().find(|l| l.key() == key) else {
            let keys: Vec<_> = Limit::ALL.iter().map(|l| l.key()).collect();
            return Err(cx.err(
                at,
                format!(
                    "key `limits.{key}`: no such limit (limits: {})",
                    keys.join(", ")
                ),
            ));
        };
        let v = match value {
            toml::Value::Integer(i) if *i > 0 => *i as u64,
            other => {
                return Err(cx.err(
                    at,
                    format!("key `limits.{key}`: expected a positive whole number, found {other}"),
                ))
            }
        };
        limits
            .set(l, v)
            .map_err(|m| cx.err(at, format!("key `limits.{key}`: {m}")))?;
    }
    Ok(limits)
}

/// The end of the message of a sweep over the points limit.
pub(super) fn over_points(limits: &Limits) -> String {
    let l = Limit::PointsPerCheck;
    format!(
        "more than the `{l}` limit of {}; {}",
        limits.points_per_check,
        l.how_to_raise()
    )
}

pub(super) fn too_many(n: u64, limits: &Limits) -> String {
    format!("{n} points is {}", over_points(limits))
}

pub(super) fn num(v: &toml::Value) -> Result<f64, String> {
    match v {
        toml::Value::Float(x) => Ok(*x),
        toml::Value::Integer(i) => Ok(*i as f64),
        other => Err(format!("expected a number, found {}", other.type_str())),
    }
}

pub(super) fn nums(v: &toml::Value, n: Option<usize>, what: &str) -> Result<Vec<f64>, String> {
    let toml::Value::Array(a) = v else {
        return Err(format!("`{what}` expects an array"));
    };
    if let Some(n) = n {
        if a.len() != n {
            return Err(format!("`{what}` expects {n} numbers, found {}", a.len()));
        }
    }
    a.iter().map(num).collect()
}

pub(super) fn domain(v: &toml::Value, limits: &Limits) -> Result<Domain, String> {
    let toml::Value::Table(t) = v else {
        return Err("expected a table such as { linear = [0.0, 1.0, 64] }".into());
    };
    if t.len() != 1 {
        return Err(
            "expected exactly one of `linear`, `log`, `list`, `edges`, `every_f16`, `every_f32`, `direction`"
                .into(),
        );
    }
    let (kind, val) = t.iter().next().expect("one entry");
    // Checked before anything is allocated: a count of 1e30 is an error,
    // not a saturated cast.
    let count = |x: f64| -> Result<usize, String> {
        if !(x >= 0.0 && x.fract() == 0.0) {
            Err(format!("the point count must be a whole number, found {x}"))
        } else if x > limits.points_per_check as f64 {
            Err(format!("a count of {x} is {}", over_points(limits)))
        } else {
            Ok(x as usize)
        }
    };
    // Bounds must be finite: NaN or infinite bounds make every point NaN.
    let finite = |a: &[f64], what: &str| -> Result<(), String> {
        match a.iter().find(|x| !x.is_finite()) {
            Some(x) => Err(format!("`{what}` needs finite bounds, found {x}")),
            None => Ok(()),
        }
    };
    Ok(match kind.as_str() {
        "linear" => {
            let a = nums(val, Some(3), "linear = [low, high, count]")?;
            finite(&a[..2], "linear")?;
            Domain::Linear {
                lo: a[0],
                hi: a[1],
                n: count(a[2])?,
            }
        }
        "log" => {
            let a = nums(val, Some(3), "log = [low, high, count]")?;
            finite(&a[..2], "log")?;
            if !(a[0] > 0.0 && a[1] > 0.0) {
                return Err("`log` needs positive bounds".into());
            }
            Domain::Log {
                lo: a[0],
                hi: a[1],
                n: count(a[2])?,
            }
        }
        "list" => {
            let a = nums(val, None, "list")?;
            if a.is_empty() {
                return Err("`list` is empty".into());
            }
            if a.len() as u64 > limits.points_per_check {
                return Err(format!(
                    "a list of {} values is {}",
                    a.len(),
                    over_points(limits)
                ));
            }
            Domain::List(a)
        }
        "edges" => {
            let a = nums(val, Some(2), "edges = [low, high]")?;
            finite(&a, "edges")?;
            if a[0] >= a[1] {
                return Err("`edges` needs low < high".into());
            }
            Domain::Edges { lo: a[0], hi: a[1] }
        }
        "every_f16" | "every_f32" => {
            let format = if kind == "every_f16" {
                crate::sweep::every::Format::F16
            } else {
                crate::sweep::every::Format::F32
            };
            let a = nums(val, Some(2), &format!("{kind} = [low, high]"))?;
            finite(&a, kind)?;
            if a[0] > a[1] {
                return Err(format!("`{kind}` needs low <= high"));
            }
            let n = format.count(a[0], a[1]);
            if n == 0 {
                return Err(format!(
                    "`{kind}`: no {format} value lies in [{}, {}]",
                    a[0], a[1]
                ));
            }
            if n > limits.points_per_check {
                return Err(format!(
                    "`{kind}` over [{}, {}] has {n} values, {}",
                    a[0],
                    a[1],
                    over_points(limits)
                ));
            }
            Domain::Every {
                lo: a[0],
                hi: a[1],
                format,
            }
        }
        "direction" => {
            let toml::Value::Table(d) = val else {
                return Err("`direction` expects { theta = ..., phi = ... }".into());
            };
            if let Some(k) = d.keys().find(|k| *k != "theta" && *k != "phi") {
                return Err(format!(
                    "unknown key `{k}` in `direction` (expected `theta`, `phi`)"
                ));
            }
            let part = |k: &str| -> Result<Box<Domain>, String> {
                let v = d
                    .get(k)
                    .ok_or(format!("`direction` needs `{k}` (degrees)"))?;
                let inner = domain(v, limits).map_err(|m| format!("{k}: {m}"))?;
                if inner.width() != 1 {
                    return Err(format!("{k}: must be a scalar domain"));
                }
                Ok(Box::new(inner))
            };
            Domain::Direction {
                theta: part("theta")?,
                phi: part("phi")?,
            }
        }
        other => {
            return Err(format!(
                "unknown domain `{other}` (expected `linear`, `log`, `list`, `edges`, `direction`)"
            ))
        }
    })
}
