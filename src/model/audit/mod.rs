//! A symmetry audit for models of your own.
//!
//! A [`Model`] only works if the decoder's copy sees exactly what the
//! encoder's copy saw: the same total, the same span for every coded symbol,
//! the same updates. A model that breaks this — a `locate` off by one at a
//! boundary, state changed in `span` instead of `update`, a table seeded from
//! something only one side has — produces streams that decode into garbage
//! some way after the real mistake, which is hard to trace.
//!
//! [`audit_model`] builds two instances through a factory closure (the
//! first call's for encoding, the second call's for decoding), codes the
//! given symbols with one and decodes them with the other, and reports the
//! **first step** at which anything differs, with what differed:
//!
//! 1. *Encoding side*, before each symbol is coded: the total is within
//!    `1 ..= 2^16`; the symbol's span is valid (`freq >= 1`,
//!    `cum + freq <= total`) or, for a symbol coded through an escape, the
//!    escape's is; and `locate` at the first and the last slot of that span
//!    returns the same symbol and span (the model agrees with itself).
//! 2. *Decoding side*, before each symbol is decoded: the alphabet and total
//!    equal the encoding side's at the same step; `locate` at the decoder's
//!    actual target returns a valid span containing it; the located symbol and
//!    span equal the encoding side's; then the decoded symbol equals the
//!    input.
//!
//! The audit keeps one small record per step (O(steps) memory) and calls
//! `total`, `span` and `locate` more often than the coder does; a model whose
//! answers depend on how often it is asked is broken, and the audit shows it.
//!
//! The report types are shared by every audit: a [`Divergence`] is a step and
//! a [`Mismatch`], and `Mismatch` is `#[non_exhaustive]`, so an audit for
//! binary predictors adds one variant (the two sides' probabilities) and a
//! driver of a dozen lines over `encode_bit` / `decode_bit`.

use alloc::vec::Vec;
use core::fmt;

use crate::coder::{Decoder, Encoder};
use crate::model::{Model, Span, ESCAPE, MAX_TOTAL};

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

/// What the encoding side used at one step.
#[derive(Debug, Clone, Copy)]
struct Step {
    symbol: u32,
    alphabet: u32,
    total: u32,
    /// The symbol's span, or the escape's for an escaped symbol.
    span: Span,
    escaped: bool,
}

fn span_ok(span: Span, total: u32) -> bool {
    span.freq >= 1
        && span
            .cum
            .checked_add(span.freq)
            .is_some_and(|end| end <= total)
}

fn check_locate<M: Model + ?Sized>(
    model: &M,
    symbol: u32,
    span: Span,
) -> core::result::Result<(), Violation> {
    for target in [span.cum, span.cum + span.freq - 1] {
        let (located, located_span) = model.locate(target);
        if located != symbol || located_span != span {
            return Err(Violation::LocateDisagrees {
                target,
                expected: symbol,
                expected_span: span,
                located,
                located_span,
            });
        }
    }
    Ok(())
}

/// Checks the encoding instance before `symbol` is coded.
fn encoder_step<M: Model + ?Sized>(
    model: &M,
    symbol: u32,
) -> core::result::Result<Step, Violation> {
    let total = model.total();
    if total == 0 || total > MAX_TOTAL {
        return Err(Violation::TotalOutOfRange { total });
    }
    let alphabet = model.alphabet_size();
    let (span, escaped, as_located) = match model.span(symbol) {
        Some(span) => (span, false, symbol),
        None => match model.escape() {
            Some(span) if symbol < alphabet && alphabet <= MAX_TOTAL => (span, true, ESCAPE),
            _ => return Err(Violation::Uncodable { symbol }),
        },
    };
    if !span_ok(span, total) {
        return Err(Violation::BadSpan {
            symbol: as_located,
            span,
            total,
        });
    }
    check_locate(model, as_located, span)?;
    Ok(Step {
        symbol,
        alphabet,
        total,
        span,
        escaped,
    })
}

