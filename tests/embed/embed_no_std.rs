//! The coder, the models and primed messages build without `std`.
//!
//! Building the crate again takes a while, so the check is ignored by
//! default: `cargo test --test embed -- --ignored`.

use std::process::Command;

fn build(extra: &[&str]) -> bool {
    Command::new(env!("CARGO"))
        .args(["build", "--lib", "--no-default-features", "--quiet"])
        .args(extra)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        // A separate target directory: no lock contention with this test run.
        .env(
            "CARGO_TARGET_DIR",
            concat!(env!("CARGO_MANIFEST_DIR"), "/target/no-std-check"),
        )
        .status()
        .expect("cargo runs")
        .success()
}

#[test]
#[ignore = "builds the crate a second time"]
fn core_builds_without_std() {
    assert!(build(&[]));
    // On a target that has no `std` at all, when it is installed.
    let installed = Command::new("rustup")
        .args(["target", "list", "--installed"])
        .output()
        .map(|o| String::from_utf8_lossy(&o.stdout).contains("thumbv7em-none-eabihf"))
        .unwrap_or(false);
    if installed {
        assert!(build(&["--target", "thumbv7em-none-eabihf"]));
    }
}
