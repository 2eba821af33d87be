//! Hardening: every bad input of the suite, golden, sweep and WGSL readers
//! gives a located error (exit 2), a correct evaluation or a correct
//! refusal, never a panic, an abort, a silent pass or a write outside the
//! project. One test per defect, each named after it; inputs are built here
//! from the defect's description. Limits come from `shadegate::limits`.

use std::path::{Path, PathBuf};
use std::process::Command;

use crate::common::shadegate;
use shadegate::golden;
use shadegate::limits::{Limit, Limits};
use shadegate::suite;
use shadegate::sweep::Expr;
use shadegate::wgsl::Shader;

/// A function of one argument, and one of two.
const SHADER: &str = "\
fn twice(x: f32) -> f32 {
    return 2.0 * x;
}

fn d(n_dot_h: f32, roughness: f32) -> f32 {
    return n_dot_h * roughness;
}
";

/// A scratch project folder holding `lib.wgsl` and `shadegate.toml`.
fn project(test: &str, suite: &str) -> PathBuf {
    let dir =
        std::env::temp_dir().join(format!("shadegate-hardening-{}-{test}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join("lib.wgsl"), SHADER).unwrap();
    std::fs::write(dir.join("shadegate.toml"), suite).unwrap();
    dir
}

/// A golden check of `twice` with the given extra keys.
fn golden_suite(golden: &str) -> String {
    format!(
        "[[check]]\nname = \"t\"\nshader = \"lib.wgsl\"\nfunction = \"twice\"\ngolden = {golden}\n\n[check.sweep]\nx = {{ linear = [0.0, 1.0, 5] }}\n"
    )
}

/// A reference check of `twice`'s neighbour `d` with `sweep` as its sweep
/// table body and `extra` keys at the check's top.
fn sweep_suite(extra: &str, sweep: &str) -> String {
    format!(
        "[[check]]\nname = \"d\"\nshader = \"lib.wgsl\"\nfunction = \"d\"\ngolden = true\n{extra}\n[check.sweep]\n{sweep}\n"
    )
}

/// The suite must be refused with an error whose message contains every
/// one of `words`, at `line`.
#[track_caller]
fn refused(text: &str, line: u32, words: &[&str]) {
    let d = suite::parse(Path::new("dir/shadegate.toml"), text).unwrap_err();
    // Messages may quote a 20,000-character line: show only their start.
    let shown: String = d.rendered.chars().take(400).collect();
    for w in words {
        assert!(d.message.contains(w), "`{w}` missing in: {shown}");
    }
    assert_eq!(d.line, line, "{shown}");
    assert!(
        d.rendered
            .starts_with(&format!("dir/shadegate.toml:{line}:")),
        "{shown}"
    );
}

// --- goldens only inside the project -------------------------------------

#[test]
fn golden_climbing_out_with_dotdot_is_a_located_error() {
    refused(
        &golden_suite("\"../escaped/x.csv\""),
        5,
        &["climbs out", "--golden-outside"],
    );
    refused(&golden_suite("\"goldens/../../x.csv\""), 5, &["climbs out"]);
}

/// A golden's header records the shader path on one line, and a carriage
/// return or other control character in it would not read back as written
/// (`golden::header_fields` refuses it). So a golden check with such a path
/// is refused where the path is written; a check without a golden keeps it.
#[test]
fn a_golden_checks_shader_path_with_a_control_character_is_a_located_error() {
    for (escape, c, code) in [
        ("\\t", '\t', "U+0009"),
        ("\\r", '\r', "U+000D"),
        ("\\u0007", '\u{7}', "U+0007"),
    ] {
        let text = golden_suite("true").replace("\"lib.wgsl\"", &format!("\"lib{escape}.wgsl\""));
        refused(&text, 3, &["key `shader`", code, "one header line"]);
        let no_golden = text.replace(
            "golden = true",
            "reference = \"2 * x\"\n[check.tolerance]\nabs = 0.0\nreason = \"one exact product\"",
        );
        let s = suite::parse(Path::new("dir/shadegate.toml"), &no_golden).unwrap();
        assert_eq!(s.checks[0].shader, PathBuf::from(format!("lib{c}.wgsl")));
    }
    // The same project recorded: refused at the suite's line, nothing written.
    let dir = project(
        "control",
        &golden_suite("true").replace("lib.wgsl", "lib\\t.wgsl"),
    );
    std::fs::write(dir.join("lib\t.wgsl"), SHADER).unwrap();
    let o = shadegate(&["record"], &dir);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.starts_with("shadegate.toml:3:"), "{err}");
    assert!(!dir.join("goldens").exists());
}

#[test]
fn golden_with_an_absolute_path_is_a_located_error_unless_allowed() {
    let text = golden_suite("\"/tmp/shadegate-escape.csv\"");
    refused(&text, 5, &["absolute path", "--golden-outside"]);
    let allowed = suite::parse_with(
        Path::new("s.toml"),
        &text,
        suite::Options {
            golden_outside: true,
        },
    )
    .unwrap();
    assert!(allowed.golden_outside);
}

#[test]
fn golden_equal_to_the_suite_file_or_a_shader_is_a_located_error() {
    refused(&golden_suite("\"shadegate.toml\""), 5, &["`.csv`"]);
    refused(&golden_suite("\"./lib.wgsl\""), 5, &["`.csv`"]);
    // A shader or suite that happens to end in .csv is caught by name too.
    let text =
        golden_suite("\"./lib.csv\"").replace("shader = \"lib.wgsl\"", "shader = \"lib.csv\"");
    refused(&text, 5, &["the shader of check `t`"]);
    let d = suite::parse(Path::new("s.csv"), &golden_suite("\"s.csv\"")).unwrap_err();
    assert!(
        d.message.contains("the suite file itself"),
        "{}",
        d.rendered
    );
}

#[test]
fn two_checks_sharing_one_golden_is_a_located_error() {
    let one = golden_suite("\"g.csv\"");
    let text = format!("{one}\n{}", one.replace("name = \"t\"", "name = \"u\""));
    refused(&text, 14, &["also the golden of the check on line 2"]);
}

#[test]
fn record_never_writes_outside_the_project() {
    let dir = project("outside", &golden_suite("\"../escaped-hardening/x.csv\""));
    let o = shadegate(&["record"], &dir);
    assert_eq!(
        o.status.code(),
        Some(2),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert!(String::from_utf8_lossy(&o.stderr).contains("shadegate.toml:5:"));
    assert!(!dir.join("../escaped-hardening").exists());
    // A folder inside the project that is a link to elsewhere is refused too.
    let elsewhere =
        std::env::temp_dir().join(format!("shadegate-hardening-link-{}", std::process::id()));
    std::fs::create_dir_all(&elsewhere).unwrap();
    let dir = project("link", &golden_suite("\"out/x.csv\""));
    #[cfg(unix)]
    {
        std::os::unix::fs::symlink(&elsewhere, dir.join("out")).unwrap();
        let o = shadegate(&["record"], &dir);
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{err}");
        assert!(err.contains("outside the suite's folder"), "{err}");
        assert_eq!(std::fs::read_dir(&elsewhere).unwrap().count(), 0);
    }
}

#[test]
fn record_never_replaces_a_file_that_is_not_this_checks_golden() {
    let dir = project("foreign", &golden_suite("\"notes.csv\""));
    std::fs::write(dir.join("notes.csv"), "a,b\n1,2\n").unwrap();
    let o = shadegate(&["record"], &dir);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("not the golden of check `t`"), "{err}");
    assert_eq!(
        std::fs::read_to_string(dir.join("notes.csv")).unwrap(),
        "a,b\n1,2\n"
    );
    // Its own golden is replaced, and re-recording works.
    std::fs::remove_file(dir.join("notes.csv")).unwrap();
    for _ in 0..2 {
        let o = shadegate(&["record"], &dir);
        assert_eq!(
            o.status.code(),
            Some(0),
            "{}",
            String::from_utf8_lossy(&o.stderr)
        );
    }
    assert_eq!(shadegate(&["run"], &dir).status.code(), Some(0));
    assert_eq!(leftovers(&dir), Vec::<String>::new());
}

/// Temporary files left in `dir`.
fn leftovers(dir: &Path) -> Vec<String> {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.starts_with(golden::TMP_PREFIX) || n.contains(".tmp"))
        .collect()
}

