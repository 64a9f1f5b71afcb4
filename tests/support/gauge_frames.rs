//! Synthetic river-gauge radio frames for tests and benches (seeded).
//!
//! A network of gauging stations samples every ten minutes: water level
//! (cm), flow (0.1 m³/s, from a stage-discharge power law — common practice
//! in hydrometry) and water temperature (0.1 °C, with a daily cycle).
//!
//! Two frame layouts of about 100 bytes each:
//! - binary: station id (u16 LE), time of the first reading (u32 LE), the
//!   first reading in full (level u16, flow u16, temperature i16, LE), then
//!   29 readings as one signed byte of change per field — 99 bytes;
//! - text: `station time` on a first line, then `level flow temperature`
//!   lines of six readings — about 100 bytes.

use super::{Draws, SplitMix64};

/// One reading in integer units: level cm, flow 0.1 m³/s, temperature 0.1 °C.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Reading {
    pub level: i32,
    pub flow: i32,
    pub temp: i32,
}

#[derive(Debug, Clone)]
struct Station {
    id: u16,
    level: f64,
    base_level: f64,
    zero_flow: f64,
    rating: f64,
    temp_mean: f64,
    last: Option<Reading>,
}

/// Frame layout.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Layout {
    Binary,
    Text,
}

impl Layout {
    pub fn readings_per_frame(self) -> usize {
        match self {
            Layout::Binary => 30,
            Layout::Text => 6,
        }
    }
}

/// Seconds between readings.
pub const INTERVAL: u32 = 600;

/// A seeded network of stations producing frames in time order.
#[derive(Debug, Clone)]
pub struct GaugeNetwork {
    rng: SplitMix64,
    stations: Vec<Station>,
    time: u32,
    layout: Layout,
}

impl GaugeNetwork {
    /// `stations` stations, starting at unix time `start`.
    pub fn new(seed: u64, stations: usize, start: u32, layout: Layout) -> Self {
        let mut rng = SplitMix64::new(seed);
        let stations = (0..stations)
            .map(|i| {
                let base_level = 40.0 + 300.0 * rng.unit();
                Station {
                    id: 1000 + (37 * i as u16) % 9000,
                    level: base_level,
                    base_level,
                    zero_flow: base_level * (0.2 + 0.3 * rng.unit()),
                    rating: 0.002 + 0.01 * rng.unit(),
                    temp_mean: 6.0 + 10.0 * rng.unit(),
                    last: None,
                }
            })
            .collect();
        GaugeNetwork {
            rng,
            stations,
            time: start,
            layout,
        }
    }

    fn sample(rng: &mut SplitMix64, st: &mut Station, t: u32) -> Reading {
        // Level: mean-reverting random walk with occasional rises.
        let surge = if rng.unit() < 0.01 {
            20.0 * rng.unit()
        } else {
            0.0
        };
        st.level += 0.05 * (st.base_level - st.level) + 0.8 * rng.normal() + surge;
        let level = st.level.round().max(0.0);
        let head = (level - st.zero_flow).max(0.0);
        let flow = st.rating * head.powf(1.6);
        let day = f64::from(t % 86_400) / 86_400.0;
        let temp = st.temp_mean
            + 2.5 * (2.0 * core::f64::consts::PI * (day - 0.35)).sin()
            + 0.1 * rng.normal();
        let mut r = Reading {
            level: level as i32,
            flow: (flow * 10.0).round() as i32,
            temp: (temp * 10.0).round() as i32,
        };
        // Frames carry changes as one signed byte: keep the series exactly
        // representable.
        if let Some(p) = st.last {
            let clamp = |now: i32, before: i32| before + (now - before).clamp(-128, 127);
            r.level = clamp(r.level, p.level);
            r.flow = clamp(r.flow, p.flow);
            r.temp = clamp(r.temp, p.temp);
        }
        st.last = Some(r);
        r
    }

    /// The next frame of every station.
    pub fn next_round(&mut self) -> Vec<Vec<u8>> {
        let n = self.layout.readings_per_frame();
        let mut frames = Vec::with_capacity(self.stations.len());
        for st in &mut self.stations {
            let readings: Vec<Reading> = (0..n)
                .map(|k| Self::sample(&mut self.rng, st, self.time + k as u32 * INTERVAL))
                .collect();
            let frame = match self.layout {
                Layout::Binary => binary_frame(st.id, self.time, &readings),
                Layout::Text => text_frame(st.id, self.time, &readings),
            };
            frames.push(frame);
        }
        self.time += n as u32 * INTERVAL;
        frames
    }

    /// `rounds` rounds of frames, flattened.
    pub fn frames(&mut self, rounds: usize) -> Vec<Vec<u8>> {
        (0..rounds).flat_map(|_| self.next_round()).collect()
    }
}

fn binary_frame(id: u16, time: u32, readings: &[Reading]) -> Vec<u8> {
    let mut f = Vec::with_capacity(100);
    f.extend_from_slice(&id.to_le_bytes());
    f.extend_from_slice(&time.to_le_bytes());
    let first = readings[0];
    f.extend_from_slice(&(first.level as u16).to_le_bytes());
    f.extend_from_slice(&(first.flow as u16).to_le_bytes());
    f.extend_from_slice(&(first.temp as i16).to_le_bytes());
    for w in readings.windows(2) {
        for (now, before) in [
            (w[1].level, w[0].level),
            (w[1].flow, w[0].flow),
            (w[1].temp, w[0].temp),
        ] {
            f.push((now - before) as i8 as u8);
        }
    }
    f
}

fn text_frame(id: u16, time: u32, readings: &[Reading]) -> Vec<u8> {
    let mut s = format!("{id} {time}\n");
    for r in readings {
        s += &format!(
            "{} {}.{:02} {}.{}\n",
            r.level,
            r.flow / 10,
            (r.flow % 10) * 10,
            r.temp / 10,
            r.temp % 10
        );
    }
    s.into_bytes()
}
