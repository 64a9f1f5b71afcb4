//! `subrange analyze`: how compressible is a file, and with which preset?
//!
//! Reads at most `--sample` bytes from the start of the file and reports
//! 1. the empirical conditional entropies of orders 0 to 3 (see
//!    [`crate::entropy`] for the estimator and its caveats), each also as the
//!    size it corresponds to for the whole file;
//! 2. the byte histogram as a compact text chart (a 8 × 32 grid, one cell per
//!    byte value, height on a log scale) and the most frequent bytes;
//! 3. each preset's size, by compressing the first [`ESTIMATE_BYTES`] of the
//!    sample with it into a real container, scaled to the whole file. Blocks
//!    are coded independently, so a couple of default-sized blocks predict
//!    the rest well, and strong (slow) presets stay quick to estimate. The
//!    general compressors of `--baselines` (each at its default setting
//!    unless told otherwise) code the same bytes, scaled the same way, in
//!    the same table; one that fails shows its reason in its row.

use std::fmt::Write as _;

use crate::baseline::BaselineList;
use crate::cli::AnalyzeArgs;
use crate::codec::Kind;
use crate::codec::{Codec, PresetCodec};
use crate::entropy::{self, OrderEntropy};
use crate::exit::CliResult;
use crate::files::Input;
use crate::presets::PresetName;
use crate::report::{fixed, table, table_aligned, thousands};

/// Bytes compressed per preset for its size estimate: two default blocks.
pub const ESTIMATE_BYTES: usize = 2 * subrange::stream::DEFAULT_BLOCK_SIZE as usize;

/// Cell heights of the histogram chart, lowest first.
const LEVELS: [char; 8] = ['▁', '▂', '▃', '▄', '▅', '▆', '▇', '█'];

/// Runs `subrange analyze`.
pub fn run(args: &AnalyzeArgs) -> CliResult {
    let input = Input::from_arg(Some(&args.file));
    let (data, size) = input.read_prefix(Some(args.sample))?;
    // With an unknown size (standard input), assume the sample is all.
    let full = size.unwrap_or(data.len() as u64).max(data.len() as u64);
    let baselines = args.baselines.clone().unwrap_or_default();
    let text = render(&input.describe(), &data, full, &baselines)?;
    crate::print_stdout(&text)
}

/// The whole report for a sample `data` of a file of `full` bytes.
fn render(name: &str, data: &[u8], full: u64, baselines: &BaselineList) -> CliResult<String> {
    let mut out = String::new();
    let sampled = (data.len() as u64) < full;
    let _ = writeln!(
        out,
        "{name}: {} bytes{}",
        thousands(full),
        if sampled {
            format!(
                " (analyzed the first {} bytes)",
                thousands(data.len() as u64)
            )
        } else {
            String::new()
        }
    );
    if data.is_empty() {
        out.push_str("The file is empty: nothing to analyze.\n");
        return Ok(out);
    }
    out.push('\n');
    entropy_section(&mut out, &entropy::conditional_entropies(data, 3), full);
    histogram_section(&mut out, data);
    presets_section(&mut out, data, full, baselines)?;
    Ok(out)
}

fn entropy_section(out: &mut String, orders: &[OrderEntropy], full: u64) {
    out.push_str("Empirical entropy H(X | previous k bytes), plug-in estimate from counts\n");
    let mut rows = vec![vec![
        "order k".to_string(),
        "bits/byte".to_string(),
        "as size".to_string(),
        "contexts".to_string(),
        "in lone contexts".to_string(),
    ]];
    for e in orders {
        let lone = if e.positions > 0 {
            format!(
                "{:.1}%",
                100.0 * e.lone_positions as f64 / e.positions as f64
            )
        } else {
            "-".to_string()
        };
        rows.push(vec![
            e.order.to_string(),
            format!("{:.3}", e.bits_per_byte),
            thousands((e.bits_per_byte * full as f64 / 8.0).round() as u64),
            thousands(e.contexts),
            lone,
        ]);
    }
    for line in table(&rows).lines() {
        let _ = writeln!(out, "  {line}");
    }
    let worst = orders
        .iter()
        .filter(|e| e.positions > 0)
        .map(|e| e.lone_positions as f64 / e.positions as f64)
        .fold(0.0, f64::max);
    out.push_str(
        "  Order k is the cost of the best fixed order-k model fitted to this data \
(tables not counted).\n",
    );
    if worst > 0.05 {
        out.push_str(
            "  Orders with many positions in lone contexts are optimistic: an adaptive \
model must first learn those contexts.\n",
        );
    }
    out.push('\n');
}

