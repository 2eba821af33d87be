//! Bad input gets a diagnostic, never a panic: malformed WGSL and validation
//! failures are rendered like a compiler (file, line, column, source snippet,
//! naga's message); asking for a missing function or an undeclared override
//! is an error naming what exists; constructs outside the CPU subset
//! (textures, samplers, derivatives, atomics, barriers, `discard`, uniform
//! and storage buffers) are rejected with "not supported in CPU evaluation",
//! the construct's name and its source position.

use std::collections::BTreeMap;

use shadegate::eval::Program;
use shadegate::wgsl::{Diagnostic, Shader};

fn pos(src: &str, needle: &str) -> (u32, u32) {
    let at = src
        .find(needle)
        .unwrap_or_else(|| panic!("`{needle}` not in source"));
    let line = src[..at].matches('\n').count() as u32 + 1;
    let col = (at - src[..at].rfind('\n').map_or(0, |n| n + 1)) as u32 + 1;
    (line, col)
}

fn load_err(src: &str) -> Diagnostic {
    match Shader::from_source("bad.wgsl", src.to_string()) {
        Ok(_) => panic!("expected a load error for:\n{src}"),
        Err(d) => d,
    }
}

fn compile_err(src: &str, f: &str, overrides: &[(&str, f64)]) -> Diagnostic {
    let sh =
        Shader::from_source("unsupported.wgsl", src.to_string()).unwrap_or_else(|e| panic!("{e}"));
    let map: BTreeMap<String, f64> = overrides.iter().map(|(k, v)| (k.to_string(), *v)).collect();
    match Program::compile(&sh, f, &map) {
        Ok(_) => panic!("expected `{f}` to be rejected"),
        Err(d) => d,
    }
}

/// The rendered diagnostic starts `file:line:col: error:` and shows the
/// offending source line.
#[track_caller]
fn assert_rendered_at(d: &Diagnostic, file: &str, src: &str, (line, col): (u32, u32)) {
    assert_eq!((d.line, d.column), (line, col), "{d}");
    assert_eq!(d.file.to_str(), Some(file));
    let head = format!("{file}:{line}:{col}:");
    assert!(
        d.rendered.starts_with(&head),
        "rendered does not start with {head}:\n{}",
        d.rendered
    );
    let text = src.lines().nth(line as usize - 1).unwrap();
    assert!(
        d.rendered.contains(text),
        "snippet missing:\n{}",
        d.rendered
    );
    assert!(d.rendered.contains('^'), "caret missing:\n{}", d.rendered);
}

#[test]
fn parse_error_is_rendered_with_file_line_column_snippet_and_naga_message() {
    let src = "fn ok() -> f32 { return 1.0; }\nfn broken(x: f32) -> f32 {\n    return x +;\n}\n";
    let d = load_err(src);
    assert_rendered_at(&d, "bad.wgsl", src, pos(src, ";\n}"));
    assert!(
        d.message.contains("expected"),
        "naga's message: {}",
        d.message
    );
    assert!(d.rendered.contains(&d.message), "{}", d.rendered);
}

#[test]
fn parse_error_for_f16_without_the_enable_directive() {
    let src = "fn h(x: f16) -> f16 { return x; }\n";
    let d = load_err(src);
    assert_eq!((d.line, d.column), pos(src, "f16)"));
    assert!(d.message.contains("f16"), "{}", d.message);
}

#[test]
fn parse_error_for_an_unknown_identifier() {
    let src = "fn f(x: f32) -> f32 {\n    return x * undefined_thing;\n}\n";
    let d = load_err(src);
    assert_rendered_at(&d, "bad.wgsl", src, pos(src, "undefined_thing"));
    assert!(
        d.message.contains("undefined_thing") || d.rendered.contains("undefined_thing"),
        "{d}"
    );
}

#[test]
fn validation_error_is_rendered_with_position_and_message() {
    // Parses, but naga's validator rejects the missing return value.
    let src = "fn h(x: i32) -> i32 { var i = 0; loop { if i * i >= x { return i; } i++; } }\n";
    let d = load_err(src);
    assert_rendered_at(&d, "bad.wgsl", src, (1, 1));
    assert!(d.message.starts_with("validation failed"), "{}", d.message);
    assert!(d.message.contains("'h' is invalid"), "{}", d.message);
    assert!(d.message.contains("return"), "{}", d.message);
}

