//! The table model: span / locate consistency, construction errors, and the
//! serialised form (round trip, and rejection of truncated or damaged
//! tables with an error, never a panic).

use crate::support::strategies::{power_of_two_frequencies, table_from_counts};
use proptest::prelude::*;
use subrange::model::{Model, Span, TableModel};
use subrange::ErrorKind;

/// The model keeps its documented invariant: spans tile `0 .. total` in
/// symbol order, zero frequencies have no span, and `locate` inverts `span`
/// for every target.
fn check_consistent(m: &TableModel) -> Result<(), TestCaseError> {
    let total = m.total();
    prop_assert_eq!(total, 1 << m.log2_total());
    prop_assert_eq!(m.frequencies().len() as u32, m.alphabet_size());
    prop_assert_eq!(m.frequencies().iter().sum::<u32>(), total);
    let mut cum = 0;
    for (s, &f) in m.frequencies().iter().enumerate() {
        let expected = (f > 0).then_some(Span::new(cum, f));
        prop_assert_eq!(m.span(s as u32), expected);
        cum += f;
    }
    prop_assert_eq!(m.span(m.alphabet_size()), None);
    for t in 0..total {
        let (s, span) = m.locate(t);
        prop_assert!(span.cum <= t && t < span.cum + span.freq);
        prop_assert_eq!(m.span(s), Some(span));
    }
    Ok(())
}

fn any_table() -> impl Strategy<Value = TableModel> {
    prop_oneof![
        table_from_counts(300),
        power_of_two_frequencies(300).prop_map(|f| TableModel::from_frequencies(&f).unwrap()),
        // Large, sparse alphabets.
        (
            prop::collection::vec((0u32..65_536, 1u64..100), 1..200),
            0u32..=16
        )
            .prop_map(|(entries, k)| {
                let mut counts = vec![0u64; 65_536];
                for (s, c) in entries {
                    counts[s as usize] += c;
                }
                let present = counts.iter().filter(|&&c| c > 0).count() as u32;
                TableModel::from_counts(&counts, k.max(32 - (present - 1).leading_zeros())).unwrap()
            }),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn models_are_consistent(m in any_table()) {
        check_consistent(&m)?;
    }

    #[test]
    fn serialisation_round_trip(m in any_table(), trailing in prop::collection::vec(any::<u8>(), 0..8)) {
        let bytes = m.to_bytes();
        let (back, used) = TableModel::from_table_bytes(&bytes, 1 << 16).unwrap();
        prop_assert_eq!(&back, &m);
        prop_assert_eq!(used, bytes.len());
        // Bytes after the table are left alone.
        let mut longer = bytes.clone();
        longer.extend(&trailing);
        let (back, used) = TableModel::from_table_bytes(&longer, 1 << 16).unwrap();
        prop_assert_eq!(&back, &m);
        prop_assert_eq!(used, bytes.len());
        // The alphabet limit is enforced before anything is allocated.
        let a = m.alphabet_size();
        prop_assert!(TableModel::from_table_bytes(&bytes, a).is_ok());
        let err = TableModel::from_table_bytes(&bytes, a - 1).unwrap_err();
        let is_limit = matches!(err.kind(), ErrorKind::LimitExceeded { declared, limit, .. }
            if *declared == u64::from(a) && *limit == u64::from(a - 1));
        prop_assert!(is_limit, "{:?}", err);
    }

    /// Every proper prefix is missing at least one bit the reader needs (the
    /// last byte holds part of the last code), so every one is an error.
    #[test]
    fn every_truncation_is_rejected(m in any_table()) {
        let bytes = m.to_bytes();
        for cut in 0..bytes.len() {
            let err = TableModel::from_table_bytes(&bytes[..cut], 1 << 16).unwrap_err();
            prop_assert!(matches!(err.kind(), ErrorKind::CorruptTable { .. }), "cut {}: {:?}", cut, err);
        }
    }

    /// Damage is either rejected or yields some valid table (a flipped bit
    /// can turn one valid table into another); it never panics.
    #[test]
    fn damage_is_rejected_or_harmless(
        m in any_table(),
        flips in prop::collection::vec((any::<u32>(), 0u8..8), 1..5),
    ) {
        let mut bytes = m.to_bytes();
        for (at, bit) in flips {
            let i = at as usize % bytes.len();
            bytes[i] ^= 1 << bit;
        }
        match TableModel::from_table_bytes(&bytes, 1 << 16) {
            Ok((t, used)) => {
                prop_assert!(used <= bytes.len());
                check_consistent(&t)?;
            }
            Err(e) => prop_assert!(
                matches!(e.kind(), ErrorKind::CorruptTable { .. }),
                "{:?}", e
            ),
        }
    }

    #[test]
    fn arbitrary_bytes_never_panic(bytes in prop::collection::vec(any::<u8>(), 0..64), limit in 1u32..=65_536) {
        match TableModel::from_table_bytes(&bytes, limit) {
            Ok((t, used)) => {
                prop_assert!(used <= bytes.len());
                prop_assert!(t.alphabet_size() <= limit);
                check_consistent(&t)?;
            }
            Err(e) => prop_assert!(
                matches!(e.kind(), ErrorKind::CorruptTable { .. } | ErrorKind::LimitExceeded { .. }),
                "{:?}", e
            ),
        }
    }
}

#[test]
fn construction_errors() {
    let invalid = |r: subrange::Result<TableModel>| {
        matches!(r.unwrap_err().kind(), ErrorKind::InvalidParameter { .. })
    };
    assert!(invalid(TableModel::from_counts(&[], 8)));
    assert!(invalid(TableModel::from_counts(&[0, 0], 8)));
    assert!(invalid(TableModel::from_counts(&[1, 1, 1], 1)));
    assert!(invalid(TableModel::from_counts(&[1], 17)));
    assert!(invalid(TableModel::from_counts(&vec![1; 65_537], 16)));
    assert!(invalid(TableModel::from_frequencies(&[])));
    assert!(invalid(TableModel::from_frequencies(&[0, 0])));
    assert!(invalid(TableModel::from_frequencies(&[3, 2])));
    assert!(invalid(TableModel::from_frequencies(&[65_536, 65_536])));
    assert!(invalid(TableModel::from_frequencies(&[u32::MAX, 1])));
    assert!(invalid(TableModel::from_frequencies(&vec![1; 65_537])));
    assert!(invalid(TableModel::from_probabilities(&[0.5, f64::NAN], 8)));
    assert!(invalid(TableModel::from_probabilities(&[0.5, -0.1], 8)));
    assert!(invalid(TableModel::from_probabilities(&[f64::INFINITY], 8)));
    assert!(invalid(TableModel::from_probabilities(&[0.0, 0.0], 8)));
    assert!(invalid(TableModel::from_probabilities(&[], 8)));
    assert!(invalid(TableModel::from_bytes_histogram(&[], 8)));
    // Tiny but positive weights keep their symbol.
    let m = TableModel::from_probabilities(&[1.0, 1e-300], 8).unwrap();
    assert_eq!(m.frequencies(), &[255, 1]);
}
