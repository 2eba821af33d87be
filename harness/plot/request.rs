//! One picture of one check, as the `plot` command asks for it: an error map, lobes or
//! a property chart, drawn as SVG or PNG. The report page draws the same pictures.

use super::{lobes, lobes_png, lobes_svg, property_chart, Axis, ErrorGrid, Measure, Scale};
use crate::detail::CheckPoints;
use crate::suite::{Check, Suite};

/// Which picture of a check.
#[derive(Clone, Debug, PartialEq)]
pub enum Picture {
    /// The error of the check's first comparison with a reference or golden (or the one
    /// whose label contains `against`) over two sweep parameters (default: the first two).
    Map {
        x: Option<String>,
        y: Option<String>,
        measure: Measure,
        scale: Scale,
        against: Option<String>,
    },
    /// Lobes in the plane of incidence at these roughnesses (default: the sweep's first,
    /// middle and last), view at `view_theta` degrees.
    Lobes {
        roughness: Vec<f64>,
        view_theta: f64,
    },
    /// A property check's result against parameter `x` (default: the first that varies).
    Property { x: Option<String> },
}

/// The file format, from the output file's extension.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ImageFormat {
    Svg,
    Png,
}

impl ImageFormat {
    /// `.svg` or `.png` (any case); anything else is an error naming the file.
    pub fn of_path(path: &std::path::Path) -> Result<ImageFormat, String> {
        match path
            .extension()
            .and_then(|e| e.to_str())
            .map(str::to_ascii_lowercase)
            .as_deref()
        {
            Some("svg") => Ok(ImageFormat::Svg),
            Some("png") => Ok(ImageFormat::Png),
            _ => Err(format!(
                "{}: the picture's format comes from the file name; end it in .svg or .png",
                path.display()
            )),
        }
    }
}

/// Draw `picture` of `check`: the file's bytes.
pub fn draw(
    suite: &Suite,
    check: &Check,
    picture: &Picture,
    format: ImageFormat,
) -> Result<Vec<u8>, String> {
    match picture {
        Picture::Map {
            x,
            y,
            measure,
            scale,
            against,
        } => {
            let detail = CheckPoints::of(suite, check)?;
            let e = match against {
                None => detail.expected.first(),
                Some(a) => detail
                    .expected
                    .iter()
                    .find(|e| e.against.contains(a.as_str())),
            }
            .ok_or_else(|| {
                let have: Vec<&str> = detail.expected.iter().map(|e| e.against.as_str()).collect();
                match (against, have.is_empty()) {
                    (_, true) => format!(
                        "check `{}` has no reference or golden to map the error against",
                        check.name
                    ),
                    (Some(a), false) => format!(
                        "check `{}` has no comparison `{a}` (has: {})",
                        check.name,
                        have.join("; ")
                    ),
                    (None, false) => unreachable!("the first comparison exists"),
                }
            })?;
            let params = &check.sweep.params;
            let pick = |given: &Option<String>, k: usize| -> Result<Axis, String> {
                let name = match given {
                    Some(n) => n.clone(),
                    None => params
                        .get(k)
                        .map(|p| p.0.clone())
                        .ok_or_else(|| {
                            format!(
                                "check `{}` has {} sweep parameter(s); a map needs two (give --x and --y)",
                                check.name,
                                params.len()
                            )
                        })?,
                };
                Axis::of(&check.sweep, &name).map_err(|m| format!("check `{}`: {m}", check.name))
            };
            let (xa, ya) = (pick(x, 0)?, pick(y, 1)?);
            if xa.param == ya.param {
                return Err(format!(
                    "check `{}`: a map needs two different parameters (both are `{}`)",
                    check.name, xa.name
                ));
            }
            let title = format!("{} against {}", check.name, e.against);
            let grid = ErrorGrid::of_check(&title, &detail, e, xa, ya, *measure);
            match format {
                ImageFormat::Svg => grid.svg(*scale).map(String::into_bytes),
                ImageFormat::Png => grid.png(*scale),
            }
        }
        Picture::Lobes {
            roughness,
            view_theta,
        } => {
            if !(0.0..90.0).contains(view_theta) {
                return Err(format!(
                    "the view angle {view_theta}° is not in [0, 90) degrees from the normal"
                ));
            }
            let picks = if roughness.is_empty() {
                default_roughnesses(check)
            } else {
                roughness.clone()
            };
            let l = lobes(suite, check, &picks, *view_theta)?;
            let title = format!(
                "{}: lobes in the plane of incidence, view at {}°",
                check.name,
                crate::sweep::fmt_num(*view_theta)
            );
            match format {
                ImageFormat::Svg => lobes_svg(&title, &l).map(String::into_bytes),
                ImageFormat::Png => lobes_png(&title, &l),
            }
        }
        Picture::Property { x } => {
            let detail = CheckPoints::of(suite, check)?;
            property_image(suite, check, &detail, x.as_deref(), format)
        }
    }
}

/// A property check's chart over `x` (see [`property_chart`]) from an evaluation
/// already made, so a caller that has one (the report page) does not evaluate again.
pub fn property_image(
    suite: &Suite,
    check: &Check,
    detail: &CheckPoints,
    x: Option<&str>,
    format: ImageFormat,
) -> Result<Vec<u8>, String> {
    let pc = check.property.as_ref().ok_or_else(|| {
        format!(
            "check `{}` has no `property` to draw (pictures of it: map, lobes)",
            check.name
        )
    })?;
    let decoder = crate::gate::oracle::decoder_of(suite, check)?;
    let sides = crate::gate::oracle::property_sides(
        suite,
        check,
        pc,
        decoder.as_ref(),
        &detail.ev,
        &detail.got,
    )?;
    let chart = property_chart(check, &detail.ev.points, &sides, x)?;
    match format {
        ImageFormat::Svg => chart.svg().map(String::into_bytes),
        ImageFormat::Png => chart.png(),
    }
}

/// The roughnesses lobes are drawn at when none are given: the sweep's first, middle
/// and last value of its `roughness` or `alpha` parameter (0.5 when it has none).
pub fn default_roughnesses(check: &Check) -> Vec<f64> {
    let rough = check
        .sweep
        .params
        .iter()
        .find(|(n, _)| n == "roughness" || n == "alpha")
        .map(|(_, d)| d.values())
        .unwrap_or_default();
    match rough.len() {
        0 => vec![0.5],
        1 | 2 => rough,
        n => vec![rough[0], rough[n / 2], rough[n - 1]],
    }
}
