//! Round trips: whatever is encoded decodes back, the decoder consumes the
//! stream exactly (`Decoder::finish` succeeds), and encoding is
//! deterministic (the same input gives the same bytes).

use crate::support::strategies::{
    adaptive_model, alphabet, power_of_two_frequencies, refresh_model, table_from_counts,
};
use crate::support::{decode_all, encode_all, Draws, SplitMix64};
use proptest::prelude::*;
use subrange::coder::{
    decode_adaptive_lanes, decode_lanes, encode_adaptive_lanes, encode_lanes, Decoder, Encoder,
};
use subrange::model::{AdaptiveModel, Model, Span, StepwiseModel, TableModel};

/// The symbols of `model` that can be coded directly.
fn present(model: &TableModel) -> Vec<u32> {
    (0..model.alphabet_size())
        .filter(|&s| model.span(s).is_some())
        .collect()
}

fn check_table_round_trip(model: &TableModel, picks: &[u32]) -> Result<(), TestCaseError> {
    let present = present(model);
    let symbols: Vec<u32> = picks
        .iter()
        .map(|&p| present[p as usize % present.len()])
        .collect();
    let bytes = encode_all(&mut model.clone(), &symbols);
    prop_assert_eq!(&encode_all(&mut model.clone(), &symbols), &bytes);
    prop_assert_eq!(
        decode_all(&mut model.clone(), &bytes, symbols.len()),
        symbols
    );
    Ok(())
}

