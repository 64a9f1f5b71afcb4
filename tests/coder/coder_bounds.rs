//! Code length against independently computed bounds.
//!
//! With exact arithmetic, arithmetic coding comes within 2 bits of the ideal
//! code length `Σ -log2 p(x_i)` (Cover & Thomas, Elements of Information
//! Theory, ch. 5; from memory). This coder works in finite precision and
//! ends on a whole byte, so the allowance is larger.
//!
//! Finite-precision allowance used below (derived for this coder): the final
//! interval has width `W = range · 2^-(32 + 8s)` after `s` shifted bytes, and
//! `finish` writes at most one byte past them, so the output is at most
//! `8s + 8 < -log2 W + 8` bits. Each step keeps at least
//! `(freq / total) · (1 - total / range)` of the interval (`r = ⌊range/total⌋`
//! loses less than one unit per frequency unit, and the top symbol only
//! gains), with `range >= 2^24` before every step; the start loses
//! `log2(2^32 / (2^32 - 1))`. Hence
//! `bits <= Σ -log2(freq/total) + Σ_k -log2(1 - total_k / 2^24) + 8 + 10^-9`.
//! The sum over `k` is the worst case. A second, typical allowance (see
//! `typical_allowance`) checks the measured overhead is in line with the
//! expected rounding loss; the figures are printed (run with `--nocapture`).

use crate::support::lgamma::{ln_gamma, log2_factorial};
use crate::support::{encode_all, entropy_bits, Draws, SplitMix64, TableSampler};
use subrange::coder::{encode_adaptive_lanes, Encoder};
use subrange::model::{
    AdaptiveModel, AdaptiveParams, Model, StepwiseModel, StepwiseParams, TableModel,
};

/// Worst-case finite-precision loss of one step with `total`, in bits.
fn step_allowance(total: u32) -> f64 {
    -(1.0 - f64::from(total) / f64::from(1u32 << 24)).log2()
}

/// A tighter, typical allowance: the flush byte plus twice the expected loss
/// of the steps' rounding. A step of `total` loses `-log2(1 - rem/range)`
/// with `rem = range mod total`, on average `total/2 · E[1/range] / ln 2`
/// bits, where `range` is roughly log-uniform on `[2^24, 2^32)` so that
/// `E[1/range] = (2^-24 - 2^-32) / ln 2^8 ≈ 1.07·10^-8` (the top symbol wins
/// part of this back, which only helps).
fn typical_allowance(totals: impl Iterator<Item = u32>) -> f64 {
    let e_inv_range = (2f64.powi(-24) - 2f64.powi(-32)) / 256f64.ln();
    let expected: f64 = totals
        .map(|t| f64::from(t) / 2.0 * e_inv_range / core::f64::consts::LN_2)
        .sum();
    FLUSH_ALLOWANCE_BITS + 2.0 * expected
}

/// Flush (8 bits) plus the initial `range = 2^32 - 1` and float slack.
const FLUSH_ALLOWANCE_BITS: f64 = 8.0 + 1e-6;

/// A skewed distribution over `n` symbols summing to `2^k`.
fn skewed_frequencies(n: usize, k: u32, rng: &mut SplitMix64) -> Vec<u32> {
    let weights: Vec<u64> = (0..n)
        .map(|i| 1 + (1_000_000 / (i as u64 + 1)) + rng.below(1000))
        .collect();
    subrange::model::quantize_counts(&weights, k).unwrap()
}

#[test]
fn ln_gamma_matches_factorials_and_half() {
    // Γ(n + 1) = n! and Γ(1/2) = √π (common practice).
    let mut ln_fact = 0.0f64;
    for n in 1..=300u32 {
        ln_fact += f64::from(n).ln();
        let got = ln_gamma(f64::from(n) + 1.0);
        assert!(
            (got - ln_fact).abs() <= 1e-12 * ln_fact.max(1.0),
            "n={n}: {got} vs {ln_fact}"
        );
    }
    assert!(ln_gamma(1.0).abs() < 1e-13);
    assert!(ln_gamma(2.0).abs() < 1e-13);
    let half = 0.5 * core::f64::consts::PI.ln();
    assert!((ln_gamma(0.5) - half).abs() < 1e-13);
}

