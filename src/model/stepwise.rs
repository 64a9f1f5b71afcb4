//! The adaptive order-0 model.
//!
//! Each symbol has a count; coding a symbol adds `increment` to its count, and
//! when the total would pass `limit` every count is halved, so the model
//! follows drifting statistics and the total stays within the coder's 2^16.
//!
//! Storage: a plain array with linear scans for alphabets of up to 16 symbols,
//! a [`FenwickTree`] (O(log n) per step) above that.
//!
//! Escape: an alphabet of `m` symbols that all start at frequency 1 needs a
//! total of at least `m`, which leaves no room to learn when `m` approaches
//! 2^16. For large alphabets (by default when `4·m > limit`) the model starts
//! with every symbol unseen (frequency 0) and one escape entry: a symbol not
//! seen yet is coded as the escape followed by the symbol itself, uniformly
//! over the alphabet. Each new symbol then starts with `increment`, and the
//! escape grows by `increment` too (escapes become likelier when new symbols
//! keep appearing). Halving rounds down in this mode, so rarely used symbols
//! can fall back to unseen.
//!
//! Invariants: `total <= limit <= 2^16` after every update; without escape
//! every symbol has frequency >= 1; with escape the escape entry does.

use alloc::vec;
use alloc::vec::Vec;

#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use crate::model::fenwick::FenwickTree;
use crate::model::{Model, Span, ESCAPE, MAX_ALPHABET, MAX_TOTAL};

/// Alphabets up to this size use a linear array instead of a Fenwick tree.
const LINEAR_MAX: usize = 16;

/// Parameters of an [`StepwiseModel`].
///
/// # Example
///
/// ```
/// use subrange::model::{StepwiseModel, StepwiseParams};
///
/// let mut params = StepwiseParams::default();
/// params.increment = 16;
/// params.limit = 1 << 13; // adapt faster: halve more often
/// let model = StepwiseModel::with_params(256, params).unwrap();
/// assert_eq!(model.params().limit, 8192);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub struct StepwiseParams {
    /// Added to a symbol's count each time it is coded (default 24).
    pub increment: u32,
    /// Counts are halved when the total would exceed this (default 2^16).
    pub limit: u32,
    /// Code unseen symbols through an escape. `None` (the default) chooses:
    /// escape when `4 · alphabet > limit`.
    pub escape: Option<bool>,
}

impl Default for StepwiseParams {
    fn default() -> Self {
        StepwiseParams {
            increment: 24,
            limit: MAX_TOTAL,
            escape: None,
        }
    }
}

#[derive(Debug, Clone, PartialEq, Eq)]
enum Store {
    Linear { freq: Vec<u32>, total: u32 },
    Tree(FenwickTree),
}

impl Store {
    fn new(freq: Vec<u32>) -> Self {
        if freq.len() <= LINEAR_MAX {
            let total = freq.iter().sum();
            Store::Linear { freq, total }
        } else {
            Store::Tree(FenwickTree::from_frequencies(&freq))
        }
    }

    #[inline(always)]
    fn total(&self) -> u32 {
        match self {
            Store::Linear { total, .. } => *total,
            Store::Tree(t) => t.total(),
        }
    }

    fn frequencies(&self) -> &[u32] {
        match self {
            Store::Linear { freq, .. } => freq,
            Store::Tree(t) => t.frequencies(),
        }
    }

    #[inline(always)]
    fn freq(&self, i: usize) -> u32 {
        match self {
            Store::Linear { freq, .. } => freq[i],
            Store::Tree(t) => t.frequency(i),
        }
    }

    #[inline(always)]
    fn span(&self, i: usize) -> Span {
        match self {
            Store::Linear { freq, .. } => Span::new(freq[..i].iter().sum(), freq[i]),
            Store::Tree(t) => Span::new(t.prefix(i), t.frequency(i)),
        }
    }

    #[inline(always)]
    fn find(&self, target: u32) -> (usize, Span) {
        match self {
            Store::Linear { freq, .. } => {
                let mut cum = 0;
                for (i, &f) in freq.iter().enumerate() {
                    if target < cum + f {
                        return (i, Span::new(cum, f));
                    }
                    cum += f;
                }
                // Unreachable for target < total; stay total for bad targets.
                let last = freq.len() - 1;
                (last, Span::new(cum - freq[last], freq[last]))
            }
            Store::Tree(t) => {
                let (i, cum) = t.find(target);
                (i, Span::new(cum, t.frequency(i)))
            }
        }
    }

    #[inline(always)]
    fn add(&mut self, i: usize, delta: u32) {
        match self {
            Store::Linear { freq, total } => {
                freq[i] += delta;
                *total += delta;
            }
            Store::Tree(t) => t.add(i, delta),
        }
    }

