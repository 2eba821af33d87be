//! Error maps, lobes and line charts: the bounded grid keeps the worst value and the
//! failing count per cell whatever the order of the points, a map's picture names its
//! axes and decodes as PNG, the lobes of the demo BRDF agree with the reference and
//! peak at the mirror direction, and a property chart draws its series.

use std::path::PathBuf;

use shadegate::detail::CheckPoints;
use shadegate::plot::{self, Axis, ErrorGrid, LineChart, Measure, Scale, Series};
use shadegate::suite;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn planted() -> suite::Suite {
    suite::load(&root().join("shaders/brackenfold-planted/shadegate.toml")).unwrap()
}

fn demo() -> suite::Suite {
    suite::load(&root().join("shadegate.toml")).unwrap()
}

#[test]
fn the_grid_keeps_the_worst_value_and_failures_per_cell_in_bounded_memory() {
    let s = planted();
    let c = s
        .checks
        .iter()
        .find(|c| c.name == "ggx_distribution")
        .unwrap();
    let x = Axis::of(&c.sweep, "n_dot_h").unwrap();
    let y = Axis::of(&c.sweep, "roughness").unwrap();
    assert_eq!((x.bins, y.bins), (plot::MAX_BINS, 40));
    assert!(y.log && y.label.contains("roughness"));
    let detail = CheckPoints::of(&s, c).unwrap();
    let e = &detail.expected[0];
    let g = ErrorGrid::of_check("t", &detail, e, x.clone(), y.clone(), Measure::Tolerance);
    // Cells are fixed by the axes, not by the number of points.
    assert_eq!(g.worst.len(), x.bins * y.bins);
    // Every failing point is in some cell, and the worst cell is the worst point.
    let failing = (0..detail.len())
        .filter(|&i| detail.assess(e, i).fails())
        .count();
    assert_eq!(g.failing_points(), failing as u64);
    let worst_point = (0..detail.len())
        .map(|i| detail.assess(e, i).badness)
        .fold(0.0, f64::max);
    let worst_cell = g
        .worst
        .iter()
        .copied()
        .filter(|v| !v.is_nan())
        .fold(0.0, f64::max);
    assert_eq!(worst_cell, worst_point);
    // Streaming in reverse order gives the same map.
    let mut r = ErrorGrid::new("t", x.clone(), y.clone(), Measure::Tolerance);
    for i in (0..detail.len()).rev() {
        let a = detail.assess(e, i);
        let p = &detail.ev.points;
        r.add(x.value(p, i), y.value(p, i), a.badness, a.fails());
    }
    assert_eq!(r.failing, g.failing);
    assert_eq!(format!("{:?}", r.worst), format!("{:?}", g.worst));
}

#[test]
fn a_map_names_its_axes_and_decodes_as_png() {
    let s = demo();
    let c = s.checks.iter().find(|c| c.name == "brdf_full").unwrap();
    let x = Axis::of(&c.sweep, "v").unwrap();
    let y = Axis::of(&c.sweep, "l").unwrap();
    assert!(x.theta && x.label.contains("θ of v") && x.label.contains("degrees"));
    let detail = CheckPoints::of(&s, c).unwrap();
    let g = ErrorGrid::of_check(
        "brdf_full ULP",
        &detail,
        &detail.expected[0],
        x,
        y,
        Measure::Ulp,
    );
    assert_eq!(g.failing_points(), 0, "the demo BRDF passes");
    let svg = match g.svg(Scale::Cividis) {
        Ok(svg) => svg,
        Err(e) if std::env::var_os("CI").is_none() && e.contains("font") => {
            eprintln!("skipped: {e}");
            return;
        }
        Err(e) => panic!("{e}"),
    };
    assert!(svg.starts_with("<svg") && svg.contains("θ of v") && svg.contains("θ of l"));
    assert!(svg.contains("error (ULP)"));
    let png = g.png(Scale::Viridis).unwrap();
    let dec = png::Decoder::new(std::io::Cursor::new(png));
    let reader = dec.read_info().unwrap();
    assert_eq!((reader.info().width, reader.info().height), (640, 420));
}

#[test]
fn demo_lobes_match_the_reference_and_peak_at_the_mirror_direction() {
    let s = demo();
    let c = s.checks.iter().find(|c| c.name == "brdf_full").unwrap();
    assert!(plot::lobe_params(c).is_some());
    let lobes = plot::lobes(&s, c, &[0.05, 0.3, 1.0], 30.0).unwrap();
    assert_eq!(lobes.len(), 3);
    for lobe in &lobes {
        // 90 light angles on each side of the normal.
        assert_eq!(lobe.samples.len(), 179, "roughness {}", lobe.roughness);
        for &(a, got, want) in &lobe.samples {
            // The check's own tolerance: rel 1e-4 or abs 1e-6.
            assert!(
                (got - want).abs() <= 1e-4 * want.abs() + 1e-6,
                "θl {a}: {got} vs {want}"
            );
        }
    }
    // The sharpest lobe peaks in the mirror direction. The view is at θ = 30° on the
    // φ = 0 side (signed angle +30°); its mirror image about the normal is at −30° (the
    // φ = 180° side). There the half vector is the normal, where the GGX distribution
    // and so a microfacet BRDF of small roughness peak (a handbook fact).
    let sharp = &lobes[0];
    let peak = sharp
        .samples
        .iter()
        .copied()
        .max_by(|a, b| a.2.total_cmp(&b.2))
        .unwrap();
    assert!((peak.0 + 30.0).abs() <= 1.0, "peak at {}", peak.0);
    match plot::lobes_svg("lobes", &lobes) {
        Ok(svg) => assert!(svg.contains("roughness 0.05") && svg.contains("reference")),
        Err(e) if std::env::var_os("CI").is_none() && e.contains("font") => {
            eprintln!("skipped: {e}")
        }
        Err(e) => panic!("{e}"),
    }
}