/// Symbols over `0 .. alphabet` with repeats: mostly from a small working
/// set, sometimes anywhere.
fn adaptive_symbols(alphabet: u32, picks: &[u32]) -> Vec<u32> {
    picks
        .iter()
        .map(|&p| match p % 4 {
            0 => (p >> 2) % alphabet,
            _ => ((p >> 2) % 13).wrapping_mul(2_654_435_761) % alphabet,
        })
        .collect()
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn table_built_from_counts(model in table_from_counts(300), picks in prop::collection::vec(any::<u32>(), 0..600)) {
        check_table_round_trip(&model, &picks)?;
    }

    #[test]
    fn table_built_from_frequencies(freq in power_of_two_frequencies(300), picks in prop::collection::vec(any::<u32>(), 0..600)) {
        let model = TableModel::from_frequencies(&freq).unwrap();
        prop_assert_eq!(model.frequencies(), &freq[..]);
        check_table_round_trip(&model, &picks)?;
    }

    #[test]
    fn adaptive(model in adaptive_model(alphabet()), picks in prop::collection::vec(any::<u32>(), 0..400)) {
        let symbols = adaptive_symbols(model.alphabet_size(), &picks);
        let bytes = encode_all(&mut model.clone(), &symbols);
        prop_assert_eq!(&encode_all(&mut model.clone(), &symbols), &bytes);
        let mut dec_model = model.clone();
        prop_assert_eq!(decode_all(&mut dec_model, &bytes, symbols.len()), symbols.clone());
        // Both sides end in the same state.
        let mut enc_model = model;
        encode_all(&mut enc_model, &symbols);
        prop_assert_eq!(enc_model, dec_model);
    }

    /// A refreshed model of any shape: one stream round-trips, both sides
    /// end in the same state, and the lane fast path writes exactly the
    /// generic interleaved streams.
    #[test]
    fn refresh(model in refresh_model(), picks in prop::collection::vec(any::<u32>(), 0..1500), lanes in 1usize..=32) {
        let codable: Vec<u32> = (0..model.alphabet_size()).filter(|&s| model.span(s).is_some()).collect();
        let symbols: Vec<u32> = adaptive_symbols(codable.len() as u32, &picks)
            .into_iter()
            .map(|i| codable[i as usize])
            .collect();
        let bytes = encode_all(&mut model.clone(), &symbols);
        let mut dec_model = model.clone();
        prop_assert_eq!(decode_all(&mut dec_model, &bytes, symbols.len()), symbols.clone());
        let mut enc_model = model.clone();
        prop_assert_eq!(encode_all(&mut enc_model, &symbols), bytes);
        prop_assert_eq!(&enc_model, &dec_model);

        let data: Vec<u8> = symbols.iter().map(|&s| s as u8).collect();
        let mut fast_model = model.clone();
        let fast = encode_adaptive_lanes(&mut fast_model, &data, lanes).unwrap();
        let mut slow_model = model.clone();
        prop_assert_eq!(&encode_lanes(&mut slow_model, &data, lanes).unwrap(), &fast);
        prop_assert_eq!(&fast_model, &slow_model);
        let views: Vec<&[u8]> = fast.iter().map(Vec::as_slice).collect();
        let mut back = vec![0u8; data.len()];
        let mut m = model.clone();
        decode_adaptive_lanes(&mut m, &views, &mut back).unwrap();
        prop_assert_eq!(&back, &data);
        prop_assert_eq!(&m, &fast_model);
        let mut back2 = vec![0u8; data.len()];
        decode_lanes(&mut model.clone(), &views, &mut back2).unwrap();
        prop_assert_eq!(back2, data);
    }

    /// Refreshed and per-symbol adaptive models and binary steps take turns
    /// in one stream.
    #[test]
    fn refresh_among_other_models(
        refresh in refresh_model(),
        adaptive in adaptive_model(1u32..300),
        ops in prop::collection::vec((0u8..3, any::<u32>()), 0..800),
    ) {
        let codable: Vec<u32> = (0..refresh.alphabet_size()).filter(|&s| refresh.span(s).is_some()).collect();
        let plan: Vec<(u8, u32)> = ops
            .iter()
            .map(|&(k, v)| match k {
                0 => (0, codable[v as usize % codable.len()]),
                1 => (1, v % adaptive.alphabet_size()),
                _ => (2, v),
            })
            .collect();
        let (mut r, mut a) = (refresh.clone(), adaptive.clone());
        let mut enc = Encoder::new();
        for &(k, v) in &plan {
            match k {
                0 => enc.encode(&mut r, v).unwrap(),
                1 => enc.encode(&mut a, v).unwrap(),
                _ => enc.encode_bit(v & 1 == 1, v >> 15).unwrap(),
            }
        }
        let bytes = enc.finish().unwrap();
        let (mut r, mut a) = (refresh, adaptive);
        let mut dec = Decoder::new(&bytes).unwrap();
        for &(k, v) in &plan {
            match k {
                0 => prop_assert_eq!(dec.decode(&mut r).unwrap(), v),
                1 => prop_assert_eq!(dec.decode(&mut a).unwrap(), v),
                _ => prop_assert_eq!(dec.decode_bit(v >> 15).unwrap(), v & 1 == 1),
            }
        }
        dec.finish().unwrap();
    }

    /// Several models interleaved in one stream, with binary steps and raw
    /// spans over tables of any total (not only powers of two).
    #[test]
    fn mixed_models_in_one_stream(
        tables in prop::collection::vec(table_from_counts(40), 1..3),
        adaptives in prop::collection::vec(adaptive_model(prop_oneof![1u32..20, 200u32..70_000].prop_map(|a| a.min(65_536))), 1..3),
        raw in prop::collection::vec(prop::collection::vec(0u32..3000, 1..20), 1..3),
        ops in prop::collection::vec((0u8..4, any::<u32>(), any::<u32>()), 0..500),
    ) {
        let raw: Vec<Vec<u32>> = raw
            .into_iter()
            .map(|mut f| {
                if f.iter().all(|&x| x == 0) {
                    f[0] = 1;
                }
                f
            })
            .collect();
        let cums: Vec<Vec<u32>> = raw
            .iter()
            .map(|f| f.iter().scan(0, |acc, &x| { let c = *acc; *acc += x; Some(c) }).collect())
            .collect();
        let table_present: Vec<Vec<u32>> = tables.iter().map(present).collect();

        // What each op codes: (kind, which model, symbol or bit, p1).
        let plan: Vec<(u8, usize, u32, u32)> = {
            let alphas: Vec<u32> = adaptives.iter().map(Model::alphabet_size).collect();
            ops.iter()
                .map(|&(kind, a, b)| match kind {
                    0 => {
                        let m = a as usize % tables.len();
                        (0, m, table_present[m][b as usize % table_present[m].len()], 0)
                    }
                    1 => {
                        let m = a as usize % adaptives.len();
                        (1, m, adaptive_symbols(alphas[m], &[b])[0], 0)
                    }
                    2 => (2, 0, a & 1, b),
                    _ => {
                        let m = a as usize % raw.len();
                        let nonzero: Vec<u32> = (0..raw[m].len() as u32).filter(|&s| raw[m][s as usize] > 0).collect();
                        (3, m, nonzero[b as usize % nonzero.len()], 0)
                    }
                })
                .collect()
        };

        let encode = || {
            let mut tables = tables.clone();
            let mut adaptives = adaptives.clone();
            let mut enc = Encoder::new();
            for &(kind, m, x, p1) in &plan {
                match kind {
                    0 => enc.encode(&mut tables[m], x).unwrap(),
                    1 => enc.encode(&mut adaptives[m], x).unwrap(),
                    2 => enc.encode_bit(x == 1, p1).unwrap(),
                    _ => {
                        let total = raw[m].iter().sum();
                        enc.encode_span(Span::new(cums[m][x as usize], raw[m][x as usize]), total).unwrap()
                    }
                }
            }
            enc.finish().unwrap()
        };
        let bytes = encode();
        prop_assert_eq!(&encode(), &bytes);

        let mut tables = tables.clone();
        let mut adaptives = adaptives.clone();
        let mut dec = Decoder::new(&bytes).unwrap();
        for &(kind, m, x, p1) in &plan {
            match kind {
                0 => prop_assert_eq!(dec.decode(&mut tables[m]).unwrap(), x),
                1 => prop_assert_eq!(dec.decode(&mut adaptives[m]).unwrap(), x),
                2 => prop_assert_eq!(dec.decode_bit(p1).unwrap(), x == 1),
                _ => {
                    let total = raw[m].iter().sum();
                    let t = dec.target(total);
                    prop_assert!(t < total);
                    let s = cums[m].partition_point(|&c| c <= t) - 1;
                    // Zero-frequency entries share their cum with the next one.
                    let s = (s..raw[m].len()).find(|&i| raw[m][i] > 0 && cums[m][i] <= t).unwrap();
                    prop_assert_eq!(s as u32, x);
                    dec.consume(Span::new(cums[m][s], raw[m][s]), total).unwrap();
                }
            }
        }
        dec.finish().unwrap();
    }
}

