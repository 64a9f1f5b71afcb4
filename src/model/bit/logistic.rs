//! The logistic domain: `stretch` and `squash` in fixed point.
//!
//! Logistic mixing works on `stretch(p) = ln(p / (1 - p))`, where evidence
//! from independent sources adds up; `squash(x) = 1 / (1 + e^-x)` maps a sum
//! back to a probability.
//!
//! Fixed-point conventions used throughout the context-mixing engines:
//! - a probability is a 16-bit integer `p16` (`p16 / 65536` is the
//!   probability of a 1), as the coder's binary step takes it;
//! - a stretched value `x` is an `i32` with 8 fractional bits
//!   (`x / 256` is the log-odds), limited to `-2047 ..= 2047`, i.e. log-odds
//!   of ±8 (probabilities from about 0.000335 to 0.999665).
//!
//! Both functions are single table look-ups. The tables are built at compile
//! time with integer arithmetic only: `e^(k/256)` comes from a Taylor series
//! for `e^(1/256)` in Q40 fixed point raised by repeated multiplication, so
//! every platform gets the same bits. `squash` has one entry per stretched
//! value; `stretch` has one entry per 12-bit probability (`p16 >> 4`) and is
//! the inverse of `squash` (the stretched value whose squash is nearest to the
//! middle of that 12-bit cell).
//!
//! Invariants: `squash` is non-decreasing and stays in `1 ..= 65535`;
//! `stretch` is non-decreasing, odd-symmetric up to rounding, and
//! `squash(stretch(p))` is within one 12-bit cell of `p` away from the ends.

/// Largest stretched value (log-odds of 2047/256 ≈ 8.0).
pub const STRETCH_MAX: i32 = 2047;

/// Fractional bits of the Q40 numbers used to build the tables.
const Q: u32 = 40;
const ONE: u128 = 1 << Q;

/// `e^(1/256)` in Q40 from its Taylor series.
const fn exp_step() -> u128 {
    let mut sum = 0u128;
    let mut term = ONE;
    let mut k = 1u128;
    while term > 0 {
        sum += term;
        term /= 256 * k;
        k += 1;
    }
    sum
}

/// `SQUASH[x + 2048]` = `round(65536 / (1 + e^(-x/256)))`, clamped to `1 ..= 65535`.
static SQUASH: [u16; 4096] = build_squash();

const fn build_squash() -> [u16; 4096] {
    // powers[k] = e^(k/256) in Q40 for k in 0 ..= 2048.
    let step = exp_step();
    let mut powers = [0u128; 2049];
    powers[0] = ONE;
    let mut k = 1;
    while k <= 2048 {
        powers[k] = (powers[k - 1] * step + (ONE >> 1)) >> Q;
        k += 1;
    }
    let mut t = [0u16; 4096];
    let mut i = 0;
    while i < 4096 {
        let x = i as i64 - 2048;
        // p = 1 / (1 + e^-x): for x >= 0 it is E / (E + 1) with E = e^x;
        // for x < 0 it is 1 / (1 + E) with E = e^-x.
        let p = if x >= 0 {
            let e = powers[x as usize];
            (65536 * e + (e + ONE) / 2) / (e + ONE)
        } else {
            let e = powers[(-x) as usize];
            (65536 * ONE + (e + ONE) / 2) / (e + ONE)
        };
        let p = if p < 1 {
            1
        } else if p > 65535 {
            65535
        } else {
            p
        };
        t[i] = p as u16;
        i += 1;
    }
    t
}

/// `STRETCH[p16 >> 4]`: the stretched value whose squash is nearest to the
/// middle of that 12-bit probability cell.
static STRETCH: [i16; 4096] = build_stretch();

