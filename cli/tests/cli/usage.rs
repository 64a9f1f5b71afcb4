//! Usage errors, help texts and exit codes.

use crate::support::*;

#[test]
fn every_command_has_help_that_documents_exit_codes() {
    let dir = Scratch::new("help");
    for cmd in ["compress", "decompress", "bench", "inspect", "analyze"] {
        let out = run_in(dir.path(), &[cmd, "--help"], None);
        assert_eq!(code(&out), 0, "{cmd}: {}", stderr(&out));
        let text = stdout(&out);
        assert!(text.contains("Exit codes:"), "{cmd}: {text}");
        assert!(text.contains("damaged"), "{cmd}: {text}");
    }
    let out = run_in(dir.path(), &["--help"], None);
    assert!(stdout(&out).contains("Exit codes:"));
}

#[test]
fn bad_values_are_usage_errors() {
    let dir = Scratch::new("usage");
    for args in [
        &["compress", "--block-size", "12Q"][..],
        &["compress", "--threads", "0"],
        &["compress", "--preset", "nope"],
        &["bench", "--runs", "0"],
        &["frobnicate"],
        &["analyze"],
    ] {
        let out = run_in(dir.path(), args, None);
        assert_eq!(code(&out), 2, "{args:?}: {}", stderr(&out));
        assert!(!stderr(&out).contains("panicked"));
    }
}

#[test]
fn unknown_preset_lists_the_valid_ones() {
    let dir = Scratch::new("preset");
    let out = run_in(dir.path(), &["compress", "--preset", "best", "x"], None);
    assert_eq!(code(&out), 2);
    let err = stderr(&out);
    assert!(err.contains("valid presets: "), "{err}");
    for name in subrange::preset::Preset::names() {
        assert!(err.contains(name), "{err}");
    }
}
