//! Reader-to-writer coding with reading, coding and writing overlapped.
//!
//! [`compress_reader`](super::compress_reader) and
//! [`decompress_reader`](super::decompress_reader) run here. The caller's
//! thread does all the I/O — it reads the next blocks and writes the
//! finished ones — while coder threads code the blocks in between, so a
//! one-thread run is bound by the coder rather than by reading and writing
//! one after the other. Blocks go through an [`Ordered`] queue: jobs are
//! numbered as they are submitted and their results taken back in that
//! order, so the output is byte-identical whatever the thread count.
//!
//! Invariants: at most `depth` blocks are in flight (read and not yet
//! written), and block buffers are recycled — a block's raw bytes are read
//! straight into a buffer that already served an earlier block, with no
//! copy on the way and no zero fill. Checksums are the coder threads'
//! work: a block's CRC-32s are computed (compressing) or checked
//! (decompressing, payload and raw bytes) by the thread that codes it.
//! The reader and writer stay on the caller's thread (they need not be `Send`). An error from the reader, the
//! writer or a coder ends the run: the job queue is dropped, so coder
//! threads stop as soon as their current job is done, and the first error
//! in stream order is returned (a read error after the blocks before it
//! are written). A panic in a coder is caught there and resumed on the
//! caller's thread.

use std::collections::BTreeMap;
use std::io::{self, Read, Write};
use std::sync::mpsc::{self, Receiver, SyncSender, TryRecvError};
use std::sync::{Arc, Mutex};
use std::thread::{self, Scope};
use std::vec::Vec;

use crate::error::Result;
use crate::format::{check_payload, decode_payload, encode_block, BlockFrame, ContainerReader};
use crate::preset::Preset;
use crate::stream::engine::Engine;
use crate::stream::workers::Workers;
use crate::stream::{DecodeOptions, Options, Totals};

/// A numbered job queue over coder threads, whose results come back in
/// submission order.
struct Ordered<J, O> {
    jobs: Option<SyncSender<(u64, J)>>,
    done: Receiver<(u64, thread::Result<O>)>,
    sent: u64,
    taken: u64,
    early: BTreeMap<u64, thread::Result<O>>,
}

impl<J: Send, O: Send> Ordered<J, O> {
    /// `coders` threads (at least one) in `scope` applying `f` to jobs.
    fn spawn<'scope, F>(scope: &'scope Scope<'scope, '_>, coders: usize, depth: usize, f: F) -> Self
    where
        J: 'scope,
        O: 'scope,
        F: Fn(J) -> O + Send + Sync + 'scope,
    {
        let (jobs, queue) = mpsc::sync_channel::<(u64, J)>(depth);
        let (results, done) = mpsc::channel();
        let queue = Arc::new(Mutex::new(queue));
        let f = Arc::new(f);
        for _ in 0..coders.max(1) {
            let queue = queue.clone();
            let results = results.clone();
            let f = f.clone();
            scope.spawn(move || loop {
                let job = queue.lock().unwrap_or_else(|e| e.into_inner()).recv();
                let Ok((seq, job)) = job else { break };
                let out = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| f(job)));
                if results.send((seq, out)).is_err() {
                    break;
                }
            });
        }
        Ordered {
            jobs: Some(jobs),
            done,
            sent: 0,
            taken: 0,
            early: BTreeMap::new(),
        }
    }

    /// Jobs submitted and not yet taken back.
    fn in_flight(&self) -> usize {
        (self.sent - self.taken) as usize
    }

    fn submit(&mut self, job: J) {
        let jobs = self
            .jobs
            .as_ref()
            .expect("the queue is open while jobs are submitted");
        // The coders outlive the queue's sender, so a send cannot fail.
        let _ = jobs.send((self.sent, job));
        self.sent += 1;
    }

    /// The next result in order: waiting for it when `wait`, else only if
    /// it is there. `None` when nothing is in flight (or, without `wait`,
    /// the next one is not done).
    fn next(&mut self, wait: bool) -> Option<O> {
        if self.taken == self.sent {
            return None;
        }
        loop {
            if let Some(r) = self.early.remove(&self.taken) {
                self.taken += 1;
                return Some(r.unwrap_or_else(|p| std::panic::resume_unwind(p)));
            }
            let (seq, r) = if wait {
                self.done
                    .recv()
                    .expect("coder threads run while jobs are in flight")
            } else {
                match self.done.try_recv() {
                    Ok(got) => got,
                    Err(TryRecvError::Empty) => return None,
                    Err(TryRecvError::Disconnected) => {
                        unreachable!("coder threads run while jobs are in flight")
                    }
                }
            };
            self.early.insert(seq, r);
        }
    }
}

