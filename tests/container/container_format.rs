//! An independent decoder written from `docs/FORMAT.md` alone (sections 1
//! to 6, and the block index of section 4.1), checked against what the crate writes: if the document and the
//! code disagree, this fails. It shares no code with the crate; it is
//! deliberately plain and slow.
#![cfg(feature = "std")]

use subrange::preset::Preset;
use subrange::{compress, Options};

// Bitwise CRC-32 of section 1 (reflected polynomial 0xEDB88320, initial
// value and final XOR 0xFFFFFFFF).
use crate::support::crc32;

type R<T> = Result<T, String>;

struct Bytes<'a> {
    b: &'a [u8],
    pos: usize,
}

impl<'a> Bytes<'a> {
    fn u8(&mut self) -> R<u8> {
        let v = *self.b.get(self.pos).ok_or("truncated")?;
        self.pos += 1;
        Ok(v)
    }
    fn u32(&mut self) -> R<u32> {
        let mut v = 0u32;
        for i in 0..4 {
            v |= u32::from(self.u8()?) << (8 * i);
        }
        Ok(v)
    }
    /// Section 1: 7-bit groups, least significant first, at most 10 bytes,
    /// minimal.
    fn vint(&mut self) -> R<u64> {
        let mut v = 0u64;
        for i in 0..10 {
            let b = self.u8()?;
            if i == 9 && b > 1 {
                return Err("vint beyond 64 bits".into());
            }
            v |= u64::from(b & 0x7F) << (7 * i);
            if b & 0x80 == 0 {
                if i > 0 && b == 0 {
                    return Err("non-minimal vint".into());
                }
                return Ok(v);
            }
        }
        Err("vint longer than 10 bytes".into())
    }
    fn take(&mut self, n: u64) -> R<&'a [u8]> {
        let n = usize::try_from(n).map_err(|_| "length")?;
        let s = self.b.get(self.pos..self.pos + n).ok_or("truncated")?;
        self.pos += n;
        Ok(s)
    }
}

fn frame_check(index: u64, frame: &[u8]) -> u32 {
    let mut v = index.to_le_bytes().to_vec();
    v.extend_from_slice(frame);
    crc32(&v)
}

/// Section 6: the range decoder.
struct RangeDecoder<'a> {
    s: &'a [u8],
    pos: usize,
    zeros: u32,
    range: u32,
    code: u32,
}

impl<'a> RangeDecoder<'a> {
    fn new(s: &'a [u8]) -> R<Self> {
        let mut d = RangeDecoder {
            s,
            pos: 0,
            zeros: 0,
            range: 0xFFFF_FFFF,
            code: 0,
        };
        for _ in 0..4 {
            d.code = (d.code << 8) | u32::from(d.next()?);
        }
        if d.code >= d.range {
            return Err("bad start".into());
        }
        Ok(d)
    }
    fn next(&mut self) -> R<u8> {
        if let Some(&b) = self.s.get(self.pos) {
            self.pos += 1;
            return Ok(b);
        }
        self.zeros += 1;
        if self.zeros > 4 {
            return Err("lane truncated".into());
        }
        Ok(0)
    }
    /// Decodes one symbol with frequencies `freq` (cumulative by index).
    fn symbol(&mut self, freq: &[u32]) -> R<usize> {
        let t: u32 = freq.iter().sum();
        let r = self.range / t;
        let target = (self.code / r).min(t - 1);
        let mut cum = 0;
        let mut s = 0;
        while !(cum <= target && target < cum + freq[s]) {
            cum += freq[s];
            s += 1;
        }
        self.code -= r * cum;
        if cum + freq[s] < t {
            self.range = r * freq[s];
        } else {
            self.range -= r * cum;
        }
        while self.range < 1 << 24 {
            self.range <<= 8;
            self.code = (self.code << 8) | u32::from(self.next()?);
        }
        if self.code >= self.range {
            return Err("code outside range".into());
        }
        Ok(s)
    }
    fn end(&self) -> R<()> {
        if self.zeros == 0 && self.pos < self.s.len() {
            return Err("lane not used up".into());
        }
        Ok(())
    }
}

/// Section 5.1.1: Elias gamma codes, most significant bit first.
struct Bits<'a> {
    b: &'a [u8],
    pos: usize,
}

