//! Embedding the coder: probabilities from outside, the symmetry audit,
//! model snapshots, primed messages and the `no_std` build (one test
//! binary).

#[allow(dead_code)]
#[path = "../support/mod.rs"]
mod support;

mod embed_audit;
mod embed_external;
mod embed_no_std;
mod embed_prime;
mod embed_snapshot;
