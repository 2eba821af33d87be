//! Property checks: what a `property` table asks of the check's function,
//! and how the table is read.

use std::path::PathBuf;

use toml::Spanned;

use super::domain::num;
use super::locate::{key_in, line_col, Ctx};
use crate::diagnostic::Diagnostic;

/// A property check on the check's own function.
#[derive(Clone, Debug)]
pub struct PropertyCheck {
    pub property: Property,
    /// Line of the `property` key.
    pub line: u32,
}

/// What a [`PropertyCheck`] asks of the function.
#[derive(Clone, Debug, PartialEq)]
pub enum Property {
    /// Every result component lies in [min, max] (either may be open); NaN
    /// lies in no range.
    Range { min: Option<f64>, max: Option<f64> },
    /// Every result component is finite.
    Finite,
    /// Swapping the arguments `a` and `b` leaves the result unchanged.
    Reciprocity { a: String, b: String },
    /// Rotating the `rotate` arguments (directions) by `angle` degrees about
    /// the argument `about` (the normal; +z when `None`) leaves the result
    /// unchanged: an isotropic model.
    Isotropy {
        rotate: Vec<String>,
        about: Option<String>,
        angle: f64,
    },
    /// The check's function encodes; `decode` (of `shader`, or the check's
    /// shader) applied to its result gives back its arguments.
    RoundTrip {
        decode: String,
        shader: Option<PathBuf>,
    },
    /// The integral of the result times cos θ over the hemisphere (about +z)
    /// of the direction `over`, a name the argument expressions may use and
    /// the sweep may not: at most 1 per sweep point (`equal = false`: the
    /// directional albedo, a white furnace) or exactly 1 (`equal = true`: a
    /// normalised NDF, ∫ D (n·h) dω_h = 1). Computed by quadrature through
    /// the evaluator (see `gate::oracle::hemisphere_nodes`).
    ///
    /// With `masking`: the Smith masking identity for a masking function G1
    /// (the check's function) and an NDF D (a registry model):
    /// ∫ G1(v, h) max(0, v·h) D(h) dω_h = cos θ_v at every view direction v
    /// (`equal` is then true and the expected value is `v.z`, not 1).
    Hemisphere {
        over: String,
        equal: bool,
        masking: Option<Masking>,
    },
}

/// The view and the distribution of a masking-identity property.
#[derive(Clone, Debug, PartialEq)]
pub struct Masking {
    /// The sweep parameter (a direction) that is the view v.
    pub view: String,
    /// The registry model of D: one output, a parameter `n_dot_h` (the
    /// quadrature direction's z), the others from `reference_args` or the
    /// sweep parameters of the same names.
    pub ndf: String,
}

impl Property {
    /// Short label, e.g. `result in [0, 1]`, `reciprocity v <-> l`.
    pub fn label(&self) -> String {
        use crate::sweep::fmt_num;
        match self {
            Property::Range {
                min: Some(a),
                max: Some(b),
            } => format!("result in [{}, {}]", fmt_num(*a), fmt_num(*b)),
            Property::Range { min: Some(a), .. } => format!("result >= {}", fmt_num(*a)),
            Property::Range { max: Some(b), .. } => format!("result <= {}", fmt_num(*b)),
            Property::Range { .. } => "result in any range".to_string(),
            Property::Finite => "result finite".to_string(),
            Property::Reciprocity { a, b } => format!("reciprocity {a} <-> {b}"),
            Property::Isotropy {
                rotate,
                about,
                angle,
            } => format!(
                "isotropy: {} rotated {}° about {}",
                rotate.join(", "),
                fmt_num(*angle),
                about.as_deref().unwrap_or("+z")
            ),
            Property::RoundTrip { decode, .. } => format!("round trip through {decode}"),
            Property::Hemisphere {
                over,
                masking: Some(m),
                ..
            } => format!(
                "masking: integral of result max(0, {v}.{over}) {d} over {over} = {v}.z",
                v = m.view,
                d = m.ndf
            ),
            Property::Hemisphere {
                over, equal: false, ..
            } => {
                format!("albedo: integral of result cos over {over} <= 1")
            }
            Property::Hemisphere {
                over, equal: true, ..
            } => {
                format!("normalisation: integral of result cos over {over} = 1")
            }
        }
    }
}

