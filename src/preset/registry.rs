//! The registry: one table of the presets, from which [`PresetKind`], its
//! lists ([`PresetKind::ALL`], [`PresetKind::KEPT_FOR_READING`]), the
//! lookups by id and by name and the list of names in messages all follow.
//!
//! The preset module's files: `codec.rs`, the [`Codec`] trait (what one
//! preset is and does); one `<name>_codec.rs` per preset, with its typed
//! parameters, their [`ParamSpec`]s, its payload layout and its `Codec`;
//! this registry; `spec.rs`, the specs and the recorded values read by
//! spec; `text.rs`, the textual form; `lanes.rs` and `engine.rs`, the
//! parts the lane-coded and the context-mixing presets share.
//!
//! Adding a preset is one file (a [`Codec`], with an id no preset has used)
//! and one line in the table below, whose order is the order of
//! [`PresetKind::ALL`] (fastest first).
//!
//! Invariant: the table's `n`th entry is the codec of the `n`th
//! [`PresetKind`] variant (the macro declares both from the same list), and
//! ids and names are unique (a unit test checks).

use crate::error::{ErrorKind, Result};
use crate::preset::codec::{Codec, Ops, OpsOf};
use crate::preset::spec::ParamSpec;
use crate::preset::{
    adaptive_codec, history_codec, mix_codec, order2_codec, static_codec, stepwise_codec,
};

/// A preset in the registry's table: its codec's constants and operations.
pub(crate) struct Registered {
    pub(crate) id: u32,
    pub(crate) name: &'static str,
    pub(crate) summary: &'static str,
    pub(crate) params: &'static [ParamSpec],
    pub(crate) offered: bool,
    pub(crate) block_size: u64,
    pub(crate) ops: &'static dyn Ops,
}

impl Registered {
    const fn of<C: Codec>() -> Self {
        Registered {
            id: C::ID,
            name: C::NAME,
            summary: C::SUMMARY,
            params: C::PARAMS,
            offered: C::OFFERED,
            block_size: C::BLOCK_SIZE,
            ops: OpsOf::<C>::OPS,
        }
    }
}

