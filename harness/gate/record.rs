//! Recording a check's golden dataset (refused under `CI`).

use std::path::PathBuf;

use super::inputs::evaluate;
use crate::golden::{self, Golden, Header};
use crate::suite::{Check, Suite};

/// Record the golden dataset of a check (refused under `CI`).
pub fn record(suite: &Suite, check: &Check) -> Result<PathBuf, String> {
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
            shader_hash: ev.shader_hash.clone(),
            sweep: check.sweep.to_string(),
            points: ev.points.len,
        },
        inputs: ev.inputs,
        outputs: ev.outputs,
        input_columns: ev.input_columns,
        output_columns: ev.output_columns,
    };
    golden::write_in(&suite.root, gpath, &g, suite.golden_outside)
}
