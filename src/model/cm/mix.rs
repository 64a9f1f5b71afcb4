//! The mix engine: many contexts, logistic mixing, two APM stages.
//!
//! Per bit, every enabled context contributes one prediction:
//!
//! - order 1 from a direct table (17 nibble groups of 16 counters per byte
//!   value, as in the order-2 engine);
//! - orders 2 to 6, the word context (the current word with the previous
//!   one) and the column context (the byte above in the previous line, with
//!   the column) from one shared [`SlotTable`]: each context's hash, combined
//!   with the high nibble when the low nibble is coded, selects a verified
//!   slot of 15 node counters;
//! - the match model's guess of the next bit, weighed by its learned
//!   reliability for the current match length.
//!
//! The stretched predictions and a bias enter a [`Mixer`] whose weight set is
//! chosen by the match state and the partial byte. Its output is refined by
//! two [`Apm`]s, one keyed by the partial byte, one by the partial byte and
//! the previous byte, and the final probability averages the mixer and both
//! refinements (the APMs fix systematic over- or under-confidence, the
//! average keeps their noise down). A last single weight, learned slowly,
//! scales that probability in the logistic domain: it stays near 1 where the
//! predictions are informative and falls towards 0 where they are not, so
//! random input costs barely more than 8 bits a byte (the many small, noisy
//! mixer weights alone would cost about 1 %).
//!
//! The bit loop runs a nibble at a time over the slots found at the nibble's
//! start, with the mixer's inputs in a fixed array; the default shape (four
//! hashed contexts, order 1, the match model) has a loop compiled for it.
//! After the coder returns the bit, the updates take one of two paths, one
//! per bit value, with the bit a constant in each: a decoder, which learns
//! the bit only from the coder, then does not wait for it before the next
//! bit's loads — the processor follows the predicted branch, and only a
//! mispredicted one costs the wait. (The order-2 engine reads both children
//! instead; here that would add more work than the wait it saves.)
//!
//! Invariants: encoder and decoder run the same predictions and updates in
//! the same order with the same bits and the same history, so every table
//! evolves identically; all indices are derived from masked hashes or
//! bounded node numbers, so no input can index out of range.

use alloc::vec::Vec;

use crate::coder::{Decoder, Encoder, IdealCost};
use crate::error::Result;
use crate::model::arena::{groups_for, GroupArena};
use crate::model::bit::apm::Apm;
use crate::model::bit::counter::{counter_p16, counter_update, COUNTER_INIT};
use crate::model::bit::logistic::{squash, stretch};
use crate::model::bit::mix::Mixer;
use crate::model::cm::column::ColumnContext;
use crate::model::cm::hashed::{hash2, SlotTable, SLOT_WORDS};
use crate::model::cm::io::{BitIo, Coarse};
use crate::model::cm::matcher::MatchModel;
use crate::model::cm::order2::update_stored;
use crate::model::cm::params::{MixParams, NODES_PER_CONTEXT};
use crate::model::cm::shrink::{code_bytes, finish_or_store};
use crate::model::cm::word::WordContext;

/// Most hashed contexts: orders 2 to 6, the word and the column context.
const MAX_HASHED: usize = 7;

/// Hashed contexts of the default parameters (orders 2 and 3, word, column).
const DEFAULT_HASHED: usize = 4;

/// Count limit of the hashed context counters.
const HASHED_LIMIT: u32 = 60;

/// Count limit of the order-1 counters.
const ORDER1_LIMIT: u32 = 1023;

/// Context-kind tags mixed into the hashes so different kinds never share slots.
const TAG_WORD: u64 = 0x100;
const TAG_COLUMN: u64 = 0x101;