/// Larger seeded streams through the main models (a few hundred thousand
/// symbols; well under a second at the test profile's optimisation level).
#[test]
fn large_seeded_streams() {
    let mut rng = SplitMix64::new(0x5EED_0001);
    // Bytes with a drifting skew.
    let data: Vec<u32> = (0..200_000u32)
        .map(|i| {
            let spread = 1 + (i / 4096) % 64;
            (rng.below_u32(spread) * 3 + i / 50_000) % 256
        })
        .collect();

    let mut adaptive = StepwiseModel::new(256).unwrap();
    let bytes = encode_all(&mut adaptive.clone(), &data);
    assert_eq!(decode_all(&mut adaptive, &bytes, data.len()), data);

    let mut refresh = AdaptiveModel::new(256).unwrap();
    let bytes = encode_all(&mut refresh.clone(), &data);
    assert_eq!(decode_all(&mut refresh, &bytes, data.len()), data);

    let mut counts = [0u64; 256];
    data.iter().for_each(|&s| counts[s as usize] += 1);
    let mut table = TableModel::from_counts(&counts, 12).unwrap();
    let bytes = encode_all(&mut table.clone(), &data);
    assert_eq!(decode_all(&mut table, &bytes, data.len()), data);

    let wide: Vec<u32> = data
        .iter()
        .enumerate()
        .map(|(i, &s)| s * 256 + (i as u32 % 7))
        .collect();
    let mut escape = StepwiseModel::new(65_536).unwrap();
    assert!(escape.uses_escape());
    let bytes = encode_all(&mut escape.clone(), &wide);
    assert_eq!(decode_all(&mut escape, &bytes, wide.len()), wide);

    let mut enc = Encoder::new();
    let p: Vec<u32> = (0..data.len()).map(|_| rng.below_u32(1 << 17)).collect();
    for (&s, &p1) in data.iter().zip(&p) {
        enc.encode_bit(s & 1 == 1, p1).unwrap();
    }
    let bytes = enc.finish().unwrap();
    let mut dec = Decoder::new(&bytes).unwrap();
    for (&s, &p1) in data.iter().zip(&p) {
        assert_eq!(dec.decode_bit(p1).unwrap(), s & 1 == 1);
    }
    dec.finish().unwrap();
}
