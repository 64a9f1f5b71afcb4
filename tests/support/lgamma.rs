//! `ln Γ(x)` in `f64`, for code-length bounds computed independently of the
//! crate.
//!
//! Method: the recurrence `Γ(x) = Γ(x + 1) / x` lifts `x` to at least 15,
//! then the Stirling series
//! `ln Γ(x) = (x - ½)·ln x - x + ½·ln 2π + 1/(12x) - 1/(360x³) + 1/(1260x⁵) - 1/(1680x⁷)`
//! (coefficients B₂ₖ / (2k(2k-1)); from memory). At `x >= 15` the first
//! omitted term, `1/(1188x⁹)`, is below 3·10⁻¹⁴.

/// `ln Γ(x)` for `x > 0`.
pub fn ln_gamma(x: f64) -> f64 {
    assert!(x > 0.0);
    let mut x = x;
    let mut shift = 0.0;
    while x < 15.0 {
        shift -= x.ln();
        x += 1.0;
    }
    let inv = 1.0 / x;
    let inv2 = inv * inv;
    let series = inv * (1.0 / 12.0 - inv2 * (1.0 / 360.0 - inv2 * (1.0 / 1260.0 - inv2 / 1680.0)));
    (x - 0.5) * x.ln() - x + 0.5 * (2.0 * core::f64::consts::PI).ln() + series + shift
}

/// `log2(n!)`.
pub fn log2_factorial(n: u64) -> f64 {
    ln_gamma(n as f64 + 1.0) / core::f64::consts::LN_2
}
