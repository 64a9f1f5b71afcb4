//! `subrange compress` / `decompress` as a user runs them: files, pipes,
//! refusals and damaged input.

use std::fs;

use crate::support::*;
use subrange::preset::Preset;

#[test]
fn every_preset_round_trips_through_files() {
    let dir = Scratch::new("rt-files");
    let data = gauge_text(4000);
    for name in Preset::names() {
        let input = format!("{name}.csv");
        dir.write(&input, &data);
        let out = run_in(
            dir.path(),
            &["compress", &input, "--preset", name, "--block-size", "16K"],
            None,
        );
        assert_eq!(code(&out), 0, "{name}: {}", stderr(&out));
        assert!(
            out.stdout.is_empty() && out.stderr.is_empty(),
            "{name}: quiet on success"
        );
        let packed = fs::read(dir.join(format!("{input}.sr"))).unwrap();
        assert!(packed.len() < data.len(), "{name} compresses text");
        // The input is left alone.
        assert_eq!(fs::read(dir.join(&input)).unwrap(), data);

        fs::remove_file(dir.join(&input)).unwrap();
        let out = run_in(dir.path(), &["decompress", &format!("{input}.sr")], None);
        assert_eq!(code(&out), 0, "{name}: {}", stderr(&out));
        assert_eq!(fs::read(dir.join(&input)).unwrap(), data, "{name}");
    }
    // Nothing but inputs and outputs: no temporary files left behind.
    assert!(
        dir.entries().iter().all(|e| !e.starts_with('.')),
        "{:?}",
        dir.entries()
    );
}

#[test]
fn every_preset_round_trips_through_pipes() {
    let dir = Scratch::new("rt-pipes");
    let data = subrange::corpus::gauge_binary(7, 50_000);
    for name in Preset::names() {
        let out = run_in(dir.path(), &["compress", "--preset", name], Some(&data));
        assert_eq!(code(&out), 0, "{name}: {}", stderr(&out));
        let packed = out.stdout;
        let out = run_in(dir.path(), &["decompress", "-"], Some(&packed));
        assert_eq!(code(&out), 0, "{name}: {}", stderr(&out));
        assert_eq!(out.stdout, data, "{name}");
        // `-o -` is standard output too, from a file.
        dir.write("frames.bin", &data);
        let out = run_in(
            dir.path(),
            &["compress", "frames.bin", "-o", "-", "--preset", name],
            None,
        );
        assert_eq!(code(&out), 0, "{name}: {}", stderr(&out));
        assert_eq!(
            out.stdout, packed,
            "{name}: same bytes from a file and a pipe"
        );
    }
    assert_eq!(dir.entries(), vec!["frames.bin".to_string()]);
}

#[test]
fn threads_and_block_size_do_not_change_the_round_trip() {
    let dir = Scratch::new("rt-threads");
    let data = gauge_text(6000);
    let mut outputs = Vec::new();
    for threads in ["1", "2", "3"] {
        let out = run_in(
            dir.path(),
            &["compress", "-t", threads, "-b", "4K"],
            Some(&data),
        );
        assert_eq!(code(&out), 0, "{}", stderr(&out));
        outputs.push(out.stdout);
    }
    assert!(
        outputs.windows(2).all(|w| w[0] == w[1]),
        "output is identical on any thread count"
    );
    let out = run_in(dir.path(), &["decompress"], Some(&outputs[0]));
    assert_eq!(out.stdout, data);
}

#[test]
fn existing_outputs_are_refused_without_force() {
    let dir = Scratch::new("rt-force");
    let data = gauge_text(500);
    dir.write("levels.csv", &data);
    dir.write("levels.csv.sr", b"precious");
    let out = run_in(dir.path(), &["compress", "levels.csv"], None);
    assert_one_line_failure(&out, 4);
    assert!(stderr(&out).contains("--force"), "{}", stderr(&out));
    assert_eq!(fs::read(dir.join("levels.csv.sr")).unwrap(), b"precious");

    let out = run_in(dir.path(), &["compress", "levels.csv", "--force"], None);
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    assert_ne!(fs::read(dir.join("levels.csv.sr")).unwrap(), b"precious");

    // Decompressing onto the existing original is refused too.
    let out = run_in(dir.path(), &["decompress", "levels.csv.sr"], None);
    assert_one_line_failure(&out, 4);
    let out = run_in(dir.path(), &["decompress", "levels.csv.sr", "-f"], None);
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    assert_eq!(fs::read(dir.join("levels.csv")).unwrap(), data);
    assert_eq!(
        dir.entries(),
        vec!["levels.csv".to_string(), "levels.csv.sr".to_string()]
    );
}

#[test]
fn the_input_is_never_overwritten_even_with_force() {
    let dir = Scratch::new("rt-self");
    let data = gauge_text(300);
    dir.write("levels.csv", &data);
    let out = run_in(
        dir.path(),
        &["compress", "levels.csv", "-o", "levels.csv", "--force"],
        None,
    );
    assert_one_line_failure(&out, 4);
    assert_eq!(fs::read(dir.join("levels.csv")).unwrap(), data);
}

#[test]
fn underivable_names_are_usage_errors() {
    let dir = Scratch::new("rt-name");
    dir.write("levels.csv", b"G100,0,1\n");
    let out = run_in(dir.path(), &["decompress", "levels.csv"], None);
    assert_one_line_failure(&out, 2);
    assert!(stderr(&out).contains("-o"), "{}", stderr(&out));
}

