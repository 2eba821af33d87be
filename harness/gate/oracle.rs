//! Oracles that are not reference models: a twin (a second WGSL function
//! whose result is the expected value) and the properties a function must
//! keep (a range, finiteness, reciprocity, isotropy, a round trip). Each gives the
//! columns of one comparison, which the runner judges and explains like any
//! other, so the worst point and where the failures lie come from the same
//! statistics and explainers.
//!
//! Both sides of a twin, and a function and its reference, see the same
//! parameter values: a sweep parameter that feeds an `f16` argument of either
//! side is rounded to `f16` for both (see [`half_params`]), and the check's
//! findings say so.
//!
//! The other function of a twin or a round trip is built once per check
//! ([`Other`], by [`super::stream::Prepared`]); the sides are computed per
//! segment of the check's points.

use std::collections::BTreeMap;
use std::fmt::Display;
use std::path::Path;
use std::sync::Arc;

use super::inputs::{as_f64, bind_arg, evaluate_at, Build, Evaluated};
use super::result::{AlbedoTable, FindingKind};
use crate::eval::{bits_to_f64, f64_to_bits, Program, ScalarKind};
use crate::suite::{Check, Property, PropertyCheck, Suite, Twin};
use crate::sweep::{Expr, Points};
use crate::wgsl::Shader;

/// One comparison's columns, built by an oracle.
pub struct Sides {
    /// The comparison's label (`twin d_ggx_f16`, `property result in [0, 1]`).
    pub against: String,
    pub got: Vec<Vec<f64>>,
    pub want: Vec<Vec<f64>>,
    /// ULPs counted in f16.
    pub half: bool,
    /// An albedo property's table (the report prints it).
    pub albedo: Option<AlbedoTable>,
}

/// `suite:line: check `name`: msg`, for errors of a twin or property key.
fn located(suite: &Suite, line: u32, check: &Check, msg: impl Display) -> String {
    format!(
        "{}:{line}: check `{}`: {msg}",
        suite.path.display(),
        check.name
    )
}

/// Another function of a check (a twin, a decoder), built and compiled once.
pub type Other = (Arc<Build>, Arc<Program>);

/// The [`Build`] of another function of a check (a twin, a decoder): the
/// check's overrides and number model, the function's own shader file.
pub fn build_other(
    suite: &Suite,
    check: &Check,
    shader: Option<&Path>,
    function: &str,
    line: u32,
) -> Result<Other, String> {
    let paths: Vec<_> = match shader {
        Some(p) => vec![suite.resolve(p)],
        None => check.shaders.iter().map(|p| suite.resolve(p)).collect(),
    };
    let shader = Shader::load_files_with(&paths, &suite.limits)
        .map_err(|d| located(suite, line, check, d.rendered))?;
    // The check's tables bind the same variables in the other function.
    let (textures, textures_at) = super::inputs::bindings_of(suite, check, None)?;
    let build = Build {
        shader,
        function: function.to_string(),
        overrides: check.overrides.clone(),
        arithmetic: check.arithmetic,
        limits: suite.limits,
        textures,
        textures_at,
    };
    let program = build
        .program()
        .map_err(|m| located(suite, line, check, format!("`{function}`: {m}")))?;
    Ok((Arc::new(build), Arc::new(program)))
}

/// The check's twin, built (`None` without one).
pub fn twin_of(suite: &Suite, check: &Check) -> Result<Option<Other>, String> {
    check
        .twin
        .as_ref()
        .map(|t| build_other(suite, check, t.shader.as_deref(), &t.function, t.line))
        .transpose()
}

/// The decoding function of the check's round-trip property, built (`None`
/// for other checks).
pub fn decoder_of(suite: &Suite, check: &Check) -> Result<Option<Other>, String> {
    match &check.property {
        Some(PropertyCheck {
            property: Property::RoundTrip { decode, shader },
            line,
            ..
        }) => build_other(suite, check, shader.as_deref(), decode, *line).map(Some),
        _ => Ok(None),
    }
}

