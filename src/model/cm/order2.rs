//! The order-2 engine: order-2 contexts that inherit from order 1.
//!
//! Each byte is coded bit by bit through the nibble trees of its order-2
//! context (the two previous bytes, 65,536 of them). A context table holds 17
//! groups of 16 packed [counters](crate::model::CountingPredictor) per
//! context: group 0 for the high nibble's 15 tree nodes, group `1 + h` for the
//! low nibble after high nibble `h`. A group is one 64-byte cache line, so a
//! byte touches two lines, and every bit costs one counter read and one
//! update: no mixing, which keeps the engine fast.
//!
//! The weakness of a plain order-2 model is the cost of learning each of its
//! many contexts from scratch. With `order1` set, a tree node seen for the
//! first time in its order-2 context is coded with the probability of the
//! same node in the order-1 context instead, and then starts from that
//! probability (the prior inheritance of PPM-style models). The order-1 table
//! is updated only on such first visits, so it learns exactly what it is used
//! for: what follows a byte in a context not seen before.
//!
//! Tables are stored as `counter ^ COUNTER_INIT`, so they start as zeroed
//! memory, and their context groups come from a [`GroupArena`]: a context
//! gets its 272 counters when the block first visits it, from a table sized
//! to the block (a block of `n` bytes visits at most `n` contexts). A short
//! block then allocates a few KiB instead of the 70 MB a direct table of all
//! 65,536 contexts takes, and a long one touches fewer pages, because the
//! contexts it visits lie side by side; the predictions are those of a
//! direct table.
//!
//! Invariants: table indices stay inside the context's 272 entries (node
//! indices are `1 ..= 15`); encoder and decoder run the same `predict` /
//! `update` sequence, so they agree on every probability.

use alloc::vec::Vec;

use crate::coder::{Decoder, Encoder, IdealCost};
use crate::error::Result;
use crate::model::arena::GroupArena;
use crate::model::bit::counter::{counter_n, counter_p16, counter_update, COUNTER_INIT};
use crate::model::cm::io::{BitIo, Coarse};
use crate::model::cm::params::{Order2Params, NODES_PER_CONTEXT};
use crate::model::cm::shrink::{code_bytes, finish_or_store};

/// Updates a counter stored as `counter ^ COUNTER_INIT` (so that zeroed
/// memory, which the allocator hands out lazily, reads as fresh counters).
#[inline]
pub(crate) fn update_stored(stored: &mut u32, bit: bool, limit: u32) {
    let mut c = *stored ^ COUNTER_INIT;
    counter_update(&mut c, bit, limit);
    *stored = c ^ COUNTER_INIT;
}

struct FastModel {
    t2: GroupArena<u32>,
    t1: GroupArena<u32>,
    order1: bool,
    limit: u32,
    c1: usize,
    c2: usize,
}

impl FastModel {
    /// A model for a block of `len` bytes: its tables hold at most `len`
    /// contexts (see [`Order2Params::memory_needed_for`]).
    fn new(params: &Order2Params, len: usize) -> Result<Self> {
        params.validate()?;
        let (t2_groups, t1_groups) = Order2Params::groups_for(len);
        Ok(FastModel {
            t2: GroupArena::new(65536, NODES_PER_CONTEXT, t2_groups),
            t1: if params.order1 {
                GroupArena::new(256, NODES_PER_CONTEXT, t1_groups)
            } else {
                GroupArena::new(0, 0, 0)
            },
            order1: params.order1,
            limit: u32::from(params.limit),
            c1: 0,
            c2: 0,
        })
    }

