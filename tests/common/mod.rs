//! Code shared by the integration tests and benches.

pub mod gen;
