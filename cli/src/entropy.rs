//! Empirical entropies of orders 0 to 3.
//!
//! The order-k figure is the conditional entropy `H(X | previous k bytes)` of
//! the sample, by the plug-in (maximum-likelihood) estimator: with `n(c)` the
//! number of positions whose previous `k` bytes are the context `c`, and
//! `n(c, x)` those of them followed by byte `x`,
//!
//! ```text
//! H_k = (1/N) Σ_c Σ_x n(c, x) · log2( n(c) / n(c, x) )
//!     = (1/N) Σ_c [ n(c)·log2 n(c) − Σ_x n(c, x)·log2 n(c, x) ]
//! ```
//!
//! over the `N = len − k` positions that have a full context (the first `k`
//! bytes are not counted). This is exactly the cost per byte of coding the
//! sample with the best fixed order-k model fitted to the sample itself, so it
//! is a bound no order-k model reaches when it must also learn or transmit its
//! statistics; when contexts are rare (few positions per context) it is
//! optimistic as a prediction for more data of the same kind, which is why the
//! number of distinct contexts and the share of positions in contexts seen
//! only once are reported beside it.
//!
//! Counting: order 0 uses a 256-entry array. Orders 1 to 3 pack each
//! position's context and byte into one `u32` key (`context << 8 | byte`),
//! sort the keys, and read the counts off the runs of equal keys; keys with
//! the same context are adjacent, so `n(c)` is the sum over a run of runs.
//! Memory is 4 bytes per sample byte; time one sort per order.

/// The estimate for one order.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OrderEntropy {
    /// The order `k`: bytes of context.
    pub order: usize,
    /// `H(X | previous k bytes)` in bits per byte.
    pub bits_per_byte: f64,
    /// Positions counted (`len − k`).
    pub positions: u64,
    /// Distinct contexts seen.
    pub contexts: u64,
    /// Positions whose context occurs only there (their byte costs 0 bits in
    /// the estimate): a high share means the figure is optimistic.
    pub lone_positions: u64,
}

/// `n · log2 n`, 0 for 0.
fn nlog2n(n: u64) -> f64 {
    if n == 0 {
        0.0
    } else {
        let x = n as f64;
        x * x.log2()
    }
}

/// The order-0 entropy of `data` in bits per byte (0 for empty data).
pub fn order0(data: &[u8]) -> f64 {
    let mut counts = [0u64; 256];
    for &b in data {
        counts[b as usize] += 1;
    }
    order0_from_counts(&counts)
}

/// The order-0 entropy of a histogram in bits per symbol.
pub fn order0_from_counts(counts: &[u64]) -> f64 {
    let n: u64 = counts.iter().sum();
    if n == 0 {
        return 0.0;
    }
    let sum: f64 = counts.iter().map(|&c| nlog2n(c)).sum();
    ((nlog2n(n) - sum) / n as f64).max(0.0)
}

/// Entropies of orders `0 ..= max_order` (`max_order <= 3`).
pub fn conditional_entropies(data: &[u8], max_order: usize) -> Vec<OrderEntropy> {
    let max_order = max_order.min(3);
    let mut out = Vec::with_capacity(max_order + 1);
    let n0 = data.len() as u64;
    out.push(OrderEntropy {
        order: 0,
        bits_per_byte: order0(data),
        positions: n0,
        contexts: u64::from(n0 > 0),
        lone_positions: u64::from(n0 == 1),
    });
    let mut keys: Vec<u32> = Vec::new();
    for k in 1..=max_order {
        if data.len() <= k {
            out.push(OrderEntropy {
                order: k,
                bits_per_byte: 0.0,
                positions: 0,
                contexts: 0,
                lone_positions: 0,
            });
            continue;
        }
        keys.clear();
        keys.reserve(data.len() - k);
        let mask: u32 = (1u32 << (8 * k)) - 1;
        let mut ctx: u32 = data[..k]
            .iter()
            .fold(0u32, |acc, &b| (acc << 8) | u32::from(b));
        for &b in &data[k..] {
            keys.push((ctx << 8) | u32::from(b));
            ctx = ((ctx << 8) | u32::from(b)) & mask;
        }
        keys.sort_unstable();
        out.push(from_sorted_keys(k, &keys));
    }
    out
}