    /// Codes one nibble's four bits through the groups at `g2` / `g1`.
    ///
    /// Both children of each node are read before its bit is coded, so a
    /// decoder, which learns the bit only from the coder, does not wait for
    /// the next counter's load after it (the children sit in the same cache
    /// line; the point is the dependency, not the miss).
    #[inline(always)]
    fn nibble<I: BitIo>(&mut self, io: &mut I, g2: usize, g1: usize, value: u32) -> Result<u32> {
        let mut node = 1usize;
        let mut stored = self.t2.table()[g2 + 1];
        for k in (0..4).rev() {
            let bit = (value >> k) & 1 == 1;
            let i2 = g2 + node;
            let children = if k > 0 {
                let t = self.t2.table();
                [t[g2 + 2 * node], t[g2 + 2 * node + 1]]
            } else {
                [0, 0]
            };
            let mut c = stored ^ COUNTER_INIT;
            let bit = if self.order1 && counter_n(c) == 0 {
                // A new order-2 node starts from what order 1 knows about
                // new contexts, with a count of zero (the prior is not counted).
                let i1 = g1 + node;
                let c1 = self.t1.table()[i1] ^ COUNTER_INIT;
                let bit = io.code(bit, counter_p16(c1).clamp(1, 65535))?;
                c = c1 & !1023;
                update_stored(&mut self.t1.table_mut()[i1], bit, self.limit);
                bit
            } else {
                io.code(bit, counter_p16(c).clamp(1, 65535))?
            };
            counter_update(&mut c, bit, self.limit);
            self.t2.table_mut()[i2] = c ^ COUNTER_INIT;
            node = 2 * node + usize::from(bit);
            stored = children[usize::from(bit)];
        }
        Ok(node as u32 - 16)
    }

    #[inline(always)]
    fn byte<I: BitIo>(&mut self, io: &mut I, byte: u8) -> Result<u8> {
        let b2 = self.t2.base((self.c2 << 8) | self.c1);
        let b1 = if self.order1 {
            self.t1.base(self.c1)
        } else {
            0
        };
        let high = self.nibble(io, b2, b1, u32::from(byte >> 4))?;
        let group = 16 * (1 + high as usize);
        let low = self.nibble(io, b2 + group, b1 + group, u32::from(byte & 15))?;
        let byte = ((high << 4) | low) as u8;
        self.c2 = self.c1;
        self.c1 = usize::from(byte);
        Ok(byte)
    }
}

/// Compresses `data` with the fast order-2 engine.
///
/// The output is a bare range-coded stream; the decoder needs the length of
/// `data` and the same parameters. It needs
/// [`Order2Params::memory_needed_for`]`(data.len())` bytes of tables.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`](crate::ErrorKind::InvalidParameter) when
/// `params` is out of range.
///
/// # Example
///
/// ```
/// use subrange::model::cm::{decode_order2, encode_order2, Order2Params};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let data = b"gauge 4, level 2.31 m; gauge 4, level 2.30 m; gauge 4, level 2.30 m".repeat(20);
/// let params = Order2Params::default();
/// let coded = encode_order2(&data, &params)?;
/// assert!(coded.len() < data.len() / 4);
/// assert_eq!(decode_order2(&coded, data.len(), &params)?, data);
/// # Ok(())
/// # }
/// ```
pub fn encode_order2(data: &[u8], params: &Order2Params) -> Result<Vec<u8>> {
    order2_encoder(data, params, false)?.finish()
}

/// The ideal cost of coding `data` with the order-2 engine: the sum of
/// `-log2 p` over every coded bit, so a report can separate model quality
/// from coder overhead.
///
/// # Errors
///
/// As for [`encode_order2`].
pub fn ideal_cost_order2(data: &[u8], params: &Order2Params) -> Result<IdealCost> {
    let enc = order2_encoder(data, params, true)?;
    Ok(enc.ideal_cost().copied().unwrap_or_default())
}

/// As [`encode_order2`], but `None` (store the block) when its first
/// sixteenth does not shrink (see `shrink`). On incompressible input every
/// byte opens a new context, so each nibble misses the cache; giving up
/// early keeps such blocks fast.
#[cfg_attr(not(feature = "std"), allow(dead_code))]
pub(crate) fn encode_order2_or_store(
    data: &[u8],
    params: &Order2Params,
) -> Result<Option<Vec<u8>>> {
    finish_or_store(order2_encoder_until(data, params, false, true)?)
}

