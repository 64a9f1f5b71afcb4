//! Presets: the named model combinations a container records and rebuilds.
//!
//! A container header names one preset by its numeric id and lists its
//! parameters as small integers; every block is then coded and decoded by
//! that preset alone, so a reader needs nothing but the header to rebuild the
//! models. Presets here:
//!
//! - `static` (id 1): per block, a [`TableModel`](crate::model::TableModel)
//!   quantised from the block's byte histogram; the table is stored in the
//!   block and the bytes are coded over interleaved lanes
//!   ([`encode_lanes`](crate::coder::encode_lanes)). Fast in both
//!   directions; wins on memoryless, skewed data.
//! - `adaptive` (id 5): a [`AdaptiveModel`](crate::model::AdaptiveModel)
//!   over the block's byte values, restarted at every block: its table is
//!   rebuilt from the counts at growing intervals, and each stretch between
//!   rebuilds is coded over interleaved lanes like a `static` block. No table
//!   to store, follows drifting statistics, nearly as fast as `static`.
//! - `stepwise` (id 2), kept for reading: an
//!   [`StepwiseModel`](crate::model::StepwiseModel) over 256 symbols,
//!   restarted at every block, updated after every byte, one coder lane.
//!   Containers that use it decode, and [`Preset::new`] and the textual
//!   form make it, but it is not offered among the presets
//!   ([`PresetKind::ALL`], the command line): `adaptive` compresses about
//!   as well at several times its speed in both directions.
//! - `order2` (id 3): the fast order-2 context model of
//!   [`model::cm`](crate::model::cm), coded bit by bit; close to the data's
//!   order-2 conditional entropy.
//! - `mix` (id 4): hashed contexts of orders 1 to 6, word and column
//!   contexts and a match model, logistically mixed and refined; strong and
//!   slow.
//! - `history` (id 6): the strongest model: bit-history (indirect) context
//!   models of orders 1–4 and 6, words, column, sparse and record contexts,
//!   direct order 0 and 1, a match model, two mixing layers and a chain of
//!   refinement maps, with x86 code detected per block and its call targets
//!   transformed; 32 MiB blocks by default ([`Preset::default_block_size`]).
//!
//! In a container, an `order2`, `mix` or `history` block whose first
//! sixteenth (at least 32 KiB) does not shrink is stored without coding the
//! rest, and a `static` or `adaptive` block whose byte counts (for
//! `adaptive`, with the model's ideal cost) prove it cannot shrink is stored
//! without coding, so incompressible input stays fast; any other block that
//! does not shrink is stored once coded.
//!
//! Invariant: [`Preset::decode_block`] with the parameters read back from a
//! header inverts [`Preset::encode_block`] exactly, on every platform (no
//! floating point, no platform-sized integers in the payload), and a preset's
//! id, name, parameter list and payload layout never change once released:
//! a new behaviour gets a new id.
//!
//! # Textual form
//!
//! A preset is written `name` or `name:param=value,...`
//! (`mix:memory_mib=32`): [`Preset`]'s [`Display`](core::fmt::Display)
//! prints it with every parameter, and [`FromStr`](core::str::FromStr) (and
//! [`Preset::from_name`]) read it back, a name alone or any subset of
//! parameters standing for the defaults of the rest.

mod adaptive_codec;
mod codec;
mod engine;
mod history_codec;
mod lanes;
mod mix_codec;
mod order2_codec;
mod registry;
mod spec;
mod static_codec;
mod stepwise_codec;
mod text;

use alloc::vec::Vec;
use core::fmt;

#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
pub use registry::PresetKind;
pub use spec::ParamSpec;

/// Most parameters a preset may have.
pub const MAX_PARAMS: usize = 8;

/// A preset with its parameters: everything needed to code and decode the
/// blocks of a container.
///
/// # Example
///
/// ```
/// use subrange::preset::Preset;
///
/// # fn main() -> Result<(), subrange::Error> {
/// let mut preset = Preset::from_name("adaptive")?;
/// preset.set_param("period", 4096)?;
/// let reading = b"G107,1440,212,1123,94\nG107,1450,213,1134,94\n";
/// let payload = preset.encode_block(reading)?;
/// let mut back = Vec::new();
/// preset.decode_block(&payload, reading.len(), &mut back)?;
/// assert_eq!(back, reading);
/// // One textual form, printed and parsed.
/// let text = preset.to_string();
/// assert_eq!(text, "adaptive:lanes=32,log2_total=12,period=4096,limit=4096");
/// assert_eq!(text.parse::<Preset>()?, preset);
/// # Ok(())
/// # }
/// ```
#[derive(Clone, Copy, PartialEq, Eq, Hash)]
pub struct Preset {
    kind: PresetKind,
    values: [u32; MAX_PARAMS],
}