/// The sweep parameters (indices into `points`, which need only its names
/// and widths) that feed an `f16` argument of the check's function or its
/// twin (`other`): they are rounded to `f16` for both sides (the twin or the
/// reference), so both see the values the `f16` side sees
/// ([`round_half`]). Also the finding that says which parameters were
/// rounded (`None` when no side takes `f16`).
pub fn half_params(
    check: &Check,
    program: &Program,
    other: Option<&Other>,
    points: &Points,
) -> (Vec<usize>, Option<FindingKind>) {
    // Only a twin or a reference sees the parameters a second time; a golden
    // records the function's own (already rounded) inputs.
    if check.twin.is_none() && !check.has_reference() {
        return (Vec::new(), None);
    }
    let mut sides = vec![(program, &check.args, check.function.as_str())];
    if let (Some(twin), Some((_, other))) = (&check.twin, other) {
        sides.push((other, &twin.args, twin.function.as_str()));
    }
    let mut direct = Vec::new();
    let mut computed = Vec::new();
    for (prog, args, function) in sides {
        for (name, ty) in prog.params() {
            if !ty.leaves().contains(&ScalarKind::F16) {
                continue;
            }
            // An unbindable argument is reported when the side is evaluated.
            let Ok(b) = bind_arg(args, name, points, "argument") else {
                continue;
            };
            match b.var {
                Some(p) => {
                    if !direct.contains(&p) {
                        direct.push(p);
                    }
                }
                None => computed.push(format!("{name} of {function}")),
            }
        }
    }
    direct.sort_unstable();
    let finding =
        (!direct.is_empty() || !computed.is_empty()).then(|| FindingKind::InputsRounded {
            parameters: direct.iter().map(|&p| points.names[p].clone()).collect(),
            computed,
        });
    (direct, finding)
}

/// Round the sweep parameters `params` of `points` to `f16` (see
/// [`half_params`]).
pub fn round_half(points: &mut Points, params: &[usize]) {
    for &p in params {
        for col in &mut points.columns[p] {
            for x in col.iter_mut() {
                *x = bits_to_f64(ScalarKind::F16, f64_to_bits(ScalarKind::F16, *x));
            }
        }
    }
}

/// The twin evaluated at the check's points: the expected value.
pub fn twin_sides(
    suite: &Suite,
    check: &Check,
    twin: &Twin,
    (build, program): &Other,
    ev: &Evaluated,
    got: &[Vec<f64>],
) -> Result<Sides, String> {
    let other = evaluate_at(
        check,
        build.clone(),
        program.clone(),
        &twin.args,
        ev.points.clone(),
    )
    .map_err(|m| located(suite, twin.line, check, format!("twin: {m}")))?;
    if other.outputs.len() != ev.outputs.len() {
        return Err(located(
            suite,
            twin.line,
            check,
            format!(
                "`{}` returns {} value(s) ({}) but its twin `{}` returns {} ({}); a twin must return the same shape",
                check.function,
                ev.outputs.len(),
                kinds(&ev.outputs),
                twin.function,
                other.outputs.len(),
                kinds(&other.outputs)
            ),
        ));
    }
    let half = ev
        .outputs
        .iter()
        .chain(other.outputs.iter())
        .any(|(_, k)| *k == ScalarKind::F16);
    // In the f64 number model the twin's own arguments go through it again.
    let want = if twin.f64 {
        let cols: Vec<&[u32]> = other.input_columns.iter().map(|c| &c[..]).collect();
        let mut w = other.program.eval_f64(&cols);
        // A zero-argument twin gives one value, which stands for every point.
        let n = got.first().map_or(0, Vec::len);
        for c in &mut w {
            if c.len() == 1 && n != 1 {
                *c = vec![c[0]; n];
            }
        }
        w
    } else {
        as_f64(&other.output_columns, &other.outputs)
    };
    Ok(Sides {
        against: format!(
            "twin {}{}",
            twin.function,
            if twin.f64 { " in f64" } else { "" }
        ),
        got: got.to_vec(),
        want,
        half,
        albedo: None,
    })
}

