//! Argument shapes (structs, vec2/vec4, matrices, arrays, the splat,
//! `ptr<function, T>` out-parameters, functions without arguments) in the
//! suite and in `shadegate eval`, each checked against an outside fact, and
//! every malformed use a located error.
//!
//! Sources: the luma weights 0.2126, 0.7152, 0.0722 are ITU-R BT.709-6
//! (item 3.2) and sum to 1; a rotation about z by `a` maps (x, 0, 0) to
//! (x cos a, x sin a, 0) (the rotation matrix, any linear-algebra text);
//! `floor` and `fract` split x into x = floor(x) + fract(x) (WGSL spec,
//! "fract": e - floor(e)); the other references are the function's formula
//! written again as an expression (a mathematical identity).

use shadegate::gate::{CheckResult, Verdict};

const LIB: &str = r#"
struct Material { base: vec3<f32>, roughness: f32 }
struct Layered { top: Material, weights: array<f32, 2> }

fn shade(m: Material, x: f32) -> f32 { return m.base.x * m.roughness + x; }
fn layered(s: Layered) -> f32 { return s.top.base.y * s.weights[0] + s.top.roughness * s.weights[1]; }
fn luma(c: vec4<f32>) -> f32 { return dot(c.xyz, vec3<f32>(0.2126, 0.7152, 0.0722)) * c.w; }
fn uv_sum(uv: vec2<f32>) -> f32 { return uv.x + uv.y; }
fn apply(m: mat3x3<f32>, v: vec3<f32>) -> vec3<f32> { return m * v; }
fn split(x: f32, whole: ptr<function, f32>) { *whole = floor(x); }
fn split_wrong(x: f32, whole: ptr<function, f32>) { *whole = ceil(x); }
fn frac_and_whole(x: f32, whole: ptr<function, f32>) -> f32 { *whole = floor(x); return x - floor(x); }
fn accumulate(acc: ptr<function, f32>, x: f32) { *acc = *acc + x; }
fn constant() -> f32 { return 0.25; }
"#;

fn run(test: &str, check: &str) -> CheckResult {
    super::common::run_first("shapes", test, LIB, check)
}

fn check(function: &str, body: &str) -> String {
    format!("[[check]]\nname = \"c\"\nshader = \"lib.wgsl\"\nfunction = \"{function}\"\n{body}")
}

const TOL: &str = "[check.tolerance]\nrel = 1e-6\nabs = 1e-6\nreason = \"a handful of f32 roundings against the f64 formula\"\n";

#[test]
fn a_struct_given_whole_or_by_fields_passes_and_a_wrong_formula_fails() {
    let sweep = "[check.sweep]\nalbedo = { linear = [0.0, 1.0, 5] }\nr = { linear = [0.1, 1.0, 4] }\nx = { list = [0.0, 0.5] }\n";
    let whole = check(
        "shade",
        &format!("args = {{ m = \"Material(vec3(albedo), r * r)\" }}\nreference = \"albedo * r * r + x\"\n{TOL}{sweep}"),
    );
    assert_eq!(run("whole", &whole).verdict, Verdict::Pass);
    let fields = check(
        "shade",
        &format!("args = {{ \"m.base\" = \"vec3(albedo, 0, 0)\" }}\nreference = \"albedo * roughness + x\"\n{TOL}[check.sweep]\nalbedo = {{ linear = [0.0, 1.0, 5] }}\nroughness = {{ linear = [0.1, 1.0, 4] }}\nx = {{ list = [0.0, 0.5] }}\n"),
    );
    assert_eq!(
        run("fields", &fields).verdict,
        Verdict::Pass,
        "{:#?}",
        run("fields", &fields)
    );
    let wrong = check(
        "shade",
        &format!("args = {{ m = \"Material(vec3(albedo), r * r)\" }}\nreference = \"albedo * r + x\"\n{TOL}{sweep}"),
    );
    assert_eq!(run("wrong", &wrong).verdict, Verdict::Fail);
}

