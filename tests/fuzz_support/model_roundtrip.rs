//! Arbitrary frequency tables and symbol sequences through table, adaptive
//! and refreshed models, interleaved with binary steps in one raw coder
//! stream: decode(encode(x)) == x.
//!
//! Input layout: eight setup bytes, the table's counts, then the steps (two
//! bytes each).
//!
//! The table and refreshed steps' symbols, as bytes, also go through the
//! lane encoders (lane count from byte 3; multiples of eight reach the
//! vector kernels): the streams must be those of the scalar steps, and
//! decode back.
//!
//! | byte | picks |
//! | --- | --- |
//! | 0 | the table's length, `1 + b % 64` |
//! | 1 | the table's total, `2^(6 + b % 11)` |
//! | 2, 6 | the adaptive alphabet: `1 + byte 2`, or, when byte 3 is `0xFF`, `1 + (byte 2 \| byte 6 << 8)` (up to 2^16) |
//! | 4 | the adaptive increment, `1 + b % 64` |
//! | 5 | the escape: bits 0–1 `0` off, `1` on, else the model's own choice; bits 2–7 the refreshed model's total, first segment and longest segment |
//! | 7 | the adaptive limit: below 128 the default (2^16); else a value from the least the model accepts up to 2^16 |
//!
//! Work bound: halving an adaptive model's counts touches every symbol, and
//! a model whose total sits near its limit (a small limit, or an alphabet
//! near 2^16 without escape) halves every few symbols. The checks count the
//! symbols that model creation and halving touch, in the encoder and the
//! decoder, and end the step list once [`WORK`] is used up, so no input
//! costs more than about a millisecond while every alphabet, limit and
//! escape setting stays reachable.

use subrange::coder::{
    decode_adaptive_lanes, decode_table_lanes, encode_adaptive_lanes, encode_adaptive_lanes_scalar,
    encode_table_lanes, encode_table_lanes_scalar, Decoder, Encoder,
};
use subrange::model::{
    AdaptiveModel, AdaptiveParams, Model, StepwiseModel, StepwiseParams, TableModel, MAX_TOTAL,
};

/// Symbol updates one input may cost in adaptive model creation and
/// halving (both coder sides together).
pub const WORK: u64 = 1 << 18;

/// The adaptive model's parameters from the setup bytes, or `None` when
/// they cannot fit together.
fn adaptive_params(head: &[u8; 8], alphabet: u32) -> Option<StepwiseParams> {
    let mut params = StepwiseParams::default();
    params.increment = 1 + u32::from(head[4]) % 64;
    params.escape = match head[5] & 3 {
        0 => Some(false),
        1 => Some(true),
        _ => None,
    };
    if head[7] >= 128 {
        // The least limit the model accepts (`StepwiseModel::with_params`),
        // up to the largest.
        let escape = params
            .escape
            .unwrap_or(4 * u64::from(alphabet) > u64::from(MAX_TOTAL));
        let least = if escape { 2 } else { alphabet + 1 } + 4 * params.increment;
        let span = MAX_TOTAL.checked_sub(least)?;
        params.limit = least + (u64::from(head[7] - 128) * u64::from(span) / 127) as u32;
    }
    Some(params)
}

