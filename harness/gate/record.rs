//! Recording a check's golden dataset (refused under `CI`).

use std::path::PathBuf;

use super::inputs::evaluate;
use crate::golden::{self, Golden, Header};
use crate::limits::Limit;
use crate::suite::{Check, Suite};

/// What [`record`] wrote.
#[derive(Clone, Debug)]
pub struct Recorded {
    /// The golden's path.
    pub path: PathBuf,
    /// Its size in bytes.
    pub bytes: u64,
    /// The readable summary beside a compact golden.
    pub summary: Option<PathBuf>,
    /// Set when the golden is larger than the suite's `golden_size` limit:
    /// the check, the size, the limit, and how to raise it or shrink the
    /// golden. The caller shows it; the golden is written all the same.
    pub warning: Option<String>,
}

/// Record the golden dataset of a check (refused under `CI`), in the format
/// its path's extension chooses ([`golden::Format`]).
pub fn record(suite: &Suite, check: &Check) -> Result<Recorded, String> {
    let Some(gpath) = &check.golden else {
        return Err(format!(
            "check `{}` has no `golden` dataset to record",
            check.name
        ));
    };
    if golden::refused_in_ci() {
        return Err("refusing to record goldens because the CI environment variable is set; record them locally and commit them".into());
    }
    let ev = evaluate(suite, check, None)?;
    let g = Golden {
        header: Header {
            check: check.name.clone(),
            shader: check.shader_label(),
            function: check.function.clone(),
            shader_hash: ev.shader_hash(),
            sweep: check.sweep.to_string(),
            points: ev.points.len,
        },
        inputs: ev.inputs.to_vec(),
        outputs: ev.outputs.to_vec(),
        input_columns: ev.input_columns,
        output_columns: ev.output_columns,
    };
    let w = golden::write_in(&suite.root, gpath, &g, suite.golden_outside)?;
    let limit = suite.limits.golden_size;
    let warning = (w.bytes > limit).then(|| {
        let l = Limit::GoldenSize;
        let switch = match golden::Format::of(gpath) {
            golden::Format::Csv => {
                let mut compact = gpath.clone();
                compact.set_extension(golden::compact::EXTENSION);
                format!(
                    ", or record it in the compact format (`golden = \"{}\"`)",
                    compact.display()
                )
            }
            golden::Format::Compact => String::new(),
        };
        format!(
            "check `{}`: the golden {} is {} bytes, above the `{l}` limit of {limit} bytes; {}{switch}",
            check.name,
            w.path.display(),
            w.bytes,
            l.how_to_raise()
        )
    });
    Ok(Recorded {
        path: w.path,
        bytes: w.bytes,
        summary: w.summary,
        warning,
    })
}
