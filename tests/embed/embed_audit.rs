//! The symmetry audit: sound models pass, each kind of broken model is
//! caught at the right step with the right finding.

use std::cell::Cell;
use std::sync::atomic::{AtomicU32, Ordering};

use subrange::model::audit::{audit_model, Mismatch, Side, Violation};
use subrange::model::{Model, ProbabilityAdapter, Span, StepwiseModel, TableModel};

/// Gauge status codes over a day: mostly "ok" (0), runs of other states.
fn status_codes() -> Vec<u32> {
    let mut out = Vec::new();
    for hour in 0..24u32 {
        let code = match hour {
            3..=4 => 2,
            11 => 5,
            17..=19 => 1,
            _ => 0,
        };
        out.extend(std::iter::repeat_n(code, 6));
        out.push((hour * 7) % 8);
    }
    out
}

#[test]
fn crate_models_are_symmetric() {
    let data = status_codes();
    let r = audit_model(
        || TableModel::from_counts(&[50, 5, 5, 1, 1, 3, 1, 1], 10).unwrap(),
        &data,
    );
    assert!(r.is_symmetric(), "{r}");
    assert_eq!((r.steps, r.agreed), (data.len(), data.len()));
    assert!(r.coded_bytes > 0);
    for alphabet in [8u32, 300, 65_536] {
        let r = audit_model(|| StepwiseModel::new(alphabet).unwrap(), &data);
        assert!(r.is_symmetric(), "alphabet {alphabet}: {r}");
    }
    let r = audit_model(
        || {
            let mut a = ProbabilityAdapter::new();
            a.set_probabilities(&[0.6f32, 0.1, 0.1, 0.05, 0.05, 0.05, 0.03, 0.02])
                .unwrap();
            a
        },
        &data,
    );
    assert!(r.is_symmetric(), "{r}");
    assert!(r.to_string().starts_with("symmetric"));
}

/// Eight symbols of equal frequency 8 (total 64), with switchable faults.
#[derive(Debug, Default)]
struct Faulty {
    /// locate treats a span's first slot as belonging to the previous symbol.
    off_by_one: bool,
    /// locate gives a wrong answer strictly inside spans (not at the ends).
    wrong_inside: bool,
    /// total reported too large.
    oversize_total: bool,
    /// symbol 3 has zero frequency.
    empty_symbol: bool,
}

impl Model for Faulty {
    fn alphabet_size(&self) -> u32 {
        8
    }
    fn total(&self) -> u32 {
        if self.oversize_total {
            1 << 17
        } else {
            64
        }
    }
    fn span(&self, symbol: u32) -> Option<Span> {
        if symbol >= 8 {
            return None;
        }
        let freq = if self.empty_symbol && symbol == 3 {
            0
        } else {
            8
        };
        Some(Span::new(symbol * 8, freq))
    }
    fn locate(&self, target: u32) -> (u32, Span) {
        let mut s = (target / 8).min(7);
        if self.off_by_one && target.is_multiple_of(8) && s > 0 {
            s -= 1;
        }
        if self.wrong_inside && !target.is_multiple_of(8) && target % 8 != 7 {
            s = (s + 1) % 8;
        }
        (s, Span::new(s * 8, 8))
    }
}

fn contract(m: &Mismatch) -> (Side, Violation) {
    match m {
        Mismatch::Contract { side, violation } => (*side, *violation),
        other => panic!("expected a contract violation, got {other}"),
    }
}

#[test]
fn off_by_one_locate_is_caught_on_the_encoding_side() {
    let data = [0u32, 0, 5, 1];
    let r = audit_model(
        || Faulty {
            off_by_one: true,
            ..Faulty::default()
        },
        &data,
    );
    let d = r.divergence.as_ref().unwrap();
    assert_eq!(d.step, 2);
    assert_eq!(r.agreed, 2);
    let (side, v) = contract(&d.mismatch);
    assert_eq!(side, Side::Encoder);
    assert_eq!(
        v,
        Violation::LocateDisagrees {
            target: 40,
            expected: 5,
            expected_span: Span::new(40, 8),
            located: 4,
            located_span: Span::new(32, 8),
        }
    );
    assert!(r.to_string().contains("step 2"), "{r}");
}

