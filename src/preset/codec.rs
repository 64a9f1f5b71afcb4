//! The codec trait: what one preset does, written once per preset file.
//!
//! A preset is a [`Codec`]: its header id and name, its parameter specs, the
//! parsing of the recorded values into its typed parameters, and the block
//! operations (encode, encode-or-store, decode, ideal cost, memory bound)
//! over those typed parameters. The registry keeps each codec behind
//! [`Ops`], the same operations over the recorded values, so that a
//! [`Preset`](super::Preset) (a kind and its values) reaches its codec
//! without a `match` per operation: every call parses the values (a few
//! integer checks) and hands the typed parameters on.
//!
//! Invariant: for values that [`Codec::parse`] accepts, [`Codec::decode`]
//! inverts [`Codec::encode`] and the `Some` payloads of
//! [`Codec::encode_or_store`] exactly; the [`Preset`](super::Preset) methods
//! deal with empty blocks before a codec is called, so codecs see
//! non-empty blocks only.

use alloc::vec::Vec;
use core::marker::PhantomData;

use crate::coder::IdealCost;
use crate::error::Result;
use crate::preset::spec::{ParamSpec, Values};

/// One preset: its identity, parameters and block codec.
///
/// # Implementer notes
///
/// `ID`, `NAME`, `PARAMS` (order and meaning of every value) and the payload
/// layout are part of the container format: once released they never
/// change, and a new behaviour gets a new preset. A parameter added to a
/// released preset goes last and sets [`ParamSpec::absent`] to the value
/// that codes as headers without it do. The payload must depend on nothing but
/// the block and the parameters (no floating point, no platform-sized
/// integers), and `decode` must refuse every payload `encode` cannot make,
/// with a typed error and without allocating beyond
/// [`working_memory`](Codec::working_memory).
pub(crate) trait Codec: 'static {
    /// The typed parameters, parsed once from the recorded values.
    type Params;
    /// The id a container header records.
    const ID: u32;
    /// The name, lower case, in the textual form and on the command line.
    const NAME: &'static str;
    /// One line on what the preset does, for help texts.
    const SUMMARY: &'static str;
    /// The parameters, in the order a header records them.
    const PARAMS: &'static [ParamSpec];
    /// Whether the preset is offered for writing (listed in
    /// [`PresetKind::ALL`](super::PresetKind::ALL)), or kept only so that
    /// containers using it decode.
    const OFFERED: bool = true;
    /// The block size a container uses with this preset unless told
    /// otherwise.
    const BLOCK_SIZE: u64 = 1 << 20;

    /// The typed parameters for recorded values already within their specs'
    /// ranges.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`](crate::ErrorKind::InvalidParameter)
    /// naming a parameter that does not fit.
    fn parse(values: Values<'_>) -> Result<Self::Params>;

    /// Checks the rules between parameters that the ranges cannot express
    /// and that [`parse`](Codec::parse) leaves to the model (run once, when
    /// a [`Preset`](super::Preset) is made; the block operations build the
    /// model, which checks them again). The default has none.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`](crate::ErrorKind::InvalidParameter)
    /// naming a parameter that does not fit.
    fn check(_params: &Self::Params) -> Result<()> {
        Ok(())
    }

    /// Codes a non-empty block into the preset's payload.
    fn encode(raw: &[u8], params: &Self::Params) -> Result<Vec<u8>>;

    /// As [`encode`](Codec::encode), or `None` when the block should be
    /// stored because coding will not shrink it. The default codes the block
    /// and lets the container compare lengths.
    fn encode_or_store(raw: &[u8], params: &Self::Params) -> Result<Option<Vec<u8>>> {
        Self::encode(raw, params).map(Some)
    }

    /// Decodes a payload into `out`, whose length is the block's (non-zero)
    /// raw length.
    fn decode(payload: &[u8], params: &Self::Params, out: &mut [u8]) -> Result<()>;

    /// The ideal cost of a non-empty block under the preset's models.
    fn ideal_cost(raw: &[u8], params: &Self::Params) -> Result<IdealCost>;

    /// Working memory to decode a block of up to `block_size` bytes, beyond
    /// the payload and output buffers.
    fn working_memory(params: &Self::Params, block_size: u64) -> u64;
}

/// The block operations of a [`Codec`] over recorded values (the
/// registry's view of a codec).
pub(crate) trait Ops: Sync {
    /// [`Codec::parse`] then [`Codec::check`].
    fn check(&self, values: &[u32]) -> Result<()>;
    /// [`Codec::encode`].
    fn encode(&self, raw: &[u8], values: &[u32]) -> Result<Vec<u8>>;
    /// [`Codec::encode_or_store`].
    fn encode_or_store(&self, raw: &[u8], values: &[u32]) -> Result<Option<Vec<u8>>>;
    /// [`Codec::decode`].
    fn decode(&self, payload: &[u8], values: &[u32], out: &mut [u8]) -> Result<()>;
    /// [`Codec::ideal_cost`].
    fn ideal_cost(&self, raw: &[u8], values: &[u32]) -> Result<IdealCost>;
    /// [`Codec::working_memory`]; `u64::MAX` for values that do not parse.
    fn working_memory(&self, values: &[u32], block_size: u64) -> u64;
}

/// The [`Ops`] of the codec `C`.
pub(crate) struct OpsOf<C>(PhantomData<fn() -> C>);

impl<C: Codec> OpsOf<C> {
    /// The codec's operations, for the registry's table.
    pub(crate) const OPS: &'static dyn Ops = &OpsOf::<C>(PhantomData);

    fn parse(values: &[u32]) -> Result<C::Params> {
        C::parse(Values::new(C::PARAMS, values))
    }
}

impl<C: Codec> Ops for OpsOf<C> {
    fn check(&self, values: &[u32]) -> Result<()> {
        C::check(&Self::parse(values)?)
    }

    fn encode(&self, raw: &[u8], values: &[u32]) -> Result<Vec<u8>> {
        C::encode(raw, &Self::parse(values)?)
    }

    fn encode_or_store(&self, raw: &[u8], values: &[u32]) -> Result<Option<Vec<u8>>> {
        C::encode_or_store(raw, &Self::parse(values)?)
    }

    fn decode(&self, payload: &[u8], values: &[u32], out: &mut [u8]) -> Result<()> {
        C::decode(payload, &Self::parse(values)?, out)
    }

    fn ideal_cost(&self, raw: &[u8], values: &[u32]) -> Result<IdealCost> {
        C::ideal_cost(raw, &Self::parse(values)?)
    }

    fn working_memory(&self, values: &[u32], block_size: u64) -> u64 {
        Self::parse(values).map_or(u64::MAX, |p| C::working_memory(&p, block_size))
    }
}
