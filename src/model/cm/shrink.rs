//! The byte loop of both engines' encoders, with the early check that lets
//! a container store an incompressible block instead of coding all of it.
//!
//! With the check on, after the first sixteenth of the block (at least
//! [`STORE_CHECK`] bytes) the loop gives up when the output so far is not
//! shorter than the input so far: incompressible data (already compressed,
//! encrypted, random) then costs a sixteenth of the engine's time. A block
//! that turns compressible after its first sixteenth is stored too; that is
//! the price of the shortcut. Blocks of at most [`STORE_CHECK`] bytes are
//! never checked.

use alloc::vec::Vec;

use crate::coder::Encoder;
use crate::error::Result;

/// The fewest bytes coded before the check.
pub(crate) const STORE_CHECK: usize = 32 << 10;

/// Codes bytes `0 .. len` with `code(enc, i)`; `None` when `check` is set
/// and the check above gave up.
pub(crate) fn code_bytes(
    len: usize,
    mut enc: Encoder,
    check: bool,
    mut code: impl FnMut(&mut Encoder, usize) -> Result<()>,
) -> Result<Option<Encoder>> {
    let at = if check {
        (len / 16).max(STORE_CHECK)
    } else {
        usize::MAX
    };
    for i in 0..len {
        if i == at && enc.len_estimate() >= i as u64 {
            return Ok(None);
        }
        code(&mut enc, i)?;
    }
    Ok(Some(enc))
}

/// The finished stream, or `None` if the loop gave up.
#[cfg_attr(not(feature = "std"), allow(dead_code))]
pub(crate) fn finish_or_store(enc: Option<Encoder>) -> Result<Option<Vec<u8>>> {
    enc.map(Encoder::finish).transpose()
}
