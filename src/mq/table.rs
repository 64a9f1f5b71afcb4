//! The probability estimation table of the MQ coder.
//!
//! Each of the 47 states holds an estimate `Qe` of the probability of the less
//! probable symbol (LPS), scaled so that `0x8000` stands for 0.75 (the coder's
//! interval register `A` is kept in `[0x8000, 0x10000)`, so `0x8000..0x10000`
//! spans the values 0.75..1.5 and `Qe` is roughly `p(LPS) * 0xAAAA`). After
//! every renormalisation the context moves to `NMPS` (if the more probable
//! symbol was coded) or `NLPS` (if the less probable one was); when `SWITCH`
//! is set and an LPS is coded, the sense of the MPS flips.
//!
//! States 0..=5 are the fast-attack start-up states, 6..=45 the slowly
//! adapting ones, and state 46 a non-adapting state with `Qe = 0x5601` (about
//! one half), used for decisions that are known to be equiprobable.
//!
//! The values are those of ITU-T T.88 Table E.1, which are the same as those
//! of ISO/IEC 15444-1 Table C.2 (from memory; cross-checked by the standard's
//! test sequence in `tests/mq/mq_standard.rs`).
//!
//! The coders do not walk this table directly: they use a derived transition
//! table indexed by a packed context byte `index << 1 | mps`, which gives `Qe`
//! and the packed successor for either outcome, SWITCH already applied. The
//! packed table is padded to 128 entries so that indexing it with
//! `packed & 0x7F` can never go out of bounds.

/// One row of the probability estimation table.
///
/// # Example
///
/// ```
/// use subrange::mq::PROBABILITY_STATES;
///
/// let start = PROBABILITY_STATES[0];
/// assert_eq!(start.qe, 0x5601);
/// assert_eq!((start.nmps, start.nlps, start.switch), (1, 1, true));
/// ```
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct StateRow {
    /// Estimated LPS probability, scaled so that `0x8000` is 0.75.
    pub qe: u16,
    /// Next state after a renormalisation that follows an MPS.
    pub nmps: u8,
    /// Next state after an LPS.
    pub nlps: u8,
    /// Whether an LPS in this state swaps the sense of the MPS.
    pub switch: bool,
}

/// Number of states in the probability estimation table.
pub const STATE_COUNT: usize = 47;

const fn row(qe: u16, nmps: u8, nlps: u8, switch: u8) -> StateRow {
    StateRow {
        qe,
        nmps,
        nlps,
        switch: switch != 0,
    }
}

/// The probability estimation table: ITU-T T.88 Table E.1, identical to
/// ISO/IEC 15444-1 Table C.2 (from memory).
///
/// # Example
///
/// ```
/// use subrange::mq::{PROBABILITY_STATES, STATE_COUNT};
///
/// assert_eq!(PROBABILITY_STATES.len(), STATE_COUNT);
/// // The non-adapting state stays where it is whatever is coded.
/// let fixed = PROBABILITY_STATES[46];
/// assert_eq!((fixed.qe, fixed.nmps, fixed.nlps), (0x5601, 46, 46));
/// ```
pub const PROBABILITY_STATES: [StateRow; STATE_COUNT] = [
    row(0x5601, 1, 1, 1),
    row(0x3401, 2, 6, 0),
    row(0x1801, 3, 9, 0),
    row(0x0AC1, 4, 12, 0),
    row(0x0521, 5, 29, 0),
    row(0x0221, 38, 33, 0),
    row(0x5601, 7, 6, 1),
    row(0x5401, 8, 14, 0),
    row(0x4801, 9, 14, 0),
    row(0x3801, 10, 14, 0),
    row(0x3001, 11, 17, 0),
    row(0x2401, 12, 18, 0),
    row(0x1C01, 13, 20, 0),
    row(0x1601, 29, 21, 0),
    row(0x5601, 15, 14, 1),
    row(0x5401, 16, 14, 0),
    row(0x5101, 17, 15, 0),
    row(0x4801, 18, 16, 0),
    row(0x3801, 19, 17, 0),
    row(0x3401, 20, 18, 0),
    row(0x3001, 21, 19, 0),
    row(0x2801, 22, 19, 0),
    row(0x2401, 23, 20, 0),
    row(0x2201, 24, 21, 0),
    row(0x1C01, 25, 22, 0),
    row(0x1801, 26, 23, 0),
    row(0x1601, 27, 24, 0),
    row(0x1401, 28, 25, 0),
    row(0x1201, 29, 26, 0),
    row(0x1101, 30, 27, 0),
    row(0x0AC1, 31, 28, 0),
    row(0x09C1, 32, 29, 0),
    row(0x08A1, 33, 30, 0),
    row(0x0521, 34, 31, 0),
    row(0x0441, 35, 32, 0),
    row(0x02A1, 36, 33, 0),
    row(0x0221, 37, 34, 0),
    row(0x0141, 38, 35, 0),
    row(0x0111, 39, 36, 0),
    row(0x0085, 40, 37, 0),
    row(0x0049, 41, 38, 0),
    row(0x0025, 42, 39, 0),
    row(0x0015, 43, 40, 0),
    row(0x0009, 44, 41, 0),
    row(0x0005, 45, 42, 0),
    row(0x0001, 45, 43, 0),
    row(0x5601, 46, 46, 0),
];

