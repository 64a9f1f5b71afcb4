//! Who is smallest and who is fastest: the comparisons `bench` ends with.
//!
//! A [`Summary`] is computed over a set of [`Point`]s — the codecs that
//! succeeded on one input, or the totals over all inputs of the codecs that
//! succeeded on every input (a codec missing an input would otherwise look
//! smaller than it is). It names the smallest codec, the fastest encoder and
//! decoder, the smallest preset against the smallest baseline, and for each
//! preset the baseline *nearest to it in size*: the one whose compressed
//! size is closest on a log scale (the smallest `|ln(preset / baseline)|`),
//! so that its speed can be weighed against a compressor that reaches about
//! the same size. Ties go to the codec measured first.
//!
//! The text report, the JSON and the plot all read these figures, so they
//! always agree.

use crate::bench::{BenchReport, FileReport};
use crate::codec::Kind;

/// One codec's figures on one input, or totalled over all inputs.
#[derive(Debug, Clone, PartialEq)]
pub struct Point {
    /// Codec name.
    pub codec: String,
    /// Preset or baseline.
    pub kind: Kind,
    /// Uncompressed bytes.
    pub raw: u64,
    /// Compressed bytes.
    pub compressed: u64,
    /// Compression seconds (best run; summed over inputs for totals).
    pub encode_secs: f64,
    /// Decompression seconds (best run; summed over inputs for totals).
    pub decode_secs: f64,
}

impl Point {
    /// Compressed bits per original byte.
    pub fn bits_per_byte(&self) -> Option<f64> {
        (self.raw > 0).then(|| 8.0 * self.compressed as f64 / self.raw as f64)
    }

    /// Original / compressed.
    pub fn ratio(&self) -> Option<f64> {
        (self.raw > 0 && self.compressed > 0).then(|| self.raw as f64 / self.compressed as f64)
    }

    /// Compression speed in 10^6 bytes a second.
    pub fn encode_mb_s(&self) -> Option<f64> {
        mb_s(self.raw, self.encode_secs)
    }

    /// Decompression speed in 10^6 bytes a second.
    pub fn decode_mb_s(&self) -> Option<f64> {
        mb_s(self.raw, self.decode_secs)
    }
}

fn mb_s(raw: u64, secs: f64) -> Option<f64> {
    (raw > 0 && secs > 0.0).then(|| raw as f64 / 1e6 / secs)
}

/// A preset and the baseline nearest to it in size.
#[derive(Debug, Clone, PartialEq)]
pub struct Nearest {
    /// Index of the preset in [`Summary::points`].
    pub preset: usize,
    /// Index of the baseline in [`Summary::points`].
    pub baseline: usize,
}

/// The comparisons over one set of points.
#[derive(Debug, Clone, PartialEq)]
pub struct Summary {
    /// The points compared, in measurement order.
    pub points: Vec<Point>,
    /// The smallest output of all.
    pub smallest: Option<usize>,
    /// The highest compression speed.
    pub fastest_encode: Option<usize>,
    /// The highest decompression speed.
    pub fastest_decode: Option<usize>,
    /// The smallest preset.
    pub best_preset: Option<usize>,
    /// The smallest baseline.
    pub best_baseline: Option<usize>,
    /// Per preset, in measurement order: the baseline nearest in size.
    pub nearest: Vec<Nearest>,
}

impl Summary {
    /// The comparisons over `points`.
    pub fn of(points: Vec<Point>) -> Summary {
        let all: Vec<usize> = (0..points.len()).collect();
        let of_kind = |k: Kind| -> Vec<usize> {
            all.iter()
                .copied()
                .filter(|&i| points[i].kind == k)
                .collect()
        };
        let presets = of_kind(Kind::Preset);
        let baselines = of_kind(Kind::Baseline);
        let smallest = |set: &[usize]| min_by(set, |i| points[i].compressed as f64);
        let nearest = presets
            .iter()
            .filter_map(|&p| {
                let size = |i: usize| (points[i].compressed.max(1) as f64).ln();
                min_by(&baselines, |b| (size(p) - size(b)).abs()).map(|b| Nearest {
                    preset: p,
                    baseline: b,
                })
            })
            .collect();
        Summary {
            smallest: smallest(&all),
            fastest_encode: min_by(&all, |i| -points[i].encode_mb_s().unwrap_or(-1.0)),
            fastest_decode: min_by(&all, |i| -points[i].decode_mb_s().unwrap_or(-1.0)),
            best_preset: smallest(&presets),
            best_baseline: smallest(&baselines),
            nearest,
            points,
        }
    }

    /// The codecs that succeeded on one input.
    pub fn of_input(f: &FileReport) -> Summary {
        Summary::of(
            f.results
                .iter()
                .filter_map(|m| {
                    let x = m.outcome.as_ref().ok()?;
                    Some(Point {
                        codec: m.codec.clone(),
                        kind: m.kind,
                        raw: f.size,
                        compressed: x.compressed,
                        encode_secs: x.encode_secs,
                        decode_secs: x.decode_secs,
                    })
                })
                .collect(),
        )
    }

