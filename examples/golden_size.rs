//! Size and speed of a golden in both formats: the demo suite's `brdf_full`
//! check (1,048,576 points, a `vec3<f32>` result) recorded by the record
//! command into a temporary folder as CSV and as a compact golden, then read
//! whole and compared by the gate, in one run; times as ratios. Issue 17's
//! target: the compact golden of a 1M-point check under 8 MB.
//!
//! Run: `cargo run --release --example golden_size`.
use std::path::Path;
use std::time::Instant;

use shadegate::gate;
use shadegate::golden;
use shadegate::suite;

fn best<T>(runs: usize, mut f: impl FnMut() -> T) -> (f64, T) {
    let mut best = f64::INFINITY;
    let mut last = None;
    for _ in 0..runs {
        let t = Instant::now();
        let r = f();
        best = best.min(t.elapsed().as_secs_f64());
        last = Some(r);
    }
    (best, last.expect("at least one run"))
}

fn main() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut s = suite::load(&root.join("shadegate.toml")).unwrap_or_else(|d| panic!("{d}"));
    // The goldens go to a temporary folder, outside the suite's.
    s.golden_outside = true;
    let mut check = s
        .checks
        .iter()
        .find(|c| c.name == "brdf_full")
        .expect("the demo suite has brdf_full")
        .clone();
    // Only the golden comparison: the check's time is the evaluation plus
    // reading and comparing the golden.
    check.reference = None;
    check.reference_expr = None;
    let dir = std::env::temp_dir().join(format!("shadegate-golden-size-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temporary folder");
    println!("brdf_full: {} points", check.sweep.len());
    let mut rows = Vec::new();
    for ext in ["csv", "golden"] {
        let path = dir.join(format!("brdf_full.{ext}"));
        check.golden = Some(path.clone());
        let (record_s, rec) = best(1, || {
            gate::record(&s, &check).unwrap_or_else(|e| panic!("{e}"))
        });
        let (read_s, cols) = best(3, || {
            let g = golden::open(&path, &s.limits).unwrap_or_else(|d| panic!("{d}"));
            g.read_outputs(0..g.len()).unwrap_or_else(|d| panic!("{d}"))
        });
        // A range of 4,096 points in the middle: one block of the compact one.
        let mid = cols[0].len() / 2;
        let (range_s, _) = best(5, || {
            let g = golden::open(&path, &s.limits).unwrap_or_else(|d| panic!("{d}"));
            g.read_outputs(mid..mid + 4096)
                .unwrap_or_else(|d| panic!("{d}"))
        });
        let (check_s, r) = best(3, || gate::run_check(&s, &check));
        let c = r
            .comparisons
            .iter()
            .find(|c| c.against.starts_with("golden"))
            .expect("a golden comparison");
        assert!(r.error.is_none(), "{:?}", r.error);
        rows.push((ext, rec.bytes, record_s, read_s, range_s, check_s));
        println!(
            "{ext:>6}: {:>11} bytes ({:.2} MB), record {record_s:.3} s, open + read all {read_s:.3} s, \
             open + read 4,096 points {:.2} ms, whole check {check_s:.3} s, changed bits {}, verdict {:?}{}",
            rec.bytes,
            rec.bytes as f64 / 1e6,
            range_s * 1e3,
            c.stats.changed.map_or("-".to_string(), |b| b.to_string()),
            r.verdict,
            rec.warning.map_or(String::new(), |w| format!("\n        warning: {w}")),
        );
    }
    let (csv, compact) = (rows[0], rows[1]);
    println!(
        "compact / csv: size {:.3}, record {:.2}, read all {:.2}, read 4,096 points {:.4}, whole check {:.2}",
        compact.1 as f64 / csv.1 as f64,
        compact.2 / csv.2,
        compact.3 / csv.3,
        compact.4 / csv.4,
        compact.5 / csv.5,
    );
    println!(
        "compact golden under 8 MB: {} ({:.2} MB; {:.2} bytes per point)",
        compact.1 < 8_000_000,
        compact.1 as f64 / 1e6,
        compact.1 as f64 / check.sweep.len() as f64
    );
    let _ = std::fs::remove_dir_all(&dir);
}