impl Default for Preset {
    /// The `static` preset with default parameters.
    fn default() -> Self {
        Preset::new(PresetKind::Static)
    }
}

impl Preset {
    /// The preset `kind` with default parameters.
    pub fn new(kind: PresetKind) -> Self {
        let mut values = [0u32; MAX_PARAMS];
        for (v, spec) in values.iter_mut().zip(kind.param_specs()) {
            *v = spec.default;
        }
        Preset { kind, values }
    }

    /// The preset named by `text` in the [textual form](self#textual-form):
    /// `name` (default parameters) or `name:param=value,...` (the others at
    /// their defaults); the same as `text.parse()`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] for an unknown name (its message
    /// lists the valid ones), a malformed parameter, an unknown one, or a
    /// value out of range or not fitting with the others.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::preset::Preset;
    ///
    /// assert_eq!(Preset::from_name("static").unwrap().id(), 1);
    /// let mix = Preset::from_name("mix:memory_mib=32").unwrap();
    /// assert_eq!(mix.param("memory_mib"), Some(32));
    /// let err = Preset::from_name("fastest").unwrap_err();
    /// assert!(err.to_string().contains("static, adaptive"));
    /// ```
    pub fn from_name(text: &str) -> Result<Self> {
        text::parse(text)
    }

    /// Rebuilds a preset from a header's id and parameter list.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::UnknownPreset`] for an unknown id;
    /// [`ErrorKind::LimitExceeded`] for a parameter above its maximum;
    /// [`ErrorKind::InvalidParameter`] for a wrong number of parameters, a
    /// value below its minimum, or values that do not fit together.
    pub fn from_id(id: u32, params: &[u32]) -> Result<Self> {
        let kind = PresetKind::from_id(id)?;
        let specs = kind.param_specs();
        // Parameters a header may leave out come last and imply their
        // `absent` value in headers that stop before them.
        let required = specs.iter().filter(|s| s.absent.is_none()).count();
        if params.len() < required || params.len() > specs.len() {
            return Err(crate::Error::invalid_parameter(
                "preset parameters",
                "wrong number of parameters for this preset",
            ));
        }
        let mut values = [0u32; MAX_PARAMS];
        for (v, spec) in values[params.len()..]
            .iter_mut()
            .zip(&specs[params.len()..])
        {
            *v = spec.absent.unwrap_or(spec.default);
        }
        for ((v, &p), spec) in values.iter_mut().zip(params).zip(specs) {
            crate::Error::check_limit(spec.name, p.into(), spec.max.into())?;
            if p < spec.min {
                return Err(out_of_range(spec.name));
            }
            *v = p;
        }
        let preset = Preset { kind, values };
        preset.check_params()?;
        Ok(preset)
    }

    /// Every preset this release offers for writing
    /// ([`PresetKind::ALL`]), with default parameters.
    ///
    /// # Example
    ///
    /// ```
    /// let names: Vec<&str> = subrange::preset::Preset::all().map(|p| p.name()).collect();
    /// assert!(names.contains(&"adaptive"));
    /// ```
    pub fn all() -> impl Iterator<Item = Preset> {
        PresetKind::ALL.iter().map(|&k| Preset::new(k))
    }