#[test]
fn locate_missing_the_target_is_caught_on_the_decoding_side() {
    let data: Vec<u32> = (0..40).map(|i| i % 8).collect();
    let r = audit_model(
        || Faulty {
            wrong_inside: true,
            ..Faulty::default()
        },
        &data,
    );
    let d = r.divergence.unwrap();
    let (side, v) = contract(&d.mismatch);
    assert_eq!(side, Side::Decoder);
    assert!(matches!(v, Violation::LocateMisses { .. }), "{v:?}");
    assert_eq!(r.agreed, d.step);
}

#[test]
fn oversize_total_and_empty_spans_are_contract_violations() {
    let r = audit_model(
        || Faulty {
            oversize_total: true,
            ..Faulty::default()
        },
        &[1],
    );
    let (side, v) = contract(&r.divergence.unwrap().mismatch);
    assert_eq!(side, Side::Encoder);
    assert_eq!(v, Violation::TotalOutOfRange { total: 1 << 17 });

    let r = audit_model(
        || Faulty {
            empty_symbol: true,
            ..Faulty::default()
        },
        &[1, 2, 3],
    );
    let d = r.divergence.unwrap();
    assert_eq!(d.step, 2);
    assert_eq!(
        contract(&d.mismatch).1,
        Violation::BadSpan {
            symbol: 3,
            span: Span::new(24, 0),
            total: 64
        }
    );
}

/// Remembers the last symbol — but learns it in `span`, which only the
/// encoding side calls, instead of in `update`.
#[derive(Debug, Default)]
struct LearnsInSpan {
    last: Cell<u32>,
}

impl LearnsInSpan {
    fn span_of(&self, symbol: u32) -> Span {
        // "Same as last" gets 57 of 64, the other seven one each.
        let last = self.last.get();
        let cum = if symbol <= last { symbol } else { symbol + 56 };
        Span::new(cum, if symbol == last { 57 } else { 1 })
    }
}

impl Model for LearnsInSpan {
    fn alphabet_size(&self) -> u32 {
        8
    }
    fn total(&self) -> u32 {
        64
    }
    fn span(&self, symbol: u32) -> Option<Span> {
        if symbol >= 8 {
            return None;
        }
        let span = self.span_of(symbol);
        self.last.set(symbol); // the bug
        Some(span)
    }
    fn locate(&self, target: u32) -> (u32, Span) {
        let s = (0..8).find(|&s| {
            let sp = self.span_of(s);
            target < sp.cum + sp.freq
        });
        let s = s.unwrap_or(7);
        (s, self.span_of(s))
    }
}

#[test]
fn state_changed_outside_update_is_caught() {
    let data = [2u32, 2, 2, 4, 4];
    let r = audit_model(LearnsInSpan::default, &data);
    let d = r.divergence.unwrap();
    // The encoding copy's own check already sees span and locate disagree
    // once `span` has moved the state.
    assert_eq!(d.step, 0);
    assert!(matches!(
        contract(&d.mismatch),
        (Side::Encoder, Violation::LocateDisagrees { .. })
    ));
}

static SHARED_COUNT: AtomicU32 = AtomicU32::new(0);

/// Keeps its counts in a global: both copies share them, so the decoding
/// copy starts where the encoding copy finished.
#[derive(Debug)]
struct GlobalCounts;

impl Model for GlobalCounts {
    fn alphabet_size(&self) -> u32 {
        2
    }
    fn total(&self) -> u32 {
        2 + SHARED_COUNT.load(Ordering::Relaxed).min(1000)
    }
    fn span(&self, symbol: u32) -> Option<Span> {
        match symbol {
            0 => Some(Span::new(
                0,
                1 + SHARED_COUNT.load(Ordering::Relaxed).min(1000),
            )),
            1 => Some(Span::new(self.total() - 1, 1)),
            _ => None,
        }
    }
    fn locate(&self, target: u32) -> (u32, Span) {
        let s = u32::from(target == self.total() - 1);
        (s, self.span(s).unwrap())
    }
    fn update(&mut self, symbol: u32) {
        if symbol == 0 {
            SHARED_COUNT.fetch_add(1, Ordering::Relaxed);
        }
    }
}

