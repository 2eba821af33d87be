//! Point tables for `shadegate eval`: reading a function's inputs from a CSV
//! file or from `name=value,...` points, and writing inputs and results as
//! CSV. Every error names the file (or the point) and line. Values are read for
//! their leaf's type with [`crate::eval::parse_value`] (strict integers, one rounding
//! to f32, bit patterns).

use std::collections::BTreeMap;
use std::path::Path;

use crate::eval::{Program, ScalarKind};

/// `name=value` overrides (as given on the command line) by name.
pub fn parse_overrides(list: &[String]) -> Result<BTreeMap<String, f64>, String> {
    let mut out = BTreeMap::new();
    for o in list {
        let (k, v) = o
            .split_once('=')
            .ok_or_else(|| format!("--override `{o}`: expected name=value"))?;
        let v: f64 = v
            .trim()
            .parse()
            .map_err(|_| format!("--override `{o}`: `{v}` is not a number"))?;
        out.insert(k.trim().to_string(), v);
    }
    Ok(out)
}

/// Input columns of `program` from points written `name=value,...`
/// (vectors as `n=0;0;1`), one per entry of `points`.
pub fn columns_of_points(program: &Program, points: &[String]) -> Result<Vec<Vec<u32>>, String> {
    let mut cols: Vec<Vec<u32>> = vec![Vec::new(); program.input_leaves().len()];
    for (pi, p) in points.iter().enumerate() {
        let mut given: BTreeMap<String, Vec<&str>> = BTreeMap::new();
        for part in p.split(',') {
            let (k, v) = part
                .split_once('=')
                .ok_or_else(|| format!("--point `{p}`: expected name=value,..."))?;
            let vals = v.split(';').collect();
            given.insert(k.trim().to_string(), vals);
        }
        let mut used = 0;
        for (name, ty) in program.params() {
            let vals = given
                .get(name)
                .ok_or_else(|| format!("--point {}: missing argument `{name}` ({ty})", pi + 1))?;
            if vals.len() != ty.leaf_count() {
                return Err(format!(
                    "--point {}: `{name}` is {ty} and needs {} value(s) separated by `;`, got {}",
                    pi + 1,
                    ty.leaf_count(),
                    vals.len()
                ));
            }
            for (k, v) in ty.leaves().into_iter().zip(vals) {
                // Read for the leaf's own type: strict integers, one rounding to f32.
                let bits = crate::eval::parse_value(k, v)
                    .map_err(|e| format!("--point {}: `{name}`: {e}", pi + 1))?;
                cols[used].push(bits);
                used += 1;
            }
        }
        if let Some(extra) = given
            .keys()
            .find(|k| !program.params().iter().any(|(n, _)| n == *k))
        {
            return Err(format!(
                "--point {}: `{}` has no argument `{extra}`",
                pi + 1,
                program.function()
            ));
        }
    }
    Ok(cols)
}

/// Input columns for `leaves` from a CSV file with one column per leaf
/// (other columns are ignored).
pub fn read_csv(path: &Path, leaves: &[(String, ScalarKind)]) -> Result<Vec<Vec<u32>>, String> {
    let mut cols: Vec<Vec<u32>> = vec![Vec::new(); leaves.len()];
    let mut r = csv::Reader::from_path(path).map_err(|e| format!("{}: {e}", path.display()))?;
    let headers = r
        .headers()
        .map_err(|e| format!("{}:1: {e}", path.display()))?
        .clone();
    let mut index = Vec::new();
    for (name, _) in leaves {
        let i = headers
            .iter()
            .position(|h| h.trim() == name)
            .ok_or_else(|| {
                format!(
                    "{}:1: no column `{name}` (the function's inputs are: {})",
                    path.display(),
                    leaves
                        .iter()
                        .map(|l| l.0.as_str())
                        .collect::<Vec<_>>()
                        .join(", ")
                )
            })?;
        index.push(i);
    }
    for (row, rec) in r.records().enumerate() {
        let line = row + 2;
        let rec = rec.map_err(|e| format!("{}:{line}: {e}", path.display()))?;
        for (j, (&i, (name, k))) in index.iter().zip(leaves).enumerate() {
            let text = rec
                .get(i)
                .ok_or_else(|| format!("{}:{line}: missing value for `{name}`", path.display()))?;
            let bits = crate::eval::parse_value(*k, text)
                .map_err(|e| format!("{}:{line}: column `{name}`: {e}", path.display()))?;
            cols[j].push(bits);
        }
    }
    Ok(cols)
}

/// CSV text with a header of leaf names and one row per point. Floats are
/// written as the shortest text that reads back to the same f32/f16.
pub fn write_csv(leaves: &[(String, ScalarKind)], cols: &[Vec<u32>]) -> Result<String, String> {
    write_csv_with(leaves, cols, false, None)
}

/// [`write_csv`] with floats as bit patterns when `bits` (`0x3f800000`), and `extra`
/// columns (their names, and one row of texts per point) after the leaves.
pub fn write_csv_with(
    leaves: &[(String, ScalarKind)],
    cols: &[Vec<u32>],
    bits: bool,
    extra: Option<(&[String], &[Vec<String>])>,
) -> Result<String, String> {
    let mut w = csv::Writer::from_writer(Vec::new());
    let (extra_names, extra_rows) = extra.unwrap_or((&[], &[]));
    w.write_record(
        leaves
            .iter()
            .map(|(n, _)| n.as_str())
            .chain(extra_names.iter().map(String::as_str)),
    )
    .map_err(|e| e.to_string())?;
    let n = cols.first().map_or(0, |c| c.len());
    for i in 0..n {
        let row = leaves
            .iter()
            .zip(cols)
            .map(|((_, k), c)| crate::eval::format_value(*k, c[i], bits))
            .chain(extra_rows.get(i).cloned().unwrap_or_default());
        w.write_record(row).map_err(|e| e.to_string())?;
    }
    let bytes = w.into_inner().map_err(|e| e.to_string())?;
    Ok(String::from_utf8_lossy(&bytes).into_owned())
}
