//! `shadegate run --gpu`: the demo suite's checks on a WebGPU device, with
//! the adapter named and a device-versus-CPU summary per output leaf. Skips
//! (with a message) without an adapter unless SHADEGATE_REQUIRE_GPU=1.
#![cfg(feature = "gpu")]

use crate::common as gpu_common;

use std::process::Command;

#[test]
fn run_on_the_device_names_the_adapter_and_compares_with_the_cpu() {
    if gpu_common::device().is_none() {
        return;
    }
    let o = Command::new(env!("CARGO_BIN_EXE_shadegate"))
        .args(["run", "--gpu", "lambert"])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .env("NO_COLOR", "1")
        .output()
        .unwrap();
    let out = String::from_utf8_lossy(&o.stdout);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{out}{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert!(String::from_utf8_lossy(&o.stderr).contains("device: "));
    assert!(out.contains("evaluated on "), "{out}");
    // Lambert is one multiplication: the device must agree bit for bit.
    assert!(
        out.contains("device vs CPU evaluator, result.x: 100.0 % bit-identical"),
        "{out}"
    );

    let planted = Command::new(env!("CARGO_BIN_EXE_shadegate"))
        .args([
            "run",
            "--gpu",
            "--suite",
            "shaders/brackenfold-planted/shadegate.toml",
            "lambert",
        ])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .unwrap();
    assert_eq!(
        planted.status.code(),
        Some(1),
        "the planted mistake fails on the device too"
    );
}

/// `run --gpu` must hand the check's overrides to the device. Before the
/// check's `Build` carried them, the CLI rebuilt the function with no
/// overrides: the device computed `x * 1.0` while the CPU computed `x * 2.0`.
/// Asserted on the typed findings of the JSON report.
#[test]
fn run_on_the_device_applies_the_checks_overrides() {
    if gpu_common::device().is_none() {
        return;
    }
    let dir = std::env::temp_dir().join(format!("shadegate-gpu-overrides-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(
        dir.join("lib.wgsl"),
        "override scale: f32 = 1.0;\nfn scaled(x: f32) -> f32 { return x * scale; }\n",
    )
    .unwrap();
    std::fs::write(
        dir.join("shadegate.toml"),
        r#"
[[check]]
name = "scaled"
shader = "lib.wgsl"
function = "scaled"
overrides = { scale = 2.0 }
reference = "smith_schlick_k_from_alpha"
reference_args = { alpha = "x * 4.0" }
[check.sweep]
x = { list = [0.25, 0.5, 1.0, 3.0] }
[check.tolerance]
rel = 1e-6
reason = "one multiplication by a power of two is exact"
"#,
    )
    .unwrap();
    let o = Command::new(env!("CARGO_BIN_EXE_shadegate"))
        .args(["run", "--gpu", "--format", "json"])
        .current_dir(&dir)
        .output()
        .unwrap();
    let out = String::from_utf8_lossy(&o.stdout);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{out}{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let findings = v["checks"][0]["findings"].as_array().unwrap().clone();
    let leaf = findings
        .iter()
        .find(|f| f["kind"] == "backend_agreement")
        .unwrap_or_else(|| panic!("no device summary: {findings:#?}"));
    assert_eq!(leaf["exact"], leaf["points"], "{leaf:#}");
    let _ = std::fs::remove_dir_all(&dir);
}
