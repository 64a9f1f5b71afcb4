//! The audit of a multi-symbol [`Model`]: code with one instance, decode
//! with another, and compare every step (see the module above).

use alloc::vec::Vec;

use super::report::{AuditReport, Divergence, Mismatch, Side, Violation};
use crate::coder::{Decoder, Encoder};
use crate::model::{Model, Span, ESCAPE, MAX_TOTAL};

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
/// See the [module documentation](super) for what is checked. The audit never
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
