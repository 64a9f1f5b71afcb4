//! Arbitrary bytes into the MQ decoder for a bounded number of decisions:
//! never a panic, a hang or an input-driven allocation, never a byte read
//! past the input, and out-of-range contexts always a typed error.
//!
//! Input layout: byte 0 picks the number of contexts (1..=32), bytes 1..3
//! the number of decisions (little-endian u16, capped by the stream's
//! length), byte 3 seeds the order in which contexts are asked for; the
//! rest is the coded stream.

use subrange::mq::{MqContexts, MqDecoder, MqError};

/// Runs every check on one input; panics on the first broken promise.
pub fn check(data: &[u8]) {
    let Some((&[count, low, high, seed], stream)) = data.split_first_chunk::<4>() else {
        return;
    };
    let count = usize::from(count % 32) + 1;
    // Far more decisions than the stream can feed would only decode the
    // padding after its end, at a high cost per input: at most 32 per byte,
    // plus 1024 past the end.
    let decisions = usize::from(u16::from_le_bytes([low, high])).min(1024 + 32 * stream.len());
    let mut pick = u32::from(seed);

    let mut contexts = MqContexts::new(count);
    let mut decoder = MqDecoder::new(stream);
    for _ in 0..decisions {
        // A small LCG (common practice); `count` itself is out of range.
        pick = pick.wrapping_mul(1_103_515_245).wrapping_add(12_345);
        let cx = (pick >> 16) as usize % (count + 1);
        match decoder.decode(&mut contexts, cx) {
            Ok(_) => assert!(cx < count),
            Err(e) => assert_eq!(
                e,
                MqError::ContextOutOfRange {
                    context: cx,
                    contexts: count
                }
            ),
        }
    }
    assert!(decoder.bytes_read() <= stream.len());

    // The bulk path decodes exactly what single calls decode.
    let mut bulk = vec![false; decisions];
    MqDecoder::new(stream)
        .decode_many(&mut MqContexts::new(1), 0, &mut bulk)
        .unwrap();
    let mut single_contexts = MqContexts::new(1);
    let mut single = MqDecoder::new(stream);
    for &d in &bulk {
        assert_eq!(single.decode(&mut single_contexts, 0).unwrap(), d);
    }
}
