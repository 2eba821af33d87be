//! Pictures of a check: error maps over two sweep parameters, lobes in the plane of
//! incidence, and line charts of a property against a parameter; each as SVG or PNG.
//! Both need a TrueType font found on the system (see [`font`]): PNG draws its text with
//! it, and SVG lays its text out with its metrics.
//!
//! An error map is an [`ErrorGrid`]: a bounded 2-D grid of bins over two parameters,
//! filled one point at a time with [`ErrorGrid::add`] (each cell keeps its worst value and
//! its count of failing points), so it needs no more memory than its cells, however many
//! points stream through it; the parameters not on the axes are reduced by the worst
//! case. Colours come from a scale that reads in grey ([`colour`]).

pub mod colour;
mod lobe;
mod property;
mod request;

use plotters::coord::Shift;
use plotters::prelude::*;

use crate::detail::{CheckPoints, Expected};
use crate::sweep::{fmt_num, Domain, Points, Sweep};

pub use colour::Scale;
pub use lobe::{lobe_params, lobes, lobes_png, lobes_svg, Lobe};
pub use property::{property_chart, MAX_CURVES};
pub use request::{default_roughnesses, draw, property_image, ImageFormat, Picture};

/// Most bins on one axis of an error map.
pub const MAX_BINS: usize = 64;

/// What an error map shows per point.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Measure {
    /// Error in units in the last place of the expected value.
    Ulp,
    /// Relative error.
    Relative,
    /// Error ÷ tolerance (the gate's badness): above 1 fails.
    Tolerance,
}

impl Measure {
    pub fn label(self) -> &'static str {
        match self {
            Measure::Ulp => "error (ULP)",
            Measure::Relative => "relative error",
            Measure::Tolerance => "error ÷ tolerance",
        }
    }
}

/// One axis of a map: a sweep parameter (a direction's polar angle θ for vectors).
#[derive(Clone, Debug, PartialEq)]
pub struct Axis {
    /// The parameter's name.
    pub name: String,
    /// Parameter index in the sweep.
    pub param: usize,
    /// The label drawn: name and unit.
    pub label: String,
    pub lo: f64,
    pub hi: f64,
    pub bins: usize,
    /// Bins are even in log10 of the value.
    pub log: bool,
    /// The value read is the polar angle θ (degrees) of a direction.
    pub theta: bool,
}

impl Axis {
    /// The axis for parameter `name` of `sweep` (error when there is none).
    pub fn of(sweep: &Sweep, name: &str) -> Result<Axis, String> {
        let (param, (_, d)) = sweep
            .params
            .iter()
            .enumerate()
            .find(|(_, (n, _))| n == name)
            .ok_or_else(|| {
                format!(
                    "no sweep parameter `{name}` (sweep: {})",
                    sweep
                        .params
                        .iter()
                        .map(|p| p.0.as_str())
                        .collect::<Vec<_>>()
                        .join(", ")
                )
            })?;
        let (values, theta) = match d {
            Domain::Direction { theta, .. } => (theta.values(), true),
            d => (d.values(), false),
        };
        let lo = values.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let log = matches!(d, Domain::Log { .. }) && lo > 0.0;
        let mut distinct = values.clone();
        distinct.sort_by(f64::total_cmp);
        distinct.dedup();
        let label = if theta {
            format!("θ of {name} (degrees from the normal)")
        } else if log {
            format!("{name} (log scale)")
        } else {
            name.to_string()
        };
        Ok(Axis {
            name: name.to_string(),
            param,
            label,
            lo,
            hi,
            bins: distinct.len().clamp(1, MAX_BINS),
            log,
            theta,
        })
    }

    /// The axes of a check's map when none are chosen: its first two parameters.
    pub fn default_pair(sweep: &Sweep) -> Option<(Axis, Axis)> {
        if sweep.params.len() < 2 {
            return None;
        }
        Some((
            Axis::of(sweep, &sweep.params[0].0).ok()?,
            Axis::of(sweep, &sweep.params[1].0).ok()?,
        ))
    }

