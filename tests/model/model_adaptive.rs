//! The adaptive order-0 model: its invariants under arbitrary updates
//! (`total <= limit`, spans tiling the total, `locate` inverting `span`,
//! non-zero frequencies where the mode promises them) and its parameter
//! checks.

use crate::support::strategies::{adaptive_model, alphabet};
use proptest::prelude::*;
use subrange::model::{Model, Span, StepwiseModel, StepwiseParams, ESCAPE};
use subrange::ErrorKind;

/// Full check: the spans of the symbols (in order) and then the escape
/// tile `0 .. total`; `locate` agrees for a spread of targets.
fn check_full(m: &StepwiseModel) -> Result<(), TestCaseError> {
    let total = m.total();
    let mut cum = 0;
    for s in 0..m.alphabet_size() {
        let f = m.frequency(s);
        prop_assert_eq!(m.span(s), (f > 0).then_some(Span::new(cum, f)));
        if !m.uses_escape() {
            prop_assert!(f >= 1, "symbol {} lost its frequency without escape", s);
        }
        cum += f;
    }
    prop_assert_eq!(m.span(m.alphabet_size()), None);
    prop_assert_eq!(m.frequency(m.alphabet_size()), 0);
    match m.escape() {
        Some(esc) => {
            prop_assert!(m.uses_escape());
            prop_assert_eq!(esc.cum, cum);
            prop_assert!(esc.freq >= 1);
            cum += esc.freq;
        }
        None => prop_assert!(!m.uses_escape()),
    }
    prop_assert_eq!(cum, total);
    let step = (total / 500).max(1);
    for t in (0..total).step_by(step as usize).chain([total - 1]) {
        let (s, span) = m.locate(t);
        prop_assert!(
            span.cum <= t && t < span.cum + span.freq,
            "target {} in {:?}",
            t,
            span
        );
        if s == ESCAPE {
            prop_assert_eq!(m.escape(), Some(span));
        } else {
            prop_assert_eq!(m.span(s), Some(span));
        }
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn invariants_hold_under_updates(
        model in adaptive_model(alphabet()),
        picks in prop::collection::vec(any::<u32>(), 0..600),
    ) {
        let mut m = model;
        let params = m.params();
        let a = m.alphabet_size();
        // Full checks are O(alphabet); do them often only for small alphabets.
        let every = if a <= 4096 { 25 } else { 300 };
        check_full(&m)?;
        for (i, &p) in picks.iter().enumerate() {
            let s = if p & 3 == 0 { (p >> 2) % a } else { (p >> 2) % a.min(10) };
            let (before, f_before) = (m.total(), m.frequency(s));
            m.update(s);
            let total = m.total();
            prop_assert!(total >= 1 && total <= params.limit, "total {} over limit {}", total, params.limit);
            // Without halving, the symbol gains exactly the increment.
            let new_symbol_with_escape = m.uses_escape() && f_before == 0;
            let grew = if new_symbol_with_escape { 2 } else { 1 } * params.increment;
            if total == before + grew {
                prop_assert_eq!(m.frequency(s), f_before + params.increment);
            } else {
                prop_assert!(total < before + grew, "halving must shrink the total");
            }
            prop_assert!(m.frequency(s) >= 1);
            if (i + 1) % every == 0 {
                check_full(&m)?;
            }
        }
        check_full(&m)?;
        // Updates with symbols outside the alphabet are ignored.
        let snapshot = m.clone();
        m.update(a);
        m.update(u32::MAX);
        prop_assert_eq!(m, snapshot);
    }

    /// Any parameters: a model or an `InvalidParameter` error, never a panic;
    /// accepted parameters are within the documented ranges.
    #[test]
    fn parameter_checks(alphabet in any::<u32>(), increment in any::<u32>(), limit in any::<u32>(), escape in any::<Option<bool>>()) {
        let alphabet = alphabet % 70_000;
        let mut p = StepwiseParams::default();
        p.increment = increment % 9000;
        p.limit = limit % 70_000;
        p.escape = escape;
        match StepwiseModel::with_params(alphabet, p) {
            Ok(m) => {
                prop_assert!((1..=65_536).contains(&alphabet));
                prop_assert!((1..=8192).contains(&p.increment));
                prop_assert!(p.limit <= 65_536);
                let need = if m.uses_escape() { 2 + 4 * p.increment } else { alphabet + 1 + 4 * p.increment };
                prop_assert!(p.limit >= need);
                if let Some(e) = escape {
                    prop_assert_eq!(m.uses_escape(), e);
                } else {
                    prop_assert_eq!(m.uses_escape(), 4 * u64::from(alphabet) > u64::from(p.limit));
                }
                prop_assert!(m.total() <= p.limit);
            }
            Err(e) => {
                let invalid = matches!(e.kind(), ErrorKind::InvalidParameter { .. });
                prop_assert!(invalid, "{:?}", e);
            }
        }
    }
}

#[test]
fn documented_boundaries() {
    let mut p = StepwiseParams::default();
    p.escape = Some(false);
    p.increment = 1;
    // Without escape: limit >= alphabet + 1 + 4·increment, exactly.
    p.limit = 100 + 1 + 4;
    assert!(StepwiseModel::with_params(100, p).is_ok());
    p.limit -= 1;
    assert!(StepwiseModel::with_params(100, p).is_err());
    // With escape: limit >= 2 + 4·increment.
    p.escape = Some(true);
    p.increment = 8192;
    p.limit = 2 + 4 * 8192;
    assert!(StepwiseModel::with_params(65_536, p).is_ok());
    p.limit -= 1;
    assert!(StepwiseModel::with_params(65_536, p).is_err());
    p.increment = 8193;
    p.limit = 65_536;
    assert!(StepwiseModel::with_params(65_536, p).is_err());
    // The default chooses the escape when 4·alphabet > limit.
    assert!(!StepwiseModel::new(16_384).unwrap().uses_escape());
    assert!(StepwiseModel::new(16_385).unwrap().uses_escape());
}

/// With escape, an unseen symbol has no span; coding it takes the escape and
/// then gives it a frequency.
#[test]
fn escape_gives_new_symbols_a_frequency() {
    let mut m = StepwiseModel::new(65_536).unwrap();
    assert_eq!(m.span(40_000), None);
    let esc = m.escape().unwrap();
    assert_eq!(esc, Span::new(0, 1));
    m.update(40_000);
    let inc = m.params().increment;
    assert_eq!(m.frequency(40_000), inc);
    assert_eq!(m.span(40_000), Some(Span::new(0, inc)));
    assert_eq!(m.escape(), Some(Span::new(inc, 1 + inc)));
}
