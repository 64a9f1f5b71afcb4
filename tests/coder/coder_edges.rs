//! Edge cases: empty and one-symbol streams, alphabets of 1 and 65,536,
//! totals of exactly 2^16, long carry chains, and the `std::io` sink and
//! source against the `Vec` / slice path.

use crate::support::nat::Nat;
use crate::support::reference::FastReference;
use crate::support::{decode_all, encode_all, longest_run, Draws, SplitMix64};
use std::io::{self, Read, Write};
use subrange::coder::{Decoder, Encoder, IoSink, IoSource};
use subrange::model::{Model, Span, StepwiseModel, StepwiseParams, TableModel};
use subrange::ErrorKind;

#[test]
fn empty_stream() {
    let bytes = Encoder::new().finish().unwrap();
    assert!(bytes.is_empty());
    let dec = Decoder::new(&bytes).unwrap();
    assert!(dec.past_end());
    dec.finish().unwrap();
    // Any non-empty input is not the empty stream.
    let dec = Decoder::new(&[0, 0, 0, 0, 1]).unwrap();
    assert!(matches!(
        dec.finish().unwrap_err().kind(),
        ErrorKind::TrailingBytes { offset: 4, .. }
    ));
}

#[test]
fn one_symbol_streams() {
    let mut table = TableModel::from_counts(&[3, 1, 0, 7], 10).unwrap();
    for s in [0u32, 1, 3] {
        let bytes = encode_all(&mut table, &[s]);
        assert!(bytes.len() <= 2, "{bytes:?}");
        assert_eq!(decode_all(&mut table, &bytes, 1), [s]);
    }
    for alphabet in [2u32, 256, 65_536] {
        let fresh = StepwiseModel::new(alphabet).unwrap();
        let s = alphabet - 1;
        let bytes = encode_all(&mut fresh.clone(), &[s]);
        assert_eq!(decode_all(&mut fresh.clone(), &bytes, 1), [s]);
    }
    let mut enc = Encoder::new();
    enc.encode_bit(true, 1).unwrap();
    let bytes = enc.finish().unwrap();
    let mut dec = Decoder::new(&bytes).unwrap();
    assert!(dec.decode_bit(1).unwrap());
    dec.finish().unwrap();
}

/// A one-symbol alphabet carries no information: the symbol has the whole
/// interval (cum 0, freq = total), so no byte is ever written.
#[test]
fn alphabet_of_one_costs_nothing() {
    let symbols = vec![0u32; 10_000];
    let mut table = TableModel::from_frequencies(&[1]).unwrap();
    assert_eq!(table.total(), 1);
    let bytes = encode_all(&mut table, &symbols);
    assert!(bytes.is_empty());
    assert_eq!(decode_all(&mut table, &bytes, symbols.len()), symbols);

    let mut adaptive = StepwiseModel::new(1).unwrap();
    let bytes = encode_all(&mut adaptive.clone(), &symbols);
    assert!(bytes.is_empty());
    assert_eq!(decode_all(&mut adaptive, &bytes, symbols.len()), symbols);

    // Symbol 1 is outside the alphabet: an error, not a panic.
    let mut enc = Encoder::new();
    let err = enc.encode(&mut table, 1).unwrap_err();
    assert!(matches!(
        err.kind(),
        ErrorKind::UncodableSymbol {
            symbol: 1,
            alphabet: 1
        }
    ));
}

/// Every symbol of 0 .. 2^16 with frequency 1: total exactly 2^16, each
/// symbol costs exactly 16 bits ideally.
#[test]
fn alphabet_of_65536_table() {
    let table = TableModel::from_frequencies(&vec![1u32; 65_536]).unwrap();
    assert_eq!(table.total(), 1 << 16);
    assert_eq!(
        TableModel::from_counts(&vec![5u64; 65_536], 16).unwrap(),
        table
    );
    let mut rng = SplitMix64::new(0xED6E_0001);
    let mut symbols: Vec<u32> = (0..65_536).collect();
    for i in (1..symbols.len()).rev() {
        symbols.swap(i, rng.below(i as u64 + 1) as usize);
    }
    symbols.extend([0, 65_535, 65_535, 0]);
    let bytes = encode_all(&mut table.clone(), &symbols);
    // 16 bits a symbol, plus the per-step rounding of at most
    // -log2(1 - 2^16/2^24) bits (see coder_bounds.rs), plus the flush byte.
    let bound = (symbols.len() as f64 * (16.0 - (1.0 - 2f64.powi(-8)).log2()) + 8.0) / 8.0;
    assert!((bytes.len() as f64) <= bound, "{} > {bound}", bytes.len());
    assert!(bytes.len() >= 2 * symbols.len() - 4);
    assert_eq!(
        decode_all(&mut table.clone(), &bytes, symbols.len()),
        symbols
    );
}