    /// This axis's value at point `i`.
    pub fn value(&self, points: &Points, i: usize) -> f64 {
        let c = &points.columns[self.param];
        if self.theta {
            c[2][i].clamp(-1.0, 1.0).acos().to_degrees()
        } else {
            c[0][i]
        }
    }

    fn scaled(&self, v: f64) -> f64 {
        if self.log {
            v.log10()
        } else {
            v
        }
    }

    /// The drawn range (log10 of the values on a log axis).
    fn range(&self) -> (f64, f64) {
        let (a, b) = (self.scaled(self.lo), self.scaled(self.hi));
        if b > a {
            (a, b)
        } else {
            (a - 0.5, a + 0.5)
        }
    }

    /// The bin of value `v`.
    pub fn bin(&self, v: f64) -> usize {
        let (a, b) = self.range();
        let t = (self.scaled(v) - a) / (b - a);
        if self.bins == 1 || !t.is_finite() {
            return 0;
        }
        ((t * (self.bins - 1) as f64).round().max(0.0) as usize).min(self.bins - 1)
    }

    /// Edges of bin `k` in drawn units (bins are centred on evenly spaced values).
    fn edges(&self, k: usize) -> (f64, f64) {
        let (a, b) = self.range();
        if self.bins == 1 {
            return (a, b);
        }
        let step = (b - a) / (self.bins - 1) as f64;
        let c = a + k as f64 * step;
        (c - step / 2.0, c + step / 2.0)
    }

    /// A tick label: three significant digits, and 0 for what is 0 up to the
    /// rounding of the tick positions.
    fn tick(&self, v: f64) -> String {
        let (a, b) = self.range();
        if !self.log && v.abs() < (b - a).abs() * 1e-9 {
            return "0".to_string();
        }
        let v = if self.log { 10f64.powf(v) } else { v };
        let shown: f64 = format!("{v:.2e}").parse().unwrap_or(v);
        fmt_num(shown)
    }
}

/// A bounded map of the worst error over two parameters (see the module doc).
#[derive(Clone, Debug, PartialEq)]
pub struct ErrorGrid {
    pub title: String,
    pub x: Axis,
    pub y: Axis,
    pub measure: Measure,
    /// Worst value per cell, row-major (`y` bin × `x` bins + `x` bin); NaN: no point.
    pub worst: Vec<f64>,
    /// Failing points per cell.
    pub failing: Vec<u32>,
}

impl ErrorGrid {
    pub fn new(title: &str, x: Axis, y: Axis, measure: Measure) -> ErrorGrid {
        let n = x.bins * y.bins;
        ErrorGrid {
            title: title.to_string(),
            x,
            y,
            measure,
            worst: vec![f64::NAN; n],
            failing: vec![0; n],
        }
    }

    /// Add one point: its position on the two axes, its error, and whether it fails.
    /// Non-finite errors count as the worst possible.
    pub fn add(&mut self, x: f64, y: f64, error: f64, fails: bool) {
        let k = self.y.bin(y) * self.x.bins + self.x.bin(x);
        let e = if error.is_nan() { f64::INFINITY } else { error };
        let w = &mut self.worst[k];
        if w.is_nan() || e > *w {
            *w = e;
        }
        self.failing[k] += u32::from(fails);
    }

    /// Fill a map of comparison `e` of a check's points over axes `x`, `y`.
    pub fn of_check(
        title: &str,
        detail: &CheckPoints,
        e: &Expected,
        x: Axis,
        y: Axis,
        measure: Measure,
    ) -> ErrorGrid {
        let mut g = ErrorGrid::new(title, x, y, measure);
        let p = &detail.ev.points;
        for i in 0..detail.len() {
            let a = detail.assess(e, i);
            let v = match measure {
                Measure::Ulp => a.err.2,
                Measure::Relative => a.err.1,
                Measure::Tolerance => a.badness,
            };
            g.add(g.x.value(p, i), g.y.value(p, i), v, a.fails());
        }
        g
    }

