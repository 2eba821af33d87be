//! Every f32 value through one check: the Quillmere demo's `srgb_encode`
//! against the f64 sRGB model over every finite f32 (4,278,190,081 points,
//! −0 counted once), streamed by the gate in bounded memory. It prints the
//! estimate and progress lines `shadegate run` prints, then the time, the
//! rate and the peak resident memory.
//!
//! Run: `cargo run --release --example exhaustive` (add `-- --range LO HI`
//! for a narrower range, e.g. `-- --range 0 1`).
use std::time::Instant;

use shadegate::gate;
use shadegate::report::Pace;

fn peak_rss_mib() -> f64 {
    let status = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    status
        .lines()
        .find_map(|l| l.strip_prefix("VmHWM:"))
        .and_then(|v| v.split_whitespace().next()?.parse::<f64>().ok())
        .map_or(f64::NAN, |kib| kib / 1024.0)
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let (lo, hi) = match args.iter().position(|a| a == "--range") {
        Some(i) => (
            args.get(i + 1).and_then(|s| s.parse::<f64>().ok()),
            args.get(i + 2).and_then(|s| s.parse::<f64>().ok()),
        ),
        None => (Some(-f64::from(f32::MAX)), Some(f64::from(f32::MAX))),
    };
    let (Some(lo), Some(hi)) = (lo, hi) else {
        panic!("--range takes two numbers");
    };
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
    let dir = std::env::temp_dir().join(format!("shadegate-exhaustive-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("a scratch folder");
    std::fs::copy(
        root.join("demos/quillmere/shaders/harbour.wgsl"),
        dir.join("harbour.wgsl"),
    )
    .expect("the demo library");
    let suite_text = format!(
        r#"[limits]
points_per_check = 5000000000

[[check]]
name = "srgb_every_f32"
shader = "harbour.wgsl"
function = "srgb_encode"
reference = "srgb_encode"
reference_args = {{ x = "c" }}
[check.sweep]
c = {{ every_f32 = [{lo:?}, {hi:?}] }}
[check.tolerance]
rel = 1e-6
abs = 1e-7
reason = "pow in f32"
"#
    );
    let path = dir.join("shadegate.toml");
    std::fs::write(&path, suite_text).expect("the suite");
    let s = shadegate::suite::load(&path).unwrap_or_else(|d| panic!("{d}"));
    let check = &s.checks[0];
    let pace = Pace::new(Box::new(std::io::stderr()));
    pace.begin(&check.name);
    let rss_before = peak_rss_mib();
    let t = Instant::now();
    let r = gate::run_check_with(
        &s,
        check,
        None,
        gate::explain::EXPLAINERS,
        Some(&|done, total| pace.points(done, total)),
    );
    let secs = t.elapsed().as_secs_f64();
    let _ = std::fs::remove_dir_all(&dir);
    println!(
        "srgb_encode over every f32 in [{lo:e}, {hi:e}]: {} points, {:?}{}",
        r.points,
        r.verdict,
        r.error
            .as_deref()
            .map_or(String::new(), |e| format!(" ({e})"))
    );
    if let Some(c) = r.comparisons.first() {
        println!(
            "  failing {} ({:.3} %), non-finite {}, worst {}",
            c.stats.failed,
            100.0 * c.stats.fail_share,
            c.stats.nonfinite,
            c.stats
                .worst
                .as_ref()
                .map_or("none".to_string(), |w| format!(
                    "at {}: got {:?}, want {:?}",
                    w.params, w.got, w.want
                ))
        );
    }
    for f in &r.findings {
        println!("  finding: {}", shadegate::report::format::finding(f));
    }
    println!(
        "  {:.1} s, {:.1} M points/s on {} threads; peak RSS {:.0} MiB ({:.0} MiB before the check)",
        secs,
        r.points as f64 / secs / 1e6,
        rayon::current_num_threads(),
        peak_rss_mib(),
        rss_before
    );
}
