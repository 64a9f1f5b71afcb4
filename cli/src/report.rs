//! Text reports: aligned tables for people.
//!
//! `bench` prints one table per input, smallest output first (failed codecs
//! last, with their reason), with the smallest, the fastest encoder and the
//! fastest decoder marked; then the summaries of [`crate::summary`]: the
//! smallest preset against the smallest baseline, and each preset's speed
//! against the baseline nearest to it in size, per input and over all
//! inputs.

use std::fmt::Write as _;

use crate::bench::{BenchReport, FileReport, Measurement};
use crate::codec::Kind;
use crate::summary::{Point, Summary};

/// `1234567` as `1,234,567`.
pub fn thousands(n: u64) -> String {
    let digits = n.to_string();
    let mut out = String::with_capacity(digits.len() + digits.len() / 3);
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// A figure with `decimals` places, or `-` when there is none.
pub fn fixed(v: Option<f64>, decimals: usize) -> String {
    match v {
        Some(x) if x.is_finite() => format!("{x:.decimals$}"),
        _ => "-".to_string(),
    }
}

/// A speed: three significant figures or so.
pub fn speed(v: Option<f64>) -> String {
    match v {
        Some(x) if x.is_finite() && x >= 100.0 => format!("{x:.0}"),
        Some(x) if x.is_finite() && x >= 10.0 => format!("{x:.1}"),
        Some(x) if x.is_finite() => format!("{x:.2}"),
        _ => "-".to_string(),
    }
}

/// Right-aligns cells in columns; the first column is left-aligned.
pub fn table(rows: &[Vec<String>]) -> String {
    table_with(rows, 1)
}

/// Aligns cells in columns: the first `left` columns to the left (names),
/// the rest to the right (figures).
pub fn table_with(rows: &[Vec<String>], left: usize) -> String {
    let cols = rows.iter().map(Vec::len).max().unwrap_or(0);
    let align: Vec<bool> = (0..cols).map(|i| i < left).collect();
    table_aligned(rows, &align)
}

/// Aligns cells in columns: `left[i]` puts column `i` flush left, otherwise
/// flush right. Columns are two spaces apart; lines carry no trailing blanks.
pub fn table_aligned(rows: &[Vec<String>], left: &[bool]) -> String {
    let cols = rows.iter().map(Vec::len).max().unwrap_or(0);
    let mut width = vec![0usize; cols];
    for row in rows {
        for (i, cell) in row.iter().enumerate() {
            width[i] = width[i].max(cell.chars().count());
        }
    }
    let mut out = String::new();
    for row in rows {
        let mut line = String::new();
        for (i, cell) in row.iter().enumerate() {
            let pad = width[i] - cell.chars().count();
            if i > 0 {
                line.push_str("  ");
            }
            if left.get(i).copied().unwrap_or(false) {
                line.push_str(cell);
                line.extend(std::iter::repeat_n(' ', pad));
            } else {
                line.extend(std::iter::repeat_n(' ', pad));
                line.push_str(cell);
            }
        }
        out.push_str(line.trim_end());
        out.push('\n');
    }
    out
}

/// One row of an input's table: figures and notes, or the failure.
fn row(m: &Measurement, size: u64, notes: &[&str]) -> Vec<String> {
    let x = match &m.outcome {
        Ok(x) => x,
        Err(why) => {
            let mut cells = vec![m.codec.clone()];
            cells.extend(std::iter::repeat_n("-".to_string(), 7));
            cells.push(format!("FAILED: {why}"));
            return cells;
        }
    };
    let (ideal, overhead) = match m.kind {
        Kind::Preset => (
            x.ideal_bytes()
                .map_or("-".to_string(), |b| thousands(b.round() as u64)),
            x.overhead_pct()
                .map_or("-".to_string(), |p| format!("{p:.2}%")),
        ),
        Kind::Baseline => ("-".to_string(), "-".to_string()),
    };
    vec![
        m.codec.clone(),
        thousands(x.compressed),
        fixed(x.ratio(size), 3),
        fixed(x.bits_per_byte(size), 3),
        ideal,
        overhead,
        speed(x.encode_mb_s(size)),
        speed(x.decode_mb_s(size)),
        notes.join(", "),
    ]
}

/// Column alignment of the per-input table: names and notes flush left.
const INPUT_COLUMNS: [bool; 9] = [true, false, false, false, false, false, false, false, true];

fn file_section(out: &mut String, f: &FileReport) {
    let _ = writeln!(
        out,
        "{}: {} bytes, order-0 entropy {:.3} bits/byte ({} bytes)",
        f.name,
        thousands(f.size),
        f.entropy0,
        thousands((f.entropy0 * f.size as f64 / 8.0).round() as u64)
    );
    let summary = Summary::of_input(f);
    let named = |i: Option<usize>| summary.point(i).map(|p| p.codec.as_str());
    let marks = [
        (named(summary.smallest), "smallest"),
        (named(summary.fastest_encode), "fastest encode"),
        (named(summary.fastest_decode), "fastest decode"),
    ];
    let mut rows = vec![[
        "codec", "size", "ratio", "bits/B", "ideal", "overhead", "enc MB/s", "dec MB/s", "",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect::<Vec<_>>()];
    // Smallest first; failures last, in measurement order.
    let mut order: Vec<&Measurement> = f.results.iter().collect();
    order.sort_by_key(|m| match &m.outcome {
        Ok(x) => (0, x.compressed),
        Err(_) => (1, 0),
    });
    for m in order {
        let notes: Vec<&str> = marks
            .iter()
            .filter(|(who, _)| *who == Some(m.codec.as_str()))
            .map(|(_, note)| *note)
            .collect();
        rows.push(row(m, f.size, &notes));
    }
    for line in table_aligned(&rows, &INPUT_COLUMNS).lines() {
        let _ = writeln!(out, "  {line}");
    }
    out.push('\n');
}

/// A size with its bits per byte: `98,123 (0.749)`.
fn size_cell(p: &Point) -> String {
    format!(
        "{} ({})",
        thousands(p.compressed),
        fixed(p.bits_per_byte(), 3)
    )
}

/// A ratio of two figures as `0.82x`, or `-`.
fn times(v: Option<f64>) -> String {
    match v {
        Some(x) if x.is_finite() => format!("{x:.2}x"),
        _ => "-".to_string(),
    }
}

/// The summaries to print: one per input, then all inputs together.
fn summaries(report: &BenchReport) -> (Vec<(String, Summary)>, Vec<String>) {
    let mut list: Vec<(String, Summary)> = report
        .files
        .iter()
        .map(|f| (f.name.clone(), Summary::of_input(f)))
        .collect();
    let mut left_out = Vec::new();
    if report.files.len() > 1 {
        let (all, out) = Summary::overall(report);
        list.push(("all inputs".to_string(), all));
        left_out = out;
    }
    (list, left_out)
}

fn size_summary(out: &mut String, list: &[(String, Summary)]) {
    out.push_str("Summary: the smallest preset against the smallest baseline\n");
    let mut rows = vec![vec![
        "input".to_string(),
        "preset".to_string(),
        "size (bits/B)".to_string(),
        "baseline".to_string(),
        "size (bits/B)".to_string(),
        "preset/baseline".to_string(),
        "smallest".to_string(),
    ]];
    for (name, s) in list {
        let p = s.point(s.best_preset);
        let b = s.point(s.best_baseline);
        rows.push(vec![
            name.clone(),
            p.map_or("-".into(), |p| p.codec.clone()),
            p.map_or("-".into(), size_cell),
            b.map_or("-".into(), |b| b.codec.clone()),
            b.map_or("-".into(), size_cell),
            times(s.best_preset_vs_best_baseline()),
            s.point(s.smallest).map_or("-".into(), |p| p.codec.clone()),
        ]);
    }
    let align = [true, true, false, true, false, false, true];
    for line in table_aligned(&rows, &align).lines() {
        let _ = writeln!(out, "  {line}");
    }
    out.push('\n');
}

fn speed_summary(out: &mut String, list: &[(String, Summary)]) {
    out.push_str("Speed: each preset against the baseline nearest to it in size\n");
    let mut rows = vec![vec![
        "input".to_string(),
        "preset".to_string(),
        "size".to_string(),
        "nearest baseline".to_string(),
        "size".to_string(),
        "size x".to_string(),
        "enc x".to_string(),
        "dec x".to_string(),
    ]];
    for (name, s) in list {
        for n in &s.nearest {
            let (p, b) = (&s.points[n.preset], &s.points[n.baseline]);
            rows.push(vec![
                name.clone(),
                p.codec.clone(),
                thousands(p.compressed),
                b.codec.clone(),
                thousands(b.compressed),
                times(n.size_ratio(s)),
                times(n.encode_ratio(s)),
                times(n.decode_ratio(s)),
            ]);
        }
    }
    let align = [true, true, false, true, false, false, false, false];
    for line in table_aligned(&rows, &align).lines() {
        let _ = writeln!(out, "  {line}");
    }
    out.push('\n');
}

/// The bench report as text.
pub fn bench(report: &BenchReport) -> String {
    let mut out = String::new();
    if report.demo_corpus {
        out.push_str(
            "Built-in demo corpus (synthetic river-gauge telemetry, text, skewed and random bytes)\n\n",
        );
    }
    for f in &report.files {
        file_section(&mut out, f);
    }
    let (list, left_out) = summaries(report);
    size_summary(&mut out, &list);
    if list.iter().any(|(_, s)| !s.nearest.is_empty()) {
        speed_summary(&mut out, &list);
    }
    if !left_out.is_empty() {
        let _ = writeln!(
            out,
            "Left out of 'all inputs' (failed on an input): {}\n",
            left_out.join(", ")
        );
    }
    let _ = writeln!(
        out,
        "ratio = original / compressed; bits/B = compressed bits per original byte\n\
ideal = sum of -log2 p over the symbols the models coded (stored blocks: 8 bits a byte)\n\
overhead = size above ideal: tables, headers, block frames, coder flushes\n\
MB/s = 10^6 bytes of uncompressed data per {}, best of {} run(s), one thread\n\
size x = preset size / baseline size (below 1: the preset is smaller);\n\
enc x, dec x = preset speed / baseline speed (above 1: the preset is faster)",
        report.clock.describe(),
        report.runs
    );
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn thousands_separators() {
        assert_eq!(thousands(0), "0");
        assert_eq!(thousands(999), "999");
        assert_eq!(thousands(1000), "1,000");
        assert_eq!(thousands(1_048_576), "1,048,576");
    }

    #[test]
    fn tables_align() {
        let t = table(&[
            vec!["a".into(), "1".into()],
            vec!["long".into(), "100".into()],
        ]);
        assert_eq!(t, "a       1\nlong  100\n");
    }

    #[test]
    fn missing_figures_are_dashes() {
        assert_eq!(fixed(None, 2), "-");
        assert_eq!(fixed(Some(f64::NAN), 2), "-");
        assert_eq!(speed(Some(123.4)), "123");
        assert_eq!(speed(Some(1.234)), "1.23");
    }
}
