//! The generated compute entry point, checked without a device: for every
//! function of the GPU corpus the wrapped module parses and validates
//! with naga, and its leaves are the CPU evaluator's leaves in the same
//! order. Also the refusals (unknown function, resources, pointer
//! parameters) and the dispatch planning arithmetic.
#![cfg(feature = "gpu")]

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use naga::valid::{Capabilities, ValidationFlags, Validator};
use shadegate::eval::Program;
use shadegate::gpu::{self, chunk_points, grid, DispatchLimits, WORKGROUP_SIZE};
use shadegate::wgsl::Shader;

fn corpus() -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/gpu/corpus_wgsl");
    let mut files: Vec<PathBuf> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("cannot read {}: {e}", dir.display()))
        .map(|e| e.expect("directory entry").path())
        .filter(|p| p.extension().is_some_and(|x| x == "wgsl"))
        .collect();
    files.sort();
    files
}

fn validate(path: &Path, function: &str, source: &str) {
    let module = naga::front::wgsl::parse_str(source).unwrap_or_else(|e| {
        panic!(
            "{}: wrapped `{function}` does not parse:\n{}\n{source}",
            path.display(),
            e.emit_to_string(source)
        )
    });
    let caps = Capabilities::SHADER_FLOAT16 | Capabilities::SHADER_FLOAT16_IN_FLOAT32;
    Validator::new(ValidationFlags::all(), caps)
        .validate(&module)
        .unwrap_or_else(|e| {
            panic!(
                "{}: wrapped `{function}` does not validate:\n{}\n{source}",
                path.display(),
                e.emit_to_string(source)
            )
        });
}

#[test]
fn every_corpus_function_wraps_into_a_valid_module_with_the_evaluators_leaves() {
    let mut wrapped = 0;
    for path in corpus() {
        let shader = Shader::load(&path).unwrap_or_else(|d| panic!("{d}"));
        for name in shader.function_names() {
            let w = match gpu::wrap(&shader, &name) {
                Ok(w) => w,
                // Helpers with pointer parameters or without a result are
                // called by the corpus functions, not run on the GPU themselves.
                Err(e) if e.0.contains("pointer") || e.0.contains("returns nothing") => continue,
                Err(e) => panic!("{}: `{name}`: {e}", path.display()),
            };
            validate(&path, &name, &w.source);
            let program = match Program::compile(&shader, &name, &BTreeMap::new()) {
                Ok(p) => p,
                Err(d) => panic!(
                    "{}: `{name}` does not compile on the CPU: {d}",
                    path.display()
                ),
            };
            let cpu_in: Vec<_> = program.input_leaves().iter().map(|l| l.1).collect();
            let cpu_out: Vec<_> = program.output_leaves().iter().map(|l| l.1).collect();
            assert_eq!(w.input_kinds, cpu_in, "{}: `{name}` inputs", path.display());
            assert_eq!(
                w.output_kinds,
                cpu_out,
                "{}: `{name}` outputs",
                path.display()
            );
            assert_eq!(w.params, program.params(), "{}: `{name}`", path.display());
            assert!(
                w.source.starts_with(&shader.source),
                "original source first"
            );
            wrapped += 1;
        }
    }
    assert!(wrapped >= 40, "only {wrapped} corpus functions wrapped");
}

fn shader(src: &str) -> Shader {
    Shader::from_source("inline.wgsl", src.to_string()).unwrap_or_else(|d| panic!("{d}"))
}

#[test]
fn leaves_are_read_in_evaluator_order_for_nested_types() {
    let s = shader(
        "struct Inner { a: vec2<f32>, b: u32 }\n\
         struct Outer { m: mat2x3<f32>, xs: array<Inner, 2>, on: bool }\n\
         fn f(o: Outer, k: i32) -> Outer { return o; }\n",
    );
    let w = gpu::wrap(&s, "f").expect("wraps");
    validate(Path::new("inline.wgsl"), "f", &w.source);
    // m: 6 leaves, xs: 2 x 3, on: 1, then k.
    assert_eq!(w.input_kinds.len(), 6 + 6 + 1 + 1);
    // The matrix is rebuilt column by column from leaves 0..6.
    assert!(w
        .source
        .contains("mat2x3<f32>(vec3<f32>(bitcast<f32>(shadegate_gpu_in[0u"));
    assert!(w.source.contains("shadegate_gpu_in[13u * shadegate_gpu_n"));
    // The result's bool is stored as 0/1 at leaf 12.
    assert!(w.source.contains(
        "shadegate_gpu_out[12u * shadegate_gpu_n + shadegate_gpu_i] = select(0u, 1u, shadegate_gpu_r.on);"
    ));
}

