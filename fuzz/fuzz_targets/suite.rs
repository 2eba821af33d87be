//! The suite file: any text must give validated checks or a located error,
//! never a panic; every check that parses has a sweep whose size is within
//! the limits (so generating it is bounded).
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;
use shadegate::suite;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    match suite::parse(Path::new("fuzz/shadegate.toml"), text) {
        Ok(s) => {
            for c in &s.checks {
                let n = c.sweep.len();
                assert!(n as u64 <= s.limits.points_per_check);
                // Generate small sweeps only, so the target stays fast.
                if n <= 4096 {
                    let p = c.sweep.points();
                    assert_eq!(p.len, n);
                }
            }
        }
        Err(d) => assert!(d.line >= 1, "suite error without a line: {}", d.rendered),
    }
});
