//! Parametric distributions as frequency tables, built bit-exactly.
//!
//! A learned codec often predicts, for each quantised value, a distribution
//! of a fixed family: a Gaussian, Laplace or logistic with a predicted scale
//! (and a mean). The coder needs an integer table for it, and encoder and
//! decoder must build **the same** table on every machine. Tables computed
//! with `exp` or `erf` from a math library differ in the last bit between
//! platforms; here every step is integer arithmetic (`u128` fixed point), so
//! the same parameters give the same table everywhere.
//!
//! # Definitions
//!
//! Symbol `k` of a table with half-width `h` stands for the integer value
//! `k - h` (so `n = 2h + 1` symbols), and the bin of value `v` is
//! `[v - 1/2, v + 1/2)`; the two outermost bins also take the tails, so the
//! probabilities sum to one. With mean `μ` and scale `s`, the cumulative
//! distribution functions are the published ones:
//!
//! - Gaussian (standard deviation `s`): `F(x) = 1/2 · (1 + erf((x − μ) /
//!   (s·√2)))`;
//! - Laplace (scale `b = s`): `F(x) = 1/2 · exp((x − μ) / b)` below the mean,
//!   `1 − 1/2 · exp(−(x − μ) / b)` above it;
//! - logistic (scale `s`): `F(x) = 1 / (1 + exp(−(x − μ) / s))`
//!
//! (NIST/SEMATECH e-Handbook of Statistical Methods, section 1.3.6.6:
//! "Normal Distribution", "Double Exponential Distribution", "Logistic
//! Distribution").
//!
//! # Method
//!
//! Scale and mean are given in Q16 fixed point (units of 2^-16 of a step).
//! At each bin edge `x`, `u = |x − μ| / s` is formed exactly as a Q32
//! quotient, and the lower tail `F(μ − |x − μ|)` is computed in fixed point:
//!
//! - `exp(−y)` by range reduction `y = k·ln 2 + r`, `0 <= r < ln 2`, and the
//!   Taylor series of `exp(−r)` in Q90, shifted right by `k`;
//! - the Gaussian from Marsaglia's series `Φ(w) = 1/2 + φ(w) · (w + w³/3 +
//!   w⁵/(3·5) + …)` (G. Marsaglia, "Evaluating the Normal Distribution",
//!   Journal of Statistical Software 11(4), 2004), whose terms are all
//!   positive, so nothing cancels; for `w >= 8` the tail (below 2^-50) is 0;
//! - Laplace and logistic directly from `exp(−u)` (taken as 0 for `u >= 64`).
//!
//! The edge values form a cumulative function `c` in Q40 with `c_0 = 0` and
//! `c_n = 2^40`; a running maximum keeps it monotone. With `T = 2^log2_total`
//! and `A = T − n`, symbol `k` gets
//! `freq_k = 1 + ⌊A·c_(k+1) / 2^40 + 1/2⌋ − ⌊A·c_k / 2^40 + 1/2⌋`: every
//! symbol at least 1, the sum exactly `T`, and a table whose `c` is symmetric
//! comes out symmetric (but for exact ties of the rounding).
//!
//! # Invariant and bound
//!
//! Every edge value is within [`CDF_ERROR`] (2^-30) of the exact `F` at that
//! edge. Writing `q_k` for the table's own probability `(c_(k+1) − c_k) /
//! 2^40` and `p_k` for the exact one, `|q_k − p_k| <= 2·CDF_ERROR`, and
//!
//! `|freq_k − T·p_k| < 1 + |1 − n·p_k| + 2·(T + n)·CDF_ERROR`.
//!
//! [`ParametricTable::deviation`] reports how far each table actually is
//! from its own `q` (largest `|freq_k − T·q_k|` and the relative entropy in
//! bits per symbol that coding with the table costs over `q`).

use alloc::vec::Vec;

use crate::coder::log2_q32;
#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use crate::model::TableModel;

mod fixed;

use fixed::cdf_at;

/// Bits after the point of the edge values (the cumulative function `c`).
pub const CDF_BITS: u32 = 40;

