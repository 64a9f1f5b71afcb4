//! Text reports: aligned tables for people.

use std::fmt::Write as _;

use crate::bench::{BenchReport, FileReport, Measurement};
use crate::codec::Kind;

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

fn row(m: &Measurement, size: u64) -> Vec<String> {
    let (ideal, overhead) = match m.kind {
        Kind::Preset => (
            m.ideal_bytes()
                .map_or("-".to_string(), |b| thousands(b.round() as u64)),
            m.overhead_pct()
                .map_or("-".to_string(), |p| format!("{p:.2}%")),
        ),
        Kind::Baseline => ("-".to_string(), "-".to_string()),
    };
    vec![
        m.codec.clone(),
        thousands(m.compressed),
        fixed(m.ratio(size), 3),
        fixed(m.bits_per_byte(size), 3),
        ideal,
        overhead,
        speed(m.encode_mb_s(size)),
        speed(m.decode_mb_s(size)),
    ]
}

fn file_section(out: &mut String, f: &FileReport) {
    let _ = writeln!(
        out,
        "{}: {} bytes, order-0 entropy {:.3} bits/byte ({} bytes)",
        f.name,
        thousands(f.size),
        f.entropy0,
        thousands((f.entropy0 * f.size as f64 / 8.0).round() as u64)
    );
    let mut rows = vec![[
        "codec", "size", "ratio", "bits/B", "ideal", "overhead", "enc MB/s", "dec MB/s",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect::<Vec<_>>()];
    rows.extend(f.results.iter().map(|m| row(m, f.size)));
    for line in table(&rows).lines() {
        let _ = writeln!(out, "  {line}");
    }
    out.push('\n');
}

/// Per codec: the sizes summed over all inputs.
pub fn totals(report: &BenchReport) -> Vec<(String, Kind, u64, u64)> {
    let mut out: Vec<(String, Kind, u64, u64)> = Vec::new();
    for f in &report.files {
        for m in &f.results {
            match out.iter_mut().find(|t| t.0 == m.codec) {
                Some(t) => {
                    t.2 += f.size;
                    t.3 += m.compressed;
                }
                None => out.push((m.codec.clone(), m.kind, f.size, m.compressed)),
            }
        }
    }
    out
}

fn ratio(raw: u64, packed: u64) -> Option<f64> {
    (raw > 0 && packed > 0).then(|| raw as f64 / packed as f64)
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
    out.push_str("Summary: best preset per input, against flate2 level 9 in the same run\n");
    let mut rows = Vec::new();
    for f in &report.files {
        let Some(best) = f.best_preset() else {
            continue;
        };
        let base = f.get("flate2-9");
        let (b_ratio, against) = match base {
            Some(b) => (
                fixed(b.ratio(f.size), 3),
                match (best.ratio(f.size), b.ratio(f.size)) {
                    (Some(x), Some(y)) => format!("{:.2}x flate2-9's ratio", x / y),
                    _ => "-".to_string(),
                },
            ),
            None => ("-".to_string(), "-".to_string()),
        };
        rows.push(vec![
            f.name.clone(),
            best.codec.clone(),
            format!("ratio {}", fixed(best.ratio(f.size), 3)),
            format!("flate2-9 {b_ratio}"),
            against,
        ]);
    }
    if report.files.len() > 1 {
        let totals = totals(report);
        let best = totals
            .iter()
            .filter(|t| t.1 == Kind::Preset)
            .min_by_key(|t| t.3);
        let base = totals.iter().find(|t| t.0 == "flate2-9");
        if let (Some(b), Some(z)) = (best, base) {
            let against = match (ratio(b.2, b.3), ratio(z.2, z.3)) {
                (Some(x), Some(y)) => format!("{:.2}x flate2-9's ratio", x / y),
                _ => "-".to_string(),
            };
            rows.push(vec![
                "all inputs".to_string(),
                b.0.clone(),
                format!("ratio {}", fixed(ratio(b.2, b.3), 3)),
                format!("flate2-9 {}", fixed(ratio(z.2, z.3), 3)),
                against,
            ]);
        }
    }
    for line in table_with(&rows, 2).lines() {
        let _ = writeln!(out, "  {line}");
    }
    let _ = writeln!(
        out,
        "\nratio = original / compressed; bits/B = compressed bits per original byte\n\
ideal = sum of -log2 p over the symbols the models coded (stored blocks: 8 bits a byte)\n\
overhead = size above ideal: tables, headers, block frames, coder flushes\n\
MB/s = 10^6 bytes of uncompressed data per {}, best of {} run(s), one thread",
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
