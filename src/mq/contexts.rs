//! The context table: one adaptive probability state per context.
//!
//! Each context holds an index into the probability estimation table
//! (`I(CX)` in the standards) and the sense of its more probable symbol
//! (`MPS(CX)`). They are packed into one byte, `index << 1 | mps`; the table
//! only ever stores packed values below `2 * STATE_COUNT`, which is what lets
//! the coders index their transition table without a bounds check.
//!
//! Encoder and decoder each keep their own table; they stay in step as long
//! as both start from the same states and code the same sequence of contexts.

use alloc::vec;
use alloc::vec::Vec;

use super::error::MqError;
use super::table::STATE_COUNT;

/// A table of MQ coding contexts, each an adaptive probability state.
///
/// Every context starts at state index 0 with MPS 0, the usual start of the
/// standards; [`set`](Self::set) chooses another start (ISO/IEC 15444-1, for
/// instance, starts some of its contexts at states 3, 4 and 46).
///
/// # Example
///
/// ```
/// use subrange::mq::MqContexts;
///
/// # fn main() -> Result<(), subrange::mq::MqError> {
/// let mut contexts = MqContexts::new(19);
/// contexts.set(18, 46, false)?;
/// assert_eq!(contexts.state(18)?, (46, false));
/// assert_eq!(contexts.state(0)?, (0, false));
/// assert!(contexts.state(19).is_err());
/// # Ok(())
/// # }
/// ```
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct MqContexts {
    /// Packed `index << 1 | mps`, always below `2 * STATE_COUNT`.
    pub(crate) states: Vec<u8>,
}

impl MqContexts {
    /// Creates `count` contexts, all at state index 0 with MPS 0.
    ///
    /// # Panics
    ///
    /// Panics if `count` bytes cannot be allocated (as `vec!` does).
    ///
    /// # Example
    ///
    /// ```
    /// let contexts = subrange::mq::MqContexts::new(3);
    /// assert_eq!(contexts.len(), 3);
    /// ```
    pub fn new(count: usize) -> Self {
        MqContexts {
            states: vec![0; count],
        }
    }

    /// Number of contexts in the table.
    ///
    /// # Example
    ///
    /// ```
    /// assert_eq!(subrange::mq::MqContexts::new(5).len(), 5);
    /// ```
    pub fn len(&self) -> usize {
        self.states.len()
    }

    /// Whether the table has no contexts at all (every coding call fails).
    ///
    /// # Example
    ///
    /// ```
    /// assert!(subrange::mq::MqContexts::new(0).is_empty());
    /// ```
    pub fn is_empty(&self) -> bool {
        self.states.is_empty()
    }

    /// Sets context `cx` to probability state `index` with more probable
    /// symbol `mps`.
    ///
    /// # Errors
    ///
    /// [`MqError::ContextOutOfRange`] if `cx >= self.len()`,
    /// [`MqError::StateOutOfRange`] if `index >= STATE_COUNT`.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::mq::{MqContexts, MqError};
    ///
    /// let mut contexts = MqContexts::new(2);
    /// assert_eq!(contexts.set(1, 3, true), Ok(()));
    /// assert_eq!(contexts.set(1, 47, true), Err(MqError::StateOutOfRange { index: 47 }));
    /// ```
    pub fn set(&mut self, cx: usize, index: u8, mps: bool) -> Result<(), MqError> {
        let contexts = self.states.len();
        let slot = self.states.get_mut(cx).ok_or(MqError::ContextOutOfRange {
            context: cx,
            contexts,
        })?;
        if usize::from(index) >= STATE_COUNT {
            return Err(MqError::StateOutOfRange { index });
        }
        *slot = (index << 1) | u8::from(mps);
        Ok(())
    }

    /// Returns the probability state index and the MPS of context `cx`.
    ///
    /// # Errors
    ///
    /// [`MqError::ContextOutOfRange`] if `cx >= self.len()`.
    ///
    /// # Example
    ///
    /// ```
    /// # fn main() -> Result<(), subrange::mq::MqError> {
    /// use subrange::mq::{MqContexts, MqEncoder};
    ///
    /// let mut contexts = MqContexts::new(1);
    /// let mut encoder = MqEncoder::new(Vec::new());
    /// // An LPS in state 0 moves to state 1 and swaps the MPS.
    /// encoder.encode(&mut contexts, 0, true)?;
    /// assert_eq!(contexts.state(0)?, (1, true));
    /// # Ok(())
    /// # }
    /// ```
    pub fn state(&self, cx: usize) -> Result<(u8, bool), MqError> {
        match self.states.get(cx) {
            Some(&packed) => Ok((packed >> 1, packed & 1 != 0)),
            None => Err(MqError::ContextOutOfRange {
                context: cx,
                contexts: self.states.len(),
            }),
        }
    }

    /// Puts every context back to state index 0 with MPS 0.
    ///
    /// # Example
    ///
    /// ```
    /// # fn main() -> Result<(), subrange::mq::MqError> {
    /// let mut contexts = subrange::mq::MqContexts::new(2);
    /// contexts.set(0, 20, true)?;
    /// contexts.reset();
    /// assert_eq!(contexts.state(0)?, (0, false));
    /// # Ok(())
    /// # }
    /// ```
    pub fn reset(&mut self) {
        self.states.fill(0);
    }

    /// The packed state of `cx`, or the error naming it.
    #[inline(always)]
    pub(crate) fn slot(&mut self, cx: usize) -> Result<&mut u8, MqError> {
        let contexts = self.states.len();
        self.states.get_mut(cx).ok_or(MqError::ContextOutOfRange {
            context: cx,
            contexts,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn set_validates_both_indices() {
        let mut c = MqContexts::new(3);
        assert_eq!(
            c.set(3, 0, false),
            Err(MqError::ContextOutOfRange {
                context: 3,
                contexts: 3
            })
        );
        assert_eq!(
            c.set(0, STATE_COUNT as u8, false),
            Err(MqError::StateOutOfRange {
                index: STATE_COUNT as u8
            })
        );
        c.set(2, 46, true).unwrap();
        assert_eq!(c.states[2], 93);
        assert_eq!(c.state(2), Ok((46, true)));
    }
}
