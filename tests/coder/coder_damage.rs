//! Damaged input: arbitrary bytes, truncated streams and flipped bits give a
//! typed error or wrong symbols — within the number of symbols the caller
//! asks for — and never a panic or a hang (every call decodes one symbol).

use crate::support::strategies::{adaptive_model, alphabet, table_from_counts};
use proptest::prelude::*;
use subrange::coder::{Decoder, Encoder, SliceSource};
use subrange::model::{Model, Span, StepwiseModel, TableModel};
use subrange::{Error, ErrorKind};

/// What the decoder is asked for at one step.
#[derive(Debug, Clone)]
enum Ask {
    Table,
    Adaptive,
    Bit(u32),
    /// A raw step over the case's own table (any total).
    Raw,
}

fn ask() -> impl Strategy<Value = Ask> {
    prop_oneof![
        Just(Ask::Table),
        Just(Ask::Adaptive),
        any::<u32>().prop_map(Ask::Bit),
        Just(Ask::Raw),
    ]
}

#[derive(Debug, Clone)]
struct Models {
    table: TableModel,
    adaptive: StepwiseModel,
    raw: Vec<u32>,
}

impl Models {
    fn raw_total(&self) -> u32 {
        self.raw.iter().sum()
    }

    fn raw_span(&self, s: usize) -> Span {
        Span::new(self.raw[..s].iter().sum(), self.raw[s])
    }
}

/// Runs the asks against `dec`; returns the decoded values and the error
/// that stopped it, if any. Checks every decoded value is in its alphabet.
fn run(
    dec: &mut Decoder<SliceSource<'_>>,
    m: &mut Models,
    asks: &[Ask],
) -> (Vec<u32>, Option<Error>) {
    let mut out = Vec::new();
    for ask in asks {
        let step = match ask {
            Ask::Table => dec
                .decode(&mut m.table)
                .inspect(|&s| assert!(m.table.span(s).is_some())),
            Ask::Adaptive => {
                let a = m.adaptive.alphabet_size();
                dec.decode(&mut m.adaptive).inspect(|&s| assert!(s < a))
            }
            Ask::Bit(p1) => dec.decode_bit(*p1).map(u32::from),
            Ask::Raw => {
                let total = m.raw_total();
                let t = dec.target(total);
                assert!(t < total);
                let s = (0..m.raw.len())
                    .find(|&s| {
                        let sp = m.raw_span(s);
                        sp.freq > 0 && sp.cum <= t && t < sp.cum + sp.freq
                    })
                    .expect("the target lies in some span");
                dec.consume(m.raw_span(s), total).map(|()| s as u32)
            }
        };
        match step {
            Ok(v) => out.push(v),
            Err(e) => return (out, Some(e)),
        }
    }
    (out, None)
}

fn models() -> impl Strategy<Value = Models> {
    (
        table_from_counts(40),
        adaptive_model(alphabet()),
        prop::collection::vec(0u32..3000, 1..20),
    )
        .prop_map(|(table, adaptive, mut raw)| {
            if raw.iter().all(|&f| f == 0) {
                raw[0] = 1;
            }
            Models {
                table,
                adaptive,
                raw,
            }
        })
}

/// Encodes a stream for `asks`, choosing each symbol from `picks`.
fn encode(m: &Models, asks: &[Ask], picks: &[u32]) -> (Vec<u8>, Vec<u32>) {
    let mut table = m.table.clone();
    let mut adaptive = m.adaptive.clone();
    let present: Vec<u32> = (0..table.alphabet_size())
        .filter(|&s| table.span(s).is_some())
        .collect();
    let nonzero: Vec<usize> = (0..m.raw.len()).filter(|&s| m.raw[s] > 0).collect();
    let mut enc = Encoder::new();
    let mut values = Vec::new();
    for (ask, &pick) in asks.iter().zip(picks.iter().cycle()) {
        let v = match ask {
            Ask::Table => {
                let s = present[pick as usize % present.len()];
                enc.encode(&mut table, s).unwrap();
                s
            }
            Ask::Adaptive => {
                let s = pick
                    % adaptive
                        .alphabet_size()
                        .min(if pick & 1 == 0 { 5 } else { u32::MAX });
                enc.encode(&mut adaptive, s).unwrap();
                s
            }
            Ask::Bit(p1) => {
                let bit = pick & 1 == 1;
                enc.encode_bit(bit, *p1).unwrap();
                u32::from(bit)
            }
            Ask::Raw => {
                let s = nonzero[pick as usize % nonzero.len()];
                enc.encode_span(m.raw_span(s), m.raw_total()).unwrap();
                s as u32
            }
        };
        values.push(v);
    }
    (enc.finish().unwrap(), values)
}

