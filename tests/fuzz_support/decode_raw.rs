//! Arbitrary bytes into the raw range decoder with arbitrary models, for a
//! bounded number of symbols: errors are fine, panics and hangs are not.

use subrange::coder::{
    decode_adaptive_lanes, decode_adaptive_lanes_scalar, decode_table_lanes,
    decode_table_lanes_scalar, Decoder,
};
use subrange::model::{
    AdaptiveModel, AdaptiveParams, Model, StepwiseModel, StepwiseParams, TableModel,
};

/// Runs every check on one input; panics on the first broken promise.
pub fn check(data: &[u8]) {
    if data.len() < 4 {
        return;
    }
    let (head, stream) = data.split_at(4);
    let symbols = 1 + usize::from(u16::from_le_bytes([head[0], head[1]])) % 1024;
    // Mostly small alphabets; now and then the full 2^16 (escape territory).
    let alphabet = if head[3] & 0x80 != 0 && head[2] > 250 {
        65_536
    } else {
        1 + u32::from(head[2])
    };
    let mode = head[3];

    // A table drawn from the header bytes.
    let counts: Vec<u64> = (0..alphabet.min(300))
        .map(|i| u64::from(stream.get(i as usize).copied().unwrap_or(1) % 7))
        .collect();
    // Totals up to 2^12 take the lane decoder's packed slots, larger ones
    // its two-table layout.
    let log2_total = [8, 10, 12, 12, 13, 14, 15, 16][usize::from(mode >> 5)];
    let table = TableModel::from_counts(&counts, log2_total).ok();

    let mut params = StepwiseParams::default();
    params.increment = 1 + u32::from(mode >> 4);
    params.escape = Some(mode & 1 == 1);
    let adaptive = StepwiseModel::with_params(alphabet, params).ok();

    // A refreshed model over the bytes the table leaves codable (or all of
    // them), with short segments and fast forgetting from the mode bits.
    let mut refresh_params = AdaptiveParams::default();
    refresh_params.log2_total = log2_total.max(8);
    refresh_params.first_period = 1 + u32::from(mode & 0x1F);
    refresh_params.max_period = 32 + u32::from(mode) * 4;
    refresh_params.limit = 256 << (mode >> 5);
    let codable: Vec<bool> = match table.as_ref().filter(|t| t.alphabet_size() <= 256) {
        Some(t) => (0..t.alphabet_size())
            .map(|s| t.span(s).is_some())
            .collect(),
        None => vec![true; 256],
    };
    let refresh = AdaptiveModel::with_symbols(&codable, refresh_params).ok();

    let Ok(mut dec) = Decoder::new(stream) else {
        return;
    };
    let mut table = table;
    let mut adaptive = adaptive;
    let mut stepped = refresh.clone();
    for i in 0..symbols {
        let r = match (i + usize::from(mode)) % 4 {
            3 => match stepped.as_mut() {
                Some(m) => dec.decode(m).map(drop),
                None => Ok(()),
            },
            0 => match table.as_mut() {
                Some(t) => dec.decode(t).map(|_| ()),
                None => Ok(()),
            },
            1 => match adaptive.as_mut() {
                Some(a) => dec.decode(a).map(drop),
                None => Ok(()),
            },
            _ => dec.decode_bit(u32::from(mode) << 8).map(drop),
        };
        if r.is_err() {
            break;
        }
    }

    // The fast table path over lanes cut from the same bytes (multiples of
    // eight reach the vector kernels): the same verdict and the same bytes
    // as the scalar steps, whatever the input.
    if let Some(t) = table.as_ref().filter(|t| t.alphabet_size() <= 256) {
        let lanes = [1, 2, 3, 4, 8, 16, 24, 32][usize::from(mode % 8)];
        let chunk = stream.len() / lanes;
        let views: Vec<&[u8]> = (0..lanes)
            .map(|l| &stream[l * chunk..(l + 1) * chunk])
            .collect();
        let mut out = vec![0u8; symbols];
        let fast = decode_table_lanes(t, &views, &mut out).map_err(|e| e.to_string());
        let mut reference = vec![0u8; symbols];
        let slow = decode_table_lanes_scalar(t, &views, &mut reference).map_err(|e| e.to_string());
        assert_eq!(fast, slow, "vector and scalar lane decoders disagree");
        assert!(
            out == reference,
            "vector and scalar lane decoders wrote different bytes"
        );

        // The refreshed model over the same lanes: a table per segment.
        if let Some(m) = refresh.as_ref() {
            let mut fast_model = m.clone();
            let fast =
                decode_adaptive_lanes(&mut fast_model, &views, &mut out).map_err(|e| e.to_string());
            let mut slow_model = m.clone();
            let slow = decode_adaptive_lanes_scalar(&mut slow_model, &views, &mut reference)
                .map_err(|e| e.to_string());
            assert_eq!(fast, slow, "vector and scalar adaptive lanes disagree");
            assert!(
                out == reference,
                "vector and scalar adaptive lanes wrote different bytes"
            );
        }
    }
}