#[test]
fn f16_leaves_use_the_low_half_and_need_the_feature() {
    let s = shader("enable f16;\nfn h(x: f16) -> vec2<f16> { return vec2<f16>(x, -x); }\n");
    let w = gpu::wrap(&s, "h").expect("wraps");
    validate(Path::new("inline.wgsl"), "h", &w.source);
    assert!(w.uses_f16);
    assert!(w.source.contains("shadegate_gpu_f16(shadegate_gpu_in[0u"));
    assert!(w
        .source
        .contains("= shadegate_gpu_f16_bits(shadegate_gpu_r.y);"));
    let s = shader("fn g(x: f32) -> f32 { return x; }\n");
    assert!(!gpu::wrap(&s, "g").expect("wraps").uses_f16);
}

#[test]
fn refuses_what_cannot_be_fed_and_says_why_and_feeds_pointers() {
    let s = shader(
        "@group(0) @binding(0) var<uniform> scale: f32;\n\
         fn scaled(x: f32) -> f32 { return x * scale; }\n\
         fn by_ptr(p: ptr<function, f32>) -> f32 { return *p; }\n\
         fn nothing(x: f32) { }\n",
    );
    let e = gpu::wrap(&s, "missing").unwrap_err().0;
    assert!(
        e.contains("no function named `missing`") && e.contains("scaled"),
        "{e}"
    );
    let e = gpu::wrap(&s, "scaled").unwrap_err().0;
    assert!(e.contains("resource `scale`"), "{e}");
    // A `ptr<function, T>` parameter is fed (a `var` of the entry point)
    // and read back after the result, as the CPU evaluator does.
    let w = gpu::wrap(&s, "by_ptr").expect("wraps");
    assert_eq!(w.output_kinds.len(), 2);
    assert!(
        w.source.contains("by_ptr(&shadegate_gpu_a0)"),
        "{}",
        w.source
    );
    let e = gpu::wrap(&s, "nothing").unwrap_err().0;
    assert!(
        e.contains("returns nothing and writes through no pointer"),
        "{e}"
    );
}

#[test]
fn generated_names_and_group_avoid_the_module_s_own() {
    let s = shader(
        "@group(0) @binding(0) var<storage> shadegate_gpu_in: array<u32>;\n\
         fn f(x: u32) -> u32 { return x; }\n",
    );
    let w = gpu::wrap(&s, "f").expect("wraps");
    assert_eq!(w.group, 1, "group 0 is the module's");
    assert!(
        w.entry_point.starts_with("shadegate_gpu1_"),
        "{}",
        w.entry_point
    );
    validate(Path::new("inline.wgsl"), "f", &w.source);
}

#[test]
fn dispatch_grid_covers_every_point_within_the_workgroup_limit() {
    for &(points, max) in &[
        (1usize, 65535u32),
        (64, 65535),
        (65, 65535),
        (500, 3),
        (4_194_240, 65535),
        (4_194_305, 65535),
    ] {
        let g = grid(points, max);
        assert!(
            g.x <= max && g.y <= max,
            "{points} points, limit {max}: {g:?}"
        );
        let covered = u64::from(g.x) * u64::from(g.y) * u64::from(WORKGROUP_SIZE);
        assert!(covered >= points as u64, "{points} points: {g:?}");
        assert_eq!(g.row, g.x * WORKGROUP_SIZE);
        // No more than one row of invocations beyond the last point.
        assert!(
            covered - (points as u64) < u64::from(g.row),
            "{points}: {g:?}"
        );
    }
}

#[test]
fn chunks_respect_the_binding_size_and_our_cap() {
    let limits = DispatchLimits {
        max_binding_bytes: 128 << 20,
        max_workgroups_per_dimension: 65535,
        max_points_per_dispatch: usize::MAX,
    };
    // 8 words per point: 128 MiB / 32 bytes.
    assert_eq!(chunk_points(&limits, 8, 2), 4 << 20);
    assert_eq!(chunk_points(&limits, 1, 16), 2 << 20);
    let capped = DispatchLimits {
        max_points_per_dispatch: 1000,
        ..limits
    };
    assert_eq!(chunk_points(&capped, 8, 2), 1000);
    let tiny_grid = DispatchLimits {
        max_workgroups_per_dimension: 2,
        ..limits
    };
    assert_eq!(
        chunk_points(&tiny_grid, 1, 1),
        2 * 2 * WORKGROUP_SIZE as usize
    );
}
