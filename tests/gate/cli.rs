//! The `shadegate` command end to end: exit codes (0 pass, 1 a check failed,
//! 2 bad input), machine-readable reports that parse back, goldens recorded
//! and compared (and refused under CI), and the eval/compare/list/models/ledger
//! subcommands.

use crate::common::shadegate;
use std::path::PathBuf;
use std::process::{Command, Output};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn code(o: &Output) -> i32 {
    o.status.code().expect("exit code")
}

fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

/// A scratch project: the demo shader and a one-check suite with a golden.
fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("shadegate-cli-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(dir.join("shaders")).unwrap();
    std::fs::copy(
        root().join("shaders/brackenfold/materials.wgsl"),
        dir.join("shaders/materials.wgsl"),
    )
    .unwrap();
    std::fs::write(
        dir.join("shadegate.toml"),
        r#"
[[check]]
name = "ggx"
shader = "shaders/materials.wgsl"
function = "d_ggx"
reference = "ggx_ndf"
reference_args = { alpha = "roughness * roughness" }
golden = true

[check.sweep]
n_dot_h = { linear = [0.01, 1.0, 50] }
roughness = { log = [0.05, 1.0, 8] }

[check.tolerance]
rel = 2e-6
reason = "a handful of f32 operations"
"#,
    )
    .unwrap();
    dir
}

#[test]
fn passing_failing_and_bad_suites_give_exit_codes_0_1_2() {
    let ok = shadegate(&["run", "ggx_distribution"], &root());
    assert_eq!(code(&ok), 0, "{}{}", text(&ok.stdout), text(&ok.stderr));
    let planted = shadegate(
        &[
            "run",
            "--suite",
            "shaders/brackenfold-planted/shadegate.toml",
            "lambert",
        ],
        &root(),
    );
    assert_eq!(code(&planted), 1, "{}", text(&planted.stdout));
    assert!(text(&planted.stdout).contains("lambert_diffuse"));

    let dir = scratch("bad");
    let suite = std::fs::read_to_string(dir.join("shadegate.toml")).unwrap();
    std::fs::write(
        dir.join("shadegate.toml"),
        suite.replace("golden = true", "golden = true\ncolour = \"red\""),
    )
    .unwrap();
    let bad = shadegate(&["run"], &dir);
    assert_eq!(code(&bad), 2);
    let err = text(&bad.stderr);
    assert!(
        err.contains("shadegate.toml:9:") && err.contains("unknown field `colour`"),
        "{err}"
    );

    let missing = shadegate(&["run", "--suite", "nowhere.toml"], &dir);
    assert_eq!(code(&missing), 2);
    assert!(
        text(&missing.stderr).contains("nowhere.toml: error: cannot read suite file"),
        "{}",
        text(&missing.stderr)
    );
}