impl Bits<'_> {
    fn bit(&mut self) -> R<u32> {
        let byte = *self.b.get(self.pos / 8).ok_or("table truncated")?;
        let v = (byte >> (7 - self.pos % 8)) & 1;
        self.pos += 1;
        Ok(u32::from(v))
    }
    fn gamma(&mut self, bound: u32) -> R<u32> {
        let bound_bits = 32 - bound.leading_zeros();
        let mut zeros = 0;
        while self.bit()? == 0 {
            zeros += 1;
            if zeros > bound_bits.saturating_sub(1) {
                return Err("gamma code too long".into());
            }
        }
        let mut v = 1u32;
        for _ in 0..zeros {
            v = (v << 1) | self.bit()?;
        }
        if v > bound {
            return Err("gamma value above bound".into());
        }
        Ok(v)
    }
}

fn static_table(table: &[u8], log2_cap: u64) -> R<Vec<u32>> {
    let mut b = Bits { b: table, pos: 0 };
    let k = b.gamma(17)? - 1;
    if u64::from(k) > log2_cap {
        return Err("table total too large".into());
    }
    let total = 1u32 << k;
    let a = b.gamma(65_536)?;
    if a != 256 {
        return Err("alphabet must be 256".into());
    }
    let p = b.gamma(a.min(total))?;
    let mut freq = vec![0u32; a as usize];
    let (mut next, mut acc) = (0u32, 0u32);
    for i in 0..p {
        let s = next + b.gamma(a - next)? - 1;
        if s >= a || a - s - 1 < p - i - 1 {
            return Err("symbol out of range".into());
        }
        let f = if i < p - 1 {
            b.gamma(total - acc - (p - i - 1))?
        } else {
            total - acc
        };
        if f == 0 {
            return Err("zero frequency".into());
        }
        freq[s as usize] = f;
        acc += f;
        next = s + 1;
    }
    if b.pos.div_ceil(8) != table.len() {
        return Err("table length differs".into());
    }
    while !b.pos.is_multiple_of(8) {
        if b.bit()? != 0 {
            return Err("padding bit set".into());
        }
    }
    Ok(freq)
}

/// Sections 5.1 and 5.3: `n - 1` lane lengths, then the lanes, the last
/// taking the rest of `payload`.
fn lane_decoders<'a>(p: &mut Bytes<'a>, payload: &'a [u8], n: usize) -> R<Vec<RangeDecoder<'a>>> {
    let mut lens = Vec::new();
    for _ in 0..n - 1 {
        lens.push(p.vint()?);
    }
    let mut lanes = Vec::new();
    for &l in &lens {
        lanes.push(RangeDecoder::new(p.take(l)?)?);
    }
    lanes.push(RangeDecoder::new(&payload[p.pos..])?);
    Ok(lanes)
}

fn decode_static(payload: &[u8], raw_len: usize, params: &[u64]) -> R<Vec<u8>> {
    let mut p = Bytes { b: payload, pos: 0 };
    let n = p.u8()? as usize;
    if n == 0 || n as u64 > params[0] {
        return Err("lane count".into());
    }
    let t = p.vint()?;
    let freq = static_table(p.take(t)?, params[1])?;
    let mut lanes = lane_decoders(&mut p, payload, n)?;
    let mut out = Vec::with_capacity(raw_len);
    for j in 0..raw_len {
        out.push(lanes[j % n].symbol(&freq)? as u8);
    }
    for l in &lanes {
        l.end()?;
    }
    Ok(out)
}

fn decode_stepwise(payload: &[u8], raw_len: usize, params: &[u64]) -> R<Vec<u8>> {
    let (inc, limit) = (params[0] as u32, params[1] as u32);
    let mut freq = vec![1u32; 256];
    let mut d = RangeDecoder::new(payload)?;
    let mut out = Vec::with_capacity(raw_len);
    for _ in 0..raw_len {
        let s = d.symbol(&freq)?;
        out.push(s as u8);
        if freq.iter().sum::<u32>() + 2 * inc > limit {
            for f in &mut freq {
                *f = f.div_ceil(2);
            }
        }
        freq[s] += inc;
    }
    d.end()?;
    Ok(out)
}

