//! Values coded under a set of tables, one table index (and offset) per value.
//!
//! An [`IndexedTables`] keeps every table's cumulative frequencies and a
//! coarse slot-to-symbol lookup in two flat arrays. Encoding a step reads one
//! table record and two adjacent cumulative entries. Decoding finds the
//! target's bucket — the top (at most) [`BUCKET_BITS`] bits of the target —
//! whose entry names the symbol holding the bucket's first slot, and the
//! next bucket's entry bounds the search from above; a binary search between
//! the two settles the symbol (no step at all where one symbol covers the
//! bucket, which is where most of a peaked distribution's mass lies). The
//! lookup takes 2^11 bytes a table, so a few hundred tables stay in cache,
//! where a full slot table of a 2^16 total would take 2^17.
//! Symbol `k` of table `t` stands for the value `k + origin_t`; value `i` is
//! coded as symbol `values[i] − offsets[i] − origin_(indexes[i])` of table
//! `indexes[i]`. Every total is a power of two, so the encoder never divides.
//!
//! Values are spread over [`INDEXED_LANES`] interleaved range coders (value
//! `i` goes to coder `i mod 4`), so the decoder works on four independent
//! dependency chains at once (Giesen, "Interleaved entropy coders",
//! arXiv:1402.3392, 2014). The stream is the vint lengths of the first
//! three lane streams, then the four lane streams one after the other (each
//! an ordinary stream of [`Encoder`]); the last lane takes what is left.
//!
//! Invariant: for each table, `cum` rises from 0 to `2^log2_total`;
//! `buckets[b]` is the symbol `k` with `cum[k] <= b·2^shift < cum[k + 1]`
//! for `b < 2^log2_total / 2^shift`, and the last entry is the last symbol.
//! The decoder yields the largest `k <= buckets[b + 1]` with `cum[k] <=
//! target`, which has `target < cum[k + 1]`: a symbol of frequency 0 is
//! never yielded.

use alloc::vec::Vec;

use crate::coder::{Decoder, Encoder, SliceSource};
use crate::error::{ErrorKind, Result};
use crate::model::parametric::ParametricTable;
use crate::model::{Span, TableModel, MAX_ALPHABET, MAX_TOTAL};

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct Info {
    cum_base: usize,
    bucket_base: usize,
    bucket_shift: u32,
    symbols: u32,
    origin: i32,
    log2_total: u32,
}

/// A set of frequency tables for [`encode_indexed`] and [`decode_indexed`].
///
/// # Example
///
/// ```
/// use subrange::batch::{decode_indexed, encode_indexed, IndexedTables};
/// use subrange::model::parametric::{Family, ParametricGrid};
///
/// # fn main() -> Result<(), subrange::Error> {
/// // Level changes predicted with a scale of 0.5, 1, 2 or 4 cm.
/// let grid = ParametricGrid::new(Family::Gaussian, 16, 8 << 16, 255);
/// let tables = IndexedTables::from_parametric(&grid.build(&[1 << 15, 1 << 16, 2 << 16, 4 << 16], 0)?)?;
/// let values = [0, -1, 3, 0, 7, -2];
/// let indexes = [0, 1, 2, 0, 3, 2];
/// let offsets = [0, 0, 1, 0, 5, 0]; // the predicted means, rounded
/// let bytes = encode_indexed(&tables, &values, &indexes, Some(&offsets))?;
/// let mut back = [0; 6];
/// decode_indexed(&tables, &bytes, &indexes, Some(&offsets), &mut back)?;
/// assert_eq!(back, values);
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct IndexedTables {
    info: Vec<Info>,
    cum: Vec<u32>,
    buckets: Vec<u16>,
}

/// Number of interleaved coders of an indexed stream.
pub const INDEXED_LANES: usize = 4;

/// Most bits of a decoding target the bucket lookup resolves.
pub const BUCKET_BITS: u32 = 10;

impl IndexedTables {
    /// An empty set; add tables with [`push_cumulative`](Self::push_cumulative).
    pub fn new() -> Self {
        Self::default()
    }