#[test]
fn validation_error_points_at_the_conflicting_binding() {
    let src = "@group(0) @binding(0) var<storage, read_write> b: array<f32>;\n\
               @group(0) @binding(0) var<storage, read_write> c: array<f32>;\n\
               @compute @workgroup_size(1) fn main() { b[0] = c[0]; }\n";
    let d = load_err(src);
    assert_rendered_at(&d, "bad.wgsl", src, pos(src, "var<storage, read_write> c"));
    assert!(d.message.contains("conflict"), "{}", d.message);
}

#[test]
fn unreadable_file_is_a_diagnostic_without_position() {
    let d = Shader::load(std::path::Path::new("/nonexistent/dir/missing.wgsl")).unwrap_err();
    assert_eq!((d.line, d.column), (0, 0));
    assert!(d.message.contains("cannot read WGSL file"), "{}", d.message);
}

#[test]
fn unknown_function_names_the_functions_that_exist() {
    let src = "fn ggx(x: f32) -> f32 { return x; }\nfn smith(x: f32) -> f32 { return x; }\n";
    let d = compile_err(src, "schlick", &[]);
    assert!(
        d.message.contains("no function named `schlick`"),
        "{}",
        d.message
    );
    assert!(
        d.message.contains("ggx") && d.message.contains("smith"),
        "{}",
        d.message
    );
}

#[test]
fn undeclared_override_is_an_error() {
    let src = "override gain: f32 = 1.0;\nfn f(x: f32) -> f32 { return x * gain; }\n";
    let d = compile_err(src, "f", &[("gian", 2.0)]);
    assert!(
        d.message.contains("override `gian` is not declared"),
        "{}",
        d.message
    );
    assert!(
        d.message.contains("gain"),
        "the declared ones are listed: {}",
        d.message
    );
}

#[test]
fn override_without_default_needs_a_value() {
    let src = "override count: u32;\nfn f() -> u32 { return count; }\n";
    let d = compile_err(src, "f", &[]);
    assert!(
        d.message.contains("override `count` has no default"),
        "{}",
        d.message
    );
    assert_eq!((d.line, d.column), pos(src, "override count"));
}

/// `f` must be rejected with "<what> is not supported in CPU evaluation",
/// located at `at`.
#[track_caller]
fn assert_unsupported(src: &str, f: &str, what: &str, at: &str) {
    let d = compile_err(src, f, &[]);
    assert!(
        d.message.starts_with(what) && d.message.contains("not supported in CPU evaluation"),
        "message `{}` should start with {what}",
        d.message
    );
    assert_rendered_at(&d, "unsupported.wgsl", src, pos(src, at));
}

const RESOURCES: &str = r#"
@group(0) @binding(0) var tex: texture_2d<f32>;
@group(0) @binding(1) var samp: sampler;
@group(0) @binding(2) var<uniform> params: vec4<f32>;
@group(0) @binding(3) var<storage, read> data: array<f32, 4>;
var<workgroup> counter: atomic<u32>;
var<workgroup> shared_value: f32;

fn sample(uv: vec2<f32>) -> vec4<f32> {
    return textureSample(tex, samp, uv);
}
fn sample_level(uv: vec2<f32>) -> vec4<f32> {
    return textureSampleLevel(tex, samp, uv, 0.0);
}
fn load_texel(c: vec2<i32>) -> vec4<f32> {
    return textureLoad(tex, c, 0);
}
fn size() -> vec2<u32> {
    return textureDimensions(tex);
}
fn pass_texture(t: texture_2d<f32>) -> f32 {
    return 1.0;
}
fn derivative(x: f32) -> f32 {
    return dpdx(x) + 1.0;
}
fn width(x: f32) -> f32 {
    return fwidth(x);
}
fn count(x: u32) -> u32 {
    return atomicAdd(&counter, x);
}
fn barrier(x: f32) -> f32 {
    workgroupBarrier();
    return x;
}
fn kill(x: f32) -> f32 {
    if x < 0.0 {
        discard;
    }
    return x;
}
fn uniform_read(x: f32) -> f32 {
    return params.x * x;
}
fn storage_read(i: i32) -> f32 {
    return data[i];
}
fn workgroup_read() -> f32 {
    return shared_value;
}
fn fine(x: f32) -> f32 {
    return x * 2.0;
}
"#;

