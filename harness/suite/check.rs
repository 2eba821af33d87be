//! One `[[check]]` entry: the raw TOML converted into a validated [`Check`]
//! (number model, reference, golden path, sweep, argument expressions,
//! twin, property, tolerances).

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use toml::Spanned;

use super::domain::{domain, over_points, too_many};
use super::locate::{key_in, line_col, Ctx};
use super::property::property_of;
use super::raw::RawCheck;
use super::tolerance::tolerance_of;
use super::{Arithmetic, Check, Options, Property, PropertyCheck, Twin};
use crate::compare::Tolerance;
use crate::diagnostic::Diagnostic;
use crate::limits::Limits;
use crate::sweep::{Expr, Random, Sweep};

/// Convert and validate one raw `[[check]]` entry (`span`: its byte span).
pub(super) fn convert(
    cx: &Ctx,
    rc: RawCheck,
    span: std::ops::Range<usize>,
    limits: &Limits,
    options: Options,
) -> Result<Check, Diagnostic> {
    let line = cx.line(rc.name.span().start);
    let name = rc.name.get_ref().clone();
    if name.is_empty()
        || !name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
    {
        return Err(cx.err(
            rc.name.span(),
            "key `name`: expected letters, digits, `_` or `-` (it names the golden file)",
        ));
    }
    let arithmetic = arithmetic_of(cx, &rc)?;
    // `reference` names one model, or is an expression over models and
    // sweep parameters (completed below, once the sweep is known).
    let (reference, reference_text) = match &rc.reference {
        None => (None, None),
        Some(r) => match crate::reference::find(r.get_ref()) {
            Some(m) => (Some(m), None),
            None => {
                let e = Expr::parse_reference(r.get_ref(), limits.expression_depth).map_err(|e| {
                    let s = r.span();
                    cx.err(
                        s.start + 1 + e.offset..s.end,
                        format!(
                            "key `reference`: {} (a model name of `shadegate models` or an expression)",
                            e.message
                        ),
                    )
                })?;
                (None, Some(e))
            }
        },
    };
    let format = match &rc.golden_format {
        None => None,
        Some(f) => match f.get_ref().as_str() {
            "csv" => Some("csv"),
            "compact" => Some(crate::golden::compact::EXTENSION),
            other => {
                return Err(cx.err(
                    f.span(),
                    format!(
                    "key `golden_format`: unknown format `{other}` (expected `csv` or `compact`)"
                ),
                ))
            }
        },
    };
    if let (Some(f), None | Some(toml::Value::Boolean(false))) =
        (&rc.golden_format, rc.golden.as_ref().map(|g| g.get_ref()))
    {
        return Err(cx.err(
            f.span(),
            "key `golden_format`: the check records no golden (add `golden = true`)",
        ));
    }
    let golden = match &rc.golden {
        None => None,
        Some(g) => match g.get_ref() {
            toml::Value::Boolean(true) => Some(PathBuf::from(format!(
                "goldens/{name}.{}",
                format.unwrap_or("csv")
            ))),
            toml::Value::Boolean(false) => None,
            toml::Value::String(p) => {
                golden_path_ok(p, options)
                    .map_err(|m| cx.err(g.span(), format!("key `golden`: {m}")))?;
                if let (Some(f), Some(fs)) = (format, &rc.golden_format) {
                    if Path::new(p).extension().and_then(|e| e.to_str()) != Some(f) {
                        return Err(cx.err(
                            fs.span(),
                            format!("key `golden_format`: `{}` disagrees with the path `{p}`; the extension chooses the format (`.csv` or `.golden`), so leave `golden_format` out", fs.get_ref()),
                        ));
                    }
                }
                Some(PathBuf::from(p))
            }
            _ => {
                return Err(cx.err(
                    g.span(),
                    "key `golden`: expected true, false or a path string",
                ))
            }
        },
    };
    let golden_at = golden.as_ref().and(rc.golden.as_ref()).map(|g| g.span());
    if rc.reference.is_none() && golden.is_none() && rc.twin.is_none() && rc.property.is_none() {
        return Err(cx.err(
            span.start..span.start,
            format!(
                "check `{name}`: give a `reference` model, a `golden` dataset, a `twin` or a `property`"
            ),
        ));
    }
    // No `[check.sweep]`: a function without arguments, evaluated at one point.
    let sweep_span = rc
        .sweep
        .as_ref()
        .map_or(span.start..span.start, |s| s.span());
    let empty = toml::Table::new();
    let mut params = Vec::new();
    for (key, value) in rc.sweep.as_ref().map_or(&empty, |s| s.get_ref()) {
        // The table keeps the file's order (toml's `preserve_order`), which the grid and
        // golden headers depend on; its values carry no spans, so find the key's line.
        let at = key_in(cx.text, sweep_span.clone(), key);
        let d = domain(value, limits).map_err(|m| cx.err(at, format!("key `sweep.{key}`: {m}")))?;
        params.push((key.clone(), d));
    }
    let random = match rc.random {
        None => None,
        Some(r) => {
            let r = r.into_inner();
            if *r.count.get_ref() > limits.points_per_check {
                return Err(cx.err(
                    r.count.span(),
                    format!(
                        "key `random.count`: {}",
                        too_many(*r.count.get_ref(), limits)
                    ),
                ));
            }
            Some(Random {
                count: *r.count.get_ref() as usize,
                seed: r.seed,
            })
        }
    };
    if params.is_empty() && rc.sweep.is_some() {
        return Err(cx.err(
            sweep_span,
            format!("check `{name}`: the sweep has no parameters (leave out `[check.sweep]` for a function without arguments)"),
        ));
    }
    if params.is_empty() && random.is_some() {
        return Err(cx.err(
            sweep_span,
            format!("check `{name}`: random points need sweep parameters; a check without `[check.sweep]` has one point"),
        ));
    }
    if random.is_none() && params.iter().any(|(_, d)| d.count() == 0) {
        return Err(cx.err(
            sweep_span,
            format!("check `{name}`: a parameter has no values and there are no random points"),
        ));
    }
    let sweep = Sweep { params, random };
    // Every domain's count is within the limit (checked above), but their
    // product may not be, or may not even fit in 64 bits.
    match sweep.checked_len() {
        Some(0) => {
            return Err(cx.err(
                sweep_span,
                format!("check `{name}`: the sweep has no points (a check of nothing would pass)"),
            ))
        }
        Some(n) if n <= limits.points_per_check => {}
        n => {
            let count = n.map_or_else(|| "more than 2^64".to_string(), |n| n.to_string());
            return Err(cx.err(
                sweep_span,
                format!(
                    "check `{name}`: the sweep has {count} points, {}",
                    over_points(limits)
                ),
            ));
        }
    }
    let names: Vec<String> = sweep.params.iter().map(|(n, _)| n.clone()).collect();
    let property = match &rc.property {
        None => None,
        Some(p) => Some(property_of(cx, p)?),
    };
    // A hemisphere property's direction is a name of the function's argument
    // expressions (the quadrature's variable), never a sweep parameter.
    let over = match &property {
        Some(PropertyCheck {
            property: Property::Hemisphere { over, masking, .. },
            ..
        }) => {
            if let Some(m) = masking {
                let is_direction = sweep.params.iter().any(|(n, d)| {
                    *n == m.view && matches!(d, crate::sweep::Domain::Direction { .. })
                });
                if !is_direction {
                    let at = rc.property.as_ref().map_or(span.clone(), |p| p.span());
                    return Err(cx.err(
                        key_in(cx.text, at, "view"),
                        format!(
                            "key `property.view`: the view `{}` must be a direction parameter of the sweep (`{} = {{ direction = ... }}`)",
                            m.view, m.view
                        ),
                    ));
                }
            }
            if names.contains(over) {
                let at = rc.property.as_ref().map_or(span.clone(), |p| p.span());
                return Err(cx.err(
                    key_in(cx.text, at, "over"),
                    format!(
                        "key `property.over`: `{over}` is a sweep parameter; the integral runs over it, so leave it out of the sweep"
                    ),
                ));
            }
            if rc.golden.is_some() || rc.reference.is_some() || rc.twin.is_some() {
                return Err(cx.err(
                    span.start..span.start,
                    format!("check `{name}`: a hemisphere property (albedo, normalisation, masking) is a check of its own; put the reference, golden or twin in another check"),
                ));
            }
            Some(over.clone())
        }
        _ => None,
    };
    let arg_names: Vec<String> = names.iter().cloned().chain(over).collect();
    let exprs = |table: &BTreeMap<Spanned<String>, Spanned<String>>,
                 key: &str|
     -> Result<BTreeMap<String, Expr>, Diagnostic> {
        let names = if key == "args" { &arg_names } else { &names };
        let mut out = BTreeMap::new();
        for (arg, text) in table {
            let arg = arg.get_ref();
            // A function's arguments may be constructors (`Material(...)`).
            let parsed = if key == "args" || key == "twin.args" {
                Expr::parse_arg(text.get_ref(), limits.expression_depth)
            } else {
                Expr::parse_with(text.get_ref(), limits.expression_depth)
            };
            let e = parsed.map_err(|e| {
                let s = text.span();
                cx.err(
                    s.start + 1 + e.offset..s.end,
                    format!("key `{key}.{arg}`: {}", e.message),
                )
            })?;
            if let Some(v) = e.variables().into_iter().find(|v| !names.contains(v)) {
                return Err(cx.err(
                    text.span(),
                    format!(
                        "key `{key}.{arg}`: `{v}` is not a sweep parameter (have: {})",
                        names.join(", ")
                    ),
                ));
            }
            out.insert(arg.clone(), e);
        }
        Ok(out)
    };
    let args = exprs(&rc.args, "args")?;
    let args_at = rc
        .args
        .keys()
        .map(|k| (k.get_ref().clone(), k.span()))
        .collect();
    let mut reference_args = exprs(&rc.reference_args, "reference_args")?;
    let reference_arg_at = |k: &str| {
        rc.reference_args
            .keys()
            .find(|x| x.get_ref() == k)
            .map_or(span.start..span.start, |x| x.span())
    };
    // The models whose parameters `reference_args` may name.
    let models: Vec<&'static crate::reference::Model> = match (&reference, &reference_text) {
        (Some(m), _) => vec![*m],
        (None, Some(e)) => e.models(),
        (None, None) => Vec::new(),
    };
    // A model parameter without a `reference_args` entry takes the `args`
    // entry of the same name, so a vector expression is written once.
    for m in &models {
        for p in m.params {
            if !reference_args.contains_key(p.name) {
                if let Some(e) = args.get(p.name) {
                    reference_args.insert(p.name.to_string(), e.clone());
                }
            }
        }
    }
    if let Some(m) = reference {
        for p in m.params {
            if !reference_args.contains_key(p.name) && !names.iter().any(|n| n == p.name) {
                return Err(cx.err(
                    span.start..span.start,
                    format!(
                        "check `{name}`: reference `{}` needs `{}`; add it to `reference_args`, `args` or the sweep",
                        m.name, p.name
                    ),
                ));
            }
        }
    }
    let reference_expr = match (&reference_text, &rc.reference) {
        (Some(e), Some(r)) => Some(reference_expr(cx, e, r, &reference_args, &sweep)?),
        _ => None,
    };
    if let Some(k) = reference_args.keys().find(|k| {
        !models
            .iter()
            .any(|m| m.params.iter().any(|p| p.name == k.as_str()))
    }) {
        let known: Vec<_> = models
            .iter()
            .flat_map(|m| m.params.iter().map(|p| p.name))
            .collect();
        let what = match models.len() {
            0 => "the reference calls no model".to_string(),
            _ => format!(
                "{} has no parameter `{k}` (has: {})",
                models
                    .iter()
                    .map(|m| format!("`{}`", m.name))
                    .collect::<Vec<_>>()
                    .join(", "),
                known.join(", ")
            ),
        };
        return Err(cx.err(
            reference_arg_at(k),
            format!("key `reference_args.{k}`: {what}"),
        ));
    }
    let twin = match rc.twin {
        None => None,
        Some(t) => {
            let line = line_col(cx.text, t.span().start).0;
            let t = t.into_inner();
            let f64 = match &t.arithmetic {
                None => false,
                Some(a) => match a.get_ref().as_str() {
                    "exact" => false,
                    "f64" => true,
                    other => {
                        return Err(cx.err(
                            a.span(),
                            format!(
                                "key `twin.arithmetic`: expected \"exact\" or \"f64\", found \"{other}\""
                            ),
                        ))
                    }
                },
            };
            Some(Twin {
                shader: t.shader.map(|s| PathBuf::from(s.into_inner())),
                function: t.function.into_inner(),
                args: exprs(&t.args, "twin.args")?,
                f64,
                line,
            })
        }
    };
    let bounded = matches!(
        property,
        Some(PropertyCheck {
            property: Property::Range { .. }
                | Property::Finite
                | Property::Hemisphere { equal: false, .. },
            ..
        })
    );
    let tolerance = match rc.tolerance {
        Some(t) => tolerance_of(cx, t, "tolerance")?,
        None if rc.reference.is_some() => {
            return Err(cx.err(span.start..span.start, format!("check `{name}`: a check against a reference needs a `[check.tolerance]` with a `reason`")))
        }
        None if twin.is_some() || (property.is_some() && !bounded) => {
            return Err(cx.err(span.start..span.start, format!("check `{name}`: a twin or a reciprocity, isotropy, round-trip or normalisation property needs a `[check.tolerance]` with a `reason`")))
        }
        None if bounded => Tolerance {
            abs: Some(vec![0.0]),
            ..Tolerance::exact("a bound admits no slack: any result outside it breaks the property")
        },
        None => Tolerance::exact("goldens are this evaluator's own output"),
    };
    let golden_tolerance = match rc.golden_tolerance {
        Some(t) => tolerance_of(cx, t, "golden_tolerance")?,
        None => Tolerance::exact("a golden is a bit-exact record of this evaluator's output"),
    };
    let textures = super::textures::parse(cx, rc.textures, rc.samplers, limits)?;
    let shaders: Vec<PathBuf> = match rc.shader.get_ref() {
        super::raw::RawShader::One(p) => vec![PathBuf::from(p)],
        super::raw::RawShader::Many(list) => list.iter().map(PathBuf::from).collect(),
    };
    if shaders.is_empty() || shaders.iter().any(|p| p.as_os_str().is_empty()) {
        return Err(cx.err(
            rc.shader.span(),
            "key `shader`: give a WGSL file, or a list of files concatenated in order",
        ));
    }
    if golden.is_some() {
        for p in &shaders {
            let text = p.to_string_lossy();
            if let Some((at, c)) = crate::golden::control_char(&text) {
                return Err(cx.err(
                    rc.shader.span(),
                    format!(
                        "key `shader`: the path {:?} has the control character U+{:04X} at character {at}; a golden records its shader paths on one header line, so a check with a golden needs paths without control characters",
                        text,
                        c as u32
                    ),
                ));
            }
        }
    }
    Ok(Check {
        name,
        shader: shaders[0].clone(),
        shaders,
        function: rc.function.get_ref().clone(),
        overrides: rc.overrides,
        arithmetic,
        sweep,
        args,
        reference,
        reference_expr,
        reference_args,
        golden,
        tolerance,
        golden_tolerance,
        twin,
        property,
        line,
        args_at,
        golden_at,
        textures,
        shard: None,
    })
}