/// Reads up to `len` bytes into `buf` (its capacity kept): fewer only at
/// the end of input.
///
/// The buffer is read into in place with [`Read::read`], so only bytes it
/// never held are zeroed: a recycled buffer that held a whole block is
/// filled again with no zero fill whatever the reader (with a reader that
/// only implements `read`, `read_to_end` would zero the spare capacity on
/// every call).
fn read_block<R: Read>(reader: &mut R, buf: &mut Vec<u8>, len: usize) -> io::Result<()> {
    // The initialised part grows with what arrives (doubling from 64 KiB),
    // so a short input does not touch a whole block's pages.
    let mut got = 0;
    while got < len {
        if buf.len() == got {
            let grown = got.saturating_mul(2).max(64 << 10).min(len);
            buf.resize(grown, 0);
        }
        let end = buf.len().min(len);
        match reader.read(&mut buf[got..end]) {
            Ok(0) => break,
            Ok(n) => got += n,
            Err(e) if e.kind() == io::ErrorKind::Interrupted => {}
            Err(e) => {
                buf.truncate(got);
                return Err(e);
            }
        }
    }
    buf.truncate(got);
    Ok(())
}

/// The coder threads for `depth` blocks in flight: none when there is no
/// room for a block beyond the one being coded.
fn coders(threads: usize, depth: usize) -> usize {
    Workers::new(threads).count().min(depth.saturating_sub(1))
}

/// Compresses `reader` to `writer` (see [`super::compress_reader`]).
pub(crate) fn compress<R: Read, W: Write>(
    mut reader: R,
    writer: W,
    options: &Options,
) -> Result<Totals> {
    options.check()?;
    let depth = options.get_blocks_in_flight().max(1);
    let block_size = usize::try_from(options.get_block_size()).unwrap_or(usize::MAX);
    let preset = *options.get_preset();
    let mut engine = Engine::new(writer, options);
    let coders = coders(options.get_threads(), depth);
    if coders == 0 {
        let mut raw = Vec::with_capacity(block_size);
        loop {
            read_block(&mut reader, &mut raw, block_size)?;
            if raw.is_empty() {
                break;
            }
            let block = encode_block(&preset, engine.blocks(), &raw)?;
            engine.put_block(&raw, block)?;
            if raw.len() < block_size {
                break;
            }
        }
    } else {
        thread::scope(|scope| -> Result<()> {
            let mut pipe =
                Ordered::spawn(scope, coders, depth, move |(index, raw): (u64, Vec<u8>)| {
                    let block = encode_block(&preset, index, &raw);
                    (raw, block)
                });
            let mut spare: Vec<Vec<u8>> = Vec::new();
            let mut index = 0u64;
            let mut ended = false;
            loop {
                while !ended && pipe.in_flight() < depth {
                    let mut raw = spare
                        .pop()
                        .unwrap_or_else(|| Vec::with_capacity(block_size));
                    read_block(&mut reader, &mut raw, block_size)?;
                    ended = raw.len() < block_size;
                    if raw.is_empty() {
                        break;
                    }
                    pipe.submit((index, raw));
                    index += 1;
                    while let Some((raw, block)) = pipe.next(false) {
                        engine.put_block(&raw, block?)?;
                        spare.push(raw);
                    }
                }
                let Some((raw, block)) = pipe.next(true) else {
                    break;
                };
                engine.put_block(&raw, block?)?;
                spare.push(raw);
            }
            Ok(())
        })?;
    }
    engine.finish()?;
    Ok(Totals {
        read: engine.total_in(),
        written: engine.total_out(),
    })
}

/// A block to decode: its preset, frame, payload and a buffer for its bytes.
type DecodeJob = (Preset, BlockFrame, Vec<u8>, Vec<u8>);

/// A decoded block: its payload and decoded buffers, and the outcome.
type Decoded = (Vec<u8>, Vec<u8>, Result<()>);

