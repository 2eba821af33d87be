//! The generated compute entry point that runs one WGSL function per invocation.
//!
//! [`wrap`] appends to the original source (unchanged, so its line numbers
//! stay valid in driver messages) a storage buffer of argument bit patterns,
//! a storage buffer for the result's bit patterns, a small uniform with the
//! point count, and an `@compute @workgroup_size(64)` function that, for
//! invocation `i`, rebuilds every argument leaf by leaf from
//! `input[leaf * count + i]`, calls the function and stores each result leaf
//! at `output[leaf * count + i]`, then each `ptr<function, T>` parameter's
//! final value (such a parameter is a `var` of the entry point, initialised
//! from its input leaves and passed by address). Leaves follow [`Ty::leaves`] (vector
//! components, matrices column-major, array elements, struct members in
//! order), so the columns are exactly the CPU evaluator's.
//!
//! Encoding per leaf, the same as the evaluator's column encoding: f32 bits;
//! f16 as its 16-bit pattern in the low half (decoded and encoded by two
//! generated helpers, see `F16_HELPERS`); i32 two's complement; u32 as is;
//! bool 0/1.

use std::fmt::Write as _;

use naga::{AddressSpace, Handle, ScalarKind as NK, TypeInner};

use crate::values::{ScalarKind, Ty};
use crate::wgsl::Shader;

/// Threads per workgroup of the generated entry point.
pub const WORKGROUP_SIZE: u32 = 64;

/// f16 ⇄ 16-bit pattern in integer arithmetic on the f32 bits. naga 30 lowers
/// `bitcast` between `u32` and `vec2<f16>` as a same-width bitcast (so it
/// cannot be used), and `pack2x16float`/`unpack2x16float` may flush
/// subnormals and leave infinities indeterminate (WGSL "Floating Point
/// Accuracy", "Data Packing Built-in Functions"). Conversions between f16 and
/// f32 of a value both types hold are exact ("Floating Point Conversion"), so
/// these two helpers move every f16 value, subnormals and infinities
/// included, bit for bit (a NaN stays a NaN, its payload is not kept).
const F16_HELPERS: &str = r"fn {p}f16(h: u32) -> f16 {
    let s = (h & 0x8000u) << 16u;
    let e = (h >> 10u) & 31u;
    let m = h & 1023u;
    var b = s;
    if e == 31u {
        b = s | 0x7f800000u | (m << 13u);
    } else if e != 0u {
        b = s | ((e + 112u) << 23u) | (m << 13u);
    } else if m != 0u {
        let top = 31u - countLeadingZeros(m);
        b = s | ((top + 103u) << 23u) | ((m << (23u - top)) & 0x7fffffu);
    }
    return f16(bitcast<f32>(b));
}
fn {p}f16_bits(v: f16) -> u32 {
    let b = bitcast<u32>(f32(v));
    let s = (b >> 16u) & 0x8000u;
    let e = (b >> 23u) & 255u;
    let m = b & 0x7fffffu;
    if e == 255u {
        return s | select(0x7c00u, 0x7e00u, m != 0u);
    }
    if e >= 113u {
        return s | ((e - 112u) << 10u) | (m >> 13u);
    }
    if e >= 103u {
        return s | ((m | 0x800000u) >> (126u - e));
    }
    return s;
}
";

/// A generated module ready for the device.
#[derive(Clone, Debug)]
pub struct Wrapped {
    /// Original source followed by the generated entry point.
    pub source: String,
    /// Name of the generated entry point.
    pub entry_point: String,
    /// Bind group the generated buffers use (bindings 0 input, 1 output, 2 count).
    pub group: u32,
    /// The function's parameters, as the evaluator names and types them.
    pub params: Vec<(String, Ty)>,
    /// The return type (`None`: the function only writes through pointers).
    pub result: Option<Ty>,
    pub input_kinds: Vec<ScalarKind>,
    pub output_kinds: Vec<ScalarKind>,
    /// Whether the module uses f16 (the device needs the `shader-f16` feature).
    pub uses_f16: bool,
    /// Number of lines of the original source; a driver message on a later
    /// line points into the generated part.
    pub original_lines: usize,
}

/// Why a function cannot be run on the GPU.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct WrapError(pub String);

impl std::fmt::Display for WrapError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

