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