struct MixModel {
    slots: SlotTable,
    order1: GroupArena<u32>,
    use_order1: bool,
    orders: Vec<u8>,
    word: Option<WordContext>,
    column: Option<ColumnContext>,
    matcher: Option<MatchModel>,
    hashed: usize,
    hashes: [u64; MAX_HASHED],
    bases: [usize; MAX_HASHED],
    mixer: Mixer,
    apm1: Apm,
    apm2: Apm,
    /// Final gain on the stretched probability (16.16 fixed point), learned
    /// slowly: it shrinks towards 0 when the predictions carry no information
    /// (random data), and stays near 1 otherwise.
    gain: i32,
    c8: u64,
}

impl MixModel {
    /// A model for a block of `len` bytes (tables sized to the block, see
    /// [`MixParams::memory_needed_for`]).
    fn new(params: &MixParams, len: usize) -> Result<Self> {
        params.validate()?;
        let orders = (2..=6u8)
            .filter(|&o| params.orders & (1 << (o - 1)) != 0)
            .collect();
        let use_order1 = params.orders & 1 != 0;
        let mut m = MixModel {
            slots: SlotTable::new(params.table_bytes_for(len)),
            order1: GroupArena::new(
                if use_order1 { 256 } else { 0 },
                NODES_PER_CONTEXT,
                groups_for(len, 256),
            ),
            use_order1,
            orders,
            word: params.word.then(WordContext::default),
            column: params.column.then(ColumnContext::default),
            matcher: params
                .matcher
                .then(|| MatchModel::new(params.match_bits_for(len))),
            hashed: params.hashed_contexts(),
            hashes: [0; MAX_HASHED],
            bases: [0; MAX_HASHED],
            mixer: Mixer::new(params.inputs(), MixParams::SETS, u32::from(params.rate))?,
            apm1: Apm::new(256, 7)?,
            apm2: Apm::grouped(
                MixParams::APM2_CONTEXTS,
                7,
                MixParams::APM2_GROUP_LOG2,
                MixParams::apm2_groups_for(len),
            )?,
            gain: 1 << 16,
            c8: 0,
        };
        m.set_contexts();
        Ok(m)
    }

    /// Computes the byte-level context hashes and the high nibble's slots.
    fn set_contexts(&mut self) {
        let c1 = self.c8 & 0xFF;
        let mut k = 0;
        for &o in &self.orders {
            let mask = (1u64 << (8 * u32::from(o))) - 1;
            self.hashes[k] = hash2(self.c8 & mask, u64::from(o));
            k += 1;
        }
        if let Some(w) = &self.word {
            // The word so far with the previous word; between words, the
            // previous word with the separator byte.
            let current = if w.word() == 0 { c1 } else { w.word() };
            self.hashes[k] = hash2(hash2(current, w.previous()), TAG_WORD);
            k += 1;
        }
        if let Some(c) = &self.column {
            let above = u64::from(c.above());
            let column = c.column().min(255) as u64;
            self.hashes[k] = hash2(above | (column << 8), TAG_COLUMN);
            k += 1;
        }
        debug_assert_eq!(k, self.hashed);
        self.find_high_slots();
    }

    /// Looks up the high-nibble slots of every hashed context. Both slots of
    /// each pair are loaded (independent loads the processor overlaps), so the
    /// companion slot, where a context's low nibble usually settles, is in
    /// cache when the low nibble needs it.
    #[inline]
    fn find_high_slots(&mut self) {
        let mut pending = [(0usize, 0u32, [0u32; 2]); MAX_HASHED];
        let n = self.hashed;
        let words = self.slots.words();
        for (slot, &hash) in pending[..n].iter_mut().zip(&self.hashes[..n]) {
            let h = hash.wrapping_mul(0x9E37_79B9_7F4A_7C15);
            let (a, check) = self.slots.locate(h ^ (h >> 31));
            *slot = (a, check, [words[a], words[a + SLOT_WORDS]]);
        }
        for (base, &(a, check, seen)) in self.bases[..n].iter_mut().zip(&pending[..n]) {
            *base = self.slots.resolve(a, check, seen);
        }
    }

