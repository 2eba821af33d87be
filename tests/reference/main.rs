//! The reference models against outside sources: mpmath tables, Mitsuba 3 tables, mathematical identities, handbook facts.

mod common;
mod handbook;
mod identities;
mod integrated;
mod mitsuba;
mod mpmath;
