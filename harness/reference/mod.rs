//! Reference models (filled in by the reference work).