    /// Total failing points.
    pub fn failing_points(&self) -> u64 {
        self.failing.iter().map(|&f| u64::from(f)).sum()
    }

    /// The colour range: log10 of the smallest positive and the largest finite value.
    fn log_range(&self) -> (f64, f64) {
        let pos = self
            .worst
            .iter()
            .copied()
            .filter(|v| v.is_finite() && *v > 0.0);
        let lo = pos.clone().fold(f64::INFINITY, f64::min);
        let hi = pos.fold(f64::NEG_INFINITY, f64::max);
        if !lo.is_finite() {
            return (-1.0, 0.0);
        }
        let (a, b) = (lo.log10().floor(), hi.log10().ceil());
        if b > a {
            (a, b)
        } else {
            (a, a + 1.0)
        }
    }

    /// Position of `v` on the colour scale, 0 … 1 (0 for zero, 1 for infinite).
    fn shade(&self, v: f64) -> f64 {
        let (a, b) = self.log_range();
        if v.is_infinite() {
            1.0
        } else if v <= 0.0 {
            0.0
        } else {
            ((v.log10() - a) / (b - a)).clamp(0.0, 1.0)
        }
    }

    fn draw<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
        scale: Scale,
    ) -> Result<(), String>
    where
        DB::ErrorType: 'static,
    {
        let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
        root.fill(&WHITE).map_err(e)?;
        let (w, _) = root.dim_in_pixel();
        let (main, bar) = root.split_horizontally(w.saturating_sub(110));
        let (x0, x1) = self.x.range();
        let (y0, y1) = self.y.range();
        let (xs, ys) = (self.x.edges(0).0, self.y.edges(0).0);
        let (xe, ye) = (
            self.x.edges(self.x.bins - 1).1,
            self.y.edges(self.y.bins - 1).1,
        );
        let _ = (x0, x1, y0, y1);
        let mut chart = ChartBuilder::on(&main)
            .caption(&self.title, ("sans-serif", 16))
            .margin(8)
            .x_label_area_size(44)
            .y_label_area_size(64)
            .build_cartesian_2d(xs..xe, ys..ye)
            .map_err(e)?;
        let (fx, fy) = (|v: &f64| self.x.tick(*v), |v: &f64| self.y.tick(*v));
        chart
            .configure_mesh()
            .disable_mesh()
            .x_desc(self.x.label.as_str())
            .y_desc(self.y.label.as_str())
            .x_label_formatter(&fx)
            .y_label_formatter(&fy)
            .label_style(("sans-serif", 12))
            .draw()
            .map_err(e)?;
        let mut cells = Vec::new();
        let mut marks = Vec::new();
        for j in 0..self.y.bins {
            for i in 0..self.x.bins {
                let k = j * self.x.bins + i;
                let v = self.worst[k];
                let ((a, b), (c, d)) = (self.x.edges(i), self.y.edges(j));
                let col = if v.is_nan() {
                    (235, 235, 235)
                } else {
                    scale.at(self.shade(v))
                };
                cells.push(Rectangle::new(
                    [(a, c), (b, d)],
                    RGBColor(col.0, col.1, col.2).filled(),
                ));
                if self.failing[k] > 0 {
                    let m = colour::contrast(col);
                    marks.push(Cross::new(
                        ((a + b) / 2.0, (c + d) / 2.0),
                        4,
                        RGBColor(m.0, m.1, m.2).stroke_width(2),
                    ));
                }
            }
        }
        chart.draw_series(cells).map_err(e)?;
        chart.draw_series(marks).map_err(e)?;
        // The colour bar, labelled in the measure's units.
        let (lo, hi) = self.log_range();
        let mut cb = ChartBuilder::on(&bar)
            .margin_top(30)
            .margin_bottom(52)
            .margin_right(8)
            .y_label_area_size(52)
            .build_cartesian_2d(0.0..1.0, lo..hi)
            .map_err(e)?;
        let ylab = |v: &f64| format!("1e{}", v.round());
        cb.configure_mesh()
            .disable_mesh()
            .disable_x_axis()
            .y_desc(self.measure.label())
            .y_labels(((hi - lo) as usize + 1).min(8))
            .y_label_formatter(&ylab)
            .label_style(("sans-serif", 11))
            .draw()
            .map_err(e)?;
        let steps = 64;
        cb.draw_series((0..steps).map(|s| {
            let t0 = s as f64 / steps as f64;
            let t1 = (s + 1) as f64 / steps as f64;
            let c = scale.at((t0 + t1) / 2.0);
            Rectangle::new(
                [(0.0, lo + t0 * (hi - lo)), (1.0, lo + t1 * (hi - lo))],
                RGBColor(c.0, c.1, c.2).filled(),
            )
        }))
        .map_err(e)?;
        root.present().map_err(e)?;
        Ok(())
    }

    /// The map as an SVG document.
    pub fn svg(&self, scale: Scale) -> Result<String, String> {
        let mut s = String::new();
        {
            font()?;
            let root = SVGBackend::with_string(&mut s, (640, 420)).into_drawing_area();
            self.draw(&root, scale)?;
        }
        Ok(s)
    }

    /// The map as a PNG file's bytes.
    pub fn png(&self, scale: Scale) -> Result<Vec<u8>, String> {
        png_of((640, 420), |root| self.draw(root, scale))
    }
}