fn kinds(leaves: &[(String, ScalarKind)]) -> String {
    leaves
        .iter()
        .map(|(n, k)| format!("{n}: {k:?}").to_lowercase())
        .collect::<Vec<_>>()
        .join(", ")
}

/// Directions over the hemisphere about +z and their weights, for
/// `∫ f(ω) cos θ dω ≈ Σ w f(ω)` (the weight includes cos θ and the solid
/// angle): 43,520 directions. In μ = cos θ: the 10-point Gauss-Legendre rule
/// on 17 panels, graded geometrically towards μ = 1 (1 - μ = 1e-5 … 0.1,
/// where lobes about the normal peak) and towards the horizon (μ = 0.03,
/// 0.01); in φ: 256 midpoints, the periodic trapezoidal rule. Exact for
/// Lambert (to rounding). Measured (tests/gate/quadrature.rs): GGX and
/// Beckmann normalisation within 1e-5 for α in [0.05, 1]; the GGX lobe's
/// albedo within 1e-5 of the registry's `ggx_albedo` up to 60° from the
/// normal, 2e-3 at 80°; at 89° a lobe of α = 0.1 is narrower than the grid
/// and its integral comes out 9 % low, so a white furnace there can miss a
/// small gain.
pub fn hemisphere_nodes() -> Vec<([f64; 3], f64)> {
    const BREAKS: [f64; 18] = [
        0.0, 1e-5, 1e-4, 1e-3, 1e-2, 0.03, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 0.97, 0.99,
        1.0,
    ];
    const PHI: usize = 256;
    let mut out = Vec::with_capacity(10 * (BREAKS.len() - 1) * PHI);
    for pair in BREAKS.windows(2) {
        for (t, w) in crate::reference::quad::nodes(pair[0], pair[1]) {
            let mu = 1.0 - t;
            let s = (1.0 - mu * mu).max(0.0).sqrt();
            for k in 0..PHI {
                let phi = (k as f64 + 0.5) * std::f64::consts::TAU / PHI as f64;
                let d = [s * phi.cos(), s * phi.sin(), mu];
                out.push((d, w * mu * std::f64::consts::TAU / PHI as f64));
            }
        }
    }
    out
}

/// The reference model an albedo table shows beside the function's.
const ALBEDO_MODEL: &str = "ggx_albedo";

/// The most cells an albedo table has (each evaluates the integrated
/// reference model once).
pub const ALBEDO_CELLS: usize = 400;

