//! Lobes of a BRDF-like check in the plane of incidence: which parameters are the view,
//! the light and the roughness ([`lobe_params`]), the function's and the reference's values
//! over a sweep of the light direction ([`lobes`]), and their chart as SVG or PNG.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::{font, png_of, series_colour};
use crate::detail::CheckPoints;
use crate::suite::{Check, Suite};
use crate::sweep::{fmt_num, Domain};

/// The lobe of a BRDF-like check in the plane of incidence at one roughness: the view
/// direction, and per signed light angle the function's first output and the
/// reference's. Angles are degrees from the normal, positive on the view's side
/// (azimuth 0), negative on the far side (azimuth 180°): the mirror direction of a view
/// at θ is at −θ.
pub struct Lobe {
    pub roughness: f64,
    pub view_theta: f64,
    /// (signed θ of the light in degrees, function, reference).
    pub samples: Vec<(f64, f64, f64)>,
}

/// The names of a check's view and light directions and its roughness parameter, when it
/// has them (the first two direction parameters, a parameter called `roughness` or
/// `alpha`).
pub fn lobe_params(check: &Check) -> Option<(String, String, String)> {
    let dirs: Vec<&String> = check
        .sweep
        .params
        .iter()
        .filter(|(_, d)| matches!(d, Domain::Direction { .. }))
        .map(|(n, _)| n)
        .collect();
    let rough = check.sweep.params.iter().find(|(n, d)| {
        (n == "roughness" || n == "alpha") && !matches!(d, Domain::Direction { .. })
    })?;
    if dirs.len() < 2 || check.reference.is_none() {
        return None;
    }
    Some((dirs[0].clone(), dirs[1].clone(), rough.0.clone()))
}

/// Lobes of `check` in the plane of incidence for each of `roughnesses`, with the view
/// at `view_theta` degrees: the check's function and its reference, evaluated over a
/// sweep of the light direction through that plane (the other parameters at their first
/// value).
pub fn lobes(
    suite: &Suite,
    check: &Check,
    roughnesses: &[f64],
    view_theta: f64,
) -> Result<Vec<Lobe>, String> {
    let (v, l, r) = lobe_params(check).ok_or_else(|| {
        format!(
            "check `{}` has no view and light directions, roughness and reference to draw lobes of",
            check.name
        )
    })?;
    let list = |x: f64| Domain::List(vec![x]);
    let mut c = check.clone();
    c.sweep.random = None;
    c.golden = None;
    for (name, d) in &mut c.sweep.params {
        let new = if *name == v {
            Domain::Direction {
                theta: Box::new(list(view_theta)),
                phi: Box::new(list(0.0)),
            }
        } else if *name == l {
            Domain::Direction {
                theta: Box::new(Domain::Linear {
                    lo: 0.0,
                    hi: 89.0,
                    n: 90,
                }),
                phi: Box::new(Domain::List(vec![0.0, 180.0])),
            }
        } else if *name == r {
            Domain::List(roughnesses.to_vec())
        } else {
            match &*d {
                Domain::Direction { .. } => Domain::Direction {
                    theta: Box::new(list(0.0)),
                    phi: Box::new(list(0.0)),
                },
                other => list(other.values().first().copied().unwrap_or(0.0)),
            }
        };
        *d = new;
    }
    let detail = CheckPoints::of(suite, &c)?;
    let e = detail
        .expected
        .first()
        .ok_or("no reference to draw against")?;
    let p = &detail.ev.points;
    let (li, ri) = (
        p.names
            .iter()
            .position(|n| *n == l)
            .expect("light parameter"),
        p.names
            .iter()
            .position(|n| *n == r)
            .expect("roughness parameter"),
    );
    let mut out: Vec<Lobe> = roughnesses
        .iter()
        .map(|&x| Lobe {
            roughness: f64::from(x as f32),
            view_theta,
            samples: Vec::new(),
        })
        .collect();
    for i in 0..detail.len() {
        let (lx, lz) = (p.columns[li][0][i], p.columns[li][2][i]);
        let angle = lx.atan2(lz).to_degrees();
        let rough = p.columns[ri][0][i];
        if let Some(lobe) = out.iter_mut().find(|o| o.roughness == rough) {
            lobe.samples.push((angle, detail.got[0][i], e.want[0][i]));
        }
    }
    for o in &mut out {
        o.samples.sort_by(|a, b| a.0.total_cmp(&b.0));
        o.samples.dedup_by(|a, b| a.0 == b.0);
    }
    Ok(out)
}