const fn build_stretch() -> [i16; 4096] {
    let sq = build_squash();
    let mut t = [0i16; 4096];
    let mut i = 0;
    while i < 4096 {
        let target = (i as u32) * 16 + 8;
        // Smallest index whose squash reaches the target.
        let (mut lo, mut hi) = (0usize, 4096usize);
        while lo < hi {
            let mid = (lo + hi) / 2;
            if (sq[mid] as u32) < target {
                lo = mid + 1;
            } else {
                hi = mid;
            }
        }
        let mut best = if lo > 4095 { 4095 } else { lo };
        if best > 0 {
            let below = target - sq[best - 1] as u32;
            let above = (sq[best] as u32).abs_diff(target);
            if below < above {
                best -= 1;
            }
        }
        let mut x = best as i32 - 2048;
        if x < -STRETCH_MAX {
            x = -STRETCH_MAX;
        }
        if x > STRETCH_MAX {
            x = STRETCH_MAX;
        }
        t[i] = x as i16;
        i += 1;
    }
    t
}

/// `ln(p / (1 - p))` with 8 fractional bits, for a 16-bit probability `p16`.
///
/// The result lies in `-2047 ..= 2047`. Values of `p16` above 65535 count as 65535.
///
/// # Example
///
/// ```
/// use subrange::model::{squash, stretch};
///
/// assert_eq!(stretch(32768), 0);
/// // p = 0.9: ln 9 ≈ 2.197, times 256 ≈ 562.
/// assert!((stretch(58982) - 562).abs() <= 2);
/// assert_eq!(stretch(1000), -stretch(65536 - 1000));
/// assert!((squash(stretch(40000)) as i32 - 40000).abs() <= 16);
/// ```
#[inline]
pub fn stretch(p16: u32) -> i32 {
    i32::from(STRETCH[(p16.min(65535) >> 4) as usize])
}

/// `65536 / (1 + e^(-x/256))`: the 16-bit probability of log-odds `x / 256`.
///
/// `x` is clamped to `-2047 ..= 2047`; the result lies in `1 ..= 65535`.
///
/// # Example
///
/// ```
/// use subrange::model::squash;
///
/// assert_eq!(squash(0), 32768);
/// // x = 256 is log-odds 1: 65536 / (1 + 1/e) ≈ 47911.
/// assert!((squash(256) as i32 - 47911).abs() <= 1);
/// assert_eq!(squash(100_000), squash(2047));
/// ```
#[inline]
pub fn squash(x: i32) -> u32 {
    let x = x.clamp(-STRETCH_MAX, STRETCH_MAX);
    u32::from(SQUASH[(x + 2048) as usize])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn squash_matches_float_formula() {
        // Reference: the logistic function 1 / (1 + e^-x) (common practice).
        for x in -2047..=2047 {
            let want = 65536.0 / (1.0 + (-(x as f64) / 256.0).exp());
            let got = squash(x) as f64;
            assert!((got - want.clamp(1.0, 65535.0)).abs() <= 1.0, "x={x}");
        }
    }

    #[test]
    fn stretch_matches_float_formula() {
        for cell in 1..4095u32 {
            let p = (cell * 16 + 8) as f64 / 65536.0;
            let want = (256.0 * (p / (1.0 - p)).ln()).clamp(-2047.0, 2047.0);
            let got = stretch(cell * 16 + 8) as f64;
            // The table inverts a 16-bit squash: near the ends one step of p16
            // spans several stretched values.
            let step = 256.0 / (65536.0 * p * (1.0 - p));
            assert!(
                (got - want).abs() <= 1.5 + step,
                "cell={cell} got={got} want={want}"
            );
        }
    }

    #[test]
    fn monotone_and_symmetric() {
        let mut prev = 0;
        for x in -2047..=2047 {
            let s = squash(x);
            assert!(s >= prev);
            assert!((s + squash(-x)).abs_diff(65536) <= 1);
            prev = s;
        }
        let mut prev = i32::MIN;
        for p in (0..65536).step_by(16) {
            let s = stretch(p);
            assert!(s >= prev);
            prev = s;
        }
    }
}
