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
/// (vectors as `n=0;0;1`, or one value for every component), one per entry of
/// `points`. A struct, matrix or array is given whole (all its leaves,
/// `;`-separated) or by parts named as in the CSV header (`m.base=...`,
/// `m.roughness=...`, `xf[0]=...`); a `ptr<function, T>` parameter not
/// given starts at zero.
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
        let mut used = Vec::new();
        let mut row = Vec::new();
        for (name, ty) in program.params() {
            let out = program.out_params().iter().any(|(n, _)| n == name);
            point_node(pi + 1, name, name, ty, out, &given, &mut used, &mut row)?;
        }
        if let Some(extra) = given.keys().find(|k| !used.contains(k)) {
            let names: Vec<String> = program.input_leaves().into_iter().map(|l| l.0).collect();
            return Err(format!(
                "--point {}: `{}` has no argument or part `{extra}` (its input leaves: {})",
                pi + 1,
                program.function(),
                names.join(", ")
            ));
        }
        for (c, b) in cols.iter_mut().zip(row) {
            c.push(b);
        }
    }
    Ok(cols)
}

/// The values of the value at `path` of one `--point`: its own entry, else
/// its parts', else zeros for an out-parameter.
#[allow(clippy::too_many_arguments)]
fn point_node(
    point: usize,
    param: &str,
    path: &str,
    ty: &crate::eval::Ty,
    out: bool,
    given: &BTreeMap<String, Vec<&str>>,
    used: &mut Vec<String>,
    row: &mut Vec<u32>,
) -> Result<(), String> {
    if let Some(vals) = given.get(path) {
        used.push(path.to_string());
        let n = ty.leaf_count();
        let splat = vals.len() == 1 && matches!(ty, crate::eval::Ty::Vector(..));
        if vals.len() != n && !splat {
            return Err(format!(
                "--point {point}: `{path}` is {ty} and needs {n} value(s) separated by `;`{}, got {}",
                if matches!(ty, crate::eval::Ty::Vector(..)) { " (or one for every component)" } else { "" },
                vals.len()
            ));
        }
        for (i, k) in ty.leaves().into_iter().enumerate() {
            let v = vals[if splat { 0 } else { i }];
            // Read for the leaf's own type: strict integers, one rounding to f32.
            let bits = crate::eval::parse_value(k, v)
                .map_err(|e| format!("--point {point}: `{path}`: {e}"))?;
            row.push(bits);
        }
        return Ok(());
    }
    let parts = super::args::children(path, ty);
    if !parts.is_empty() && given.keys().any(|k| k.starts_with(path)) {
        for (p, _, t) in &parts {
            point_node(point, param, p, t, out, given, used, row)?;
        }
        return Ok(());
    }
    if out {
        for k in ty.leaves() {
            row.push(crate::eval::f64_to_bits(k, 0.0));
        }
        return Ok(());
    }
    let how = if parts.is_empty() {
        String::new()
    } else {
        let names: Vec<&str> = parts.iter().map(|p| p.0.as_str()).collect();
        format!(
            " (all {} values `;`-separated, or its parts: {})",
            ty.leaf_count(),
            names.join(", ")
        )
    };
    if path == param {
        Err(format!(
            "--point {point}: missing argument `{param}` ({ty}){how}"
        ))
    } else {
        Err(format!(
            "--point {point}: missing `{path}` ({ty}) of argument `{param}`{how}"
        ))
    }
}

/// Input columns for `leaves` from a CSV file with one column per leaf
/// (other columns are ignored).
pub fn read_csv(path: &Path, leaves: &[(String, ScalarKind)]) -> Result<Vec<Vec<u32>>, String> {
    read_csv_with(path, leaves, &[])
}

/// [`read_csv`] for `program`'s inputs: the leaves of a `ptr<function, T>`
/// parameter (`*name`, `*name.x`, ...) may be left out (they start at zero).
pub fn read_program_csv(path: &Path, program: &Program) -> Result<Vec<Vec<u32>>, String> {
    let optional: Vec<String> = program
        .out_params()
        .iter()
        .flat_map(|(n, t)| t.leaf_names(&format!("*{n}")))
        .collect();
    read_csv_with(path, &program.input_leaves(), &optional)
}

fn read_csv_with(
    path: &Path,
    leaves: &[(String, ScalarKind)],
    optional: &[String],
) -> Result<Vec<Vec<u32>>, String> {
    let mut cols: Vec<Vec<u32>> = vec![Vec::new(); leaves.len()];
    let mut r = csv::Reader::from_path(path).map_err(|e| format!("{}: {e}", path.display()))?;
    let headers = r
        .headers()
        .map_err(|e| format!("{}:1: {e}", path.display()))?
        .clone();
    let mut index = Vec::new();
    for (name, _) in leaves {
        let found = headers.iter().position(|h| h.trim() == name);
        if found.is_none() && optional.contains(name) {
            index.push(None);
            continue;
        }
        let i = found.ok_or_else(|| {
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
        index.push(Some(i));
    }
    for (row, rec) in r.records().enumerate() {
        let line = row + 2;
        let rec = rec.map_err(|e| format!("{}:{line}: {e}", path.display()))?;
        for (j, (&i, (name, k))) in index.iter().zip(leaves).enumerate() {
            let Some(i) = i else {
                cols[j].push(crate::eval::f64_to_bits(*k, 0.0));
                continue;
            };
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