/// A container of several blocks with one payload byte flipped in the middle.
fn damaged_container(dir: &Scratch) -> Vec<u8> {
    let data = gauge_text(5000);
    let out = run_in(dir.path(), &["compress", "-b", "16K"], Some(&data));
    assert_eq!(code(&out), 0);
    let mut packed = out.stdout;
    let mid = packed.len() / 2;
    packed[mid] ^= 0x10;
    packed
}

#[test]
fn a_damaged_file_fails_in_one_line_and_leaves_no_output() {
    let dir = Scratch::new("rt-damage");
    let packed = damaged_container(&dir);
    dir.write("levels.csv.sr", &packed);
    let out = run_in(dir.path(), &["decompress", "levels.csv.sr"], None);
    assert_one_line_failure(&out, 3);
    let err = stderr(&out);
    assert!(
        err.contains("levels.csv.sr") && err.contains("block"),
        "{err}"
    );
    assert_eq!(
        dir.entries(),
        vec!["levels.csv.sr".to_string()],
        "no partial output"
    );

    // Truncated and foreign input are damage too.
    dir.write("cut.sr", &packed[..packed.len() / 3]);
    let out = run_in(dir.path(), &["decompress", "cut.sr", "-o", "cut.out"], None);
    assert_one_line_failure(&out, 3);
    assert!(!dir.join("cut.out").exists());
    dir.write("text.sr", b"water level 112 cm at the weir\n");
    let out = run_in(dir.path(), &["decompress", "text.sr"], None);
    assert_one_line_failure(&out, 3);
    assert!(!dir.join("text").exists());
    // Through a pipe as well.
    let out = run_in(dir.path(), &["decompress"], Some(&packed));
    assert_one_line_failure(&out, 3);
}

#[test]
fn a_missing_input_is_an_io_failure() {
    let dir = Scratch::new("rt-missing");
    let out = run_in(dir.path(), &["compress", "absent.csv"], None);
    assert_one_line_failure(&out, 1);
    assert!(stderr(&out).contains("absent.csv"));
    assert!(dir.entries().is_empty());
}

#[test]
fn an_empty_input_round_trips() {
    let dir = Scratch::new("rt-empty");
    dir.write("empty", b"");
    let out = run_in(dir.path(), &["compress", "empty"], None);
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    fs::remove_file(dir.join("empty")).unwrap();
    let out = run_in(dir.path(), &["decompress", "empty.sr"], None);
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    assert_eq!(fs::read(dir.join("empty")).unwrap(), b"");
}

#[test]
fn preset_parameters_are_recorded_and_checked() {
    let dir = Scratch::new("rt-params");
    let data = subrange::corpus::gauge_binary(9, 30_000);
    let out = run_in(
        dir.path(),
        &["compress", "-p", "adaptive:period=1024,lanes=4"],
        Some(&data),
    );
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    let packed = out.stdout;
    let preset = subrange::format::inspect(&packed[..])
        .unwrap()
        .header
        .preset;
    assert_eq!(preset.param("period"), Some(1024));
    assert_eq!(preset.param("lanes"), Some(4));
    let out = run_in(dir.path(), &["decompress", "-"], Some(&packed));
    assert_eq!(out.stdout, data);
    // A value out of range is a usage error naming the parameter's range.
    let out = run_in(
        dir.path(),
        &["compress", "-p", "adaptive:period=8"],
        Some(&data),
    );
    assert_eq!(code(&out), 2);
    assert!(
        stderr(&out).contains("period=32..1048576"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn output_a_default_reader_refuses_is_written_only_on_purpose() {
    let dir = Scratch::new("rt-reader-memory");
    let data = gauge_text(500);
    dir.write("levels.csv", &data);
    // order2 with 64 MiB blocks needs about 260 MiB a block to decode.
    let args = ["compress", "levels.csv", "-p", "order2", "-b", "64M"];
    let out = run_in(dir.path(), &args, None);
    assert_one_line_failure(&out, 2);
    assert!(stderr(&out).contains("--reader-memory"), "{}", stderr(&out));
    assert_eq!(dir.entries(), ["levels.csv"]);

    let mut raised = args.to_vec();
    raised.extend(["--reader-memory", "300M"]);
    let out = run_in(dir.path(), &raised, None);
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    fs::rename(dir.join("levels.csv"), dir.join("original.csv")).unwrap();
    let out = run_in(dir.path(), &["decompress", "levels.csv.sr"], None);
    assert_one_line_failure(&out, 3);
    assert!(stderr(&out).contains("--memory"), "{}", stderr(&out));
    assert_eq!(dir.entries(), ["levels.csv.sr", "original.csv"]);
    let out = run_in(
        dir.path(),
        &["decompress", "levels.csv.sr", "--memory", "300M"],
        None,
    );
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    assert_eq!(fs::read(dir.join("levels.csv")).unwrap(), data);
}

#[test]
fn decompress_caps_the_output_on_request() {
    let dir = Scratch::new("rt-output-limit");
    let data = vec![0u8; 300_000];
    dir.write("zeros.bin", &data);
    let out = run_in(dir.path(), &["compress", "zeros.bin", "-b", "64K"], None);
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    fs::remove_file(dir.join("zeros.bin")).unwrap();
    let out = run_in(
        dir.path(),
        &["decompress", "zeros.bin.sr", "--output-limit", "200K"],
        None,
    );
    assert_one_line_failure(&out, 3);
    assert!(stderr(&out).contains("--output-limit"), "{}", stderr(&out));
    // Nothing written, not even the blocks below the cap.
    assert_eq!(dir.entries(), ["zeros.bin.sr"]);
    let out = run_in(
        dir.path(),
        &["decompress", "zeros.bin.sr", "--output-limit", "300000"],
        None,
    );
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    assert_eq!(fs::read(dir.join("zeros.bin")).unwrap(), data);
}