#[test]
fn json_and_junit_reports_parse_back() {
    let suite = "shaders/brackenfold-planted/shadegate.toml";
    let json = shadegate(&["run", "--suite", suite, "--format", "json"], &root());
    assert_eq!(code(&json), 1);
    let v: serde_json::Value = serde_json::from_slice(&json.stdout).expect("valid JSON");
    let checks = v["checks"].as_array().expect("checks");
    let listed = std::fs::read_to_string(root().join(suite))
        .unwrap()
        .matches("[[check]]")
        .count();
    assert_eq!(checks.len(), listed);
    let lambert = checks
        .iter()
        .find(|c| c["name"] == "lambert_diffuse")
        .unwrap();
    assert_eq!(lambert["verdict"], "fail");
    // The diagnosis is typed in JSON, beside its sentence.
    let teak = checks.iter().find(|c| c["name"] == "brdf_teak").unwrap();
    let f = &teak["findings"][0];
    assert_eq!(f["kind"], "behaves_like", "{f}");
    assert_eq!(f["hypothesis"], "ndf_pi_3_14", "{f}");
    assert_eq!(f["term"], "constant", "{f}");
    assert_eq!(f["explained"], 1.0, "{f}");
    assert!(
        f["message"]
            .as_str()
            .unwrap()
            .contains("behaves like cook_torrance_rgb with π written as 3.14"),
        "{f}"
    );

    let xml = shadegate(&["run", "--suite", suite, "--format", "junit"], &root());
    assert_eq!(code(&xml), 1);
    let body = text(&xml.stdout);
    let doc = roxmltree::Document::parse(&body).expect("valid XML");
    assert!(
        body.contains("behaves like cook_torrance_rgb with the metallic blend inverted"),
        "the JUnit failure text names the diagnosis"
    );
    let cases: Vec<_> = doc
        .descendants()
        .filter(|n| n.has_tag_name("testcase"))
        .collect();
    assert_eq!(cases.len(), listed);
    let failures = cases
        .iter()
        .filter(|c| c.children().any(|k| k.has_tag_name("failure")))
        .count();
    assert_eq!(
        failures,
        listed - 6,
        "every planted mistake fails (the missing clamp also its finiteness property); the untouched function, the two refactors and three properties the mistakes keep pass"
    );
}

#[test]
fn goldens_round_trip_detect_change_and_corruption_and_are_refused_under_ci() {
    let dir = scratch("golden");
    let refused = Command::new(env!("CARGO_BIN_EXE_shadegate"))
        .args(["record"])
        .current_dir(&dir)
        .env("CI", "true")
        .output()
        .unwrap();
    assert_eq!(code(&refused), 2);
    assert!(text(&refused.stderr)
        .contains("refusing to record goldens because the CI environment variable is set"));
    assert!(!dir.join("goldens/ggx.csv").exists());

    let rec = shadegate(&["record"], &dir);
    assert_eq!(code(&rec), 0, "{}", text(&rec.stderr));
    assert!(dir.join("goldens/ggx.csv").exists());
    let run = shadegate(&["run", "--format", "json"], &dir);
    assert_eq!(code(&run), 0, "{}", text(&run.stdout));
    let v: serde_json::Value = serde_json::from_slice(&run.stdout).unwrap();
    let golden = &v["checks"][0]["comparisons"][1];
    assert!(golden["against"].as_str().unwrap().starts_with("golden"));
    assert_eq!(golden["stats"]["changed"], 0);

    // A refactor that changes bits: reorder a product in d_ggx.
    let shader = dir.join("shaders/materials.wgsl");
    let src = std::fs::read_to_string(&shader).unwrap();
    let changed = src.replace("return a2 / (PI * d * d);", "return a2 / (PI * (d * d));");
    assert_ne!(src, changed);
    std::fs::write(&shader, &changed).unwrap();
    let run = shadegate(&["run", "--format", "json"], &dir);
    let v: serde_json::Value = serde_json::from_slice(&run.stdout).unwrap();
    let c = &v["checks"][0];
    assert!(c["findings"]
        .as_array()
        .unwrap()
        .iter()
        .any(|f| f["kind"] == "shader_changed"));
    assert!(
        c["comparisons"][1]["stats"]["changed"].as_u64().unwrap() > 0,
        "{c}"
    );
    std::fs::write(&shader, &src).unwrap();

    // Truncate the golden: an error naming the file and line, exit code 2.
    let g = dir.join("goldens/ggx.csv");
    let body = std::fs::read_to_string(&g).unwrap();
    std::fs::write(&g, body.replace("# end\n", "")).unwrap();
    let run = shadegate(&["run"], &dir);
    assert_eq!(code(&run), 2, "{}", text(&run.stdout));
    let out = text(&run.stdout) + &text(&run.stderr);
    assert!(
        out.contains("ggx.csv:") && out.contains("truncated"),
        "{out}"
    );
}