    /// Looks up the low-nibble slots after high nibble `high`: first in the
    /// companion of each context's high-nibble slot, then in the slot pair
    /// of the low nibble's own hash.
    #[inline]
    fn find_low_slots(&mut self, high: u64) {
        for k in 0..self.hashed {
            let h = (self.hashes[k] ^ (16 + high)).wrapping_mul(0x9E37_79B9_7F4A_7C15);
            let (a, check) = self.slots.locate(h ^ (h >> 31));
            let companion = self.bases[k] ^ SLOT_WORDS;
            self.bases[k] = self.slots.resolve_near(companion, a, check);
        }
    }

    /// Codes one byte (the encoder passes it; the decoder passes anything).
    #[inline]
    fn code_byte<I: BitIo>(&mut self, io: &mut I, byte: u8) -> Result<u8> {
        // The mixer's inputs are padded to its stride: 8 for up to 8 inputs,
        // else 16. The default shape (four hashed contexts, order 1 and the
        // match model: seven inputs) gets a loop compiled for it.
        if self.hashed == DEFAULT_HASHED && self.use_order1 && self.matcher.is_some() {
            self.code_byte_n::<I, 8, true>(io, byte)
        } else if self.mixer.stride() == 8 {
            self.code_byte_n::<I, 8, false>(io, byte)
        } else {
            self.code_byte_n::<I, 16, false>(io, byte)
        }
    }

    #[inline(always)]
    fn code_byte_n<I: BitIo, const N: usize, const FIXED: bool>(
        &mut self,
        io: &mut I,
        byte: u8,
    ) -> Result<u8> {
        let c1 = (self.c8 & 0xFF) as usize;
        let g1 = if self.use_order1 {
            self.order1.base(c1)
        } else {
            0
        };
        let high = self.nibble::<I, N, FIXED>(io, byte >> 4, 1, g1, c1)?;
        let h = (high & 15) as u64;
        self.find_low_slots(h);
        let g1 = g1 + 16 * (1 + h as usize);
        let c0 = self.nibble::<I, N, FIXED>(io, byte & 15, high, g1, c1)?;
        Ok(c0 as u8)
    }

    /// Learns coded bit `BIT` at tree node `node` of the slots in `bases`
    /// (and of the order-1 counter at `order1`, if any), for a prediction
    /// from inputs `xs` with final probability `p` and gain input `gain_st`.
    #[inline(always)]
    fn learn<const N: usize, const BIT: bool>(
        &mut self,
        xs: &[i32; N],
        bases: &[usize],
        order1: Option<usize>,
        node: usize,
        p: u32,
        gain_st: i32,
    ) {
        self.mixer.learn_inputs(xs, BIT);
        self.apm1.update(BIT);
        self.apm2.update(BIT);
        // Gain: w += x·err / 2^13 (a slow rate keeps its noise low).
        let err = (if BIT { 65536 } else { 0 }) - p as i32;
        self.gain = (self.gain + ((gain_st * (err >> 4)) >> 13)).clamp(0, 4 << 16);
        let words = self.slots.words_mut();
        for &base in bases {
            counter_update(&mut words[base + node], BIT, HASHED_LIMIT);
        }
        if let Some(i) = order1 {
            update_stored(&mut self.order1.table_mut()[i], BIT, ORDER1_LIMIT);
        }
        if let Some(m) = &mut self.matcher {
            m.update_bit(BIT);
        }
    }

