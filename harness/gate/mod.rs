//! The regression gate: runs the checks of a suite. One way, per check:
//!
//! - [`args`]: binding argument expressions (constructors, parts by path,
//!   sweep parameters) to parameters of any value type;
//! - [`inputs`]: the sweep's points, the argument columns, the [`Build`] of
//!   the check (the one place its overrides and number model reach a back
//!   end), the CPU evaluation and the reference model's columns;
//! - [`stream`]: one check as a streamed pass over segments of its points
//!   (statistics in bounded memory), then the explanation of its evidence;
//! - [`run`](mod@run): running checks, on the CPU or another [`Backend`], and
//!   `compare_versions`;
//! - [`explain`]: typed findings from each comparison, by the explainers of
//!   its table;
//! - [`oracle`]: twins and property checks, each the columns of one more
//!   comparison;
//! - [`record`](mod@record): writing a check's golden dataset;
//! - [`shard`]: `run --shard K/N` and merging the shards' JSON reports;
//! - [`table`]: the point tables (CSV) of `shadegate eval`;
//! - [`result`]: the types reports read.

pub mod args;
pub mod explain;
pub mod inputs;
pub mod oracle;
pub mod record;
pub mod result;
pub mod run;
pub mod shard;
pub mod stream;
pub mod table;

pub use inputs::{
    as_f64, build_of, evaluate, files_with, point_range, points_of, reference_arg_columns,
    reference_columns, reference_columns_sharing, reference_expr_columns, reference_fits, Build,
    Evaluated,
};
pub use record::{record, Recorded};
pub use result::{
    AlbedoTable, CheckResult, Comparison, Confined, Finding, FindingKind, IssueGroup, Remap,
    RunResult, ShardPart, Verdict,
};
pub use run::{
    compare_functions, compare_versions, run, run_check, run_check_explained, run_check_on,
    run_check_with, run_on, run_reporting, Backend,
};
pub use stream::Progress;