/// Section 5.3: the byte set.
fn byte_set(p: &mut Bytes<'_>) -> R<Vec<bool>> {
    let m = usize::from(p.u8()?) + 1;
    if m == 256 {
        return Ok(vec![true; 256]);
    }
    let mut set = vec![false; 256];
    if m <= 31 {
        let mut last = None;
        for _ in 0..m {
            let v = p.u8()?;
            if last.is_some_and(|l| v <= l) {
                return Err("byte set order".into());
            }
            set[usize::from(v)] = true;
            last = Some(v);
        }
    } else {
        let map = p.take(32)?;
        for v in 0..256 {
            set[v] = (map[v / 8] >> (v % 8)) & 1 == 1;
        }
        if set.iter().filter(|&&x| x).count() != m {
            return Err("byte set size".into());
        }
    }
    Ok(set)
}

/// Section 5.3: the table built from the counts.
fn refresh_table(counts: &[u64], set: &[bool], k: u32) -> Vec<u32> {
    let total = 1u64 << k;
    let m = set.iter().filter(|&&x| x).count() as u64;
    let s: u64 = (0..256).filter(|&v| set[v]).map(|v| counts[v]).sum();
    let mut f = vec![0u64; 256];
    if s == 0 {
        let mut extra = total % m;
        for v in 0..256 {
            if set[v] {
                f[v] = total / m + u64::from(extra > 0);
                extra = extra.saturating_sub(1);
            }
        }
    } else {
        let spare = total - m;
        let sh = 31 + s.ilog2() - spare.max(1).ilog2();
        let q = (u128::from(spare) << sh) / u128::from(s);
        for v in 0..256 {
            if set[v] {
                let x = (u128::from(counts[v]) * q + (1u128 << (sh - 1))) >> sh;
                f[v] = 1 + x as u64;
            }
        }
        let top = (0..256)
            .filter(|&v| set[v])
            .max_by_key(|&v| (counts[v], std::cmp::Reverse(v)))
            .unwrap();
        let sum: u64 = f.iter().sum();
        if sum <= total {
            f[top] += total - sum;
        } else {
            let mut e = sum - total;
            let first = e.min((f[top] - 1) / 2);
            f[top] -= first;
            e -= first;
            while e > 0 {
                for x in f.iter_mut() {
                    if e > 0 && *x > 1 {
                        *x -= 1;
                        e -= 1;
                    }
                }
            }
        }
    }
    f.iter().map(|&x| x as u32).collect()
}

fn decode_adaptive(payload: &[u8], raw_len: usize, params: &[u64]) -> R<Vec<u8>> {
    let (k, period, limit) = (params[1] as u32, params[2], params[3]);
    let mut p = Bytes { b: payload, pos: 0 };
    let n = p.u8()? as usize;
    if n == 0 || n as u64 > params[0] {
        return Err("lane count".into());
    }
    let set = byte_set(&mut p)?;
    let mut lanes = lane_decoders(&mut p, payload, n)?;
    let mut counts = vec![0u64; 256];
    let mut freq = refresh_table(&counts, &set, k);
    let (mut segment, mut left) = (32u64, 32u64);
    let mut out = Vec::with_capacity(raw_len);
    for j in 0..raw_len {
        let v = lanes[j % n].symbol(&freq)?;
        out.push(v as u8);
        counts[v] += 1;
        left -= 1;
        if left == 0 {
            while counts.iter().sum::<u64>() > limit {
                for c in counts.iter_mut() {
                    *c /= 2;
                }
            }
            freq = refresh_table(&counts, &set, k);
            segment = (2 * segment).min(period);
            left = segment;
        }
    }
    for l in &lanes {
        l.end()?;
    }
    Ok(out)
}

