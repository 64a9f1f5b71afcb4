//! The `history` preset's block codec: the history engine of
//! [`model::cm`](crate::model::cm), restarted at every block (the payload
//! and memory rules the context-mixing presets share are in
//! [`engine`](super::engine)).
//!
//! A block's payload is the engine's flags byte and coded stream. Header
//! parameters: `memory_mib` (context slot memory, a power of two 1 ..= 1024
//! MiB), `x86` (0 or 1: detect x86 code per block and transform its call
//! targets), `rate` (the mixer's settled learning rate).
//!
//! Invariant: decoding allocates the engine's declared tables and nothing
//! else beside the caller's buffers, whatever the payload says.

use alloc::vec::Vec;

use crate::coder::IdealCost;
use crate::error::Result;
use crate::model::cm::{
    decode_history, encode_history, encode_history_or_store, ideal_cost_history, HistoryParams,
};
use crate::preset::codec::Codec;
use crate::preset::engine::{block_len, mem_log2};
use crate::preset::spec::{ParamSpec, Values};

/// The most context slot memory.
const MEMORY_MIB: ParamSpec = ParamSpec {
    name: "memory_mib",
    default: 128,
    min: 1,
    max: 1024,
    help: "most context slot memory in MiB, a power of two (a block of n bytes uses at most 256 n)",
    absent: None,
};

/// The x86 code detection.
const X86: ParamSpec = ParamSpec {
    name: "x86",
    default: 1,
    min: 0,
    max: 1,
    help: "detect x86 code per block and code its call/jump targets as absolute (1), or never (0)",
    absent: None,
};

/// The settled mixer learning rate.
const RATE: ParamSpec = ParamSpec {
    name: "rate",
    default: 32,
    min: 1,
    max: 255,
    help: "settled mixer learning rate (lower: steadier on stationary data)",
    absent: None,
};

/// The `history` preset.
pub(crate) struct History;

impl Codec for History {
    type Params = HistoryParams;
    const ID: u32 = 6;
    const NAME: &'static str = "history";
    const SUMMARY: &'static str =
        "bit-history contexts, two-layer mixing, x86 and record models, 32 MiB blocks; smallest, slowest";
    const PARAMS: &'static [ParamSpec] = &[MEMORY_MIB, X86, RATE];
    /// Whole inputs up to 32 MiB, as the models keep learning over the
    /// block; one block codes on one core.
    const BLOCK_SIZE: u64 = 32 << 20;

    // The engine's parameter struct is non-exhaustive: start from its
    // defaults and set every field the header carries.
    #[allow(clippy::field_reassign_with_default)]
    fn parse(values: Values<'_>) -> Result<HistoryParams> {
        let mem_log2 = mem_log2(values.get(&MEMORY_MIB)?, HistoryParams::MAX_MEM_LOG2)?;
        let mut p = HistoryParams::default();
        p.mem_log2 = mem_log2;
        p.x86 = values.flag(&X86)?;
        p.rate = u8::try_from(values.get(&RATE)?)
            .map_err(|_| crate::Error::invalid_parameter("rate", "must be in 1 ..= 255"))?;
        p.validate()?;
        Ok(p)
    }

    fn encode(raw: &[u8], p: &HistoryParams) -> Result<Vec<u8>> {
        encode_history(raw, p)
    }

    /// `None` when the block's first sixteenth does not shrink.
    fn encode_or_store(raw: &[u8], p: &HistoryParams) -> Result<Option<Vec<u8>>> {
        encode_history_or_store(raw, p)
    }

    fn decode(payload: &[u8], p: &HistoryParams, out: &mut [u8]) -> Result<()> {
        decode_history(payload, out, p)
    }

    fn ideal_cost(raw: &[u8], p: &HistoryParams) -> Result<IdealCost> {
        ideal_cost_history(raw, p)
    }

    /// The engine's tables (the decoder codes into the output buffer
    /// itself).
    fn working_memory(p: &HistoryParams, block_size: u64) -> u64 {
        p.memory_needed_for(block_len(block_size))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::preset::codec::OpsOf;

    fn parse(values: &[u32]) -> Result<HistoryParams> {
        History::parse(Values::new(History::PARAMS, values))
    }

    #[test]
    fn header_defaults_are_the_engine_defaults() {
        let defaults: Vec<u32> = History::PARAMS.iter().map(|s| s.default).collect();
        assert_eq!(parse(&defaults).unwrap(), HistoryParams::default());
        assert!(parse(&[3, 1, 32]).is_err());
        assert!(parse(&[128, 2, 32]).is_err());
        assert!(parse(&[128, 1, 0]).is_err());
        let ops = OpsOf::<History>::OPS;
        assert_eq!(ops.working_memory(&[3, 1, 32], 10), u64::MAX);
    }
}