    /// The set of `models`, symbol `k` of model `t` standing for `k + origins[t]`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] when `origins` and `models` differ in length.
    pub fn from_models(models: &[TableModel], origins: &[i32]) -> Result<Self> {
        if models.len() != origins.len() {
            return Err(crate::Error::invalid_parameter(
                "origins",
                "needs one origin per table",
            ));
        }
        let mut set = Self::new();
        for (m, &origin) in models.iter().zip(origins) {
            set.push_cumulative(m.cumulative(), origin)?;
        }
        Ok(set)
    }

    /// The set of parametric tables, each with origin `−half_width` (symbol
    /// `k` is the value `k − half_width`, as in the table).
    ///
    /// # Errors
    ///
    /// None in practice (parametric tables are valid); kept fallible like
    /// the other constructors.
    pub fn from_parametric(tables: &[ParametricTable]) -> Result<Self> {
        let mut set = Self::new();
        for t in tables {
            set.push_cumulative(t.model().cumulative(), -(t.spec().half_width as i32))?;
        }
        Ok(set)
    }

    /// Adds a table given by its cumulative frequencies (`n + 1` entries
    /// rising from 0 to a power of two at most 2^16; a symbol whose two
    /// entries are equal cannot be coded), symbol `k` standing for the value
    /// `k + origin`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] for fewer than 2 or more than 65,537
    /// entries, a first entry other than 0, a falling entry, or a last entry
    /// that is not a power of two in `1 ..= 65536`.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::batch::IndexedTables;
    ///
    /// let mut set = IndexedTables::new();
    /// set.push_cumulative(&[0, 2, 3, 4], -1).unwrap(); // values -1, 0, 1
    /// assert_eq!(set.frequencies(0), Some(vec![2, 1, 1]));
    /// assert!(set.push_cumulative(&[0, 3, 2, 4], 0).is_err());
    /// assert!(set.push_cumulative(&[0, 3], 0).is_err());
    /// ```
    pub fn push_cumulative(&mut self, cum: &[u32], origin: i32) -> Result<()> {
        if cum.len() < 2 || cum.len() > MAX_ALPHABET as usize + 1 {
            return Err(crate::Error::invalid_parameter(
                "cumulative",
                "needs 2 ..= 65537 entries",
            ));
        }
        if cum[0] != 0 {
            return Err(crate::Error::invalid_parameter(
                "cumulative",
                "must start at 0",
            ));
        }
        if cum.windows(2).any(|w| w[1] < w[0]) {
            return Err(crate::Error::invalid_parameter(
                "cumulative",
                "must not fall",
            ));
        }
        let total = cum[cum.len() - 1];
        if total == 0 || total > MAX_TOTAL || !total.is_power_of_two() {
            return Err(crate::Error::invalid_parameter(
                "cumulative",
                "must end at a power of two in 1 ..= 65536",
            ));
        }
        let log2_total = total.trailing_zeros();
        let bucket_shift = log2_total.saturating_sub(BUCKET_BITS);
        let info = Info {
            cum_base: self.cum.len(),
            bucket_base: self.buckets.len(),
            bucket_shift,
            symbols: (cum.len() - 1) as u32,
            origin,
            log2_total,
        };
        self.cum.extend_from_slice(cum);
        let mut k = 0usize;
        for b in 0..(total >> bucket_shift) {
            let slot = b << bucket_shift;
            while cum[k + 1] <= slot {
                k += 1;
            }
            self.buckets.push(k as u16);
        }
        self.buckets.push((cum.len() - 2) as u16);
        self.info.push(info);
        Ok(())
    }

    /// Number of tables.
    pub fn len(&self) -> usize {
        self.info.len()
    }

    /// Whether the set has no table.
    pub fn is_empty(&self) -> bool {
        self.info.is_empty()
    }

    /// Table `t`'s frequencies, one per symbol.
    pub fn frequencies(&self, t: usize) -> Option<Vec<u32>> {
        self.cumulative(t)
            .map(|c| c.windows(2).map(|w| w[1] - w[0]).collect())
    }

