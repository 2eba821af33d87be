//! One policy for the limits that keep a bad input from hanging, exhausting
//! memory or overflowing the stack. Every stage reads its limit from a
//! [`Limits`] value instead of a constant of its own, and every limit that is
//! hit becomes a located error (file, line, the limit's name and value, and
//! [`Limit::how_to_raise`]) rather than a panic, an abort or a silent pass.
//!
//! The defaults are sized for the 2-core, 24 GiB machines CI runs on: each is
//! far above what a real shading library needs and far below what would
//! exhaust such a machine. A suite raises one with a `[limits]` table (the
//! keys are [`Limit::key`]); the README's "Limits" section lists them.

use std::fmt;

/// The limits a run is held to. `Limits::default()` is the policy.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Limits {
    /// Points in one check's sweep (after the grid or count is multiplied out).
    pub points_per_check: u64,
    /// Operations in one function's program after every call is inlined.
    pub program_ops: u64,
    /// Loop iterations one point may run, summed over every loop and every
    /// inlined call it executes.
    pub steps_per_point: u64,
    /// Scalar slots (function-local and private variables' leaves, arrays
    /// included) one function's program may use.
    pub program_slots: u64,
    /// Nesting depth of an argument expression or of a WGSL expression
    /// (parentheses, unary operators, operator chains).
    pub expression_depth: u32,
    /// Size in bytes of one golden file, read or written.
    pub golden_bytes: u64,
    /// Size in bytes above which `record` warns about the golden it wrote
    /// (a warning, not an error: the golden is written).
    pub golden_size: u64,
    /// Checks in one suite file.
    pub checks_per_suite: u64,
    /// Texels (width × height) of one look-up table bound to a texture, read
    /// from a file or computed from a model.
    pub table_texels: u64,
    /// Points of a failing check its explanation evaluates again and keeps
    /// (every point up to this many; above it an even sample and a sample
    /// of the failing points, each half of it: `gate::stream`).
    pub evidence_points: u64,
}

impl Default for Limits {
    fn default() -> Limits {
        Limits {
            points_per_check: 1 << 28,
            program_ops: 1 << 20,
            steps_per_point: 1 << 20,
            program_slots: 1 << 16,
            expression_depth: 256,
            golden_bytes: 256 << 20,
            golden_size: 8 << 20,
            checks_per_suite: 100_000,
            table_texels: 1 << 22,
            evidence_points: 1 << 20,
        }
    }
}

impl Limits {
    /// Set one limit (from the suite's `[limits]` table); refuses zero and
    /// values above [`Limit::ceiling`].
    pub fn set(&mut self, limit: Limit, value: u64) -> Result<(), String> {
        if value == 0 {
            return Err("a limit must be positive".into());
        }
        if let Some(c) = limit.ceiling() {
            if value > c {
                return Err(format!("{value} is above the ceiling of {c} for `{limit}`"));
            }
        }
        match limit {
            Limit::PointsPerCheck => self.points_per_check = value,
            Limit::ProgramOps => self.program_ops = value,
            Limit::StepsPerPoint => self.steps_per_point = value,
            Limit::ProgramSlots => self.program_slots = value,
            Limit::ExpressionDepth => {
                self.expression_depth = u32::try_from(value).map_err(|_| "too large".to_string())?
            }
            Limit::GoldenBytes => self.golden_bytes = value,
            Limit::GoldenSize => self.golden_size = value,
            Limit::ChecksPerSuite => self.checks_per_suite = value,
            Limit::TableTexels => self.table_texels = value,
            Limit::EvidencePoints => self.evidence_points = value,
        }
        Ok(())
    }
}

/// Names one limit, for errors and for the suite's `[limits]` table.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Limit {
    PointsPerCheck,
    ProgramOps,
    StepsPerPoint,
    ProgramSlots,
    ExpressionDepth,
    GoldenBytes,
    GoldenSize,
    ChecksPerSuite,
    TableTexels,
    EvidencePoints,
}

impl Limit {
    /// Every limit, in the order the README lists them.
    pub const ALL: [Limit; 10] = [
        Limit::PointsPerCheck,
        Limit::ProgramOps,
        Limit::StepsPerPoint,
        Limit::ProgramSlots,
        Limit::ExpressionDepth,
        Limit::GoldenBytes,
        Limit::GoldenSize,
        Limit::ChecksPerSuite,
        Limit::TableTexels,
        Limit::EvidencePoints,
    ];

    /// The key of this limit in a suite's `[limits]` table.
    pub fn key(self) -> &'static str {
        match self {
            Limit::PointsPerCheck => "points_per_check",
            Limit::ProgramOps => "program_ops",
            Limit::StepsPerPoint => "steps_per_point",
            Limit::ProgramSlots => "program_slots",
            Limit::ExpressionDepth => "expression_depth",
            Limit::GoldenBytes => "golden_bytes",
            Limit::GoldenSize => "golden_size",
            Limit::ChecksPerSuite => "checks_per_suite",
            Limit::TableTexels => "table_texels",
            Limit::EvidencePoints => "evidence_points",
        }
    }

    /// The limit's value under `limits`.
    pub fn value(self, limits: &Limits) -> u64 {
        match self {
            Limit::PointsPerCheck => limits.points_per_check,
            Limit::ProgramOps => limits.program_ops,
            Limit::StepsPerPoint => limits.steps_per_point,
            Limit::ProgramSlots => limits.program_slots,
            Limit::ExpressionDepth => u64::from(limits.expression_depth),
            Limit::GoldenBytes => limits.golden_bytes,
            Limit::GoldenSize => limits.golden_size,
            Limit::ChecksPerSuite => limits.checks_per_suite,
            Limit::TableTexels => limits.table_texels,
            Limit::EvidencePoints => limits.evidence_points,
        }
    }

    /// The largest value this limit may be raised to, where one exists:
    /// expression nesting is walked recursively (on a thread with a fixed,
    /// large stack for WGSL), so its depth has a ceiling.
    pub fn ceiling(self) -> Option<u64> {
        match self {
            Limit::ExpressionDepth => Some(1024),
            _ => None,
        }
    }

    /// The sentence an error ends with: how a user raises this limit.
    pub fn how_to_raise(self) -> String {
        format!(
            "raise it with `{} = N` in the suite's [limits] table",
            self.key()
        )
    }
}

impl fmt::Display for Limit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.key())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keys_are_distinct_and_values_positive() {
        let d = Limits::default();
        let mut keys: Vec<_> = Limit::ALL.iter().map(|l| l.key()).collect();
        keys.sort();
        keys.dedup();
        assert_eq!(keys.len(), Limit::ALL.len());
        assert!(Limit::ALL.iter().all(|l| l.value(&d) > 0));
    }

    #[test]
    fn set_round_trips_and_refuses_zero_and_above_the_ceiling() {
        for l in Limit::ALL {
            let mut m = Limits::default();
            m.set(l, 7).unwrap();
            assert_eq!(l.value(&m), 7);
            assert!(m.set(l, 0).is_err());
            if let Some(c) = l.ceiling() {
                assert!(m.set(l, c + 1).is_err());
                assert!(c >= l.value(&Limits::default()));
            }
        }
    }
}