    /// The names of every preset, for command-line help.
    pub fn names() -> impl Iterator<Item = &'static str> {
        PresetKind::ALL.iter().map(|k| k.name())
    }

    /// Which preset this is.
    pub fn kind(&self) -> PresetKind {
        self.kind
    }

    /// The id recorded in a container header.
    pub fn id(&self) -> u32 {
        self.kind.id()
    }

    /// The preset's name.
    pub fn name(&self) -> &'static str {
        self.kind.name()
    }

    /// The parameter values, in the order of
    /// [`param_specs`](Preset::param_specs).
    pub fn params(&self) -> &[u32] {
        &self.values[..self.kind.param_specs().len()]
    }

    /// The block size a container uses with this preset unless told
    /// otherwise: 32 MiB for `history` (whole inputs up to that size, as
    /// its models keep learning over the block; one block codes on one
    /// core), 1 MiB for the others.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::preset::Preset;
    ///
    /// assert_eq!(Preset::from_name("history").unwrap().default_block_size(), 32 << 20);
    /// assert_eq!(Preset::from_name("mix").unwrap().default_block_size(), 1 << 20);
    /// ```
    pub fn default_block_size(&self) -> u64 {
        self.kind.entry().block_size
    }

    /// The parameter descriptions.
    pub fn param_specs(&self) -> &'static [ParamSpec] {
        self.kind.param_specs()
    }

    /// The value of the parameter called `name`.
    pub fn param(&self, name: &str) -> Option<u32> {
        let i = self.param_specs().iter().position(|s| s.name == name)?;
        Some(self.values[i])
    }

    /// Sets the parameter called `name`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] for an unknown name, a value outside
    /// the parameter's range, or one that does not fit with the others (the
    /// preset is then unchanged).
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::preset::Preset;
    ///
    /// let mut p = Preset::from_name("static").unwrap();
    /// p.set_param("lanes", 8).unwrap();
    /// assert_eq!(p.param("lanes"), Some(8));
    /// assert!(p.set_param("lanes", 99).is_err());
    /// ```
    pub fn set_param(&mut self, name: &str, value: u32) -> Result<&mut Self> {
        let specs = self.param_specs();
        let i = specs.iter().position(|s| s.name == name).ok_or_else(|| {
            crate::Error::invalid_parameter(
                "preset parameter",
                "this preset has no parameter of that name",
            )
        })?;
        if value < specs[i].min || value > specs[i].max {
            return Err(out_of_range(specs[i].name));
        }
        let mut next = *self;
        next.values[i] = value;
        next.check_params()?;
        *self = next;
        Ok(self)
    }

    /// Rules between parameters that [`ParamSpec`] ranges cannot express.
    fn check_params(&self) -> Result<()> {
        self.ops().check(self.params())
    }

    /// The operations of this preset's codec.
    fn ops(&self) -> &'static dyn codec::Ops {
        self.kind.entry().ops
    }

    /// Codes one block of raw bytes into the preset's payload.
    ///
    /// An empty block gives an empty payload.
    ///
    /// # Errors
    ///
    /// Only for internal failures of a model (none are expected for valid
    /// parameters).
    pub fn encode_block(&self, raw: &[u8]) -> Result<Vec<u8>> {
        if raw.is_empty() {
            return Ok(Vec::new());
        }
        self.ops().encode(raw, self.params())
    }

    /// Codes one block for the container: the payload, or `None` when the
    /// block should be stored because coding will not shrink it. `static`
    /// and `adaptive` decide that exactly from the byte counts (and the
    /// model's ideal cost), without coding; `order2`, `mix` and `history`
    /// early (after a sixteenth of the block) instead of coding all of it;
    /// `stepwise` codes the block and lets the container compare lengths.
    pub(crate) fn encode_or_store(&self, raw: &[u8]) -> Result<Option<Vec<u8>>> {
        if raw.is_empty() {
            return Ok(Some(Vec::new()));
        }
        self.ops().encode_or_store(raw, self.params())
    }

    /// Decodes a payload made by [`encode_block`](Preset::encode_block) into
    /// `out`, replacing its contents with the `raw_len` decoded bytes.
    ///
    /// `raw_len` is taken as given: check it against your limits first (the
    /// container reader does); an allocation that fails is reported, not
    /// aborted on.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::CorruptStream`] (offset within the payload),
    /// [`ErrorKind::CorruptTable`], [`ErrorKind::Truncated`] or
    /// [`ErrorKind::TrailingBytes`] when the payload is not one this preset
    /// produced for `raw_len` bytes; [`ErrorKind::LimitExceeded`] when it
    /// declares a table over the format's limit or `raw_len` bytes cannot be
    /// allocated.
    pub fn decode_block(&self, payload: &[u8], raw_len: usize, out: &mut Vec<u8>) -> Result<()> {
        out.clear();
        if raw_len == 0 {
            if !payload.is_empty() {
                return Err(crate::Error::corrupt_stream(
                    0,
                    "payload of an empty block is not empty",
                ));
            }
            return Ok(());
        }
        if out.capacity() < raw_len {
            // Give the old buffer back before taking the new one, so that
            // the two are never live at once.
            *out = Vec::new();
        }
        out.try_reserve_exact(raw_len).map_err(|_| {
            crate::Error::limit_exceeded(
                "decoded block length (allocation failed)",
                raw_len as u64,
                0,
            )
        })?;
        out.resize(raw_len, 0);
        let r = self.decode_into(payload, out);
        if r.is_err() {
            out.clear();
        }
        r
    }

    /// Decodes a payload into `out`, whose length is the block's raw length
    /// (the one-shot decoder writes blocks straight into its output).
    pub(crate) fn decode_into(&self, payload: &[u8], out: &mut [u8]) -> Result<()> {
        if out.is_empty() {
            if !payload.is_empty() {
                return Err(crate::Error::corrupt_stream(
                    0,
                    "payload of an empty block is not empty",
                ));
            }
            return Ok(());
        }
        self.ops().decode(payload, self.params(), out)
    }

    /// The ideal cost of coding one block with this preset's models:
    /// `Σ -log2 p` over every symbol or bit the models would code, without
    /// tables, framing or coder overhead. Reports use it to separate model
    /// quality from coding overhead.
    ///
    /// # Errors
    ///
    /// As for [`encode_block`](Preset::encode_block).
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::preset::Preset;
    ///
    /// # fn main() -> Result<(), subrange::Error> {
    /// let preset = Preset::from_name("order2")?;
    /// let block = subrange::corpus::gauge_csv(9, 20_000);
    /// let ideal = preset.ideal_cost(&block)?.bits() / 8.0;
    /// let payload = preset.encode_block(&block)?.len() as f64;
    /// assert!(payload >= ideal && payload < ideal * 1.01 + 8.0);
    /// # Ok(())
    /// # }
    /// ```
    pub fn ideal_cost(&self, raw: &[u8]) -> Result<crate::coder::IdealCost> {
        if raw.is_empty() {
            return Ok(crate::coder::IdealCost::new());
        }
        self.ops().ideal_cost(raw, self.params())
    }

    /// Bytes of memory needed to decode one block of `block_size` raw bytes:
    /// output and payload buffers plus the preset's working memory (model
    /// state, and for `static` the lane decoder's copy of the payload). A
    /// reader compares it with its memory limit before allocating anything.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::preset::Preset;
    ///
    /// let p = Preset::from_name("static").unwrap();
    /// assert!(p.memory_needed(1 << 20) >= 2 << 20);
    /// ```
    pub fn memory_needed(&self, block_size: u64) -> u64 {
        let buffers = block_size.saturating_mul(2);
        let model = self.ops().working_memory(self.params(), block_size);
        buffers.saturating_add(model)
    }
}

