//! The `subrange` command tested as a separate process: one test binary,
//! one module per command.

mod analyze;
mod bench;
mod inspect;
mod roundtrip;
mod support;
mod targets;
mod usage;
mod window;