/// Sections 2 to 4.
fn decode_container(c: &[u8]) -> R<Vec<u8>> {
    let mut b = Bytes { b: c, pos: 0 };
    if b.take(4)? != [0xB7, 0x73, 0x72, 0x67] {
        return Err("magic".into());
    }
    if b.u8()? != 1 {
        return Err("version".into());
    }
    let id = b.vint()?;
    let block_size = b.vint()?;
    let count = b.u8()?;
    let mut params = Vec::new();
    for _ in 0..count {
        params.push(b.vint()?);
    }
    let check = crc32(&c[..b.pos]);
    if b.u32()? != check {
        return Err("header check".into());
    }
    let mut out = Vec::new();
    let mut index = 0u64;
    // Section 4.1: (record length, block size - raw length) of each block.
    let mut entries = Vec::new();
    loop {
        let start = b.pos;
        let kind = b.u8()?;
        let raw_len = if kind != 0 && kind != 3 {
            Some(b.vint()?)
        } else {
            None
        };
        match kind {
            0 | 3 => {
                let blocks = b.vint()?;
                let total = b.vint()?;
                let check = frame_check(index, &c[start..b.pos]);
                if b.u32()? != check || blocks != index || total != out.len() as u64 {
                    return Err("end record".into());
                }
                if kind == 3 {
                    for &(record_len, shortfall) in &entries {
                        if b.vint()? != record_len || b.vint()? != shortfall {
                            return Err("index entry".into());
                        }
                    }
                    let mut end_offset = 0u64;
                    for i in 0..8 {
                        end_offset |= u64::from(b.u8()?) << (8 * i);
                    }
                    if end_offset != start as u64 {
                        return Err("index end offset".into());
                    }
                    let check = crc32(&c[start..b.pos]);
                    if b.u32()? != check || b.take(4)? != [0x67, 0x72, 0x73, 0xB7] {
                        return Err("index check".into());
                    }
                }
                if b.pos != c.len() {
                    return Err("trailing bytes".into());
                }
                return Ok(out);
            }
            1 | 2 => {
                let raw_len = raw_len.unwrap();
                let payload_len = if kind == 2 { b.vint()? } else { raw_len };
                let raw_crc = b.u32()?;
                let payload_crc = if kind == 2 { Some(b.u32()?) } else { None };
                let check = frame_check(index, &c[start..b.pos]);
                if b.u32()? != check {
                    return Err("frame check".into());
                }
                if raw_len == 0 || raw_len > block_size {
                    return Err("raw length".into());
                }
                let payload = b.take(payload_len)?;
                let raw = match payload_crc {
                    None => payload.to_vec(),
                    Some(crc) => {
                        if payload_len >= raw_len || crc32(payload) != crc {
                            return Err("payload".into());
                        }
                        match id {
                            1 => decode_static(payload, raw_len as usize, &params)?,
                            2 => decode_stepwise(payload, raw_len as usize, &params)?,
                            5 => decode_adaptive(payload, raw_len as usize, &params)?,
                            _ => return Err("unknown preset".into()),
                        }
                    }
                };
                if crc32(&raw) != raw_crc {
                    return Err("raw checksum".into());
                }
                out.extend_from_slice(&raw);
                entries.push(((b.pos - start) as u64, block_size - raw_len));
                index += 1;
            }
            _ => return Err("kind".into()),
        }
    }
}

#[test]
fn bitwise_crc_matches_the_check_value() {
    // CRC catalogue check value of CRC-32: "123456789" -> 0xCBF43926
    // (from memory).
    assert_eq!(crc32(b"123456789"), 0xCBF4_3926);
}

/// The presets whose payloads docs/FORMAT.md specifies completely (the
/// context-mixing presets are defined by their reference implementation).
fn documented_presets() -> impl Iterator<Item = Preset> {
    // `adaptive` also at its extremes: a small total (rounding surplus and
    // deficit at most rebuilds), short segments, fast halving.
    let mut edge = Preset::from_name("adaptive").unwrap();
    edge.set_param("log2_total", 8).unwrap();
    edge.set_param("period", 32).unwrap();
    edge.set_param("limit", 256).unwrap();
    let mut wide = Preset::from_name("adaptive").unwrap();
    wide.set_param("log2_total", 16).unwrap();
    wide.set_param("lanes", 3).unwrap();
    // `stepwise` is kept for reading older containers; the crate still
    // writes it on request.
    let stepwise = Preset::from_id(2, &[24, 65_536]).unwrap();
    Preset::all()
        .filter(|p| matches!(p.name(), "static" | "adaptive"))
        .chain([edge, wide, stepwise])
}

