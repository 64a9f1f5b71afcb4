//! Model snapshots: layout, checksum, exact restoration and validation.

use proptest::prelude::*;

use crate::support::crc32;
use subrange::coder::Encoder;
use subrange::model::snapshot::{write_vint, MAGIC, MAX_STATE_LEN, VERSION};
use subrange::model::{Model, Snapshot, SnapshotState, StepwiseModel, StepwiseParams, TableModel};
use subrange::ErrorKind;

#[test]
fn reference_crc_matches_the_standard_check_value() {
    // CRC-32 check value for "123456789" is 0xCBF43926 (Williams, "A painless
    // guide to CRC error detection algorithms", 1993, CRC-32 parameter set;
    // from memory).
    assert_eq!(crc32(b"123456789"), 0xCBF4_3926);
}

fn trained(alphabet: u32, seed: u32) -> StepwiseModel {
    let mut m = StepwiseModel::new(alphabet).unwrap();
    let mut x = seed;
    for _ in 0..3000 {
        x = x.wrapping_mul(1_103_515_245).wrapping_add(12_345);
        // Skewed symbols: small values are common.
        let s = ((x >> 16) % alphabet).min((x >> 8) % 23);
        m.update(s);
    }
    m
}

#[test]
fn layout_and_checksum() {
    let model = trained(256, 1);
    let snap = Snapshot::capture(&model).unwrap();
    let b = snap.as_bytes();
    assert_eq!(&b[..4], &MAGIC);
    assert_eq!(b[4], VERSION);
    assert_eq!(b[5], 0);
    assert_eq!(u16::from_le_bytes([b[6], b[7]]), 1);
    assert_eq!(snap.kind(), <StepwiseModel as SnapshotState>::KIND);
    let len = u32::from_le_bytes([b[8], b[9], b[10], b[11]]) as usize;
    assert_eq!(len, b.len() - 16);
    assert_eq!(snap.state().len(), len);
    let body = &b[..b.len() - 4];
    assert_eq!(snap.id(), crc32(body));
    assert_eq!(&b[b.len() - 4..], &crc32(body).to_le_bytes());
}

#[test]
fn restored_models_code_exactly_like_the_original() {
    let mut params = StepwiseParams::default();
    params.increment = 32;
    params.limit = 1 << 14;
    let mut tuned = StepwiseModel::with_params(300, params).unwrap();
    tuned.update(7);
    for original in [trained(10, 2), trained(256, 3), trained(65_536, 4), tuned] {
        let snap = Snapshot::capture(&original).unwrap();
        let restored: StepwiseModel = Snapshot::from_bytes(snap.as_bytes())
            .unwrap()
            .restore()
            .unwrap();
        assert_eq!(restored, original);
        // Canonical form: capturing the restored model gives the same bytes.
        assert_eq!(Snapshot::capture(&restored).unwrap(), snap);
        // Continuing to code from both gives identical streams.
        let code = |mut m: StepwiseModel| {
            let mut e = Encoder::new();
            for i in 0..2000u32 {
                e.encode(&mut m, (i * 7 + i / 13) % original.alphabet_size())
                    .unwrap();
            }
            e.finish().unwrap()
        };
        assert_eq!(code(restored), code(original.clone()));
    }
}

#[test]
fn table_models_snapshot_too() {
    let table = TableModel::from_counts(&[40, 0, 7, 300, 1], 12).unwrap();
    let snap = Snapshot::capture(&table).unwrap();
    assert_eq!(snap.kind(), 2);
    let back: TableModel = Snapshot::from_bytes(snap.as_bytes())
        .unwrap()
        .restore()
        .unwrap();
    assert_eq!(back, table);
    // The kind is checked before the state is read.
    let err = snap.restore::<StepwiseModel>().unwrap_err();
    assert!(matches!(err.kind(), ErrorKind::Snapshot { .. }), "{err}");
}

fn reason(bytes: &[u8]) -> &'static str {
    match Snapshot::from_bytes(bytes).unwrap_err().into_kind() {
        ErrorKind::Snapshot { reason } => reason,
        other => panic!("expected a snapshot error, got {other:?}"),
    }
}

/// Re-seals a modified snapshot with a correct checksum.
fn reseal(mut bytes: Vec<u8>) -> Vec<u8> {
    let n = bytes.len() - 4;
    let crc = crc32(&bytes[..n]);
    bytes[n..].copy_from_slice(&crc.to_le_bytes());
    bytes
}

#[test]
fn envelope_damage_is_reported_precisely() {
    let good = Snapshot::capture(&trained(64, 5)).unwrap().into_bytes();

    let mut bad_magic = good.clone();
    bad_magic[0] = b'X';
    assert!(reason(&bad_magic).contains("magic"));
    assert!(reason(b"").contains("magic"));

    let mut bad_version = good.clone();
    bad_version[4] = VERSION + 1;
    assert!(reason(&reseal(bad_version)).contains("version"));

    let mut reserved = good.clone();
    reserved[5] = 1;
    assert!(reason(&reseal(reserved)).contains("reserved"));

    for cut in [5, 15, good.len() - 1] {
        let r = reason(&good[..cut]);
        assert!(
            r.contains("shorter") || r.contains("length"),
            "cut {cut}: {r}"
        );
    }
    let mut longer = good.clone();
    longer.push(0);
    assert!(reason(&longer).contains("length"));

    // Every single-bit error is caught (CRC-32 detects all of them; the
    // header checks catch some first).
    for i in 0..good.len() {
        for bit in 0..8 {
            let mut d = good.clone();
            d[i] ^= 1 << bit;
            assert!(Snapshot::from_bytes(&d).is_err(), "byte {i} bit {bit}");
        }
    }
    let mut flipped = good.clone();
    flipped[20] ^= 0x10;
    assert!(reason(&flipped).contains("checksum"));
}