#[test]
fn eval_writes_csv_and_rejects_bad_points() {
    let dir = root();
    let o = shadegate(
        &[
            "eval",
            "shaders/brackenfold/materials.wgsl",
            "d_ggx",
            "--point",
            "n_dot_h=1,roughness=0.5",
        ],
        &dir,
    );
    assert_eq!(code(&o), 0, "{}", text(&o.stderr));
    let csv = text(&o.stdout);
    let mut lines = csv.lines();
    assert_eq!(lines.next(), Some("n_dot_h,roughness,result"));
    let row: Vec<f64> = lines
        .next()
        .unwrap()
        .split(',')
        .map(|x| x.parse().unwrap())
        .collect();
    // GGX at n·h = 1: D = 1 / (π α²), α = 0.25 (published formula).
    let want = 1.0 / (std::f64::consts::PI * 0.0625);
    assert!((row[2] - want).abs() / want < 1e-6, "{row:?}");

    let bad = shadegate(
        &[
            "eval",
            "shaders/brackenfold/materials.wgsl",
            "d_ggx",
            "--point",
            "n_dot_h=1",
        ],
        &dir,
    );
    assert_eq!(code(&bad), 2);
    assert!(
        text(&bad.stderr).contains("missing argument `roughness`"),
        "{}",
        text(&bad.stderr)
    );
    let bad = shadegate(
        &[
            "eval",
            "shaders/brackenfold/materials.wgsl",
            "nope",
            "--point",
            "x=1",
        ],
        &dir,
    );
    assert_eq!(code(&bad), 2);
    assert!(text(&bad.stderr).contains("no function named `nope`"));

    let sweep = shadegate(
        &[
            "eval",
            "shaders/brackenfold/materials.wgsl",
            "d_ggx",
            "--check",
            "ggx_distribution",
        ],
        &dir,
    );
    assert_eq!(code(&sweep), 0, "{}", text(&sweep.stderr));
    assert_eq!(text(&sweep.stdout).lines().count(), 1 + 12240);
}

