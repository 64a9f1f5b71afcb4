//! Byte histograms, counted at several bytes a cycle.
//!
//! Counting `counts[b] += 1` byte after byte stalls whenever neighbouring
//! bytes are equal (common in the data an order-0 coder sees): each
//! increment waits for the store of the one before to the same counter.
//! [`byte_counts`] spreads the increments over four partial tables, byte
//! `i` going to table `i mod 4`, reads the input eight bytes at a time, and
//! adds the tables at the end (common practice for fast histograms).
//!
//! Invariant: the result is exactly the count of each byte value; partial
//! counts are 32-bit and summed into 64-bit totals every 2^30 bytes, so they
//! never wrap.

/// Bytes counted into one set of partial tables before they are summed.
const PART: usize = 1 << 30;

/// Inputs shorter than this are counted into one table (clearing four costs
/// more than it saves).
const SHORT: usize = 1024;

/// How many times each byte value occurs in `data`.
pub(crate) fn byte_counts(data: &[u8]) -> [u64; 256] {
    let mut total = [0u64; 256];
    if data.len() < SHORT {
        for &b in data {
            total[usize::from(b)] += 1;
        }
        return total;
    }
    for part in data.chunks(PART) {
        let mut t = [[0u32; 256]; 4];
        let mut words = part.chunks_exact(8);
        for w in &mut words {
            let x = u64::from_le_bytes(w.try_into().expect("eight bytes"));
            t[0][(x & 0xFF) as usize] += 1;
            t[1][(x >> 8 & 0xFF) as usize] += 1;
            t[2][(x >> 16 & 0xFF) as usize] += 1;
            t[3][(x >> 24 & 0xFF) as usize] += 1;
            t[0][(x >> 32 & 0xFF) as usize] += 1;
            t[1][(x >> 40 & 0xFF) as usize] += 1;
            t[2][(x >> 48 & 0xFF) as usize] += 1;
            t[3][(x >> 56) as usize] += 1;
        }
        for &b in words.remainder() {
            t[0][usize::from(b)] += 1;
        }
        for (v, c) in total.iter_mut().enumerate() {
            *c += u64::from(t[0][v]) + u64::from(t[1][v]) + u64::from(t[2][v]) + u64::from(t[3][v]);
        }
    }
    total
}

#[cfg(test)]
mod tests {
    use super::*;
    use alloc::vec::Vec;

    fn naive(data: &[u8]) -> [u64; 256] {
        let mut c = [0u64; 256];
        for &b in data {
            c[usize::from(b)] += 1;
        }
        c
    }

    #[test]
    fn counts_are_exact_at_every_length_and_alignment() {
        let data: Vec<u8> = (0..5000u32)
            .map(|i| (i.wrapping_mul(2_654_435_761) >> 29) as u8 * (1 + (i % 3) as u8))
            .collect();
        for len in [0usize, 1, 7, 8, 9, 1023, 1024, 1025, 1031, 4999] {
            for start in [0usize, 1, 3] {
                let d = &data[start..start + len.min(data.len() - start)];
                assert_eq!(byte_counts(d), naive(d), "len {len} start {start}");
            }
        }
        let same = [0xABu8; 70_000];
        assert_eq!(byte_counts(&same)[0xAB], 70_000);
    }
}