/// The `property` table of a check: `kind` and the keys of that kind.
pub(super) fn property_of(cx: &Ctx, p: &Spanned<toml::Table>) -> Result<PropertyCheck, Diagnostic> {
    let span = p.span();
    let line = line_col(cx.text, span.start).0;
    let t = p.get_ref();
    let at = |key: &str| key_in(cx.text, span.clone(), key);
    let string = |key: &str| -> Result<Option<String>, Diagnostic> {
        match t.get(key) {
            None => Ok(None),
            Some(toml::Value::String(s)) if !s.is_empty() => Ok(Some(s.clone())),
            Some(v) => Err(cx.err(
                at(key),
                format!(
                    "key `property.{key}`: expected a non-empty string, found {}",
                    v.type_str()
                ),
            )),
        }
    };
    let kind = string("kind")?.ok_or_else(|| {
        cx.err(
            span.clone(),
            "key `property.kind` is missing (expected \"range\", \"finite\", \"reciprocity\", \"isotropy\", \"round_trip\", \"albedo\", \"normalisation\" or \"masking\")",
        )
    })?;
    let allowed: &[&str] = match kind.as_str() {
        "range" => &["kind", "min", "max"],
        "finite" => &["kind"],
        "reciprocity" => &["kind", "swap"],
        "isotropy" => &["kind", "rotate", "about", "angle"],
        "round_trip" => &["kind", "decode", "shader"],
        "albedo" | "normalisation" => &["kind", "over"],
        "masking" => &["kind", "over", "view", "ndf"],
        other => {
            return Err(cx.err(
                at("kind"),
                format!(
                    "key `property.kind`: unknown property \"{other}\" (expected \"range\", \"finite\", \"reciprocity\", \"isotropy\", \"round_trip\", \"albedo\", \"normalisation\" or \"masking\")"
                ),
            ))
        }
    };
    if let Some(k) = t.keys().find(|k| !allowed.contains(&k.as_str())) {
        return Err(cx.err(
            at(k),
            format!(
                "key `property.{k}`: a `{kind}` property has no key `{k}` (has: {})",
                allowed.join(", ")
            ),
        ));
    }
    let property = match kind.as_str() {
        "range" => {
            let bound = |key: &str| -> Result<Option<f64>, Diagnostic> {
                t.get(key)
                    .map(|v| match num(v) {
                        Ok(x) if !x.is_nan() => Ok(x),
                        Ok(_) => Err(cx.err(at(key), format!("key `property.{key}`: NaN is no bound"))),
                        Err(m) => Err(cx.err(at(key), format!("key `property.{key}`: {m}"))),
                    })
                    .transpose()
            };
            let (min, max) = (bound("min")?, bound("max")?);
            if min.is_none() && max.is_none() {
                return Err(cx.err(
                    span.clone(),
                    "a `range` property needs `min`, `max` or both",
                ));
            }
            if let (Some(a), Some(b)) = (min, max) {
                if a > b {
                    return Err(cx.err(
                        span.clone(),
                        format!("a `range` property needs min <= max, found [{a}, {b}]"),
                    ));
                }
            }
            Property::Range { min, max }
        }
        "finite" => Property::Finite,
        "reciprocity" => {
            let names: Vec<String> = match t.get("swap") {
                Some(toml::Value::Array(a)) => a
                    .iter()
                    .filter_map(|v| v.as_str().map(str::to_string))
                    .collect(),
                _ => Vec::new(),
            };
            if names.len() != 2
                || t.get("swap").and_then(|v| v.as_array()).map(Vec::len) != Some(2)
                || names[0] == names[1]
            {
                return Err(cx.err(
                    at("swap"),
                    "key `property.swap`: expected two different argument names, e.g. swap = [\"v\", \"l\"]",
                ));
            }
            Property::Reciprocity {
                a: names[0].clone(),
                b: names[1].clone(),
            }
        }
        "isotropy" => {
            let rotate: Vec<String> = match t.get("rotate") {
                Some(toml::Value::Array(a)) if !a.is_empty() && a.iter().all(|v| v.is_str()) => {
                    a.iter().filter_map(|v| v.as_str().map(str::to_string)).collect()
                }
                _ => {
                    return Err(cx.err(
                        at("rotate"),
                        "key `property.rotate`: expected the direction arguments to rotate, e.g. rotate = [\"v\", \"l\"]",
                    ))
                }
            };
            let angle = match t.get("angle") {
                None => 30.0,
                Some(v) => match num(v) {
                    Ok(x) if x.is_finite() => x,
                    Ok(_) => {
                        return Err(cx.err(at("angle"), "key `property.angle`: expected a finite number of degrees"))
                    }
                    Err(m) => return Err(cx.err(at("angle"), format!("key `property.angle`: {m}"))),
                },
            };
            Property::Isotropy {
                rotate,
                about: string("about")?,
                angle,
            }
        }
        "albedo" | "normalisation" | "masking" => {
            let equal = kind != "albedo";
            let over = string("over")?.unwrap_or_else(|| if equal { "h" } else { "l" }.to_string());
            if !over.chars().all(|c| c.is_ascii_alphanumeric() || c == '_')
                || over.starts_with(|c: char| c.is_ascii_digit())
            {
                return Err(cx.err(
                    at("over"),
                    format!("key `property.over`: `{over}` is not a name"),
                ));
            }
            let masking = if kind == "masking" {
                let ndf = string("ndf")?.ok_or_else(|| {
                    cx.err(
                        span.clone(),
                        "a `masking` property needs `ndf`, the registry model of the distribution (e.g. \"ggx_ndf\")",
                    )
                })?;
                let model = crate::reference::find(&ndf).ok_or_else(|| {
                    cx.err(
                        at("ndf"),
                        format!("key `property.ndf`: no reference model named `{ndf}` (see `shadegate models`)"),
                    )
                })?;
                let has_n_dot_h = model
                    .params
                    .iter()
                    .any(|p| p.name == "n_dot_h" && p.kind.width() == 1);
                if model.outputs != 1 || !has_n_dot_h {
                    return Err(cx.err(
                        at("ndf"),
                        format!(
                            "key `property.ndf`: `{ndf}` is not a distribution of n·h (it needs one output and a scalar parameter `n_dot_h`)"
                        ),
                    ));
                }
                let view = string("view")?.unwrap_or_else(|| "v".to_string());
                Some(Masking { view, ndf })
            } else {
                None
            };
            Property::Hemisphere {
                over,
                equal,
                masking,
            }
        }
        _ => Property::RoundTrip {
            decode: string("decode")?.ok_or_else(|| {
                cx.err(
                    span.clone(),
                    "a `round_trip` property needs `decode`, the function that undoes the check's function",
                )
            })?,
            shader: string("shader")?.map(PathBuf::from),
        },
    };
    Ok(PropertyCheck { property, line })
}