/// Declares [`PresetKind`] with one variant per line, [`KINDS`] listing
/// them and [`TABLE`] with the codec of each, in the same order.
macro_rules! registry {
    ($($(#[$doc:meta])* $kind:ident => $codec:ty,)*) => {
        /// Which preset: the part of a [`Preset`](super::Preset) that is
        /// not a parameter.
        #[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
        #[non_exhaustive]
        pub enum PresetKind {
            $($(#[$doc])* $kind,)*
        }

        /// Every kind, in the order of its variants.
        const KINDS: &[PresetKind] = &[$(PresetKind::$kind,)*];

        /// The codec of each kind, in the order of [`KINDS`].
        const TABLE: &[Registered] = &[$(Registered::of::<$codec>(),)*];
    };
}

registry! {
    /// A table model per block, stored in the block, coded over lanes.
    Static => static_codec::Static,
    /// A refreshed adaptive order-0 model restarted at each block, coded
    /// over lanes.
    Adaptive => adaptive_codec::Adaptive,
    /// An adaptive order-0 model updated after every byte, restarted at
    /// each block, one lane; containers with preset id 2 decode (not among
    /// [`PresetKind::ALL`]).
    Stepwise => stepwise_codec::Stepwise,
    /// The fast order-2 context model, restarted at each block.
    Order2 => order2_codec::Order2,
    /// Orders 1–6, word and column contexts and a match model, mixed;
    /// restarted at each block.
    Mix => mix_codec::Mix,
    /// Bit-history context models, two mixing layers and a refinement
    /// chain, x86 code detected per block; the strongest model, restarted
    /// at each block (of 32 MiB by default).
    History => history_codec::History,
}

/// How many table entries are (or are not) offered.
const fn count(offered: bool) -> usize {
    let mut n = 0;
    let mut i = 0;
    while i < TABLE.len() {
        if TABLE[i].offered == offered {
            n += 1;
        }
        i += 1;
    }
    n
}

/// The kinds that are (or are not) offered, in the table's order.
const fn pick<const N: usize>(offered: bool) -> [PresetKind; N] {
    let mut out = [KINDS[0]; N];
    let (mut i, mut n) = (0, 0);
    while i < TABLE.len() {
        if TABLE[i].offered == offered {
            out[n] = KINDS[i];
            n += 1;
        }
        i += 1;
    }
    out
}

const OFFERED: [PresetKind; count(true)] = pick(true);
const KEPT: [PresetKind; count(false)] = pick(false);

/// The start of the message for an unknown preset name.
const NAME_LIST_START: &str = "unknown preset name: expected one of ";
const NAME_LIST_LEN: usize = name_list_len();
const NAME_LIST_BYTES: [u8; NAME_LIST_LEN] = name_list_bytes();

/// The message for an unknown preset name: the offered names, in the
/// table's order.
pub(crate) const NAME_LIST: &str = match core::str::from_utf8(&NAME_LIST_BYTES) {
    Ok(s) => s,
    Err(_) => panic!("preset names are UTF-8"),
};

const fn name_list_len() -> usize {
    let mut len = NAME_LIST_START.len();
    let mut i = 0;
    while i < OFFERED.len() {
        if i > 0 {
            len += ", ".len();
        }
        len += OFFERED[i].entry().name.len();
        i += 1;
    }
    len
}

const fn name_list_bytes() -> [u8; NAME_LIST_LEN] {
    let mut out = [0u8; NAME_LIST_LEN];
    let mut at = copy(&mut out, 0, NAME_LIST_START.as_bytes());
    let mut i = 0;
    while i < OFFERED.len() {
        if i > 0 {
            at = copy(&mut out, at, b", ");
        }
        at = copy(&mut out, at, OFFERED[i].entry().name.as_bytes());
        i += 1;
    }
    out
}

/// Copies `from` into `out` at `at`; the position after it.
const fn copy(out: &mut [u8], at: usize, from: &[u8]) -> usize {
    let mut i = 0;
    while i < from.len() {
        out[at + i] = from[i];
        i += 1;
    }
    at + from.len()
}

impl PresetKind {
    /// Every preset kind this release offers for writing, fastest first.
    pub const ALL: &'static [PresetKind] = &OFFERED;

    /// Preset kinds kept only so that containers using them decode.
    pub const KEPT_FOR_READING: &'static [PresetKind] = &KEPT;

    /// The kind's table entry.
    pub(crate) const fn entry(self) -> &'static Registered {
        &TABLE[self as usize]
    }

    /// Every kind this release knows: offered, then kept for reading.
    pub(crate) fn known() -> impl Iterator<Item = PresetKind> {
        Self::ALL.iter().chain(Self::KEPT_FOR_READING).copied()
    }

    /// The id recorded in a container header.
    pub fn id(self) -> u32 {
        self.entry().id
    }

    /// The preset's name (`static`, `adaptive`).
    pub fn name(self) -> &'static str {
        self.entry().name
    }

    /// One line on what the preset does, for help texts.
    pub fn summary(self) -> &'static str {
        self.entry().summary
    }

    /// The preset's parameters, in the order a header records them.
    pub fn param_specs(self) -> &'static [ParamSpec] {
        self.entry().params
    }

    /// The kind with this header id.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::UnknownPreset`] for an id this release does not know.
    pub fn from_id(id: u32) -> Result<Self> {
        Self::known()
            .find(|k| k.id() == id)
            .ok_or_else(|| ErrorKind::UnknownPreset { id }.into())
    }

    /// The kind with this name (exact, lower case).
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] naming the valid presets.
    pub fn from_name(name: &str) -> Result<Self> {
        Self::ALL
            .iter()
            .copied()
            .find(|k| k.name() == name)
            .ok_or_else(|| crate::Error::invalid_parameter("preset", NAME_LIST))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::preset::{Preset, MAX_PARAMS};
    use alloc::vec::Vec;

    #[test]
    fn name_list_names_every_preset() {
        let listed = NAME_LIST.rsplit("one of ").next().unwrap();
        let names: Vec<&str> = listed.split(", ").collect();
        assert_eq!(names, Preset::names().collect::<Vec<_>>());
    }

    #[test]
    fn ids_and_names_are_unique_and_params_fit() {
        let known: Vec<PresetKind> = PresetKind::known().collect();
        for (i, a) in known.iter().enumerate() {
            assert!(a.param_specs().len() <= MAX_PARAMS);
            for spec in a.param_specs() {
                assert!(spec.min <= spec.default && spec.default <= spec.max);
            }
            assert!(Preset::new(*a).check_params().is_ok());
            // Parameters a header may leave out come after all the others.
            let specs = a.param_specs();
            let required = specs.iter().filter(|s| s.absent.is_none()).count();
            assert!(
                specs[..required].iter().all(|s| s.absent.is_none()),
                "{a:?}"
            );
            for b in &known[i + 1..] {
                assert_ne!(a.id(), b.id());
                assert_ne!(a.name(), b.name());
            }
        }
    }

    #[test]
    fn every_kind_is_offered_or_kept_for_reading_once() {
        assert_eq!(PresetKind::known().count(), KINDS.len());
        for (i, &k) in KINDS.iter().enumerate() {
            assert_eq!(k as usize, i);
            assert_eq!(PresetKind::known().filter(|&x| x == k).count(), 1);
            assert_eq!(PresetKind::ALL.contains(&k), k.entry().offered);
        }
    }
}
