//! Argument shapes on the device: a struct parameter, a vec4 and a matrix,
//! and `ptr<function, T>` out-parameters (with and without a return value)
//! run through the generated entry point and give the CPU evaluator's bits
//! (every operation here is exact or correctly rounded in WGSL: +, *, and
//! floor, per the spec's accuracy table, so the two back ends agree exactly).
#![cfg(feature = "gpu")]

use crate::common as gpu_common;

use std::collections::BTreeMap;

use shadegate::eval::{f64_to_bits, Program, ScalarKind};
use shadegate::wgsl::Shader;

const SRC: &str = r#"
struct Material { base: vec3<f32>, roughness: f32 }
fn shade(m: Material, c: vec4<f32>, xf: mat2x2<f32>) -> f32 {
    return m.base.y * m.roughness + c.w * xf[1].x;
}
fn split(x: f32, whole: ptr<function, f32>) { *whole = floor(x); }
fn both(x: f32, acc: ptr<function, vec2<f32>>) -> f32 {
    *acc = *acc + vec2<f32>(x, 2.0 * x);
    return x - floor(x);
}
"#;

fn column(values: &[f32]) -> Vec<u32> {
    values
        .iter()
        .map(|&v| f64_to_bits(ScalarKind::F32, f64::from(v)))
        .collect()
}

#[test]
fn structs_matrices_and_out_parameters_match_the_cpu_bit_for_bit() {
    let Some(dev) = gpu_common::device() else {
        return;
    };
    let shader = Shader::from_source("shapes.wgsl", SRC.to_string()).unwrap();
    let xs = [0.25f32, 1.5, -2.75, 3.0];
    for (function, inputs) in [
        // Material (4 leaves), vec4 (4), mat2x2 (4).
        ("shade", 12usize),
        ("split", 2),
        ("both", 3),
    ] {
        let cols: Vec<Vec<u32>> = (0..inputs)
            .map(|k| column(&xs.map(|x| x * (k as f32 + 1.0))))
            .collect();
        let refs: Vec<&[u32]> = cols.iter().map(|c| c.as_slice()).collect();
        let program = Program::compile(&shader, function, &BTreeMap::new()).unwrap();
        assert_eq!(program.input_leaves().len(), inputs, "{function}");
        let mut cpu = Vec::new();
        let issues = program.try_eval(&refs, &mut cpu).unwrap();
        assert!(issues.is_empty(), "{function}: {issues:?}");
        let gpu = dev
            .eval(&shader, function, &BTreeMap::new(), &refs)
            .unwrap_or_else(|e| panic!("{function}: {e}"));
        assert_eq!(gpu, cpu, "{function}: device against the CPU evaluator");
        assert_eq!(gpu.len(), program.output_leaves().len(), "{function}");
    }
}
