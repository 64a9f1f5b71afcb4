//! The audit of a [`BitPredictor`](crate::model::BitPredictor): code bits
//! with one instance, decode them with another, and compare the
//! probabilities at every step.

use alloc::vec::Vec;

use super::report::{AuditReport, Divergence, Mismatch};
use crate::coder::{Decoder, Encoder};

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
