//! Model snapshots: a trained model's state, saved and restored exactly.
//!
//! A small message (a 100-byte radio frame, a log line) is too short for an
//! adaptive model to learn much before it ends. Training the model on sample
//! data once, saving its state, and starting every message from that state
//! on both sides gives the message the statistics from its first byte
//! (see [`prime`](crate::prime) for the message framing).
//!
//! A [`Snapshot`] is a self-checking byte string:
//!
//! | offset | size | field                                                     |
//! |-------:|-----:|-----------------------------------------------------------|
//! | 0      | 4    | magic `53 52 73 6E` (`"SRsn"`)                            |
//! | 4      | 1    | layout version, currently 1                               |
//! | 5      | 1    | reserved, 0                                               |
//! | 6      | 2    | model kind (u16, little-endian), see [`SnapshotState`]    |
//! | 8      | 4    | state length `L` (u32, little-endian)                     |
//! | 12     | L    | the model's parameters, then its state (kind-specific)    |
//! | 12 + L | 4    | CRC-32 (IEEE 802.3) of bytes `0 .. 12 + L`, little-endian |
//!
//! The CRC-32 doubles as the snapshot's identifier ([`Snapshot::id`]): a
//! message coded from a snapshot records it, so decoding with a different
//! snapshot is caught instead of producing garbage.
//!
//! Reading validates everything before use: the magic, version, reserved
//! byte, declared length (against the input and [`MAX_STATE_LEN`]), checksum
//! and kind; then the model's own reader validates its parameters and state.
//! No reader allocates more than the input justifies.
//!
//! Integers inside states are vints (seven bits a byte, least significant
//! first, high bit set on all but the last byte — the variable-length
//! integer of the DWARF standard); readers reject overlong encodings, so each
//! state has exactly one byte form and therefore one identifier.

use alloc::vec::Vec;

use crate::error::{ErrorKind, Result};
use crate::model::{Model, StepwiseModel, StepwiseParams, TableModel, MAX_ALPHABET};
use crate::vint::{put_vint, vint_from_slice, VintError};

/// The first four bytes of every snapshot.
pub const MAGIC: [u8; 4] = *b"SRsn";

/// The snapshot layout version this release writes and reads.
pub const VERSION: u8 = 1;

/// Bytes before the state.
const HEADER_LEN: usize = 12;

/// Bytes of the trailing checksum.
const CRC_LEN: usize = 4;

/// Largest state a snapshot may declare: 64 MiB.
pub const MAX_STATE_LEN: usize = 1 << 26;

/// A model whose state can be saved in a [`Snapshot`] and restored.
///
/// # Implementer notes
///
/// - `write_state` writes everything needed to rebuild the model exactly:
///   first its parameters, then its state. Restoring must give a model that
///   codes every future symbol exactly as the saved one would (same spans,
///   same updates), on every platform — so no floating point, no pointers,
///   no hash-map iteration order; use fixed-width little-endian or vint
///   integers (see [`write_vint`] and [`read_vint`]).
/// - `read_state` receives exactly the bytes `write_state` wrote (the
///   snapshot's checksum has already been verified). It must validate every
///   value (parameters in range, model invariants kept), consume all bytes,
///   never panic, and allocate no more than the input justifies — check a
///   declared count against the bytes left before reserving memory for it.
///   Report problems as [`ErrorKind::Snapshot`].
/// - `KIND` identifies the model type in the snapshot header; it is checked
///   before `read_state` is called. Kinds in use: 1 [`StepwiseModel`],
///   2 [`TableModel`], 3 [`ContextModel`](crate::model::ContextModel). A new
///   model type takes the next free number.
///
/// # Example
///
/// ```
/// use subrange::model::snapshot::{read_vint, write_vint, SnapshotState};
/// use subrange::model::Snapshot;
/// use subrange::ErrorKind;
///
/// /// A gauge's last reported status code, as a (tiny) model state.
/// #[derive(Debug, PartialEq)]
/// struct LastStatus(u32);
///
/// impl SnapshotState for LastStatus {
///     const KIND: u16 = 0x7F01; // a number of our own, outside the crate's range
///     fn write_state(&self, out: &mut Vec<u8>) {
///         write_vint(out, self.0);
///     }
///     fn read_state(mut state: &[u8]) -> Result<Self, subrange::Error> {
///         let status = read_vint(&mut state)?;
///         if !state.is_empty() || status > 15 {
///             return Err(ErrorKind::Snapshot { reason: "bad status state" }.into());
///         }
///         Ok(LastStatus(status))
///     }
/// }
///
/// # fn main() -> Result<(), subrange::Error> {
/// let snapshot = Snapshot::capture(&LastStatus(3))?;
/// let back: LastStatus = Snapshot::from_bytes(snapshot.as_bytes())?.restore()?;
/// assert_eq!(back, LastStatus(3));
/// # Ok(())
/// # }
/// ```
pub trait SnapshotState: Sized {
    /// The model kind recorded in the snapshot header.
    const KIND: u16;

