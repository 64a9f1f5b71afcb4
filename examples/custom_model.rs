//! A model of your own, checked with the symmetry audit.
//!
//! A river gauge reports a status code with every reading: 0 ok, 1 low
//! battery, 2 sensor fouled, 3 ice, 4 maintenance, 5 radio retry, 6 flood
//! alarm, 7 restarted. A status usually stays as it was, so a model that
//! gives "same as the last reading" most of the probability beats counting.
//!
//! The example implements that model, audits it (encoding and decoding
//! copies must agree step for step), codes a week of status codes with it,
//! and then audits a variant with a classic off-by-one mistake in `locate`
//! to show what the audit reports.
//!
//! Run with `cargo run --example custom_model`.

use subrange::coder::{Decoder, Encoder};
use subrange::model::audit::audit_model;
use subrange::model::{Model, Span, StepwiseModel};

const CODES: u32 = 8;
const TOTAL: u32 = 4096;
/// Frequency of every status other than the last one.
const OTHER: u32 = 64;
/// Frequency of "same as last": what the seven others leave.
const STAY: u32 = TOTAL - (CODES - 1) * OTHER;

/// "Same as last reading" gets STAY / TOTAL (89 %), each other code 1.6 %.
///
/// Symbols keep their natural order in the table; only the last one is wide.
struct StickyStatus {
    last: u32,
    /// Deliberate mistake for the demonstration: `<=` instead of `<` in locate.
    off_by_one: bool,
}

impl StickyStatus {
    fn new() -> Self {
        StickyStatus {
            last: 0,
            off_by_one: false,
        }
    }
}

impl Model for StickyStatus {
    fn alphabet_size(&self) -> u32 {
        CODES
    }

    fn total(&self) -> u32 {
        TOTAL
    }

    fn span(&self, symbol: u32) -> Option<Span> {
        if symbol >= CODES {
            return None;
        }
        // Symbols after the wide one are shifted by its extra width.
        let cum = symbol * OTHER + if symbol > self.last { STAY - OTHER } else { 0 };
        let freq = if symbol == self.last { STAY } else { OTHER };
        Some(Span::new(cum, freq))
    }

    fn locate(&self, target: u32) -> (u32, Span) {
        // Walk the eight spans; a real model with a large alphabet would
        // compute the answer directly or search a cumulative table.
        for s in 0..CODES {
            let span = self.span(s).unwrap();
            let end = span.cum + span.freq;
            let inside = if self.off_by_one {
                target <= end
            } else {
                target < end
            };
            if inside {
                return (s, span);
            }
        }
        (CODES - 1, self.span(CODES - 1).unwrap())
    }

    fn update(&mut self, symbol: u32) {
        // The only state change, made identically on both sides.
        self.last = symbol;
    }
}

/// A week of status codes at ten-minute intervals: long runs, rare changes.
fn week_of_status() -> Vec<u32> {
    let mut codes = Vec::new();
    let mut state = 0u32;
    let mut x = 0x2545_F491u32;
    for _ in 0..7 * 144 {
        x ^= x << 13;
        x ^= x >> 17;
        x ^= x << 5; // xorshift32 (Marsaglia, 2003)
        if x % 100 < 3 {
            state = if state == 0 { 1 + (x >> 8) % 7 } else { 0 };
        }
        codes.push(state);
    }
    codes
}

fn main() -> Result<(), subrange::Error> {
    let codes = week_of_status();

    // 1. Audit: two copies, one encodes, one decodes; any difference is reported.
    let report = audit_model(StickyStatus::new, &codes);
    println!("audit of StickyStatus: {report}");
    assert!(report.is_symmetric());

    // 2. Use it, and compare with the crate's adaptive order-0 model.
    let mut model = StickyStatus::new();
    let mut enc = Encoder::new();
    for &c in &codes {
        enc.encode(&mut model, c)?;
    }
    let bytes = enc.finish()?;
    let mut model = StickyStatus::new();
    let mut dec = Decoder::new(&bytes)?;
    for &c in &codes {
        assert_eq!(dec.decode(&mut model)?, c);
    }
    let mut counting = StepwiseModel::new(CODES)?;
    let mut enc = Encoder::new();
    for &c in &codes {
        enc.encode(&mut counting, c)?;
    }
    let counted = enc.finish()?;
    println!(
        "{} status codes: {} bytes with StickyStatus, {} bytes with StepwiseModel",
        codes.len(),
        bytes.len(),
        counted.len()
    );

    // 3. The broken variant: locate claims each span's first slot after it.
    let broken = || StickyStatus {
        off_by_one: true,
        ..StickyStatus::new()
    };
    let report = audit_model(broken, &codes);
    println!("audit of the off-by-one variant: {report}");
    let divergence = report.divergence.expect("the audit catches the mistake");
    assert!(divergence.step < codes.len());
    Ok(())
}

#[cfg(test)]
mod tests {
    #[test]
    fn runs() {
        super::main().unwrap();
    }
}
