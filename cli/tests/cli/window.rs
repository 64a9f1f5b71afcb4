//! `subrange decompress --bytes START..END`: one byte range of the original,
//! from files (with and without a block index) and from standard input.

use std::fs;

use crate::support::*;

#[test]
fn a_byte_range_decodes_to_the_slice() {
    let dir = Scratch::new("window");
    let data = gauge_text(20_000);
    dir.write("day.csv", &data);
    let out = run_in(dir.path(), &["compress", "day.csv", "-b", "16K"], None);
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    let packed = fs::read(dir.join("day.csv.sr")).unwrap();
    let n = data.len();
    let cases: Vec<(String, std::ops::Range<usize>)> = vec![
        ("100K..101K".into(), 100 << 10..101 << 10),
        ("0..0".into(), 0..0),
        (format!("{}..", n - 10), n - 10..n),
        ("..16K".into(), 0..16 << 10),
        (format!("16383..{}", n), 16383..n),
    ];
    for (arg, want) in &cases {
        let out = run_in(
            dir.path(),
            &["decompress", "day.csv.sr", "--bytes", arg],
            None,
        );
        assert_eq!(code(&out), 0, "{arg}: {}", stderr(&out));
        assert_eq!(out.stdout, &data[want.clone()], "{arg}");
        // The same from standard input (decoded from the start).
        let out = run_in(dir.path(), &["decompress", "--bytes", arg], Some(&packed));
        assert_eq!(code(&out), 0, "{arg}: {}", stderr(&out));
        assert_eq!(out.stdout, &data[want.clone()], "{arg} from stdin");
    }
    // To a file with -o; the compressed file is left alone.
    let out = run_in(
        dir.path(),
        &[
            "decompress",
            "day.csv.sr",
            "--bytes",
            "1K..3K",
            "-o",
            "part.csv",
        ],
        None,
    );
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    assert_eq!(fs::read(dir.join("part.csv")).unwrap(), &data[1024..3072]);
    assert_eq!(fs::read(dir.join("day.csv.sr")).unwrap(), packed);
}

#[test]
fn a_range_past_the_end_is_refused_without_output() {
    let dir = Scratch::new("window-past");
    let data = gauge_text(2000);
    dir.write("d.csv", &data);
    assert_eq!(
        code(&run_in(
            dir.path(),
            &["compress", "d.csv", "-b", "4K"],
            None
        )),
        0
    );
    let packed = fs::read(dir.join("d.csv.sr")).unwrap();
    let past = format!("{}..{}", data.len() - 1, data.len() + 1);
    let out = run_in(
        dir.path(),
        &["decompress", "d.csv.sr", "--bytes", &past, "-o", "x.csv"],
        None,
    );
    assert_one_line_failure(&out, 2);
    assert!(
        stderr(&out).contains(&format!("only {} bytes", data.len())),
        "{}",
        stderr(&out)
    );
    assert!(!dir.join("x.csv").exists());
    let out = run_in(
        dir.path(),
        &["decompress", "--bytes", &past, "-o", "y.csv"],
        Some(&packed),
    );
    assert_one_line_failure(&out, 2);
    assert!(!dir.join("y.csv").exists());
    assert!(
        dir.entries().iter().all(|e| !e.starts_with('.')),
        "{:?}",
        dir.entries()
    );
    // Not a range at all: a usage error from the parser.
    let out = run_in(
        dir.path(),
        &["decompress", "d.csv.sr", "--bytes", "5..2"],
        None,
    );
    assert_eq!(code(&out), 2);
    // A damaged block inside the range is damage (exit 3).
    let mut bad = packed.clone();
    bad[40] ^= 0x10;
    dir.write("bad.sr", &bad);
    let out = run_in(
        dir.path(),
        &["decompress", "bad.sr", "--bytes", "0..100"],
        None,
    );
    assert_one_line_failure(&out, 3);
}
