//! Probabilities from outside: coding cost against the ideal, errors,
//! determinism and the frequency-table invariants.

use crate::support::{Draws, SplitMix64};
use proptest::prelude::*;
use subrange::coder::{Decoder, Encoder};
use subrange::model::{quantize_probabilities, Model, ProbabilityAdapter};
use subrange::ErrorKind;

/// A discretised Gaussian (`laplace == false`) or Laplacian over 256 symbols.
fn distribution(mean: f64, scale: f64, laplace: bool) -> Vec<f64> {
    (0..256)
        .map(|k| {
            let d = k as f64 - mean;
            if laplace {
                (-d.abs() / scale).exp()
            } else {
                (-d * d / (2.0 * scale * scale)).exp()
            }
        })
        .collect()
}

/// Draws a symbol from (unnormalised) weights.
fn draw(rng: &mut SplitMix64, p: &[f64]) -> usize {
    let sum: f64 = p.iter().sum();
    let mut u = rng.unit() * sum;
    for (i, &x) in p.iter().enumerate() {
        if u < x {
            return i;
        }
        u -= x;
    }
    p.iter().rposition(|&x| x > 0.0).unwrap()
}

/// Step `i`'s drifting distribution.
fn step_distribution(i: usize, laplace: bool) -> Vec<f64> {
    let t = i as f64;
    let mean = 128.0 + 90.0 * (t / 700.0).sin();
    let scale = if laplace {
        5.0 + 3.5 * (t / 450.0).sin()
    } else {
        7.0 + 5.0 * (t / 330.0).cos()
    };
    distribution(mean, scale, laplace)
}

/// Codes `steps` symbols drawn from drifting distributions, returns
/// (coded bits, ideal bits Σ -log2 p computed in f64 from the given values).
fn code_drifting(steps: usize, laplace: bool, as_f32: bool) -> (f64, f64) {
    let mut rng = SplitMix64::new(0x5EED_0001 + laplace as u64);
    let mut adapter = ProbabilityAdapter::new();
    let mut encoder = Encoder::new();
    let mut ideal = 0.0f64;
    let mut symbols = Vec::with_capacity(steps);
    let load = |adapter: &mut ProbabilityAdapter, i: usize| -> Vec<f64> {
        let p = step_distribution(i, laplace);
        if as_f32 {
            let p32: Vec<f32> = p.iter().map(|&x| x as f32).collect();
            adapter.set_probabilities(&p32).unwrap();
            p32.iter().map(|&x| f64::from(x)).collect()
        } else {
            adapter.set_probabilities(&p).unwrap();
            p
        }
    };
    for i in 0..steps {
        let given = load(&mut adapter, i);
        let s = draw(&mut rng, &given);
        let sum: f64 = given.iter().sum();
        ideal -= (given[s] / sum).log2();
        encoder.encode(&mut adapter, s as u32).unwrap();
        symbols.push(s as u32);
    }
    let bytes = encoder.finish().unwrap();
    // The decoding side recomputes the same probabilities.
    let mut decoder = Decoder::new(&bytes).unwrap();
    for (i, &s) in symbols.iter().enumerate() {
        load(&mut adapter, i);
        assert_eq!(decoder.decode(&mut adapter).unwrap(), s, "step {i}");
    }
    decoder.finish().unwrap();
    (bytes.len() as f64 * 8.0, ideal)
}

fn check_within_half_a_percent(laplace: bool) {
    for as_f32 in [false, true] {
        let (coded, ideal) = code_drifting(20_000, laplace, as_f32);
        let overhead = (coded / ideal - 1.0) * 100.0;
        eprintln!("laplace={laplace} f32={as_f32}: coded {coded} bits, ideal {ideal:.1}, overhead {overhead:.4} %");
        assert!(
            coded <= ideal * 1.005,
            "laplace={laplace} f32={as_f32}: coded {coded} bits, ideal {ideal:.0}"
        );
    }
}

#[test]
fn drifting_gaussian_within_half_a_percent_of_ideal() {
    check_within_half_a_percent(false);
}

#[test]
fn drifting_laplacian_within_half_a_percent_of_ideal() {
    check_within_half_a_percent(true);
}

#[test]
fn exact_dyadic_probabilities_are_kept() {
    // A distribution a power-of-two total represents exactly must come out
    // unchanged (common practice for any quantiser).
    let p = [0.5f64, 0.25, 0.125, 0.0625, 0.0625];
    assert_eq!(
        quantize_probabilities(&p, 16).unwrap(),
        vec![32768, 16384, 8192, 4096, 4096]
    );
    // Unnormalised weights in the same ratio give the same table.
    let w = [8.0f32, 4.0, 2.0, 1.0, 1.0];
    assert_eq!(
        quantize_probabilities(&w, 16).unwrap(),
        quantize_probabilities(&p, 16).unwrap()
    );
}