/// The albedo table of an albedo property check (see [`AlbedoTable`]) from
/// the integral at each sweep point (`integral[component][point]`). `None`
/// when the sweep has no direction parameter besides `over` or the table
/// would have more than [`ALBEDO_CELLS`] cells.
fn albedo_table(
    check: &Check,
    over: &str,
    p: &Points,
    integral: &[Vec<f64>],
) -> Option<AlbedoTable> {
    let vi = (0..p.names.len()).find(|&i| p.widths[i] == 3 && p.names[i] != over)?;
    let n = p.len;
    // Angles from +z in degrees, rounded to 1e-6° so equal sweep angles group.
    let angle = |i: usize| {
        let z = p.columns[vi][2][i].clamp(-1.0, 1.0);
        (z.acos().to_degrees() * 1e6).round() / 1e6
    };
    let varies = |k: usize| {
        let c = &p.columns[k][0];
        c.iter().any(|&x| x.to_bits() != c[0].to_bits())
    };
    let scalar = |name: &str| (0..p.names.len()).find(|&k| p.widths[k] == 1 && p.names[k] == name);
    let ri = scalar("roughness")
        .or_else(|| scalar("alpha"))
        .or_else(|| (0..p.names.len()).find(|&k| p.widths[k] == 1 && varies(k)));
    let sorted = |mut v: Vec<f64>| {
        v.sort_by(f64::total_cmp);
        v.dedup_by(|a, b| a.to_bits() == b.to_bits());
        v
    };
    let angles = sorted((0..n).map(angle).collect());
    let roughnesses = match ri {
        Some(k) => sorted(p.columns[k][0].clone()),
        None => vec![f64::NAN],
    };
    if angles.len() * roughnesses.len() > ALBEDO_CELLS {
        return None;
    }
    let find = |v: &[f64], x: f64| v.iter().position(|y| y.to_bits() == x.to_bits());
    // The largest integral in each cell, and the point where it is.
    let mut best: Vec<Vec<Option<(f64, usize)>>> =
        vec![vec![None; roughnesses.len()]; angles.len()];
    for i in 0..n {
        let r = find(&angles, angle(i))?;
        let c = match ri {
            Some(k) => find(&roughnesses, p.columns[k][0][i])?,
            None => 0,
        };
        let x = integral
            .iter()
            .map(|col| col[i])
            .fold(f64::NEG_INFINITY, |a, b| {
                if b.is_nan() || a.is_nan() {
                    f64::NAN
                } else {
                    a.max(b)
                }
            });
        let cell = &mut best[r][c];
        let better = match cell {
            None => true,
            Some((y, _)) => x > *y || (x.is_nan() && !y.is_nan()),
        };
        if better {
            *cell = Some((x, i));
        }
    }
    let albedo: Vec<Vec<f64>> = best
        .iter()
        .map(|row| row.iter().map(|c| c.map_or(f64::NAN, |(x, _)| x)).collect())
        .collect();
    // The reference at the cells' points only: it integrates per point.
    let at: Vec<usize> = best
        .iter()
        .flatten()
        .filter_map(|c| c.map(|(_, i)| i))
        .collect();
    let subset = Points {
        names: p.names.clone(),
        widths: p.widths.clone(),
        columns: p
            .columns
            .iter()
            .map(|cols| {
                cols.iter()
                    .map(|c| at.iter().map(|&i| c[i]).collect())
                    .collect()
            })
            .collect(),
        len: at.len(),
    };
    let model = crate::reference::find(ALBEDO_MODEL).expect("the registry has ggx_albedo");
    let mut exprs = check.reference_args.clone();
    let view = &p.names[vi];
    let (reference, note) = match Expr::parse(&format!("{view}.z")) {
        Ok(e) => {
            exprs.insert("n_dot_v".to_string(), e);
            match super::inputs::reference_columns(check, model, &subset, &exprs) {
                Ok(cols) => {
                    let mut k = 0;
                    let table = best
                        .iter()
                        .map(|row| {
                            row.iter()
                                .map(|c| match c {
                                    Some(_) => {
                                        k += 1;
                                        cols[0][k - 1]
                                    }
                                    None => f64::NAN,
                                })
                                .collect()
                        })
                        .collect();
                    (Some(table), None)
                }
                Err(m) => (None, Some(m)),
            }
        }
        Err(e) => (None, Some(e.message)),
    };
    Some(AlbedoTable {
        over: over.to_string(),
        view: view.clone(),
        roughness: ri.map(|k| p.names[k].clone()),
        angles,
        roughnesses,
        albedo,
        model: ALBEDO_MODEL.to_string(),
        reference,
        note,
    })
}

