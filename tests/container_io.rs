//! Misbehaving readers and writers: short writes, zero-length writes,
//! failures mid-stream, one-byte reads, `Interrupted`. Errors must surface
//! and nothing may panic.
#![cfg(feature = "std")]

use std::io::{self, Read, Write};

use subrange::preset::Preset;
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
