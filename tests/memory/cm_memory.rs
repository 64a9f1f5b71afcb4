//! The context-mixing engines allocate what their parameters declare for the
//! block they code, and a short block allocates little: a counting global
//! allocator records the peak of live heap bytes while each block is decoded,
//! and it must lie between `memory_needed_for(len)` (every table is live at
//! once) and that plus the output and a few small buffers.

use subrange::corpus::gauge_csv;
use subrange::model::cm::{
    decode_mix, decode_order2, encode_mix, encode_order2, MixParams, Order2Params,
};

use crate::serial;

/// Bytes beside the tables and the output: the coder, the engines' small
/// context state, and what the test harness itself allocates meanwhile
/// (the counter sees the whole process; the harness reports a finished
/// test while the next one measures, a few KiB).
const SLACK: u64 = 64 << 10;

/// What the harness may free while a test measures (the report of a test
/// that just finished), so the peak above the starting level can come out
/// this much below what the decoder allocated.
const FREED_MEANWHILE: u64 = 4 << 10;

/// Runs `f` and returns its result with the peak of live heap bytes above
/// the level at the start.
fn peak_during<T>(f: impl FnOnce() -> T) -> (T, u64) {
    let (r, peak) = crate::fuzz_support::alloc::peak_during(f);
    (r, peak as u64)
}

/// The decoder's peak is what it declared, give or take the harness's
/// meanwhile frees below and the output and small state above.
fn check_peak(what: &str, peak: u64, need: u64, len: usize) {
    assert!(
        peak + FREED_MEANWHILE >= need && peak <= need + len as u64 + SLACK,
        "{what}: peak {peak}, declared {need}"
    );
}

#[test]
fn order2_allocates_what_it_declares() {
    let _serial = serial();
    for order1 in [true, false] {
        let mut p = Order2Params::default();
        p.order1 = order1;
        let mut last = 0;
        for len in [0, 1, 16, 300, 5000, 70_000] {
            let data = gauge_csv(0x2024_0611, len);
            let coded = encode_order2(&data, &p).unwrap();
            let (back, peak) = peak_during(|| decode_order2(&coded, len, &p).unwrap());
            assert_eq!(back, data);
            let need = p.memory_needed_for(len);
            assert!(need >= last, "needs grow with the block");
            last = need;
            assert!(need <= p.memory_needed());
            check_peak(&format!("order1 {order1}, {len} bytes"), peak, need, len);
        }
    }
    let p = Order2Params::default();
    assert!(
        p.memory_needed_for(300) < 1 << 20,
        "a short block stays small"
    );
    assert_eq!(p.memory_needed_for(70_000), p.memory_needed());
}

#[test]
fn mix_allocates_what_it_declares() {
    let _serial = serial();
    let mut p = MixParams::default();
    p.mem_log2 = 2;
    let mut last = 0;
    for len in [0, 1, 16, 300, 3000, 9000] {
        let data = gauge_csv(0x2024_0611, len);
        let coded = encode_mix(&data, &p).unwrap();
        let (back, peak) = peak_during(|| decode_mix(&coded, len, &p).unwrap());
        assert_eq!(back, data);
        let need = p.memory_needed_for(len);
        assert!(need >= last, "needs grow with the block");
        last = need;
        assert!(need <= p.memory_needed());
        check_peak(&format!("{len} bytes"), peak, need, len);
    }
    assert!(
        MixParams::default().memory_needed_for(300) < 1 << 20,
        "a short block stays small"
    );
}
