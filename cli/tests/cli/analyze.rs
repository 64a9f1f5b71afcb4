//! `subrange analyze` on files with known entropy.

use crate::support::*;

/// The figure of order `k` in the entropy table.
fn order_bits(report: &str, k: usize) -> f64 {
    let line = report
        .lines()
        .skip_while(|l| !l.starts_with("Empirical entropy"))
        .nth(2 + k)
        .unwrap_or_else(|| panic!("no order-{k} line in:\n{report}"));
    let mut cols = line.split_whitespace();
    assert_eq!(cols.next(), Some(k.to_string().as_str()), "{line}");
    cols.next().unwrap().parse().unwrap()
}

#[test]
fn two_equiprobable_bytes_have_one_bit_of_order0_entropy() {
    // Entropy of a uniform distribution over 2^k symbols is k bits
    // (common practice): here k = 1.
    let dir = Scratch::new("analyze-two");
    // 2048 of each byte, shuffled (Fisher-Yates with a fixed LCG).
    let mut data: Vec<u8> = (0..4096)
        .map(|i| if i < 2048 { b'a' } else { b'b' })
        .collect();
    let mut state = 12345u64;
    for i in (1..data.len()).rev() {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        let j = ((state >> 33) % (i as u64 + 1)) as usize;
        data.swap(i, j);
    }
    assert_eq!(data.iter().filter(|&&b| b == b'a').count(), 2048);
    dir.write("two.bin", &data);
    let out = run_in(dir.path(), &["analyze", "two.bin"], None);
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    let report = stdout(&out);
    assert_eq!(order_bits(&report, 0), 1.0, "{report}");
    assert!(report.contains("2 of 256 values present"), "{report}");
}

#[test]
fn uniform_over_16_symbols_is_4_bits_and_a_cycle_is_free_with_context() {
    // Uniform over 2^4 symbols: 4 bits (common practice). The sequence is a
    // fixed cycle, so one byte of context predicts the next exactly.
    let dir = Scratch::new("analyze-cycle");
    let data: Vec<u8> = (0..16 * 500).map(|i| b"0123456789abcdef"[i % 16]).collect();
    dir.write("cycle.txt", &data);
    let out = run_in(dir.path(), &["analyze", "cycle.txt"], None);
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    let report = stdout(&out);
    assert_eq!(order_bits(&report, 0), 4.0, "{report}");
    for k in 1..=3 {
        assert_eq!(order_bits(&report, k), 0.0, "{report}");
    }
    assert!(report.contains("Preset estimates"), "{report}");
}

#[test]
fn analyze_sizes_the_baselines_beside_the_presets() {
    let dir = Scratch::new("analyze-baselines");
    dir.write("levels.csv", &gauge_text(3000));
    let out = run_in(dir.path(), &["analyze", "levels.csv"], None);
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    let report = stdout(&out);
    let mut want = vec!["flate2-6"];
    if cfg!(feature = "baselines") {
        want.extend(["zstd-3", "xz-6", "bzip2-9", "brotli-11", "lz4-1"]);
    }
    let rows: Vec<&str> = report
        .lines()
        .skip_while(|l| !l.starts_with("Preset estimates"))
        .collect();
    for name in &want {
        let row = rows
            .iter()
            .find(|l| l.split_whitespace().next() == Some(name))
            .unwrap_or_else(|| panic!("no {name} row in:\n{report}"));
        assert!(row.trim_end().ends_with("baseline"), "{row}");
    }
    assert!(report.contains("smallest baseline: "), "{report}");
    let out = run_in(
        dir.path(),
        &["analyze", "levels.csv", "--baselines", "none"],
        None,
    );
    assert!(!stdout(&out).contains("flate2-6"), "{}", stdout(&out));
}

#[test]
fn analyze_reads_standard_input_and_reports_a_sample() {
    let dir = Scratch::new("analyze-stdin");
    let data = gauge_text(2000);
    let out = run_in(dir.path(), &["analyze", "-", "--sample", "4K"], Some(&data));
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    assert!(stdout(&out).contains("standard input"));
    // A file larger than the sample says it was sampled.
    dir.write("big.csv", &data);
    let out = run_in(dir.path(), &["analyze", "big.csv", "--sample", "4K"], None);
    assert!(
        stdout(&out).contains("analyzed the first 4,096 bytes"),
        "{}",
        stdout(&out)
    );
}

#[test]
fn missing_file_is_a_one_line_io_failure() {
    let dir = Scratch::new("analyze-missing");
    let out = run_in(dir.path(), &["analyze", "nowhere.csv"], None);
    assert_one_line_failure(&out, 1);
    assert!(stderr(&out).contains("nowhere.csv"));
}