/// Reads the estimate off sorted `context << 8 | byte` keys.
fn from_sorted_keys(order: usize, keys: &[u32]) -> OrderEntropy {
    let mut total = 0.0f64;
    let mut contexts = 0u64;
    let mut lone = 0u64;
    let mut i = 0;
    while i < keys.len() {
        let ctx = keys[i] >> 8;
        let mut n_c = 0u64;
        let mut inner = 0.0f64;
        while i < keys.len() && keys[i] >> 8 == ctx {
            let key = keys[i];
            let start = i;
            while i < keys.len() && keys[i] == key {
                i += 1;
            }
            let n_cx = (i - start) as u64;
            n_c += n_cx;
            inner += nlog2n(n_cx);
        }
        contexts += 1;
        if n_c == 1 {
            lone += 1;
        }
        total += nlog2n(n_c) - inner;
    }
    let n = keys.len() as u64;
    OrderEntropy {
        order,
        bits_per_byte: if n == 0 {
            0.0
        } else {
            (total / n as f64).max(0.0)
        },
        positions: n,
        contexts,
        lone_positions: lone,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn uniform_over_2k_symbols_is_k_bits() {
        // Entropy of a uniform distribution over 2^k symbols is k bits
        // (common practice).
        for k in 0..=8u32 {
            let data: Vec<u8> = (0..4096u32).map(|i| (i % (1 << k)) as u8).collect();
            assert!((order0(&data) - f64::from(k)).abs() < 1e-9, "k={k}");
        }
    }

    #[test]
    fn known_distribution() {
        // p = (1/2, 1/4, 1/4): H = 1.5 bits (common practice).
        assert!((order0_from_counts(&[2, 1, 1]) - 1.5).abs() < 1e-12);
        assert_eq!(order0(&[]), 0.0);
        assert_eq!(order0(&[7; 100]), 0.0);
    }

    #[test]
    fn a_periodic_sequence_is_free_given_enough_context() {
        // "abcabc…": order 0 is log2 3; one byte of context determines the next.
        let data: Vec<u8> = b"abc".iter().cycle().take(3000).copied().collect();
        let h = conditional_entropies(&data, 3);
        assert!((h[0].bits_per_byte - 3f64.log2()).abs() < 1e-9);
        for e in &h[1..] {
            assert!(e.bits_per_byte.abs() < 1e-12, "{e:?}");
            assert_eq!(e.contexts, 3);
            assert_eq!(e.positions, 3000 - e.order as u64);
        }
    }

    #[test]
    fn order1_matches_a_direct_computation() {
        let data = subrange::corpus::gauge_csv(4, 20_000);
        let mut pairs = vec![0u64; 65536];
        let mut ctx = [0u64; 256];
        for w in data.windows(2) {
            pairs[(w[0] as usize) << 8 | w[1] as usize] += 1;
            ctx[w[0] as usize] += 1;
        }
        let n = (data.len() - 1) as f64;
        let mut h = 0.0;
        for (i, &c) in pairs.iter().enumerate() {
            if c > 0 {
                let p_c = ctx[i >> 8] as f64;
                h += c as f64 * (p_c / c as f64).log2();
            }
        }
        let got = conditional_entropies(&data, 1)[1].bits_per_byte;
        assert!((got - h / n).abs() < 1e-9, "{got} vs {}", h / n);
    }

    #[test]
    fn higher_orders_never_exceed_lower_ones_on_a_sample() {
        // Conditioning on more of the sample cannot raise the plug-in estimate
        // by more than the boundary positions allow.
        let data = subrange::corpus::text_like(2, 30_000);
        let h = conditional_entropies(&data, 3);
        for w in h.windows(2) {
            assert!(w[1].bits_per_byte <= w[0].bits_per_byte + 1e-3, "{h:?}");
        }
    }

    #[test]
    fn short_inputs() {
        for len in 0..5 {
            let data = vec![1u8; len];
            let h = conditional_entropies(&data, 3);
            assert_eq!(h.len(), 4);
            assert!(h.iter().all(|e| e.bits_per_byte == 0.0));
        }
    }
}
