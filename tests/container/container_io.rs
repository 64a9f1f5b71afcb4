//! Misbehaving readers and writers: short writes, zero-length writes,
//! failures mid-stream, one-byte reads, `Interrupted`. Errors must surface
//! and nothing may panic.
#![cfg(feature = "std")]

use std::io::{self, Read, Write};

use subrange::preset::Preset;
use subrange::stream::DecodeOptions;
use subrange::{compress, Compressor, Decompressor, Options};

fn opts(preset: Preset) -> Options {
    let mut o = Options::new();
    o.preset(preset).threads(1);
    o.block_size(700).unwrap();
    o
}

fn data() -> Vec<u8> {
    let mut d = subrange::corpus::gauge_csv(21, 4000);
    d.extend(subrange::corpus::random(22, 800));
    d
}

/// Accepts at most `max` bytes per call and reports `Interrupted` on every
/// third call.
struct ShortWriter {
    out: Vec<u8>,
    max: usize,
    calls: usize,
}

impl Write for ShortWriter {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.calls += 1;
        if self.calls.is_multiple_of(3) {
            return Err(io::Error::from(io::ErrorKind::Interrupted));
        }
        let n = buf.len().min(self.max);
        self.out.extend_from_slice(&buf[..n]);
        Ok(n)
    }
    fn flush(&mut self) -> io::Result<()> {
        Ok(())
    }
}

/// Fails (with `kind`, or by accepting nothing) once `budget` bytes have
/// been written.
struct FailingWriter {
    written: usize,
    budget: usize,
    zero: bool,
}

impl Write for FailingWriter {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        if self.written >= self.budget {
            if self.zero {
                return Ok(0);
            }
            return Err(io::Error::new(io::ErrorKind::BrokenPipe, "radio link lost"));
        }
        let n = buf.len().min(self.budget - self.written);
        self.written += n;
        Ok(n)
    }
    fn flush(&mut self) -> io::Result<()> {
        Ok(())
    }
}

/// Hands out one byte per call, `Interrupted` on every other call, and
/// fails after `fail_at` bytes if set.
struct TrickleReader<'a> {
    data: &'a [u8],
    pos: usize,
    calls: usize,
    fail_at: Option<usize>,
}

impl Read for TrickleReader<'_> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        self.calls += 1;
        if self.calls.is_multiple_of(2) {
            return Err(io::Error::from(io::ErrorKind::Interrupted));
        }
        if Some(self.pos) == self.fail_at {
            return Err(io::Error::new(
                io::ErrorKind::ConnectionReset,
                "gauge offline",
            ));
        }
        if buf.is_empty() || self.pos == self.data.len() {
            return Ok(0);
        }
        buf[0] = self.data[self.pos];
        self.pos += 1;
        Ok(1)
    }
}

#[test]
fn short_and_interrupted_writes_still_give_the_same_container() {
    let data = data();
    for preset in Preset::all() {
        let expected = compress(&data, &opts(preset)).unwrap();
        for max in [1, 2, 7, 64] {
            let w = ShortWriter {
                out: Vec::new(),
                max,
                calls: 0,
            };
            let mut c = Compressor::new(w, &opts(preset));
            for chunk in data.chunks(33) {
                c.write_all(chunk).unwrap();
                c.write_all(&[]).unwrap();
            }
            assert_eq!(c.finish().unwrap().out, expected);
        }
    }
}

#[test]
fn writer_failures_surface_and_stay_failed() {
    let data = data();
    let full = compress(&data, &opts(Preset::default())).unwrap().len();
    for budget in [0, 1, 5, 20, 300, full - 1] {
        for zero in [false, true] {
            let w = FailingWriter {
                written: 0,
                budget,
                zero,
            };
            let mut c = Compressor::new(w, &opts(Preset::default()));
            let mut failed = c.write_all(&data).is_err();
            if !failed {
                let e = c.try_finish().unwrap_err();
                let want = if zero {
                    io::ErrorKind::WriteZero
                } else {
                    io::ErrorKind::BrokenPipe
                };
                assert_eq!(e.kind(), want, "budget {budget}");
                failed = true;
            }
            assert!(failed);
            // Everything after a failure fails too, and drop does not panic.
            assert!(c.write(b"more").is_err());
            assert!(c.try_finish().is_err());
            assert!(c.total_out() <= budget as u64);
            drop(c);
        }
    }
    // finish(self) reports the failure as well.
    let w = FailingWriter {
        written: 0,
        budget: 10,
        zero: false,
    };
    let c = Compressor::new(w, &opts(Preset::default()));
    assert!(c.finish().is_err());
}