#[test]
fn temp_files_are_outside_the_golden_pattern_and_ignored_by_git() {
    let t = golden::tmp_path(Path::new("goldens/ggx.csv"));
    let name = t.file_name().unwrap().to_string_lossy().into_owned();
    assert!(
        name.starts_with(golden::TMP_PREFIX) && !name.ends_with(".csv"),
        "{name}"
    );
    assert_eq!(t.parent(), Some(Path::new("goldens")));
    let ignore =
        std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join(".gitignore")).unwrap();
    assert!(
        ignore
            .lines()
            .any(|l| l.trim() == format!("{}*", golden::TMP_PREFIX)),
        "the repository's .gitignore must ignore {}*",
        golden::TMP_PREFIX
    );
}

#[test]
fn a_failed_rename_removes_the_temp_file() {
    let dir = project("rename", "");
    // The target is a folder with a file in it: the rename fails after the
    // temporary file is complete.
    let target = dir.join("g.csv");
    std::fs::create_dir_all(target.join("inside")).unwrap();
    // `replace` is the step `record` writes through; called directly, so the
    // test does not depend on whether the CI variable is set.
    let g = golden::parse(Path::new("g.csv"), SMALL_GOLDEN).unwrap();
    let e = golden::replace(&target, &golden::render(&g)).unwrap_err();
    assert!(e.contains("cannot rename into place"), "{e}");
    assert_eq!(leftovers(&dir), Vec::<String>::new());
}

