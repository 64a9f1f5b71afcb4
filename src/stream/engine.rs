//! The compressing engine shared by [`Compressor`](super::Compressor),
//! [`compress`](super::compress) and [`compress_reader`](super::compress_reader)
//! (which codes its blocks in the pipeline of `super::pipeline` and hands
//! them to [`Engine::put_block`] to be written).
//!
//! Raw bytes collect in a buffer of `batch` blocks (the blocks in flight of
//! [`Options::get_blocks_in_flight`], by default one more than the thread
//! count); when it is full, its blocks are coded (on several threads when there are
//! several) and their records written in order. A write
//! of at least a whole batch while the buffer is empty is coded straight from
//! the caller's slice. Block boundaries fall at multiples of the block size
//! from the start of the stream whatever the writes look like, so the output
//! depends only on the bytes, the preset and the block size — not on write
//! sizes or threads — unless `flush` ends a block early.
//!
//! Unless the options say never, each block's entry (record length, raw
//! length: about four bytes) is kept for the block index written after the
//! end record.
//!
//! Invariants: memory is `batch` blocks of input plus their coded records
//! and the models coding them (within [`Options::memory_bound`]), and the
//! index entries, whatever the stream length; options the default reader
//! could not decode ([`Options::check`]) fail the first write, before
//! anything is written; the header goes out before the first record,
//! the end record after the last; after a failed write to the inner writer
//! nothing more is written (the output is already broken).

use std::io::{self, Write};
use std::vec::Vec;

use crate::format::{
    encode_block, encode_header, end_record, EncodedBlock, IndexBuilder, IndexPolicy,
};
use crate::preset::Preset;
use crate::stream::workers::Workers;
use crate::stream::Options;

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum State {
    Open,
    Finished,
    Failed,
}

#[derive(Debug)]
pub(crate) struct Engine<W: Write> {
    inner: Option<W>,
    preset: Preset,
    block_size: usize,
    workers: Workers,
    batch_bytes: usize,
    buf: Vec<u8>,
    header_written: bool,
    index_policy: IndexPolicy,
    index: Option<IndexBuilder>,
    blocks: u64,
    total_in: u64,
    total_out: u64,
    state: State,
    /// Why these options cannot be written, reported by the first write.
    refused: Option<crate::Error>,
}

fn broken() -> io::Error {
    io::Error::other("the compressor failed earlier or was finished; no more data can be written")
}

impl<W: Write> Engine<W> {
    pub(crate) fn new(inner: W, options: &Options) -> Self {
        let workers = Workers::new(options.get_threads());
        let batch = options.get_blocks_in_flight().max(1);
        // At most 64 MiB (`Options::block_size` checks it).
        let block_size = usize::try_from(options.get_block_size()).unwrap_or(usize::MAX);
        Engine {
            inner: Some(inner),
            preset: *options.get_preset(),
            block_size,
            workers,
            batch_bytes: block_size.saturating_mul(batch),
            buf: Vec::new(),
            header_written: false,
            index_policy: options.get_block_index(),
            index: (options.get_block_index() != IndexPolicy::Never)
                .then(|| IndexBuilder::new(block_size as u64)),
            blocks: 0,
            total_in: 0,
            total_out: 0,
            state: State::Open,
            refused: options.check().err(),
        }
    }

    /// Fails (for good) when the options cannot be written.
    fn admit(&mut self) -> io::Result<()> {
        match self.refused.take() {
            Some(e) => {
                self.state = State::Failed;
                Err(e.into())
            }
            None => Ok(()),
        }
    }

    pub(crate) fn get_ref(&self) -> &W {
        self.inner
            .as_ref()
            .expect("the inner writer is present until finish")
    }

    pub(crate) fn get_mut(&mut self) -> &mut W {
        self.inner
            .as_mut()
            .expect("the inner writer is present until finish")
    }

    pub(crate) fn take_inner(&mut self) -> Option<W> {
        self.inner.take()
    }

    pub(crate) fn total_in(&self) -> u64 {
        self.total_in
    }

    pub(crate) fn total_out(&self) -> u64 {
        self.total_out
    }

    pub(crate) fn is_open(&self) -> bool {
        self.state == State::Open && self.inner.is_some()
    }

    pub(crate) fn write(&mut self, data: &[u8]) -> io::Result<usize> {
        self.admit()?;
        if !self.is_open() {
            return Err(broken());
        }
        if data.is_empty() {
            return Ok(0);
        }
        if self.buf.is_empty() && data.len() >= self.batch_bytes {
            let n = data.len() / self.batch_bytes * self.batch_bytes;
            self.emit(&data[..n], self.batch_bytes)?;
            self.total_in += n as u64;
            return Ok(n);
        }
        if self.buf.capacity() == 0 {
            self.buf.reserve_exact(self.batch_bytes);
        }
        let n = data.len().min(self.batch_bytes - self.buf.len());
        self.buf.extend_from_slice(&data[..n]);
        self.total_in += n as u64;
        if self.buf.len() == self.batch_bytes {
            self.emit_buffer()?;
        }
        Ok(n)
    }