fn order2_encoder(data: &[u8], params: &Order2Params, meter: bool) -> Result<Encoder> {
    Ok(order2_encoder_until(data, params, meter, false)?.expect("no check, no giving up"))
}

fn order2_encoder_until(
    data: &[u8],
    params: &Order2Params,
    meter: bool,
    check: bool,
) -> Result<Option<Encoder>> {
    let mut model = FastModel::new(params, data.len())?;
    let mut enc = Encoder::with_sink(Vec::with_capacity(data.len() / 2 + 16));
    if meter {
        enc.enable_cost_meter();
    }
    let precise = params.precise;
    code_bytes(data.len(), enc, check, |enc, i| {
        if precise {
            model.byte(enc, data[i]).map(drop)
        } else {
            model.byte(&mut Coarse(enc), data[i]).map(drop)
        }
    })
}

/// Decompresses `raw_len` bytes coded by [`encode_order2`] with the same
/// parameters.
///
/// Allocates `raw_len` bytes for the output and
/// [`Order2Params::memory_needed_for`]`(raw_len)` bytes of tables, nothing that depends on
/// `coded`; the caller bounds both. Damaged input gives an error or wrong
/// bytes (a container's checksum catches those), never a panic.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`](crate::ErrorKind::InvalidParameter) for
/// bad parameters; [`ErrorKind::Truncated`](crate::ErrorKind::Truncated),
/// [`ErrorKind::CorruptStream`](crate::ErrorKind::CorruptStream) or
/// [`ErrorKind::TrailingBytes`](crate::ErrorKind::TrailingBytes) when
/// `coded` is not exactly a stream of `raw_len` bytes.
pub fn decode_order2(coded: &[u8], raw_len: usize, params: &Order2Params) -> Result<Vec<u8>> {
    let mut model = FastModel::new(params, raw_len)?;
    let mut dec = Decoder::new(coded)?;
    let mut out = Vec::with_capacity(raw_len);
    for _ in 0..raw_len {
        out.push(if params.precise {
            model.byte(&mut dec, 0)?
        } else {
            model.byte(&mut Coarse(&mut dec), 0)?
        });
    }
    dec.finish()?;
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Codes `data` with tables sized for a block of `room` bytes.
    fn encode_with_room(data: &[u8], params: &Order2Params, room: usize) -> Vec<u8> {
        let mut model = FastModel::new(params, room).unwrap();
        let mut enc = Encoder::with_sink(Vec::new());
        for &byte in data {
            model.byte(&mut enc, byte).unwrap();
        }
        enc.finish().unwrap()
    }

    #[test]
    fn tables_sized_to_the_block_code_as_the_direct_table() {
        // Hashed, indexed and direct layouts of the context groups.
        for len in [40, 3000, 20_000] {
            let data: Vec<u8> = (0..len as u32).map(|i| (i * i / 7 % 251) as u8).collect();
            for order1 in [true, false] {
                let p = Order2Params {
                    order1,
                    ..Default::default()
                };
                let small = encode_order2(&data, &p).unwrap();
                assert_eq!(small, encode_with_room(&data, &p, 1 << 20), "{len}");
            }
        }
    }

    #[test]
    fn incompressible_blocks_are_given_up_early() {
        let p = Order2Params::default();
        let random = crate::corpus::random(5, 200_000);
        assert_eq!(encode_order2_or_store(&random, &p).unwrap(), None);
        let csv = crate::corpus::gauge_csv(5, 200_000);
        let coded = encode_order2_or_store(&csv, &p).unwrap().unwrap();
        assert_eq!(coded, encode_order2(&csv, &p).unwrap());
    }

    #[test]
    fn round_trip_without_order1() {
        let p = Order2Params {
            order1: false,
            ..Default::default()
        };
        let data: Vec<u8> = (0..3000u32).map(|i| (i * i % 17) as u8 + b'a').collect();
        let coded = encode_order2(&data, &p).unwrap();
        assert!(coded.len() < data.len() / 2);
        assert_eq!(decode_order2(&coded, data.len(), &p).unwrap(), data);
    }
}
