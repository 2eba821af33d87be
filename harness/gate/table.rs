//! Point tables for `shadegate eval`: reading a function's inputs from a CSV
//! file or from `name=value,...` points, and writing inputs and results as
//! CSV. Every error names the file (or the point) and line.

use std::collections::BTreeMap;
use std::path::Path;

use crate::eval::{bits_to_f64, f64_to_bits, Program, ScalarKind};

/// A value for a leaf: a number, `true` or `false`.
fn parse_num(text: &str, what: &str) -> Result<f64, String> {
    match text.trim() {
        "true" => Ok(1.0),
        "false" => Ok(0.0),
        t => t
            .parse::<f64>()
            .map_err(|_| format!("{what}: `{t}` is not a number")),
    }
}

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
        let mut given: BTreeMap<String, Vec<f64>> = BTreeMap::new();
        for part in p.split(',') {
            let (k, v) = part
                .split_once('=')
                .ok_or_else(|| format!("--point `{p}`: expected name=value,..."))?;
            let vals = v
                .split(';')
                .map(|x| parse_num(x, &format!("--point {}", pi + 1)))
                .collect::<Result<Vec<_>, _>>()?;
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
                cols[used].push(f64_to_bits(k, *v));
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
            let v = parse_num(text, &format!("{}:{line}: column `{name}`", path.display()))?;
            cols[j].push(f64_to_bits(*k, v));
        }
    }
    Ok(cols)
}

/// CSV text with a header of leaf names and one row per point. Floats are
/// written as the shortest text that reads back to the same f32/f16.
pub fn write_csv(leaves: &[(String, ScalarKind)], cols: &[Vec<u32>]) -> Result<String, String> {
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(leaves.iter().map(|(n, _)| n.as_str()))
        .map_err(|e| e.to_string())?;
    let n = cols.first().map_or(0, |c| c.len());
    for i in 0..n {
        let row: Vec<String> = leaves
            .iter()
            .zip(cols)
            .map(|((_, k), c)| {
                let v = bits_to_f64(*k, c[i]);
                if k.is_float() {
                    format!("{:?}", v as f32)
                } else {
                    format!("{v}")
                }
            })
            .collect();
        w.write_record(&row).map_err(|e| e.to_string())?;
    }
    let bytes = w.into_inner().map_err(|e| e.to_string())?;
    Ok(String::from_utf8_lossy(&bytes).into_owned())
}
