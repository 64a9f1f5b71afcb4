//! Primed messages: framing, snapshot mismatches, damage, and the size of
//! small gauge frames against a cold model and deflate.

use crate::support::frame_codecs::{measure, primed_snapshot, training_sample};
use crate::support::gauge_frames::{GaugeNetwork, Layout};
use subrange::model::{Snapshot, StepwiseModel};
use subrange::prime::{decode_message, encode_message, frame_snapshot_id, Primer, ID_LEN};
use subrange::ErrorKind;

const START: u32 = 1_714_521_600; // 2024-05-01 00:00 UTC

fn network_frames(layout: Layout) -> (Vec<Vec<u8>>, Vec<Vec<u8>>) {
    let mut net = GaugeNetwork::new(7, 20, START, layout);
    let training = net.frames(40);
    let test = net.frames(15);
    (training, test)
}

#[test]
fn primed_beats_cold_and_deflate_on_binary_gauge_frames() {
    let (training, test) = network_frames(Layout::Binary);
    let m = measure(&training, &test);
    eprintln!("binary frames, bits/frame: {m:?}");
    assert!(m.raw > 780.0 && m.raw < 800.0, "frames are about 100 bytes");
    assert!(m.primed < m.cold, "{m:?}");
    assert!(m.primed < m.deflate, "{m:?}");
    assert!(m.primed < m.deflate_dictionary, "{m:?}");
    assert!(m.primed_context < m.primed, "{m:?}");
}

#[test]
fn primed_beats_cold_on_text_gauge_frames() {
    // On text frames with repeated values, deflate with a dictionary finds
    // long matches an order-0 model cannot see; the primed context model
    // sees them through its order-1 to order-3 contexts and beats it.
    let (training, test) = network_frames(Layout::Text);
    let m = measure(&training, &test);
    eprintln!("text frames, bits/frame: {m:?}");
    assert!(m.primed < m.cold, "{m:?}");
    assert!(m.primed < m.deflate, "{m:?}");
    assert!(m.primed_context < m.primed, "{m:?}");
    assert!(m.primed_context < m.deflate_dictionary, "{m:?}");
}

fn snapshot_and_frames() -> (Snapshot, Vec<Vec<u8>>) {
    let (training, test) = network_frames(Layout::Binary);
    (primed_snapshot(&training_sample(&training)), test)
}

#[test]
fn frames_round_trip_and_carry_the_snapshot_id() {
    let (snapshot, frames) = snapshot_and_frames();
    let primer: Primer = Primer::new(&snapshot).unwrap();
    for data in frames.iter().take(50) {
        let frame = primer.encode_message(data).unwrap();
        assert_eq!(frame_snapshot_id(&frame).unwrap(), snapshot.id());
        assert_eq!(&frame[..ID_LEN], &snapshot.id().to_le_bytes());
        assert_eq!(frame, encode_message(&snapshot, data).unwrap());
        assert_eq!(&decode_message(&snapshot, &frame, 100).unwrap(), data);
    }
}

#[test]
fn a_different_or_missing_snapshot_is_refused() {
    let (snapshot, frames) = snapshot_and_frames();
    let frame = encode_message(&snapshot, &frames[0]).unwrap();
    // Another snapshot (cold model) refuses the frame.
    let other = Snapshot::capture(&StepwiseModel::new(256).unwrap()).unwrap();
    assert_ne!(other.id(), snapshot.id());
    let err = decode_message(&other, &frame, 1000).unwrap_err();
    assert!(matches!(err.kind(), ErrorKind::Snapshot { .. }), "{err}");
    // A frame too short to hold an id.
    for short in [&frame[..0], &frame[..3]] {
        let err = decode_message(&snapshot, short, 1000).unwrap_err();
        assert!(matches!(err.kind(), ErrorKind::Snapshot { .. }), "{err}");
    }
    // A damaged id is a mismatch too.
    let mut damaged = frame.clone();
    damaged[1] ^= 0x40;
    let err = decode_message(&snapshot, &damaged, 1000).unwrap_err();
    assert!(matches!(err.kind(), ErrorKind::Snapshot { .. }), "{err}");
}

#[test]
fn damaged_frames_are_errors_not_panics() {
    let (snapshot, frames) = snapshot_and_frames();
    let primer: Primer = Primer::new(&snapshot).unwrap();
    let data = &frames[3];
    let frame = primer.encode_message(data).unwrap();
    // Declared length over the caller's bound: refused before decoding.
    let err = primer.decode_message(&frame, data.len() - 1).unwrap_err();
    assert!(
        matches!(err.kind(), ErrorKind::LimitExceeded { .. }),
        "{err}"
    );
    // Truncated coded bytes.
    let err = primer
        .decode_message(&frame[..frame.len() - 6], 1000)
        .unwrap_err();
    assert!(err.is_damage(), "{err}");
    // Bytes appended past the decoder's four-byte look-ahead.
    let mut longer = frame.clone();
    longer.extend_from_slice(&[0x55; 5]);
    let err = primer.decode_message(&longer, 1000).unwrap_err();
    assert!(
        matches!(err.kind(), ErrorKind::TrailingBytes { .. }),
        "{err}"
    );
    // Damaged length field (an unterminated vint).
    let mut bad_len = frame[..ID_LEN].to_vec();
    bad_len.extend_from_slice(&[0xFF; 6]);
    let err = primer.decode_message(&bad_len, 1000).unwrap_err();
    assert!(
        matches!(err.kind(), ErrorKind::CorruptStream { .. }),
        "{err}"
    );
    // Every single-byte change after the id: an error or different bytes,
    // never a panic.
    for i in ID_LEN..frame.len() {
        let mut f = frame.clone();
        f[i] ^= 0xA5;
        if let Ok(back) = primer.decode_message(&f, 1000) {
            assert_ne!(&back, data, "byte {i}");
        }
    }
}
