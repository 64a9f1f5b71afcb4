//! Probabilities from a (tiny) learned model, fed through the adapter.
//!
//! A gauge's water level tends to keep moving the way it just moved. A
//! softmax regression over the last two level changes predicts the next
//! change as one of 16 classes (−8 ..= +7 cm, clamped). Its weights are set
//! by hand here; a trained network would be used the same way. Each step the
//! predictor's `f32` probabilities go through a `ProbabilityAdapter`, which
//! turns them into a frequency table for the range coder.
//!
//! **Both sides must compute bit-identical probabilities.** This example
//! decodes on the same machine with the same binary, so `f32::exp` gives the
//! same bits. Across machines, use the same build of the same math code, or
//! a deterministic approximation of `exp` of your own.
//!
//! Run with `cargo run --example learned_probs`.

use subrange::coder::{Decoder, Encoder};
use subrange::model::{ProbabilityAdapter, StepwiseModel};

const CLASSES: usize = 16;
const OFFSET: i32 = 8; // class = change + OFFSET

/// A softmax regression: logit_k = w1_k·d1 + w2_k·d2 + b_k.
///
/// With w1_k = 0.7·c_k/σ², w2_k = 0.2·c_k/σ² and b_k = −c_k²/(2σ²), where
/// c_k is class k's change, this is a discretised Gaussian of width σ
/// centred on 0.7·d1 + 0.2·d2: the level keeps most of its momentum.
struct Predictor {
    w1: [f32; CLASSES],
    w2: [f32; CLASSES],
    b: [f32; CLASSES],
}

impl Predictor {
    fn hand_set() -> Self {
        let inv_var = 1.0 / (1.3f32 * 1.3);
        let mut p = Predictor {
            w1: [0.0; CLASSES],
            w2: [0.0; CLASSES],
            b: [0.0; CLASSES],
        };
        for k in 0..CLASSES {
            let c = (k as i32 - OFFSET) as f32;
            p.w1[k] = 0.7 * c * inv_var;
            p.w2[k] = 0.2 * c * inv_var;
            p.b[k] = -0.5 * c * c * inv_var;
        }
        p
    }

    /// Class probabilities given the last two changes.
    fn predict(&self, d1: i32, d2: i32, out: &mut [f32; CLASSES]) {
        let (d1, d2) = (d1 as f32, d2 as f32);
        let mut max = f32::MIN;
        for (k, logit) in out.iter_mut().enumerate() {
            *logit = self.w1[k] * d1 + self.w2[k] * d2 + self.b[k];
            max = max.max(*logit);
        }
        let mut sum = 0.0;
        for v in out.iter_mut() {
            *v = (*v - max).exp();
            sum += *v;
        }
        for v in out.iter_mut() {
            *v /= sum; // the adapter would accept unnormalised weights too
        }
    }
}

/// A level series whose changes have momentum (seeded xorshift noise).
fn level_changes(n: usize) -> Vec<i32> {
    let mut x = 0x9E37_79B9u32;
    let mut noise = move || {
        x ^= x << 13;
        x ^= x >> 17;
        x ^= x << 5; // xorshift32 (Marsaglia, 2003)
        (0..4)
            .map(|i| ((x >> (8 * i)) & 0xFF) as f32 / 255.0)
            .sum::<f32>()
            - 2.0
    };
    let (mut d1, mut d2) = (0.0f32, 0.0f32);
    (0..n)
        .map(|_| {
            let d = 0.7 * d1 + 0.2 * d2 + 1.8 * noise();
            let d = d
                .round()
                .clamp(-(OFFSET as f32), (CLASSES as i32 - OFFSET - 1) as f32);
            (d2, d1) = (d1, d);
            d as i32
        })
        .collect()
}

fn main() -> Result<(), subrange::Error> {
    let changes = level_changes(5000);
    let predictor = Predictor::hand_set();
    let mut probs = [0.0f32; CLASSES];
    let mut adapter = ProbabilityAdapter::new();

    // Encode: predict from the past, load the table, code the class.
    let mut enc = Encoder::new();
    enc.enable_cost_meter();
    let mut ideal = 0.0f64;
    let (mut d1, mut d2) = (0, 0);
    for &d in &changes {
        predictor.predict(d1, d2, &mut probs);
        adapter.set_probabilities(&probs)?;
        let class = (d + OFFSET) as u32;
        ideal -= f64::from(probs[class as usize]).log2();
        enc.encode(&mut adapter, class)?;
        (d2, d1) = (d1, d);
    }
    let table_cost = enc.ideal_cost().map(|c| c.bits()).unwrap_or(0.0);
    let bytes = enc.finish()?;

    // Decode: the same predictor on the same past gives the same table.
    let mut dec = Decoder::new(&bytes)?;
    let (mut d1, mut d2) = (0, 0);
    for &d in &changes {
        predictor.predict(d1, d2, &mut probs);
        adapter.set_probabilities(&probs)?;
        let got = dec.decode(&mut adapter)? as i32 - OFFSET;
        assert_eq!(got, d);
        (d2, d1) = (d1, got);
    }
    dec.finish()?;

    // For comparison: order-0 counting, which ignores the momentum.
    let mut counting = StepwiseModel::new(CLASSES as u32)?;
    let mut enc = Encoder::new();
    for &d in &changes {
        enc.encode(&mut counting, (d + OFFSET) as u32)?;
    }
    let counted = enc.finish()?.len();

    let n = changes.len() as f64;
    println!("{} level changes:", changes.len());
    println!(
        "  predictor, ideal Σ −log2 p:       {:.3} bits/change",
        ideal / n
    );
    println!(
        "  after quantising to 2^16:         {:.3} bits/change",
        table_cost / n
    );
    println!(
        "  coded with the adapter:           {:.3} bits/change",
        bytes.len() as f64 * 8.0 / n
    );
    println!(
        "  adaptive order-0 (no predictor):  {:.3} bits/change",
        counted as f64 * 8.0 / n
    );
    Ok(())
}

#[cfg(test)]
mod tests {
    #[test]
    fn runs() {
        super::main().unwrap();
    }
}
