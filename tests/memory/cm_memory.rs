//! The context-mixing engines allocate what their parameters declare for the
//! block they code, and a short block allocates little: a counting global
//! allocator records the peak of live heap bytes while each block is decoded,
//! and it must lie between `memory_needed_for(len)` (every table is live at
//! once) and that plus the output and a few small buffers.
#![cfg(feature = "std")]

use std::sync::Mutex;

use subrange::model::cm::{
    decode_mix, decode_order2, encode_mix, encode_order2, MixParams, Order2Params,
};

#[path = "fuzz_support/alloc.rs"]
mod alloc;

#[global_allocator]
static GLOBAL: alloc::Counting = alloc::Counting;

/// Tests of this file run one at a time, so that peaks are their own.
static SERIAL: Mutex<()> = Mutex::new(());

/// Bytes beside the tables and the output: the coder, the engines' small
/// context state, and what the test harness itself allocates meanwhile
/// (the counter sees the whole process; the harness reports a finished
/// test while the next one measures, a few KiB).
const SLACK: u64 = 64 << 10;

fn peak_during<T>(f: impl FnOnce() -> T) -> (T, u64) {
    let (r, peak) = alloc::peak_during(f);
    (r, peak as u64)
}

/// Synthetic river-gauge records (seeded): station, water level, flow and
/// temperature, one line each.
fn gauge_lines(len: usize) -> Vec<u8> {
    let mut state = 0x2024_0611u32;
    let mut out = Vec::with_capacity(len + 64);
    let mut level = 1800i32;
    while out.len() < len {
        // Numerical Recipes constants (common practice).
        state = state.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
        level += (state >> 28) as i32 - 7;
        let station = 3 + (state >> 20) % 4;
        let line = format!(
            "gauge {station},level {}.{:03} m,flow {}.{} m3/s,temp {}.{} C\n",
            level / 1000,
            level.rem_euclid(1000),
            2 + (state >> 12) % 3,
            (state >> 8) % 10,
            11 + (state >> 4) % 3,
            state % 10
        );
        out.extend_from_slice(line.as_bytes());
    }
    out.truncate(len);
    out
}

#[test]
fn order2_allocates_what_it_declares() {
    let _guard = SERIAL.lock().unwrap_or_else(|e| e.into_inner());
    for order1 in [true, false] {
        let mut p = Order2Params::default();
        p.order1 = order1;
        let mut last = 0;
        for len in [0, 1, 16, 300, 5000, 70_000] {
            let data = gauge_lines(len);
            let coded = encode_order2(&data, &p).unwrap();
            let (back, peak) = peak_during(|| decode_order2(&coded, len, &p).unwrap());
            assert_eq!(back, data);
            let need = p.memory_needed_for(len);
            assert!(need >= last, "needs grow with the block");
            last = need;
            assert!(need <= p.memory_needed());
            assert!(
                peak >= need && peak <= need + len as u64 + SLACK,
                "order1 {order1}, {len} bytes: peak {peak}, declared {need}"
            );
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
    let _guard = SERIAL.lock().unwrap_or_else(|e| e.into_inner());
    let mut p = MixParams::default();
    p.mem_log2 = 2;
    let mut last = 0;
    for len in [0, 1, 16, 300, 3000, 9000] {
        let data = gauge_lines(len);
        let coded = encode_mix(&data, &p).unwrap();
        let (back, peak) = peak_during(|| decode_mix(&coded, len, &p).unwrap());
        assert_eq!(back, data);
        let need = p.memory_needed_for(len);
        assert!(need >= last, "needs grow with the block");
        last = need;
        assert!(need <= p.memory_needed());
        assert!(
            peak >= need && peak <= need + len as u64 + SLACK,
            "{len} bytes: peak {peak}, declared {need}"
        );
    }
    assert!(
        MixParams::default().memory_needed_for(300) < 1 << 20,
        "a short block stays small"
    );
}