impl fmt::Debug for Preset {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        fmt::Display::fmt(self, f)
    }
}

fn out_of_range(name: &'static str) -> crate::Error {
    crate::Error::invalid_parameter(
        name,
        "outside the parameter's range (see Preset::param_specs)",
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ErrorKind;
    use alloc::string::ToString;
    use alloc::vec;

    #[test]
    fn from_id_checks_everything() {
        assert!(matches!(
            Preset::from_id(77, &[]).unwrap_err().kind(),
            ErrorKind::UnknownPreset { id: 77 }
        ));
        assert!(Preset::from_id(1, &[4]).is_err());
        assert!(matches!(
            Preset::from_id(1, &[33, 12]).unwrap_err().kind(),
            ErrorKind::LimitExceeded { .. }
        ));
        assert!(Preset::from_id(1, &[0, 12]).is_err());
        // increment 8192 needs a limit of at least 257 + 4 * 8192.
        assert!(Preset::from_id(2, &[8192, 20_000]).is_err());
        assert_eq!(
            Preset::from_id(2, &[24, 65_536]).unwrap(),
            Preset::new(PresetKind::Stepwise)
        );
        assert_eq!(
            Preset::from_id(5, &[32, 12, 256, 4096]).unwrap(),
            Preset::new(PresetKind::Adaptive)
        );
        // Headers without `precise` code with the coarse binary step.
        let old = Preset::from_id(4, &[4, 7, 1, 1, 1, 6]).unwrap();
        assert_eq!(old.param("precise"), Some(0));
        assert_eq!(
            Preset::from_id(3, &[1, 60]).unwrap().param("precise"),
            Some(0)
        );
        assert!(Preset::from_id(3, &[1]).is_err());
        assert!(Preset::from_id(3, &[1, 60, 1, 0]).is_err());
        assert_eq!(Preset::new(PresetKind::Mix).param("precise"), Some(1));
        // A period shorter than the first segment.
        assert!(Preset::from_id(5, &[32, 12, 16, 65_536]).is_err());
    }

    #[test]
    fn every_preset_round_trips_small_blocks() {
        let data: Vec<u8> = (0..3000u32).map(|i| (i * i % 251) as u8).collect();
        let kept = PresetKind::KEPT_FOR_READING.iter().map(|&k| Preset::new(k));
        for p in Preset::all().chain(kept) {
            for len in [0usize, 1, 2, 5, 100, 1023, 1024, 3000] {
                let payload = p.encode_block(&data[..len]).unwrap();
                let mut out = vec![9u8; 3];
                p.decode_block(&payload, len, &mut out).unwrap();
                assert_eq!(out, &data[..len], "{p} {len}");
            }
        }
    }

    #[test]
    fn empty_and_missing_payloads_are_errors() {
        let data = b"level 212 flow 1123 temp 94".to_vec();
        for p in Preset::all() {
            let payload = p.encode_block(&data).unwrap();
            let mut out = Vec::new();
            assert!(p.decode_block(&payload, 0, &mut out).is_err());
            assert!(p.decode_block(&[], 5, &mut out).is_err(), "{p}");
        }
        assert_eq!(
            Preset::default().to_string(),
            "static:lanes=32,log2_total=12"
        );
    }
}
