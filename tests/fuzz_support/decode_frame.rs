//! Primed messages from untrusted bytes: snapshots and frames.
//!
//! Input layout: byte 0 picks what the rest is.
//!
//! | byte 0 % 3 | the rest |
//! | --- | --- |
//! | 0 | a snapshot (its length in bytes 1–2, little-endian), then a frame: the snapshot is parsed and, if valid, the frame is decoded with it |
//! | 1 | a frame, decoded with each of three built-in snapshots (adaptive, table and context models trained on gauge text) |
//! | 2 | byte 1 picks model parameters; the first half of the rest trains a model, whose snapshot is written, parsed and restored; the second half is a message coded from it and decoded back |
//!
//! Promises checked: no panic; a decoded message is at most the length
//! limit; a frame whose identifier names another snapshot is a snapshot
//! error; a snapshot's bytes parse back to the same snapshot and restore to
//! the same model; a message round-trips. Allocation is bounded by the input
//! and the length limit (snapshot readers check declared counts against the
//! bytes left).

use std::sync::OnceLock;

use subrange::model::{
    AdaptiveModel, ContextModel, ContextParams, Model, Snapshot, TableModel, MAX_CONTEXT_LIMIT,
};
use subrange::prime::{decode_message, encode_message, frame_snapshot_id, Primer};
use subrange::ErrorKind;

/// Longest message a frame may declare here.
pub const MAX_LEN: usize = 1024;

fn gauge_text() -> Vec<u8> {
    let mut s = String::new();
    for i in 0..60u32 {
        s += &format!(
            "{} {}\n{} {}.{} {}.{}\n",
            3 + i % 5,
            1_714_521_600 + 600 * i,
            200 + i % 7,
            45 + i % 3,
            i % 10,
            12,
            i % 9
        );
    }
    s.into_bytes()
}

/// The built-in snapshots, trained once.
fn built_in() -> &'static [Snapshot; 3] {
    static SNAPSHOTS: OnceLock<[Snapshot; 3]> = OnceLock::new();
    SNAPSHOTS.get_or_init(|| {
        let text = gauge_text();
        let mut adaptive = AdaptiveModel::new(256).expect("valid alphabet");
        for &b in &text {
            adaptive.update(b.into());
        }
        let table = TableModel::from_bytes_histogram(&text, 12).expect("non-empty text");
        let mut context = ContextModel::new(ContextParams::default()).expect("default parameters");
        context.train(&text);
        [
            Snapshot::capture(&adaptive).expect("capturable"),
            Snapshot::capture(&table).expect("capturable"),
            Snapshot::capture(&context).expect("capturable"),
        ]
    })
}

/// Decodes `frame` with `snapshot`; checks the length limit and the
/// identifier rule.
fn decode_with(snapshot: &Snapshot, frame: &[u8]) {
    match decode_message(snapshot, frame, MAX_LEN) {
        Ok(message) => assert!(message.len() <= MAX_LEN, "message above its limit"),
        Err(e) => {
            if let Ok(id) = frame_snapshot_id(frame) {
                if id != snapshot.id() {
                    assert!(
                        matches!(e.kind(), ErrorKind::Snapshot { .. }),
                        "a frame of another snapshot gave {e}"
                    );
                }
            }
        }
    }
}

/// Trains the model `pick` selects on `sample`, checks its snapshot, and
/// round-trips `message` from it.
fn round_trip(pick: u8, sample: &[u8], message: &[u8]) {
    let snapshot = if pick & 1 == 0 {
        let mut params = ContextParams::default();
        params.max_order = pick >> 1 & 3;
        params.increment = 1 + u32::from(pick >> 3 & 7);
        params.limit = [64, 255, 1024, MAX_CONTEXT_LIMIT][usize::from(pick >> 6)];
        let mut model = ContextModel::new(params).expect("parameters in range");
        model.train(sample);
        let snapshot = Snapshot::capture(&model).expect("capturable");
        let back: ContextModel = snapshot.restore().expect("own snapshot restores");
        assert_eq!(back, model, "context model changed through its snapshot");
        snapshot
    } else {
        let mut model = AdaptiveModel::new(256).expect("valid alphabet");
        for &b in sample {
            model.update(b.into());
        }
        let snapshot = Snapshot::capture(&model).expect("capturable");
        let back: AdaptiveModel = snapshot.restore().expect("own snapshot restores");
        assert_eq!(back, model, "adaptive model changed through its snapshot");
        snapshot
    };
    let parsed = Snapshot::from_bytes(snapshot.as_bytes()).expect("own bytes parse");
    assert_eq!(parsed, snapshot);
    let frame = encode_message(&snapshot, message).expect("any bytes code");
    let back = decode_message(&snapshot, &frame, message.len()).expect("own frame decodes");
    assert!(back == message, "primed message round trip differs");
    if pick & 1 == 0 {
        let primer: Primer<ContextModel> = Primer::new(&snapshot).expect("restores");
        assert_eq!(primer.encode_message(message).expect("codes"), frame);
    }
}

/// Runs every check on one input; panics on the first broken promise.
pub fn check(input: &[u8]) {
    let Some((&mode, rest)) = input.split_first() else {
        return;
    };
    match mode % 3 {
        0 => {
            let Some((len, rest)) = rest.split_first_chunk::<2>() else {
                return;
            };
            let len = usize::from(u16::from_le_bytes(*len)).min(rest.len());
            let (snapshot, frame) = rest.split_at(len);
            if let Ok(snapshot) = Snapshot::from_bytes(snapshot) {
                decode_with(&snapshot, frame);
            }
        }
        1 => {
            for snapshot in built_in() {
                decode_with(snapshot, rest);
            }
        }
        _ => {
            let Some((&pick, rest)) = rest.split_first() else {
                return;
            };
            let (sample, message) = rest.split_at(rest.len() / 2);
            round_trip(pick, sample, message);
        }
    }
}
