//! Arbitrary bytes into the MQ decoder: never a panic, never a hang, never
//! an allocation driven by the input; context indices out of range are typed
//! errors that leave the decoder untouched.

use proptest::prelude::*;
use subrange::mq::{MqContexts, MqDecoder, MqError};

proptest! {
    #![proptest_config(ProptestConfig::with_cases(128))]

    #[test]
    fn arbitrary_bytes_decode_without_panic(
        data in prop::collection::vec(
            prop_oneof![4 => any::<u8>(), 1 => Just(0xFFu8), 1 => 0x80u8..0x90],
            0..256,
        ),
        count in 0usize..16,
        requests in prop::collection::vec(0usize..20, 0..4000),
    ) {
        let mut contexts = MqContexts::new(count);
        let mut decoder = MqDecoder::new(&data);
        for &cx in &requests {
            match decoder.decode(&mut contexts, cx) {
                Ok(_) => prop_assert!(cx < count),
                Err(e) => {
                    prop_assert!(cx >= count);
                    prop_assert_eq!(e, MqError::ContextOutOfRange { context: cx, contexts: count });
                }
            }
            prop_assert!(decoder.bytes_read() <= data.len());
        }
    }

    #[test]
    fn decode_many_is_bounded_by_its_output(
        data in prop::collection::vec(any::<u8>(), 0..64),
        n in 0usize..20_000,
        index in 0u8..47,
        mps in any::<bool>(),
    ) {
        let mut contexts = MqContexts::new(1);
        contexts.set(0, index, mps).unwrap();
        let mut decoder = MqDecoder::new(&data);
        let mut out = vec![false; n];
        decoder.decode_many(&mut contexts, 0, &mut out).unwrap();
        prop_assert!(decoder.bytes_read() <= data.len());

        // Same decisions one at a time.
        let mut contexts = MqContexts::new(1);
        contexts.set(0, index, mps).unwrap();
        let mut single = MqDecoder::new(&data);
        for (i, &d) in out.iter().enumerate() {
            prop_assert_eq!(single.decode(&mut contexts, 0).unwrap(), d, "decision {}", i);
        }
    }

    #[test]
    fn a_rejected_context_changes_nothing(
        data in prop::collection::vec(any::<u8>(), 0..64),
        bad in 3usize..usize::MAX,
        at in 0usize..200,
    ) {
        let mut contexts = MqContexts::new(3);
        let mut other = MqContexts::new(3);
        let mut decoder = MqDecoder::new(&data);
        let mut clean = MqDecoder::new(&data);
        for i in 0..400 {
            if i == at {
                prop_assert!(decoder.decode(&mut contexts, bad).is_err());
                let mut out = [false; 4];
                prop_assert!(decoder.decode_many(&mut contexts, bad, &mut out).is_err());
                prop_assert_eq!(out, [false; 4]);
            }
            let cx = i % 3;
            prop_assert_eq!(decoder.decode(&mut contexts, cx).unwrap(), clean.decode(&mut other, cx).unwrap());
        }
        prop_assert_eq!(contexts, other);
    }
}

#[test]
fn a_million_decisions_past_the_end_finish() {
    // Nothing but filler: every decision still takes bounded work.
    for data in [&[][..], &[0xFF][..], &[0x00][..], &[0xFF, 0x8F][..]] {
        let mut contexts = MqContexts::new(1);
        let mut decoder = MqDecoder::new(data);
        let mut out = vec![false; 1_000_000];
        decoder.decode_many(&mut contexts, 0, &mut out).unwrap();
        assert_eq!(decoder.bytes_read(), data.len());
        assert!(decoder.filler_bytes() > 0);
    }
}
