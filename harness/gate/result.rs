//! What running a check produces; the report formats read only these types.

use serde::{Deserialize, Deserializer, Serialize};

use crate::compare::{Stats, Tolerance};
use crate::diagnose::Term;

/// Outcome of one check.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    Pass,
    Fail,
    /// The check could not run (bad shader, missing golden, ...): see `error`.
    Error,
}

/// Per-point evaluator issues of one kind and source site, grouped.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct IssueGroup {
    /// `out_of_bounds`, `step_budget` or `non_finite`.
    pub kind: String,
    /// e.g. "result is not finite although every input is; first NaN/Inf produced by sqrt".
    pub message: String,
    /// `shaders/x.wgsl:42:17`, or the file alone when unknown.
    pub location: String,
    pub count: usize,
    /// The first point's sweep parameters and the function's inputs.
    pub example: String,
}

/// One comparison of a check (against the reference model or the golden).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Comparison {
    /// `reference <model>` or `golden <path>`.
    pub against: String,
    pub tolerance: Tolerance,
    pub stats: Stats,
}

/// Everything known about one check after it ran.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CheckResult {
    pub name: String,
    pub shader: String,
    pub function: String,
    pub points: usize,
    pub verdict: Verdict,
    /// Why the check could not run (verdict `Error`).
    pub error: Option<String>,
    pub comparisons: Vec<Comparison>,
    pub issues: Vec<IssueGroup>,
    /// What explains the numbers, most explaining first (see [`Finding`]).
    pub findings: Vec<Finding>,
    /// Per-line precision analysis of the check's function over its sweep
    /// (`run --precision`; see [`crate::precision`]).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub precision: Option<crate::precision::Analysis>,
    pub seconds: f64,
    /// The share of the sweep this result covers (`run --shard`); `None`:
    /// every point.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub shard: Option<ShardPart>,
    /// An albedo property check's directional albedo by view angle and
    /// roughness, beside the reference model's (see [`AlbedoTable`]).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub albedo: Option<AlbedoTable>,
}

/// The directional albedo of an albedo property check (`property = { kind =
/// "albedo", ... }`) as a table: a row per view angle (the angle from +z of
/// the sweep's direction parameter that is not integrated over), a column
/// per value of its roughness parameter, each cell the largest integral over
/// the other sweep parameters and the result's components (the white
/// furnace's worst case), beside the reference model's single-scattering
/// albedo at that same point.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct AlbedoTable {
    /// The direction integrated over (`over`).
    pub over: String,
    /// The view direction's sweep parameter.
    pub view: String,
    /// The column parameter (`roughness`, `alpha`, or the first other
    /// scalar parameter that varies); `None`: one column.
    pub roughness: Option<String>,
    /// Row labels: view angles from +z in degrees, ascending.
    pub angles: Vec<f64>,
    /// Column labels: the roughness parameter's values, ascending.
    pub roughnesses: Vec<f64>,
    /// `albedo[row][column]`: the function's directional albedo; NaN where
    /// the sweep has no point.
    pub albedo: Vec<Vec<f64>>,
    /// The reference model's name (`ggx_albedo`).
    pub model: String,
    /// `reference[row][column]`: the model at the cell's point, when its
    /// parameters could be bound (`n_dot_v` is the view's z, `alpha` the
    /// sweep parameter of that name).
    pub reference: Option<Vec<Vec<f64>>>,
    /// Why `reference` is missing.
    pub note: Option<String>,
}