const SMALL_GOLDEN: &str = "# shadegate golden dataset, format 1\n# check: t\n# shader: lib.wgsl\n# function: twice\n# shader-hash: 0\n# sweep: x\n# points: 1\nx:f32,result:f32\n1.0,2.0\n# end\n";

#[test]
fn a_killed_record_leaves_the_old_golden_intact() {
    // A check large enough that recording takes a while.
    let text =
        golden_suite("true").replace("linear = [0.0, 1.0, 5]", "linear = [0.0, 1.0, 3000000]");
    let dir = project("killed", &text);
    let o = shadegate(&["record"], &dir);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let before = std::fs::read(dir.join("goldens/t.csv")).unwrap();
    for delay_ms in [50, 300, 900] {
        let mut child = Command::new(env!("CARGO_BIN_EXE_shadegate"))
            .arg("record")
            .current_dir(&dir)
            .env_remove("CI")
            .stderr(std::process::Stdio::null())
            .spawn()
            .unwrap();
        std::thread::sleep(std::time::Duration::from_millis(delay_ms));
        let _ = child.kill();
        let _ = child.wait();
        // Whether the kill came before or after the rename, the golden is
        // complete and the same (the shader did not change).
        assert!(std::fs::read(dir.join("goldens/t.csv")).unwrap() == before);
        // Nothing a `git add goldens/*.csv` could pick up.
        for e in std::fs::read_dir(dir.join("goldens")).unwrap() {
            let n = e.unwrap().file_name().to_string_lossy().into_owned();
            assert!(
                n == "t.csv" || (n.starts_with(golden::TMP_PREFIX) && !n.ends_with(".csv")),
                "{n}"
            );
        }
    }
    // The next record clears a stale temporary file of its own golden.
    let o = shadegate(&["record"], &dir);
    assert_eq!(o.status.code(), Some(0));
    assert_eq!(leftovers(&dir.join("goldens")), Vec::<String>::new());
}

// --- silent passes ---------------------------------------------------------

#[test]
fn a_grid_whose_size_wraps_around_is_a_located_error() {
    // 2^16 values four times over is 2^64 points: it used to wrap to 0.
    let p = "{ linear = [0.0, 1.0, 65536] }";
    let sweep = format!("a = {p}\nb = {p}\nc = {p}\nd = {p}");
    refused(
        &sweep_suite("", &sweep),
        7,
        &["more than 2^64", "points_per_check"],
    );
    // 4 × 65536 × 65536 × 65536 = 2^50 fits in 64 bits but not the limit.
    let sweep = format!("a = {{ list = [1, 2, 3, 4] }}\nb = {p}\nc = {p}\nd = {p}");
    refused(
        &sweep_suite("", &sweep),
        7,
        &["1125899906842624 points", "points_per_check = N"],
    );
}

