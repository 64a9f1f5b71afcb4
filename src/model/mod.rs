//! Models: where the probabilities come from.
//!
//! A [`Model`] describes, for every symbol of an alphabet, a [`Span`] of
//! integer frequencies — a cumulative frequency `cum` and a width `freq` out of
//! a `total`. The range coder narrows its interval to that span; the decoder
//! finds the symbol whose span contains its target with [`Model::locate`].
//! Both sides then call [`Model::update`] with the coded symbol, so an adaptive
//! model changes in lock step on both sides.
//!
//! Models here:
//! - [`TableModel`]: a fixed table, built from counts or probabilities,
//!   quantised to a power-of-two total; O(1) decoding; serialises compactly.
//! - [`AdaptiveModel`]: order-0 counts that learn as they code, for alphabets
//!   up to 65,536 symbols (a Fenwick tree when the alphabet is large, an escape
//!   for symbols not seen yet when it is very large).
//! - [`RefreshModel`]: adaptive order-0 counts whose power-of-two table is
//!   rebuilt at growing intervals; codes as fast as a fixed table, over
//!   interleaved lanes too.
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
//! - [`cm`]: two whole-block engines built from them — a fast order-2 context
//!   model and the strongest model of the crate (hashed orders 1–6, word and
//!   column contexts, a match model, mixing and refinement).
//!
//! Around them: [`snapshot`] saves and restores a trained model's state
//! (to start small messages from it), and [`audit`] checks that a model of
//! your own behaves identically on the encoding and the decoding side.

mod adaptive;
mod apm;
pub mod audit;
mod bit;
mod bytewise;
pub mod cm;
mod column;
mod context;
mod counter;
pub mod external;
mod fenwick;
mod hashed;
mod histogram;
mod kt;
mod logistic;
mod matcher;
mod mix;
pub mod parametric;
mod quantize;
mod refresh;
mod serial;
pub mod snapshot;
mod table;
mod word;
pub mod x86;

pub use adaptive::{AdaptiveModel, AdaptiveParams};
pub use apm::Apm;
pub use audit::{audit_model, audit_predictor, AuditReport};
pub use bit::{decode_with, encode_with, BitPredictor, ShiftPredictor};
pub use bytewise::BitTree;
pub use context::{ContextModel, ContextParams, MAX_CONTEXT_LIMIT, MAX_CONTEXT_ORDER};
pub use counter::{CountingPredictor, MAX_COUNT_LIMIT};
pub use external::{quantize_probabilities, Probability, ProbabilityAdapter};
pub use fenwick::FenwickTree;
pub(crate) use histogram::byte_counts;
pub use kt::KtPredictor;
pub use logistic::{squash, stretch, STRETCH_MAX};
pub use mix::{MixedPredictor, Mixer, MAX_MIXER_INPUTS, MAX_MIXER_SETS};
pub use quantize::quantize_counts;
pub use refresh::{RefreshModel, RefreshParams, MAX_REFRESH_ALPHABET};
pub use snapshot::{Snapshot, SnapshotState};
pub use table::TableModel;

/// Largest total a model may have: 2^16.
pub const MAX_TOTAL: u32 = 1 << 16;

/// Largest alphabet a multi-symbol model may have: 2^16 symbols.
pub const MAX_ALPHABET: u32 = 1 << 16;

/// The symbol [`Model::locate`] returns when the target falls in the model's
/// escape span (see [`Model::escape`]).
pub const ESCAPE: u32 = u32::MAX;

/// The interval of one symbol: `cum .. cum + freq` out of the model's total.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub struct Span {
    /// Sum of the frequencies of all symbols before this one.
    pub cum: u32,
    /// This symbol's frequency (at least 1 for a symbol that can be coded).
    pub freq: u32,
}

impl Span {
    /// Builds a span.
    pub const fn new(cum: u32, freq: u32) -> Self {
        Span { cum, freq }
    }
}

/// A source of symbol frequencies for the range coder.
///
/// # Implementer notes
///
/// The coder relies on this contract; a model that breaks it produces streams
/// that do not decode (the coder reports the broken rules it can see as
/// [`ErrorKind::InvalidModel`](crate::ErrorKind::InvalidModel)):
///
/// - `1 <= total() <= MAX_TOTAL` (2^16) at every step.
/// - `span(s)` is `Some` with `freq >= 1` and `cum + freq <= total()` for every
///   symbol that can occur, and `None` for symbols that cannot be coded
///   directly. Spans of different symbols do not overlap.
/// - `locate(t)` for any `t < total()` returns the symbol whose span contains
///   `t`, and that span. It must not panic for any such `t`.
/// - Encoder and decoder must see the same sequence of calls to `update`, with
///   the same symbols: the coder calls it after every coded symbol, so a model
///   must not change in any other way between steps (no hidden state such as
///   time, randomness or floating-point results that could differ between
///   machines).
/// - A model with an escape (for symbols not seen yet) returns the escape's
///   span from [`escape`](Model::escape) and [`ESCAPE`] from `locate`; the coder
///   then codes the symbol itself uniformly over `alphabet_size()` and calls
///   `update` with the real symbol.
pub trait Model {
    /// Number of symbols: valid symbols are `0 .. alphabet_size()`.
    fn alphabet_size(&self) -> u32;

    /// The sum of all frequencies (the denominator of every probability).
    fn total(&self) -> u32;

    /// The span of `symbol`, or `None` when this model cannot code it directly.
    fn span(&self, symbol: u32) -> Option<Span>;

    /// The symbol whose span contains `target` (`target < total()`), and that span.
    fn locate(&self, target: u32) -> (u32, Span);

    /// Learns from a coded symbol. Static models do nothing.
    fn update(&mut self, symbol: u32) {
        let _ = symbol;
    }

    /// The escape's span, for models that code unseen symbols through an
    /// escape. The default has no escape.
    fn escape(&self) -> Option<Span> {
        None
    }
}

impl<M: Model + ?Sized> Model for &mut M {
    fn alphabet_size(&self) -> u32 {
        (**self).alphabet_size()
    }
    fn total(&self) -> u32 {
        (**self).total()
    }
    fn span(&self, symbol: u32) -> Option<Span> {
        (**self).span(symbol)
    }
    fn locate(&self, target: u32) -> (u32, Span) {
        (**self).locate(target)
    }
    fn update(&mut self, symbol: u32) {
        (**self).update(symbol)
    }
    fn escape(&self) -> Option<Span> {
        (**self).escape()
    }
}

#[allow(dead_code)]
fn _model_is_object_safe(_: &dyn Model) {}
