//! The `subrange` command.
fn main() {}