#[test]
fn static_model_is_within_the_finite_precision_bound() {
    let mut rng = SplitMix64::new(0xB0C5_0001);
    for (n, k, len) in [
        (64usize, 12u32, 400_000usize),
        (256, 16, 400_000),
        (3, 4, 200_000),
    ] {
        let freq = skewed_frequencies(n, k, &mut rng);
        let sampler = TableSampler::new(&freq);
        let symbols: Vec<u32> = (0..len).map(|_| sampler.sample(&mut rng)).collect();
        let mut model = TableModel::from_frequencies(&freq).unwrap();
        let bytes = encode_all(&mut model, &symbols);
        let total = f64::from(1u32 << k);
        let ideal: f64 = symbols
            .iter()
            .map(|&s| (total / f64::from(freq[s as usize])).log2())
            .sum();
        let allowance = len as f64 * step_allowance(1 << k) + FLUSH_ALLOWANCE_BITS;
        let actual = 8.0 * bytes.len() as f64;
        let typical = typical_allowance((0..len).map(|_| 1u32 << k));
        eprintln!(
            "static n={n} total=2^{k} len={len}: ideal {ideal:.1} bits, actual {actual} bits, \
             overhead {:.1} bits (worst-case allowance {allowance:.1}, typical {typical:.1})",
            actual - ideal
        );
        assert!(actual <= ideal + allowance);
        assert!(
            actual - ideal <= typical,
            "overhead {} bits, typical allowance {typical}",
            actual - ideal
        );
    }
}

/// The add-one (Laplace) estimator over an alphabet of `m` assigns a sequence
/// with counts `n_i` (`N` symbols) the probability
/// `(m-1)! · Π n_i! / (N+m-1)!` (sequential Laplace estimator, from memory).
fn laplace_bits(counts: &[u64]) -> f64 {
    let m = counts.len() as u64;
    let n: u64 = counts.iter().sum();
    log2_factorial(n + m - 1)
        - log2_factorial(m - 1)
        - counts.iter().map(|&c| log2_factorial(c)).sum::<f64>()
}

#[test]
fn laplace_adaptive_model_matches_closed_form() {
    let mut rng = SplitMix64::new(0xB0C5_0002);
    for (m, len) in [
        (16u32, 65_000usize),
        (256, 65_000),
        (1000, 64_000),
        (2, 60_000),
    ] {
        let mut p = StepwiseParams::default();
        p.increment = 1;
        p.limit = 1 << 16;
        p.escape = Some(false);
        // No halving: the total is m + k before step k, and halving would need
        // m + len + 1 > 2^16.
        assert!(m as usize + len < (1 << 16) - 1);
        let freq = skewed_frequencies(m as usize, 16, &mut rng);
        let sampler = TableSampler::new(&freq);
        let symbols: Vec<u32> = (0..len).map(|_| sampler.sample(&mut rng)).collect();
        let mut model = StepwiseModel::with_params(m, p).unwrap();
        let bytes = encode_all(&mut model, &symbols);
        assert_eq!(
            model.total(),
            m + len as u32,
            "the model must not have halved"
        );

        let mut counts = vec![0u64; m as usize];
        symbols.iter().for_each(|&s| counts[s as usize] += 1);
        let ideal = laplace_bits(&counts);
        // Cross-check the closed form by the sequential product.
        let mut seen = vec![0u64; m as usize];
        let sequential: f64 = symbols
            .iter()
            .enumerate()
            .map(|(k, &s)| {
                let p = (seen[s as usize] + 1) as f64 / (k as f64 + f64::from(m));
                seen[s as usize] += 1;
                -p.log2()
            })
            .sum();
        assert!(
            (ideal - sequential).abs() < 1e-6 * ideal,
            "{ideal} vs {sequential}"
        );

        let allowance: f64 =
            (0..len as u32).map(|k| step_allowance(m + k)).sum::<f64>() + FLUSH_ALLOWANCE_BITS;
        let actual = 8.0 * bytes.len() as f64;
        let typical = typical_allowance((0..len as u32).map(|k| m + k));
        eprintln!(
            "laplace m={m} len={len}: closed form {ideal:.1} bits, actual {actual} bits, \
             overhead {:.1} bits (worst-case allowance {allowance:.1}, typical {typical:.1})",
            actual - ideal
        );
        assert!(actual <= ideal + allowance);
        assert!(
            actual - ideal <= typical,
            "overhead {} bits, typical allowance {typical}",
            actual - ideal
        );
    }
}

