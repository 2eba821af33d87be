//! Every way a suite file can be wrong gives a precise error: the file, the line, the key
//! and what was expected. One test per kind of mistake, all through one helper.

use std::path::Path;

use shadegate::suite;

/// A valid suite; each test breaks one thing in it.
const GOOD: &str = r#"# line 1
[[check]]
name = "ndf"
shader = "shaders/brackenfold/materials.wgsl"
function = "d_ggx"
reference = "ggx_ndf"
reference_args = { alpha = "roughness * roughness" }

[check.sweep]
n_dot_h = { linear = [0.0, 1.0, 5] }
roughness = { log = [0.05, 1.0, 3] }

[check.random]
count = 10
seed = 1

[check.tolerance]
rel = 2e-6
reason = "a few f32 roundings"
"#;

/// Parse `text` (the GOOD suite with one edit) and expect an error on `line` whose
/// message contains every one of `fragments`.
#[track_caller]
fn expect_error(text: &str, line: u32, fragments: &[&str]) {
    let d = match suite::parse(Path::new("demo/shadegate.toml"), text) {
        Ok(_) => panic!("the suite parsed, but an error on line {line} was expected:\n{text}"),
        Err(d) => d,
    };
    assert_eq!(d.file, Path::new("demo/shadegate.toml"), "{}", d.rendered);
    assert_eq!(d.line, line, "wrong line in:\n{}", d.rendered);
    for f in fragments {
        assert!(
            d.message.contains(f),
            "`{f}` missing from the message:\n{}",
            d.rendered
        );
    }
    // Rendered compiler-style: file:line:col, then the offending source line.
    let head = format!("demo/shadegate.toml:{line}:");
    assert!(d.rendered.starts_with(&head), "{}", d.rendered);
    let src = text.lines().nth(line as usize - 1).unwrap_or("");
    if !src.trim().is_empty() {
        assert!(
            d.rendered.contains(src.trim()),
            "the source line is not shown:\n{}",
            d.rendered
        );
    }
}

fn edit(from: &str, to: &str) -> String {
    assert!(GOOD.contains(from), "test bug: `{from}` not in the suite");
    GOOD.replacen(from, to, 1)
}

#[test]
fn the_good_suite_parses() {
    let s = suite::parse(Path::new("demo/shadegate.toml"), GOOD).expect("valid suite");
    assert_eq!(s.checks.len(), 1);
    assert_eq!(s.checks[0].line, 3);
    assert_eq!(s.checks[0].sweep.len(), 5 * 3 + 10);
}

#[test]
fn not_toml_at_all() {
    expect_error(&edit("rel = 2e-6", "rel = = 2e-6"), 18, &[]);
}

#[test]
fn unknown_key_in_a_check() {
    expect_error(
        &edit(
            "function = \"d_ggx\"",
            "function = \"d_ggx\"\nfuncton = \"x\"",
        ),
        6,
        &["funct"],
    );
}

#[test]
fn unknown_key_at_the_top() {
    expect_error(&format!("colour = true\n{GOOD}"), 1, &["colour"]);
}

#[test]
fn unknown_key_in_the_tolerance() {
    expect_error(
        &edit("rel = 2e-6", "rel = 2e-6\nrelative = 1"),
        19,
        &["relative"],
    );
}

#[test]
fn unknown_key_in_random_points() {
    expect_error(&edit("seed = 1", "seed = 1\npoints = 5"), 16, &["points"]);
}

#[test]
fn tolerance_without_a_reason() {
    expect_error(
        &edit("reason = \"a few f32 roundings\"\n", ""),
        17,
        &["tolerance.reason", "reason"],
    );
}

#[test]
fn tolerance_with_an_empty_reason() {
    expect_error(
        &edit("reason = \"a few f32 roundings\"", "reason = \"  \""),
        19,
        &["tolerance.reason"],
    );
}

#[test]
fn tolerance_without_any_bound() {
    expect_error(
        &edit("rel = 2e-6\n", ""),
        17,
        &["tolerance", "abs", "rel", "ulp"],
    );
}

#[test]
fn negative_bound() {
    expect_error(
        &edit("rel = 2e-6", "rel = -1.0"),
        17,
        &["tolerance", "non-negative"],
    );
}

#[test]
fn bad_nonfinite_policy() {
    expect_error(
        &edit("rel = 2e-6", "rel = 2e-6\nnan = \"ignore\""),
        19,
        &["tolerance.nan", "\"match\""],
    );
}

#[test]
fn a_reference_check_needs_a_tolerance() {
    let text = edit(
        "[check.tolerance]\nrel = 2e-6\nreason = \"a few f32 roundings\"\n",
        "",
    );
    expect_error(&text, 2, &["tolerance", "reason"]);
}

#[test]
fn unknown_reference_model() {
    expect_error(
        &edit("reference = \"ggx_ndf\"", "reference = \"ggx_nfd\""),
        6,
        &["reference", "ggx_nfd"],
    );
}

#[test]
fn reference_argument_the_model_does_not_have() {
    expect_error(
        &edit(
            "{ alpha = \"roughness * roughness\" }",
            "{ alpha = \"roughness * roughness\", beta = \"1\" }",
        ),
        // The `reference_args` line itself, no longer the check's first line.
        7,
        &["reference_args.beta", "ggx_ndf"],
    );
}