#[test]
fn oversize_declared_length_is_refused_before_copying() {
    let mut b = Snapshot::capture(&trained(8, 6)).unwrap().into_bytes();
    b[8..12].copy_from_slice(&(MAX_STATE_LEN as u32 + 1).to_le_bytes());
    let err = Snapshot::from_bytes(&b).unwrap_err();
    assert!(
        matches!(err.kind(), ErrorKind::LimitExceeded { .. }),
        "{err}"
    );
}

/// Arbitrary state bytes under a given kind, sealed with a valid checksum,
/// to exercise the models' state readers directly.
struct Raw<const KIND: u16>(Vec<u8>);

impl<const K: u16> SnapshotState for Raw<K> {
    const KIND: u16 = K;
    fn write_state(&self, out: &mut Vec<u8>) {
        out.extend_from_slice(&self.0);
    }
    fn read_state(state: &[u8]) -> Result<Self, subrange::Error> {
        Ok(Raw(state.to_vec()))
    }
}

fn adaptive_state(alphabet: u32, inc: u32, limit: u32, escape: u8, freq: &[u32]) -> Snapshot {
    let mut s = Vec::new();
    write_vint(&mut s, alphabet);
    write_vint(&mut s, inc);
    write_vint(&mut s, limit);
    s.push(escape);
    for &f in freq {
        write_vint(&mut s, f);
    }
    Snapshot::capture(&Raw::<1>(s)).unwrap()
}

fn state_error(snap: &Snapshot) -> &'static str {
    match snap.restore::<StepwiseModel>().unwrap_err().into_kind() {
        ErrorKind::Snapshot { reason } => reason,
        other => panic!("expected a snapshot error, got {other:?}"),
    }
}

#[test]
fn bad_parameters_and_states_are_refused() {
    // A valid one first, to show that `adaptive_state` builds real states.
    let ok = adaptive_state(4, 24, 65_536, 0, &[1, 2, 3, 4]);
    let m: StepwiseModel = ok.restore().unwrap();
    assert_eq!(m.frequencies(), &[1, 2, 3, 4]);

    let cases = [
        adaptive_state(0, 24, 65_536, 0, &[]), // empty alphabet
        adaptive_state(70_000, 24, 65_536, 0, &[1; 8]), // oversize alphabet
        adaptive_state(4, 0, 65_536, 0, &[1; 4]), // zero increment
        adaptive_state(4, 24, 70_000, 0, &[1; 4]), // limit above 2^16
        adaptive_state(4, 24, 65_536, 3, &[1; 4]), // bad escape byte
        adaptive_state(4, 24, 65_536, 0, &[1, 0, 1, 1]), // zero frequency
        adaptive_state(4, 24, 65_536, 0, &[1, 1, 1]), // too few entries
        adaptive_state(4, 24, 65_536, 0, &[1; 6]), // too many entries
        adaptive_state(4, 24, 200, 0, &[100, 100, 1, 1]), // total over the limit
        adaptive_state(4, 24, 65_536, 2, &[0, 0, 0, 0, 0]), // escape entry zero
    ];
    for (i, snap) in cases.iter().enumerate() {
        let r = state_error(snap);
        assert!(!r.is_empty(), "case {i}");
    }
    // Truncated inside a number.
    let truncated = Snapshot::capture(&Raw::<1>(vec![0x84])).unwrap();
    assert!(state_error(&truncated).contains("ends"));
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn arbitrary_states_never_panic(state in prop::collection::vec(any::<u8>(), 0..64)) {
        let adaptive = Snapshot::capture(&Raw::<1>(state.clone())).unwrap();
        if let Ok(m) = adaptive.restore::<StepwiseModel>() {
            prop_assert!(m.total() >= 1 && m.total() <= 65_536);
            // Whatever was accepted is canonical.
            let again = Snapshot::capture(&m).unwrap();
            prop_assert_eq!(again.state(), &state[..]);
        }
        let table = Snapshot::capture(&Raw::<2>(state)).unwrap();
        if let Ok(t) = table.restore::<TableModel>() {
            prop_assert!(t.total().is_power_of_two());
        }
    }

    #[test]
    fn arbitrary_bytes_never_panic(mut bytes in prop::collection::vec(any::<u8>(), 0..80)) {
        let _ = Snapshot::from_bytes(&bytes);
        if bytes.len() >= 4 {
            bytes[..4].copy_from_slice(&MAGIC);
        }
        let _ = Snapshot::from_bytes(&bytes);
    }
}