#[test]
fn nested_structs_with_arrays_vectors_and_matrices() {
    let layered = check(
        "layered",
        &format!("args = {{ s = \"Layered(Material(vec3(0, a, 0), b), array(0.5, 0.25))\" }}\nreference = \"a * 0.5 + b * 0.25\"\n{TOL}[check.sweep]\na = {{ linear = [0.0, 1.0, 3] }}\nb = {{ linear = [0.0, 1.0, 3] }}\n"),
    );
    assert_eq!(run("layered", &layered).verdict, Verdict::Pass);
    // BT.709 luma weights sum to 1: a grey of level x and alpha a has luma x * a.
    let luma = check(
        "luma",
        &format!("args = {{ c = \"vec4<f32>(vec3(x), a)\" }}\nreference = \"x * a\"\n{TOL}[check.sweep]\nx = {{ linear = [0.0, 1.0, 5] }}\na = {{ linear = [0.0, 1.0, 3] }}\n"),
    );
    assert_eq!(run("luma", &luma).verdict, Verdict::Pass);
    let uv = check(
        "uv_sum",
        &format!("args = {{ uv = \"vec2(u, 2 * u)\" }}\nreference = \"3 * u\"\n{TOL}[check.sweep]\nu = {{ linear = [0.0, 1.0, 5] }}\n"),
    );
    assert_eq!(run("uv", &uv).verdict, Verdict::Pass);
    // Rotation about z, written as columns and as nine scalars.
    for (test, m) in [
        (
            "columns",
            "mat3x3(vec3(cos(a), sin(a), 0), vec3(-sin(a), cos(a), 0), vec3(0, 0, 1))",
        ),
        (
            "scalars",
            "mat3x3(cos(a), sin(a), 0, -sin(a), cos(a), 0, 0, 0, 1)",
        ),
    ] {
        let rot = check(
            "apply",
            &format!("args = {{ m = \"{m}\", v = \"vec3(x, 0, 0)\" }}\nreference = \"vec3(x * cos(a), x * sin(a), 0)\"\n{TOL}[check.sweep]\na = {{ linear = [0.0, 3.0, 7] }}\nx = {{ list = [0.5, 2.0] }}\n"),
        );
        assert_eq!(run(test, &rot).verdict, Verdict::Pass, "{test}");
    }
    let by_column = check(
        "apply",
        &format!("args = {{ \"m[0]\" = \"vec3(1, 0, 0)\", \"m[1]\" = \"vec3(0, 1, 0)\", \"m[2]\" = \"vec3(0, 0, k)\", v = \"vec3(x)\" }}\nreference = \"vec3(x, x, k * x)\"\n{TOL}[check.sweep]\nk = {{ list = [2.0, 3.0] }}\nx = {{ list = [0.5, 2.0] }}\n"),
    );
    assert_eq!(run("by_column", &by_column).verdict, Verdict::Pass);
}

#[test]
fn out_parameters_are_outputs_judged_by_the_reference() {
    // A function with no return value: its out-parameter is its output.
    let sweep = "[check.sweep]\nx = { linear = [-2.0, 2.0, 9] }\n";
    let right = check("split", &format!("args = {{ x = \"w + f\" }}\nreference = \"w\"\n{TOL}[check.sweep]\nw = {{ list = [-2.0, -1.0, 0.0, 1.0] }}\nf = {{ list = [0.0, 0.25, 0.75] }}\n"));
    assert_eq!(
        run("split", &right).verdict,
        Verdict::Pass,
        "{:#?}",
        run("split", &right)
    );
    let wrong = right.replace("\"split\"", "\"split_wrong\"");
    let r = run("split_wrong", &wrong);
    assert_eq!(r.verdict, Verdict::Fail);
    // A return value and an out-parameter: a one-value reference judges
    // the return value (fract), a twin compares both outputs.
    let both = check(
        "frac_and_whole",
        &format!("args = {{ x = \"w + f\" }}\nreference = \"f\"\n{TOL}[check.sweep]\nw = {{ list = [-2.0, 0.0, 3.0] }}\nf = {{ list = [0.0, 0.25, 0.5] }}\n"),
    );
    let r = run("both", &both);
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    assert_eq!(r.comparisons[0].stats.components, 1, "{r:#?}");
    let twin = check(
        "frac_and_whole",
        &format!("twin = {{ function = \"frac_and_whole\" }}\n{TOL}{sweep}"),
    );
    let r = run("twin", &twin);
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    assert_eq!(r.comparisons[0].stats.components, 2, "{r:#?}");
    // An in-out parameter: its initial value is bound like an argument.
    let acc = check(
        "accumulate",
        &format!("args = {{ acc = \"a\" }}\nreference = \"a + x\"\n{TOL}[check.sweep]\na = {{ list = [1.0, 2.0] }}\nx = {{ list = [0.5, 4.0] }}\n"),
    );
    assert_eq!(run("acc", &acc).verdict, Verdict::Pass);
}