    /// Codes the four bits of `value` (one nibble) through the slots in
    /// `bases` and the order-1 group `g1`; `c0` is the partial byte with a
    /// leading 1, `c1` the previous byte. Returns the partial byte after it.
    ///
    /// Mixer inputs in order: the hashed contexts, order 1, the match model,
    /// the bias; the rest of the `N` stay 0. With `FIXED` the shape is the
    /// default one (see `code_byte`), so the compiler knows every index.
    ///
    /// Kept out of line, so encoder and decoder get the same optimisation.
    #[inline(never)]
    fn nibble<I: BitIo, const N: usize, const FIXED: bool>(
        &mut self,
        io: &mut I,
        value: u8,
        mut c0: usize,
        g1: usize,
        c1: usize,
    ) -> Result<usize> {
        let all_bases = self.bases;
        let bases = &all_bases[..if FIXED { DEFAULT_HASHED } else { self.hashed }];
        let use_order1 = FIXED || self.use_order1;
        let o1 = bases.len();
        let im = o1 + usize::from(use_order1);
        let ib = im + usize::from(self.matcher.is_some());
        let mut xs = [0i32; N];
        xs[ib] = 256;
        let mut node = 1usize;
        for k in (0..4).rev() {
            let bit = (value >> k) & 1 == 1;
            let words = self.slots.words();
            for (x, &base) in xs.iter_mut().zip(bases) {
                *x = stretch(counter_p16(words[base + node]));
            }
            if use_order1 {
                let c = self.order1.table()[g1 + node] ^ COUNTER_INIT;
                xs[o1] = stretch(counter_p16(c));
            }
            let mut state = 0;
            if let Some(m) = &mut self.matcher {
                xs[im] = m.input();
                state = m.state();
            }
            let pm = self.mixer.mix_inputs(&xs, state * 256 + c0);
            let st = stretch(pm);
            let a1 = self.apm1.refine_stretched(st, c0);
            let a2 = self.apm2.refine_stretched(st, c0 | (c1 << 8));
            let pf = ((2 * pm + a1 + a2 + 2) >> 2).clamp(1, 65535);
            let gain_st = stretch(pf);
            let p = squash(((i64::from(self.gain) * i64::from(gain_st)) >> 16) as i32);

            let order1 = use_order1.then_some(g1 + node);
            // One path per bit value, each with its bit a constant: a
            // decoder's processor then follows the predicted branch into the
            // next bit's loads instead of waiting for the decoded bit.
            if io.code(bit, p)? {
                self.learn::<N, true>(&xs, bases, order1, node, p, gain_st);
                node = 2 * node + 1;
                c0 = 2 * c0 + 1;
            } else {
                self.learn::<N, false>(&xs, bases, order1, node, p, gain_st);
                node *= 2;
                c0 *= 2;
            }
        }
        Ok(c0)
    }

    /// Finishes a byte: `history` ends with it.
    fn byte_done(&mut self, history: &[u8]) {
        let byte = history.last().copied().unwrap_or(0);
        self.c8 = (self.c8 << 8) | u64::from(byte);
        if let Some(w) = &mut self.word {
            w.push(byte);
        }
        if let Some(c) = &mut self.column {
            c.byte_done(history);
        }
        // Slot lookups first: their cache misses then overlap with the match
        // model's table look-up.
        self.set_contexts();
        if let Some(m) = &mut self.matcher {
            m.byte_done(history);
        }
    }
}

/// Compresses `data` with the mix engine.
///
/// The output is a bare range-coded stream; the decoder needs the length of
/// `data` and the same parameters. The engine allocates
/// [`MixParams::memory_needed_for`]`(data.len())` bytes of tables.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`](crate::ErrorKind::InvalidParameter) when
/// `params` is out of range.
///
/// # Example
///
/// ```
/// use subrange::model::cm::{decode_mix, encode_mix, MixParams};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let text = b"The gauge on the upper river reads high; the gauge on the lower river reads low. ";
/// let data = text.repeat(30);
/// let mut params = MixParams::default();
/// params.mem_log2 = 1;
/// let coded = encode_mix(&data, &params)?;
/// assert!(coded.len() < 200);
/// assert_eq!(decode_mix(&coded, data.len(), &params)?, data);
/// # Ok(())
/// # }
/// ```
pub fn encode_mix(data: &[u8], params: &MixParams) -> Result<Vec<u8>> {
    mix_encoder(data, params, false)?.finish()
}

