//! What an audit reports: the step where the two sides of a model first
//! differed ([`Divergence`]), what differed ([`Mismatch`]) and, for a rule
//! one side broke on its own, which rule ([`Violation`]).

use core::fmt;

use crate::model::Span;
#[cfg(doc)]
use crate::model::{Model, ESCAPE};

/// Which copy of the model broke a rule.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Side {
    /// The instance used for encoding.
    Encoder,
    /// The instance used for decoding.
    Decoder,
}

/// A rule of the [`Model`] contract that one instance broke on its own.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum Violation {
    /// `total()` is 0 or above 2^16.
    TotalOutOfRange {
        /// The total reported.
        total: u32,
    },
    /// The symbol can neither be coded directly nor through an escape (or it
    /// is outside the alphabet).
    Uncodable {
        /// The symbol.
        symbol: u32,
    },
    /// A span has zero frequency or reaches past the total.
    BadSpan {
        /// The symbol ([`ESCAPE`] for the escape).
        symbol: u32,
        /// The span reported.
        span: Span,
        /// The total at that step.
        total: u32,
    },
    /// `locate(target)` returned a span that does not contain `target`, has
    /// zero frequency, or reaches past the total.
    LocateMisses {
        /// The target asked for.
        target: u32,
        /// The symbol returned.
        symbol: u32,
        /// The span returned.
        span: Span,
    },
    /// `locate` inside a symbol's span returned another symbol or span than
    /// `span` (or `escape`) reported for it.
    LocateDisagrees {
        /// The target asked for (inside `expected_span`).
        target: u32,
        /// The symbol whose span holds the target.
        expected: u32,
        /// Its span, as reported by `span` or `escape`.
        expected_span: Span,
        /// The symbol `locate` returned.
        located: u32,
        /// The span `locate` returned.
        located_span: Span,
    },
}

/// What differed at the first diverging step.
#[derive(Debug)]
#[non_exhaustive]
pub enum Mismatch {
    /// One instance broke the model contract by itself.
    Contract {
        /// Which instance.
        side: Side,
        /// The rule it broke.
        violation: Violation,
    },
    /// The two instances report different alphabet sizes.
    Alphabet {
        /// The encoding instance's.
        encoder: u32,
        /// The decoding instance's.
        decoder: u32,
    },
    /// The two instances report different totals.
    Total {
        /// The encoding instance's.
        encoder: u32,
        /// The decoding instance's.
        decoder: u32,
    },
    /// The decoding instance located another symbol than was coded.
    Symbol {
        /// The symbol that was coded ([`ESCAPE`] when it went through the escape).
        expected: u32,
        /// The symbol the decoding side found.
        decoded: u32,
    },
    /// The decoding instance gives the coded symbol another span.
    Span {
        /// The symbol ([`ESCAPE`] for the escape).
        symbol: u32,
        /// The span used for encoding.
        encoder: Span,
        /// The span the decoding side located.
        decoder: Span,
    },
    /// The two bit-predictor instances give different probabilities.
    Probability {
        /// The encoding instance's probability of a 1 (scaled to 2^16).
        encoder: u32,
        /// The decoding instance's.
        decoder: u32,
    },
    /// The coder itself reported an error.
    Coder(crate::Error),
}

/// The first step at which the two instances parted.
#[derive(Debug)]
pub struct Divergence {
    /// Zero-based index of the symbol being coded.
    pub step: usize,
    /// What differed.
    pub mismatch: Mismatch,
}

/// The outcome of an audit.
///
/// Its `Display` form is a one-line summary:
///
/// ```
/// use subrange::model::audit::audit_model;
/// use subrange::model::TableModel;
///
/// let report = audit_model(|| TableModel::from_counts(&[3, 1], 2).unwrap(), &[0, 0, 1, 0]);
/// assert!(report.is_symmetric());
/// assert!(report.to_string().starts_with("symmetric: 4 of 4 steps agree"));
/// ```
#[derive(Debug)]
pub struct AuditReport {
    /// Number of symbols the audit was asked to check.
    pub steps: usize,
    /// Number of leading steps on which both instances fully agreed.
    pub agreed: usize,
    /// Length of the coded stream of the steps that could be encoded.
    pub coded_bytes: usize,
    /// The first divergence, if any.
    pub divergence: Option<Divergence>,
}

impl AuditReport {
    /// True when encoder and decoder agreed on every step.
    pub fn is_symmetric(&self) -> bool {
        self.divergence.is_none()
    }
}

impl fmt::Display for Violation {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Violation::TotalOutOfRange { total } => {
                write!(f, "total {total} is outside 1 ..= 65536")
            }
            Violation::Uncodable { symbol } => write!(f, "symbol {symbol} cannot be coded"),
            Violation::BadSpan { symbol, span, total } => write!(
                f,
                "span {}+{} of symbol {symbol} is empty or past the total {total}",
                span.cum, span.freq
            ),
            Violation::LocateMisses {
                target,
                symbol,
                span,
            } => write!(
                f,
                "locate({target}) returned symbol {symbol} with span {}+{}, which does not hold the target",
                span.cum, span.freq
            ),
            Violation::LocateDisagrees {
                target,
                expected,
                expected_span,
                located,
                located_span,
            } => write!(
                f,
                "locate({target}) returned symbol {located} span {}+{}, but the target lies in \
                 symbol {expected}'s span {}+{}",
                located_span.cum, located_span.freq, expected_span.cum, expected_span.freq
            ),
        }
    }
}

impl fmt::Display for Mismatch {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Mismatch::Contract { side, violation } => {
                let side = match side {
                    Side::Encoder => "encoding",
                    Side::Decoder => "decoding",
                };
                write!(f, "the {side} copy broke the model contract: {violation}")
            }
            Mismatch::Alphabet { encoder, decoder } => {
                write!(
                    f,
                    "alphabet sizes differ: {encoder} when encoding, {decoder} when decoding"
                )
            }
            Mismatch::Total { encoder, decoder } => {
                write!(
                    f,
                    "totals differ: {encoder} when encoding, {decoder} when decoding"
                )
            }
            Mismatch::Symbol { expected, decoded } => {
                write!(f, "decoded symbol {decoded}, but {expected} was coded")
            }
            Mismatch::Span {
                symbol,
                encoder,
                decoder,
            } => write!(
                f,
                "symbol {symbol} has span {}+{} when encoding, {}+{} when decoding",
                encoder.cum, encoder.freq, decoder.cum, decoder.freq
            ),
            Mismatch::Probability { encoder, decoder } => write!(
                f,
                "the predictors disagree: p(1) = {encoder}/65536 when encoding, {decoder}/65536 when decoding"
            ),
            Mismatch::Coder(e) => write!(f, "the coder reported: {e}"),
        }
    }
}

impl fmt::Display for AuditReport {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match &self.divergence {
            None => write!(
                f,
                "symmetric: {} of {} steps agree ({} coded bytes)",
                self.agreed, self.steps, self.coded_bytes
            ),
            Some(d) => write!(f, "diverges at step {}: {}", d.step, d.mismatch),
        }
    }
}