    fn emit_buffer(&mut self) -> io::Result<()> {
        let buf = core::mem::take(&mut self.buf);
        let r = self.emit(&buf, self.batch_bytes);
        self.buf = buf;
        self.buf.clear();
        r
    }

    /// Codes `raw` as consecutive blocks, `batch_bytes` at a time, and
    /// writes their records.
    fn emit(&mut self, raw: &[u8], batch_bytes: usize) -> io::Result<()> {
        for batch in raw.chunks(batch_bytes) {
            let chunks: Vec<(u64, &[u8])> = batch
                .chunks(self.block_size)
                .enumerate()
                .map(|(i, c)| (self.blocks + i as u64, c))
                .collect();
            let preset = self.preset;
            let coded: Vec<crate::Result<EncodedBlock>> = self
                .workers
                .map(chunks.clone(), |(index, c)| encode_block(&preset, index, c));
            for ((_, chunk), block) in chunks.iter().zip(coded) {
                let block = block.map_err(|e| {
                    self.state = State::Failed;
                    io::Error::from(e)
                })?;
                self.put_coded(chunk, block)?;
            }
        }
        Ok(())
    }

    /// Writes block number [`blocks`](Self::blocks), coded from `raw` by
    /// the caller, and counts `raw` as taken in.
    pub(crate) fn put_block(&mut self, raw: &[u8], block: EncodedBlock) -> io::Result<()> {
        self.admit()?;
        if !self.is_open() {
            return Err(broken());
        }
        self.put_coded(raw, block)?;
        self.total_in += raw.len() as u64;
        Ok(())
    }

    /// The blocks written so far (the index of the next one).
    pub(crate) fn blocks(&self) -> u64 {
        self.blocks
    }

    fn put_coded(&mut self, chunk: &[u8], block: EncodedBlock) -> io::Result<()> {
        self.put_header()?;
        self.put(&block.frame)?;
        let payload = block.coded.as_deref().unwrap_or(chunk);
        self.put(payload)?;
        if let Some(index) = &mut self.index {
            index.push(
                (block.frame.len() + payload.len()) as u64,
                chunk.len() as u64,
            );
        }
        self.blocks += 1;
        Ok(())
    }

    fn put_header(&mut self) -> io::Result<()> {
        if !self.header_written {
            let h = encode_header(&self.preset, self.block_size as u64);
            self.put(&h)?;
            self.header_written = true;
        }
        Ok(())
    }

    fn put(&mut self, bytes: &[u8]) -> io::Result<()> {
        let inner = self.inner.as_mut().ok_or_else(broken)?;
        match inner.write_all(bytes) {
            Ok(()) => {
                self.total_out += bytes.len() as u64;
                Ok(())
            }
            Err(e) => {
                self.state = State::Failed;
                Err(e)
            }
        }
    }

    /// Codes the buffered bytes (ending a block early) and flushes.
    pub(crate) fn flush(&mut self) -> io::Result<()> {
        self.admit()?;
        if !self.is_open() {
            return match self.state {
                State::Finished => Ok(()),
                _ => Err(broken()),
            };
        }
        if !self.buf.is_empty() {
            self.emit_buffer()?;
        }
        self.get_mut()
            .flush()
            .inspect_err(|_| self.state = State::Failed)
    }

    /// Writes what is buffered and the end record; idempotent.
    pub(crate) fn finish(&mut self) -> io::Result<()> {
        self.admit()?;
        match self.state {
            State::Finished => return Ok(()),
            State::Failed => return Err(broken()),
            State::Open => {}
        }
        if self.inner.is_none() {
            return Err(broken());
        }
        if !self.buf.is_empty() {
            self.emit_buffer()?;
        }
        self.put_header()?;
        let indexed = self.index.is_some() && self.index_policy.applies(self.blocks);
        let end_offset = self.total_out;
        let end = end_record(self.blocks, self.total_in, indexed);
        self.put(&end)?;
        if let Some(index) = self.index.take().filter(|_| indexed) {
            self.put(&index.finish(&end, end_offset))?;
        }
        self.get_mut()
            .flush()
            .inspect_err(|_| self.state = State::Failed)?;
        self.state = State::Finished;
        Ok(())
    }

    /// Codes `data` as the last bytes of the stream, all its blocks in one
    /// parallel pass (for callers that hold the whole input and output in
    /// memory anyway), then finishes.
    pub(crate) fn finish_with(&mut self, data: &[u8]) -> io::Result<()> {
        self.admit()?;
        if !self.is_open() {
            return Err(broken());
        }
        if !self.buf.is_empty() {
            self.emit_buffer()?;
        }
        if !data.is_empty() {
            self.emit(data, data.len())?;
            self.total_in += data.len() as u64;
        }
        self.finish()
    }

    pub(crate) fn is_finished(&self) -> bool {
        self.state == State::Finished
    }
}