#[test]
fn alphabet_of_65536_adaptive_with_escape() {
    let model = StepwiseModel::new(65_536).unwrap();
    assert!(model.uses_escape());
    let mut rng = SplitMix64::new(0xED6E_0002);
    // Every symbol at least once, some many times, both ends of the alphabet.
    let mut symbols: Vec<u32> = (0..65_536).collect();
    symbols.extend((0..50_000).map(|_| rng.below_u32(64) * 1021 % 65_536));
    symbols.extend([65_535, 0, 65_535]);
    let bytes = encode_all(&mut model.clone(), &symbols);
    assert_eq!(
        decode_all(&mut model.clone(), &bytes, symbols.len()),
        symbols
    );
}

/// An escape model with increment 1 reaches a total of exactly 2^16: a new
/// symbol adds 2 (itself and the escape) when the total is 2^16 - 2.
#[test]
fn adaptive_total_of_exactly_2_16() {
    let mut p = StepwiseParams::default();
    p.increment = 1;
    p.limit = 1 << 16;
    p.escape = Some(true);
    let fresh = StepwiseModel::with_params(65_536, p).unwrap();
    // 1 (escape) + 2 (symbol 0) + 1 (repeat) = 4, then 32,766 new symbols.
    let mut symbols = vec![0u32, 0];
    symbols.extend(1..=32_766);
    symbols.extend([0, 7, 32_766, 40_000, 65_535]);
    let mut model = fresh.clone();
    let mut enc = Encoder::new();
    let mut hit = false;
    for &s in &symbols {
        hit |= model.total() == 1 << 16;
        enc.encode(&mut model, s).unwrap();
        assert!(model.total() <= 1 << 16);
    }
    assert!(hit, "the total never reached 2^16");
    let bytes = enc.finish().unwrap();
    assert_eq!(
        decode_all(&mut fresh.clone(), &bytes, symbols.len()),
        symbols
    );
}

/// Raw spans out of a total of exactly 2^16, including the top symbol.
#[test]
fn raw_total_of_exactly_2_16() {
    let mut rng = SplitMix64::new(0xED6E_0003);
    let spans: Vec<Span> = (0..20_000)
        .map(|_| match rng.below(3) {
            0 => Span::new(65_535, 1),
            1 => Span::new(0, 1),
            _ => {
                let cum = rng.below_u32(65_536);
                Span::new(cum, 1 + rng.below_u32(65_536 - cum))
            }
        })
        .collect();
    let mut enc = Encoder::new();
    for &s in &spans {
        enc.encode_span(s, 1 << 16).unwrap();
    }
    let bytes = enc.finish().unwrap();
    let mut dec = Decoder::new(&bytes).unwrap();
    for &s in &spans {
        let t = dec.target(1 << 16);
        assert!(s.cum <= t && t < s.cum + s.freq);
        dec.consume(s, 1 << 16).unwrap();
    }
    dec.finish().unwrap();
}

/// Steers the encoder so that its interval keeps straddling the point `p`
/// (`p / 2^frame_p`, strictly inside the interval): each step codes, out of
/// 2^16 slots of frequency 1, the slot holding `p`. The low end then reads
/// `…(x-1) FF FF FF…` below the boundary `p = …x 00 00…`, so the encoder must
/// hold back one more `0xFF` byte for every shifted byte until it knows
/// whether a carry comes.
fn straddle(
    enc: &mut Encoder,
    reference: &mut FastReference,
    spans: &mut Vec<Span>,
    p: &Nat,
    frame_p: u32,
    steps: usize,
) {
    for _ in 0..steps {
        let here = p.shl(reference.frame() - frame_p);
        let offset = here
            .checked_sub(reference.low())
            .expect("p stays above low");
        let r = u64::from(reference.range() >> 16);
        let t = (offset.to_u64().expect("p stays inside the interval") / r).min(65_535) as u32;
        let span = Span::new(t, 1);
        enc.encode_span(span, 1 << 16).unwrap();
        reference.code(span, 1 << 16);
        spans.push(span);
    }
}