#[test]
fn a_property_chart_draws_each_series() {
    // Albedo of a Lambert surface against the view angle: 1 everywhere for unit albedo,
    // a fact of the model (∫ cos θ / π dω over the hemisphere = 1).
    let angles: Vec<f64> = (0..=9).map(|k| f64::from(k) * 10.0).collect();
    let chart = LineChart {
        title: "directional albedo".into(),
        x_label: "θ of v (degrees)".into(),
        y_label: "albedo".into(),
        series: vec![
            Series {
                name: "function".into(),
                points: angles.iter().map(|&a| (a, 1.0)).collect(),
                dashed: false,
            },
            Series {
                name: "reference".into(),
                points: angles.iter().map(|&a| (a, 1.0)).collect(),
                dashed: true,
            },
        ],
    };
    match chart.svg() {
        Ok(svg) => {
            for word in [
                "directional albedo",
                "θ of v (degrees)",
                "albedo",
                "function",
                "reference",
            ] {
                assert!(svg.contains(word), "{word}");
            }
            assert!(svg.contains("<polyline") || svg.contains("<path"));
        }
        Err(e) if std::env::var_os("CI").is_none() && e.contains("font") => {
            eprintln!("skipped: {e}")
        }
        Err(e) => panic!("{e}"),
    }
}

/// `shadegate plot` writes each picture as PNG or SVG by the file's extension, and
/// refuses what it cannot draw with exit code 2 and a message naming the problem.
#[test]
fn the_plot_command_writes_maps_lobes_and_property_charts() {
    let dir = std::env::temp_dir().join(format!("shadegate-plot-cli-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let suite = root().join("shadegate.toml");
    let suite = suite.to_str().unwrap();
    let out = |name: &str| dir.join(name).to_str().unwrap().to_string();
    let plot = |args: &[&str]| {
        let mut a = vec!["plot", "--suite", suite];
        a.extend_from_slice(args);
        super::common::shadegate(&a, &dir)
    };
    let fonts = plot::font().is_ok();
    let map = out("map.png");
    let r = plot(&[
        "ggx_distribution",
        "--measure",
        "ulp",
        "--scale",
        "cividis",
        "--output",
        &map,
    ]);
    if !fonts && std::env::var_os("CI").is_none() {
        eprintln!("skipped: no font");
        return;
    }
    assert!(r.status.success(), "{}", String::from_utf8_lossy(&r.stderr));
    let png = std::fs::read(&map).unwrap();
    // The PNG signature, then IHDR with the map's 640 x 420 pixels (PNG specification,
    // W3C/ISO 15948: width and height are the first two big-endian words of IHDR).
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    assert_eq!(&png[12..16], b"IHDR");
    assert_eq!(u32::from_be_bytes(png[16..20].try_into().unwrap()), 640);
    assert_eq!(u32::from_be_bytes(png[20..24].try_into().unwrap()), 420);

    let lobes = out("lobes.svg");
    let r = plot(&[
        "brdf_full",
        "--kind",
        "lobes",
        "--roughness",
        "0.2,0.6",
        "--view-angle",
        "45",
        "--output",
        &lobes,
    ]);
    assert!(r.status.success(), "{}", String::from_utf8_lossy(&r.stderr));
    let svg = std::fs::read_to_string(&lobes).unwrap();
    assert!(
        svg.contains("view at 45°") && svg.contains("roughness 0.2"),
        "{svg:.300}"
    );

    let range = out("range.svg");
    let r = plot(&[
        "schlick_in_unit_range",
        "--kind",
        "property",
        "--output",
        &range,
    ]);
    assert!(r.status.success(), "{}", String::from_utf8_lossy(&r.stderr));
    let svg = std::fs::read_to_string(&range).unwrap();
    assert!(svg.contains("result in [0, 1]"), "{svg:.300}");

    for (args, message) in [
        (
            vec!["ggx_distribution", "--output", "map.jpg"],
            "end it in .svg or .png",
        ),
        (
            vec!["no_such_check", "--output", "x.svg"],
            "no check named `no_such_check`",
        ),
        (
            vec![
                "ggx_distribution",
                "--kind",
                "property",
                "--output",
                "x.svg",
            ],
            "has no `property` to draw",
        ),
        (
            vec![
                "ggx_distribution",
                "--x",
                "n_dot_h",
                "--y",
                "n_dot_h",
                "--output",
                "x.svg",
            ],
            "two different parameters",
        ),
        (
            vec!["ggx_distribution", "--x", "nope", "--output", "x.svg"],
            "no sweep parameter `nope`",
        ),
        (
            vec![
                "brdf_full",
                "--kind",
                "lobes",
                "--view-angle",
                "95",
                "--output",
                "x.svg",
            ],
            "not in [0, 90)",
        ),
    ] {
        let r = plot(&args);
        let err = String::from_utf8_lossy(&r.stderr);
        assert_eq!(r.status.code(), Some(2), "{args:?}: {err}");
        assert!(err.contains(message), "{args:?}: {err}");
    }
    assert!(!dir.join("map.jpg").exists() && !dir.join("x.svg").exists());
}