    /// Appends the model's parameters and state to `out`.
    fn write_state(&self, out: &mut Vec<u8>);

    /// Rebuilds a model from the bytes [`write_state`](SnapshotState::write_state) wrote.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::Snapshot`] when the bytes are not a valid state.
    fn read_state(state: &[u8]) -> Result<Self>;
}

/// A validated model snapshot (see the [module documentation](self) for the
/// layout).
///
/// # Example
///
/// ```
/// use subrange::model::{StepwiseModel, Model, Snapshot};
///
/// # fn main() -> Result<(), subrange::Error> {
/// // Train on yesterday's frames, save, and restore on the other side.
/// let mut model = StepwiseModel::new(256)?;
/// for &b in b"1042 231 45.67 12.3\n1042 232 45.90 12.3\n" {
///     model.update(b.into());
/// }
/// let snapshot = Snapshot::capture(&model)?;
/// let bytes = snapshot.as_bytes().to_vec(); // store or ship these
///
/// let loaded = Snapshot::from_bytes(&bytes)?;
/// assert_eq!(loaded.id(), snapshot.id());
/// let restored: StepwiseModel = loaded.restore()?;
/// assert_eq!(restored, model);
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Snapshot {
    bytes: Vec<u8>,
}

impl Snapshot {
    /// Saves `model`'s parameters and state.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::LimitExceeded`] when the state is longer than
    /// [`MAX_STATE_LEN`].
    pub fn capture<M: SnapshotState>(model: &M) -> Result<Self> {
        let mut bytes = Vec::with_capacity(64);
        bytes.extend_from_slice(&MAGIC);
        bytes.push(VERSION);
        bytes.push(0);
        bytes.extend_from_slice(&M::KIND.to_le_bytes());
        bytes.extend_from_slice(&[0; 4]);
        model.write_state(&mut bytes);
        let state_len = bytes.len() - HEADER_LEN;
        if state_len > MAX_STATE_LEN {
            return Err(crate::Error::limit_exceeded(
                "snapshot state length",
                state_len as u64,
                MAX_STATE_LEN as u64,
            ));
        }
        bytes[8..12].copy_from_slice(&(state_len as u32).to_le_bytes());
        let crc = crc32fast::hash(&bytes);
        bytes.extend_from_slice(&crc.to_le_bytes());
        Ok(Snapshot { bytes })
    }

    /// Reads and validates a snapshot (everything but the model state
    /// itself, which [`restore`](Snapshot::restore) checks). `bytes` must be
    /// exactly one snapshot.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::Snapshot`] when the input is too short, the magic is not
    /// this crate's ("not a model snapshot"), the version is not
    /// [`VERSION`], the reserved byte is set, the declared length does not
    /// match the input, or the checksum does not match;
    /// [`ErrorKind::LimitExceeded`] when the declared state is longer than
    /// [`MAX_STATE_LEN`] (checked before anything is copied).
    ///
    /// ```
    /// use subrange::model::{StepwiseModel, Snapshot};
    /// use subrange::ErrorKind;
    ///
    /// let snapshot = Snapshot::capture(&StepwiseModel::new(16).unwrap()).unwrap();
    /// let mut damaged = snapshot.as_bytes().to_vec();
    /// damaged[14] ^= 1;
    /// let err = Snapshot::from_bytes(&damaged).unwrap_err();
    /// assert!(matches!(err.kind(), ErrorKind::Snapshot { .. }));
    /// ```
    pub fn from_bytes(bytes: &[u8]) -> Result<Self> {
        if bytes.len() < 4 || bytes[..4] != MAGIC {
            return Err(crate::Error::snapshot(
                "not a model snapshot (magic number missing)",
            ));
        }
        if bytes.len() < HEADER_LEN + CRC_LEN {
            return Err(crate::Error::snapshot(
                "snapshot is shorter than its header",
            ));
        }
        if bytes[4] != VERSION {
            return Err(crate::Error::snapshot("unsupported snapshot version"));
        }
        if bytes[5] != 0 {
            return Err(crate::Error::snapshot(
                "reserved snapshot header byte is set",
            ));
        }
        let declared = u32::from_le_bytes([bytes[8], bytes[9], bytes[10], bytes[11]]);
        if declared as usize > MAX_STATE_LEN {
            return Err(crate::Error::limit_exceeded(
                "snapshot state length",
                declared.into(),
                MAX_STATE_LEN as u64,
            ));
        }
        if bytes.len() - HEADER_LEN - CRC_LEN != declared as usize {
            return Err(crate::Error::snapshot(
                "snapshot length does not match its header",
            ));
        }
        let (body, crc) = bytes.split_at(bytes.len() - CRC_LEN);
        let recorded = u32::from_le_bytes([crc[0], crc[1], crc[2], crc[3]]);
        if crc32fast::hash(body) != recorded {
            return Err(crate::Error::snapshot(
                "snapshot checksum mismatch (damaged snapshot)",
            ));
        }
        Ok(Snapshot {
            bytes: bytes.to_vec(),
        })
    }