/// Lobes drawn as polar plots side by side: radius f · cos θl (what the surface sends
/// back per unit of light), the function solid and its reference dashed, the view
/// direction as a grey line.
pub fn lobes_svg(title: &str, lobes: &[Lobe]) -> Result<String, String> {
    let mut s = String::new();
    {
        let w = 300 * lobes.len().max(1) as u32;
        font()?;
        let root = SVGBackend::with_string(&mut s, (w, 340)).into_drawing_area();
        draw_lobes(&root, title, lobes)?;
    }
    Ok(s)
}

/// [`lobes_svg`] as PNG bytes.
pub fn lobes_png(title: &str, lobes: &[Lobe]) -> Result<Vec<u8>, String> {
    png_of((300 * lobes.len().max(1) as u32, 340), |root| {
        draw_lobes(root, title, lobes)
    })
}

fn draw_lobes<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    title: &str,
    lobes: &[Lobe],
) -> Result<(), String>
where
    DB::ErrorType: 'static,
{
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let root = root.titled(title, ("sans-serif", 16)).map_err(e)?;
    let panels = root.split_evenly((1, lobes.len().max(1)));
    for (lobe, area) in lobes.iter().zip(&panels) {
        let rad = |f: f64, a: f64| f * a.to_radians().cos().max(0.0);
        let r = lobe
            .samples
            .iter()
            .flat_map(|&(a, g, w)| [rad(g, a), rad(w, a)])
            .filter(|x| x.is_finite())
            .fold(0.0, f64::max)
            .max(1e-12);
        let mut chart = ChartBuilder::on(area)
            .caption(
                format!("roughness {}", fmt_num(lobe.roughness)),
                ("sans-serif", 13),
            )
            .margin(10)
            .x_label_area_size(24)
            .y_label_area_size(40)
            .build_cartesian_2d(-1.05 * r..1.05 * r, 0.0..1.05 * r)
            .map_err(e)?;
        chart
            .configure_mesh()
            .disable_mesh()
            .x_labels(3)
            .y_labels(3)
            .x_label_formatter(&|v| fmt_num(*v))
            .y_label_formatter(&|v| fmt_num(*v))
            .label_style(("sans-serif", 10))
            .draw()
            .map_err(e)?;
        let polar = |a: f64, f: f64| {
            let rr = rad(f, a);
            (rr * a.to_radians().sin(), rr * a.to_radians().cos())
        };
        let vt = lobe.view_theta.to_radians();
        chart
            .draw_series(LineSeries::new(
                [(0.0, 0.0), (r * vt.sin(), r * vt.cos())],
                RGBColor(150, 150, 150).stroke_width(1),
            ))
            .map_err(e)?;
        let got = series_colour(0);
        let want = series_colour(2);
        chart
            .draw_series(LineSeries::new(
                lobe.samples
                    .iter()
                    .filter(|s| s.1.is_finite())
                    .map(|&(a, g, _)| polar(a, g)),
                got.stroke_width(2),
            ))
            .map_err(e)?
            .label("function")
            .legend(move |(x, y)| PathElement::new([(x, y), (x + 14, y)], got.stroke_width(2)));
        chart
            .draw_series(DashedLineSeries::new(
                lobe.samples
                    .iter()
                    .filter(|s| s.2.is_finite())
                    .map(|&(a, _, w)| polar(a, w)),
                5,
                4,
                want.stroke_width(2),
            ))
            .map_err(e)?
            .label("reference")
            .legend(move |(x, y)| PathElement::new([(x, y), (x + 14, y)], want.stroke_width(2)));
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperRight)
            .background_style(WHITE.mix(0.85))
            .label_font(("sans-serif", 10))
            .draw()
            .map_err(e)?;
    }
    root.present().map_err(e)?;
    Ok(())
}
