//! The codecs compared on small gauge frames: a primed adaptive (order-0)
//! model, a primed context model (orders 0 to 3), a cold adaptive model, and
//! raw deflate (flate2) with and without a preset dictionary.
//!
//! Sizes are whole frames as they would go over the radio: the primed frame
//! includes its 4-byte snapshot id and length field, the cold frame its
//! length field; deflate streams are self-terminating and need neither.

use flate2::{Compress, Compression, Decompress, FlushCompress, FlushDecompress};
use subrange::coder::Encoder;
use subrange::model::snapshot::write_vint;
use subrange::model::{ContextModel, ContextParams, Model, Snapshot, StepwiseModel};

/// Deflate's window: a preset dictionary longer than this is useless.
pub const DICTIONARY_LEN: usize = 32 * 1024;

/// The training sample both sides get: the most recent `DICTIONARY_LEN`
/// bytes of the training frames (deflate's preset dictionary, and the
/// data the primed model learns from).
pub fn training_sample(frames: &[Vec<u8>]) -> Vec<u8> {
    let all = frames.concat();
    all[all.len().saturating_sub(DICTIONARY_LEN)..].to_vec()
}

/// Trains a 256-symbol adaptive model on `sample` and snapshots it.
pub fn primed_snapshot(sample: &[u8]) -> Snapshot {
    let mut model = StepwiseModel::new(256).unwrap();
    for &b in sample {
        model.update(b.into());
    }
    Snapshot::capture(&model).unwrap()
}

/// Trains a context model (orders 0 to 3) on `sample` and snapshots it.
pub fn primed_context_snapshot(sample: &[u8]) -> Snapshot {
    let mut model = ContextModel::new(ContextParams::default()).unwrap();
    model.train(sample);
    Snapshot::capture(&model).unwrap()
}

/// A frame coded from a cold adaptive model: length, then coded bytes.
pub fn cold_frame(data: &[u8]) -> Vec<u8> {
    let mut out = Vec::new();
    write_vint(&mut out, data.len() as u32);
    let mut model = StepwiseModel::new(256).unwrap();
    let mut enc = Encoder::with_sink(out);
    for &b in data {
        enc.encode(&mut model, b.into()).unwrap();
    }
    enc.finish().unwrap()
}

/// Raw deflate (no zlib header) at the best level, optionally after a preset
/// dictionary. flate2's default backend has no `set_dictionary`, so the
/// dictionary is fed through the same compressor first and flushed to a byte
/// boundary; only the bytes after that point belong to the frame. The
/// decoder does the same (inflates the dictionary's stream, then the frame),
/// which is exactly what a preset dictionary means; see [`inflate_frame`].
pub fn deflate_frame(dictionary: &[u8], data: &[u8]) -> Vec<u8> {
    deflate_with_prefix(dictionary, data).1
}

/// The dictionary's own stream and the frame's bytes.
fn deflate_with_prefix(dictionary: &[u8], data: &[u8]) -> (Vec<u8>, Vec<u8>) {
    let mut c = Compress::new(Compression::best(), false);
    let mut out = Vec::with_capacity(dictionary.len() + data.len() + 64);
    if !dictionary.is_empty() {
        c.compress_vec(dictionary, &mut out, FlushCompress::Sync)
            .unwrap();
        assert_eq!(c.total_in() as usize, dictionary.len());
    }
    let prefix = out.len();
    out.reserve(data.len() + 64);
    c.compress_vec(data, &mut out, FlushCompress::Finish)
        .unwrap();
    assert_eq!(c.total_in() as usize, dictionary.len() + data.len());
    let frame = out.split_off(prefix);
    (out, frame)
}

/// Inflates a frame from [`deflate_frame`] with the same dictionary.
pub fn inflate_frame(dictionary: &[u8], frame: &[u8]) -> Vec<u8> {
    let (mut stream, _) = deflate_with_prefix(dictionary, &[]);
    stream.extend_from_slice(frame);
    let mut d = Decompress::new(false);
    let mut back = Vec::with_capacity(dictionary.len() + 4096);
    d.decompress_vec(&stream, &mut back, FlushDecompress::Finish)
        .unwrap();
    assert_eq!(&back[..dictionary.len()], dictionary);
    back.split_off(dictionary.len())
}

/// Average bits per frame of each codec over `frames`.
#[derive(Debug, Clone, Copy)]
pub struct BitsPerFrame {
    pub raw: f64,
    pub primed: f64,
    pub primed_context: f64,
    pub cold: f64,
    pub deflate: f64,
    pub deflate_dictionary: f64,
}

pub fn measure(training: &[Vec<u8>], frames: &[Vec<u8>]) -> BitsPerFrame {
    let sample = training_sample(training);
    let snapshot = primed_snapshot(&sample);
    let primer: subrange::prime::Primer = subrange::prime::Primer::new(&snapshot).unwrap();
    let context: subrange::prime::Primer<ContextModel> =
        subrange::prime::Primer::new(&primed_context_snapshot(&sample)).unwrap();
    let n = frames.len() as f64;
    let bits =
        |f: &dyn Fn(&[u8]) -> usize| frames.iter().map(|x| f(x) * 8).sum::<usize>() as f64 / n;
    BitsPerFrame {
        raw: bits(&|x| x.len()),
        primed: bits(&|x| {
            let frame = primer.encode_message(x).unwrap();
            assert_eq!(primer.decode_message(&frame, 4096).unwrap(), x);
            frame.len()
        }),
        primed_context: bits(&|x| {
            let frame = context.encode_message(x).unwrap();
            assert_eq!(context.decode_message(&frame, 4096).unwrap(), x);
            frame.len()
        }),
        cold: bits(&|x| cold_frame(x).len()),
        deflate: bits(&|x| {
            let frame = deflate_frame(&[], x);
            assert_eq!(inflate_frame(&[], &frame), x);
            frame.len()
        }),
        deflate_dictionary: bits(&|x| {
            let frame = deflate_frame(&sample, x);
            assert_eq!(inflate_frame(&sample, &frame), x);
            frame.len()
        }),
    }
}
