//! The fixed-point arithmetic under the parametric tables.
//!
//! `exp(−y)` by range reduction `y = k·ln 2 + r` (`0 <= r < ln 2`) and the
//! Taylor series of `exp(−r)` in Q90, shifted right by `k`; the Gaussian's
//! central part from Marsaglia's all-positive series (see the parent
//! module). Every product is arranged to stay below 2^127 (the bounds are
//! given beside each one), so `u128` arithmetic never overflows and the
//! results are the same on every platform.

use super::{Family, CDF_BITS};

/// `ln 2` in Q64, rounded down: 0.6931471805599453094… · 2^64.
const LN2_Q64: u128 = 0xB172_17F7_D1CF_79AB;

/// `1 / √(2π)` in Q64, rounded down: 0.3989422804014326779… · 2^64.
const INV_SQRT_2PI_Q64: u128 = 0x6621_14CF_50D9_4234;

/// Fraction bits of the series and `exp` values.
const Q: u32 = 90;

/// `F(μ + d)` in Q40 for `d` in Q16.
pub(super) fn cdf_at(family: Family, d: i64, scale_q16: u32) -> u64 {
    // u = |d| / scale in Q32; |d| < 2^33, so the shifted value fits.
    let u = (u128::from(d.unsigned_abs()) << 32) / u128::from(scale_q16);
    let tail = lower_tail(family, u);
    if d < 0 {
        tail
    } else {
        (1u64 << CDF_BITS) - tail
    }
}

/// `F(μ − u·s)` in Q40 for `u >= 0` in Q32.
fn lower_tail(family: Family, u: u128) -> u64 {
    let half = 1u64 << (CDF_BITS - 1);
    match family {
        Family::Gaussian => {
            if u >= 8 << 32 {
                return 0;
            }
            half.saturating_sub(gauss_central(u))
        }
        Family::Laplace => {
            if u >= 64 << 32 {
                return 0;
            }
            // 1/2 · exp(−u): Q90 → Q40 and a halving.
            (exp_neg_q90(u) >> (Q - CDF_BITS + 1)) as u64
        }
        Family::Logistic => {
            if u >= 64 << 32 {
                return 0;
            }
            // e / (1 + e) with e = exp(−u) in Q80.
            let e = exp_neg_q90(u) >> (Q - 80);
            ((e << CDF_BITS) / ((1u128 << 80) + e)) as u64
        }
    }
}

/// `exp(−y)` in Q90 for `0 <= y < 2^38` given in Q32.
fn exp_neg_q90(y_q32: u128) -> u128 {
    let y = y_q32 << 32; // Q64, below 2^102
    let k = y / LN2_Q64;
    if k >= u128::from(Q) {
        return 0;
    }
    // r in [0, ln 2), reduced to Q36 for the products below 2^127.
    let r = (y - k * LN2_Q64) >> 28;
    let mut term = 1u128 << Q;
    let mut sum = term as i128;
    let mut n = 1u128;
    while term > 0 {
        term = ((term * r) >> 36) / n;
        if n % 2 == 1 {
            sum -= term as i128;
        } else {
            sum += term as i128;
        }
        n += 1;
    }
    (sum.max(0) as u128) >> k
}

/// `Φ(w) − 1/2` in Q40 for `0 <= w < 8` given in Q32.
fn gauss_central(w: u128) -> u64 {
    // w² in Q30 (below 2^36) and w²/2 in Q32.
    let w2 = (w * w) >> 34;
    let density = exp_neg_q90((w * w) >> 33);
    // Series terms w^(2j+1)/(2j+1)!! · exp(−w²/2), each below 2^91 in Q90.
    let mut term = (w * density) >> 32;
    let mut sum = term;
    let mut j = 0u128;
    while term > 0 && j < 1000 {
        term = ((term * w2) >> 30) / (2 * j + 3);
        sum += term;
        j += 1;
    }
    // sum · 1/√(2π): (Q64 · Q64) = Q128, at most 1/2 · 2^128.
    let product = (sum >> (Q - 64)).saturating_mul(INV_SQRT_2PI_Q64);
    (product >> (128 - CDF_BITS)) as u64
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::parametric::CDF_ERROR;

    fn q40(x: u64) -> f64 {
        x as f64 / (1u64 << 40) as f64
    }

    #[test]
    fn exp_matches_f64() {
        for y in [0.0f64, 1e-6, 0.3, 0.693, 1.0, 2.5, 10.0, 30.0, 60.0] {
            let y_q32 = (y * 4294967296.0) as u128;
            let y = y_q32 as f64 / 4294967296.0;
            let got = exp_neg_q90(y_q32) as f64 / 2f64.powi(90);
            // r is reduced to Q36: a relative error of about 2^-36.
            assert!(
                (got - (-y).exp()).abs() <= 1e-10 * (-y).exp() + 1e-26,
                "{y}"
            );
        }
    }

    #[test]
    fn normal_table_values() {
        // Φ(1), Φ(2), Φ(3) of the standard normal distribution (Abramowitz &
        // Stegun, Handbook of Mathematical Functions, table 26.1; digits from
        // memory).
        for (w, phi) in [
            (1.0, 0.841_344_746_068_543),
            (2.0, 0.977_249_868_051_821),
            (3.0, 0.998_650_101_968_370),
        ] {
            let got = 0.5 + q40(gauss_central((w * 4294967296.0) as u128));
            assert!((got - phi).abs() < CDF_ERROR, "{w}: {got} vs {phi}");
        }
    }
}