/// A reference expression completed: every model call given all its
/// arguments (from the call, `reference_args` with `args` merged in, or the
/// sweep parameter of the same name), every variable a sweep parameter, and a
/// trial evaluation that finds scalar/vec3 mismatches here, located at the
/// `reference` key.
fn reference_expr(
    cx: &Ctx,
    e: &Expr,
    r: &Spanned<String>,
    reference_args: &BTreeMap<String, Expr>,
    sweep: &Sweep,
) -> Result<Expr, Diagnostic> {
    let names: Vec<String> = sweep.params.iter().map(|(n, _)| n.clone()).collect();
    let default = |p: &str| -> Option<Expr> {
        reference_args.get(p).cloned().or_else(|| {
            names
                .iter()
                .any(|n| n == p)
                .then(|| Expr::parse(p).expect("a parameter name parses"))
        })
    };
    let filled = e
        .fill_models(&default)
        .map_err(|m| cx.err(r.span(), format!("key `reference`: {m}")))?;
    if let Some(v) = filled.variables().into_iter().find(|v| !names.contains(v)) {
        let msg = if e.models().is_empty() && e.text.trim() == v {
            format!(
                "key `reference`: no reference model named `{v}` (see `shadegate models`) and no sweep parameter `{v}` (have: {})",
                names.join(", ")
            )
        } else {
            format!(
                "key `reference`: `{v}` is neither a reference model nor a sweep parameter (have: {})",
                names.join(", ")
            )
        };
        return Err(cx.err(r.span(), msg));
    }
    let example: Vec<crate::sweep::Value> = sweep
        .params
        .iter()
        .map(|(_, d)| match d.width() {
            1 => crate::sweep::Value::S(0.5),
            _ => crate::sweep::Value::V([0.0, 0.6, 0.8]),
        })
        .collect();
    filled
        .bind(&names, &example)
        .map_err(|m| cx.err(r.span(), format!("key `reference`: {m}")))?;
    Ok(filled)
}

