//! Diagnosis: name the mistake behind a failing check, not only where it shows.
//!
//! - [`terms`]: the registry's composite models taken apart into named terms (roughness
//!   remap and clamp, distribution, visibility, Fresnel with its `F0` and `F90`, diffuse,
//!   metallic blend, cosines, constant factors), each re-evaluable with one term changed.
//!   With no change a decomposition is its registry model bit for bit.
//! - [`catalogue`]: the mistakes shading code makes, one [`Hypothesis`] per row.
//! - [`search`](mod@search): re-evaluates the reference under each hypothesis at the check's points and
//!   ranks those under which the failing points pass and the passing ones still pass.
//! - [`callgraph`]: the arguments a caller passes to a callee, captured by evaluating an
//!   in-memory wrapper of the caller, so a callee bound to its own reference can be judged
//!   at the arguments it really receives.
//!
//! The API takes plain slices and closures, never the gate's types, so the gate (or a test)
//! calls it with what it has. Like every library module, it never prints and never exits.

pub mod callgraph;
pub mod catalogue;
pub mod search;
pub mod terms;

pub use catalogue::{hypothesis, Hypothesis, Term, CATALOGUE};
pub use search::{search, Fit, Options, SearchError};
pub use terms::{decomposition, Decomposition, Knob, Variant};