    /// Table `t`'s cumulative frequencies (`n + 1` entries).
    pub fn cumulative(&self, t: usize) -> Option<&[u32]> {
        let i = self.info.get(t)?;
        Some(&self.cum[i.cum_base..i.cum_base + i.symbols as usize + 1])
    }

    /// Table `t`'s origin: the value its symbol 0 stands for.
    pub fn origin(&self, t: usize) -> Option<i32> {
        self.info.get(t).map(|i| i.origin)
    }

    /// `log2` of table `t`'s total.
    pub fn log2_total(&self, t: usize) -> Option<u32> {
        self.info.get(t).map(|i| i.log2_total)
    }

    #[inline(always)]
    fn table(&self, index: u32) -> Result<&Info> {
        self.info.get(index as usize).ok_or_else(|| {
            crate::Error::invalid_parameter("indexes", "an index is not a table of the set")
        })
    }
}

fn check_lengths(values: usize, indexes: usize, offsets: Option<&[i32]>) -> Result<()> {
    if values != indexes {
        return Err(crate::Error::invalid_parameter(
            "indexes",
            "needs one index per value",
        ));
    }
    if offsets.is_some_and(|o| o.len() != values) {
        return Err(crate::Error::invalid_parameter(
            "offsets",
            "needs one offset per value",
        ));
    }
    Ok(())
}