/// The 8 × 32 chart: row `r` holds bytes `32r .. 32r + 31`.
pub fn histogram_chart(counts: &[u64; 256]) -> String {
    let max = counts.iter().copied().max().unwrap_or(0);
    let mut out = String::new();
    out.push_str("      ");
    for i in 0..32 {
        let _ = write!(out, "{:x}", i % 16);
    }
    out.push('\n');
    for row in 0..8 {
        let _ = write!(out, "  {:02x}  ", row * 32);
        for col in 0..32 {
            out.push(cell(counts[row * 32 + col], max));
        }
        out.push('\n');
    }
    out
}

/// One cell: `·` for an absent byte, else a bar of height `1 + 7·ln c / ln max`.
fn cell(count: u64, max: u64) -> char {
    if count == 0 {
        return '·';
    }
    if max <= 1 {
        return LEVELS[7];
    }
    let level = 1.0 + 7.0 * (count as f64).ln() / (max as f64).ln();
    LEVELS[(level.floor() as usize).clamp(1, 8) - 1]
}

fn histogram_section(out: &mut String, data: &[u8]) {
    let mut counts = [0u64; 256];
    for &b in data {
        counts[b as usize] += 1;
    }
    let present = counts.iter().filter(|&&c| c > 0).count();
    let _ = writeln!(
        out,
        "Byte histogram: {present} of 256 values present (cell height on a log scale; · absent)"
    );
    out.push_str(&histogram_chart(&counts));
    let mut order: Vec<usize> = (0..256).filter(|&b| counts[b] > 0).collect();
    order.sort_by(|&a, &b| counts[b].cmp(&counts[a]).then(a.cmp(&b)));
    let n = data.len() as f64;
    let top = counts[order[0]] as f64;
    let mut rows = Vec::new();
    for &b in order.iter().take(10) {
        let share = counts[b] as f64 / n;
        let bar = "#".repeat(((counts[b] as f64 / top) * 30.0).round().max(1.0) as usize);
        rows.push(vec![
            format!("0x{b:02x} {}", printable(b as u8)),
            thousands(counts[b]),
            format!("{:.2}%", 100.0 * share),
            bar,
        ]);
    }
    out.push_str("Most frequent bytes\n");
    for line in table_aligned(&rows, &[true, false, false, true]).lines() {
        let _ = writeln!(out, "  {line}");
    }
    out.push('\n');
}

/// A byte as it reads: `'a'`, `\n`, or blank for unprintable ones.
fn printable(b: u8) -> String {
    match b {
        b'\n' => "'\\n'".to_string(),
        b'\t' => "'\\t'".to_string(),
        b'\r' => "'\\r'".to_string(),
        0x20..=0x7e => format!("'{}'", b as char),
        _ => "   ".to_string(),
    }
}