/// Decompresses `reader` to `writer` (see [`super::decompress_reader`]).
pub(crate) fn decompress<R: Read, W: Write>(
    reader: R,
    mut writer: W,
    options: &DecodeOptions,
) -> Result<Totals> {
    let limits = *options.get_limits();
    let mut reader = ContainerReader::new(reader, limits, options.get_trailing());
    let threads = Workers::new(options.get_threads()).count();
    let mut written = 0u64;
    // Blocks in flight: one per thread and one being read or written, as
    // many as the memory limit holds.
    let depth_for = |preset: &Preset, block_size: u64| {
        let need = preset.memory_needed(block_size).max(1);
        let fit = usize::try_from(limits.memory_limit() / need).unwrap_or(usize::MAX);
        (threads + 1).min(fit).max(1)
    };
    // A header that fails stays failed: its error is the run's.
    let first = reader
        .header()
        .map(|h| depth_for(&h.preset, h.block_size))?;
    let coders = self::coders(options.get_threads(), first);
    // The payload's checksum is checked here, on the thread decoding it.
    let decode = |(preset, frame, mut payload, mut out): DecodeJob| -> Decoded {
        let r = check_payload(&frame, &payload)
            .and_then(|()| decode_payload(&preset, &frame, &mut payload, &mut out));
        (payload, out, r)
    };
    let mut write = |out: &[u8]| -> Result<()> {
        writer.write_all(out)?;
        written += out.len() as u64;
        Ok(())
    };
    if coders == 0 {
        let (mut payload, mut out) = (Vec::new(), Vec::new());
        while let Some(frame) = reader.next_block_unchecked(&mut payload)? {
            let preset = reader.header()?.preset;
            let (p, o, r) = decode((preset, frame, payload, out));
            r?;
            write(&o)?;
            (payload, out) = (p, o);
        }
    } else {
        thread::scope(|scope| -> Result<()> {
            let mut pipe = Ordered::spawn(scope, coders, threads + 1, decode);
            let mut spare: Vec<(Vec<u8>, Vec<u8>)> = Vec::new();
            let mut stop = None;
            let mut ended = false;
            let mut put = |pipe: &mut Ordered<DecodeJob, Decoded>,
                           spare: &mut Vec<(Vec<u8>, Vec<u8>)>,
                           wait: bool|
             -> Result<bool> {
                let Some((payload, out, r)) = pipe.next(wait) else {
                    return Ok(false);
                };
                r?;
                write(&out)?;
                spare.push((payload, out));
                Ok(true)
            };
            loop {
                while !ended {
                    let depth = match reader.header() {
                        Ok(h) => depth_for(&h.preset, h.block_size),
                        Err(e) => {
                            stop = Some(e);
                            ended = true;
                            break;
                        }
                    };
                    if pipe.in_flight() >= depth {
                        break;
                    }
                    let (mut payload, out) = spare.pop().unwrap_or_default();
                    match reader.next_block_unchecked(&mut payload) {
                        Ok(Some(frame)) => {
                            let preset = reader.header()?.preset;
                            pipe.submit((preset, frame, payload, out));
                        }
                        Ok(None) => ended = true,
                        Err(e) => {
                            stop = Some(e);
                            ended = true;
                        }
                    }
                    while put(&mut pipe, &mut spare, false)? {}
                }
                if !put(&mut pipe, &mut spare, true)? {
                    break;
                }
            }
            stop.map_or(Ok(()), Err)
        })?;
    }
    writer.flush()?;
    Ok(Totals {
        read: reader.input().offset(),
        written,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A reader handing out at most `step` bytes a call, with an
    /// `Interrupted` before every other call.
    struct Dribble<'a> {
        data: &'a [u8],
        step: usize,
        calls: usize,
    }

    impl Read for Dribble<'_> {
        fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
            self.calls += 1;
            if self.calls % 2 == 1 {
                return Err(io::ErrorKind::Interrupted.into());
            }
            let n = buf.len().min(self.step).min(self.data.len());
            buf[..n].copy_from_slice(&self.data[..n]);
            self.data = &self.data[n..];
            Ok(n)
        }
    }

    #[test]
    fn blocks_are_read_whole_into_recycled_buffers() {
        let data: Vec<u8> = (0..300_000u32).map(|i| (i * 7 % 251) as u8).collect();
        let mut reader = Dribble {
            data: &data,
            step: 40_000,
            calls: 0,
        };
        let len = 200_000;
        let mut buf = Vec::with_capacity(len);
        read_block(&mut reader, &mut buf, len).unwrap();
        assert_eq!(buf, data[..len]);
        assert_eq!(buf.capacity(), len);
        // The same buffer again: the short last block, then nothing.
        read_block(&mut reader, &mut buf, len).unwrap();
        assert_eq!(buf, data[len..]);
        read_block(&mut reader, &mut buf, len).unwrap();
        assert!(buf.is_empty());
        assert_eq!(buf.capacity(), len);
    }

    #[test]
    fn a_read_error_keeps_what_was_read() {
        let mut reader = Read::chain(&[5u8; 1000][..], FailAfter);
        let mut buf = Vec::new();
        let err = read_block(&mut reader, &mut buf, 4096).unwrap_err();
        assert_eq!(err.kind(), io::ErrorKind::BrokenPipe);
        assert_eq!(buf, [5u8; 1000]);
    }

    struct FailAfter;

    impl Read for FailAfter {
        fn read(&mut self, _: &mut [u8]) -> io::Result<usize> {
            Err(io::ErrorKind::BrokenPipe.into())
        }
    }
}
