//! The integer range coder.
//!
//! An [`Encoder`] narrows an interval `[low, low + range)` once per coded
//! symbol: a model supplies the symbol's cumulative frequency `cum` and
//! frequency `freq` out of a `total` (at most 2^16), and the interval shrinks
//! to that span. Whenever `range` drops below 2^24 the top byte is shifted
//! out, so the arithmetic stays in 32/64-bit integers and the output streams.
//! Carries into bytes not yet released are handled with a cached byte and a
//! count of pending `0xFF` bytes. A binary step splits the range by a 16-bit
//! probability for bit-oriented models.
//!
//! The [`Decoder`] repeats the encoder's arithmetic and finds each symbol with
//! the model's [`locate`](Model::locate). Every coding decision
//! is integer arithmetic, so a stream decodes identically on every platform
//! (the vector lane decoder estimates a quotient in floating point and then
//! corrects it to the exact integer; see `decode_table_lanes`).
//!
//! The coder defines what it asks of a model: the [`Model`] trait, its
//! [`Span`]s and limits, and for the lane fast paths the [`LaneTable`]
//! trait. The models themselves live in the `model` module, the layer above.
//!
//! [`IdealCost`] measures `Σ -log2(freq / total)`, the length an ideal coder
//! would reach with the same model, so coding overhead can be separated from
//! model quality.

mod cost;
mod decoder;
mod encoder;
mod lanes;
mod model;
mod sink;
mod source;

pub use cost::{log2_q32, IdealCost};
pub use decoder::Decoder;
pub use encoder::Encoder;
pub use lanes::{
    decode_adaptive_lanes, decode_lanes, decode_table_lanes, encode_adaptive_lanes, encode_lanes,
    encode_table_lanes, LaneTable, MAX_LANES,
};
#[doc(hidden)]
pub use lanes::{
    decode_adaptive_lanes_scalar, decode_table_lanes_scalar, encode_adaptive_lanes_scalar,
    encode_table_lanes_scalar,
};
#[cfg(feature = "std")]
pub(crate) use lanes::{encode_counted, LANE_PAD};
pub use model::{Model, Span, ESCAPE, MAX_ALPHABET, MAX_TOTAL};
pub use sink::ByteSink;
#[cfg(feature = "std")]
pub use sink::IoSink;
#[cfg(feature = "std")]
pub use source::IoSource;
pub use source::{ByteSource, SliceSource};

/// Renormalisation threshold of every coder here: a byte is shifted out
/// while `range < TOP`, so `range >= 2^24` between steps.
pub(crate) const TOP: u32 = 1 << 24;