/// Bound on the error of every edge value against the exact distribution
/// function: 2^-30 (checked against double-precision `erf` and `exp`).
pub const CDF_ERROR: f64 = 1.0 / (1u64 << 30) as f64;

/// Largest half-width of a parametric table: `2h + 1` must fit the alphabet
/// limit of 65,536 symbols.
pub const MAX_HALF_WIDTH: u32 = 32767;

/// Bits after the point of scales and means.
pub const PARAM_BITS: u32 = 16;

/// The family of a parametric table.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Family {
    /// The normal distribution; the scale is the standard deviation.
    Gaussian,
    /// The double exponential distribution; the scale is `b`.
    Laplace,
    /// The logistic distribution; the scale is `s` (standard deviation `s·π/√3`).
    Logistic,
}

impl Family {
    /// The family's name: `gaussian`, `laplace` or `logistic`.
    pub fn name(self) -> &'static str {
        match self {
            Family::Gaussian => "gaussian",
            Family::Laplace => "laplace",
            Family::Logistic => "logistic",
        }
    }

    /// The family of a name returned by [`name`](Family::name).
    ///
    /// ```
    /// use subrange::model::parametric::Family;
    ///
    /// assert_eq!(Family::from_name("laplace"), Some(Family::Laplace));
    /// assert_eq!(Family::from_name("cauchy"), None);
    /// ```
    pub fn from_name(name: &str) -> Option<Family> {
        [Family::Gaussian, Family::Laplace, Family::Logistic]
            .into_iter()
            .find(|f| f.name() == name)
    }
}

/// The parameters of one parametric table.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct ParametricSpec {
    /// The distribution family.
    pub family: Family,
    /// The scale in Q16 (`scale_q16 / 65536` steps); at least 1.
    pub scale_q16: u32,
    /// The mean relative to the centre symbol, in Q16.
    pub mean_q16: i32,
    /// The table covers the values `-half_width ..= half_width`.
    pub half_width: u32,
    /// The table's total is `2^log2_total` (1 ..= 16).
    pub log2_total: u32,
}

/// How far a table is from its own fixed-point distribution.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct TableDeviation {
    /// Largest `|freq_k − T·q_k|` in units of 2^-16 of a frequency unit.
    pub max_units_q16: u64,
    /// `Σ q_k · log2(q_k·T / freq_k)`, the bits per symbol that coding with
    /// the table costs over `q`, in Q32 (the logarithms are Q32
    /// approximations, so a value of a few units may fall below zero).
    pub relative_entropy_q32: i64,
}

/// A frequency table built from a parametric distribution.
///
/// # Example
///
/// ```
/// use subrange::model::parametric::{Family, ParametricSpec, ParametricTable};
/// use subrange::model::Model;
///
/// # fn main() -> Result<(), subrange::Error> {
/// // A level change with standard deviation 1.5 cm, values -8 ..= 8.
/// let spec = ParametricSpec {
///     family: Family::Gaussian,
///     scale_q16: 3 << 15,
///     mean_q16: 0,
///     half_width: 8,
///     log2_total: 16,
/// };
/// let table = ParametricTable::new(spec)?;
/// let freq = table.model().frequencies();
/// assert_eq!(freq.len(), 17);
/// assert_eq!(freq.iter().sum::<u32>(), 65536);
/// assert!(freq.iter().all(|&f| f >= 1));
/// // 1 + (65536 − 17) · (Φ(1/3) − Φ(−1/3)) = 17,109.1
/// assert!(freq[8].abs_diff(17109) <= 1);
/// assert_eq!(freq[7], freq[9]); // symmetric about a zero mean
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ParametricTable {
    spec: ParametricSpec,
    cdf: Vec<u64>,
    model: TableModel,
}