#[test]
fn domains_with_nan_or_infinite_bounds_are_located_errors() {
    for d in [
        "{ linear = [nan, 1.0, 4] }",
        "{ linear = [0.0, inf, 4] }",
        "{ log = [1e-3, inf, 4] }",
        "{ edges = [-inf, 0.0] }",
        "{ direction = { theta = { linear = [0.0, nan, 3] }, phi = { list = [0.0] } } }",
    ] {
        refused(
            &sweep_suite(
                "",
                &format!("n_dot_h = {d}\nroughness = {{ list = [0.5] }}"),
            ),
            8,
            &["finite bounds"],
        );
    }
}

#[test]
fn an_unknown_args_key_is_a_located_error() {
    let text = sweep_suite(
        "args = { roughnes = \"roughness * roughness\" }",
        "n_dot_h = { linear = [0.0, 1.0, 4] }\nroughness = { list = [0.5] }",
    );
    let dir = project("args", &text);
    let o = shadegate(&["record"], &dir);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("shadegate.toml:6:"), "{err}");
    assert!(
        err.contains("`d` has no parameter `roughnes` (has: n_dot_h, roughness)"),
        "{err}"
    );
    assert!(!dir.join("goldens").exists());
}

// --- limits while reading ----------------------------------------------------

#[test]
fn sweeps_beyond_points_per_check_are_located_errors_naming_the_limit() {
    let limits = "[limits]\npoints_per_check = 100\n\n";
    let text = format!(
        "{limits}{}",
        sweep_suite(
            "",
            "n_dot_h = { linear = [0.0, 1.0, 101] }\nroughness = { list = [0.5] }"
        )
    );
    refused(
        &text,
        11,
        &[
            "101",
            "`points_per_check` limit of 100",
            "points_per_check = N",
        ],
    );
    // 10 × 11 is over it too, as a product.
    let text = format!(
        "{limits}{}",
        sweep_suite(
            "",
            "n_dot_h = { linear = [0.0, 1.0, 10] }\nroughness = { linear = [0.0, 1.0, 11] }"
        )
    );
    refused(&text, 10, &["110 points", "points_per_check"]);
}

#[test]
fn a_count_of_ten_to_the_thirty_is_a_located_error() {
    refused(
        &sweep_suite(
            "",
            "n_dot_h = { linear = [0.0, 1.0, 1e30] }\nroughness = { list = [0.5] }",
        ),
        8,
        &["1000000000000000000000000000000", "points_per_check"],
    );
}

#[test]
fn a_random_count_of_ten_to_the_twelve_is_a_located_error() {
    let text = sweep_suite(
        "",
        "n_dot_h = { linear = [0.0, 1.0, 4] }\nroughness = { list = [0.5] }",
    ) + "\n[check.random]\ncount = 1000000000000\nseed = 1\n";
    refused(&text, 12, &["1000000000000 points", "points_per_check"]);
}

#[test]
fn a_golden_header_claiming_ten_to_the_eighteen_points_is_an_error_at_its_line() {
    let text = SMALL_GOLDEN.replace("# points: 1", "# points: 1000000000000000000");
    let d = golden::parse(Path::new("g.csv"), &text).unwrap_err();
    assert_eq!(d.line, 7, "{}", d.rendered);
    assert!(d.message.contains("points_per_check"), "{}", d.rendered);
    // Under the limit but far more than the file holds: an error, not a
    // reservation of memory for the claim.
    let text = SMALL_GOLDEN.replace("# points: 1", "# points: 200000000");
    let d = golden::parse(Path::new("g.csv"), &text).unwrap_err();
    assert!(
        d.message.contains("200000000 points but the file has 1"),
        "{}",
        d.rendered
    );
}

#[test]
fn a_golden_bigger_than_golden_bytes_is_an_error_at_its_file_and_line() {
    let dir = project("bytes", "");
    let path = dir.join("g.csv");
    std::fs::write(&path, SMALL_GOLDEN).unwrap();
    let mut limits = Limits::default();
    assert!(golden::read_with(&path, &limits).is_ok());
    limits.golden_bytes = 64;
    let d = golden::read_with(&path, &limits).unwrap_err();
    assert_eq!(
        (d.line, d.file.as_path()),
        (1, path.as_path()),
        "{}",
        d.rendered
    );
    assert!(
        d.message.contains("`golden_bytes` limit of 64 bytes"),
        "{}",
        d.rendered
    );
}