#[test]
fn a_function_without_arguments_needs_no_sweep() {
    let c = check("constant", &format!("reference = \"0.25\"\n{TOL}"));
    let r = run("constant", &c);
    assert_eq!((r.verdict, r.points), (Verdict::Pass, 1), "{r:#?}");
    let c = check("constant", &format!("reference = \"0.5\"\n{TOL}"));
    assert_eq!(run("constant_wrong", &c).verdict, Verdict::Fail);
}

/// The error of the first check, which must fail to run.
fn error(test: &str, body: &str) -> String {
    let r = run(test, body);
    r.error
        .clone()
        .unwrap_or_else(|| panic!("no error: {r:#?}"))
}

#[test]
fn malformed_shapes_are_located_errors() {
    let at = |line: u32| format!("shadegate.toml:{line}: check `c`");
    let sweep = "[check.sweep]\nr = { linear = [0.1, 1.0, 4] }\nx = { list = [0.0] }\n";
    let e = error(
        "parts",
        &check(
            "shade",
            &format!("args = {{ m = \"Material(vec3(r))\" }}\nreference = \"r\"\n{TOL}{sweep}"),
        ),
    );
    assert!(
        e.contains(&at(5))
            && e.contains("key `args.m`")
            && e.contains("`Material` has 2 fields, in order: base: vec3<f32>, roughness: f32"),
        "{e}"
    );
    let e = error(
        "field",
        &check("shade", &format!("reference = \"r\"\n{TOL}{sweep}")),
    );
    assert!(
        e.contains("`m.base` (vec3<f32>) has no expression")
            && e.contains("the whole `m = \"Material(...)\"`"),
        "{e}"
    );
    let e = error(
        "typo",
        &check("shade", &format!("args = {{ \"m.rough\" = \"r\", \"m.base\" = \"vec3(r)\" }}\nreference = \"r\"\n{TOL}{sweep}")),
    );
    assert!(
        e.contains(&at(5))
            && e.contains(
                "`m` (Material) has no part `.rough`; its parts are `m.base`, `m.roughness`"
            ),
        "{e}"
    );
    let e = error(
        "vec4",
        &check(
            "luma",
            &format!("args = {{ c = \"vec4(vec3(r), r, r)\" }}\nreference = \"r\"\n{TOL}{sweep}"),
        ),
    );
    assert!(
        e.contains("`c` is vec4<f32>, but its parts give 5 component(s)"),
        "{e}"
    );
    // A constructor inside an expression is refused when the suite is read.
    let e = super::common::project(
        "shapes",
        "inside",
        LIB,
        &check(
            "luma",
            &format!("args = {{ c = \"vec4(r) * 2\" }}\nreference = \"r\"\n{TOL}{sweep}"),
        ),
    )
    .err()
    .unwrap();
    assert!(
        e.rendered
            .contains("shadegate.toml:5:15: error: key `args.c`: unknown function `vec4`"),
        "{e}"
    );
}