fn fresh(m: &Models) -> Models {
    m.clone()
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn arbitrary_bytes_never_panic(
        bytes in prop::collection::vec(any::<u8>(), 0..200),
        m in models(),
        asks in prop::collection::vec(ask(), 0..300),
    ) {
        let mut m = m;
        match Decoder::new(&bytes) {
            Err(e) => prop_assert!(matches!(e.kind(), ErrorKind::CorruptStream { .. }), "{e:?}"),
            Ok(mut dec) => {
                let (out, err) = run(&mut dec, &mut m, &asks);
                prop_assert!(out.len() <= asks.len());
                if let Some(e) = err {
                    prop_assert!(e.is_damage(), "{e:?}");
                } else {
                    let _ = dec.finish();
                }
            }
        }
    }

    /// A caller consuming spans that do not hold the target (or arbitrary
    /// ones) damages only its own decoding.
    #[test]
    fn arbitrary_consume_never_panics(
        bytes in prop::collection::vec(any::<u8>(), 0..64),
        steps in prop::collection::vec((1u32..=65_536, any::<u32>(), any::<u32>()), 0..200),
    ) {
        let Ok(mut dec) = Decoder::new(&bytes) else { return Ok(()) };
        for (total, a, b) in steps {
            let cum = a % total;
            let freq = 1 + b % (total - cum);
            let _ = dec.target(total);
            if dec.consume(Span::new(cum, freq), total).is_err() {
                break;
            }
        }
    }

    #[test]
    fn every_truncation_is_reported_or_harmless(
        m in models(),
        asks in prop::collection::vec(ask(), 1..200),
        picks in prop::collection::vec(any::<u32>(), 1..50),
    ) {
        let (bytes, values) = encode(&m, &asks, &picks);
        for cut in 0..bytes.len() {
            let prefix = &bytes[..cut];
            let mut mm = fresh(&m);
            let mut dec = Decoder::new(prefix).expect("a prefix of a valid stream starts like one");
            let (out, err) = run(&mut dec, &mut mm, &asks);
            if let Some(e) = &err {
                // The only damage a cut can cause is running out of input.
                prop_assert!(
                    matches!(e.kind(), ErrorKind::Truncated { offset } if *offset == cut as u64),
                    "cut {}: {:?}", cut, e
                );
            }
            if bytes.len() - cut > 4 {
                // Decoding the same symbols means the same renormalisations,
                // so the decoder needs all but at most four of the bytes.
                prop_assert!(err.is_some() || out != values, "cut {} of {}: decoded fine", cut, bytes.len());
            }
        }
        // The whole stream is fine.
        let mut mm = fresh(&m);
        let mut dec = Decoder::new(&bytes).unwrap();
        let (out, err) = run(&mut dec, &mut mm, &asks);
        prop_assert!(err.is_none());
        prop_assert_eq!(out, values);
        dec.finish().unwrap();
    }

    #[test]
    fn flipped_bits_give_errors_or_wrong_symbols(
        m in models(),
        asks in prop::collection::vec(ask(), 1..200),
        picks in prop::collection::vec(any::<u32>(), 1..50),
        flips in prop::collection::vec((any::<u32>(), 0u8..8), 1..4),
        extra in prop::collection::vec(any::<u8>(), 0..3),
    ) {
        let (mut bytes, _) = encode(&m, &asks, &picks);
        if bytes.is_empty() {
            bytes.push(0x55);
        }
        for (at, bit) in flips {
            let i = at as usize % bytes.len();
            bytes[i] ^= 1 << bit;
        }
        bytes.extend(extra);
        let mut mm = fresh(&m);
        if let Ok(mut dec) = Decoder::new(&bytes) {
            let (_, err) = run(&mut dec, &mut mm, &asks);
            if let Some(e) = err {
                prop_assert!(e.is_damage(), "{e:?}");
            }
        }
    }
}

/// Four 0xFF bytes cannot start a stream: the code value would be at or
/// past the top of the initial interval.
#[test]
fn impossible_start_is_corrupt() {
    let err = Decoder::new(&[0xFF, 0xFF, 0xFF, 0xFF, 0x00]).unwrap_err();
    assert!(matches!(err.kind(), ErrorKind::CorruptStream { .. }));
    assert!(err.is_damage());
}

/// A long stream cut early reports the offset where input ran out.
#[test]
fn truncated_long_stream_reports_offset() {
    let symbols: Vec<u32> = (0..5000u32).map(|i| (i * 7919) % 256).collect();
    let mut model = StepwiseModel::new(256).unwrap();
    let bytes = crate::support::encode_all(&mut model.clone(), &symbols);
    let cut = bytes.len() / 2;
    let mut dec = Decoder::new(&bytes[..cut]).unwrap();
    let err = (0..symbols.len())
        .find_map(|_| dec.decode(&mut model).err())
        .expect("half a stream cannot hold all symbols");
    assert!(matches!(err.kind(), ErrorKind::Truncated { offset } if *offset == cut as u64));
}
