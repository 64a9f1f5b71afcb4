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

#[cfg(doc)]
use crate::model::Model;

mod bits;
mod report;
mod symbols;

pub use bits::audit_predictor;
pub use report::{AuditReport, Divergence, Mismatch, Side, Violation};
pub use symbols::audit_model;

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