/// The ideal cost of coding `data` with the mix engine: the sum of `-log2 p`
/// over every coded bit.
///
/// # Errors
///
/// As for [`encode_mix`].
pub fn ideal_cost_mix(data: &[u8], params: &MixParams) -> Result<IdealCost> {
    let enc = mix_encoder(data, params, true)?;
    Ok(enc.ideal_cost().copied().unwrap_or_default())
}

/// As [`encode_mix`], but `None` (store the block) when its first sixteenth
/// does not shrink (see `shrink`).
#[cfg_attr(not(feature = "std"), allow(dead_code))]
pub(crate) fn encode_mix_or_store(data: &[u8], params: &MixParams) -> Result<Option<Vec<u8>>> {
    finish_or_store(mix_encoder_until(data, params, false, true)?)
}

fn mix_encoder(data: &[u8], params: &MixParams, meter: bool) -> Result<Encoder> {
    Ok(mix_encoder_until(data, params, meter, false)?.expect("no check, no giving up"))
}

fn mix_encoder_until(
    data: &[u8],
    params: &MixParams,
    meter: bool,
    check: bool,
) -> Result<Option<Encoder>> {
    let mut model = MixModel::new(params, data.len())?;
    let mut enc = Encoder::with_sink(Vec::with_capacity(data.len() / 3 + 16));
    if meter {
        enc.enable_cost_meter();
    }
    let precise = params.precise;
    code_bytes(data.len(), enc, check, |enc, i| {
        if precise {
            model.code_byte(enc, data[i])?;
        } else {
            model.code_byte(&mut Coarse(enc), data[i])?;
        }
        model.byte_done(&data[..=i]);
        Ok(())
    })
}

/// Decompresses `raw_len` bytes coded by [`encode_mix`] with the same
/// parameters.
///
/// Allocates `raw_len` bytes for the output and
/// [`MixParams::memory_needed_for`]`(raw_len)` bytes of tables, nothing that depends on `coded`; the caller bounds both.
/// Damaged input gives an error or wrong bytes (a container's checksum
/// catches those), never a panic.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`](crate::ErrorKind::InvalidParameter) for
/// bad parameters; [`ErrorKind::Truncated`](crate::ErrorKind::Truncated),
/// [`ErrorKind::CorruptStream`](crate::ErrorKind::CorruptStream) or
/// [`ErrorKind::TrailingBytes`](crate::ErrorKind::TrailingBytes) when
/// `coded` is not exactly a stream of `raw_len` bytes.
pub fn decode_mix(coded: &[u8], raw_len: usize, params: &MixParams) -> Result<Vec<u8>> {
    let mut model = MixModel::new(params, raw_len)?;
    let mut dec = Decoder::new(coded)?;
    let mut out = Vec::with_capacity(raw_len);
    for _ in 0..raw_len {
        let byte = if params.precise {
            model.code_byte(&mut dec, 0)?
        } else {
            model.code_byte(&mut Coarse(&mut dec), 0)?
        };
        out.push(byte);
        model.byte_done(&out);
    }
    dec.finish()?;
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::cm::shrink::STORE_CHECK;

    #[test]
    fn incompressible_blocks_are_given_up_early() {
        let params = MixParams {
            mem_log2: 0,
            ..MixParams::default()
        };
        // Random bytes: the first sixteenth does not shrink, so store.
        let random = crate::corpus::random(3, 3 * STORE_CHECK / 2);
        assert_eq!(encode_mix_or_store(&random, &params).unwrap(), None);
        // Gauge telemetry: coded in full, the same bytes as `encode_mix`.
        let csv = crate::corpus::gauge_csv(3, 3 * STORE_CHECK / 2);
        let coded = encode_mix_or_store(&csv, &params).unwrap().unwrap();
        assert_eq!(coded, encode_mix(&csv, &params).unwrap());
        // Short blocks are never checked: coded even when random.
        let short = crate::corpus::random(4, STORE_CHECK);
        assert!(encode_mix_or_store(&short, &params).unwrap().is_some());
    }
}