/// Codes each `values[i]` with table `indexes[i]`, less `offsets[i]` (0 without offsets).
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`] when the slices differ in length or an
/// index names no table; [`ErrorKind::UncodableSymbol`] when a value falls
/// outside its table or on a symbol of frequency 0 (the symbol reported is
/// the value's position in its table, wrapped to `u32`).
pub fn encode_indexed(
    tables: &IndexedTables,
    values: &[i32],
    indexes: &[u32],
    offsets: Option<&[i32]>,
) -> Result<Vec<u8>> {
    check_lengths(values.len(), indexes.len(), offsets)?;
    let mut lanes: [Encoder; INDEXED_LANES] = core::array::from_fn(|_| {
        Encoder::with_sink(Vec::with_capacity(values.len() / (2 * INDEXED_LANES) + 8))
    });
    match offsets {
        Some(offsets) => {
            let rows = values.iter().zip(indexes).zip(offsets);
            for (i, ((&v, &t), &o)) in rows.enumerate() {
                encode_step(tables, &mut lanes[i % INDEXED_LANES], v, t, o)?;
            }
        }
        None => {
            for (i, (&v, &t)) in values.iter().zip(indexes).enumerate() {
                encode_step(tables, &mut lanes[i % INDEXED_LANES], v, t, 0)?;
            }
        }
    }
    let mut streams = Vec::with_capacity(INDEXED_LANES);
    for lane in lanes {
        streams.push(lane.finish()?);
    }
    let mut out = Vec::with_capacity(streams.iter().map(Vec::len).sum::<usize>() + 16);
    for s in &streams[..INDEXED_LANES - 1] {
        write_length(&mut out, s.len() as u64);
    }
    for s in &streams {
        out.extend_from_slice(s);
    }
    Ok(out)
}

fn write_length(out: &mut Vec<u8>, mut value: u64) {
    while value >= 0x80 {
        out.push(value as u8 | 0x80);
        value >>= 7;
    }
    out.push(value as u8);
}

/// Splits an indexed stream into its lane streams.
fn split_lanes(bytes: &[u8]) -> Result<[&[u8]; INDEXED_LANES]> {
    let mut pos = 0usize;
    let mut lengths = [0u64; INDEXED_LANES - 1];
    for len in &mut lengths {
        let mut value = 0u64;
        let mut shift = 0;
        loop {
            let Some(&byte) = bytes.get(pos) else {
                return Err(crate::Error::truncated(pos as u64));
            };
            pos += 1;
            if shift > 56 {
                return Err(crate::Error::corrupt_stream(
                    pos as u64,
                    "lane length too large",
                ));
            }
            value |= u64::from(byte & 0x7F) << shift;
            shift += 7;
            if byte & 0x80 == 0 {
                break;
            }
        }
        *len = value;
    }
    let mut rest = &bytes[pos..];
    let mut lanes: [&[u8]; INDEXED_LANES] = [&[]; INDEXED_LANES];
    for (lane, &len) in lanes.iter_mut().zip(&lengths) {
        if len > rest.len() as u64 {
            // A lane reaching past the end: the input was cut short.
            return Err(crate::Error::truncated(bytes.len() as u64));
        }
        let (head, tail) = rest.split_at(len as usize);
        *lane = head;
        rest = tail;
    }
    lanes[INDEXED_LANES - 1] = rest;
    Ok(lanes)
}

#[inline(always)]
fn encode_step(
    tables: &IndexedTables,
    enc: &mut Encoder,
    value: i32,
    index: u32,
    offset: i32,
) -> Result<()> {
    let info = tables.table(index)?;
    let symbol = i64::from(value) - i64::from(offset) - i64::from(info.origin);
    if !(0..i64::from(info.symbols)).contains(&symbol) {
        return Err(ErrorKind::UncodableSymbol {
            symbol: symbol as u32,
            alphabet: info.symbols,
        }
        .into());
    }
    let k = info.cum_base + symbol as usize;
    let (cum, end) = (tables.cum[k], tables.cum[k + 1]);
    if cum == end {
        return Err(ErrorKind::UncodableSymbol {
            symbol: symbol as u32,
            alphabet: info.symbols,
        }
        .into());
    }
    enc.encode_span(Span::new(cum, end - cum), 1 << info.log2_total)
}

/// Decodes `out.len()` values coded by [`encode_indexed`] with the same
/// tables, indexes and offsets.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`] as for [`encode_indexed`], and when a
/// decoded value plus its offset does not fit an `i32`;
/// [`ErrorKind::Truncated`], [`ErrorKind::CorruptStream`] or
/// [`ErrorKind::TrailingBytes`] for input that is not such a stream.
pub fn decode_indexed(
    tables: &IndexedTables,
    bytes: &[u8],
    indexes: &[u32],
    offsets: Option<&[i32]>,
    out: &mut [i32],
) -> Result<()> {
    check_lengths(out.len(), indexes.len(), offsets)?;
    let streams = split_lanes(bytes)?;
    let mut decoders = Vec::with_capacity(INDEXED_LANES);
    for s in streams {
        decoders.push(Decoder::new(s)?);
    }
    decode_rows(tables, &mut decoders, indexes, offsets, out)?;
    for lane in decoders {
        lane.finish()?;
    }
    Ok(())
}