impl AlbedoTable {
    /// Add the table of the points that follow (the next segment): the rows
    /// and columns are the union of both, each cell keeps the larger albedo
    /// with the reference at that cell's point. A cell is NaN only where
    /// every part is (a part's NaN cell may just have no point there; a NaN
    /// integral is a failing point the comparison reports anyway). `false`
    /// when the union passes [`super::oracle::ALBEDO_CELLS`] (no table is
    /// shown then).
    pub fn absorb(&mut self, other: AlbedoTable) -> bool {
        let union = |a: &[f64], b: &[f64]| {
            let mut v: Vec<f64> = a.iter().chain(b).copied().collect();
            v.sort_by(f64::total_cmp);
            v.dedup_by(|x, y| x.to_bits() == y.to_bits());
            v
        };
        let angles = union(&self.angles, &other.angles);
        let roughnesses = union(&self.roughnesses, &other.roughnesses);
        if angles.len() * roughnesses.len() > super::oracle::ALBEDO_CELLS {
            return false;
        }
        let at = |v: &[f64], x: f64| {
            v.iter()
                .position(|y| y.to_bits() == x.to_bits())
                .expect("in the union")
        };
        let mut albedo = vec![vec![f64::NAN; roughnesses.len()]; angles.len()];
        let mut reference = vec![vec![f64::NAN; roughnesses.len()]; angles.len()];
        let has_reference = self.reference.is_some() && other.reference.is_some();
        for t in [&*self, &other] {
            for (r, &a) in t.angles.iter().enumerate() {
                for (c, &g) in t.roughnesses.iter().enumerate() {
                    let x = t.albedo[r][c];
                    let (row, col) = (at(&angles, a), at(&roughnesses, g));
                    let cur = albedo[row][col];
                    if !x.is_nan() && (cur.is_nan() || x > cur) {
                        albedo[row][col] = x;
                        if let Some(rf) = &t.reference {
                            reference[row][col] = rf[r][c];
                        }
                    }
                }
            }
        }
        self.angles = angles;
        self.roughnesses = roughnesses;
        self.albedo = albedo;
        self.reference = has_reference.then_some(reference);
        true
    }
}

/// Which points of its check's sweep a shard's result covers.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct ShardPart {
    /// Shard `index` (1-based) of `of`.
    pub index: usize,
    pub of: usize,
    /// Its first point's index in the sweep, and the sweep's point count.
    pub first: usize,
    pub total: usize,
}

/// A [`Term`] from the name a report writes for it (every term a finding
/// names is a catalogue hypothesis's).
fn term_named<'de, D: Deserializer<'de>>(d: D) -> Result<Term, D::Error> {
    let name = String::deserialize(d)?;
    crate::diagnose::CATALOGUE
        .iter()
        .map(|h| h.term)
        .find(|t| {
            serde_json::to_value(t)
                .ok()
                .and_then(|v| v.as_str().map(|s| s == name))
                == Some(true)
        })
        .ok_or_else(|| serde::de::Error::custom(format!("unknown term `{name}`")))
}

/// One explanation of a check's numbers, with its evidence. Renderers turn
/// it into words; tests assert on it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Finding {
    /// The comparison it explains (`reference ggx_ndf`, `golden goldens/x.csv`);
    /// empty when it concerns the check as a whole.
    pub against: String,
    /// Share of that comparison's failing points the finding explains, in
    /// [0, 1]; `None` for context that explains no failure (which back end
    /// ran, the shader changed since a golden was recorded).
    pub explains: Option<f64>,
    #[serde(flatten)]
    pub kind: FindingKind,
}