impl ParametricTable {
    /// Builds the table of `spec`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] when the scale is 0, `log2_total` is
    /// outside `1 ..= 16`, the half-width is over [`MAX_HALF_WIDTH`] or the
    /// table has more symbols than its total.
    pub fn new(spec: ParametricSpec) -> Result<Self> {
        if spec.scale_q16 == 0 {
            return Err(crate::Error::invalid_parameter("scale", "must be positive"));
        }
        if !(1..=16).contains(&spec.log2_total) {
            return Err(crate::Error::invalid_parameter(
                "log2_total",
                "must be 1 ..= 16",
            ));
        }
        if spec.half_width > MAX_HALF_WIDTH {
            return Err(crate::Error::invalid_parameter(
                "half_width",
                "must be at most 32767",
            ));
        }
        let n = 2 * spec.half_width as usize + 1;
        let total = 1u64 << spec.log2_total;
        if n as u64 > total {
            return Err(crate::Error::invalid_parameter(
                "half_width",
                "the table has more symbols than its total",
            ));
        }
        let cdf = edges(spec);
        let spare = total - n as u64;
        let mut freq = Vec::with_capacity(n);
        let mut below = 0u64;
        for k in 0..n {
            let upto = (spare * cdf[k + 1] + (1 << (CDF_BITS - 1))) >> CDF_BITS;
            freq.push((1 + upto - below) as u32);
            below = upto;
        }
        let model = TableModel::from_frequencies(&freq)?;
        Ok(ParametricTable { spec, cdf, model })
    }

    /// The parameters the table was built from.
    pub fn spec(&self) -> ParametricSpec {
        self.spec
    }

    /// The table as a model (symbol `k` is the value `k − half_width`).
    pub fn model(&self) -> &TableModel {
        &self.model
    }

    /// Turns the table into its model.
    pub fn into_model(self) -> TableModel {
        self.model
    }

    /// The fixed-point distribution function at the `n + 1` bin edges, in
    /// Q40: `0`, then `F` at `k − h − 1/2` for `k = 1 .. n`, then `2^40`.
    ///
    /// ```
    /// use subrange::model::parametric::{Family, ParametricSpec, ParametricTable};
    ///
    /// let spec = ParametricSpec {
    ///     family: Family::Laplace,
    ///     scale_q16: 1 << 16,
    ///     mean_q16: 1 << 15, // mean 1/2: the edge at 1/2 is the median
    ///     half_width: 2,
    ///     log2_total: 12,
    /// };
    /// let table = ParametricTable::new(spec).unwrap();
    /// assert_eq!(table.cumulative_q40()[3], 1 << 39);
    /// ```
    pub fn cumulative_q40(&self) -> &[u64] {
        &self.cdf
    }

    /// How far the frequencies are from the table's own distribution `q`.
    ///
    /// ```
    /// use subrange::model::parametric::{Family, ParametricSpec, ParametricTable};
    ///
    /// let spec = ParametricSpec {
    ///     family: Family::Logistic,
    ///     scale_q16: 2 << 16,
    ///     mean_q16: 0,
    ///     half_width: 20,
    ///     log2_total: 16,
    /// };
    /// let d = ParametricTable::new(spec).unwrap().deviation();
    /// // The unit every symbol gets first moves the others by |1 − n·q_k|.
    /// assert!(d.max_units_q16 < 5 << 16);
    /// assert!(d.relative_entropy_q32 < 1 << 22); // under 0.001 bit a symbol
    /// ```
    pub fn deviation(&self) -> TableDeviation {
        let log2_total = self.spec.log2_total;
        let mut max = 0u64;
        let mut excess: i128 = 0;
        for (k, &f) in self.model.frequencies().iter().enumerate() {
            let width = self.cdf[k + 1] - self.cdf[k];
            // freq·2^40 − T·width, in Q40 units of a frequency unit.
            let scaled_f = i128::from(f) << CDF_BITS;
            let ideal = i128::from(width) << log2_total;
            let dev = (scaled_f - ideal).unsigned_abs();
            max = max.max((dev >> (CDF_BITS - 16)) as u64);
            if width > 0 {
                let lq = log2_q32(width << log2_total) as i128 - (i128::from(CDF_BITS) << 32);
                let lf = log2_q32(u64::from(f)) as i128;
                excess += i128::from(width) * (lq - lf);
            }
        }
        TableDeviation {
            max_units_q16: max,
            relative_entropy_q32: (excess >> CDF_BITS) as i64,
        }
    }
}

