//! River-gauge telemetry over a narrow radio link.
//!
//! Twelve gauging stations measure water level (cm), flow (0.1 m³/s) and
//! water temperature (0.1 °C) every ten minutes. Each reading is sent as the
//! change since the station's previous reading, one field at a time, each
//! field range-coded with its own `TableModel` trained on yesterday's changes.
//! Both ends hold the same tables and the same previous readings.
//!
//! The example codes one day, decodes it again, and prints bits per reading
//! for one reading per frame (every ten minutes) and six per frame (hourly),
//! against the fields' entropies and against deflate on the same frames.
//!
//! Run with `cargo run --example gauge_telemetry`.

use flate2::{write::DeflateEncoder, Compression};
use std::io::Write;
use subrange::coder::{Decoder, Encoder};
use subrange::corpus::SplitMix64;
use subrange::model::{Model, Span, TableModel};

/// Changes in `-LIMIT .. LIMIT` are coded directly as `change + LIMIT`;
/// symbol `ESCAPE` is followed by the change as 16 raw bits.
const LIMIT: i32 = 64;
const ESCAPE: u32 = 2 * LIMIT as u32;
const STATIONS: usize = 12;
const READINGS_PER_DAY: usize = 144;

/// Uniform in `[0, 1)`: the top 53 bits of one draw of the crate's seeded
/// generator.
fn unit(rng: &mut SplitMix64) -> f64 {
    (rng.next_u64() >> 11) as f64 / (1u64 << 53) as f64
}

/// Roughly normal: four uniforms, centred, unit variance.
fn normal(rng: &mut SplitMix64) -> f64 {
    ((0..4).map(|_| unit(rng)).sum::<f64>() - 2.0) * 3f64.sqrt()
}

/// One day of readings `[level, flow, temperature]` for every station.
fn simulate_day(rng: &mut SplitMix64, day: u32) -> Vec<Vec<[i32; 3]>> {
    (0..STATIONS)
        .map(|st| {
            let base = 60.0 + 25.0 * st as f64;
            let mut level = base;
            (0..READINGS_PER_DAY)
                .map(|i| {
                    let rain = if unit(rng) < 0.005 {
                        30.0 * unit(rng)
                    } else {
                        0.0
                    };
                    level += 0.04 * (base - level) + 0.7 * normal(rng) + rain;
                    let head = (level - 0.4 * base).max(0.0);
                    let flow = 0.004 * head.powf(1.6); // stage-discharge power law
                    let hour = (i as f64 + f64::from(day) * 144.0) / 6.0;
                    let temp = 10.0 + 2.0 * (hour * std::f64::consts::PI / 12.0).sin();
                    let temp = temp + 0.08 * normal(rng);
                    [
                        level.round() as i32,
                        (flow * 10.0).round() as i32,
                        (temp * 10.0).round() as i32,
                    ]
                })
                .collect()
        })
        .collect()
}

/// Per-field changes from one reading to the next (the first reading of the
/// day follows the previous day's last, taken here as the first itself).
fn changes(series: &[[i32; 3]]) -> Vec<[i32; 3]> {
    let mut prev = series[0];
    series
        .iter()
        .map(|r| {
            let d = [r[0] - prev[0], r[1] - prev[1], r[2] - prev[2]];
            prev = *r;
            d
        })
        .collect()
}

fn symbol_of(change: i32) -> u32 {
    if (-LIMIT..LIMIT).contains(&change) {
        (change + LIMIT) as u32
    } else {
        ESCAPE
    }
}

/// One table per field, from yesterday's changes; every symbol keeps a
/// count of at least one so that any change stays codable.
fn train(yesterday: &[Vec<[i32; 3]>]) -> Result<Vec<TableModel>, subrange::Error> {
    (0..3)
        .map(|field| {
            let mut counts = vec![1u64; ESCAPE as usize + 1];
            for station in yesterday {
                for d in changes(station) {
                    counts[symbol_of(d[field]) as usize] += 20;
                }
            }
            TableModel::from_counts(&counts, 12)
        })
        .collect()
}