    fn map_all(&mut self, map: impl FnMut(u32) -> u32) {
        match self {
            Store::Linear { freq, total } => {
                freq.iter_mut().for_each({
                    let mut map = map;
                    move |f| *f = map(*f)
                });
                *total = freq.iter().sum();
            }
            Store::Tree(t) => t.map_all(map),
        }
    }
}

/// An adaptive order-0 model over `0 .. alphabet`.
///
/// # Example
///
/// ```
/// use subrange::coder::{Decoder, Encoder};
/// use subrange::model::{StepwiseModel, Model};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let text = b"gauge 17: level steady, flow steady, temperature steady";
/// let mut model = StepwiseModel::new(256)?;
/// let mut enc = Encoder::new();
/// for &b in text {
///     enc.encode(&mut model, b.into())?;
/// }
/// let bytes = enc.finish()?;
/// assert!(bytes.len() < text.len());
///
/// let mut model = StepwiseModel::new(256)?;
/// let mut dec = Decoder::new(&bytes)?;
/// let back: Vec<u8> = (0..text.len())
///     .map(|_| dec.decode(&mut model).map(|s| s as u8))
///     .collect::<Result<_, _>>()?;
/// assert_eq!(back, text);
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct StepwiseModel {
    store: Store,
    alphabet: u32,
    params: StepwiseParams,
    escape: bool,
}

impl StepwiseModel {
    /// A model over `alphabet` symbols with default parameters.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] unless `1 <= alphabet <= 65536`.
    pub fn new(alphabet: u32) -> Result<Self> {
        Self::with_params(alphabet, StepwiseParams::default())
    }

    /// A model with explicit parameters.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] unless `1 <= alphabet <= 65536`,
    /// `increment >= 1`, `limit <= 2^16`, and the limit leaves room to learn:
    /// `limit >= alphabet + 1 + 4·increment` without escape,
    /// `limit >= 2 + 4·increment` with it.
    pub fn with_params(alphabet: u32, params: StepwiseParams) -> Result<Self> {
        let bad = |name, reason| Err(crate::Error::invalid_parameter(name, reason));
        if alphabet == 0 || alphabet > MAX_ALPHABET {
            return bad("alphabet", "must be 1 ..= 65536");
        }
        if params.increment == 0 || params.increment > MAX_TOTAL / 8 {
            return bad("increment", "must be 1 ..= 8192");
        }
        if params.limit > MAX_TOTAL {
            return bad("limit", "must be at most 65536");
        }
        let escape = params
            .escape
            .unwrap_or(4 * u64::from(alphabet) > u64::from(params.limit));
        let need = if escape {
            2 + 4 * params.increment
        } else {
            alphabet + 1 + 4 * params.increment
        };
        if params.limit < need {
            return bad(
                "limit",
                "too small for this alphabet and increment (see StepwiseModel::with_params)",
            );
        }
        let freq = if escape {
            let mut f = vec![0u32; alphabet as usize + 1];
            f[alphabet as usize] = 1;
            f
        } else {
            vec![1u32; alphabet as usize]
        };
        Ok(StepwiseModel {
            store: Store::new(freq),
            alphabet,
            params,
            escape,
        })
    }

    /// The parameters in force.
    pub fn params(&self) -> StepwiseParams {
        self.params
    }

    /// Whether unseen symbols are coded through an escape.
    pub fn uses_escape(&self) -> bool {
        self.escape
    }

    /// The current frequency of `symbol` (0 for symbols outside the alphabet
    /// and, with escape, for symbols not seen yet).
    pub fn frequency(&self, symbol: u32) -> u32 {
        if symbol < self.alphabet {
            self.store.freq(symbol as usize)
        } else {
            0
        }
    }

    /// All current frequencies, one per symbol, followed by the escape's
    /// when the model [uses an escape](StepwiseModel::uses_escape). With
    /// [`params`](StepwiseModel::params) this is the model's whole state:
    /// [`from_frequencies`](StepwiseModel::from_frequencies) rebuilds it.
    ///
    /// ```
    /// use subrange::model::{StepwiseModel, Model};
    ///
    /// let mut model = StepwiseModel::new(3).unwrap();
    /// model.update(2);
    /// assert_eq!(model.frequencies(), &[1, 1, 25]);
    /// ```
    pub fn frequencies(&self) -> &[u32] {
        self.store.frequencies()
    }