/// Qe and both successors of one packed context byte (`index << 1 | mps`).
#[derive(Clone, Copy, Debug)]
pub(crate) struct Transition {
    /// `Qe` of the state.
    pub(crate) qe: u16,
    /// Packed successor after an MPS renormalisation.
    pub(crate) on_mps: u8,
    /// Packed successor after an LPS (MPS sense flipped where SWITCH is set).
    pub(crate) on_lps: u8,
}

/// Size of the packed transition table (a power of two, so that a mask keeps
/// every index in range).
pub(crate) const PACKED_SIZE: usize = 128;

/// Mask applied to a packed context byte before indexing [`TRANSITIONS`].
pub(crate) const PACKED_MASK: u8 = (PACKED_SIZE - 1) as u8;

const fn build_transitions() -> [Transition; PACKED_SIZE] {
    // Entries past the 94 real ones are never reached (contexts only ever
    // hold packed values below 94); they repeat packed state 0 so that the
    // table has no invalid successor anywhere.
    let mut table = [Transition {
        qe: PROBABILITY_STATES[0].qe,
        on_mps: PROBABILITY_STATES[0].nmps << 1,
        on_lps: (PROBABILITY_STATES[0].nlps << 1) | 1,
    }; PACKED_SIZE];
    let mut packed = 0;
    while packed < 2 * STATE_COUNT {
        let r = PROBABILITY_STATES[packed >> 1];
        let mps = (packed & 1) as u8;
        table[packed] = Transition {
            qe: r.qe,
            on_mps: (r.nmps << 1) | mps,
            on_lps: (r.nlps << 1) | (mps ^ r.switch as u8),
        };
        packed += 1;
    }
    table
}

/// The packed transition table used by the encoder and the decoder.
pub(crate) static TRANSITIONS: [Transition; PACKED_SIZE] = build_transitions();

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn successors_stay_in_the_table() {
        for r in PROBABILITY_STATES.iter() {
            assert!(usize::from(r.nmps) < STATE_COUNT);
            assert!(usize::from(r.nlps) < STATE_COUNT);
        }
    }

    #[test]
    fn switch_states_are_the_one_half_states() {
        // Only states whose estimate is about one half may swap the MPS
        // (common practice: an LPS there means the MPS guess was wrong).
        for (i, r) in PROBABILITY_STATES.iter().enumerate() {
            if r.switch {
                assert_eq!(r.qe, 0x5601, "state {i}");
            }
        }
        let switching: usize = PROBABILITY_STATES.iter().filter(|r| r.switch).count();
        assert_eq!(switching, 3);
    }

    #[test]
    fn qe_fits_below_half_of_the_smallest_interval() {
        // A >= 0x8000 before every split and Qe < 0x8000 / 1.5, so both
        // sub-intervals are non-empty.
        for r in PROBABILITY_STATES.iter() {
            assert!(r.qe > 0 && r.qe <= 0x5601);
        }
    }

    #[test]
    fn packed_transitions_match_the_rows() {
        for packed in 0..2 * STATE_COUNT {
            let t = TRANSITIONS[packed];
            let r = PROBABILITY_STATES[packed >> 1];
            let mps = (packed & 1) as u8;
            assert_eq!(t.qe, r.qe);
            assert_eq!(t.on_mps >> 1, r.nmps);
            assert_eq!(t.on_mps & 1, mps);
            assert_eq!(t.on_lps >> 1, r.nlps);
            assert_eq!(t.on_lps & 1, mps ^ u8::from(r.switch));
        }
        for t in TRANSITIONS.iter() {
            assert!(usize::from(t.on_mps) < 2 * STATE_COUNT);
            assert!(usize::from(t.on_lps) < 2 * STATE_COUNT);
        }
    }
}
