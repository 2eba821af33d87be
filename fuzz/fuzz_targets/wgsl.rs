//! WGSL → validate → compile → evaluate. Any text must give a located
//! diagnostic or a program; every function that compiles runs over a few
//! points (fixed bit patterns for every input leaf) without a panic.
#![no_main]

use std::collections::BTreeMap;

use libfuzzer_sys::fuzz_target;
use shadegate::eval::Program;
use shadegate::wgsl::Shader;

/// Input bit patterns: zero, one, -1.5, a NaN, infinity, the smallest
/// subnormal, a large integer, u32::MAX (read as each leaf's kind).
const BITS: [u32; 8] = [
    0,
    0x3f80_0000,
    0xbfc0_0000,
    0x7fc0_0000,
    0x7f80_0000,
    1,
    0x4000_0000,
    u32::MAX,
];

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let Ok(shader) = Shader::from_source("fuzz.wgsl", text.to_string()) else {
        return;
    };
    for name in shader.function_names() {
        let Ok(mut program) = Program::compile(&shader, &name, &BTreeMap::new()) else {
            continue;
        };
        program.set_step_budget(1 << 10);
        let leaves = program.input_leaves();
        let columns: Vec<Vec<u32>> = (0..leaves.len())
            .map(|i| (0..BITS.len()).map(|j| BITS[(i + j) % BITS.len()]).collect())
            .collect();
        let refs: Vec<&[u32]> = columns.iter().map(|c| &c[..]).collect();
        let mut out = Vec::new();
        let _ = program.eval_serial(&refs, &mut out);
    }
});