/// Generate the compute module that runs on the GPU `function` of `shader`.
pub fn wrap(shader: &Shader, function: &str) -> Result<Wrapped, WrapError> {
    let module = &shader.module;
    let Some((fh, func)) = module
        .functions
        .iter()
        .find(|(_, f)| f.name.as_deref() == Some(function))
    else {
        let known: Vec<_> = module
            .functions
            .iter()
            .filter_map(|(_, f)| f.name.clone())
            .collect();
        return Err(WrapError(format!(
            "no function named `{function}` (functions in {}: {})",
            if shader.parts.len() > 1 {
                "these files"
            } else {
                "this file"
            },
            known.join(", ")
        )));
    };
    // Resources cannot be fed by the GPU back end: only private globals are allowed.
    let info = &shader.info[fh];
    for (gh, g) in module.global_variables.iter() {
        let used = !info[gh].is_empty();
        let resource = !matches!(g.space, AddressSpace::Private | AddressSpace::WorkGroup);
        if used && resource {
            return Err(WrapError(format!(
                "`{function}` uses the resource `{}` ({:?} address space); the GPU back end feeds only \
                 function arguments",
                g.name.as_deref().unwrap_or("?"),
                g.space
            )));
        }
    }
    let mut params = Vec::new();
    // Per parameter: whether it is a `ptr<function, T>` (an out- or in-out
    // parameter: a `var` of the entry point, passed by address, its
    // initial value read like an argument and its final value written
    // after the result, as the CPU evaluator does).
    let mut pointer = Vec::new();
    for (i, a) in func.arguments.iter().enumerate() {
        let name = a.name.clone().unwrap_or_else(|| format!("arg{i}"));
        let h = match module.types[a.ty].inner {
            TypeInner::Pointer {
                base,
                space: AddressSpace::Function,
            } => {
                pointer.push(true);
                base
            }
            _ => {
                pointer.push(false);
                a.ty
            }
        };
        let ty = ty_of(module, h)
            .map_err(|e| WrapError(format!("parameter `{name}` of `{function}`: {e}")))?;
        params.push((name, ty));
    }
    let result = match &func.result {
        Some(res) => Some(
            ty_of(module, res.ty).map_err(|e| WrapError(format!("result of `{function}`: {e}")))?,
        ),
        None => None,
    };

    let prefix = unique_prefix(&shader.source);
    let group = free_group(module).ok_or_else(|| {
        WrapError("every bind group 0..4 is taken by the module's own resources".into())
    })?;
    let input_kinds: Vec<ScalarKind> = params.iter().flat_map(|(_, t)| t.leaves()).collect();
    let mut output_kinds = result.as_ref().map(Ty::leaves).unwrap_or_default();
    for ((_, t), _) in params.iter().zip(&pointer).filter(|(_, p)| **p) {
        output_kinds.extend(t.leaves());
    }
    if output_kinds.is_empty() {
        return Err(WrapError(format!(
            "`{function}` returns nothing and writes through no pointer, so there is nothing to compare"
        )));
    }
    let uses_f16 = module_uses_f16(module, &shader.source);

    let mut s = String::new();
    let original_lines = shader.source.lines().count();
    s.push_str(&shader.source);
    if !s.ends_with('\n') {
        s.push('\n');
    }
    let p = &prefix;
    let _ = writeln!(
        s,
        "\n// ---- generated by shadegate gpu for `{function}` ----"
    );
    if !input_kinds.is_empty() {
        let _ = writeln!(
            s,
            "@group({group}) @binding(0) var<storage, read> {p}in: array<u32>;"
        );
    }
    let _ = writeln!(
        s,
        "@group({group}) @binding(1) var<storage, read_write> {p}out: array<u32>;"
    );
    // x: points in this dispatch (the column stride); y: invocations per row
    // of the dispatch grid (a grid taller than one row when the point count
    // exceeds the workgroup limit of one dimension).
    let _ = writeln!(
        s,
        "@group({group}) @binding(2) var<uniform> {p}count: vec4<u32>;"
    );
    if uses_f16 {
        s.push_str(&F16_HELPERS.replace("{p}", p));
    }
    let _ = writeln!(
        s,
        "@compute @workgroup_size({WORKGROUP_SIZE})\nfn {p}main(@builtin(global_invocation_id) {p}gid: vec3<u32>) {{"
    );
    let _ = writeln!(s, "    let {p}n = {p}count.x;");
    let _ = writeln!(s, "    let {p}i = {p}gid.x + {p}gid.y * {p}count.y;");
    let _ = writeln!(s, "    if ({p}i >= {p}n) {{ return; }}");
    let mut leaf = 0u32;
    let mut args = Vec::new();
    for (k, (_, ty)) in params.iter().enumerate() {
        let e = read_expr(ty, &mut leaf, p);
        if pointer[k] {
            let _ = writeln!(s, "    var {p}a{k} = {e};");
            args.push(format!("&{p}a{k}"));
        } else {
            let _ = writeln!(s, "    let {p}a{k} = {e};");
            args.push(format!("{p}a{k}"));
        }
    }
    let mut leaf = 0u32;
    match &result {
        Some(r) => {
            let _ = writeln!(s, "    let {p}r = {function}({});", args.join(", "));
            write_leaves(r, &format!("{p}r"), &mut leaf, p, &mut s);
        }
        None => {
            let _ = writeln!(s, "    {function}({});", args.join(", "));
        }
    }
    for (k, (_, ty)) in params.iter().enumerate() {
        if pointer[k] {
            write_leaves(ty, &format!("{p}a{k}"), &mut leaf, p, &mut s);
        }
    }
    s.push_str("}\n");

    Ok(Wrapped {
        source: s,
        entry_point: format!("{p}main"),
        group,
        params,
        result,
        input_kinds,
        output_kinds,
        uses_f16,
        original_lines,
    })
}