/// Checks the decoding instance before step `rec` is decoded.
fn decoder_step<M: Model + ?Sized>(
    model: &M,
    decoder: &Decoder<crate::coder::SliceSource<'_>>,
    rec: &Step,
) -> core::result::Result<(), Mismatch> {
    let alphabet = model.alphabet_size();
    if alphabet != rec.alphabet {
        return Err(Mismatch::Alphabet {
            encoder: rec.alphabet,
            decoder: alphabet,
        });
    }
    let total = model.total();
    if total != rec.total {
        return Err(Mismatch::Total {
            encoder: rec.total,
            decoder: total,
        });
    }
    let target = decoder.target(total);
    let (located, span) = model.locate(target);
    if !span_ok(span, total) || target < span.cum || target - span.cum >= span.freq {
        return Err(Mismatch::Contract {
            side: Side::Decoder,
            violation: Violation::LocateMisses {
                target,
                symbol: located,
                span,
            },
        });
    }
    let expected = if rec.escaped { ESCAPE } else { rec.symbol };
    if located != expected {
        return Err(Mismatch::Symbol {
            expected,
            decoded: located,
        });
    }
    if span != rec.span {
        return Err(Mismatch::Span {
            symbol: expected,
            encoder: rec.span,
            decoder: span,
        });
    }
    Ok(())
}

