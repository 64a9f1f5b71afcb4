//! A reversible transform of x86 call and jump targets.
//!
//! In x86 machine code, `E8` (call) and `E9` (jump) are followed by a 32-bit
//! little-endian displacement relative to the end of the instruction. The
//! same function called from many places gets a different displacement at
//! each call, which hides the repetition from a context model. Replacing the
//! displacement by the absolute target (displacement plus position) makes
//! every call of one function carry the same four bytes. The idea is long
//! published in the compression literature (it goes back to executable
//! packers of the 1990s; from memory); the details below are our own.
//!
//! Scanning from the start, at every position `i` with `i + 5 <= len` whose
//! byte is `E8` or `E9`, the scan takes the four bytes after it as a
//! displacement and resumes after them; when the displacement's top byte is
//! `00` or `FF` (a target within 16 MiB, as real code has), its low 24 bits
//! get `i` added ([`to_absolute`]) or subtracted ([`to_relative`]) modulo
//! 2^24 and the top byte is left alone. Everywhere else the scan moves on by
//! one byte.
//!
//! Invariant: the scan's decisions read the opcode and the top byte, which
//! no step changes, at positions no earlier step has changed (a step
//! changes only the three bytes after its opcode, and the scan skips past
//! them), and no later step changes them either; so both directions take
//! the same decisions and `to_relative(to_absolute(x)) == x` for every
//! byte string.
//! [`looks_like_x86`] decides whether a block is worth transforming, so the
//! transform is never applied blindly.
//!
//! # Example
//!
//! ```
//! use subrange::model::x86;
//!
//! let mut code = vec![0x90, 0xE8, 0x10, 0x00, 0x00, 0x00, 0xC3];
//! let original = code.clone();
//! x86::to_absolute(&mut code);
//! assert_eq!(code[2], 0x11); // displacement 0x10 at position 1
//! x86::to_relative(&mut code);
//! assert_eq!(code, original);
//! ```

/// Walks the block, handing each transformable displacement's low 24 bits
/// and its position to `f`.
#[inline]
fn walk(data: &mut [u8], f: impl Fn(u32, u32) -> u32) {
    let mut i = 0usize;
    while i + 5 <= data.len() {
        let op = data[i];
        let top = data[i + 4];
        if op == 0xE8 || op == 0xE9 {
            if top == 0 || top == 0xFF {
                let low = u32::from_le_bytes([data[i + 1], data[i + 2], data[i + 3], 0]);
                let v = f(low, i as u32) & 0xFF_FFFF;
                data[i + 1..i + 4].copy_from_slice(&v.to_le_bytes()[..3]);
            }
            i += 5;
        } else {
            i += 1;
        }
    }
}

/// Replaces relative call/jump displacements by absolute targets (see the
/// module documentation).
pub fn to_absolute(data: &mut [u8]) {
    walk(data, |low, at| low.wrapping_add(at));
}

/// Inverts [`to_absolute`].
pub fn to_relative(data: &mut [u8]) {
    walk(data, |low, at| low.wrapping_sub(at));
}

/// Whether `data` looks like x86 code: at least 16 `E8`/`E9` bytes whose
/// displacement has a top byte of `00` or `FF`, and such bytes are at least
/// a quarter of all `E8`/`E9` bytes and one in 200 bytes of the block. In
/// random data only one `E8`/`E9` in 128 has such a top byte.
pub fn looks_like_x86(data: &[u8]) -> bool {
    let (mut all, mut near) = (0usize, 0usize);
    for w in data.windows(5) {
        if w[0] == 0xE8 || w[0] == 0xE9 {
            all += 1;
            near += usize::from(w[4] == 0 || w[4] == 0xFF);
        }
    }
    near >= 16 && 4 * near >= all && near * 200 >= data.len()
}

#[cfg(test)]
mod tests {
    use super::*;
    use alloc::vec;

    #[test]
    fn targets_become_equal() {
        // Two calls of one target 0x1000, from positions 0 and 100.
        let mut code = vec![0x90u8; 110];
        code[0] = 0xE8;
        code[1..5].copy_from_slice(&(0x1000u32 - 5).to_le_bytes());
        code[100] = 0xE8;
        code[101..105].copy_from_slice(&(0x1000u32 - 105).to_le_bytes());
        let before = code.clone();
        to_absolute(&mut code);
        assert_eq!(code[1..5], code[101..105]);
        to_relative(&mut code);
        assert_eq!(code, before);
    }

    #[test]
    fn detection() {
        assert!(!looks_like_x86(&crate::corpus::random(1, 100_000)));
        assert!(!looks_like_x86(&crate::corpus::gauge_csv(1, 100_000)));
        let mut code = vec![0x90u8; 2000];
        for k in 0..40 {
            code[k * 50] = 0xE8;
            code[k * 50 + 4] = 0xFF;
        }
        assert!(looks_like_x86(&code));
    }
}
