//! Errors of the MQ coder.
//!
//! The coder itself cannot fail on any input: every byte sequence decodes to
//! some decisions. What can go wrong is the caller's addressing: a context
//! index past the end of the context table, or a state index past the end of
//! the probability estimation table.

use core::fmt;

/// What went wrong in a call to the MQ coder.
///
/// # Example
///
/// ```
/// use subrange::mq::{MqContexts, MqEncoder, MqError};
///
/// let mut contexts = MqContexts::new(4);
/// let mut encoder = MqEncoder::new(Vec::new());
/// let err = encoder.encode(&mut contexts, 9, true).unwrap_err();
/// assert_eq!(err, MqError::ContextOutOfRange { context: 9, contexts: 4 });
/// assert_eq!(err.to_string(), "MQ context 9 out of range (table has 4 contexts)");
/// ```
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum MqError {
    /// A context index was not below the size of the context table.
    ContextOutOfRange {
        /// The index that was asked for.
        context: usize,
        /// The number of contexts in the table.
        contexts: usize,
    },
    /// A probability state index was not below
    /// [`STATE_COUNT`](crate::mq::STATE_COUNT).
    StateOutOfRange {
        /// The index that was asked for.
        index: u8,
    },
}

impl fmt::Display for MqError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match *self {
            MqError::ContextOutOfRange { context, contexts } => write!(
                f,
                "MQ context {context} out of range (table has {contexts} contexts)"
            ),
            MqError::StateOutOfRange { index } => write!(
                f,
                "MQ probability state {index} out of range (table has {} states)",
                crate::mq::STATE_COUNT
            ),
        }
    }
}

impl core::error::Error for MqError {}
