//! The `history` preset's block codec: the history engine of
//! [`model::cm`](crate::model::cm), restarted at every block.
//!
//! A block's payload is the engine's flags byte and coded stream; the raw
//! length comes from the block frame and the parameters from the header.
//! Header parameters: `memory_mib` (context slot memory, a power of two
//! 1 ..= 1024 MiB), `x86` (0 or 1: detect x86 code per block and transform
//! its call targets), `rate` (the mixer's settled learning rate).
//!
//! Invariant: decoding allocates the engine's declared tables and nothing
//! else beside the caller's buffers, whatever the payload says.

use alloc::vec::Vec;

use crate::coder::IdealCost;
use crate::error::Result;
use crate::model::cm::{decode_history, encode_history, ideal_cost_history, HistoryParams};

// The engine's parameter struct is non-exhaustive: start from its defaults
// and set every field the header carries.
#[allow(clippy::field_reassign_with_default)]
pub(crate) fn params(values: &[u32]) -> Result<HistoryParams> {
    let mib = values[0];
    if !mib.is_power_of_two() || mib > 1 << HistoryParams::MAX_MEM_LOG2 {
        return Err(crate::Error::invalid_parameter(
            "memory_mib",
            "must be a power of two in 1 ..= 1024",
        ));
    }
    let mut p = HistoryParams::default();
    p.mem_log2 = mib.trailing_zeros() as u8;
    p.x86 = match values[1] {
        0 => false,
        1 => true,
        _ => return Err(crate::Error::invalid_parameter("x86", "must be 0 or 1")),
    };
    p.rate = u8::try_from(values[2])
        .map_err(|_| crate::Error::invalid_parameter("rate", "must be in 1 ..= 255"))?;
    p.validate()?;
    Ok(p)
}

pub(crate) fn encode(raw: &[u8], values: &[u32]) -> Result<Vec<u8>> {
    encode_history(raw, &params(values)?)
}

/// As [`encode`]; `None` when the block does not shrink.
#[cfg_attr(not(feature = "std"), allow(dead_code))]
pub(crate) fn encode_or_store(raw: &[u8], values: &[u32]) -> Result<Option<Vec<u8>>> {
    crate::model::cm::encode_history_or_store(raw, &params(values)?)
}

pub(crate) fn decode(payload: &[u8], values: &[u32], out: &mut [u8]) -> Result<()> {
    decode_history(payload, out, &params(values)?)
}

pub(crate) fn ideal(raw: &[u8], values: &[u32]) -> Result<IdealCost> {
    ideal_cost_history(raw, &params(values)?)
}

/// Working memory beyond the block buffers: the engine's tables (the
/// decoder codes into the output buffer itself).
pub(crate) fn memory(values: &[u32], block_size: u64) -> u64 {
    params(values).map_or(u64::MAX, |p| {
        p.memory_needed_for(usize::try_from(block_size).unwrap_or(usize::MAX))
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::preset::PresetKind;

    #[test]
    fn header_defaults_are_the_engine_defaults() {
        let d: Vec<u32> = PresetKind::History
            .param_specs()
            .iter()
            .map(|p| p.default)
            .collect();
        assert_eq!(params(&d).unwrap(), HistoryParams::default());
        assert!(params(&[3, 1, 32]).is_err());
        assert!(params(&[128, 2, 32]).is_err());
        assert!(params(&[128, 1, 0]).is_err());
        assert_eq!(memory(&[3, 1, 32], 10), u64::MAX);
    }

    #[test]
    fn default_containers_decode_within_the_default_limit() {
        let p = crate::preset::Preset::new(PresetKind::History);
        let need = p.memory_needed(p.default_block_size());
        let limit = crate::format::DecodeLimits::default().memory_limit();
        assert!(need <= limit, "{need} > {limit}");
        assert!(need > 200 << 20, "{need}");
        // Short blocks take little.
        assert!(p.memory_needed(4096) < 4 << 20, "{}", p.memory_needed(4096));
    }
}