    /// Totals over all inputs of the codecs that succeeded on every input,
    /// and the names of those left out.
    pub fn overall(report: &BenchReport) -> (Summary, Vec<String>) {
        let mut points: Vec<Point> = Vec::new();
        let mut left_out: Vec<String> = Vec::new();
        let Some(first) = report.files.first() else {
            return (Summary::of(points), left_out);
        };
        for m in &first.results {
            let mut total = Point {
                codec: m.codec.clone(),
                kind: m.kind,
                raw: 0,
                compressed: 0,
                encode_secs: 0.0,
                decode_secs: 0.0,
            };
            let mut complete = true;
            for f in &report.files {
                match f.get(&m.codec).map(|x| x.outcome.as_ref()) {
                    Some(Ok(x)) => {
                        total.raw += f.size;
                        total.compressed += x.compressed;
                        total.encode_secs += x.encode_secs;
                        total.decode_secs += x.decode_secs;
                    }
                    _ => complete = false,
                }
            }
            if complete {
                points.push(total);
            } else {
                left_out.push(m.codec.clone());
            }
        }
        (Summary::of(points), left_out)
    }

    /// The point at `i`, if any.
    pub fn point(&self, i: Option<usize>) -> Option<&Point> {
        i.and_then(|i| self.points.get(i))
    }

    /// The smallest preset's size over the smallest baseline's.
    pub fn best_preset_vs_best_baseline(&self) -> Option<f64> {
        let p = self.point(self.best_preset)?;
        let b = self.point(self.best_baseline)?;
        (b.compressed > 0).then(|| p.compressed as f64 / b.compressed as f64)
    }
}

impl Nearest {
    /// Preset size over baseline size (below 1: the preset is smaller).
    pub fn size_ratio(&self, s: &Summary) -> Option<f64> {
        let (p, b) = (&s.points[self.preset], &s.points[self.baseline]);
        (b.compressed > 0).then(|| p.compressed as f64 / b.compressed as f64)
    }

    /// Preset encode speed over baseline encode speed (above 1: faster).
    pub fn encode_ratio(&self, s: &Summary) -> Option<f64> {
        let (p, b) = (&s.points[self.preset], &s.points[self.baseline]);
        Some(p.encode_mb_s()? / b.encode_mb_s()?)
    }

    /// Preset decode speed over baseline decode speed (above 1: faster).
    pub fn decode_ratio(&self, s: &Summary) -> Option<f64> {
        let (p, b) = (&s.points[self.preset], &s.points[self.baseline]);
        Some(p.decode_mb_s()? / b.decode_mb_s()?)
    }
}

/// The index in `set` with the smallest `key` (the first on ties).
fn min_by(set: &[usize], key: impl Fn(usize) -> f64) -> Option<usize> {
    let mut best: Option<(usize, f64)> = None;
    for &i in set {
        let k = key(i);
        if best.is_none_or(|(_, b)| k < b) {
            best = Some((i, k));
        }
    }
    best.map(|(i, _)| i)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p(codec: &str, kind: Kind, compressed: u64, encode_secs: f64) -> Point {
        Point {
            codec: codec.into(),
            kind,
            raw: 1_000_000,
            compressed,
            encode_secs,
            decode_secs: encode_secs / 2.0,
        }
    }

    #[test]
    fn best_of_and_nearest_in_size() {
        let s = Summary::of(vec![
            p("fast-preset", Kind::Preset, 500_000, 0.01),
            p("strong-preset", Kind::Preset, 100_000, 1.0),
            p("quick-base", Kind::Baseline, 450_000, 0.005),
            p("tight-base", Kind::Baseline, 120_000, 0.5),
            p("mid-base", Kind::Baseline, 300_000, 0.1),
        ]);
        let name = |i: Option<usize>| s.point(i).map(|p| p.codec.as_str());
        assert_eq!(name(s.smallest), Some("strong-preset"));
        assert_eq!(name(s.fastest_encode), Some("quick-base"));
        assert_eq!(name(s.fastest_decode), Some("quick-base"));
        assert_eq!(name(s.best_preset), Some("strong-preset"));
        assert_eq!(name(s.best_baseline), Some("tight-base"));
        assert_eq!(
            s.best_preset_vs_best_baseline(),
            Some(100_000.0 / 120_000.0)
        );
        let pairs: Vec<(&str, &str)> = s
            .nearest
            .iter()
            .map(|n| {
                (
                    s.points[n.preset].codec.as_str(),
                    s.points[n.baseline].codec.as_str(),
                )
            })
            .collect();
        assert_eq!(
            pairs,
            [
                ("fast-preset", "quick-base"),
                ("strong-preset", "tight-base")
            ]
        );
        let n = &s.nearest[1];
        assert_eq!(n.size_ratio(&s), Some(100_000.0 / 120_000.0));
        assert_eq!(n.encode_ratio(&s), Some(0.5));
        assert_eq!(n.decode_ratio(&s), Some(0.5));
    }

    #[test]
    fn nearest_is_on_a_log_scale() {
        // 100 is 2x from 200 and 2.5x from 40: 200 is nearer, though 40 is
        // nearer in bytes.
        let s = Summary::of(vec![
            p("x", Kind::Preset, 100, 1.0),
            p("small", Kind::Baseline, 40, 1.0),
            p("large", Kind::Baseline, 200, 1.0),
        ]);
        assert_eq!(s.points[s.nearest[0].baseline].codec, "large");
    }

    #[test]
    fn no_baselines_or_no_points() {
        let s = Summary::of(vec![p("x", Kind::Preset, 100, 1.0)]);
        assert!(s.nearest.is_empty() && s.best_baseline.is_none());
        assert_eq!(s.best_preset_vs_best_baseline(), None);
        let s = Summary::of(Vec::new());
        assert_eq!((s.smallest, s.fastest_encode), (None, None));
    }
}