/// Codes `symbols` with one instance from `factory` and decodes them with
/// another, reporting the first step at which the two differ.
///
/// `factory` is called at most twice, in this order: the **first** call
/// builds the encoding instance, which codes the symbols; only then does
/// the **second** call build the decoding copy, which decodes them (no
/// second call when the coder itself fails to finish the stream). A
/// factory that counts its calls can thus tell the sides apart (the example
/// below gives only the decoding copy a head start). In a [`Divergence`],
/// [`Side::Encoder`] is the first instance and [`Side::Decoder`] the second.
///
/// See the [module documentation](self) for what is checked. The audit never
/// panics on a misbehaving model (unless the model itself panics) and reports
/// every problem in the [`AuditReport`].
///
/// # Example
///
/// ```
/// use subrange::model::audit::{audit_model, Mismatch};
/// use subrange::model::{StepwiseModel, Model, Span};
///
/// // The crate's own models pass.
/// let levels = [3u32, 3, 4, 3, 2, 3, 3, 3];
/// let report = audit_model(|| StepwiseModel::new(8).unwrap(), &levels);
/// assert!(report.is_symmetric());
/// assert_eq!(report.agreed, levels.len());
///
/// // A model whose decoding copy starts from different counts does not.
/// let mut made = 0;
/// let report = audit_model(
///     || {
///         made += 1;
///         let mut m = StepwiseModel::new(8).unwrap();
///         if made == 2 {
///             m.update(0); // the second call: only the decoding copy is "warmed up"
///         }
///         m
///     },
///     &levels,
/// );
/// let divergence = report.divergence.unwrap();
/// assert_eq!(divergence.step, 0);
/// assert!(matches!(divergence.mismatch, Mismatch::Total { .. }));
/// ```
pub fn audit_model<M, F>(mut factory: F, symbols: &[u32]) -> AuditReport
where
    M: Model,
    F: FnMut() -> M,
{
    let mut report = AuditReport {
        steps: symbols.len(),
        agreed: 0,
        coded_bytes: 0,
        divergence: None,
    };
    // Encoding side: record what was used at each step.
    let mut model = factory();
    let mut encoder = Encoder::new();
    let mut steps = Vec::with_capacity(symbols.len());
    let mut encoder_failure = None;
    for (step, &symbol) in symbols.iter().enumerate() {
        let rec = match encoder_step(&model, symbol) {
            Ok(rec) => rec,
            Err(violation) => {
                let side = Side::Encoder;
                encoder_failure = Some(Divergence {
                    step,
                    mismatch: Mismatch::Contract { side, violation },
                });
                break;
            }
        };
        if let Err(e) = encoder.encode(&mut model, symbol) {
            encoder_failure = Some(Divergence {
                step,
                mismatch: Mismatch::Coder(e),
            });
            break;
        }
        steps.push(rec);
    }
    let bytes = match encoder.finish() {
        Ok(bytes) => bytes,
        Err(e) => {
            report.divergence = Some(Divergence {
                step: steps.len(),
                mismatch: Mismatch::Coder(e),
            });
            return report;
        }
    };
    report.coded_bytes = bytes.len();
    // Decoding side: replay and compare.
    let mut model = factory();
    let mut decoder = match Decoder::new(&bytes) {
        Ok(d) => d,
        Err(e) => {
            report.divergence = Some(Divergence {
                step: 0,
                mismatch: Mismatch::Coder(e),
            });
            return report;
        }
    };
    for (step, rec) in steps.iter().enumerate() {
        let outcome =
            decoder_step(&model, &decoder, rec).and_then(|()| match decoder.decode(&mut model) {
                Ok(s) if s == rec.symbol => Ok(()),
                Ok(s) => Err(Mismatch::Symbol {
                    expected: rec.symbol,
                    decoded: s,
                }),
                Err(e) => Err(Mismatch::Coder(e)),
            });
        if let Err(mismatch) = outcome {
            report.divergence = Some(Divergence { step, mismatch });
            return report;
        }
        report.agreed += 1;
    }
    report.divergence = encoder_failure;
    report
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

/// Codes `bits` with one [`BitPredictor`](crate::model::BitPredictor) from
/// `factory` and decodes them with another, reporting the first step at
/// which the two disagree: a different probability, a different bit, or a
/// coder error. Symbols in the report are the bits as 0 and 1.
///
/// # Example
///
/// ```
/// use subrange::model::audit::{audit_predictor, Mismatch};
/// use subrange::model::{BitPredictor, ShiftPredictor};
///
/// let flags = [false, false, true, false, false, false, true, false];
/// let report = audit_predictor(|| ShiftPredictor::new(4).unwrap(), &flags);
/// assert!(report.is_symmetric());
///
/// // A predictor that reads a global clock (here: a counter shared by both
/// // copies) gives the decoder other odds.
/// let mut made = 0;
/// let report = audit_predictor(
///     || {
///         made += 1;
///         let mut p = ShiftPredictor::new(4).unwrap();
///         if made == 2 {
///             p.update(true);
///         }
///         p
///     },
///     &flags,
/// );
/// assert!(matches!(report.divergence.unwrap().mismatch, Mismatch::Probability { .. }));
/// ```
pub fn audit_predictor<P, F>(mut factory: F, bits: &[bool]) -> AuditReport
where
    P: crate::model::BitPredictor,
    F: FnMut() -> P,
{
    let mut report = AuditReport {
        steps: bits.len(),
        agreed: 0,
        coded_bytes: 0,
        divergence: None,
    };
    let mut predictor = factory();
    let mut encoder = Encoder::new();
    let mut odds = Vec::with_capacity(bits.len());
    for (step, &bit) in bits.iter().enumerate() {
        let p1 = predictor.p1();
        odds.push(p1);
        if let Err(e) = encoder.encode_bit(bit, p1) {
            report.divergence = Some(Divergence {
                step,
                mismatch: Mismatch::Coder(e),
            });
            return report;
        }
        predictor.update(bit);
    }
    let bytes = match encoder.finish() {
        Ok(b) => b,
        Err(e) => {
            report.divergence = Some(Divergence {
                step: bits.len(),
                mismatch: Mismatch::Coder(e),
            });
            return report;
        }
    };
    report.coded_bytes = bytes.len();
    let mut predictor = factory();
    let mut decoder = match Decoder::new(&bytes) {
        Ok(d) => d,
        Err(e) => {
            report.divergence = Some(Divergence {
                step: 0,
                mismatch: Mismatch::Coder(e),
            });
            return report;
        }
    };
    for (step, (&bit, &p_enc)) in bits.iter().zip(&odds).enumerate() {
        let p_dec = predictor.p1();
        let mismatch = if p_dec != p_enc {
            Some(Mismatch::Probability {
                encoder: p_enc,
                decoder: p_dec,
            })
        } else {
            match decoder.decode_bit(p_dec) {
                Ok(b) if b == bit => None,
                Ok(b) => Some(Mismatch::Symbol {
                    expected: u32::from(bit),
                    decoded: u32::from(b),
                }),
                Err(e) => Some(Mismatch::Coder(e)),
            }
        };
        if let Some(mismatch) = mismatch {
            report.divergence = Some(Divergence { step, mismatch });
            return report;
        }
        predictor.update(bit);
        report.agreed += 1;
    }
    report
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::TableModel;

    #[test]
    fn empty_input_is_symmetric() {
        let report = audit_model(|| TableModel::from_counts(&[1, 1], 1).unwrap(), &[]);
        assert!(report.is_symmetric());
        assert_eq!((report.steps, report.agreed, report.coded_bytes), (0, 0, 0));
    }

    #[test]
    fn symbol_outside_alphabet_is_uncodable() {
        let report = audit_model(|| TableModel::from_counts(&[1, 1], 1).unwrap(), &[0, 1, 2]);
        let d = report.divergence.unwrap();
        assert_eq!(d.step, 2);
        assert_eq!(report.agreed, 2);
        assert!(matches!(
            d.mismatch,
            Mismatch::Contract {
                side: Side::Encoder,
                violation: Violation::Uncodable { symbol: 2 }
            }
        ));
    }
}
