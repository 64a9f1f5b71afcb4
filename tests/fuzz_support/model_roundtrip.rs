//! Arbitrary frequency tables and symbol sequences through table, adaptive
//! and refreshed models, interleaved with binary steps in one raw coder
//! stream: decode(encode(x)) == x.

use subrange::coder::{Decoder, Encoder};
use subrange::model::{
    AdaptiveModel, AdaptiveParams, Model, RefreshModel, RefreshParams, TableModel,
};

/// Runs every check on one input; panics on the first broken promise.
pub fn check(data: &[u8]) {
    if data.len() < 8 {
        return;
    }
    let (head, body) = data.split_at(8);
    let table_len = 1 + usize::from(head[0]) % 64;
    let log2_total = 6 + u32::from(head[1]) % 11;
    // Mostly small alphabets; now and then up to 2^16 (escape territory).
    let alphabet = if head[3] == 0xFF {
        1 + u32::from(u16::from_le_bytes([head[2], head[6]]))
    } else {
        1 + u32::from(head[2])
    };
    let mut params = AdaptiveParams::default();
    params.increment = 1 + u32::from(head[4]) % 64;
    params.escape = Some(head[5] & 1 == 1);
    let (counts_bytes, symbols) = body.split_at(table_len.min(body.len()));
    let counts: Vec<u64> = counts_bytes.iter().map(|&b| u64::from(b)).collect();
    let Ok(mut table) = TableModel::from_counts(&counts, log2_total) else {
        return;
    };
    let Ok(mut adaptive) = AdaptiveModel::with_params(alphabet, params) else {
        return;
    };
    // A refreshed model over up to 256 symbols, short segments and fast
    // forgetting drawn from byte 7.
    let mut refresh_params = RefreshParams::default();
    refresh_params.log2_total = 8 + u32::from(head[7] >> 6) * 2;
    refresh_params.first_period = 1 + u32::from(head[7] & 0x0F);
    refresh_params.max_period = refresh_params.first_period + u32::from(head[7] & 0x30) * 4;
    refresh_params.limit = 1 + u32::from(head[4]) * 16;
    let refresh_alphabet = alphabet.min(256);
    let Ok(mut refresh) = RefreshModel::with_params(refresh_alphabet, refresh_params) else {
        return;
    };
    let refresh_start = refresh.clone();

    // Each input byte picks a step: table symbol, adaptive symbol or bit.
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

    let mut adaptive = AdaptiveModel::with_params(alphabet, params).expect("same params");
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
}
