//! `subrange inspect` on good and damaged containers.

use crate::support::*;

fn container(dir: &Scratch, preset: &str) -> Vec<u8> {
    let data = gauge_text(5000);
    let out = run_in(
        dir.path(),
        &["compress", "-b", "16K", "--preset", preset],
        Some(&data),
    );
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    out.stdout
}

/// The block lines of a report: (index, status text).
fn block_lines(report: &str) -> Vec<(u64, String)> {
    report
        .lines()
        .filter_map(|l| {
            let mut cols = l.split_whitespace();
            let index = cols.next()?.parse().ok()?;
            let status = l.split_once("  ok").map(|_| "ok").unwrap_or("DAMAGED");
            Some((index, status.to_string()))
        })
        .collect()
}

#[test]
fn a_good_file_shows_header_and_every_block() {
    let dir = Scratch::new("inspect-good");
    for preset in subrange::preset::Preset::names() {
        let packed = container(&dir, preset);
        dir.write("good.sr", &packed);
        let out = run_in(dir.path(), &["inspect", "good.sr"], None);
        assert_eq!(code(&out), 0, "{}", stderr(&out));
        let report = stdout(&out);
        assert!(
            report.contains(&format!("preset      {preset}")),
            "{report}"
        );
        assert!(report.contains("block size  16,384 bytes"), "{report}");
        let blocks = block_lines(&report);
        let want = gauge_text(5000).len().div_ceil(16 << 10);
        assert_eq!(blocks.len(), want, "{report}");
        assert!(blocks.iter().all(|(_, s)| s == "ok"), "{report}");
        assert!(report.contains(&format!("{want} block(s)")), "{report}");
        // Several blocks: the container ends with a block index.
        assert_eq!(want > 1, report.contains("block index: "), "{report}");
    }
}

#[test]
fn a_damaged_file_is_reported_block_by_block() {
    let dir = Scratch::new("inspect-bad");
    let mut packed = container(&dir, "static");
    let mid = packed.len() / 2;
    packed[mid] ^= 0x10;
    dir.write("bad.sr", &packed);
    let out = run_in(dir.path(), &["inspect", "bad.sr"], None);
    assert_one_line_failure(&out, 3);
    assert!(stderr(&out).contains("bad.sr"), "{}", stderr(&out));
    let report = stdout(&out);
    let blocks = block_lines(&report);
    let damaged: Vec<u64> = blocks
        .iter()
        .filter(|(_, s)| s != "ok")
        .map(|(i, _)| *i)
        .collect();
    assert_eq!(damaged.len(), 1, "{report}");
    // The blocks after the damaged one are still checked and reported.
    assert!(
        blocks.iter().any(|(i, s)| *i > damaged[0] && s == "ok"),
        "{report}"
    );
}

#[test]
fn a_truncated_file_reports_where_the_walk_stopped() {
    let dir = Scratch::new("inspect-cut");
    let packed = container(&dir, "adaptive");
    dir.write("cut.sr", &packed[..packed.len() * 2 / 3]);
    let out = run_in(dir.path(), &["inspect", "cut.sr"], None);
    assert_one_line_failure(&out, 3);
    let report = stdout(&out);
    assert!(report.contains("walk stopped"), "{report}");
    assert!(report.contains("end record not reached"), "{report}");
    assert!(!block_lines(&report).is_empty(), "{report}");
}

#[test]
fn a_foreign_file_is_invalid_input() {
    let dir = Scratch::new("inspect-foreign");
    dir.write("notes.txt", b"gauge G107 serviced; battery replaced\n");
    let out = run_in(dir.path(), &["inspect", "notes.txt"], None);
    assert_one_line_failure(&out, 3);
    assert!(
        stderr(&out).contains("not a subrange container"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn the_preset_shown_is_one_compress_accepts() {
    let dir = Scratch::new("inspect-preset");
    let packed = container(&dir, "adaptive:period=1024,lanes=4");
    dir.write("a.sr", &packed);
    let out = run_in(dir.path(), &["inspect", "a.sr"], None);
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    let report = stdout(&out);
    let shown = report
        .lines()
        .find_map(|l| l.trim().strip_prefix("preset"))
        .unwrap()
        .trim()
        .to_string();
    assert!(shown.starts_with("adaptive:lanes=4,"), "{shown}");
    // Compressing again with the text shown gives the same container.
    let again = container(&dir, &shown);
    assert_eq!(again, packed, "{shown}");
}