#[test]
fn hidden_shared_state_is_caught_as_a_total_mismatch() {
    let data = [0u32, 0, 1, 0, 0, 0];
    let r = audit_model(|| GlobalCounts, &data);
    let d = r.divergence.unwrap();
    assert_eq!(d.step, 0);
    assert!(
        matches!(
            d.mismatch,
            Mismatch::Total {
                encoder: 2,
                decoder: 7
            }
        ),
        "{}",
        d.mismatch
    );
}

#[test]
fn escaped_symbols_are_followed_through_the_escape() {
    // A 65,536-symbol adaptive model codes unseen symbols through its escape.
    let data = [40_000u32, 40_000, 7, 65_535, 7];
    let r = audit_model(|| StepwiseModel::new(65_536).unwrap(), &data);
    assert!(r.is_symmetric(), "{r}");
    // A decoding copy that has already seen symbol 7 no longer escapes it.
    let mut n = 0;
    let r = audit_model(
        || {
            n += 1;
            let mut m = StepwiseModel::new(65_536).unwrap();
            if n == 2 {
                m.update(7);
            }
            m
        },
        &data,
    );
    let d = r.divergence.unwrap();
    assert_eq!(d.step, 0);
    assert!(
        matches!(d.mismatch, Mismatch::Total { .. }),
        "{}",
        d.mismatch
    );
}

/// Logs which instance (by factory call) learned each symbol.
struct Tagged {
    inner: StepwiseModel,
    call: u32,
    log: std::rc::Rc<std::cell::RefCell<Vec<u32>>>,
}

impl Model for Tagged {
    fn alphabet_size(&self) -> u32 {
        self.inner.alphabet_size()
    }
    fn total(&self) -> u32 {
        self.inner.total()
    }
    fn span(&self, symbol: u32) -> Option<Span> {
        self.inner.span(symbol)
    }
    fn locate(&self, target: u32) -> (u32, Span) {
        self.inner.locate(target)
    }
    fn update(&mut self, symbol: u32) {
        self.log.borrow_mut().push(self.call);
        self.inner.update(symbol);
    }
}

#[test]
fn the_first_factory_call_encodes_and_the_second_decodes() {
    let data = status_codes();
    let log = std::rc::Rc::new(std::cell::RefCell::new(Vec::new()));
    let mut calls = 0;
    let r = audit_model(
        || {
            calls += 1;
            Tagged {
                inner: StepwiseModel::new(8).unwrap(),
                call: calls,
                log: log.clone(),
            }
        },
        &data,
    );
    assert!(r.is_symmetric(), "{r}");
    assert_eq!(calls, 2);
    // Every update of the first instance (the encoding one, as the docs
    // say) comes before any of the second's.
    let log = log.borrow();
    let n = data.len();
    assert_eq!(log.len(), 2 * n);
    assert!(log[..n].iter().all(|&c| c == 1) && log[n..].iter().all(|&c| c == 2));
}

#[test]
fn public_preset_docs_name_no_private_items() {
    // The module's own documentation (`//!` lines) is public; steps for
    // contributors, which name private functions, live in DEVELOPERS.md.
    let source = include_str!("../../src/preset/mod.rs");
    let docs: String = source
        .lines()
        .filter_map(|l| l.trim_start().strip_prefix("//!"))
        .collect::<Vec<_>>()
        .join("\n");
    for private in [
        "check_params",
        "decode_into",
        "NAME_LIST",
        "codec.rs",
        "# Adding",
    ] {
        assert!(
            !docs.contains(private),
            "preset module docs name `{private}`"
        );
    }
}