/// An identifier prefix that occurs nowhere in the source.
fn unique_prefix(source: &str) -> String {
    let mut n = 0;
    loop {
        let p = if n == 0 {
            "shadegate_gpu_".to_string()
        } else {
            format!("shadegate_gpu{n}_")
        };
        if !source.contains(&p) {
            return p;
        }
        n += 1;
    }
}

/// The lowest bind group no global of the module uses (WebGPU guarantees 4).
fn free_group(module: &naga::Module) -> Option<u32> {
    (0..4).find(|g| {
        !module
            .global_variables
            .iter()
            .any(|(_, v)| v.binding.as_ref().is_some_and(|b| b.group == *g))
    })
}

fn module_uses_f16(module: &naga::Module, source: &str) -> bool {
    let f16 = |s: naga::Scalar| s.kind == NK::Float && s.width == 2;
    let in_types = module.types.iter().any(|(_, t)| match t.inner {
        TypeInner::Scalar(s) | TypeInner::Vector { scalar: s, .. } => f16(s),
        TypeInner::Matrix { scalar, .. } => f16(scalar),
        _ => false,
    });
    // `enable f16;` alone already makes the module need the feature.
    let enabled = source.lines().any(|l| {
        let l = l.trim_start();
        l.starts_with("enable") && l.contains("f16")
    });
    in_types || enabled
}

/// The evaluator's type for a naga type (same flattening, same names).
pub fn ty_of(module: &naga::Module, h: Handle<naga::Type>) -> Result<Ty, String> {
    Ty::from_naga(module, h)
}

/// WGSL expression decoding one leaf word.
fn read_leaf(kind: ScalarKind, leaf: u32, p: &str) -> String {
    let w = format!("{p}in[{leaf}u * {p}n + {p}i]");
    match kind {
        ScalarKind::F32 => format!("bitcast<f32>({w})"),
        ScalarKind::F16 => format!("{p}f16({w})"),
        ScalarKind::I32 => format!("bitcast<i32>({w})"),
        ScalarKind::U32 => w,
        ScalarKind::Bool => format!("({w} != 0u)"),
    }
}

/// WGSL expression building a value of `ty` from consecutive leaves.
fn read_expr(ty: &Ty, leaf: &mut u32, p: &str) -> String {
    let mut next = |k: ScalarKind| {
        let e = read_leaf(k, *leaf, p);
        *leaf += 1;
        e
    };
    match ty {
        Ty::Scalar(k) => next(*k),
        Ty::Vector(n, k) => {
            let parts: Vec<_> = (0..*n).map(|_| next(*k)).collect();
            format!("{ty}({})", parts.join(", "))
        }
        Ty::Matrix {
            columns,
            rows,
            kind,
        } => {
            let col = Ty::Vector(*rows, *kind);
            let cols: Vec<_> = (0..*columns).map(|_| read_expr(&col, leaf, p)).collect();
            format!("{ty}({})", cols.join(", "))
        }
        Ty::Array(elem, n) => {
            let parts: Vec<_> = (0..*n).map(|_| read_expr(elem, leaf, p)).collect();
            format!("{ty}({})", parts.join(", "))
        }
        Ty::Struct { members, .. } => {
            let parts: Vec<_> = members.iter().map(|(_, t)| read_expr(t, leaf, p)).collect();
            format!("{ty}({})", parts.join(", "))
        }
    }
}

/// Statements storing every leaf of `value` (a WGSL expression of type `ty`).
fn write_leaves(ty: &Ty, value: &str, leaf: &mut u32, p: &str, s: &mut String) {
    const XYZW: [&str; 4] = ["x", "y", "z", "w"];
    match ty {
        Ty::Scalar(k) => {
            let bits = match k {
                ScalarKind::F32 | ScalarKind::I32 => format!("bitcast<u32>({value})"),
                ScalarKind::F16 => format!("{p}f16_bits({value})"),
                ScalarKind::U32 => value.to_string(),
                ScalarKind::Bool => format!("select(0u, 1u, {value})"),
            };
            let _ = writeln!(s, "    {p}out[{}u * {p}n + {p}i] = {bits};", *leaf);
            *leaf += 1;
        }
        Ty::Vector(n, k) => {
            for c in &XYZW[..*n as usize] {
                write_leaves(&Ty::Scalar(*k), &format!("{value}.{c}"), leaf, p, s);
            }
        }
        Ty::Matrix {
            columns,
            rows,
            kind,
        } => {
            for c in 0..*columns {
                let col = Ty::Vector(*rows, *kind);
                write_leaves(&col, &format!("{value}[{c}]"), leaf, p, s);
            }
        }
        Ty::Array(elem, n) => {
            for i in 0..*n {
                write_leaves(elem, &format!("{value}[{i}]"), leaf, p, s);
            }
        }
        Ty::Struct { members, .. } => {
            for (name, t) in members {
                write_leaves(t, &format!("{value}.{name}"), leaf, p, s);
            }
        }
    }
}