#[test]
fn one_byte_interrupted_reads_decode() {
    let data = data();
    for preset in Preset::all() {
        let packed = compress(&data, &opts(preset)).unwrap();
        let r = TrickleReader {
            data: &packed,
            pos: 0,
            calls: 0,
            fail_at: None,
        };
        let mut d = Decompressor::new(r);
        let mut back = Vec::new();
        // Read in odd sizes, retrying nothing: Interrupted never reaches us.
        let mut buf = [0u8; 13];
        loop {
            let n = d.read(&mut buf).unwrap();
            if n == 0 {
                break;
            }
            back.extend_from_slice(&buf[..n]);
        }
        assert_eq!(back, data);
    }
}

#[test]
fn reader_failures_surface_with_their_kind() {
    let data = data();
    let packed = compress(&data, &opts(Preset::default())).unwrap();
    for fail_at in [0, 3, 9, 40, packed.len() / 2, packed.len() - 1] {
        let r = TrickleReader {
            data: &packed,
            pos: 0,
            calls: 0,
            fail_at: Some(fail_at),
        };
        let mut d = Decompressor::new(r);
        let mut back = Vec::new();
        let e = d.read_to_end(&mut back).unwrap_err();
        assert_eq!(
            e.kind(),
            io::ErrorKind::ConnectionReset,
            "fail at {fail_at}"
        );
        // What came out before the failure is a prefix of the data.
        assert!(data.starts_with(&back));
        // Later reads keep failing instead of inventing an end.
        assert!(d.read(&mut [0u8; 4]).is_err());
    }
    // The one-shot reader-to-writer helpers report it as an I/O error.
    let r = TrickleReader {
        data: &packed,
        pos: 0,
        calls: 0,
        fail_at: Some(30),
    };
    let err = subrange::stream::decompress_reader(r, io::sink(), &Default::default()).unwrap_err();
    assert!(matches!(err.kind(), subrange::ErrorKind::Io(_)), "{err}");
    let r = TrickleReader {
        data: &data,
        pos: 0,
        calls: 0,
        fail_at: Some(30),
    };
    let err = subrange::compress_reader(r, io::sink(), &Options::default()).unwrap_err();
    assert!(matches!(err.kind(), subrange::ErrorKind::Io(_)), "{err}");
}

/// The reader-to-writer pipeline's settings: `threads` coder threads and
/// `in_flight` blocks (0: the default, one more than the threads).
fn piped(preset: Preset, threads: usize, in_flight: usize) -> Options {
    let mut o = opts(preset);
    o.threads(threads).blocks_in_flight(in_flight);
    o
}

fn trickle(data: &[u8], fail_at: Option<usize>) -> TrickleReader<'_> {
    TrickleReader {
        data,
        pos: 0,
        calls: 0,
        fail_at,
    }
}

/// The kind of the I/O error a crate error carries, if it is one.
fn io_kind(err: &subrange::Error) -> Option<io::ErrorKind> {
    match err.kind() {
        subrange::ErrorKind::Io(e) => Some(e.kind()),
        _ => None,
    }
}

#[test]
fn pipelined_output_is_the_same_whatever_threads_and_blocks_in_flight() {
    let data = data();
    for preset in Preset::all() {
        let expected = compress(&data, &opts(preset)).unwrap();
        for (threads, in_flight) in [(1, 0), (1, 1), (2, 0), (2, 2), (3, 7), (4, 1)] {
            let mut w = ShortWriter {
                out: Vec::new(),
                max: 13,
                calls: 0,
            };
            let o = piped(preset, threads, in_flight);
            let totals = subrange::compress_reader(trickle(&data, None), &mut w, &o).unwrap();
            assert_eq!(w.out, expected, "{preset}, {threads} threads, {in_flight}");
            assert_eq!(totals.read, data.len() as u64);
            assert_eq!(totals.written, expected.len() as u64);
            let mut d = DecodeOptions::new();
            d.threads(threads);
            let mut back = ShortWriter {
                out: Vec::new(),
                max: 29,
                calls: 0,
            };
            let totals =
                subrange::stream::decompress_reader(trickle(&expected, None), &mut back, &d)
                    .unwrap();
            assert_eq!(back.out, data, "{preset}, {threads} threads");
            assert_eq!(totals.read, expected.len() as u64);
            assert_eq!(totals.written, data.len() as u64);
        }
    }
    // Empty input: a container with no block, whatever the threads.
    for threads in [1, 2] {
        let mut out = Vec::new();
        subrange::compress_reader(&[][..], &mut out, &piped(Preset::default(), threads, 0))
            .unwrap();
        assert_eq!(out, compress(&[], &opts(Preset::default())).unwrap());
    }
}

