//! The `stepwise` preset's block codec: an adaptive order-0 model over the
//! 256 byte values, updated after every byte, started afresh at every block,
//! one coder lane.
//!
//! Every byte value starts with count 1; after each coded byte its count
//! grows by `increment`, and when the total would pass `limit` all counts are
//! halved first (rounding up), as [`StepwiseModel`] does with its escape
//! turned off. Nothing but the parameters is needed to rebuild the model, so
//! the payload is one range-coded stream.
//!
//! Invariant: the decoder consumes the payload exactly; input left over after
//! the block's last byte is an error.

#[cfg(test)]
use alloc::vec;
use alloc::vec::Vec;

use crate::coder::{Decoder, Encoder};
use crate::error::Result;
use crate::model::{StepwiseModel, StepwiseParams};

fn model(params: &[u32]) -> Result<StepwiseModel> {
    let p = StepwiseParams {
        increment: params[0],
        limit: params[1],
        escape: Some(false),
    };
    StepwiseModel::with_params(256, p)
}

/// Checks that `increment` and `limit` fit together.
pub(crate) fn check(params: &[u32]) -> Result<()> {
    model(params).map(drop).map_err(|_| {
        crate::Error::invalid_parameter("limit", "must be at least 257 + 4 x increment")
    })
}

pub(crate) fn encode(raw: &[u8], params: &[u32]) -> Result<Vec<u8>> {
    let mut m = model(params)?;
    let mut enc = Encoder::with_sink(Vec::with_capacity(raw.len() / 2 + 16));
    for &b in raw {
        enc.encode(&mut m, u32::from(b))?;
    }
    enc.finish()
}

pub(crate) fn decode(payload: &[u8], params: &[u32], out: &mut [u8]) -> Result<()> {
    let mut m = model(params)?;
    let mut dec = Decoder::new(payload)?;
    for b in out.iter_mut() {
        *b = dec.decode(&mut m)? as u8;
    }
    dec.finish()?;
    Ok(())
}

/// The ideal cost of a block under this preset's adaptive model.
pub(crate) fn ideal(raw: &[u8], params: &[u32]) -> Result<crate::coder::IdealCost> {
    let mut m = model(params)?;
    let mut cost = crate::coder::IdealCost::new();
    for &b in raw {
        let s = u32::from(b);
        cost.add(m.frequency(s), crate::model::Model::total(&m));
        crate::model::Model::update(&mut m, s);
    }
    Ok(cost)
}

/// 257 counts in a Fenwick tree plus bookkeeping, rounded up.
pub(crate) fn model_memory() -> u64 {
    4096
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn trailing_payload_bytes_are_rejected() {
        let raw = b"flow 1123 l/s, temperature 9.4 C".to_vec();
        let mut payload = encode(&raw, &[24, 65_536]).unwrap();
        let mut out = vec![0u8; raw.len()];
        decode(&payload, &[24, 65_536], &mut out).unwrap();
        assert_eq!(out, raw);
        payload.extend_from_slice(&[1, 2, 3, 4, 5, 6]);
        assert!(decode(&payload, &[24, 65_536], &mut out).is_err());
    }
}
