//! The `order2` and `mix` presets' block codecs: the context-mixing engines
//! of [`model::cm`](crate::model::cm), restarted at every block.
//!
//! A block's payload is the engine's bare coded stream; the raw length comes
//! from the block frame and the parameters from the container header, so
//! nothing else is stored. The decoder checks the engine's memory need
//! against the reader's limit through [`Preset::memory_needed`](super::Preset::memory_needed)
//! before any block is decoded.
//!
//! Header parameters (all small integers, validated by the engines):
//! - `order2`: `order1` (0 or 1: new order-2 contexts inherit order-1
//!   predictions), `limit` (counter limit, 1 ..= 1023);
//! - `mix`: `memory_mib` (context table memory, a power of two 1 ..= 1024
//!   MiB), `orders` (bit k enables order k + 1), `word`, `column`, `matcher`
//!   (0 or 1 each), `rate` (mixer learning rate).
//!
//! Invariant: the engines allocate exactly their declared tables plus
//! `raw_len` output bytes, whatever the payload says.

use alloc::vec::Vec;

use crate::coder::IdealCost;
use crate::error::Result;
use crate::model::cm::{
    decode_mix, decode_order2, encode_mix, encode_order2, ideal_cost_mix, ideal_cost_order2,
    MixParams, Order2Params,
};

fn flag(v: u32, name: &'static str) -> Result<bool> {
    match v {
        0 => Ok(false),
        1 => Ok(true),
        _ => Err(crate::Error::invalid_parameter(name, "must be 0 or 1")),
    }
}

// The engines' parameter structs are non-exhaustive: start from their
// defaults and set every field the header carries.
#[allow(clippy::field_reassign_with_default)]
pub(crate) fn order2_params(params: &[u32]) -> Result<Order2Params> {
    let mut p = Order2Params::default();
    p.order1 = flag(params[0], "order1")?;
    p.limit = u16::try_from(params[1])
        .map_err(|_| crate::Error::invalid_parameter("limit", "must be in 1 ..= 1023"))?;
    p.precise = flag(params[2], "precise")?;
    p.validate()?;
    Ok(p)
}

#[allow(clippy::field_reassign_with_default)]
pub(crate) fn mix_params(params: &[u32]) -> Result<MixParams> {
    let mib = params[0];
    if !mib.is_power_of_two() || mib > 1 << MixParams::MAX_MEM_LOG2 {
        return Err(crate::Error::invalid_parameter(
            "memory_mib",
            "must be a power of two in 1 ..= 1024",
        ));
    }
    let mut p = MixParams::default();
    p.mem_log2 = mib.trailing_zeros() as u8;
    p.orders = u8::try_from(params[1]).map_err(|_| {
        crate::Error::invalid_parameter("orders", "must be a bit mask of orders 1 to 6")
    })?;
    p.word = flag(params[2], "word")?;
    p.column = flag(params[3], "column")?;
    p.matcher = flag(params[4], "matcher")?;
    p.rate = u8::try_from(params[5])
        .map_err(|_| crate::Error::invalid_parameter("rate", "out of range"))?;
    p.precise = flag(params[6], "precise")?;
    p.validate()?;
    Ok(p)
}

pub(crate) fn encode_o2(raw: &[u8], params: &[u32]) -> Result<Vec<u8>> {
    encode_order2(raw, &order2_params(params)?)
}

pub(crate) fn decode_o2(payload: &[u8], params: &[u32], out: &mut [u8]) -> Result<()> {
    let back = decode_order2(payload, out.len(), &order2_params(params)?)?;
    copy_exact(&back, out)
}

pub(crate) fn encode_mx(raw: &[u8], params: &[u32]) -> Result<Vec<u8>> {
    encode_mix(raw, &mix_params(params)?)
}

/// As [`encode_o2`]; `None` when the block does not shrink (see
/// `encode_order2_or_store`).
pub(crate) fn encode_o2_or_store(raw: &[u8], params: &[u32]) -> Result<Option<Vec<u8>>> {
    crate::model::cm::encode_order2_or_store(raw, &order2_params(params)?)
}

/// As [`encode_mx`]; `None` when the block does not shrink (see
/// `encode_mix_or_store`).
pub(crate) fn encode_mx_or_store(raw: &[u8], params: &[u32]) -> Result<Option<Vec<u8>>> {
    crate::model::cm::encode_mix_or_store(raw, &mix_params(params)?)
}

pub(crate) fn decode_mx(payload: &[u8], params: &[u32], out: &mut [u8]) -> Result<()> {
    let back = decode_mix(payload, out.len(), &mix_params(params)?)?;
    copy_exact(&back, out)
}

pub(crate) fn ideal_o2(raw: &[u8], params: &[u32]) -> Result<IdealCost> {
    ideal_cost_order2(raw, &order2_params(params)?)
}

pub(crate) fn ideal_mx(raw: &[u8], params: &[u32]) -> Result<IdealCost> {
    ideal_cost_mix(raw, &mix_params(params)?)
}

fn copy_exact(back: &[u8], out: &mut [u8]) -> Result<()> {
    if back.len() != out.len() {
        return Err(crate::Error::corrupt_stream(
            0,
            "engine returned a block of the wrong length",
        ));
    }
    out.copy_from_slice(back);
    Ok(())
}

/// Working memory for `order2` beyond the block buffers: the engine's
/// tables (its own accounting) and the block it decodes into before the copy
/// into the caller's buffer.
pub(crate) fn order2_memory(params: &[u32], block_size: u64) -> u64 {
    order2_params(params).map_or(u64::MAX, |p| {
        let len = usize::try_from(block_size).unwrap_or(usize::MAX);
        p.memory_needed_for(len).saturating_add(block_size)
    })
}

/// Working memory for `mix`, as for [`order2_memory`].
pub(crate) fn mix_memory(params: &[u32], block_size: u64) -> u64 {
    mix_params(params).map_or(u64::MAX, |p| {
        let len = usize::try_from(block_size).unwrap_or(usize::MAX);
        p.memory_needed_for(len).saturating_add(block_size)
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::preset::PresetKind;

    fn defaults(kind: PresetKind) -> Vec<u32> {
        kind.param_specs().iter().map(|p| p.default).collect()
    }

    #[test]
    fn header_defaults_are_the_engine_defaults() {
        assert_eq!(
            order2_params(&defaults(PresetKind::Order2)).unwrap(),
            Order2Params::default()
        );
        assert_eq!(
            mix_params(&defaults(PresetKind::Mix)).unwrap(),
            MixParams::default()
        );
    }

    #[test]
    fn bad_parameters_are_typed_errors() {
        assert!(mix_params(&[3, 0b10_1011, 1, 1, 1, 6, 1]).is_err()); // 3 MiB: not a power of two
        assert!(mix_params(&[32, 0b10_1011, 2, 1, 1, 6, 1]).is_err());
        assert!(mix_params(&[32, 0b10_1011, 1, 1, 1, 6, 2]).is_err());
        assert!(order2_params(&[1, 0, 1]).is_err());
        assert!(order2_params(&[1, 60, 2]).is_err());
        assert_eq!(mix_memory(&[3, 0, 0, 0, 0, 0, 1], 1), u64::MAX);
    }
}