#[test]
fn pipelined_compress_stops_at_reader_and_writer_failures() {
    let data = data();
    let full = compress(&data, &opts(Preset::default())).unwrap().len();
    for threads in [1, 2, 4] {
        // Failures on the reading side, at and around block boundaries (700).
        for fail_at in [0, 1, 699, 700, 701, 2100, data.len() - 1] {
            let mut w = Vec::new();
            let o = piped(Preset::default(), threads, 0);
            let err =
                subrange::compress_reader(trickle(&data, Some(fail_at)), &mut w, &o).unwrap_err();
            assert_eq!(
                io_kind(&err),
                Some(io::ErrorKind::ConnectionReset),
                "{threads} threads, fail at {fail_at}: {err}"
            );
            // Never an end record after a failed read: the output cannot
            // pass for complete.
            assert!(subrange::decompress(&w).is_err(), "fail at {fail_at}");
        }
        // Failures on the writing side.
        for budget in [0, 1, 5, 20, 700, 1500, full - 1] {
            for zero in [false, true] {
                let w = FailingWriter {
                    written: 0,
                    budget,
                    zero,
                };
                let o = piped(Preset::default(), threads, 0);
                let err = subrange::compress_reader(trickle(&data, None), w, &o).unwrap_err();
                let want = if zero {
                    io::ErrorKind::WriteZero
                } else {
                    io::ErrorKind::BrokenPipe
                };
                assert_eq!(
                    io_kind(&err),
                    Some(want),
                    "{threads} threads, {budget}: {err}"
                );
            }
        }
    }
}

/// Keeps what it is given and fails once `budget` bytes were written.
struct KeepingFailingWriter {
    out: Vec<u8>,
    budget: usize,
}

impl Write for KeepingFailingWriter {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        if self.out.len() >= self.budget {
            return Err(io::Error::new(io::ErrorKind::BrokenPipe, "radio link lost"));
        }
        let n = buf.len().min(self.budget - self.out.len());
        self.out.extend_from_slice(&buf[..n]);
        Ok(n)
    }
    fn flush(&mut self) -> io::Result<()> {
        Ok(())
    }
}

#[test]
fn pipelined_decompress_stops_at_reader_writer_and_block_failures() {
    let data = data();
    let packed = compress(&data, &opts(Preset::default())).unwrap();
    for threads in [1, 2, 4] {
        let mut d = DecodeOptions::new();
        d.threads(threads);
        for fail_at in [
            0,
            3,
            40,
            packed.len() / 3,
            packed.len() / 2,
            packed.len() - 1,
        ] {
            let mut back = Vec::new();
            let err =
                subrange::stream::decompress_reader(trickle(&packed, Some(fail_at)), &mut back, &d)
                    .unwrap_err();
            assert_eq!(
                io_kind(&err),
                Some(io::ErrorKind::ConnectionReset),
                "{threads} threads, fail at {fail_at}: {err}"
            );
            assert!(data.starts_with(&back), "fail at {fail_at}");
        }
        for budget in [0, 1, 699, 700, 2500, data.len() - 1] {
            let mut w = KeepingFailingWriter {
                out: Vec::new(),
                budget,
            };
            let err = subrange::stream::decompress_reader(trickle(&packed, None), &mut w, &d)
                .unwrap_err();
            assert_eq!(io_kind(&err), Some(io::ErrorKind::BrokenPipe), "{budget}");
            assert_eq!(w.out, data[..budget]);
        }
        // Damage in the middle: the same first error as the one-shot
        // decoder, after every block before it was written.
        for at in [packed.len() / 3, packed.len() / 2, packed.len() - 30] {
            let mut bad = packed.clone();
            bad[at] ^= 0x20;
            let want = subrange::decompress(&bad).unwrap_err();
            let mut serial = Vec::new();
            let _ = Decompressor::new(&bad[..]).read_to_end(&mut serial);
            let mut back = Vec::new();
            let err = subrange::stream::decompress_reader(&bad[..], &mut back, &d).unwrap_err();
            assert_eq!(err.to_string(), want.to_string(), "damage at {at}");
            assert_eq!(back, serial, "damage at {at}");
        }
    }
}
