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
//! the model's [`locate`](crate::model::Model::locate). Every coding decision
//! is integer arithmetic, so a stream decodes identically on every platform
//! (the vector lane decoder estimates a quotient in floating point and then
//! corrects it to the exact integer; see `decode_table_lanes`).
//!
//! [`IdealCost`] measures `Σ -log2(freq / total)`, the length an ideal coder
//! would reach with the same model, so coding overhead can be separated from
//! model quality.

mod cost;
mod decoder;
mod encoder;
mod lane_dec;
mod lane_enc;
mod lanes;
mod refresh_lanes;
mod sink;
mod source;
mod table_lanes;
#[cfg(target_arch = "x86_64")]
mod table_simd;
#[cfg(target_arch = "x86_64")]
mod table_simd_enc;
#[cfg(target_arch = "x86_64")]
mod table_simd_wide;

pub use cost::{log2_q32, IdealCost};
pub use decoder::Decoder;
pub use encoder::Encoder;
#[cfg(feature = "std")]
pub(crate) use lane_dec::LANE_PAD;
pub use lanes::{decode_interleaved, encode_interleaved, MAX_LANES};
pub use refresh_lanes::{decode_refresh_lanes, encode_refresh_lanes};
#[doc(hidden)]
pub use refresh_lanes::{decode_refresh_lanes_scalar, encode_refresh_lanes_scalar};
pub use sink::ByteSink;
#[cfg(feature = "std")]
pub use sink::IoSink;
#[cfg(feature = "std")]
pub use source::IoSource;
pub use source::{ByteSource, SliceSource};
#[cfg(feature = "std")]
pub(crate) use table_lanes::encode_counted;
pub use table_lanes::{decode_table_lanes, encode_table_lanes};
#[doc(hidden)]
pub use table_lanes::{decode_table_lanes_scalar, encode_table_lanes_scalar};