#[test]
fn reference_parameter_with_no_source() {
    // n_dot_h comes from the sweep; without it the model's parameter has nothing to bind.
    expect_error(
        &edit(
            "n_dot_h = { linear = [0.0, 1.0, 5] }",
            "cos_h = { linear = [0.0, 1.0, 5] }",
        ),
        2,
        &["n_dot_h"],
    );
}

#[test]
fn expression_that_does_not_parse() {
    expect_error(
        &edit("\"roughness * roughness\"", "\"roughness * * roughness\""),
        7,
        &["reference_args.alpha"],
    );
}

#[test]
fn expression_naming_an_unknown_parameter() {
    expect_error(
        &edit("\"roughness * roughness\"", "\"rough * rough\""),
        7,
        &["reference_args.alpha", "`rough`", "roughness"],
    );
}

#[test]
fn expression_calling_an_unknown_function() {
    expect_error(
        &edit("\"roughness * roughness\"", "\"sq(roughness)\""),
        7,
        &["reference_args.alpha", "sq"],
    );
}

#[test]
fn domain_with_the_wrong_number_of_values() {
    expect_error(
        &edit("{ linear = [0.0, 1.0, 5] }", "{ linear = [0.0, 1.0] }"),
        10,
        &["sweep.n_dot_h", "3"],
    );
}

#[test]
fn log_domain_through_zero() {
    expect_error(
        &edit("{ log = [0.05, 1.0, 3] }", "{ log = [0.0, 1.0, 3] }"),
        11,
        &["sweep.roughness", "log"],
    );
}

#[test]
fn unknown_kind_of_domain() {
    expect_error(
        &edit("{ log = [0.05, 1.0, 3] }", "{ cubic = [0.05, 1.0, 3] }"),
        11,
        &["sweep.roughness", "cubic"],
    );
}

#[test]
fn edges_the_wrong_way_round() {
    expect_error(
        &edit("{ log = [0.05, 1.0, 3] }", "{ edges = [1.0, 0.0] }"),
        11,
        &["sweep.roughness", "edges"],
    );
}

#[test]
fn empty_list_domain() {
    expect_error(
        &edit("{ log = [0.05, 1.0, 3] }", "{ list = [] }"),
        11,
        &["sweep.roughness", "list"],
    );
}

#[test]
fn direction_with_a_stray_key() {
    expect_error(
        &edit(
            "roughness = { log = [0.05, 1.0, 3] }",
            "roughness = { log = [0.05, 1.0, 3] }\nv = { direction = { theta = { list = [0.0] }, psi = { list = [0.0] } } }",
        ),
        12,
        &["sweep.v", "psi"],
    );
}

#[test]
fn fractional_point_count() {
    expect_error(
        &edit("{ linear = [0.0, 1.0, 5] }", "{ linear = [0.0, 1.0, 5.5] }"),
        10,
        &["sweep.n_dot_h", "whole number"],
    );
}

#[test]
fn duplicate_check_names() {
    let second = GOOD.replacen("# line 1\n", "", 1);
    let text = format!("{GOOD}{second}");
    expect_error(&text, 21, &["ndf", "line 3"]);
}

#[test]
fn check_name_that_cannot_name_a_file() {
    expect_error(&edit("name = \"ndf\"", "name = \"n/d f\""), 3, &["name"]);
}

#[test]
fn check_comparing_against_nothing() {
    let text = edit(
        "reference = \"ggx_ndf\"\nreference_args = { alpha = \"roughness * roughness\" }\n",
        "",
    )
    .replace(
        "[check.tolerance]\nrel = 2e-6\nreason = \"a few f32 roundings\"\n",
        "",
    );
    expect_error(&text, 2, &["reference", "golden"]);
}

#[test]
fn golden_of_the_wrong_type() {
    expect_error(
        &edit(
            "reference = \"ggx_ndf\"",
            "reference = \"ggx_ndf\"\ngolden = 3",
        ),
        7,
        &["golden"],
    );
}

#[test]
fn unknown_number_model() {
    expect_error(
        &edit(
            "function = \"d_ggx\"",
            "function = \"d_ggx\"\narithmetic = \"fast\"",
        ),
        6,
        &["arithmetic", "fast"],
    );
}

#[test]
fn a_missing_required_key() {
    expect_error(&edit("function = \"d_ggx\"\n", ""), 2, &["function"]);
}

#[test]
fn a_suite_without_checks() {
    let d = suite::parse(Path::new("empty.toml"), "# nothing here\n").unwrap_err();
    assert!(d.message.contains("[[check]]"), "{}", d.rendered);
    assert!(d.rendered.starts_with("empty.toml"), "{}", d.rendered);
}

#[test]
fn a_missing_suite_file() {
    let d = suite::load(Path::new("no/such/suite.toml")).unwrap_err();
    assert!(d.rendered.contains("no/such/suite.toml"), "{}", d.rendered);
    assert!(d.message.contains("cannot read"), "{}", d.rendered);
}