/// A point strictly inside the current interval that ends in zero bytes:
/// the first multiple of `2^(frame - 8·(shifts + 2))` above `low`.
fn boundary_point(reference: &FastReference) -> (Nat, u32) {
    let unit = reference.frame() - 8 * (reference.shifts() + 2);
    let p = reference.low().shr(unit).add_u64(1).shl(unit);
    assert!(p > *reference.low() && p < reference.low().add_u64(reference.range().into()));
    (p, reference.frame())
}

fn random_spans(
    enc: &mut Encoder,
    reference: &mut FastReference,
    spans: &mut Vec<Span>,
    rng: &mut SplitMix64,
    n: usize,
) {
    for _ in 0..n {
        let cum = rng.below_u32(65_536);
        let span = Span::new(cum, 1 + rng.below_u32((65_536 - cum).min(300)));
        enc.encode_span(span, 1 << 16).unwrap();
        reference.code(span, 1 << 16);
        spans.push(span);
    }
}

fn decode_spans(bytes: &[u8], spans: &[Span]) {
    let mut dec = Decoder::new(bytes).unwrap();
    for (i, &s) in spans.iter().enumerate() {
        let t = dec.target(1 << 16);
        assert!(
            s.cum <= t && t < s.cum + s.freq,
            "step {i}: target {t}, span {s:?}"
        );
        dec.consume(s, 1 << 16).unwrap();
    }
    dec.finish().unwrap();
}

/// How the straddling run ends.
#[derive(Debug, Clone, Copy)]
enum RunEnd {
    /// The stream finishes while the run is pending: the flush picks the
    /// boundary itself, a carry turns the run into zeros.
    Flush,
    /// The next step takes the lowest slot: no carry, the run is released
    /// as `0xFF` bytes.
    Below,
    /// The next step takes the top slot: the interval moves above the
    /// boundary and the carry turns the run into zeros mid-stream.
    Above,
}

fn carry_chain(end: RunEnd, run_steps: usize) {
    let mut rng = SplitMix64::new(0xED6E_0004);
    let mut enc = Encoder::new();
    let mut reference = FastReference::new();
    let mut spans = Vec::new();
    random_spans(&mut enc, &mut reference, &mut spans, &mut rng, 50);
    let (p, frame_p) = boundary_point(&reference);
    // The first steps settle the bytes above the boundary's last non-zero
    // one; from then on every shifted byte is held back.
    straddle(&mut enc, &mut reference, &mut spans, &p, frame_p, 3);
    let written = enc.bytes_written();
    straddle(&mut enc, &mut reference, &mut spans, &p, frame_p, run_steps);
    assert_eq!(
        enc.bytes_written(),
        written,
        "bytes were released during the run"
    );
    // Each step shifts two bytes (2^16 slots of frequency 1).
    assert!(enc.len_estimate() >= written + 2 * run_steps as u64);
    match end {
        RunEnd::Flush => {}
        RunEnd::Below | RunEnd::Above => {
            let span = match end {
                RunEnd::Below => Span::new(0, 1),
                _ => Span::new(65_535, 1),
            };
            enc.encode_span(span, 1 << 16).unwrap();
            reference.code(span, 1 << 16);
            spans.push(span);
            random_spans(&mut enc, &mut reference, &mut spans, &mut rng, 50);
        }
    }
    let bytes = enc.finish().unwrap();
    assert!(reference.holds(&bytes), "output outside the exact interval");
    let (byte, what) = match end {
        RunEnd::Below => (0xFF, "0xFF"),
        _ => (0x00, "0x00"),
    };
    let run = longest_run(&bytes, byte);
    assert!(
        run >= 2 * run_steps - 2,
        "{end:?}: longest {what} run is {run}"
    );
    decode_spans(&bytes, &spans);
}

#[test]
fn carry_chain_resolved_by_the_flush() {
    carry_chain(RunEnd::Flush, 3000);
}

#[test]
fn pending_run_released_without_carry() {
    carry_chain(RunEnd::Below, 3000);
}

#[test]
fn carry_chain_resolved_mid_stream() {
    carry_chain(RunEnd::Above, 3000);
}

/// A writer that takes at most one byte per call and sometimes reports
/// `Interrupted` (which `write_all` must retry).
struct Trickle {
    out: Vec<u8>,
    calls: u64,
}

