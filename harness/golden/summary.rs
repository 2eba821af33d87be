//! The readable summary `record` writes beside a compact golden
//! (`<name>.golden.txt`), so a reviewer sees in a diff what changed:
//!
//! ```text
//! # shadegate compact golden summary, format 1
//! # check: brdf_full
//! ... the golden's header lines ...
//! # file: brdf_full.golden, 5,123,456 bytes, blocks of 4096 points
//!
//! column,min,max,mean,non-finite
//! result.x:f32,0,51234.5,0.731...,0
//!
//! sample: 17 rows, every 65536th point and the last
//! point,v.x:f32,...,result.x:f32,...
//! 0,0,...
//! ```
//!
//! Min, max and mean are over the finite values of a column (the mean in
//! f64, summed in point order); values are in the exact text form of a CSV
//! golden ([`crate::values::format_exact`]), so a changed bit shows.

use std::path::{Path, PathBuf};

use super::Golden;
use crate::values::{bits_to_f64, format_exact, ScalarKind};

/// The first line of a summary.
pub const MAGIC: &str = "# shadegate compact golden summary, format 1";

/// Rows of the sample (evenly spaced, the first and last point included).
pub const SAMPLE_ROWS: usize = 17;

/// The summary's path beside the golden at `golden`: `<name>.golden.txt`.
pub fn path_of(golden: &Path) -> PathBuf {
    let mut name = golden.file_name().unwrap_or_default().to_os_string();
    name.push(".txt");
    golden.with_file_name(name)
}

fn col_name(c: &(String, ScalarKind)) -> String {
    format!("{}:{}", c.0, c.1.wgsl())
}

/// The summary of golden `g` written to `path` with `bytes` bytes.
pub fn render(g: &Golden, path: &Path, bytes: u64) -> String {
    let h = &g.header;
    let mut t = String::new();
    t.push_str(MAGIC);
    t.push('\n');
    t.push_str(&h.lines());
    let name = path.file_name().unwrap_or_default().to_string_lossy();
    t.push_str(&format!(
        "# file: {name}, {bytes} bytes, blocks of {} points\n\n",
        super::compact::BLOCK_POINTS
    ));
    t.push_str("column,min,max,mean,non-finite\n");
    for (c, col) in g.outputs.iter().zip(&g.output_columns) {
        let kind = c.1;
        let mut min: Option<(f64, u32)> = None;
        let mut max: Option<(f64, u32)> = None;
        let mut sum = 0.0f64;
        let mut finite = 0usize;
        for &b in col {
            let x = bits_to_f64(kind, b);
            if !x.is_finite() {
                continue;
            }
            finite += 1;
            sum += x;
            if min.is_none_or(|(m, _)| x < m) {
                min = Some((x, b));
            }
            if max.is_none_or(|(m, _)| x > m) {
                max = Some((x, b));
            }
        }
        let show =
            |v: Option<(f64, u32)>| v.map_or("-".to_string(), |(_, b)| format_exact(kind, b));
        let mean = if finite == 0 {
            "-".to_string()
        } else {
            format!("{}", sum / finite as f64)
        };
        t.push_str(&format!(
            "{},{},{},{mean},{}\n",
            col_name(c),
            show(min),
            show(max),
            col.len() - finite
        ));
    }
    let n = h.points;
    let rows: Vec<usize> = if n <= SAMPLE_ROWS {
        (0..n).collect()
    } else {
        let mut r: Vec<usize> = (0..SAMPLE_ROWS - 1)
            .map(|k| k * (n / (SAMPLE_ROWS - 1)))
            .collect();
        r.push(n - 1);
        r
    };
    let step = if n <= SAMPLE_ROWS {
        "every point".to_string()
    } else {
        format!("every {}th point and the last", n / (SAMPLE_ROWS - 1))
    };
    t.push_str(&format!("\nsample: {} rows, {step}\npoint", rows.len()));
    for c in g.inputs.iter().chain(&g.outputs) {
        t.push(',');
        t.push_str(&col_name(c));
    }
    t.push('\n');
    let kinds: Vec<ScalarKind> = g.inputs.iter().chain(&g.outputs).map(|c| c.1).collect();
    let cols: Vec<&Vec<u32>> = g.input_columns.iter().chain(&g.output_columns).collect();
    for i in rows {
        t.push_str(&i.to_string());
        for (c, k) in cols.iter().zip(&kinds) {
            t.push(',');
            t.push_str(&format_exact(*k, c[i]));
        }
        t.push('\n');
    }
    t
}
