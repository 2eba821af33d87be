//! Look-up tables bound in place of textures, end to end through the gate:
//! the Quillmere demo reads the split-sum table through a texture and passes
//! against the integrated model (`harness/reference/envbrdf.rs`); the planted
//! table (roughness axis flipped) fails; table files and bindings that name
//! no variable are located errors.

use std::path::PathBuf;

use shadegate::{gate, report, suite};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

#[test]
fn the_quillmere_table_check_passes_and_the_flipped_table_fails() {
    let s = suite::load(&root().join("demos/quillmere/textures.toml")).unwrap();
    let run = gate::run(&s, None, |_, _, _| {});
    assert_eq!(run.exit_code(), 0, "{}", report::text(&run, false));
    let s = suite::load(&root().join("demos/quillmere-planted/textures.toml")).unwrap();
    let run = gate::run(&s, None, |_, _, _| {});
    let text = report::text(&run, false);
    assert_eq!(run.exit_code(), 1, "{text}");
    assert!(text.contains("ibl_env_brdf_flipped_table"), "{text}");
}

const SHADER: &str = "
@group(0) @binding(0) var lut: texture_2d<f32>;
@group(0) @binding(1) var samp: sampler;
fn f(u: f32) -> f32 {
    return textureSampleLevel(lut, samp, vec2(u, 0.5), 0.0).x;
}
";

/// A suite in a fresh folder with `s.wgsl`, `t.csv` and the given binding
/// tables; the result of running it.
fn run_with(dir: &str, table: &str, bindings: &str) -> gate::RunResult {
    let d = std::env::temp_dir().join(format!("shadegate-textures-{dir}-{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    std::fs::write(d.join("s.wgsl"), SHADER).unwrap();
    std::fs::write(d.join("t.csv"), table).unwrap();
    let text = format!(
        "[[check]]\nname = \"c\"\nshader = \"s.wgsl\"\nfunction = \"f\"\nproperty = {{ kind = \"range\", min = 1.0, max = 3.0 }}\n\n\
         [check.sweep]\nu = {{ list = [0.25, 0.5, 0.75] }}\n\n{bindings}"
    );
    let path = d.join("s.toml");
    std::fs::write(&path, &text).unwrap();
    let s = suite::parse(&path, &text).unwrap_or_else(|e| panic!("{}", e.rendered));
    let run = gate::run(&s, None, |_, _, _| {});
    std::fs::remove_dir_all(&d).ok();
    run
}

const BIND: &str =
    "[check.textures.lut]\nfile = \"t.csv\"\n\n[check.samplers.samp]\nfilter = \"linear\"\n";

#[test]
fn a_table_file_is_read_and_sampled() {
    // Two texels 1 and 3: u = 0.5 blends them to 2, u = 0.25 and 0.75 are
    // the centres.
    let run = run_with("ok", "width,height,channels\n2,1,1\n1\n3\n", BIND);
    assert_eq!(run.exit_code(), 0, "{}", report::text(&run, false));
}

#[test]
fn bad_table_files_and_unknown_variables_are_located_errors() {
    let run = run_with("bad", "width,height,channels\n2,1,1\n1\nx\n", BIND);
    assert_eq!(run.exit_code(), 2);
    let e = run.checks[0].error.clone().unwrap();
    assert!(
        e.contains("t.csv:4:1") && e.contains("finite decimal"),
        "{e}"
    );

    let typo = BIND.replace("[check.textures.lut]", "[check.textures.lutt]");
    let run = run_with("typo", "width,height,channels\n2,1,1\n1\n3\n", &typo);
    let e = run.checks[0].error.clone().unwrap();
    assert!(
        e.contains("s.toml:10:") && e.contains("no texture or sampler `lutt`"),
        "{e}"
    );

    // Unbound: the texture access is "not supported", at the WGSL line.
    let run = run_with("unbound", "width,height,channels\n1,1,1\n1\n", "");
    let e = run.checks[0].error.clone().unwrap();
    assert!(
        e.contains("s.wgsl:5:") && e.contains("not supported"),
        "{e}"
    );
}