/// The check's number model: the `arithmetic` key (and `seed` for the
/// spec-bounds model).
fn arithmetic_of(cx: &Ctx, rc: &RawCheck) -> Result<Arithmetic, Diagnostic> {
    let arithmetic = match rc
        .arithmetic
        .as_ref()
        .map(|a| (a.get_ref().as_str(), a.span()))
    {
        None | Some(("exact", _)) => Arithmetic::Exact,
        Some(("spec-bounds", _)) => Arithmetic::SpecBounds {
            seed: rc.seed.unwrap_or(1),
        },
        Some((other, s)) => {
            return Err(cx.err(
                s,
                format!(
                    "key `arithmetic`: expected \"exact\" or \"spec-bounds\", found \"{other}\""
                ),
            ))
        }
    };
    Ok(arithmetic)
}

/// A golden path written in the suite must stay inside the suite's folder
/// (relative, no `..`) unless `options` allow otherwise, and must be a
/// `.csv` or `.golden` file, so `record` can never replace the suite, a shader or a file
/// outside the project.
pub(super) fn golden_path_ok(p: &str, options: Options) -> Result<(), String> {
    use std::path::Component;
    let path = Path::new(p);
    if p.is_empty() || path.file_name().is_none() {
        return Err(format!("`{p}` is not a file path"));
    }
    let ext = path.extension().and_then(|e| e.to_str());
    if ext != Some("csv") && ext != Some(crate::golden::compact::EXTENSION) {
        return Err(format!(
            "`{p}` does not end in `.csv` or `.golden`; goldens are CSV files or compact goldens"
        ));
    }
    if !options.golden_outside {
        if path.is_absolute()
            || path
                .components()
                .any(|c| matches!(c, Component::Prefix(_) | Component::RootDir))
        {
            return Err(format!(
                "`{p}` is an absolute path; goldens live inside the suite's folder (pass --golden-outside to allow it)"
            ));
        }
        if path.components().any(|c| matches!(c, Component::ParentDir)) {
            return Err(format!(
                "`{p}` climbs out with `..`; goldens live inside the suite's folder (pass --golden-outside to allow it)"
            ));
        }
    }
    Ok(())
}