#[test]
fn eval_takes_structs_by_parts_and_prints_out_parameters() {
    let (dir, _) = super::common::project(
        "shapes",
        "eval",
        LIB,
        &check("constant", &format!("reference = \"0.25\"\n{TOL}")),
    )
    .unwrap();
    let out = super::common::shadegate(
        &[
            "eval",
            "lib.wgsl",
            "shade",
            "--point",
            "m.base=1;2;3,m.roughness=0.5,x=0.25",
        ],
        &dir,
    );
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert_eq!(
        text,
        "m.base.x,m.base.y,m.base.z,m.roughness,x,result\n1.0,2.0,3.0,0.5,0.25,0.75\n"
    );
    let out = super::common::shadegate(
        &["eval", "lib.wgsl", "shade", "--point", "m=0.5;0;0;2,x=0"],
        &dir,
    );
    assert!(String::from_utf8_lossy(&out.stdout).ends_with("0.5,0.0,0.0,2.0,0.0,1.0\n"));
    let out = super::common::shadegate(
        &["eval", "lib.wgsl", "frac_and_whole", "--point", "x=2.75"],
        &dir,
    );
    assert_eq!(
        String::from_utf8_lossy(&out.stdout),
        "x,*whole,result,whole\n2.75,0.0,0.75,2.0\n"
    );
    // One value for a vector is the splat: a grey of 0.5 with alpha 0.5.
    let out = super::common::shadegate(&["eval", "lib.wgsl", "luma", "--point", "c=0.5"], &dir);
    assert!(String::from_utf8_lossy(&out.stdout).ends_with("\n0.5,0.5,0.5,0.5,0.25\n"));
    let out = super::common::shadegate(
        &["eval", "lib.wgsl", "shade", "--point", "m.base=1;2;3,x=0"],
        &dir,
    );
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("missing `m.roughness` (f32) of argument `m`"),
        "{err}"
    );
}

#[test]
fn several_files_are_one_shader_and_every_diagnostic_names_its_own_file() {
    let (dir, _) = super::common::project(
        "shapes",
        "files",
        LIB,
        &check("constant", &format!("reference = \"0.25\"\n{TOL}")),
    )
    .unwrap();
    let write = |name: &str, text: &str| std::fs::write(dir.join(name), text).unwrap();
    write(
        "common.wgsl",
        "const SCALE: f32 = 2.0;\nfn twice(x: f32) -> f32 { return SCALE * x; }\n",
    );
    write(
        "main.wgsl",
        "// uses common.wgsl\nfn four_times(x: f32) -> f32 { return twice(twice(x)); }\nfn guarded(x: f32) -> f32 {\n    let a = array<f32, 2>(1.0, 2.0);\n    return a[i32(x)];\n}\n",
    );
    write(
        "broken.wgsl",
        "fn oops(x: f32) -> f32 {\n    return x +;\n}\n",
    );
    write(
        "invalid.wgsl",
        "fn bad(x: f32) -> f32 {\n    return twice(true);\n}\n",
    );
    let suite = |function: &str, files: &str, body: &str| {
        format!("[[check]]\nname = \"c\"\nshader = {files}\nfunction = \"{function}\"\n{body}")
    };
    let load = |text: &str| {
        std::fs::write(dir.join("shadegate.toml"), text).unwrap();
        shadegate::suite::load(&dir.join("shadegate.toml")).unwrap()
    };
    let run = |text: &str| {
        let s = load(text);
        shadegate::gate::run_check(&s, &s.checks[0])
    };
    // 4x, checked against the formula.
    let r = run(&suite(
        "four_times",
        "[\"common.wgsl\", \"main.wgsl\"]",
        &format!("reference = \"4 * x\"\n{TOL}[check.sweep]\nx = {{ linear = [0.0, 1.0, 5] }}\n"),
    ));
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    assert_eq!(r.shader, "common.wgsl + main.wgsl");
    // The files in the other order do not compile: no `twice` yet is fine in
    // WGSL (declarations are order-free), so both orders work.
    let r = run(&suite(
        "four_times",
        "[\"main.wgsl\", \"common.wgsl\"]",
        &format!("reference = \"4 * x\"\n{TOL}[check.sweep]\nx = {{ linear = [0.0, 1.0, 5] }}\n"),
    ));
    assert_eq!(r.verdict, Verdict::Pass, "{r:#?}");
    // A parse error in the second file names it and its own line.
    let r = run(&suite(
        "oops",
        "[\"common.wgsl\", \"broken.wgsl\"]",
        "golden = true\n[check.sweep]\nx = { list = [1.0] }\n",
    ));
    let e = r.error.unwrap();
    assert!(e.contains("broken.wgsl:2:"), "{e}");
    assert!(!e.contains("common.wgsl:"), "{e}");
    // A validation error too.
    let r = run(&suite(
        "bad",
        "[\"common.wgsl\", \"invalid.wgsl\"]",
        "golden = true\n[check.sweep]\nx = { list = [1.0] }\n",
    ));
    let e = r.error.unwrap();
    assert!(e.contains("invalid.wgsl:2:"), "{e}");
    // A per-point issue (an index out of bounds) in the second file.
    let r = run(&suite(
        "guarded",
        "[\"common.wgsl\", \"main.wgsl\"]",
        &format!("reference = \"1\"\n{TOL}[check.sweep]\nx = {{ list = [0.0, 5.0] }}\n"),
    ));
    assert!(
        r.issues.iter().any(|g| g.location == "main.wgsl:5:12"),
        "{:#?}",
        r.issues
    );
    // A missing file is named.
    let r = run(&suite(
        "oops",
        "[\"common.wgsl\", \"nope.wgsl\"]",
        "golden = true\n[check.sweep]\nx = { list = [1.0] }\n",
    ));
    assert!(r
        .error
        .unwrap()
        .contains("nope.wgsl: error: cannot read WGSL file"));
}