/// The half-width that covers `tail_q16` scales on each side of the mean:
/// `⌈tail · scale⌉`, at most `max_half_width`.
///
/// ```
/// use subrange::model::parametric::half_width_for;
///
/// assert_eq!(half_width_for(3 << 15, 8 << 16, 1000), 12); // 8 · 1.5
/// assert_eq!(half_width_for(100 << 16, 8 << 16, 255), 255);
/// ```
pub fn half_width_for(scale_q16: u32, tail_q16: u32, max_half_width: u32) -> u32 {
    let product = u64::from(scale_q16) * u64::from(tail_q16);
    let ceil = product.div_ceil(1 << 32);
    ceil.min(u64::from(max_half_width)) as u32
}

/// A grid of parametric tables: one family, one total, one tail bound, a
/// table per scale.
///
/// # Example
///
/// ```
/// use subrange::model::parametric::{Family, ParametricGrid};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let grid = ParametricGrid::new(Family::Laplace, 16, 6 << 16, 255);
/// let scales: Vec<u32> = [0.25f64, 0.5, 1.0, 2.0, 4.0, 8.0]
///     .iter()
///     .map(|s| (s * 65536.0) as u32)
///     .collect();
/// let tables = grid.build(&scales, 0)?;
/// assert_eq!(tables.len(), 6);
/// assert_eq!(tables[5].spec().half_width, 48);
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ParametricGrid {
    /// The family of every table.
    pub family: Family,
    /// Every table's total is `2^log2_total`.
    pub log2_total: u32,
    /// Scales each table covers on each side of the mean, in Q16.
    pub tail_q16: u32,
    /// The largest half-width a table may have.
    pub max_half_width: u32,
}

impl ParametricGrid {
    /// A grid description.
    pub fn new(family: Family, log2_total: u32, tail_q16: u32, max_half_width: u32) -> Self {
        ParametricGrid {
            family,
            log2_total,
            tail_q16,
            max_half_width,
        }
    }

    /// The spec of the table for `scale_q16` and `mean_q16`.
    pub fn spec(&self, scale_q16: u32, mean_q16: i32) -> ParametricSpec {
        ParametricSpec {
            family: self.family,
            scale_q16,
            mean_q16,
            half_width: half_width_for(scale_q16, self.tail_q16, self.max_half_width),
            log2_total: self.log2_total,
        }
    }

    /// One table per scale, all with mean `mean_q16`.
    ///
    /// # Errors
    ///
    /// As for [`ParametricTable::new`], for the first scale that fails.
    pub fn build(&self, scales_q16: &[u32], mean_q16: i32) -> Result<Vec<ParametricTable>> {
        scales_q16
            .iter()
            .map(|&s| ParametricTable::new(self.spec(s, mean_q16)))
            .collect()
    }
}

