//! Column contexts for line-structured data.
//!
//! Records such as CSV telemetry lines repeat their layout: the byte in the
//! same column of the previous line (the byte "above") predicts the current
//! one well — the same separator, the same leading digits of a slowly varying
//! reading. This tracker follows line starts (a line ends at `\n`) and
//! reports the current column and the byte above it.
//!
//! Invariant: `line_start <= history.len()` and `previous_start <= line_start`;
//! the byte above is read only inside the previous line.

/// Line positions for column contexts.
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct ColumnContext {
    line_start: usize,
    previous_start: usize,
    column: usize,
    above: u8,
}

impl ColumnContext {
    /// Takes in the byte just completed; `history` ends with it.
    #[inline]
    pub(crate) fn byte_done(&mut self, history: &[u8]) {
        let pos = history.len();
        if history.last() == Some(&b'\n') {
            self.previous_start = self.line_start;
            self.line_start = pos;
        }
        self.column = pos - self.line_start;
        let above = self.previous_start + self.column;
        self.above = if above < self.line_start {
            history[above]
        } else {
            0
        };
    }

    /// Bytes since the start of the current line.
    #[inline]
    pub(crate) fn column(&self) -> usize {
        self.column
    }

    /// The byte in the same column of the previous line (0 past its end).
    #[inline]
    pub(crate) fn above(&self) -> u8 {
        self.above
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_the_byte_above() {
        let text = b"12,3.4\n13,3";
        let mut c = ColumnContext::default();
        for i in 1..=text.len() {
            c.byte_done(&text[..i]);
        }
        assert_eq!(c.column(), 4);
        assert_eq!(c.above(), b'.');
        let mut c = ColumnContext::default();
        c.byte_done(b"ab");
        assert_eq!(c.above(), 0);
    }
}