#[test]
fn eval_of_a_check_with_several_files_uses_all_of_them() {
    let dir = std::env::temp_dir().join(format!(
        "shadegate-gate-shapes-{}-eval-files",
        std::process::id()
    ));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(
        dir.join("common.wgsl"),
        "fn twice(x: f32) -> f32 { return 2.0 * x; }\n",
    )
    .unwrap();
    std::fs::write(
        dir.join("main.wgsl"),
        "fn four_times(x: f32) -> f32 { return twice(twice(x)); }\n",
    )
    .unwrap();
    std::fs::write(
        dir.join("shadegate.toml"),
        format!("[[check]]\nname = \"c\"\nshader = [\"common.wgsl\", \"main.wgsl\"]\nfunction = \"four_times\"\nreference = \"4 * x\"\n{TOL}[check.sweep]\nx = {{ list = [0.5, 1.0] }}\n"),
    )
    .unwrap();
    let out = super::common::shadegate(&["eval", "main.wgsl", "four_times", "--check", "c"], &dir);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert_eq!(
        String::from_utf8_lossy(&out.stdout),
        "x,result\n0.5,2.0\n1.0,4.0\n"
    );
}

/// The precision analysis of a check over two files names each line in its
/// own file: `dock_plank` multiplies on dock.wgsl's line 12 and calls
/// `stone_lit` in harbour.wgsl.
#[test]
fn a_precision_report_of_two_files_names_each_line_in_its_own_file() {
    let s = shadegate::suite::load(std::path::Path::new(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/demos/quillmere/shadegate.toml"
    )))
    .unwrap_or_else(|d| panic!("{d}"));
    let check = s
        .checks
        .iter()
        .find(|c| c.name == "dock_plank")
        .expect("the demo has dock_plank");
    let a = shadegate::precision::of_check(&s, check).unwrap();
    let text = shadegate::precision::text(&a);
    let dock = a
        .lines
        .iter()
        .map(|l| shadegate::precision::place(&a.files, l.line))
        .collect::<Vec<_>>();
    assert!(
        dock.iter().any(|p| p.ends_with("dock.wgsl:12")),
        "{dock:?}\n{text}"
    );
    assert!(
        dock.iter().any(|p| p.contains("harbour.wgsl:")),
        "{dock:?}\n{text}"
    );
    assert!(text.contains("dock.wgsl:12"), "{text}");
    // One file: lines keep their plain numbers.
    assert_eq!(shadegate::precision::place(&[], 87), "line 87");
    assert_eq!(shadegate::precision::place_column(&[], 87), "line   87");
}
