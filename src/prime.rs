//! Small messages coded from a primed model.
//!
//! A cold adaptive model spends the first part of every message learning
//! what a trained one already knows. For messages of a few dozen to a few
//! hundred bytes — radio frames from a river gauge, say — that learning is
//! most of the message. Priming fixes it: train a model on sample data, save
//! it as a [`Snapshot`], give both ends the snapshot, and start every message
//! from the snapshot's state.
//!
//! A primed message (a *frame*) is:
//!
//! | size    | field                                                    |
//! |--------:|----------------------------------------------------------|
//! | 4       | the snapshot's identifier ([`Snapshot::id`], u32 little-endian) |
//! | 1 ..= 5 | the message length in bytes, LEB128                      |
//! | rest    | the range-coded bytes, each coded with the primed model  |
//!
//! The identifier makes a mismatch loud: decoding with a different snapshot
//! (or none) fails with [`ErrorKind::Snapshot`] instead of yielding garbage.
//! Every message starts from the same state, so messages decode in any order
//! and a lost message costs only itself.
//!
//! Which model to prime: [`StepwiseModel`] (order 0) is the fastest and its
//! snapshot the smallest; [`ContextModel`] (orders 0 to 3, blended) also
//! knows which bytes follow which, so text and records with repeated fields
//! come out far smaller (on 100-byte text gauge frames, roughly 0.6 of the
//! order-0 model's bits), at a few microseconds more per byte. Any model that
//! implements [`Model`] and [`SnapshotState`] works.
//!
//! [`Primer`] holds a restored model and codes any number of messages;
//! [`encode_message`] and [`decode_message`] are one-call forms for the
//! model kinds this crate knows.

use alloc::vec::Vec;

use crate::coder::{Decoder, Encoder};
#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use crate::model::snapshot::{read_vint, write_vint, Snapshot, SnapshotState};
use crate::model::{ContextModel, Model, StepwiseModel, TableModel};

/// Bytes of the snapshot identifier at the start of every frame.
pub const ID_LEN: usize = 4;

/// A restored model that codes messages, each starting from the same state.
///
/// # Example
///
/// ```
/// use subrange::model::{StepwiseModel, Model, Snapshot};
/// use subrange::prime::Primer;
///
/// # fn main() -> Result<(), subrange::Error> {
/// // Yesterday's readings train the model; both ends keep the snapshot.
/// let mut model = StepwiseModel::new(256)?;
/// for _ in 0..20 {
///     for &b in b"1042 231 45.67 12.3\n" {
///         model.update(b.into());
///     }
/// }
/// let snapshot = Snapshot::capture(&model)?;
///
/// let station: Primer = Primer::new(&snapshot)?;
/// let frame = station.encode_message(b"1042 232 45.90 12.4\n")?;
///
/// let base: Primer = Primer::new(&snapshot)?;
/// assert_eq!(base.decode_message(&frame, 1024)?, b"1042 232 45.90 12.4\n");
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone)]
pub struct Primer<M = StepwiseModel> {
    id: u32,
    model: M,
}

impl<M: SnapshotState + Model + Clone> Primer<M> {
    /// Restores the snapshot's model.
    ///
    /// # Errors
    ///
    /// As for [`Snapshot::restore`]; [`ErrorKind::InvalidParameter`] when the
    /// model's alphabet has fewer than 256 symbols (it must code bytes).
    pub fn new(snapshot: &Snapshot) -> Result<Self> {
        let model: M = snapshot.restore()?;
        if model.alphabet_size() < 256 {
            return Err(crate::Error::invalid_parameter(
                "snapshot",
                "a byte message needs a model of at least 256 symbols",
            ));
        }
        Ok(Primer {
            id: snapshot.id(),
            model,
        })
    }

    /// The identifier of the snapshot the model came from.
    pub fn id(&self) -> u32 {
        self.id
    }

    /// The primed model, in the state every message starts from.
    pub fn model(&self) -> &M {
        &self.model
    }

    /// Codes `data` into a frame (see the [module documentation](self)).
    ///
    /// # Errors
    ///
    /// [`ErrorKind::LimitExceeded`] when `data` is longer than `u32::MAX`
    /// bytes; the model's errors (none for this crate's models over bytes).
    pub fn encode_message(&self, data: &[u8]) -> Result<Vec<u8>> {
        encode_with(self.id, || self.model.clone(), data)
    }