    /// The snapshot's bytes, to store or ship.
    pub fn as_bytes(&self) -> &[u8] {
        &self.bytes
    }

    /// Consumes the snapshot, returning its bytes.
    pub fn into_bytes(self) -> Vec<u8> {
        self.bytes
    }

    /// The snapshot's identifier: its CRC-32, recorded by messages coded
    /// from it.
    pub fn id(&self) -> u32 {
        let n = self.bytes.len();
        u32::from_le_bytes([
            self.bytes[n - 4],
            self.bytes[n - 3],
            self.bytes[n - 2],
            self.bytes[n - 1],
        ])
    }

    /// The model kind recorded in the header (see [`SnapshotState::KIND`]).
    pub fn kind(&self) -> u16 {
        u16::from_le_bytes([self.bytes[6], self.bytes[7]])
    }

    /// The model's parameters and state, as its `write_state` wrote them.
    pub fn state(&self) -> &[u8] {
        &self.bytes[HEADER_LEN..self.bytes.len() - CRC_LEN]
    }

    /// Rebuilds the model.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::Snapshot`] when the snapshot holds a different kind of
    /// model, or the model's reader rejects the state.
    ///
    /// ```
    /// use subrange::model::{StepwiseModel, Snapshot, TableModel};
    ///
    /// let snapshot = Snapshot::capture(&StepwiseModel::new(8).unwrap()).unwrap();
    /// assert!(snapshot.restore::<StepwiseModel>().is_ok());
    /// assert!(snapshot.restore::<TableModel>().is_err()); // another kind
    /// ```
    pub fn restore<M: SnapshotState>(&self) -> Result<M> {
        if self.kind() != M::KIND {
            return Err(crate::Error::snapshot(
                "snapshot holds a different kind of model",
            ));
        }
        M::read_state(self.state())
    }
}

/// Appends `value` as a vint (LEB128, one to five bytes; the container's
/// integer code, `docs/FORMAT.md`).
///
/// ```
/// use subrange::model::snapshot::write_vint;
///
/// let mut out = Vec::new();
/// // DWARF 4, section 7.6, figure 22 (from memory): 12857 is B9 64.
/// write_vint(&mut out, 12_857);
/// assert_eq!(out, [0xB9, 0x64]);
/// ```
pub fn write_vint(out: &mut Vec<u8>, value: u32) {
    put_vint(out, u64::from(value));
}

/// Reads one vint from the front of `input` and advances it.
///
/// # Errors
///
/// [`ErrorKind::Snapshot`] when the input ends inside the value, the value
/// does not fit in a `u32`, or the encoding is longer than needed.
///
/// ```
/// use subrange::model::snapshot::read_vint;
///
/// // DWARF 4, section 7.6, figure 22 (from memory): 81 01 is 129.
/// let mut input: &[u8] = &[0x81, 0x01, 0x07];
/// assert_eq!(read_vint(&mut input).unwrap(), 129);
/// assert_eq!(input, &[0x07]);
/// assert!(read_vint(&mut &[0x80u8, 0x00][..]).is_err()); // overlong zero
/// ```
pub fn read_vint(input: &mut &[u8]) -> Result<u32> {
    let (value, len) = vint_from_slice(input).map_err(|e| match e {
        VintError::Truncated => crate::Error::snapshot("state ends inside a number"),
        VintError::Malformed => crate::Error::snapshot("malformed number in the state"),
    })?;
    let value = u32::try_from(value)
        .map_err(|_| crate::Error::snapshot("number in the state is too large"))?;
    *input = &input[len..];
    Ok(value)
}

/// State layout of an [`StepwiseModel`] (kind 1): vint alphabet size,
/// increment and limit; one byte for the escape setting (0 chosen by the
/// model, 1 off, 2 on); then every frequency as a vint, the escape's last
/// (see [`StepwiseModel::frequencies`]).
impl SnapshotState for StepwiseModel {
    const KIND: u16 = 1;