/// Per (sweep point, direction) of a masking-identity quadrature: the node's
/// weight without its cos θ_h, times max(0, v·h) (`view`: the view's columns,
/// one value per sweep point) and the NDF at h (its
/// `n_dot_h` is the direction's z; its other parameters come from the check's
/// `reference_args`, else the sweep parameters of the same names).
fn masking_factor(
    check: &Check,
    m: &crate::suite::Masking,
    over: &str,
    qpoints: &Points,
    nodes: &[([f64; 3], f64)],
    view: &[Vec<f64>],
) -> Result<Vec<f64>, String> {
    let model = crate::reference::find(&m.ndf)
        .ok_or_else(|| format!("no reference model named `{}`", m.ndf))?;
    let mut exprs = check.reference_args.clone();
    exprs.insert(
        "n_dot_h".to_string(),
        crate::sweep::Expr::parse(&format!("{over}.z")).map_err(|e| e.message)?,
    );
    let d = super::inputs::reference_columns(check, model, qpoints, &exprs)
        .map_err(|e| format!("the distribution `{}`: {e}", m.ndf))?;
    let q = nodes.len();
    Ok((0..qpoints.len)
        .map(|k| {
            let (h, w) = nodes[k % q];
            let i = k / q;
            let vh = view[0][i] * h[0] + view[1][i] * h[1] + view[2][i] * h[2];
            w / h[2] * vh.max(0.0) * d[0][k]
        })
        .collect())
}

/// The columns of a property check. `got` is the function's result.
/// A hemisphere property evaluates its function at every quadrature
/// direction of each of the check's `n` points: refused, before anything
/// runs, when that passes the `points_per_check` limit. Also the number of
/// evaluations per point (1 for other properties).
pub fn evaluations_per_point(
    suite: &Suite,
    check: &Check,
    pc: &PropertyCheck,
    n: usize,
) -> Result<usize, String> {
    if !matches!(pc.property, Property::Hemisphere { .. }) {
        return Ok(1);
    }
    let q = hemisphere_nodes().len();
    let total = (n as u64).saturating_mul(q as u64);
    if total > suite.limits.points_per_check {
        let l = crate::limits::Limit::PointsPerCheck;
        return Err(located(
            suite,
            pc.line,
            check,
            format!(
                "the quadrature takes {q} directions at each of {n} sweep points ({total} evaluations), more than the `{l}` limit of {}; {}",
                suite.limits.points_per_check,
                l.how_to_raise()
            ),
        ));
    }
    Ok(q)
}