    /// Decodes a frame written by [`encode_message`](Primer::encode_message)
    /// with the same snapshot. `max_len` bounds the message length the frame
    /// may declare (and so the memory this call allocates).
    ///
    /// `frame` must be exactly the frame: the range decoder reads up to four
    /// bytes ahead, so a few bytes appended to a frame can go unnoticed (more
    /// are reported). Take the frame's length from the transport.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::Snapshot`] when the frame is too short to hold an
    /// identifier or was coded with another snapshot;
    /// [`ErrorKind::LimitExceeded`] when the declared length is over
    /// `max_len`; [`ErrorKind::CorruptStream`] for a damaged length field or
    /// coded bytes that decode to a byte outside 0 ..= 255;
    /// [`ErrorKind::Truncated`], [`ErrorKind::CorruptStream`] or
    /// [`ErrorKind::TrailingBytes`] for damaged coded bytes.
    pub fn decode_message(&self, frame: &[u8], max_len: usize) -> Result<Vec<u8>> {
        decode_with(self.id, || self.model.clone(), frame, max_len)
    }

    /// As [`encode_message`](Primer::encode_message), coding with the
    /// primer's own model instead of a copy (for the one-call functions,
    /// which restore a model for a single message).
    fn into_encoded(self, data: &[u8]) -> Result<Vec<u8>> {
        encode_with(self.id, || self.model, data)
    }

    /// As [`decode_message`](Primer::decode_message), decoding with the
    /// primer's own model instead of a copy.
    fn into_decoded(self, frame: &[u8], max_len: usize) -> Result<Vec<u8>> {
        decode_with(self.id, || self.model, frame, max_len)
    }
}

/// Codes `data` into a frame of snapshot `id`, with the model `model`
/// gives (asked for once the length is known to fit).
fn encode_with<M: Model>(id: u32, model: impl FnOnce() -> M, data: &[u8]) -> Result<Vec<u8>> {
    let len = u32::try_from(data.len()).map_err(|_| {
        crate::Error::limit_exceeded("message length", data.len() as u64, u32::MAX.into())
    })?;
    let mut frame = Vec::with_capacity(ID_LEN + 5 + data.len() / 2 + 8);
    frame.extend_from_slice(&id.to_le_bytes());
    write_vint(&mut frame, len);
    let mut model = model();
    let mut encoder = Encoder::with_sink(frame);
    for &b in data {
        encoder.encode(&mut model, b.into())?;
    }
    encoder.finish()
}

/// Decodes a frame of snapshot `id` with the model `model` gives (asked
/// for once the identifier and the declared length have passed).
fn decode_with<M: Model>(
    id: u32,
    model: impl FnOnce() -> M,
    frame: &[u8],
    max_len: usize,
) -> Result<Vec<u8>> {
    if frame_snapshot_id(frame)? != id {
        return Err(crate::Error::snapshot(
            "the message was coded with a different snapshot",
        ));
    }
    let mut rest = &frame[ID_LEN..];
    let len = read_vint(&mut rest)
        .map_err(|_| crate::Error::corrupt_stream(ID_LEN as u64, "damaged message length"))?
        as usize;
    crate::Error::check_limit("message length", len as u64, max_len as u64)?;
    let mut model = model();
    let mut decoder = Decoder::new(rest)?;
    let mut out = Vec::with_capacity(len);
    for _ in 0..len {
        let s = decoder.decode(&mut model)?;
        let byte = u8::try_from(s).map_err(|_| {
            crate::Error::corrupt_stream(
                decoder.bytes_read(),
                "decoded a symbol outside the byte range",
            )
        })?;
        out.push(byte);
    }
    decoder.finish()?;
    Ok(out)
}

/// The snapshot identifier a frame was coded with (its first four bytes),
/// to pick the right snapshot when several are in use.
///
/// # Errors
///
/// [`ErrorKind::Snapshot`] when the frame is shorter than four bytes.
///
/// ```
/// use subrange::prime::frame_snapshot_id;
///
/// assert_eq!(frame_snapshot_id(&[0x78, 0x56, 0x34, 0x12, 0]).unwrap(), 0x1234_5678);
/// assert!(frame_snapshot_id(&[1, 2]).is_err());
/// ```
pub fn frame_snapshot_id(frame: &[u8]) -> Result<u32> {
    match frame.first_chunk::<ID_LEN>() {
        Some(id) => Ok(u32::from_le_bytes(*id)),
        None => Err(crate::Error::snapshot(
            "the frame is too short to carry a snapshot id",
        )),
    }
}

