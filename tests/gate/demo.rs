//! The demo suite (shadegate.toml at the root, the Brackenfold material
//! preview) passes, and its summary statistics are pinned as an insta
//! snapshot so numeric drift shows up in code review. Numbers are printed
//! with 3 significant digits: the f64 reference uses the platform's libm, whose
//! last bits may differ between platforms.

use std::fmt::Write as _;
use std::path::Path;

use shadegate::gate::{self, Verdict};

fn sig(x: f64) -> String {
    if x.is_infinite() {
        "inf".into()
    } else if x == 0.0 {
        "0".into()
    } else {
        format!("{x:.2e}")
    }
}

#[test]
fn the_demo_suite_passes_with_pinned_statistics() {
    let suite = shadegate::suite::load(Path::new(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/shadegate.toml"
    )))
    .unwrap_or_else(|d| panic!("{d}"));
    let run = gate::run(&suite, None, |_, _, _| {});
    let mut summary = String::new();
    for c in &run.checks {
        assert_eq!(
            c.verdict,
            Verdict::Pass,
            "{} failed: {:?} {:#?}",
            c.name,
            c.error,
            c.findings
        );
        writeln!(
            summary,
            "{} ({}::{}, {} points)",
            c.name, c.shader, c.function, c.points
        )
        .unwrap();
        for cmp in &c.comparisons {
            let s = &cmp.stats;
            writeln!(
                summary,
                "  vs {}: failed {}, max abs {}, max rel {}, max ulp {}, rms {}, headroom {}, changed {:?}",
                cmp.against,
                s.failed,
                sig(s.max_abs),
                sig(s.max_rel),
                sig(s.max_ulp),
                sig(s.rms_abs),
                sig(s.headroom),
                s.changed
            )
            .unwrap();
        }
        for i in &c.issues {
            writeln!(
                summary,
                "  issue: {} at {} ({} points)",
                i.message, i.location, i.count
            )
            .unwrap();
        }
    }
    // The full-BRDF check is the dense one: at least a million points.
    let full = run.checks.iter().find(|c| c.name == "brdf_full").unwrap();
    assert!(full.points >= 1_000_000, "{}", full.points);
    insta::assert_snapshot!("demo_suite_summary", summary);
}