fn encode_frame(
    tables: &mut [TableModel],
    readings: &[[i32; 3]],
) -> Result<Vec<u8>, subrange::Error> {
    let mut enc = Encoder::new();
    for d in readings {
        for (field, table) in tables.iter_mut().enumerate() {
            let s = symbol_of(d[field]);
            enc.encode(table, s)?;
            if s == ESCAPE {
                let raw = d[field] as i16 as u16;
                enc.encode_span(Span::new(u32::from(raw >> 8), 1), 256)?;
                enc.encode_span(Span::new(u32::from(raw & 0xFF), 1), 256)?;
            }
        }
    }
    enc.finish()
}

fn decode_frame(
    tables: &mut [TableModel],
    frame: &[u8],
    count: usize,
) -> Result<Vec<[i32; 3]>, subrange::Error> {
    let mut dec = Decoder::new(frame)?;
    let mut out = Vec::with_capacity(count);
    for _ in 0..count {
        let mut d = [0i32; 3];
        for (field, table) in tables.iter_mut().enumerate() {
            let s = dec.decode(table)?;
            d[field] = if s == ESCAPE {
                let mut raw = 0u16;
                for _ in 0..2 {
                    let byte = dec.target(256);
                    dec.consume(Span::new(byte, 1), 256)?;
                    raw = raw << 8 | byte as u16;
                }
                i32::from(raw as i16)
            } else {
                s as i32 - LIMIT
            };
        }
        out.push(d);
    }
    dec.finish()?;
    Ok(out)
}

/// Empirical entropy of one field's symbols today, bits per reading.
fn entropy(symbols: impl Iterator<Item = u32>) -> f64 {
    let mut counts = vec![0u64; ESCAPE as usize + 1];
    let mut n = 0;
    for s in symbols {
        counts[s as usize] += 1;
        n += 1;
    }
    let n = n as f64;
    counts
        .iter()
        .filter(|&&c| c > 0)
        .map(|&c| -(c as f64 / n) * (c as f64 / n).log2())
        .sum()
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let mut rng = SplitMix64::new(20_240_501);
    let yesterday = simulate_day(&mut rng, 0);
    let today = simulate_day(&mut rng, 1);
    let mut tables = train(&yesterday)?;
    let all: Vec<[i32; 3]> = today.iter().flat_map(|s| changes(s)).collect();
    let field_entropy: f64 = (0..3)
        .map(|f| entropy(all.iter().map(|d| symbol_of(d[f]))))
        .sum();
    // Cross-entropy: what yesterday's tables cost on today's data, ideally.
    let ideal: f64 = all
        .iter()
        .flat_map(|d| (0..3).map(move |f| (f, symbol_of(d[f]))))
        .map(|(f, s)| -(f64::from(tables[f].span(s).unwrap().freq) / 4096.0).log2())
        .sum::<f64>()
        / all.len() as f64;
    println!("{} readings from {STATIONS} stations", all.len());
    println!("  field entropy (today's own statistics): {field_entropy:5.2} bits/reading");
    println!("  ideal with yesterday's tables:          {ideal:5.2} bits/reading");
    println!("  as 16-bit integers:                     48.00 bits/reading");

    for per_frame in [1usize, 6] {
        let (mut ours, mut deflated) = (0usize, 0usize);
        for station in &today {
            for chunk in changes(station).chunks(per_frame) {
                let frame = encode_frame(&mut tables, chunk)?;
                assert_eq!(decode_frame(&mut tables, &frame, chunk.len())?, chunk);
                ours += frame.len();
                // deflate gets the same changes as 16-bit little-endian integers.
                let raw: Vec<u8> = chunk
                    .iter()
                    .flatten()
                    .flat_map(|&v| (v as i16).to_le_bytes())
                    .collect();
                let mut z = DeflateEncoder::new(Vec::new(), Compression::best());
                z.write_all(&raw)?;
                deflated += z.finish()?.len();
            }
        }
        let per_reading = |bytes: usize| bytes as f64 * 8.0 / all.len() as f64;
        println!(
            "{per_frame} reading(s) per frame: subrange {:5.2} bits/reading, deflate {:5.2}",
            per_reading(ours),
            per_reading(deflated)
        );
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    #[test]
    fn runs() {
        super::main().unwrap();
    }
}