/// Codes `data` into a frame, starting from `snapshot`'s model.
///
/// Restores the model on every call; to code many messages, build a
/// [`Primer`] once. Works for snapshots of the crate's own models
/// ([`StepwiseModel`], [`TableModel`], [`ContextModel`]); use `Primer<M>`
/// for others.
///
/// # Errors
///
/// [`ErrorKind::Snapshot`] for a snapshot of a model kind this function
/// does not know, otherwise as for [`Primer::new`] and
/// [`Primer::encode_message`].
///
/// # Example
///
/// ```
/// use subrange::model::{StepwiseModel, Snapshot};
/// use subrange::prime::{decode_message, encode_message};
/// use subrange::ErrorKind;
///
/// # fn main() -> Result<(), subrange::Error> {
/// let snapshot = Snapshot::capture(&StepwiseModel::new(256)?)?;
/// let frame = encode_message(&snapshot, b"level 231 cm")?;
/// assert_eq!(decode_message(&snapshot, &frame, 100)?, b"level 231 cm");
///
/// // A base station holding another snapshot refuses the frame.
/// let other = Snapshot::capture(&StepwiseModel::new(257)?)?;
/// let err = decode_message(&other, &frame, 100).unwrap_err();
/// assert!(matches!(err.kind(), ErrorKind::Snapshot { .. }));
/// # Ok(())
/// # }
/// ```
pub fn encode_message(snapshot: &Snapshot, data: &[u8]) -> Result<Vec<u8>> {
    match snapshot.kind() {
        <StepwiseModel as SnapshotState>::KIND => {
            Primer::<StepwiseModel>::new(snapshot)?.into_encoded(data)
        }
        <TableModel as SnapshotState>::KIND => {
            Primer::<TableModel>::new(snapshot)?.into_encoded(data)
        }
        <ContextModel as SnapshotState>::KIND => {
            Primer::<ContextModel>::new(snapshot)?.into_encoded(data)
        }
        _ => Err(unknown_kind()),
    }
}

/// Decodes a frame written by [`encode_message`] (or a [`Primer`]) with the
/// same snapshot; `max_len` bounds the declared message length.
///
/// # Errors
///
/// As for [`encode_message`] and [`Primer::decode_message`].
pub fn decode_message(snapshot: &Snapshot, frame: &[u8], max_len: usize) -> Result<Vec<u8>> {
    match snapshot.kind() {
        <StepwiseModel as SnapshotState>::KIND => {
            Primer::<StepwiseModel>::new(snapshot)?.into_decoded(frame, max_len)
        }
        <TableModel as SnapshotState>::KIND => {
            Primer::<TableModel>::new(snapshot)?.into_decoded(frame, max_len)
        }
        <ContextModel as SnapshotState>::KIND => {
            Primer::<ContextModel>::new(snapshot)?.into_decoded(frame, max_len)
        }
        _ => Err(unknown_kind()),
    }
}

fn unknown_kind() -> crate::Error {
    crate::Error::snapshot(
        "no built-in model of this snapshot's kind; use Primer with your model type",
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ErrorKind;

    #[test]
    fn empty_message_round_trip() {
        let snapshot = Snapshot::capture(&StepwiseModel::new(256).unwrap()).unwrap();
        let frame = encode_message(&snapshot, b"").unwrap();
        assert_eq!(frame.len(), ID_LEN + 1);
        assert!(decode_message(&snapshot, &frame, 0).unwrap().is_empty());
    }

    #[test]
    fn table_model_snapshots_prime_too() {
        let table = TableModel::from_bytes_histogram(b"0123456789 .\n", 12).unwrap();
        // Bytes missing from the table are not codable: the model must cover them.
        let snapshot = Snapshot::capture(&table).unwrap();
        let frame = encode_message(&snapshot, b"231 45.67\n").unwrap();
        assert_eq!(
            decode_message(&snapshot, &frame, 64).unwrap(),
            b"231 45.67\n"
        );
        assert!(encode_message(&snapshot, b"x").is_err());
    }

    #[test]
    fn small_alphabet_is_rejected() {
        let snapshot = Snapshot::capture(&StepwiseModel::new(16).unwrap()).unwrap();
        let err = Primer::<StepwiseModel>::new(&snapshot).unwrap_err();
        assert!(matches!(err.kind(), ErrorKind::InvalidParameter { .. }));
    }
}