    /// A model with the given parameters in the given state, as returned by
    /// [`frequencies`](StepwiseModel::frequencies) (for restoring a trained
    /// model).
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] when the parameters are invalid (as for
    /// [`with_params`](StepwiseModel::with_params)), when `freq` does not have
    /// one entry per symbol (plus one for the escape, if the parameters make
    /// the model use one), when the frequencies sum to more than the limit,
    /// or when a frequency that must be at least 1 is 0 (every symbol's
    /// without escape, the escape's with it).
    ///
    /// ```
    /// use subrange::model::{StepwiseModel, StepwiseParams, Model};
    ///
    /// let mut model = StepwiseModel::new(4).unwrap();
    /// model.update(1);
    /// let copy = StepwiseModel::from_frequencies(4, model.params(), model.frequencies()).unwrap();
    /// assert_eq!(copy, model);
    /// assert!(StepwiseModel::from_frequencies(4, StepwiseParams::default(), &[1, 0, 1, 1]).is_err());
    /// ```
    pub fn from_frequencies(alphabet: u32, params: StepwiseParams, freq: &[u32]) -> Result<Self> {
        let mut model = Self::with_params(alphabet, params)?;
        let bad = |reason| Err(crate::Error::invalid_parameter("freq", reason));
        let entries = alphabet as usize + usize::from(model.escape);
        if freq.len() != entries {
            return bad("needs one frequency per symbol, plus one for the escape");
        }
        let sum: u64 = freq.iter().map(|&f| u64::from(f)).sum();
        if sum > u64::from(params.limit) {
            return bad("frequencies sum to more than the limit");
        }
        let floor_ok = if model.escape {
            freq[alphabet as usize] >= 1
        } else {
            freq.iter().all(|&f| f >= 1)
        };
        if !floor_ok {
            return bad("a symbol (without escape) or the escape has frequency 0");
        }
        model.store = Store::new(freq.to_vec());
        Ok(model)
    }

    fn halve(&mut self) {
        if self.escape {
            let esc = self.alphabet as usize;
            let keep = self.store.freq(esc).div_ceil(2).max(1);
            self.store.map_all(|f| f / 2);
            let now = self.store.freq(esc);
            self.store.add(esc, keep - now);
        } else {
            self.store.map_all(|f| f.div_ceil(2));
        }
    }
}

impl Model for StepwiseModel {
    #[inline(always)]
    fn alphabet_size(&self) -> u32 {
        self.alphabet
    }

    #[inline(always)]
    fn total(&self) -> u32 {
        self.store.total()
    }

    #[inline(always)]
    fn span(&self, symbol: u32) -> Option<Span> {
        if symbol >= self.alphabet {
            return None;
        }
        let span = self.store.span(symbol as usize);
        (span.freq > 0).then_some(span)
    }

    #[inline(always)]
    fn locate(&self, target: u32) -> (u32, Span) {
        let (i, span) = self.store.find(target);
        if i as u32 == self.alphabet {
            (ESCAPE, span)
        } else {
            (i as u32, span)
        }
    }

    #[inline(always)]
    fn update(&mut self, symbol: u32) {
        if symbol >= self.alphabet {
            return;
        }
        let inc = self.params.increment;
        if self.store.total() + 2 * inc > self.params.limit {
            self.halve();
        }
        let s = symbol as usize;
        if self.escape && self.store.freq(s) == 0 {
            self.store.add(self.alphabet as usize, inc);
        }
        self.store.add(s, inc);
    }

    #[inline(always)]
    fn escape(&self) -> Option<Span> {
        self.escape.then(|| self.store.span(self.alphabet as usize))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn total_stays_within_limit() {
        for alphabet in [1u32, 2, 16, 17, 256, 20_000, 65_536] {
            let mut m = StepwiseModel::new(alphabet).unwrap();
            for i in 0..20_000u32 {
                m.update(i.wrapping_mul(2_654_435_761) % alphabet);
                assert!(m.total() <= MAX_TOTAL && m.total() >= 1);
            }
        }
    }

    #[test]
    fn escape_mode_for_large_alphabets() {
        let m = StepwiseModel::new(65_536).unwrap();
        assert!(m.uses_escape());
        assert_eq!(m.span(5), None);
        assert!(m.escape().is_some());
        assert!(!StepwiseModel::new(256).unwrap().uses_escape());
    }

    #[test]
    #[allow(clippy::field_reassign_with_default)]
    fn rejects_bad_parameters() {
        assert!(StepwiseModel::new(0).is_err());
        assert!(StepwiseModel::new(65_537).is_err());
        let mut p = StepwiseParams::default();
        p.escape = Some(false);
        assert!(StepwiseModel::with_params(65_536, p).is_err());
        p.escape = None;
        p.increment = 0;
        assert!(StepwiseModel::with_params(10, p).is_err());
    }
}
