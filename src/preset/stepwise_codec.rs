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

use alloc::vec::Vec;

use crate::coder::{Decoder, Encoder, IdealCost};
use crate::error::Result;
use crate::model::{Model, StepwiseModel, StepwiseParams};
use crate::preset::codec::Codec;
use crate::preset::spec::{ParamSpec, Values};

/// The count increment.
const INCREMENT: ParamSpec = ParamSpec {
    name: "increment",
    default: 24,
    min: 1,
    max: 8192,
    help: "added to a byte's count each time it is coded",
    absent: None,
};

/// The total at which counts are halved.
const LIMIT: ParamSpec = ParamSpec {
    name: "limit",
    default: 65_536,
    min: 261,
    max: 65_536,
    help: "counts are halved when the total would pass this (at least 257 + 4 x increment)",
    absent: None,
};

/// The `stepwise` preset.
pub(crate) struct Stepwise;

impl Codec for Stepwise {
    /// The model's increment and limit, its escape turned off.
    type Params = StepwiseParams;
    const ID: u32 = 2;
    const NAME: &'static str = "stepwise";
    const SUMMARY: &'static str =
        "adaptive order-0 model updated after every byte, one lane (read only)";
    const PARAMS: &'static [ParamSpec] = &[INCREMENT, LIMIT];
    const OFFERED: bool = false;

    fn parse(values: Values<'_>) -> Result<StepwiseParams> {
        Ok(StepwiseParams {
            increment: values.get(&INCREMENT)?,
            limit: values.get(&LIMIT)?,
            escape: Some(false),
        })
    }

    /// `increment` and `limit` fit together.
    fn check(p: &StepwiseParams) -> Result<()> {
        model(p).map(drop).map_err(|_| {
            crate::Error::invalid_parameter("limit", "must be at least 257 + 4 x increment")
        })
    }

    fn encode(raw: &[u8], p: &StepwiseParams) -> Result<Vec<u8>> {
        let mut m = model(p)?;
        let mut enc = Encoder::with_sink(Vec::with_capacity(raw.len() / 2 + 16));
        for &b in raw {
            enc.encode(&mut m, u32::from(b))?;
        }
        enc.finish()
    }

    fn decode(payload: &[u8], p: &StepwiseParams, out: &mut [u8]) -> Result<()> {
        let mut m = model(p)?;
        let mut dec = Decoder::new(payload)?;
        for b in out.iter_mut() {
            *b = dec.decode(&mut m)? as u8;
        }
        dec.finish()?;
        Ok(())
    }

    fn ideal_cost(raw: &[u8], p: &StepwiseParams) -> Result<IdealCost> {
        let mut m = model(p)?;
        let mut cost = IdealCost::new();
        for &b in raw {
            let s = u32::from(b);
            cost.add(m.frequency(s), Model::total(&m));
            Model::update(&mut m, s);
        }
        Ok(cost)
    }

    /// 257 counts in a Fenwick tree plus bookkeeping, rounded up.
    fn working_memory(_: &StepwiseParams, _: u64) -> u64 {
        4096
    }
}

fn model(p: &StepwiseParams) -> Result<StepwiseModel> {
    StepwiseModel::with_params(256, *p)
}

#[cfg(test)]
mod tests {
    use super::*;
    use alloc::vec;

    #[test]
    fn trailing_payload_bytes_are_rejected() {
        let raw = b"flow 1123 l/s, temperature 9.4 C".to_vec();
        let p = Stepwise::parse(Values::new(Stepwise::PARAMS, &[24, 65_536])).unwrap();
        let mut payload = Stepwise::encode(&raw, &p).unwrap();
        let mut out = vec![0u8; raw.len()];
        Stepwise::decode(&payload, &p, &mut out).unwrap();
        assert_eq!(out, raw);
        payload.extend_from_slice(&[1, 2, 3, 4, 5, 6]);
        assert!(Stepwise::decode(&payload, &p, &mut out).is_err());
    }
}