#[test]
fn the_document_decodes_what_the_crate_writes() {
    let mut data = subrange::corpus::gauge_csv(41, 20_000);
    data.extend(subrange::corpus::random(42, 3000));
    data.extend(subrange::corpus::skewed(43, 9000));
    data.extend(subrange::corpus::text_like(44, 12_000));
    for preset in documented_presets() {
        for block_size in [16u64, 700, 5000, 1 << 20] {
            let mut o = Options::new();
            o.preset(preset).threads(1);
            o.block_size(block_size).unwrap();
            for len in [0, 1, 100, data.len()] {
                let packed = compress(&data[..len], &o).unwrap();
                let back = decode_container(&packed)
                    .unwrap_or_else(|e| panic!("{preset} block {block_size} len {len}: {e}"));
                assert_eq!(back, &data[..len]);
            }
        }
    }
}

#[test]
fn the_document_and_the_crate_reject_the_same_flips() {
    let data = subrange::corpus::gauge_csv(45, 1500);
    for preset in documented_presets() {
        let mut o = Options::new();
        o.preset(preset).threads(1);
        o.block_size(600).unwrap();
        let packed = compress(&data, &o).unwrap();
        let mut bytes = packed.clone();
        for bit in (0..packed.len() * 8).step_by(7) {
            bytes[bit / 8] ^= 1 << (bit % 8);
            assert!(decode_container(&bytes).is_err(), "bit {bit}");
            assert!(subrange::decompress(&bytes).is_err(), "bit {bit}");
            bytes[bit / 8] ^= 1 << (bit % 8);
        }
    }
}

/// A container written before the `precise` parameter existed (its header
/// stops after the older parameters) decodes with the coarse binary step,
/// as it was written.
#[test]
fn headers_without_later_parameters_decode_as_written() {
    let data = subrange::corpus::gauge_csv(46, 20_000);
    for name in ["order2", "mix"] {
        let mut preset = Preset::from_name(name).unwrap();
        preset.set_param("precise", 0).unwrap();
        let mut o = Options::new();
        o.preset(preset).threads(1);
        let packed = compress(&data, &o).unwrap();
        // Rewrite the header without its last parameter (which is 0).
        let mut b = Bytes { b: &packed, pos: 5 };
        b.vint().unwrap(); // preset id
        b.vint().unwrap(); // block size
        let count_at = b.pos;
        let count = b.u8().unwrap();
        for _ in 0..count - 1 {
            b.vint().unwrap();
        }
        let last_at = b.pos;
        assert_eq!(b.vint().unwrap(), 0);
        let crc_at = b.pos;
        let mut old = packed[..last_at].to_vec();
        old[count_at] = count - 1;
        let crc = crc32(&old);
        old.extend_from_slice(&crc.to_le_bytes());
        old.extend_from_slice(&packed[crc_at + 4..]);
        assert_eq!(subrange::decompress(&old).unwrap(), data, "{name}");
        let header = subrange::format::inspect(&old[..]).unwrap().header;
        assert_eq!(header.preset.param("precise"), Some(0));
        // With the precise step the same data comes out no larger.
        let fine = compress(
            &data,
            Options::new().preset(Preset::from_name(name).unwrap()),
        )
        .unwrap();
        assert!(
            fine.len() <= packed.len(),
            "{name}: {} vs {}",
            fine.len(),
            packed.len()
        );
    }
}

/// Section 4.1: the writer adds a block index to containers of two or more
/// blocks unless told not to, and the document's reading of it agrees.
#[test]
fn the_document_reads_the_block_index() {
    use subrange::format::{inspect, IndexPolicy};
    let data = subrange::corpus::gauge_csv(47, 30_000);
    for policy in [IndexPolicy::Auto, IndexPolicy::Always, IndexPolicy::Never] {
        for block_size in [16u64, 1000, 1 << 20] {
            let mut o = Options::new();
            o.threads(1).block_index(policy);
            o.block_size(block_size).unwrap();
            for len in [0, 1, 1000, data.len()] {
                let packed = compress(&data[..len], &o).unwrap();
                let end = inspect(&packed[..]).unwrap().end.unwrap();
                let expect = match policy {
                    IndexPolicy::Always => true,
                    IndexPolicy::Never => false,
                    _ => end.block_count > 1,
                };
                assert_eq!(end.index_len > 0, expect, "{policy:?} {block_size} {len}");
                assert_eq!(packed[end.offset as usize] == 3, expect);
                assert_eq!(end.container_len, packed.len() as u64);
                assert_eq!(decode_container(&packed).unwrap(), &data[..len]);
            }
        }
    }
}
