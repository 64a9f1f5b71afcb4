//! Vector kernels of the table lanes (x86-64): [`select`] picks one for the
//! CPU and lane count; [`decode`] (eight lanes a 256-bit vector, AVX2 or
//! AVX-512 VL), [`decode_wide`] (sixteen lanes a 512-bit vector) and
//! [`encode`] (AVX2 or AVX-512) run it. Every kernel writes and reads the
//! same bytes as the scalar steps of `lanes::encode` and `lanes::decode`.

pub(crate) mod decode;
pub(crate) mod decode_wide;
pub(crate) mod encode;
mod select;

pub(crate) use select::{EncodeKernel, Kernel};
