//! Models: where the probabilities come from.
//!
//! A [`Model`] describes, for every symbol of an alphabet, a [`Span`] of
//! integer frequencies — a cumulative frequency `cum` and a width `freq` out of
//! a `total`. The range coder narrows its interval to that span; the decoder
//! finds the symbol whose span contains its target with [`Model::locate`].
//! Both sides then call [`Model::update`] with the coded symbol, so an adaptive
//! model changes in lock step on both sides.
//!
//! The trait, [`Span`] and the limits belong to the coder (the layer below,
//! [`crate::coder`]); this module re-exports them. Models whose table holds
//! for a run of bytes also implement [`LaneTable`](crate::coder::LaneTable),
//! which the coder's lane fast paths code with.
//!
//! The files are grouped the same way as this page: multi-symbol models at
//! the top, binary predictors and their mixing parts in `bit/`, the
//! context-mixing engines and the parts only they use in `cm/`.
//!
//! Models here:
//! - [`TableModel`]: a fixed table, built from counts or probabilities,
//!   quantised to a power-of-two total; O(1) decoding; serialises compactly.
//! - [`StepwiseModel`]: order-0 counts that learn as they code, for alphabets
//!   up to 65,536 symbols (a Fenwick tree when the alphabet is large, an escape
//!   for symbols not seen yet when it is very large).
//! - [`AdaptiveModel`]: adaptive order-0 counts whose power-of-two table is
//!   rebuilt at growing intervals; codes as fast as a fixed table, over
//!   interleaved lanes too ([`encode_adaptive_lanes`](crate::coder::encode_adaptive_lanes)).
//! - [`ContextModel`]: counts per context of the previous 0 to 3 bytes,
//!   blended from the highest order down; for short messages from a trained
//!   state.
//! - [`ProbabilityAdapter`]: a per-step table built from probabilities that
//!   come from outside (a learned or statistical model), see [`external`].
//! - [`parametric`]: tables of discretised Gaussian, Laplace and logistic
//!   distributions, built bit-exactly in fixed point.
//!
//! Bit-level models for the coder's binary step:
//! - [`BitPredictor`]: the trait; [`ShiftPredictor`] (fixed-rate shift
//!   updates), [`CountingPredictor`] (rate falling with a per-slot count),
//!   [`KtPredictor`] (Krichevsky–Trofimov counts); [`BitTree`] codes bytes
//!   through a binary tree of predictors.
//! - [`Mixer`] and [`MixedPredictor`]: logistic mixing of predictions in the
//!   stretched domain ([`stretch`] / [`squash`]), weights selected by a small
//!   context; [`Apm`] refines a probability by a second, adaptive map.
//! - [`cm`]: three whole-block engines built from them — the order-2 engine
//!   (a fast order-2 context model), the mix engine (hashed orders 1–6, word
//!   and column contexts, a match model, mixing and refinement) and the
//!   history engine (bit-history contexts, two mixing layers, a refinement
//!   chain; the strongest model of the crate).
//!
//! Around them: [`snapshot`] saves and restores a trained model's state
//! (to start small messages from it), and [`audit`] checks that a model of
//! your own behaves identically on the encoding and the decoding side.

mod adaptive;
pub(crate) mod arena;
pub mod audit;
mod bit;
pub mod cm;
mod context;
pub mod external;
mod fenwick;
mod histogram;
pub mod parametric;
mod quantize;
mod serial;
pub mod snapshot;
mod stepwise;
mod table;
pub mod x86;

pub use crate::coder::{Model, Span, ESCAPE, MAX_ALPHABET, MAX_TOTAL};
pub use adaptive::{AdaptiveModel, AdaptiveParams, MAX_ADAPTIVE_ALPHABET};
pub use audit::{audit_model, audit_predictor, AuditReport};
pub use bit::{
    decode_with, encode_with, squash, stretch, Apm, BitPredictor, BitTree, CountingPredictor,
    KtPredictor, MixedPredictor, Mixer, ShiftPredictor, MAX_COUNT_LIMIT, MAX_MIXER_INPUTS,
    MAX_MIXER_SETS, STRETCH_MAX,
};
pub use context::{ContextModel, ContextParams, MAX_CONTEXT_LIMIT, MAX_CONTEXT_ORDER};
pub use external::{quantize_probabilities, Probability, ProbabilityAdapter};
pub use fenwick::FenwickTree;
pub(crate) use histogram::byte_counts;
pub use quantize::quantize_counts;
pub use snapshot::{Snapshot, SnapshotState};
pub use stepwise::{StepwiseModel, StepwiseParams};
pub use table::TableModel;