/// Render with a bitmap back end and encode as PNG.
fn png_of(
    (w, h): (u32, u32),
    draw: impl FnOnce(&DrawingArea<BitMapBackend, Shift>) -> Result<(), String>,
) -> Result<Vec<u8>, String> {
    font()?;
    let mut buf = vec![0u8; (w * h * 3) as usize];
    {
        let root = BitMapBackend::with_buffer(&mut buf, (w, h)).into_drawing_area();
        draw(&root)?;
    }
    let mut out = Vec::new();
    {
        let mut enc = png::Encoder::new(&mut out, w, h);
        enc.set_color(png::ColorType::Rgb);
        enc.set_depth(png::BitDepth::Eight);
        let mut wr = enc.write_header().map_err(|e| e.to_string())?;
        wr.write_image_data(&buf).map_err(|e| e.to_string())?;
    }
    Ok(out)
}

/// Where the pictures' text comes from: the first of the usual system locations of a
/// sans-serif TrueType font (`SHADEGATE_FONT` names another; Debian's `fonts-dejavu-core`
/// provides the first). Loaded once per process. An error says what was looked for.
pub fn font() -> Result<(), String> {
    use std::sync::OnceLock;
    static FONT: OnceLock<Result<(), String>> = OnceLock::new();
    FONT.get_or_init(|| {
        let candidates: Vec<std::path::PathBuf> = std::env::var_os("SHADEGATE_FONT")
            .map(Into::into)
            .into_iter()
            .chain(
                [
                    "/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf",
                    "/usr/share/fonts/TTF/DejaVuSans.ttf",
                    "/usr/share/fonts/truetype/liberation/LiberationSans-Regular.ttf",
                    "/usr/share/fonts/liberation-sans/LiberationSans-Regular.ttf",
                ]
                .map(Into::into),
            )
            .collect();
        for p in &candidates {
            if let Ok(bytes) = std::fs::read(p) {
                // The font lives as long as the process: plotters keeps a reference.
                let bytes: &'static [u8] = Box::leak(bytes.into_boxed_slice());
                if plotters::style::register_font("sans-serif", FontStyle::Normal, bytes).is_ok() {
                    return Ok(());
                }
            }
        }
        Err(format!(
            "pictures need a TrueType font for their labels and none was found (looked at {}; set SHADEGATE_FONT to a .ttf file)",
            candidates.iter().map(|p| p.display().to_string()).collect::<Vec<_>>().join(", ")
        ))
    })
    .clone()
}

/// One curve of a line chart: a name and its (x, y) points.
#[derive(Clone, Debug)]
pub struct Series {
    pub name: String,
    pub points: Vec<(f64, f64)>,
    /// Drawn dashed (for a reference beside the function).
    pub dashed: bool,
}

