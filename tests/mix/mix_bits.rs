//! Bit predictors against information-theoretic references.

use crate::support::binary_entropy as h;
use crate::support::lgamma::ln_gamma;
use crate::support::SplitMix64;
use subrange::coder::{Decoder, Encoder};
use subrange::model::{
    decode_with, encode_with, BitPredictor, CountingPredictor, KtPredictor, ShiftPredictor,
};

/// Krichevsky–Trofimov sequential code length of a binary sequence with `n0`
/// zeros and `n1` ones: `-log2[Γ(n0+½)·Γ(n1+½) / (π·Γ(n+1))]` (Krichevsky &
/// Trofimov, IEEE Trans. IT 27(2), 1981; from memory).
fn kt_bits(n0: u64, n1: u64) -> f64 {
    let n = (n0 + n1) as f64;
    let ln = ln_gamma(n0 as f64 + 0.5) + ln_gamma(n1 as f64 + 0.5)
        - std::f64::consts::PI.ln()
        - ln_gamma(n + 1.0);
    -ln / std::f64::consts::LN_2
}

#[test]
fn ln_gamma_matches_known_values() {
    // Γ(½) = √π, Γ(5) = 24, Γ(10.5) = 1133278.3889487855 (common practice).
    assert!((ln_gamma(0.5) - std::f64::consts::PI.sqrt().ln()).abs() < 1e-12);
    assert!((ln_gamma(5.0) - 24f64.ln()).abs() < 1e-12);
    assert!((ln_gamma(10.5) - 1_133_278.388_948_785_5f64.ln()).abs() < 1e-10);
    // KT length of a single bit is exactly 1 bit; of "01" it is 3 bits
    // (½ · ¼ = 1/8, from the sequential rule).
    assert!((kt_bits(1, 0) - 1.0).abs() < 1e-12);
    assert!((kt_bits(1, 1) - 3.0).abs() < 1e-12);
}

fn memoryless(n: usize, p1: f64, seed: u64) -> Vec<bool> {
    let mut rng = SplitMix64::new(seed);
    let threshold = (p1 * (1u64 << 32) as f64) as u64;
    (0..n).map(|_| rng.next_u64() >> 32 < threshold).collect()
}

/// Codes `bits` with `pred`, checks the round trip, and returns
/// (ideal bits, actual bits).
fn code<P: BitPredictor + Clone>(bits: &[bool], pred: &P) -> (f64, f64) {
    let mut enc = Encoder::new();
    enc.enable_cost_meter();
    let mut p = pred.clone();
    for &b in bits {
        encode_with(&mut enc, &mut p, b).unwrap();
    }
    let ideal = enc.ideal_cost().unwrap().bits();
    let bytes = enc.finish().unwrap();
    let mut dec = Decoder::new(&bytes).unwrap();
    let mut p = pred.clone();
    for &b in bits {
        assert_eq!(decode_with(&mut dec, &mut p).unwrap(), b);
    }
    dec.finish().unwrap();
    (ideal, bytes.len() as f64 * 8.0)
}

#[test]
fn adaptive_predictors_approach_the_entropy() {
    let n = 200_000;
    for (p, seed) in [(0.1, 1u64), (0.3, 2), (0.02, 3)] {
        let bits = memoryless(n, p, seed);
        // The sample's own frequency: n·h(p̂) is the best any fixed
        // probability could do on it in hindsight, and it is within a
        // fraction of a percent of n·h(p).
        let ones = bits.iter().filter(|&&b| b).count() as f64;
        let bound = n as f64 * h(ones / n as f64);
        assert!((bound / (n as f64 * h(p)) - 1.0).abs() < 0.03);
        let (ideal, actual) = code(&bits, &CountingPredictor::new(1023).unwrap());
        assert!(
            ideal < bound * 1.01 + 64.0,
            "counting p={p}: {ideal} vs {bound}"
        );
        assert!(
            ideal > bound * 0.999,
            "counting p={p}: {ideal} below the entropy {bound}"
        );
        // The range coder adds little on top of the ideal length.
        assert!(
            actual < ideal * 1.002 + 40.0,
            "coder overhead: {actual} vs {ideal}"
        );
        // A shift-updated probability with rate 2^-7 pays a steady tracking
        // cost, but stays within a few percent.
        let (ideal, _) = code(&bits, &ShiftPredictor::new(7).unwrap());
        assert!(
            ideal < bound * 1.03 + 64.0,
            "shift p={p}: {ideal} vs {bound}"
        );
    }
}

#[test]
fn kt_predictor_codes_at_the_kt_length() {
    for (n, p, seed) in [
        (1000, 0.2, 7u64),
        (20_000, 0.05, 8),
        (5000, 0.5, 9),
        (300, 0.9, 10),
    ] {
        let bits = memoryless(n, p, seed);
        let n1 = bits.iter().filter(|&&b| b).count() as u64;
        let n0 = n as u64 - n1;
        let want = kt_bits(n0, n1);
        let (ideal, actual) = code(&bits, &KtPredictor::default());
        assert!(
            (ideal - want).abs() < 3.0,
            "n={n}: ideal {ideal} vs KT {want}"
        );
        assert!(
            actual < want * 1.002 + 40.0,
            "n={n}: coded {actual} vs KT {want}"
        );
    }
}
