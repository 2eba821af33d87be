//! The suite file as TOML gives it: serde structs with `deny_unknown_fields`
//! and `toml::Spanned` values, so every later error can name its line.

use std::collections::BTreeMap;

use serde::Deserialize;
use toml::Spanned;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawSuite {
    #[serde(default)]
    pub(super) check: Vec<Spanned<RawCheck>>,
    pub(super) limits: Option<Spanned<toml::Table>>,
}

/// `shader = "a.wgsl"` or `shader = ["common.wgsl", "a.wgsl"]` (several
/// files concatenated in order).
#[derive(Deserialize)]
#[serde(untagged)]
pub(super) enum RawShader {
    One(String),
    Many(Vec<String>),
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawCheck {
    pub(super) name: Spanned<String>,
    pub(super) shader: Spanned<RawShader>,
    pub(super) function: Spanned<String>,
    #[serde(default)]
    pub(super) overrides: BTreeMap<String, f64>,
    pub(super) arithmetic: Option<Spanned<String>>,
    pub(super) seed: Option<u64>,
    pub(super) reference: Option<Spanned<String>>,
    pub(super) golden: Option<Spanned<toml::Value>>,
    /// `"csv"` or `"compact"`: the file `golden = true` names.
    pub(super) golden_format: Option<Spanned<String>>,
    #[serde(default)]
    pub(super) args: BTreeMap<Spanned<String>, Spanned<String>>,
    #[serde(default)]
    pub(super) reference_args: BTreeMap<Spanned<String>, Spanned<String>>,
    /// Absent for a function without arguments (one point).
    pub(super) sweep: Option<Spanned<toml::Table>>,
    pub(super) random: Option<Spanned<RawRandom>>,
    pub(super) tolerance: Option<Spanned<RawTolerance>>,
    pub(super) golden_tolerance: Option<Spanned<RawTolerance>>,
    pub(super) twin: Option<Spanned<RawTwin>>,
    pub(super) property: Option<Spanned<toml::Table>>,
    pub(super) textures: super::textures::Raw,
    pub(super) samplers: super::textures::Raw,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawTwin {
    pub(super) function: Spanned<String>,
    pub(super) shader: Option<Spanned<String>>,
    pub(super) arithmetic: Option<Spanned<String>>,
    #[serde(default)]
    pub(super) args: BTreeMap<Spanned<String>, Spanned<String>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawRandom {
    pub(super) count: Spanned<u64>,
    pub(super) seed: u64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawTolerance {
    pub(super) abs: Option<OneOrMany>,
    pub(super) rel: Option<OneOrMany>,
    pub(super) ulp: Option<OneOrMany>,
    pub(super) nan: Option<Spanned<String>>,
    pub(super) reason: Option<Spanned<String>>,
}

#[derive(Deserialize)]
#[serde(untagged)]
pub(super) enum OneOrMany {
    One(f64),
    Many(Vec<f64>),
}

impl OneOrMany {
    pub(super) fn vec(self) -> Vec<f64> {
        match self {
            OneOrMany::One(x) => vec![x],
            OneOrMany::Many(v) => v,
        }
    }
}