/// An i.i.d. source drawn exactly from `freq / 2^12`: the code rate must
/// approach its entropy `H = -Σ p·log2 p` (common practice).
#[test]
fn iid_source_converges_to_its_entropy() {
    let mut rng = SplitMix64::new(0xB0C5_0003);
    let freq = skewed_frequencies(40, 12, &mut rng);
    let h = entropy_bits(&freq);
    let sampler = TableSampler::new(&freq);
    let len = 1_000_000usize;
    let symbols: Vec<u32> = (0..len).map(|_| sampler.sample(&mut rng)).collect();

    let mut table = TableModel::from_frequencies(&freq).unwrap();
    let table_bps = 8.0 * encode_all(&mut table, &symbols).len() as f64 / len as f64;
    let mut adaptive = StepwiseModel::new(40).unwrap();
    let adaptive_bps = 8.0 * encode_all(&mut adaptive, &symbols).len() as f64 / len as f64;
    // The refreshed model with a long memory (its default forgets after a
    // few thousand symbols, which costs a little on a stationary source).
    let mut p = AdaptiveParams::default();
    p.limit = 1 << 20;
    p.max_period = 4096;
    let mut refresh = AdaptiveModel::with_params(40, p).unwrap();
    let refresh_bps = 8.0 * encode_all(&mut refresh, &symbols).len() as f64 / len as f64;
    let mut quick = AdaptiveModel::new(40).unwrap();
    let quick_bps = 8.0 * encode_all(&mut quick, &symbols).len() as f64 / len as f64;
    eprintln!(
        "entropy {h:.5} bits/symbol; table {table_bps:.5} ({:+.4} %), adaptive {adaptive_bps:.5} ({:+.4} %), \
         refreshed {refresh_bps:.5} ({:+.4} %), refreshed with defaults {quick_bps:.5} ({:+.4} %)",
        100.0 * (table_bps / h - 1.0),
        100.0 * (adaptive_bps / h - 1.0),
        100.0 * (refresh_bps / h - 1.0),
        100.0 * (quick_bps / h - 1.0)
    );
    assert!((table_bps / h - 1.0).abs() < 0.005);
    assert!((adaptive_bps / h - 1.0).abs() < 0.01);
    assert!((refresh_bps / h - 1.0).abs() < 0.01);
    assert!((quick_bps / h - 1.0).abs() < 0.02);
}