#[test]
fn golden_nan_notation_only_for_nans_of_the_columns_width() {
    for (kind, v) in [
        ("bool", "nan:0x5"),
        ("f16", "nan:0x12345"),
        ("f32", "nan:0x3f800000"),
        ("i32", "nan:0x7fc00000"),
    ] {
        let text = SMALL_GOLDEN
            .replace("result:f32", &format!("result:{kind}"))
            .replace("1.0,2.0", &format!("1.0,{v}"));
        let d = golden::parse(Path::new("g.csv"), &text).unwrap_err();
        assert_eq!(d.line, 9, "{kind}: {}", d.rendered);
    }
}

#[test]
fn deeply_nested_argument_expressions_are_located_errors() {
    let deep_parens = format!("{}roughness{}", "(".repeat(10_000), ")".repeat(10_000));
    let deep_minus = format!("{}roughness", "-".repeat(20_000));
    let long_chain = vec!["roughness"; 50_000].join(" + ");
    for e in [deep_parens, deep_minus, long_chain] {
        let err = Expr::parse(&e).unwrap_err();
        assert!(
            err.message.contains("`expression_depth` limit"),
            "{}",
            err.message
        );
        let text = sweep_suite(
            &format!("args = {{ roughness = \"{e}\" }}"),
            "n_dot_h = { list = [0.5] }\nroughness = { list = [0.5] }",
        );
        refused(&text, 6, &["key `args.roughness`", "expression_depth = N"]);
    }
    // Within the limit it parses, and the limit can be raised.
    let e = format!("{}r{}", "(".repeat(200), ")".repeat(200));
    assert!(Expr::parse(&e).is_ok());
    assert!(Expr::parse_with(&format!("{}r", "-".repeat(900)), 1000).is_ok());
}

#[test]
fn a_sixteen_thousand_term_wgsl_expression_is_a_located_error() {
    let src = format!(
        "fn f(x: f32) -> f32 {{\n    return {};\n}}\n",
        vec!["x"; 16_000].join(" + ")
    );
    let d = Shader::from_source("chain.wgsl", src).unwrap_err();
    assert_eq!(d.line, 2, "{}", d.rendered);
    assert!(
        d.message.contains("`expression_depth` limit"),
        "{}",
        d.rendered
    );
    // Sibling arguments and statements do not add up.
    let args: Vec<String> = (0..300).map(|i| format!("-{i}.0")).collect();
    let src = format!(
        "const T = array<f32, 300>({});\nfn f(x: f32) -> f32 {{\n{}    return x;\n}}\n",
        args.join(", "),
        (0..300)
            .map(|i| format!("    let y{i} = x * x + x;\n"))
            .collect::<String>()
    );
    Shader::from_source("wide.wgsl", src).unwrap();
}

#[test]
fn nagas_recursion_limit_error_has_a_line_and_column() {
    // 210 parentheses: within our limit, past naga's parser's own (200).
    let src = format!(
        "fn f(x: f32) -> f32 {{\n    return {}x{};\n}}\n",
        "(".repeat(210),
        ")".repeat(210)
    );
    let d = Shader::from_source("parens.wgsl", src).unwrap_err();
    assert_eq!(d.line, 2, "{}", d.rendered);
    assert!(d.column > 100, "{}", d.rendered);
    assert!(d.rendered.starts_with("parens.wgsl:2:"), "{}", d.rendered);
}

// --- the [limits] table ------------------------------------------------------

