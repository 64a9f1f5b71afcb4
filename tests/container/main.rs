//! The block container: its documented format, round trips through the
//! adapters, options and limits, misbehaving I/O, damage and the block
//! index (one test binary).

#[allow(dead_code)]
#[path = "../support/mod.rs"]
mod support;

mod container_damage;
mod container_format;
mod container_index;
mod container_io;
mod container_options;
mod container_roundtrip;