/// Coding overhead against the encoder's own ideal-cost meter, on 2^20
/// symbols (1 MiB of byte data), must stay below 0.01 %.
#[test]
fn coding_overhead_against_the_cost_meter() {
    let mut rng = SplitMix64::new(0xB0C5_0004);
    let len = 1usize << 20;
    let cases: [(&str, usize, u32); 3] = [("bytes", 256, 16), ("skewed", 256, 12), ("few", 5, 12)];
    for (name, n, k) in cases {
        let freq = skewed_frequencies(n, k, &mut rng);
        let sampler = TableSampler::new(&freq);
        let symbols: Vec<u32> = (0..len).map(|_| sampler.sample(&mut rng)).collect();
        let measure = |model: &mut dyn Model| {
            let mut enc = Encoder::new();
            enc.enable_cost_meter();
            for &s in &symbols {
                enc.encode(&mut *model, s).unwrap();
            }
            let ideal = enc.ideal_cost().unwrap().bits();
            let actual = 8.0 * enc.finish().unwrap().len() as f64;
            (actual, ideal, (actual - ideal) / ideal)
        };
        let mut table = TableModel::from_frequencies(&freq).unwrap();
        let (ta, ti, t_over) = measure(&mut table);
        // The meter agrees with the ideal length computed here in f64.
        let total = f64::from(1u32 << k);
        let ideal: f64 = symbols
            .iter()
            .map(|&s| (total / f64::from(freq[s as usize])).log2())
            .sum();
        assert!((ti - ideal).abs() <= 1e-6 * ideal, "meter {ti} vs {ideal}");
        let mut adaptive = StepwiseModel::new(n as u32).unwrap();
        let (aa, ai, a_over) = measure(&mut adaptive);
        let mut refresh = AdaptiveModel::new(n as u32).unwrap();
        let (ra, ri, r_over) = measure(&mut refresh);
        // The same model over 32 lanes: each lane flushes on its own.
        let bytes: Vec<u8> = symbols.iter().map(|&s| s as u8).collect();
        let lanes =
            encode_adaptive_lanes(&mut AdaptiveModel::new(n as u32).unwrap(), &bytes, 32).unwrap();
        let la = 8.0 * lanes.iter().map(Vec::len).sum::<usize>() as f64;
        let l_over = (la - ri) / ri;
        eprintln!(
            "{name}: table {ta} vs ideal {ti:.1} bits: {:.5} %; adaptive {aa} vs {ai:.1}: {:.5} %; \
             refreshed {ra} vs {ri:.1}: {:.5} %, over 32 lanes {la}: {:.5} %",
            100.0 * t_over,
            100.0 * a_over,
            100.0 * r_over,
            100.0 * l_over
        );
        assert!(t_over <= 1e-4, "table overhead {:.5} %", 100.0 * t_over);
        assert!(a_over <= 1e-4, "adaptive overhead {:.5} %", 100.0 * a_over);
        assert!(r_over <= 1e-4, "refreshed overhead {:.5} %", 100.0 * r_over);
        assert!(
            l_over <= 1e-4,
            "adaptive lanes overhead {:.5} %",
            100.0 * l_over
        );
    }
}

/// The binary step against the encoder's cost meter on 2^20 skewed bits
/// drawn with the probability they are coded with: the precise split stays
/// within 0.01 % of the ideal length; the coarse split of earlier streams,
/// which drops the range's low 16 bits, costs visibly more (common
/// practice: a split rounded to `(range >> 16) · p` loses up to 2^-8 of the
/// probable side's share).
#[test]
fn binary_step_overhead_against_the_cost_meter() {
    let mut rng = SplitMix64::new(0xB0C5_0005);
    let n = 1usize << 20;
    for p1 in [65_000u32, 60_000, 32_768, 3_000] {
        let bits: Vec<bool> = (0..n).map(|_| rng.below_u32(65_536) < p1).collect();
        let measure = |precise: bool| {
            let mut enc = Encoder::new();
            enc.enable_cost_meter();
            for &b in &bits {
                if precise {
                    enc.encode_bit(b, p1).unwrap();
                } else {
                    enc.encode_bit_coarse(b, p1).unwrap();
                }
            }
            let ideal = enc.ideal_cost().unwrap().bits();
            let actual = 8.0 * enc.finish().unwrap().len() as f64;
            (actual - ideal) / ideal
        };
        let (fine, coarse) = (measure(true), measure(false));
        eprintln!(
            "p1 {p1}: precise split {:.5} %, coarse split {:.5} %",
            100.0 * fine,
            100.0 * coarse
        );
        assert!(fine <= 1e-4, "precise split overhead {:.5} %", 100.0 * fine);
        if p1 == 65_000 {
            assert!(coarse > fine + 1e-4, "p1 {p1}");
        }
    }
}
