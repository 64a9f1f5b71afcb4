use subrange::coder::{Decoder, Encoder};
use subrange::model::{AdaptiveModel, TableModel};

#[test]
fn quick_roundtrip() {
    let data: Vec<u8> = (0..100_000u32)
        .map(|i| ((i * 7919) % 251) as u8 ^ (i >> 9) as u8)
        .collect();
    let mut m = AdaptiveModel::new(256).unwrap();
    let mut e = Encoder::new();
    for &b in &data {
        e.encode(&mut m, b as u32).unwrap();
    }
    let out = e.finish().unwrap();
    let mut m = AdaptiveModel::new(256).unwrap();
    let mut d = Decoder::new(&out).unwrap();
    for &b in &data {
        assert_eq!(d.decode(&mut m).unwrap(), b as u32);
    }
    d.finish().unwrap();
    let mut t = TableModel::from_bytes_histogram(&data, 12).unwrap();
    let mut e = Encoder::new();
    for &b in &data {
        e.encode(&mut t, b as u32).unwrap();
    }
    let out = e.finish().unwrap();
    let mut d = Decoder::new(&out).unwrap();
    for &b in &data {
        assert_eq!(d.decode(&mut t).unwrap(), b as u32);
    }
    d.finish().unwrap();
    let mut m = AdaptiveModel::new(65536).unwrap();
    let mut e = Encoder::new();
    for (i, &b) in data.iter().enumerate() {
        e.encode(&mut m, (b as u32) * 200 + (i as u32 % 7)).unwrap();
    }
    let out = e.finish().unwrap();
    let mut m = AdaptiveModel::new(65536).unwrap();
    let mut d = Decoder::new(&out).unwrap();
    for (i, &b) in data.iter().enumerate() {
        assert_eq!(d.decode(&mut m).unwrap(), (b as u32) * 200 + (i as u32 % 7));
    }
    d.finish().unwrap();
    // bits
    let mut e = Encoder::new();
    for (i, &b) in data.iter().enumerate() {
        e.encode_bit(b & 1 == 1, (i as u32 * 97) % 65536).unwrap();
    }
    let out = e.finish().unwrap();
    let mut d = Decoder::new(&out).unwrap();
    for (i, &b) in data.iter().enumerate() {
        assert_eq!(d.decode_bit((i as u32 * 97) % 65536).unwrap(), b & 1 == 1);
    }
    d.finish().unwrap();
    // empty
    let out = Encoder::new().finish().unwrap();
    assert!(out.is_empty());
    let d = Decoder::new(&out).unwrap();
    d.finish().unwrap();
}