/// What a finding says. Each variant carries its evidence.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum FindingKind {
    /// The results come from another back end (a WebGPU device).
    EvaluatedOn { backend: String },
    /// That back end against the CPU evaluator, for one output leaf.
    BackendAgreement {
        leaf: String,
        points: usize,
        /// Points bit-identical, and at most 2 ULP apart.
        exact: usize,
        within_2: usize,
        /// Largest distance in ULP; `None`: a NaN against a number.
        worst_ulp: Option<u64>,
        /// The sweep parameters of the (first) worst point, when any differs.
        worst_at: Option<String>,
    },
    /// Sweep parameters rounded to `f16` before either side of a twin check
    /// saw them (an `f16` argument takes them directly), and `f16`
    /// arguments computed by an expression, which are rounded after it
    /// (`roughness of d_ggx_f16`): there the other side sees the unrounded value.
    InputsRounded {
        parameters: Vec<String>,
        computed: Vec<String>,
    },
    /// The shader file changed since the golden was recorded.
    ShaderChanged { recorded: String, current: String },
    /// Results are NaN or infinite where the expected value is finite.
    NonFinite {
        points: usize,
        /// `file:line:col` of the operation that first produced one, when the
        /// evaluator traced it.
        site: Option<String>,
    },
    /// Every explained result is the expected value times `factor` (the same
    /// on every point, within rounding).
    ConstantFactor {
        factor: f64,
        /// What such a factor usually is (`π (a missing 1/π?)`).
        named: Option<String>,
    },
    /// The failing points (or, when they are everywhere, the points with the
    /// largest errors) lie in a narrower range of one sweep parameter.
    Confined {
        which: Confined,
        parameter: String,
        lo: f64,
        hi: f64,
        swept_lo: f64,
        swept_hi: f64,
    },
    /// With `parameter` replaced by `replaced_by` in the reference's
    /// arguments, the points pass: the shader remaps it differently.
    Remap {
        parameter: String,
        replaced_by: String,
        meaning: Remap,
        /// Share of (sampled) points that pass under the replacement.
        passing: f64,
    },
    /// The function behaves like the reference with one change from the
    /// diagnosis catalogue (`diagnose::CATALOGUE`): under the change, the
    /// failing points pass and the passing ones still pass.
    BehavesLike {
        /// The reference model's name.
        reference: String,
        /// The hypothesis's stable id (`schlick_exponent_4`).
        hypothesis: String,
        /// The term of the model it blames.
        #[serde(deserialize_with = "term_named")]
        term: Term,
        /// What follows "behaves like `<reference>` with".
        change: String,
        /// Share of the sampled failing points that pass under the change.
        explained: f64,
        /// Share of the sampled passing points that still pass under it.
        kept: f64,
        failing_tried: usize,
        passing_tried: usize,
    },
    /// The function calls `callee`, which another check of the suite binds to
    /// `reference`, and the call deviates from that reference at the
    /// arguments the function passes it.
    CalleeDeviates {
        callee: String,
        /// The check that binds the callee.
        check: String,
        reference: String,
        /// Where the call is in the shader.
        line: u32,
        column: u32,
        /// The function's failing points at which the call ran, and at how
        /// many of them the callee's result fails its own check's tolerance.
        failing_reached: usize,
        deviating_failing: usize,
        /// The callee's own mistake, when the search names one at those
        /// arguments (a hypothesis's words).
        behaves_like: Option<String>,
    },
}

/// Which points a [`FindingKind::Confined`] finding describes.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Confined {
    /// Every failing point.
    Failures,
    /// The top 1 % of failures by how far over the tolerance they are.
    LargestErrors,
}

/// The remap a [`FindingKind::Remap`] finding suggests.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Remap {
    /// The shader uses p where the reference has p² (one squaring skipped).
    SquaringSkipped,
    /// The shader squares p once more than the reference (applied twice).
    SquaredTwice,
}

impl Finding {
    /// Order findings: context first, then the most explaining.
    pub fn rank(findings: &mut [Finding]) {
        findings.sort_by(|a, b| match (a.explains, b.explains) {
            (None, None) => std::cmp::Ordering::Equal,
            (None, Some(_)) => std::cmp::Ordering::Less,
            (Some(_), None) => std::cmp::Ordering::Greater,
            (Some(x), Some(y)) => y.total_cmp(&x),
        });
    }
}

/// A whole run.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct RunResult {
    pub suite: String,
    pub checks: Vec<CheckResult>,
}

impl RunResult {
    pub fn passed(&self) -> usize {
        self.checks
            .iter()
            .filter(|c| c.verdict == Verdict::Pass)
            .count()
    }

    pub fn failed(&self) -> usize {
        self.checks
            .iter()
            .filter(|c| c.verdict == Verdict::Fail)
            .count()
    }

    pub fn errors(&self) -> usize {
        self.checks
            .iter()
            .filter(|c| c.verdict == Verdict::Error)
            .count()
    }

    /// The CLI's exit code: 0 all pass, 1 a check failed, 2 a check could not run.
    pub fn exit_code(&self) -> i32 {
        if self.errors() > 0 {
            2
        } else if self.failed() > 0 {
            1
        } else {
            0
        }
    }
}