#[test]
fn texture_sampling_and_queries_are_unsupported() {
    assert_unsupported(RESOURCES, "sample", "`textureSample`", "textureSample(tex");
    assert_unsupported(
        RESOURCES,
        "sample_level",
        "`textureSampleLevel`",
        "textureSampleLevel(",
    );
    assert_unsupported(RESOURCES, "load_texel", "`textureLoad`", "textureLoad(");
    assert_unsupported(
        RESOURCES,
        "size",
        "`textureDimensions`",
        "textureDimensions(",
    );
}

#[test]
fn a_texture_parameter_is_unsupported() {
    let d = compile_err(RESOURCES, "pass_texture", &[]);
    assert!(
        d.message.contains("texture") && d.message.contains("not supported in CPU evaluation"),
        "{}",
        d.message
    );
    assert_eq!(d.line, pos(RESOURCES, "fn pass_texture").0);
}

#[test]
fn derivatives_are_unsupported() {
    assert_unsupported(RESOURCES, "derivative", "`dpdx`", "dpdx(");
    assert_unsupported(RESOURCES, "width", "`fwidth`", "fwidth(");
}

#[test]
fn atomics_barriers_and_discard_are_unsupported() {
    assert_unsupported(RESOURCES, "count", "`atomicAdd`", "atomicAdd(");
    assert_unsupported(
        RESOURCES,
        "barrier",
        "`workgroupBarrier`",
        "workgroupBarrier()",
    );
    assert_unsupported(RESOURCES, "kill", "`discard`", "discard;");
}

#[test]
fn uniform_storage_and_workgroup_globals_are_unsupported() {
    assert_unsupported(
        RESOURCES,
        "uniform_read",
        "`var<uniform> params`",
        "params.x",
    );
    assert_unsupported(RESOURCES, "storage_read", "`var<storage> data`", "data[i]");
    assert_unsupported(
        RESOURCES,
        "workgroup_read",
        "`var<workgroup> shared_value`",
        "shared_value;",
    );
}

#[test]
fn functions_that_avoid_unsupported_globals_still_compile() {
    let sh = Shader::from_source("unsupported.wgsl", RESOURCES.to_string()).unwrap();
    let p = Program::compile(&sh, "fine", &BTreeMap::new()).unwrap_or_else(|e| panic!("{e}"));
    let mut out = Vec::new();
    assert!(p.eval(&[&[3f32.to_bits()]], &mut out).is_empty());
    assert_eq!(f32::from_bits(out[0][0]), 6.0);
}

#[test]
fn entry_points_can_be_evaluated_by_name() {
    let src = "@fragment fn fs(@location(0) uv: vec2<f32>) -> @location(0) vec4<f32> {\n\
               return vec4(uv, 0.5, 1.0);\n}\n";
    let sh = Shader::from_source("entry.wgsl", src.to_string()).unwrap();
    let p = Program::compile(&sh, "fs", &BTreeMap::new()).unwrap_or_else(|e| panic!("{e}"));
    let mut out = Vec::new();
    let issues = p.eval(&[&[0.25f32.to_bits()], &[0.75f32.to_bits()]], &mut out);
    assert!(issues.is_empty());
    let got: Vec<f32> = out.iter().map(|c| f32::from_bits(c[0])).collect();
    assert_eq!(got, [0.25, 0.75, 0.5, 1.0]);
}

#[test]
fn wrong_input_columns_are_an_error_from_the_checked_entry() {
    let src = "fn f(a: f32, b: f32) -> f32 { return a + b; }\n";
    let sh = Shader::from_source("args.wgsl", src.to_string()).unwrap();
    let p = Program::compile(&sh, "f", &BTreeMap::new()).unwrap();
    let a = [1f32.to_bits(); 3];
    let short = [1f32.to_bits(); 2];
    let err = p.check_inputs(&[&a]).unwrap_err();
    assert!(
        err.contains('2') && err.contains('1'),
        "names wanted and given counts: {err}"
    );
    let err = p.check_inputs(&[&a, &short]).unwrap_err();
    assert!(err.contains("length") || err.contains("points"), "{err}");
    assert_eq!(p.check_inputs(&[&a, &a]), Ok(3));
    let mut out = Vec::new();
    assert!(p.try_eval(&[&a], &mut out).is_err());
}
