//! The `order2` preset's block codec: the order-2 context model of
//! [`model::cm`](crate::model::cm), restarted at every block (the payload
//! and memory rules the context-mixing presets share are in
//! [`engine`](super::engine)).
//!
//! Header parameters: `order1` (0 or 1: new order-2 contexts inherit
//! order-1 predictions), `limit` (counter limit, 1 ..= 1023), `precise`
//! (the binary step).
//!
//! Invariant: the typed parameters are exactly the engine's
//! [`Order2Params`], checked by the engine's own rules.

use alloc::vec::Vec;

use crate::coder::IdealCost;
use crate::error::Result;
use crate::model::cm::{
    decode_order2, encode_order2, encode_order2_or_store, ideal_cost_order2, Order2Params,
};
use crate::preset::codec::Codec;
use crate::preset::engine::{block_len, copy_exact, PRECISE};
use crate::preset::spec::{ParamSpec, Values};

/// Whether new contexts start from the order-1 prediction.
const ORDER1: ParamSpec = ParamSpec {
    name: "order1",
    default: 1,
    min: 0,
    max: 1,
    help: "new order-2 contexts start from the order-1 prediction (1) or from even odds (0)",
    absent: None,
};

/// The counter limit.
const LIMIT: ParamSpec = ParamSpec {
    name: "limit",
    default: 60,
    min: 1,
    max: 1023,
    help: "counter limit: higher suits long stationary data, lower adapts faster",
    absent: None,
};

/// The `order2` preset.
pub(crate) struct Order2;

impl Codec for Order2 {
    type Params = Order2Params;
    const ID: u32 = 3;
    const NAME: &'static str = "order2";
    const SUMMARY: &'static str = "order-2 context model, bit by bit; fast, near order-2 entropy";
    const PARAMS: &'static [ParamSpec] = &[ORDER1, LIMIT, PRECISE];

    // The engine's parameter struct is non-exhaustive: start from its
    // defaults and set every field the header carries.
    #[allow(clippy::field_reassign_with_default)]
    fn parse(values: Values<'_>) -> Result<Order2Params> {
        let mut p = Order2Params::default();
        p.order1 = values.flag(&ORDER1)?;
        p.limit = u16::try_from(values.get(&LIMIT)?)
            .map_err(|_| crate::Error::invalid_parameter("limit", "must be in 1 ..= 1023"))?;
        p.precise = values.flag(&PRECISE)?;
        p.validate()?;
        Ok(p)
    }

    fn encode(raw: &[u8], p: &Order2Params) -> Result<Vec<u8>> {
        encode_order2(raw, p)
    }

    /// `None` when the block's first sixteenth does not shrink (see
    /// [`encode_order2_or_store`]).
    fn encode_or_store(raw: &[u8], p: &Order2Params) -> Result<Option<Vec<u8>>> {
        encode_order2_or_store(raw, p)
    }

    fn decode(payload: &[u8], p: &Order2Params, out: &mut [u8]) -> Result<()> {
        copy_exact(&decode_order2(payload, out.len(), p)?, out)
    }

    fn ideal_cost(raw: &[u8], p: &Order2Params) -> Result<IdealCost> {
        ideal_cost_order2(raw, p)
    }

    /// The engine's tables (its own accounting) and the block it decodes
    /// into before the copy into the caller's buffer.
    fn working_memory(p: &Order2Params, block_size: u64) -> u64 {
        p.memory_needed_for(block_len(block_size))
            .saturating_add(block_size)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse(values: &[u32]) -> Result<Order2Params> {
        Order2::parse(Values::new(Order2::PARAMS, values))
    }

    #[test]
    fn header_defaults_are_the_engine_defaults() {
        let defaults: Vec<u32> = Order2::PARAMS.iter().map(|s| s.default).collect();
        assert_eq!(parse(&defaults).unwrap(), Order2Params::default());
    }

    #[test]
    fn bad_parameters_are_typed_errors() {
        assert!(parse(&[1, 0, 1]).is_err());
        assert!(parse(&[1, 60, 2]).is_err());
        assert!(parse(&[2, 60, 1]).is_err());
    }
}