/// The columns of a property check at the check's points (`ev`); `decoder`
/// is the round trip's decoding function, built once.
pub fn property_sides(
    suite: &Suite,
    check: &Check,
    pc: &PropertyCheck,
    decoder: Option<&Other>,
    ev: &Evaluated,
    got: &[Vec<f64>],
) -> Result<Sides, String> {
    let against = format!("property {}", pc.property.label());
    let half = ev.outputs.iter().any(|(_, k)| *k == ScalarKind::F16);
    let err = |m: String| located(suite, pc.line, check, m);
    match &pc.property {
        Property::Range { min, max } => {
            // The expected value is the nearest point of the range: a result
            // inside it is its own expected value, one outside is off by its
            // distance to the bound. NaN lies in no range.
            let (lo, hi) = (
                min.unwrap_or(f64::NEG_INFINITY),
                max.unwrap_or(f64::INFINITY),
            );
            let fallback = min.or(*max).unwrap_or(0.0);
            let want = got
                .iter()
                .map(|c| {
                    c.iter()
                        .map(|&x| {
                            if x.is_nan() {
                                fallback
                            } else {
                                x.clamp(lo, hi)
                            }
                        })
                        .collect()
                })
                .collect();
            Ok(Sides {
                against,
                got: got.to_vec(),
                want,
                half,
                albedo: None,
            })
        }
        Property::Finite => {
            let want = got
                .iter()
                .map(|c| {
                    c.iter()
                        .map(|&x| if x.is_finite() { x } else { 0.0 })
                        .collect()
                })
                .collect();
            Ok(Sides {
                against,
                got: got.to_vec(),
                want,
                half,
                albedo: None,
            })
        }
        Property::Reciprocity { a, b } => {
            let params = ev.program.params();
            let names: Vec<&str> = params.iter().map(|(n, _)| n.as_str()).collect();
            let ty = |n: &str| params.iter().find(|(p, _)| p == n).map(|(_, t)| t.clone());
            let (ta, tb) = match (ty(a), ty(b)) {
                (Some(ta), Some(tb)) => (ta, tb),
                (ta, _) => {
                    let missing = if ta.is_none() { a } else { b };
                    return Err(err(format!(
                        "key `property.swap`: `{}` has no argument `{missing}` (has: {})",
                        check.function,
                        names.join(", ")
                    )));
                }
            };
            if ta != tb {
                return Err(err(format!(
                    "key `property.swap`: `{a}` is {ta} but `{b}` is {tb}; only arguments of one type can be swapped"
                )));
            }
            let expr = |n: &str| {
                check
                    .args
                    .get(n)
                    .cloned()
                    .unwrap_or_else(|| Expr::parse(n).expect("an argument name parses"))
            };
            let mut swapped: BTreeMap<String, Expr> = check.args.clone();
            swapped.insert(a.clone(), expr(b));
            swapped.insert(b.clone(), expr(a));
            let other = evaluate_at(
                check,
                ev.build.clone(),
                ev.program.clone(),
                &swapped,
                ev.points.clone(),
            )?;
            Ok(Sides {
                against,
                got: got.to_vec(),
                want: as_f64(&other.output_columns, &other.outputs),
                half,
                albedo: None,
            })
        }
        Property::Isotropy {
            rotate,
            about,
            angle,
        } => {
            let params = ev.program.params();
            let names: Vec<&str> = params.iter().map(|(n, _)| n.as_str()).collect();
            for n in rotate.iter().chain(about) {
                let Some((_, ty)) = params.iter().find(|(p, _)| p == n) else {
                    return Err(err(format!(
                        "key `property.{}`: `{}` has no argument `{n}` (has: {})",
                        if Some(n) == about.as_ref() {
                            "about"
                        } else {
                            "rotate"
                        },
                        check.function,
                        names.join(", ")
                    )));
                };
                if ty.leaves().len() != 3 {
                    return Err(err(format!(
                        "key `property.rotate`: `{n}` is {ty}; only vec3 directions rotate"
                    )));
                }
            }
            let text = |n: &str| {
                check
                    .args
                    .get(n)
                    .map_or_else(|| n.to_string(), |e| e.text.clone())
            };
            let axis = about.as_ref().map_or_else(
                || "vec3(0, 0, 1)".to_string(),
                |a| format!("normalize({})", text(a)),
            );
            let (s, c) = angle.to_radians().sin_cos();
            let mut rotated: BTreeMap<String, Expr> = check.args.clone();
            for n in rotate {
                // Rodrigues' rotation formula about the unit axis k.
                let v = text(n);
                let e = format!(
                    "({v}) * ({c}) + cross({axis}, {v}) * ({s}) + {axis} * (dot({axis}, {v}) * ({}))",
                    1.0 - c
                );
                let e =
                    Expr::parse(&e).map_err(|m| err(format!("rotating `{n}`: {}", m.message)))?;
                rotated.insert(n.clone(), e);
            }
            let other = evaluate_at(
                check,
                ev.build.clone(),
                ev.program.clone(),
                &rotated,
                ev.points.clone(),
            )?;
            Ok(Sides {
                against,
                got: got.to_vec(),
                want: as_f64(&other.output_columns, &other.outputs),
                half,
                albedo: None,
            })
        }
        Property::Hemisphere {
            over,
            equal,
            masking,
        } => {
            let nodes = hemisphere_nodes();
            let q = nodes.len();
            let n = ev.points.len;
            // Every sweep point repeated once per direction (point-major),
            // with the direction as one more parameter named `over`.
            let p = &ev.points;
            let mut columns: Vec<Vec<Vec<f64>>> = p
                .columns
                .iter()
                .map(|cols| {
                    cols.iter()
                        .map(|c| c.iter().flat_map(|&x| std::iter::repeat_n(x, q)).collect())
                        .collect()
                })
                .collect();
            let dir: Vec<Vec<f64>> = (0..3)
                .map(|k| {
                    (0..n)
                        .flat_map(|_| nodes.iter().map(move |(d, _)| d[k]))
                        .collect()
                })
                .collect();
            columns.push(dir);
            let qpoints = Points {
                names: p.names.iter().cloned().chain([over.clone()]).collect(),
                widths: p.widths.iter().copied().chain([3]).collect(),
                columns,
                len: n * q,
            };
            // The integrand's factor beside the function at each (point, direction),
            // times the node's weight: cos θ for albedo and normalisation (in the
            // weight), max(0, v·h) D(h) / cos θ_h for the masking identity.
            let view = match masking {
                None => None,
                Some(m) => Some(p.names.iter().position(|x| *x == m.view).ok_or_else(|| {
                    err(format!("the view `{}` is not a sweep parameter", m.view))
                })?),
            };
            let factor: Vec<f64> = match (masking, view) {
                (Some(m), Some(vi)) => {
                    masking_factor(check, m, over, &qpoints, &nodes, &p.columns[vi]).map_err(err)?
                }
                _ => (0..n * q).map(|k| nodes[k % q].1).collect(),
            };
            let qev = evaluate_at(
                check,
                ev.build.clone(),
                ev.program.clone(),
                &check.args,
                qpoints,
            )
            .map_err(|m| err(format!("the quadrature over `{over}`: {m}")))?;
            let values = as_f64(&qev.output_columns, &qev.outputs);
            let integral: Vec<Vec<f64>> = values
                .iter()
                .map(|c| {
                    (0..n)
                        .map(|i| {
                            c[i * q..(i + 1) * q]
                                .iter()
                                .zip(&factor[i * q..(i + 1) * q])
                                .map(|(f, w)| f * w)
                                .sum()
                        })
                        .collect()
                })
                .collect();
            let view_z = view.map(|vi| &p.columns[vi][2]);
            let want = integral
                .iter()
                .map(|c| {
                    c.iter()
                        .enumerate()
                        .map(|(i, &x): (usize, &f64)| match &view_z {
                            Some(z) => z[i],
                            None if *equal || x.is_nan() => 1.0,
                            None => x.min(1.0),
                        })
                        .collect()
                })
                .collect();
            let albedo = if *equal || masking.is_some() {
                None
            } else {
                albedo_table(check, over, p, &integral)
            };
            Ok(Sides {
                against,
                got: integral,
                want,
                half: false,
                albedo,
            })
        }
        Property::RoundTrip { decode, .. } => {
            let program = &decoder
                .expect("a round trip's decoder is built with the check")
                .1;
            let takes = program.input_leaves();
            let same = takes.len() == ev.outputs.len()
                && takes.iter().zip(ev.outputs.iter()).all(|(a, b)| a.1 == b.1);
            if !same {
                return Err(err(format!(
                    "key `property.decode`: `{decode}` takes ({}) but `{}` returns ({}); the decoder must take exactly the encoder's result",
                    kinds(&takes),
                    check.function,
                    kinds(&ev.outputs)
                )));
            }
            let gives = program.output_leaves();
            if gives.len() != ev.inputs.len() {
                return Err(err(format!(
                    "key `property.decode`: `{decode}` returns {} value(s) ({}) but `{}` takes {} ({}); a round trip gives back every argument",
                    gives.len(),
                    kinds(&gives),
                    check.function,
                    ev.inputs.len(),
                    kinds(&ev.inputs)
                )));
            }
            let refs: Vec<&[u32]> = ev.output_columns.iter().map(|c| &c[..]).collect();
            let mut decoded = Vec::new();
            program
                .try_eval(&refs, &mut decoded)
                .map_err(|m| err(format!("`{decode}`: {m}")))?;
            Ok(Sides {
                against,
                got: as_f64(&decoded, &gives),
                want: as_f64(&ev.input_columns, &ev.inputs),
                half: gives.iter().any(|(_, k)| *k == ScalarKind::F16),
                albedo: None,
            })
        }
    }
}