#[test]
fn the_limits_table_sets_every_limit_and_refuses_bad_keys_and_values() {
    let body = sweep_suite(
        "",
        "n_dot_h = { list = [0.5] }\nroughness = { list = [0.5] }",
    );
    for (i, l) in Limit::ALL.iter().enumerate() {
        let v = 100 + i as u64;
        let s = suite::parse(
            Path::new("s.toml"),
            &format!("[limits]\n{} = {v}\n\n{body}", l.key()),
        )
        .unwrap();
        assert_eq!(l.value(&s.limits), v, "{l}");
    }
    refused(
        &format!("[limits]\npoints_per_chek = 5\n\n{body}"),
        2,
        &["no such limit", "points_per_check"],
    );
    refused(
        &format!("[limits]\ngolden_bytes = 0\n\n{body}"),
        2,
        &["positive whole number"],
    );
    refused(
        &format!("[limits]\ngolden_bytes = \"big\"\n\n{body}"),
        2,
        &["positive whole number"],
    );
    refused(
        &format!("[limits]\nexpression_depth = 100000\n\n{body}"),
        2,
        &["ceiling"],
    );
    refused(
        &format!(
            "[limits]\nchecks_per_suite = 1\n\n{body}\n{}",
            body.replace("name = \"d\"", "name = \"e\"")
                .replace("golden = true", "golden = \"e.csv\"")
        ),
        14,
        &["2 checks", "`checks_per_suite` limit of 1"],
    );
}

#[test]
fn the_readme_lists_every_limit_with_its_default() {
    let readme =
        std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("README.md")).unwrap();
    let section = readme.split("## Limits").nth(1).expect("a Limits section");
    let d = Limits::default();
    for l in Limit::ALL {
        let row = section
            .lines()
            .find(|r| r.starts_with(&format!("| `{}`", l.key())))
            .unwrap_or_else(|| panic!("no row for `{l}`"));
        let shown: String = l.value(&d).to_string();
        let with_commas = shown
            .as_bytes()
            .rchunks(3)
            .rev()
            .map(|c| std::str::from_utf8(c).unwrap())
            .collect::<Vec<_>>()
            .join(",");
        assert!(
            row.contains(&with_commas),
            "the README's default for `{l}` is not {with_commas}: {row}"
        );
    }
}

#[test]
fn a_sweep_of_zero_points_is_a_located_error() {
    let text = sweep_suite(
        "",
        "n_dot_h = { linear = [0.0, 1.0, 0] }\nroughness = { list = [0.5] }",
    ) + "\n[check.random]\ncount = 0\nseed = 1\n";
    refused(&text, 7, &["no points"]);
}

#[test]
fn a_suite_without_checks_is_an_error_at_line_one() {
    let d = suite::parse(Path::new("s.toml"), "# nothing\n").unwrap_err();
    assert_eq!(d.line, 1, "{}", d.rendered);
}

// --- the suite's [limits] reach the evaluator --------------------------------

/// A loop of `n` iterations (the function's argument) under a suite whose
/// `steps_per_point` is 100: the points that loop longer lose their result to
/// the step budget; the others keep it. Without the limit in the suite the
/// default budget lets every point finish.
#[test]
fn the_suites_step_budget_reaches_the_evaluator() {
    const LOOPER: &str = "fn count(n: i32) -> f32 {\n    var i = 0;\n    while i < n {\n        i++;\n    }\n    return f32(i);\n}\n";
    let suite_text = |limits: &str| {
        format!(
            "{limits}[[check]]\nname = \"c\"\nshader = \"loop.wgsl\"\nfunction = \"count\"\ngolden = true\n\n[check.sweep]\nn = {{ list = [10, 50, 500, 5000] }}\n"
        )
    };
    let dir = project("steps", "");
    std::fs::write(dir.join("loop.wgsl"), LOOPER).unwrap();
    let budget_lost = |text: &str| -> Vec<usize> {
        let path = dir.join("shadegate.toml");
        std::fs::write(&path, text).unwrap();
        let s = suite::load(&path).unwrap_or_else(|d| panic!("{}", d.rendered));
        let ev = shadegate::gate::evaluate(&s, &s.checks[0], None).unwrap();
        let mut lost: Vec<usize> = ev
            .issues
            .iter()
            .filter(|i| i.kind == shadegate::eval::IssueKind::StepBudget)
            .map(|i| i.point)
            .collect();
        lost.sort();
        lost
    };
    assert_eq!(
        budget_lost(&suite_text("[limits]\nsteps_per_point = 100\n\n")),
        vec![2, 3]
    );
    assert!(budget_lost(&suite_text("")).is_empty());
}