impl Write for Trickle {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.calls += 1;
        if self.calls.is_multiple_of(3) {
            return Err(io::Error::new(io::ErrorKind::Interrupted, "try again"));
        }
        match buf.first() {
            Some(&b) => {
                self.out.push(b);
                Ok(1)
            }
            None => Ok(0),
        }
    }
    fn flush(&mut self) -> io::Result<()> {
        Ok(())
    }
}

/// A reader that hands out one byte per call and sometimes `Interrupted`.
struct Dribble<'a> {
    bytes: &'a [u8],
    calls: u64,
}

impl Read for Dribble<'_> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        self.calls += 1;
        if self.calls.is_multiple_of(4) {
            return Err(io::Error::new(io::ErrorKind::Interrupted, "try again"));
        }
        match (self.bytes.split_first(), buf.first_mut()) {
            (Some((&b, rest)), Some(slot)) => {
                *slot = b;
                self.bytes = rest;
                Ok(1)
            }
            _ => Ok(0),
        }
    }
}

/// A reader that fails after `ok` bytes.
struct Failing<'a> {
    bytes: &'a [u8],
    ok: usize,
}

impl Read for Failing<'_> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        if self.ok == 0 {
            return Err(io::Error::new(io::ErrorKind::ConnectionReset, "link lost"));
        }
        let n = buf.len().min(self.ok).min(self.bytes.len());
        buf[..n].copy_from_slice(&self.bytes[..n]);
        self.bytes = &self.bytes[n..];
        self.ok -= n;
        Ok(n)
    }
}

fn io_test_symbols() -> Vec<u32> {
    let mut rng = SplitMix64::new(0xED6E_0005);
    (0..60_000)
        .map(|_| {
            let spread = 1 + rng.below_u32(256);
            rng.below_u32(spread)
        })
        .collect()
}

#[test]
fn io_sink_and_source_match_the_in_memory_path() {
    let symbols = io_test_symbols();
    let fresh = StepwiseModel::new(256).unwrap();
    let expected = encode_all(&mut fresh.clone(), &symbols);

    let mut model = fresh.clone();
    let mut enc = Encoder::with_sink(IoSink::new(Trickle {
        out: Vec::new(),
        calls: 0,
    }));
    for &s in &symbols {
        enc.encode(&mut model, s).unwrap();
    }
    assert!(enc.bytes_written() <= expected.len() as u64);
    let written = enc.finish().unwrap().into_inner().unwrap().out;
    assert_eq!(written, expected);

    let mut model = fresh.clone();
    let mut dec = Decoder::with_source(IoSource::new(Dribble {
        bytes: &expected,
        calls: 0,
    }))
    .unwrap();
    for &s in &symbols {
        assert_eq!(dec.decode(&mut model).unwrap(), s);
    }
    assert_eq!(dec.bytes_read(), expected.len() as u64);
    dec.finish().unwrap();
}

#[test]
fn io_errors_are_reported_not_panicked() {
    let symbols = io_test_symbols();
    let fresh = StepwiseModel::new(256).unwrap();
    let bytes = encode_all(&mut fresh.clone(), &symbols);
    for ok in [0usize, 3, 100, bytes.len() / 2] {
        let mut model = fresh.clone();
        let failing = Failing { bytes: &bytes, ok };
        let err = match Decoder::with_source(IoSource::new(failing)) {
            Err(e) => e,
            Ok(mut dec) => (0..symbols.len())
                .find_map(|_| dec.decode(&mut model).err())
                .expect("the reader fails before the end"),
        };
        match err.kind() {
            ErrorKind::Io(e) => assert_eq!(e.kind(), io::ErrorKind::ConnectionReset),
            other => panic!("expected an I/O error, got {other:?}"),
        }
    }

    struct Broken;
    impl Write for Broken {
        fn write(&mut self, _: &[u8]) -> io::Result<usize> {
            Err(io::Error::new(io::ErrorKind::BrokenPipe, "radio down"))
        }
        fn flush(&mut self) -> io::Result<()> {
            Ok(())
        }
    }
    let mut model = fresh.clone();
    let mut enc = Encoder::with_sink(IoSink::new(Broken));
    let failed = symbols
        .iter()
        .find_map(|&s| enc.encode(&mut model, s).err())
        .expect("the sink fails once its buffer is written out");
    assert!(matches!(failed.kind(), ErrorKind::Io(e) if e.kind() == io::ErrorKind::BrokenPipe));
}