/// The decoding loop over the lanes' decoders.
fn decode_rows(
    tables: &IndexedTables,
    decoders: &mut [Decoder<SliceSource<'_>>],
    indexes: &[u32],
    offsets: Option<&[i32]>,
    out: &mut [i32],
) -> Result<()> {
    let lanes: &mut [Decoder<SliceSource<'_>>; INDEXED_LANES] = decoders
        .try_into()
        .map_err(|_| crate::Error::invalid_parameter("lanes", "needs one decoder per lane"))?;
    let offset_at = |i: usize| offsets.map_or(0, |o| o[i]);
    let mut rows = out
        .chunks_exact_mut(INDEXED_LANES)
        .zip(indexes.chunks_exact(INDEXED_LANES));
    let mut i = 0;
    for (slots, ts) in &mut rows {
        // Four independent steps: the processor overlaps their chains.
        for j in 0..INDEXED_LANES {
            slots[j] = decode_step(tables, &mut lanes[j], ts[j], offset_at(i + j))?;
        }
        i += INDEXED_LANES;
    }
    let tail = out.len() - i;
    for j in 0..tail {
        out[i + j] = decode_step(tables, &mut lanes[j], indexes[i + j], offset_at(i + j))?;
    }
    Ok(())
}

#[inline(always)]
fn decode_step(
    tables: &IndexedTables,
    dec: &mut Decoder<SliceSource<'_>>,
    index: u32,
    offset: i32,
) -> Result<i32> {
    let info = tables.table(index)?;
    let total = 1u32 << info.log2_total;
    let target = dec.target(total);
    let b = info.bucket_base + (target >> info.bucket_shift) as usize;
    let (mut lo, mut hi) = (tables.buckets[b] as usize, tables.buckets[b + 1] as usize);
    let cums = &tables.cum[info.cum_base..info.cum_base + info.symbols as usize + 1];
    while lo < hi {
        let mid = (lo + hi).div_ceil(2);
        if cums[mid] <= target {
            lo = mid;
        } else {
            hi = mid - 1;
        }
    }
    let (cum, end) = (cums[lo], cums[lo + 1]);
    dec.consume(Span::new(cum, end - cum), total)?;
    let value = lo as i64 + i64::from(info.origin) + i64::from(offset);
    i32::try_from(value).map_err(|_| {
        crate::Error::invalid_parameter(
            "offsets",
            "a decoded value plus its offset does not fit an i32",
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::Model;

    #[test]
    fn lanes_are_plain_encoder_streams() {
        let models = [
            TableModel::from_counts(&[5, 1, 1, 9], 12).unwrap(),
            TableModel::from_counts(&[1, 3], 4).unwrap(),
        ];
        let set = IndexedTables::from_models(&models, &[-2, 10]).unwrap();
        let values = [-2, 11, 1, 10, 0, -1, 11, 1, -2];
        let indexes = [0, 1, 0, 1, 0, 0, 1, 0, 0];
        let bytes = encode_indexed(&set, &values, &indexes, None).unwrap();
        let mut lanes: [Encoder; INDEXED_LANES] = core::array::from_fn(|_| Encoder::new());
        for (i, (&v, &t)) in values.iter().zip(&indexes).enumerate() {
            let origin = [-2, 10][t as usize];
            let mut m = models[t as usize].clone();
            lanes[i % INDEXED_LANES]
                .encode(&mut m, (v - origin) as u32)
                .unwrap();
        }
        let streams: Vec<Vec<u8>> = lanes.into_iter().map(|e| e.finish().unwrap()).collect();
        let mut expected = Vec::new();
        for s in &streams[..INDEXED_LANES - 1] {
            write_length(&mut expected, s.len() as u64);
        }
        streams.iter().for_each(|s| expected.extend_from_slice(s));
        assert_eq!(bytes, expected);
        assert_eq!(models[0].total(), 4096);
        let mut back = [0; 9];
        decode_indexed(&set, &bytes, &indexes, None, &mut back).unwrap();
        assert_eq!(back, values);
        assert!(split_lanes(&[0x80]).is_err());
        assert!(split_lanes(&[5, 0, 0]).is_err());
    }

    #[test]
    fn bad_input_is_an_error() {
        let mut set = IndexedTables::new();
        set.push_cumulative(&[0, 0, 8, 16], 0).unwrap();
        assert!(encode_indexed(&set, &[0], &[0], None).is_err()); // frequency 0
        assert!(encode_indexed(&set, &[3], &[0], None).is_err());
        assert!(encode_indexed(&set, &[-1], &[0], None).is_err());
        assert!(encode_indexed(&set, &[1], &[1], None).is_err());
        assert!(encode_indexed(&set, &[1, 2], &[0], None).is_err());
        assert!(encode_indexed(&set, &[1], &[0], Some(&[])).is_err());
        let bytes = encode_indexed(&set, &[1, 2, 2, 1], &[0; 4], None).unwrap();
        let mut out = [0; 4];
        decode_indexed(&set, &bytes, &[0; 4], None, &mut out).unwrap();
        assert_eq!(out, [1, 2, 2, 1]);
        let mut out = [0; 1];
        let r = decode_indexed(&set, &bytes, &[0], Some(&[i32::MAX]), &mut out);
        assert!(r.is_err());
    }
}
