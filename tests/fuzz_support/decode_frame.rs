//! Primed messages from untrusted bytes: snapshots and frames.
//!
//! Input layout: byte 0 picks what the rest is.
//!
//! | byte 0 % 3 | the rest |
//! | --- | --- |
//! | 0 | a snapshot (its length in bytes 1–2, little-endian), then a frame: the snapshot is parsed and, if valid, the frame is decoded with it |
//! | 1 | a frame, decoded with each of three built-in snapshots (adaptive, table and context models trained on gauge text) |
//! | 2 | byte 1 picks model parameters; the last half of the rest (at most [`MAX_MESSAGE`] bytes) is a message, the bytes before it (at most the first [`MAX_SAMPLE`]) train a model; the model's snapshot is written, parsed and restored, and the message coded from it and decoded back |
//!
//! Promises checked: no panic; a decoded message is at most the length
//! limit; a frame whose identifier names another snapshot is a snapshot
//! error; a snapshot's bytes parse back to the same snapshot and restore to
//! the same model; a message round-trips. Allocation is bounded by the input
//! and the length limit (snapshot readers check declared counts against the
//! bytes left).
//!
//! Work bound: the context model costs a microsecond or two per coded byte
//! in an instrumented build (its whole table is rebuilt after every byte),
//! so the length limit ([`MAX_LEN`]) and the round-tripped message
//! ([`MAX_MESSAGE`]) are a few dozen to a few hundred bytes, as primed
//! messages are, and the training sample, which sets the size of the
//! snapshot the checks write and restore, at most [`MAX_SAMPLE`]. The
//! built-in snapshots are restored once per process, not per input.

use std::fmt::Debug;
use std::sync::OnceLock;

use subrange::model::{
    ContextModel, ContextParams, Model, Snapshot, SnapshotState, StepwiseModel, TableModel,
    MAX_CONTEXT_LIMIT,
};
use subrange::prime::{decode_message, encode_message, frame_snapshot_id, Primer};
use subrange::{ErrorKind, Result};

/// Longest message a frame may declare here.
pub const MAX_LEN: usize = 256;

/// Longest message the round trip of mode 2 codes (three times: by the
/// one-call functions, decoded back, and by a [`Primer`]).
pub const MAX_MESSAGE: usize = 64;

/// Most bytes mode 2 trains a model on: a context model trained on 256
/// bytes of text holds some hundreds of contexts, and the checks restore
/// its snapshot three times (parsing, allocating and freeing every context).
pub const MAX_SAMPLE: usize = 256;

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

/// A built-in snapshot's model, restored once.
enum BuiltIn {
    Adaptive(Primer<StepwiseModel>),
    Table(Primer<TableModel>),
    Context(Primer<ContextModel>),
}

impl BuiltIn {
    fn id(&self) -> u32 {
        match self {
            BuiltIn::Adaptive(p) => p.id(),
            BuiltIn::Table(p) => p.id(),
            BuiltIn::Context(p) => p.id(),
        }
    }

    fn decode(&self, frame: &[u8]) -> Result<Vec<u8>> {
        match self {
            BuiltIn::Adaptive(p) => p.decode_message(frame, MAX_LEN),
            BuiltIn::Table(p) => p.decode_message(frame, MAX_LEN),
            BuiltIn::Context(p) => p.decode_message(frame, MAX_LEN),
        }
    }
}

/// The built-in snapshots (adaptive, table and context models trained on
/// gauge text), trained and restored once.
fn built_in() -> &'static [BuiltIn; 3] {
    static MODELS: OnceLock<[BuiltIn; 3]> = OnceLock::new();
    MODELS.get_or_init(|| {
        let text = gauge_text();
        let mut adaptive = StepwiseModel::new(256).expect("valid alphabet");
        for &b in &text {
            adaptive.update(b.into());
        }
        let table = TableModel::from_bytes_histogram(&text, 12).expect("non-empty text");
        let mut context = ContextModel::new(ContextParams::default()).expect("default parameters");
        context.train(&text);
        let restore = "built-in snapshots restore";
        [
            BuiltIn::Adaptive(
                Primer::new(&Snapshot::capture(&adaptive).expect("capturable")).expect(restore),
            ),
            BuiltIn::Table(
                Primer::new(&Snapshot::capture(&table).expect("capturable")).expect(restore),
            ),
            BuiltIn::Context(
                Primer::new(&Snapshot::capture(&context).expect("capturable")).expect(restore),
            ),
        ]
    })
}

/// Checks the outcome of decoding `frame` with the snapshot `id`: the length
/// limit and the identifier rule.
fn check_decoded(id: u32, frame: &[u8], decoded: Result<Vec<u8>>) {
    match decoded {
        Ok(message) => assert!(message.len() <= MAX_LEN, "message above its limit"),
        Err(e) => {
            if let Ok(frame_id) = frame_snapshot_id(frame) {
                if frame_id != id {
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
    if pick & 1 == 0 {
        let mut params = ContextParams::default();
        params.max_order = pick >> 1 & 3;
        params.increment = 1 + u32::from(pick >> 3 & 7);
        params.limit = [64, 255, 1024, MAX_CONTEXT_LIMIT][usize::from(pick >> 6)];
        let mut model = ContextModel::new(params).expect("parameters in range");
        model.train(sample);
        check_primed(&model, message);
    } else {
        let mut model = StepwiseModel::new(256).expect("valid alphabet");
        for &b in sample {
            model.update(b.into());
        }
        check_primed(&model, message);
    }
}

/// Captures `model`: its snapshot's bytes parse back to the same snapshot
/// and restore to the same model; `message` coded from it by the one-call
/// functions decodes back, and a [`Primer`] codes the same frame. (The
/// primer's restore serves the model check: each restore parses and builds
/// every context again.)
fn check_primed<M>(model: &M, message: &[u8])
where
    M: SnapshotState + Model + Clone + PartialEq + Debug,
{
    let snapshot = Snapshot::capture(model).expect("capturable");
    let parsed = Snapshot::from_bytes(snapshot.as_bytes()).expect("own bytes parse");
    assert_eq!(parsed, snapshot);
    let primer: Primer<M> = Primer::new(&parsed).expect("own snapshot restores");
    assert_eq!(primer.model(), model, "model changed through its snapshot");
    let frame = encode_message(&snapshot, message).expect("any bytes code");
    let back = decode_message(&snapshot, &frame, message.len()).expect("own frame decodes");
    assert!(back == message, "primed message round trip differs");
    assert_eq!(primer.encode_message(message).expect("codes"), frame);
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
                let decoded = decode_message(&snapshot, frame, MAX_LEN);
                check_decoded(snapshot.id(), frame, decoded);
            }
        }
        1 => {
            for model in built_in() {
                check_decoded(model.id(), rest, model.decode(rest));
            }
        }
        _ => {
            let Some((&pick, rest)) = rest.split_first() else {
                return;
            };
            let (sample, message) = rest.split_at(rest.len() - (rest.len() / 2).min(MAX_MESSAGE));
            round_trip(pick, &sample[..sample.len().min(MAX_SAMPLE)], message);
        }
    }
}