#[test]
fn compare_list_models_and_ledger() {
    let dir = root();
    let o = shadegate(
        &[
            "compare",
            "shaders/brackenfold/materials.wgsl",
            "shaders/brackenfold-planted/materials.wgsl",
            "--check",
            "lambert_diffuse",
            "--format",
            "json",
        ],
        &dir,
    );
    assert_eq!(code(&o), 1, "{}", text(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    // Every point changes: the planted copy drops the 1/π factor.
    assert_eq!(
        v["checks"][0]["comparisons"][0]["stats"]["changed"],
        33 * 33
    );

    let list = text(&shadegate(&["list"], &dir).stdout);
    assert!(
        list.contains("brdf_full") && list.contains("reference cook_torrance_rgb"),
        "{list}"
    );
    let models = text(&shadegate(&["models"], &dir).stdout);
    assert!(models.contains("ggx_ndf") && models.contains("cook_torrance_rgb"));
    let sc = scratch("ledger");
    let ledger = shadegate(&["ledger"], &sc);
    // The ledger is written, and its exit code is the run's: the scratch golden is not
    // recorded yet, so the check cannot run (2), as with `run`.
    assert_eq!(code(&ledger), code(&shadegate(&["run"], &sc)));
    assert_eq!(code(&ledger), 2);
    assert!(text(&ledger.stdout).contains("a handful of f32 operations"));
}

/// `compare` on a check made of two files (Quillmere's `plank_wear`:
/// harbour.wgsl + dock.wgsl): the two versions of dock.wgsl each stand in
/// for the check's dock.wgsl, with harbour.wgsl still before them. The
/// planted dock.wgsl uses a 10-year constant instead of 12, so every point
/// but age 0 changes. Before, each version was compiled alone. A file that is
/// none of the check's, by path or name, is an error naming the check's files.
#[test]
fn compare_on_a_check_of_two_files_replaces_the_file_of_the_same_name() {
    let dir = root().join("demos/quillmere");
    let o = shadegate(
        &[
            "compare",
            "shaders/dock.wgsl",
            "../quillmere-planted/shaders/dock.wgsl",
            "--check",
            "plank_wear",
            "--format",
            "json",
        ],
        &dir,
    );
    assert_eq!(code(&o), 1, "{}", text(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["checks"][0]["comparisons"][0]["stats"]["changed"], 40);
    assert_eq!(v["checks"][0]["comparisons"][0]["stats"]["points"], 41);

    let other = shadegate(
        &[
            "compare",
            "shaders/dock.wgsl",
            "../quillmere-planted/shadegate.toml",
            "--check",
            "plank_wear",
        ],
        &dir,
    );
    // Matched by the first version's path: the second takes its place and
    // is not WGSL.
    assert_eq!(code(&other), 2, "{}", text(&other.stdout));
    let lost = shadegate(
        &[
            "compare",
            "../quillmere-planted/shadegate.toml",
            "../../README.md",
            "--check",
            "plank_wear",
        ],
        &dir,
    );
    assert_eq!(code(&lost), 2, "{}", text(&lost.stdout));
    assert!(
        text(&lost.stderr).contains(
            "check `plank_wear` is made of shaders/harbour.wgsl + shaders/dock.wgsl: \
             ../quillmere-planted/shadegate.toml and ../../README.md must be one of them, \
             or a version of one with the same file name"
        ),
        "{}",
        text(&lost.stderr)
    );
}

/// `eval` and `precision` of a function that calls into another file: the
/// other file comes with `--with`, and lines are named in their own files.
/// Quillmere's dock.wgsl calls harbour.wgsl's `stone_lit`, so dock.wgsl
/// alone does not compile. `dock_plank` is `m.base * max(n_dot_l, 0) / pi`:
/// at n_dot_l = 0.5 and base (1, 0.5, 0.25) the f32 results are
/// 0.5/pi, 0.25/pi and 0.125/pi rounded (0.15915494, 0.07957747,
/// 0.039788734). With --check, --with is refused: the check names its files.
#[test]
fn eval_and_precision_take_other_files_with_with() {
    let dir = root().join("demos/quillmere");
    let point = "m=1;0.5;0.25;0.5,n_dot_l=0.5";
    let alone = shadegate(
        &["eval", "shaders/dock.wgsl", "dock_plank", "--point", point],
        &dir,
    );
    assert_eq!(code(&alone), 2);
    assert!(
        text(&alone.stderr).contains("no definition in scope for identifier: `stone_lit`"),
        "{}",
        text(&alone.stderr)
    );
    let with = ["--with", "shaders/harbour.wgsl"];
    let mut args = vec!["eval", "shaders/dock.wgsl", "dock_plank", "--point", point];
    args.extend(with);
    let e = shadegate(&args, &dir);
    assert_eq!(code(&e), 0, "{}", text(&e.stderr));
    assert_eq!(
        text(&e.stdout),
        "m.base.x,m.base.y,m.base.z,m.roughness,n_dot_l,result.x,result.y,result.z\n\
         1.0,0.5,0.25,0.5,0.5,0.15915494,0.07957747,0.039788734\n"
    );

    args[0] = "precision";
    let p = shadegate(&args, &dir);
    assert_eq!(code(&p), 0, "{}", text(&p.stderr));
    let t = text(&p.stdout);
    assert!(t.contains("  shaders/harbour.wgsl:10  share"), "{t}");
    assert!(t.contains("  shaders/dock.wgsl:12  share"), "{t}");

    let mut checked = vec![
        "eval",
        "shaders/dock.wgsl",
        "dock_plank",
        "--check",
        "dock_plank",
    ];
    checked.extend(with);
    let refused = shadegate(&checked, &dir);
    assert_eq!(code(&refused), 2);
    assert!(
        text(&refused.stderr).contains("--with is for --point and --input"),
        "{}",
        text(&refused.stderr)
    );
}
