//! The `mix` preset's block codec: the mixing engine of
//! [`model::cm`](crate::model::cm), restarted at every block (the payload
//! and memory rules the context-mixing presets share are in
//! [`engine`](super::engine)).
//!
//! Header parameters: `memory_mib` (context table memory, a power of two
//! 1 ..= 1024 MiB), `orders` (bit k enables order k + 1), `word`, `column`,
//! `matcher` (0 or 1 each), `rate` (mixer learning rate), `precise` (the
//! binary step).
//!
//! Invariant: the typed parameters are exactly the engine's [`MixParams`],
//! checked by the engine's own rules.

use alloc::vec::Vec;

use crate::coder::IdealCost;
use crate::error::Result;
use crate::model::cm::{decode_mix, encode_mix, encode_mix_or_store, ideal_cost_mix, MixParams};
use crate::preset::codec::Codec;
use crate::preset::engine::{block_len, copy_exact, mem_log2, PRECISE};
use crate::preset::spec::{ParamSpec, Values};

/// The context table memory.
const MEMORY_MIB: ParamSpec = ParamSpec {
    name: "memory_mib",
    default: 4,
    min: 1,
    max: 1024,
    help: "context table memory in MiB, a power of two (the decoder needs the same)",
    absent: None,
};

/// The context orders in use.
const ORDERS: ParamSpec = ParamSpec {
    name: "orders",
    default: 0b00_0111,
    min: 0,
    max: 0b11_1111,
    help: "context orders in use: bit k enables order k + 1 (default orders 1, 2, 3)",
    absent: None,
};

/// The word context.
const WORD: ParamSpec = ParamSpec {
    name: "word",
    default: 1,
    min: 0,
    max: 1,
    help: "word context for text (1 on, 0 off)",
    absent: None,
};

/// The column context.
const COLUMN: ParamSpec = ParamSpec {
    name: "column",
    default: 1,
    min: 0,
    max: 1,
    help: "column context for line-structured records (1 on, 0 off)",
    absent: None,
};

/// The match model.
const MATCHER: ParamSpec = ParamSpec {
    name: "matcher",
    default: 1,
    min: 0,
    max: 1,
    help: "match model predicting from the longest earlier match (1 on, 0 off)",
    absent: None,
};

/// The mixer's learning rate.
const RATE: ParamSpec = ParamSpec {
    name: "rate",
    default: 6,
    min: 1,
    max: 64,
    help: "mixer learning rate",
    absent: None,
};

/// The `mix` preset.
pub(crate) struct Mix;

impl Codec for Mix {
    type Params = MixParams;
    const ID: u32 = 4;
    const NAME: &'static str = "mix";
    const SUMMARY: &'static str =
        "orders 1-6, word, column and match models, logistically mixed; strong, slow";
    const PARAMS: &'static [ParamSpec] =
        &[MEMORY_MIB, ORDERS, WORD, COLUMN, MATCHER, RATE, PRECISE];

    // The engine's parameter struct is non-exhaustive: start from its
    // defaults and set every field the header carries.
    #[allow(clippy::field_reassign_with_default)]
    fn parse(values: Values<'_>) -> Result<MixParams> {
        let mem_log2 = mem_log2(values.get(&MEMORY_MIB)?, MixParams::MAX_MEM_LOG2)?;
        let mut p = MixParams::default();
        p.mem_log2 = mem_log2;
        p.orders = u8::try_from(values.get(&ORDERS)?).map_err(|_| {
            crate::Error::invalid_parameter("orders", "must be a bit mask of orders 1 to 6")
        })?;
        p.word = values.flag(&WORD)?;
        p.column = values.flag(&COLUMN)?;
        p.matcher = values.flag(&MATCHER)?;
        p.rate = u8::try_from(values.get(&RATE)?)
            .map_err(|_| crate::Error::invalid_parameter("rate", "out of range"))?;
        p.precise = values.flag(&PRECISE)?;
        p.validate()?;
        Ok(p)
    }

    fn encode(raw: &[u8], p: &MixParams) -> Result<Vec<u8>> {
        encode_mix(raw, p)
    }

    /// `None` when the block's first sixteenth does not shrink (see
    /// [`encode_mix_or_store`]).
    fn encode_or_store(raw: &[u8], p: &MixParams) -> Result<Option<Vec<u8>>> {
        encode_mix_or_store(raw, p)
    }

    fn decode(payload: &[u8], p: &MixParams, out: &mut [u8]) -> Result<()> {
        copy_exact(&decode_mix(payload, out.len(), p)?, out)
    }

    fn ideal_cost(raw: &[u8], p: &MixParams) -> Result<IdealCost> {
        ideal_cost_mix(raw, p)
    }

    /// The engine's tables (its own accounting) and the block it decodes
    /// into before the copy into the caller's buffer.
    fn working_memory(p: &MixParams, block_size: u64) -> u64 {
        p.memory_needed_for(block_len(block_size))
            .saturating_add(block_size)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::preset::codec::OpsOf;

    fn parse(values: &[u32]) -> Result<MixParams> {
        Mix::parse(Values::new(Mix::PARAMS, values))
    }

    #[test]
    fn header_defaults_are_the_engine_defaults() {
        let defaults: Vec<u32> = Mix::PARAMS.iter().map(|s| s.default).collect();
        assert_eq!(parse(&defaults).unwrap(), MixParams::default());
    }

    #[test]
    fn bad_parameters_are_typed_errors() {
        assert!(parse(&[3, 0b10_1011, 1, 1, 1, 6, 1]).is_err()); // 3 MiB: not a power of two
        assert!(parse(&[32, 0b10_1011, 2, 1, 1, 6, 1]).is_err());
        assert!(parse(&[32, 0b10_1011, 1, 1, 1, 6, 2]).is_err());
        let ops = OpsOf::<Mix>::OPS;
        assert_eq!(ops.working_memory(&[3, 0, 0, 0, 0, 0, 1], 1), u64::MAX);
    }
}
