//! The MQ binary coder: the standard's test sequence, round trips against
//! a flowchart-literal reference and arbitrary input (one test binary).

#[allow(dead_code)]
#[path = "../support/mod.rs"]
mod support;

mod mq_decode_arbitrary;
mod mq_reference;
mod mq_roundtrip;
mod mq_standard;