/// A line chart: a property of a check (for example albedo) against a parameter.
#[derive(Clone, Debug)]
pub struct LineChart {
    pub title: String,
    pub x_label: String,
    pub y_label: String,
    pub series: Vec<Series>,
}

fn series_colour(k: usize) -> RGBColor {
    // Four evenly spaced along the colour-blind-safe scale, avoiding its lightest end,
    // then again half a step apart.
    let t = 0.85 * (k % 4) as f64 / 3.0 + if k % 8 >= 4 { 0.14 } else { 0.0 };
    let c = Scale::Viridis.at(t.min(0.99));
    RGBColor(c.0, c.1, c.2)
}

impl LineChart {
    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), String>
    where
        DB::ErrorType: 'static,
    {
        let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
        root.fill(&WHITE).map_err(e)?;
        let all = self
            .series
            .iter()
            .flat_map(|s| s.points.iter())
            .filter(|p| p.0.is_finite() && p.1.is_finite());
        let (mut x0, mut x1, mut y0, mut y1) = (
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::INFINITY,
            f64::NEG_INFINITY,
        );
        for &(x, y) in all {
            (x0, x1, y0, y1) = (x0.min(x), x1.max(x), y0.min(y), y1.max(y));
        }
        if !x0.is_finite() {
            (x0, x1, y0, y1) = (0.0, 1.0, 0.0, 1.0);
        }
        // Head room above the curves for the legend (upper right), one row per series.
        let span = (y1 - y0).max(1e-12);
        let pad = span * 0.05;
        let head = span * 0.075 * self.series.len() as f64;
        let mut chart = ChartBuilder::on(root)
            .caption(&self.title, ("sans-serif", 16))
            .margin(10)
            .x_label_area_size(44)
            .y_label_area_size(64)
            .build_cartesian_2d(x0..x1.max(x0 + 1e-12), (y0 - pad)..(y1 + pad + head))
            .map_err(e)?;
        chart
            .configure_mesh()
            .x_desc(self.x_label.as_str())
            .y_desc(self.y_label.as_str())
            .label_style(("sans-serif", 12))
            .draw()
            .map_err(e)?;
        // A solid series takes the next colour; a dashed one the colour of the solid
        // series before it (its reference), or black when none comes before (a bound).
        let mut solid = 0;
        let mut last: Option<RGBColor> = None;
        for s in &self.series {
            let c = if s.dashed {
                last.unwrap_or(BLACK)
            } else {
                let c = series_colour(solid);
                solid += 1;
                last = Some(c);
                c
            };
            let style = c.stroke_width(2);
            let pts = s
                .points
                .iter()
                .copied()
                .filter(|p| p.0.is_finite() && p.1.is_finite());
            let dashed = s.dashed;
            let legend = move |(x, y): (i32, i32)| {
                let gap = if dashed { 4 } else { 0 };
                EmptyElement::at((x, y))
                    + PathElement::new([(0, 0), (6, 0)], style)
                    + PathElement::new([(6 + gap, 0), (16, 0)], style)
            };
            if s.dashed {
                chart
                    .draw_series(DashedLineSeries::new(pts, 6, 4, style))
                    .map_err(e)?
                    .label(s.name.as_str())
                    .legend(legend);
            } else {
                chart
                    .draw_series(LineSeries::new(pts, style))
                    .map_err(e)?
                    .label(s.name.as_str())
                    .legend(legend);
            }
        }
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperRight)
            .background_style(WHITE.mix(0.85))
            .border_style(BLACK)
            .label_font(("sans-serif", 12))
            .draw()
            .map_err(e)?;
        root.present().map_err(e)?;
        Ok(())
    }

    pub fn svg(&self) -> Result<String, String> {
        let mut s = String::new();
        {
            font()?;
            let root = SVGBackend::with_string(&mut s, (640, 400)).into_drawing_area();
            self.draw(&root)?;
        }
        Ok(s)
    }

    pub fn png(&self) -> Result<Vec<u8>, String> {
        png_of((640, 400), |root| self.draw(root))
    }
}
