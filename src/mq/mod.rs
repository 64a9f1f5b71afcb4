//! The MQ binary arithmetic coder of ITU-T T.88 and ISO/IEC 15444-1,
//! bit-exact.
//!
//! The MQ coder codes a sequence of binary decisions, each in a context
//! chosen by the caller. Every context carries an adaptive probability state:
//! an index into a 47-state [probability estimation table](PROBABILITY_STATES)
//! and the sense of its more probable symbol (MPS). Coding splits the current
//! interval `A` into a part of size `Qe` (the estimated probability of the
//! less probable symbol, LPS) and a part of size `A - Qe`, without any
//! multiplication: `A` is kept near one (`[0x8000, 0x10000)` stands for
//! `[0.75, 1.5)`), so `A * Qe` is approximated by `Qe`. When `A` falls below
//! `0x8000` it is doubled back (renormalisation), and only then does the
//! context move to its next state, so adaptation costs nothing on the common
//! path.
//!
//! This module follows the software conventions of the standards (T.88
//! Annex E, 15444-1 Annex C): the registers `A`, `C`, `CT` and `B`, and the
//! procedures INITENC, CODEMPS, CODELPS, RENORME, BYTEOUT, SETBITS and FLUSH
//! in [`MqEncoder`], INITDEC, DECODE, MPS_EXCHANGE, LPS_EXCHANGE, RENORMD and
//! BYTEIN in [`MqDecoder`]; the private functions carry those names so the
//! code can be read beside the flowcharts. Output is byte-for-byte that of
//! the standards, including
//!
//! - bit stuffing: the byte after a 0xFF carries only seven code bits, so a
//!   carry can always be absorbed and no byte is changed after it is written;
//! - both terminations ([`Termination`]): the bi-level image one, ending with
//!   the marker 0xFF 0xAC, and the wavelet image one, without a marker;
//! - decoding past the end: the decoder feeds 1-bits (0xFF bytes) at a
//!   marker or at the end of its input.
//!
//! # Invariants
//!
//! - `A` is in `[0x8000, 0x10000)` after every call; `0 < Qe < 0x8000` for
//!   every state, so both sub-intervals are always non-empty.
//! - In the encoder `CT` counts the shifts until the next byte leaves `C`; in
//!   the decoder, the bits left before the next byte enters it.
//! - Contexts only ever hold valid packed states, so table look-ups need no
//!   checks; a context index out of range is a typed [`MqError`], never a
//!   panic.
//! - Each decoding call does bounded work and nothing allocates by input:
//!   the caller bounds decoding by the number of decisions it asks for.
//! - Only integer arithmetic: output is identical on every platform.
//!
//! # Example: code two kinds of flag in their own contexts
//!
//! ```
//! use subrange::mq::{MqContexts, MqDecoder, MqEncoder, Termination};
//!
//! # fn main() -> Result<(), subrange::mq::MqError> {
//! // A gauging station's hourly flags: "level above warning mark" (context 0)
//! // and "temperature sensor fault" (context 1), synthetic.
//! let above: Vec<bool> = (0..500).map(|h| (120..170).contains(&h)).collect();
//! let fault: Vec<bool> = (0..500).map(|h| h % 97 == 0).collect();
//!
//! let mut contexts = MqContexts::new(2);
//! let mut encoder = MqEncoder::new(Vec::new());
//! for (&a, &f) in above.iter().zip(&fault) {
//!     encoder.encode(&mut contexts, 0, a)?;
//!     encoder.encode(&mut contexts, 1, f)?;
//! }
//! let stream = encoder.finish(Termination::BiLevel);
//! assert!(stream.len() < 1000 / 8 / 3);
//!
//! let mut contexts = MqContexts::new(2);
//! let mut decoder = MqDecoder::new(&stream);
//! for (&a, &f) in above.iter().zip(&fault) {
//!     assert_eq!(decoder.decode(&mut contexts, 0)?, a);
//!     assert_eq!(decoder.decode(&mut contexts, 1)?, f);
//! }
//! # Ok(())
//! # }
//! ```

mod contexts;
mod decoder;
mod encoder;
mod error;
mod table;

pub use contexts::MqContexts;
pub use decoder::MqDecoder;
pub use encoder::{MqEncoder, MqSink, Termination};
pub use error::MqError;
pub use table::{StateRow, PROBABILITY_STATES, STATE_COUNT};