/// The `n + 1` monotone edge values of `spec` in Q40.
fn edges(spec: ParametricSpec) -> Vec<u64> {
    let n = 2 * spec.half_width as usize + 1;
    let one = 1u64 << CDF_BITS;
    let mut cdf = Vec::with_capacity(n + 1);
    cdf.push(0);
    let mut last = 0u64;
    for k in 1..n {
        // Edge k − h − 1/2, relative to the mean, in Q16.
        let edge =
            ((k as i64 - i64::from(spec.half_width)) << PARAM_BITS) - (1 << (PARAM_BITS - 1));
        let d = edge - i64::from(spec.mean_q16);
        let value = cdf_at(spec.family, d, spec.scale_q16).clamp(last, one);
        cdf.push(value);
        last = value;
    }
    cdf.push(one);
    cdf
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::Model;

    fn spec(family: Family, scale: f64, mean: f64, half: u32, log2: u32) -> ParametricSpec {
        ParametricSpec {
            family,
            scale_q16: (scale * 65536.0) as u32,
            mean_q16: (mean * 65536.0) as i32,
            half_width: half,
            log2_total: log2,
        }
    }

    fn q40(x: u64) -> f64 {
        x as f64 / (1u64 << 40) as f64
    }

    #[test]
    fn laplace_and_logistic_match_f64() {
        for &(scale, mean) in &[(0.1, 0.0), (1.0, 0.3), (7.5, -2.25), (100.0, 0.0)] {
            for family in [Family::Laplace, Family::Logistic] {
                let s = spec(family, scale, mean, 40, 16);
                let s_real = f64::from(s.scale_q16) / 65536.0;
                let m_real = f64::from(s.mean_q16) / 65536.0;
                for (k, &c) in edges(s).iter().enumerate().skip(1).take(80) {
                    let x = (k as f64 - 40.0 - 0.5 - m_real) / s_real;
                    let exact = match family {
                        Family::Laplace if x < 0.0 => 0.5 * x.exp(),
                        Family::Laplace => 1.0 - 0.5 * (-x).exp(),
                        _ => 1.0 / (1.0 + (-x).exp()),
                    };
                    assert!((q40(c) - exact).abs() < CDF_ERROR, "{family:?} {scale} {k}");
                }
            }
        }
    }

    #[test]
    fn tables_are_valid_and_symmetric() {
        for family in [Family::Gaussian, Family::Laplace, Family::Logistic] {
            for &scale in &[1.0 / 65536.0, 0.01, 0.5, 1.0, 3.7, 40.0, 20000.0] {
                for log2 in [8, 12, 16] {
                    let half = half_width_for((scale * 65536.0) as u32, 8 << 16, 100);
                    let half = half.min(((1u32 << log2) - 1) / 2);
                    let t = ParametricTable::new(spec(family, scale, 0.0, half, log2)).unwrap();
                    let f = t.model().frequencies();
                    assert!(f.iter().all(|&x| x >= 1));
                    assert_eq!(f.iter().sum::<u32>(), 1 << log2);
                    assert!(t.cumulative_q40().windows(2).all(|w| w[0] <= w[1]));
                    let rev: Vec<u32> = f.iter().rev().copied().collect();
                    assert_eq!(f, &rev[..], "{family:?} {scale} {log2}");
                }
            }
        }
    }

    #[test]
    fn bad_specs_are_errors() {
        let good = spec(Family::Gaussian, 1.0, 0.0, 4, 8);
        assert!(ParametricTable::new(good).is_ok());
        for bad in [
            ParametricSpec {
                scale_q16: 0,
                ..good
            },
            ParametricSpec {
                log2_total: 0,
                ..good
            },
            ParametricSpec {
                log2_total: 17,
                ..good
            },
            ParametricSpec {
                half_width: 128,
                ..good
            },
            ParametricSpec {
                half_width: 40000,
                log2_total: 16,
                ..good
            },
        ] {
            assert!(ParametricTable::new(bad).is_err(), "{bad:?}");
        }
        // The largest table: 65,535 symbols in a total of 65,536.
        let t = ParametricTable::new(ParametricSpec {
            half_width: MAX_HALF_WIDTH,
            log2_total: 16,
            ..good
        })
        .unwrap();
        assert_eq!(t.model().alphabet_size(), 65535);
    }

    /// CRC-32 (crc32fast) of the little-endian frequencies of a fixed grid:
    /// three families, means 0 and 1/4, six scales. The Python package's
    /// tests (`python/tests/test_parametric.py`) compute the same checksum
    /// from the tables it builds, so both sides are pinned to one set of
    /// bytes.
    #[test]
    fn pinned_grid_checksum() {
        let mut crc = crc32fast::Hasher::new();
        for family in [Family::Gaussian, Family::Laplace, Family::Logistic] {
            for mean in [0, 1 << 14] {
                let grid = ParametricGrid::new(family, 16, 8 << 16, 1023);
                let scales = [7209, 32768, 65536, 163840, 655360, 4194304];
                for t in grid.build(&scales, mean).unwrap() {
                    for f in t.model().frequencies() {
                        crc.update(&f.to_le_bytes());
                    }
                }
            }
        }
        assert_eq!(crc.finalize(), PINNED_GRID_CRC);
    }

    const PINNED_GRID_CRC: u32 = 0x283F_27F0;
}