#[test]
fn zero_probabilities_get_one_unit_from_the_others() {
    // x = [16, 0, 0] units of 16: two symbols need raising, the one with
    // something above one unit pays (worked by hand: 1 + 13, 1, 1).
    assert_eq!(
        quantize_probabilities(&[1.0f64, 0.0, 0.0], 4).unwrap(),
        vec![14, 1, 1]
    );
    // Uniform over 256 at 2^16: 256 units each, exactly.
    let f = quantize_probabilities(&[1.0f32; 256], 16).unwrap();
    assert!(f.iter().all(|&x| x == 256));
}

#[test]
fn invalid_inputs_are_typed_errors() {
    let mut a = ProbabilityAdapter::new();
    let cases: [&[f64]; 7] = [
        &[],
        &[0.5, f64::NAN],
        &[0.5, f64::INFINITY],
        &[f64::NEG_INFINITY, 1.0],
        &[0.5, -0.1],
        &[0.0, 0.0, -0.0],
        &[-1e-320, 1.0],
    ];
    for probs in cases {
        let err = a.set_probabilities(probs).unwrap_err();
        assert!(
            matches!(
                err.kind(),
                ErrorKind::InvalidParameter {
                    name: "probabilities",
                    ..
                }
            ),
            "{probs:?}: {err}"
        );
        assert_eq!(a.alphabet_size(), 0, "a failed step leaves no table");
    }
    let mut small = ProbabilityAdapter::with_log2_total(3).unwrap();
    assert!(small.set_probabilities(&[1.0f32; 9]).is_err());
    assert!(small.set_probabilities(&[1.0f32; 8]).is_ok());
    assert!(ProbabilityAdapter::with_log2_total(0).is_err());
}

#[test]
fn no_table_means_no_coding() {
    let mut a = ProbabilityAdapter::new();
    let mut enc = Encoder::new();
    let err = enc.encode(&mut a, 0).unwrap_err();
    assert!(matches!(err.kind(), ErrorKind::UncodableSymbol { .. }));
    let bytes = [0x12u8, 0x34, 0x56, 0x78];
    let mut dec = Decoder::new(&bytes).unwrap();
    let err = dec.decode(&mut a).unwrap_err();
    assert!(matches!(err.kind(), ErrorKind::InvalidModel { .. }));
}

fn weights() -> impl Strategy<Value = Vec<f64>> {
    prop::collection::vec(
        prop_oneof![
            3 => 0.0f64..1.0,
            1 => Just(0.0),
            1 => 1e-300f64..1e300,
        ],
        1..300,
    )
    .prop_filter("not all zero", |w| w.iter().any(|&x| x > 0.0))
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn tables_keep_the_invariants(w in weights(), k in 9u32..=16) {
        let mut a = ProbabilityAdapter::with_log2_total(k).unwrap();
        a.set_probabilities(&w).unwrap();
        let cum = a.cumulative();
        prop_assert_eq!(cum.len(), w.len() + 1);
        prop_assert_eq!(cum[0], 0);
        prop_assert_eq!(*cum.last().unwrap(), 1u32 << k);
        prop_assert!(cum.windows(2).all(|c| c[1] > c[0]));
        // locate inverts span at both ends of every span.
        for s in 0..w.len() as u32 {
            let span = a.span(s).unwrap();
            prop_assert_eq!(a.locate(span.cum), (s, span));
            prop_assert_eq!(a.locate(span.cum + span.freq - 1), (s, span));
        }
        // Same input, same table (a fresh adapter agrees with a reused one).
        prop_assert_eq!(quantize_probabilities(&w, k).unwrap(),
            cum.windows(2).map(|c| c[1] - c[0]).collect::<Vec<_>>());
    }

    #[test]
    fn within_one_unit_when_no_symbol_needs_raising(w in prop::collection::vec(0.01f64..1.0, 1..200)) {
        let sum: f64 = w.iter().sum();
        let total = 65536.0;
        prop_assume!(w.iter().all(|&x| x / sum * total >= 1.0));
        let f = quantize_probabilities(&w, 16).unwrap();
        for (i, (&fi, &wi)) in f.iter().zip(&w).enumerate() {
            let ideal = wi / sum * total;
            prop_assert!((f64::from(fi) - ideal).abs() < 1.0 + 1e-6, "symbol {}: {} vs {}", i, fi, ideal);
        }
    }

    #[test]
    fn f32_and_f64_of_the_same_values_agree(w in prop::collection::vec(0.0f32..10.0, 1..100)) {
        prop_assume!(w.iter().any(|&x| x > 0.0));
        let wide: Vec<f64> = w.iter().map(|&x| f64::from(x)).collect();
        prop_assert_eq!(quantize_probabilities(&w, 16).unwrap(), quantize_probabilities(&wide, 16).unwrap());
    }
}