/// Runs every check on one input; panics on the first broken promise.
pub fn check(data: &[u8]) {
    let Some((head, body)) = data.split_first_chunk::<8>() else {
        return;
    };
    let table_len = 1 + usize::from(head[0]) % 64;
    let log2_total = 6 + u32::from(head[1]) % 11;
    // Mostly small alphabets; now and then up to 2^16 (escape territory).
    let alphabet = if head[3] == 0xFF {
        1 + u32::from(u16::from_le_bytes([head[2], head[6]]))
    } else {
        1 + u32::from(head[2])
    };
    let Some(params) = adaptive_params(head, alphabet) else {
        return;
    };
    let (counts_bytes, symbols) = body.split_at(table_len.min(body.len()));
    let counts: Vec<u64> = counts_bytes.iter().map(|&b| u64::from(b)).collect();
    let Ok(mut table) = TableModel::from_counts(&counts, log2_total) else {
        return;
    };
    let Ok(mut adaptive) = StepwiseModel::with_params(alphabet, params) else {
        return;
    };
    // A refreshed model over up to 256 symbols, short segments and fast
    // forgetting drawn from bits 2-7 of byte 5 and from byte 4.
    let mut refresh_params = AdaptiveParams::default();
    refresh_params.log2_total = 8 + u32::from(head[5] >> 2 & 3) * 2;
    refresh_params.first_period = 1 + u32::from(head[5] >> 4 & 3) * 8;
    refresh_params.max_period = refresh_params.first_period + u32::from(head[5] >> 6) * 64;
    refresh_params.limit = 1 + u32::from(head[4]) * 16;
    let refresh_alphabet = alphabet.min(256);
    let Ok(mut refresh) = AdaptiveModel::with_params(refresh_alphabet, refresh_params) else {
        return;
    };
    let refresh_start = refresh.clone();
    let lanes = [1, 3, 8, 16, 24, 32][usize::from(head[3] % 6)];
    // Both sides create a model; both halve it at the same steps.
    let mut work = 2 * u64::from(alphabet);

    // Each step picks a table symbol, an adaptive symbol, a bit or a
    // refreshed symbol.
    let plan: Vec<(u8, u32)> = symbols
        .chunks(2)
        .map(|c| {
            let v = u32::from(c[0]) | u32::from(*c.get(1).unwrap_or(&0)) << 8;
            (c[0] % 4, v)
        })
        .collect();
    let mut coded_plan = Vec::new();
    let mut enc = Encoder::new();
    for &(kind, v) in &plan {
        let step = match kind {
            0 => (0, v % table.alphabet_size()),
            1 => (1, v % alphabet),
            3 => (3, v % refresh_alphabet),
            _ => (2, v & 1),
        };
        if step.0 == 1 {
            // The model's rule: counts are halved first when the total
            // plus twice the increment would pass the limit.
            if adaptive.total() + 2 * params.increment > params.limit {
                work += 2 * u64::from(alphabet);
            }
            if work > WORK {
                break;
            }
        }
        let ok = match step.0 {
            0 => enc.encode(&mut table, step.1).is_ok(),
            1 => enc.encode(&mut adaptive, step.1).is_ok(),
            3 => enc.encode(&mut refresh, step.1).is_ok(),
            _ => enc.encode_bit(step.1 == 1, v >> 1).is_ok(),
        };
        if ok {
            coded_plan.push((step, v));
        }
    }
    let bytes = enc.finish().expect("Vec sink cannot fail");

    let mut adaptive = StepwiseModel::with_params(alphabet, params).expect("same params");
    let mut refresh = refresh_start;
    let mut dec = Decoder::new(&bytes).expect("valid stream");
    for &((kind, symbol), v) in &coded_plan {
        let got = match kind {
            0 => dec.decode(&mut table).expect("table step"),
            1 => dec.decode(&mut adaptive).expect("adaptive step"),
            3 => dec.decode(&mut refresh).expect("refreshed step"),
            _ => u32::from(dec.decode_bit(v >> 1).expect("bit step")),
        };
        assert_eq!(got, symbol);
    }
    dec.finish().expect("stream consumed exactly");

    let runs = |kind: u8| -> Vec<u8> {
        coded_plan
            .iter()
            .filter(|((k, _), _)| *k == kind)
            .map(|&((_, s), _)| s as u8)
            .collect()
    };
    if table.alphabet_size() <= 256 {
        let data = runs(0);
        let fast = encode_table_lanes(&table, &data, lanes).expect("codable bytes");
        let slow = encode_table_lanes_scalar(&table, &data, lanes).expect("codable bytes");
        assert!(fast == slow, "vector and scalar lane encoders disagree");
        let views: Vec<&[u8]> = fast.iter().map(Vec::as_slice).collect();
        let mut back = vec![0u8; data.len()];
        decode_table_lanes(&table, &views, &mut back).expect("valid lanes");
        assert_eq!(back, data);
    }
    let data = runs(3);
    let fresh =
        || AdaptiveModel::with_params(refresh_alphabet, refresh_params).expect("same params");
    let fast = encode_adaptive_lanes(&mut fresh(), &data, lanes).expect("codable bytes");
    let slow = encode_adaptive_lanes_scalar(&mut fresh(), &data, lanes).expect("codable bytes");
    assert!(
        fast == slow,
        "vector and scalar refreshed lane encoders disagree"
    );
    let views: Vec<&[u8]> = fast.iter().map(Vec::as_slice).collect();
    let mut back = vec![0u8; data.len()];
    decode_adaptive_lanes(&mut fresh(), &views, &mut back).expect("valid lanes");
    assert_eq!(back, data);
}
