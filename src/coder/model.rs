//! The contract between the coder and a model.
//!
//! The coder asks a [`Model`] for the [`Span`] of each symbol it encodes and
//! for the symbol whose span holds a decoding target; the limits
//! ([`MAX_TOTAL`], [`MAX_ALPHABET`]) and the [`ESCAPE`] symbol are part of
//! the contract. The models themselves live in the `model` module, which
//! re-exports these items.

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
