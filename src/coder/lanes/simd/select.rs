//! Which vector kernel runs: the decoder's [`Kernel`] and the encoder's
//! [`EncodeKernel`], each chosen for a lane count from what the running CPU
//! has (detected at run time with `std`, fixed at build time without).
//!
//! A kernel is only ever chosen when [`supported`](Kernel::supported) says
//! the CPU has its instructions: that check is what makes calling the
//! `#[target_feature]` functions of [`decode`](super::decode),
//! [`decode_wide`](super::decode_wide) and [`encode`](super::encode) sound.

/// Which build of the kernel this CPU runs.
#[derive(Clone, Copy, PartialEq, Eq, Debug)]
pub(crate) enum Kernel {
    /// AVX-512 F and BW with 512-bit vectors: sixteen lanes a vector, two
    /// vectors a pass (`decode_wide`); lane counts that are a multiple
    /// of sixteen.
    Avx512Wide,
    /// AVX-512 F and VL: 32 vector registers, four vectors a pass.
    Avx512,
    /// AVX2: 16 vector registers, two vectors a pass.
    Avx2,
}

impl Kernel {
    /// The best kernel for `lanes` lanes on the running CPU; none unless
    /// the lane count is a multiple of eight.
    pub(crate) fn for_lanes(lanes: usize) -> Option<Kernel> {
        if !lanes.is_multiple_of(8) {
            return None;
        }
        [Kernel::Avx512Wide, Kernel::Avx512, Kernel::Avx2]
            .into_iter()
            .find(|k| k.fits(lanes) && k.supported())
    }

    /// Whether the kernel decodes `lanes` lanes (a multiple of its vector
    /// width).
    pub(crate) fn fits(self, lanes: usize) -> bool {
        match self {
            Kernel::Avx512Wide => lanes.is_multiple_of(16),
            _ => lanes.is_multiple_of(8),
        }
    }

    /// Whether the running CPU has the kernel's instructions.
    pub(crate) fn supported(self) -> bool {
        #[cfg(feature = "std")]
        {
            match self {
                Kernel::Avx512Wide => super::decode_wide::supported(),
                Kernel::Avx512 => {
                    std::is_x86_feature_detected!("avx512f")
                        && std::is_x86_feature_detected!("avx512vl")
                }
                Kernel::Avx2 => std::is_x86_feature_detected!("avx2"),
            }
        }
        #[cfg(not(feature = "std"))]
        {
            match self {
                Kernel::Avx512Wide => super::decode_wide::supported(),
                Kernel::Avx512 => {
                    cfg!(all(target_feature = "avx512f", target_feature = "avx512vl"))
                }
                Kernel::Avx2 => cfg!(target_feature = "avx2"),
            }
        }
    }
}

/// Which vector kernel of the lane encoder this CPU runs.
#[derive(Clone, Copy, PartialEq, Eq, Debug)]
pub(crate) enum EncodeKernel {
    /// AVX-512 F, BW and CD: sixteen lanes a vector, scatter stores; lane
    /// counts that are a multiple of sixteen.
    Avx512,
    /// AVX2: eight lanes a vector; lane counts that are a multiple of eight.
    Avx2,
}

impl EncodeKernel {
    /// Every kernel, best first.
    pub(crate) const ALL: [EncodeKernel; 2] = [EncodeKernel::Avx512, EncodeKernel::Avx2];

    /// The best kernel for `lanes` lanes on the running CPU, if any.
    pub(crate) fn for_lanes(lanes: usize) -> Option<EncodeKernel> {
        Self::ALL
            .into_iter()
            .find(|k| k.fits(lanes) && k.supported())
    }

    /// Whether the kernel codes `lanes` lanes (up to 32, a multiple of its
    /// vector width).
    pub(crate) fn fits(self, lanes: usize) -> bool {
        lanes > 0
            && lanes <= crate::coder::MAX_LANES
            && match self {
                EncodeKernel::Avx512 => lanes.is_multiple_of(16),
                EncodeKernel::Avx2 => lanes.is_multiple_of(8),
            }
    }

    /// Whether the running CPU has the kernel's instructions.
    pub(crate) fn supported(self) -> bool {
        #[cfg(feature = "std")]
        {
            match self {
                EncodeKernel::Avx512 => {
                    std::is_x86_feature_detected!("avx512f")
                        && std::is_x86_feature_detected!("avx512bw")
                        && std::is_x86_feature_detected!("avx512cd")
                }
                EncodeKernel::Avx2 => std::is_x86_feature_detected!("avx2"),
            }
        }
        #[cfg(not(feature = "std"))]
        {
            match self {
                EncodeKernel::Avx512 => cfg!(all(
                    target_feature = "avx512f",
                    target_feature = "avx512bw",
                    target_feature = "avx512cd"
                )),
                EncodeKernel::Avx2 => cfg!(target_feature = "avx2"),
            }
        }
    }
}
