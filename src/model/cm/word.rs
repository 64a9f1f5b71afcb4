//! Word contexts for text.
//!
//! Text is better predicted by the word being spelled than by a fixed number
//! of preceding bytes: inside "temperature" the letters "temp" say more than
//! the last two bytes do. This tracker keeps a hash of the current word (its
//! letters so far, case folded) and of the previous word. Letters are ASCII
//! `A`–`Z`, `a`–`z` and every byte of 0x80 or above (so UTF-8 text keeps its
//! words whole); any other byte ends the word.
//!
//! Invariant: the current word's hash is 0 exactly when the last byte was not
//! a letter; a finished word's hash moves to `previous`.

use crate::model::cm::hashed::hash2;

/// Hashes of the current and the previous word.
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct WordContext {
    word: u64,
    previous: u64,
}

impl WordContext {
    /// Takes in the next byte.
    #[inline]
    pub(crate) fn push(&mut self, byte: u8) {
        let letter = match byte {
            b'A'..=b'Z' => Some(byte + 32),
            b'a'..=b'z' | 0x80..=0xFF => Some(byte),
            _ => None,
        };
        match letter {
            Some(c) => {
                self.word = hash2(self.word, u64::from(c)) | 1;
            }
            None => {
                if self.word != 0 {
                    self.previous = self.word;
                    self.word = 0;
                }
            }
        }
    }

    /// Hash of the current word (0 between words).
    #[inline]
    pub(crate) fn word(&self) -> u64 {
        self.word
    }

    /// Hash of the last finished word.
    #[inline]
    pub(crate) fn previous(&self) -> u64 {
        self.previous
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn case_folds_and_splits() {
        let mut a = WordContext::default();
        for &b in b"River Flow" {
            a.push(b);
        }
        let mut b = WordContext::default();
        for &c in b"river, flow" {
            b.push(c);
        }
        assert_eq!(a.word(), b.word());
        assert_eq!(a.previous(), b.previous());
        assert_ne!(a.word(), a.previous());
        b.push(b' ');
        assert_eq!(b.word(), 0);
        assert_eq!(b.previous(), a.word());
    }
}
