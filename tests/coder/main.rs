//! The range coder: round trips, exact references, code-length bounds,
//! edge cases and damaged streams (one test binary; each module is one
//! concern).

#[allow(dead_code)]
#[path = "../support/mod.rs"]
mod support;

mod coder_bounds;
mod coder_damage;
mod coder_edges;
mod coder_reference;
mod coder_roundtrip;