    fn write_state(&self, out: &mut Vec<u8>) {
        let params = self.params();
        write_vint(out, self.alphabet_size());
        write_vint(out, params.increment);
        write_vint(out, params.limit);
        out.push(match params.escape {
            None => 0,
            Some(false) => 1,
            Some(true) => 2,
        });
        for &f in self.frequencies() {
            write_vint(out, f);
        }
    }

    fn read_state(mut state: &[u8]) -> Result<Self> {
        let input = &mut state;
        let alphabet = read_vint(input)?;
        let increment = read_vint(input)?;
        let limit = read_vint(input)?;
        let Some((&escape, rest)) = input.split_first() else {
            return Err(crate::Error::snapshot("adaptive model state ends early"));
        };
        *input = rest;
        let escape = match escape {
            0 => None,
            1 => Some(false),
            2 => Some(true),
            _ => {
                return Err(crate::Error::snapshot(
                    "adaptive model state has a bad escape setting",
                ))
            }
        };
        let params = StepwiseParams {
            increment,
            limit,
            escape,
        };
        if alphabet == 0 || alphabet > MAX_ALPHABET {
            return Err(crate::Error::snapshot(
                "adaptive model state has a bad alphabet size",
            ));
        }
        // Each frequency takes at least one byte: bound the allocation by
        // the input before making it.
        let entries = alphabet as usize + 1;
        if input.len() < entries - 1 {
            return Err(crate::Error::snapshot("adaptive model state ends early"));
        }
        let mut freq = Vec::with_capacity(entries.min(input.len()));
        while !input.is_empty() {
            if freq.len() == entries {
                return Err(crate::Error::snapshot(
                    "adaptive model state has trailing bytes",
                ));
            }
            freq.push(read_vint(input)?);
        }
        StepwiseModel::from_frequencies(alphabet, params, &freq).map_err(|e| match e.kind() {
            ErrorKind::InvalidParameter { .. } => {
                crate::Error::snapshot("adaptive model state has invalid parameters or frequencies")
            }
            _ => e,
        })
    }
}

/// State layout of a [`TableModel`] (kind 2): the table's own compact form,
/// [`TableModel::to_bytes`].
impl SnapshotState for TableModel {
    const KIND: u16 = 2;

    fn write_state(&self, out: &mut Vec<u8>) {
        out.extend_from_slice(&self.to_bytes());
    }

    fn read_state(state: &[u8]) -> Result<Self> {
        let (table, used) =
            TableModel::from_table_bytes(state, MAX_ALPHABET).map_err(|e| match e.kind() {
                ErrorKind::CorruptTable { .. } | ErrorKind::LimitExceeded { .. } => {
                    crate::Error::snapshot("table model state is not a valid table")
                }
                _ => e,
            })?;
        if used != state.len() {
            return Err(crate::Error::snapshot(
                "table model state has trailing bytes",
            ));
        }
        Ok(table)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn varint_round_trip_and_bounds() {
        for v in [0u32, 1, 127, 128, 16_383, 16_384, 65_536, u32::MAX] {
            let mut out = Vec::new();
            write_vint(&mut out, v);
            let mut input = &out[..];
            assert_eq!(read_vint(&mut input).unwrap(), v);
            assert!(input.is_empty());
        }
        // 2^32 does not fit; six-byte encodings never do.
        assert!(read_vint(&mut &[0x80u8, 0x80, 0x80, 0x80, 0x10][..]).is_err());
        assert!(read_vint(&mut &[0xFFu8, 0xFF, 0xFF, 0xFF, 0xFF, 0x01][..]).is_err());
        assert!(read_vint(&mut &[0x80u8][..]).is_err());
    }

    #[test]
    fn adaptive_state_round_trip_all_stores() {
        for alphabet in [1u32, 16, 17, 256, 40_000] {
            let mut m = StepwiseModel::new(alphabet).unwrap();
            for i in 0..5000u32 {
                m.update(i.wrapping_mul(2_654_435_761) % alphabet);
            }
            let snap = Snapshot::capture(&m).unwrap();
            let back: StepwiseModel = Snapshot::from_bytes(snap.as_bytes())
                .unwrap()
                .restore()
                .unwrap();
            assert_eq!(back, m);
            assert_eq!(back.total(), m.total());
        }
    }

    #[test]
    fn state_allocation_is_bounded_by_input() {
        // Declares 65,536 symbols but carries two bytes of frequencies.
        let mut state = Vec::new();
        write_vint(&mut state, 65_536);
        write_vint(&mut state, 24);
        write_vint(&mut state, 65_536);
        state.push(0);
        state.extend_from_slice(&[1, 1]);
        let err = StepwiseModel::read_state(&state).unwrap_err();
        assert!(matches!(err.kind(), ErrorKind::Snapshot { .. }));
    }
}