fn presets_section(
    out: &mut String,
    sample: &[u8],
    full: u64,
    baselines: &BaselineList,
) -> CliResult {
    let data = &sample[..sample.len().min(ESTIMATE_BYTES)];
    let sampled = (data.len() as u64) < full;
    let scale = full as f64 / data.len() as f64;
    let _ = writeln!(
        out,
        "Preset estimates, with general compressors for comparison ({})",
        if sampled {
            format!(
                "the first {} bytes compressed, scaled to the whole file",
                thousands(data.len() as u64)
            )
        } else {
            "the whole file compressed in memory".to_string()
        }
    );
    let mut rows = vec![vec![
        "codec".to_string(),
        "size".to_string(),
        "ratio".to_string(),
        "bits/byte".to_string(),
        String::new(),
    ]];
    let mut codecs: Vec<Box<dyn Codec>> = Vec::new();
    for preset in PresetName::all() {
        codecs.push(Box::new(PresetCodec::new(preset.preset(), None, 0)?));
    }
    codecs.extend(baselines.0.iter().map(|&b| Box::new(b) as Box<dyn Codec>));
    let mut best: [Option<(String, f64)>; 2] = [None, None];
    for c in &codecs {
        let packed = match c.compress(data) {
            Ok(p) => p.len() as f64,
            Err(e) => {
                rows.push(vec![
                    c.name(),
                    "-".into(),
                    "-".into(),
                    "-".into(),
                    format!("FAILED: {}", e.message()),
                ]);
                continue;
            }
        };
        let size = packed * scale;
        rows.push(vec![
            c.name(),
            format!(
                "{}{}",
                if sampled { "~" } else { "" },
                thousands(size.round() as u64)
            ),
            fixed((packed > 0.0).then(|| data.len() as f64 / packed), 3),
            format!("{:.3}", 8.0 * packed / data.len() as f64),
            match c.kind() {
                Kind::Preset => String::new(),
                Kind::Baseline => "baseline".to_string(),
            },
        ]);
        let slot = &mut best[usize::from(c.kind() == Kind::Baseline)];
        if slot.as_ref().is_none_or(|(_, s)| size < *s) {
            *slot = Some((c.name(), size));
        }
    }
    for line in table_aligned(&rows, &[true, false, false, false, true]).lines() {
        let _ = writeln!(out, "  {line}");
    }
    let [preset, baseline] = best;
    if let Some((name, size)) = preset {
        let _ = write!(
            out,
            "  Smallest preset: {name} (subrange compress --preset {name})"
        );
        if let Some((base, base_size)) = baseline.filter(|(_, s)| *s > 0.0) {
            let _ = write!(
                out,
                "; smallest baseline: {base}, {:.2}x the preset's size",
                base_size / size
            );
        }
        out.push('\n');
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn chart_cells() {
        assert_eq!(cell(0, 10), '·');
        assert_eq!(cell(1, 1), '█');
        assert_eq!(cell(1, 1000), '▁');
        assert_eq!(cell(1000, 1000), '█');
        let mut counts = [0u64; 256];
        counts[b'a' as usize] = 5;
        let chart = histogram_chart(&counts);
        assert_eq!(chart.lines().count(), 9);
        // 'a' = 0x61: row 0x60, column 1.
        let row = chart.lines().nth(4).unwrap();
        assert!(row.starts_with("  60  ·█·"), "{row}");
    }

    #[test]
    fn report_mentions_every_order_and_preset() {
        let data = subrange::corpus::gauge_csv(5, 5000);
        let all = BaselineList::default();
        let text = render("'x'", &data, data.len() as u64, &all).unwrap();
        for p in PresetName::all() {
            assert!(text.contains(p.as_str()), "{text}");
        }
        for b in &all.0 {
            assert!(text.contains(&format!("{b} ")), "{text}");
        }
        assert!(text.contains("smallest baseline: "), "{text}");
        assert!(text.contains("Empirical entropy"));
        assert!(!text.contains("analyzed the first"));
        let none = BaselineList(Vec::new());
        let text = render("'x'", &data, 10 * data.len() as u64, &none).unwrap();
        assert!(text.contains("analyzed the first"));
        assert!(!text.contains("baseline"), "{text}");
        assert!(render("'x'", &[], 0, &all).unwrap().contains("empty"));
    }
}
