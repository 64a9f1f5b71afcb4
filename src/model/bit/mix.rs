//! Logistic mixing of bit predictions.
//!
//! The method is Mahoney's ("Adaptive weighing of context models for lossless
//! data compression", Florida Tech. technical report CS-2005-16, 2005): each
//! input is a prediction in the logistic domain, `x_i = stretch(p_i)`; the
//! mixer predicts `p = squash(Σ w_i·x_i)` and, after the bit `y` is known,
//! moves every weight along the gradient of the coding cost,
//! `w_i ← w_i + η·x_i·(y − p)`. Inputs that predicted well gain weight,
//! inputs that were confidently wrong lose it, and inputs stuck at ½
//! (`x = 0`) are left alone. A small context selects one of several weight
//! sets, so the mixer can trust different inputs in different situations.
//!
//! Fixed point: inputs and the output sum have 8 fractional bits (see
//! [`stretch`]); weights have 16 (65536 is 1.0); the error is taken at 12
//! bits, and a rate `r` makes each step `Δw = x·err·r / 1024`. Weights are
//! kept within ±16.0 and inputs within ±2047, so every product `x·w` fits an
//! `i32`; each is shifted right by 8 before summing, so 256 of them still
//! fit. The input vector is padded with zeros to a multiple of 8 so the loops
//! vectorise. All of it is integer arithmetic, so encoder and decoder compute
//! the same weights on every platform.
//!
//! [`Mixer`] is the low-level piece the context-mixing engines use;
//! [`MixedPredictor`] wraps it around any set of [`BitPredictor`]s, which is
//! how a user combines predictors of their own.

use alloc::vec;
use alloc::vec::Vec;

#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use crate::model::bit::logistic::{squash, stretch, STRETCH_MAX};
use crate::model::bit::BitPredictor;

/// Largest weight magnitude: 16.0 in 16.16 fixed point.
const WEIGHT_LIMIT: i32 = 16 << 16;

/// Input vectors are padded to a multiple of this.
const LANES: usize = 8;

/// Largest number of inputs of one mixer.
pub const MAX_MIXER_INPUTS: usize = 256;

/// Largest number of weight sets of one mixer.
pub const MAX_MIXER_SETS: usize = 1 << 16;

/// A logistic mixer with context-selected weight sets.
///
/// Per bit: [`add`](Mixer::add) each input, [`select`](Mixer::select) a weight
/// set, [`mix`](Mixer::mix) to get the probability, code the bit, then
/// [`update`](Mixer::update) with it.
///
/// # Example
///
/// ```
/// use subrange::model::{stretch, Mixer};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let mut m = Mixer::new(2, 1, 8)?;
/// // Input 0 is always right about the bit, input 1 always says ½... then wrong.
/// for i in 0..2000 {
///     let bit = i % 3 == 0;
///     m.add(stretch(if bit { 60_000 } else { 5_000 }));
///     m.add(stretch(if bit { 20_000 } else { 45_000 }));
///     m.select(0);
///     let _p = m.mix();
///     m.update(bit);
/// }
/// m.add(stretch(60_000));
/// m.add(stretch(20_000));
/// m.select(0);
/// assert!(m.mix() > 60_000); // trusts input 0, and reads input 1 inverted
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone)]
pub struct Mixer {
    inputs: Vec<i32>,
    weights: Vec<i32>,
    n: usize,
    stride: usize,
    count: usize,
    sets: usize,
    set: usize,
    rate: i32,
    p: u32,
}

impl Mixer {
    /// A mixer of `inputs` inputs with `sets` weight sets and learning rate
    /// `rate` (`Δw = x·err·rate / 1024`; 2 to 24 are typical). Every weight
    /// starts at `1 / inputs`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] unless `1 <= inputs <= 256`,
    /// `1 <= sets <= 65536` and `1 <= rate <= 255`.
    pub fn new(inputs: usize, sets: usize, rate: u32) -> Result<Self> {
        if inputs == 0 || inputs > MAX_MIXER_INPUTS {
            return Err(crate::Error::invalid_parameter(
                "inputs",
                "must be in 1 ..= 256",
            ));
        }
        if sets == 0 || sets > MAX_MIXER_SETS {
            return Err(crate::Error::invalid_parameter(
                "sets",
                "must be in 1 ..= 65536",
            ));
        }
        if rate == 0 || rate > 255 {
            return Err(crate::Error::invalid_parameter(
                "rate",
                "must be in 1 ..= 255",
            ));
        }
        let w0 = (65536 / inputs) as i32;
        let stride = inputs.div_ceil(LANES) * LANES;
        let mut weights = vec![0; stride * sets];
        fill_sets(&mut weights, stride, inputs, w0);
        Ok(Mixer {
            inputs: vec![0; stride],
            weights,
            n: inputs,
            stride,
            count: 0,
            sets,
            set: 0,
            rate: rate as i32,
            p: 32768,
        })
    }

    /// Bytes of memory the weights and inputs of such a mixer take.
    pub fn memory_needed(inputs: usize, sets: usize) -> u64 {
        let stride = inputs.div_ceil(LANES) as u64 * LANES as u64;
        4 * stride * (sets as u64 + 1)
    }

    /// Sets every weight of every set to `weight` (16.16 fixed point, clamped
    /// to ±16.0).
    pub fn fill_weights(&mut self, weight: i32) {
        let w = weight.clamp(-WEIGHT_LIMIT, WEIGHT_LIMIT);
        fill_sets(&mut self.weights, self.stride, self.n, w);
    }

    /// Number of inputs per step.
    pub fn inputs(&self) -> usize {
        self.n
    }

    /// Adds the next input, a stretched probability (clamped to ±2047).
    /// Inputs beyond the mixer's count are ignored; missing ones count as 0.
    #[inline]
    pub fn add(&mut self, st: i32) {
        if self.count < self.n {
            self.inputs[self.count] = st.clamp(-STRETCH_MAX, STRETCH_MAX);
            self.count += 1;
        }
    }

    /// Selects the weight set for this step (values past the last set select
    /// the last one).
    #[inline]
    pub fn select(&mut self, context: usize) {
        self.set = context.min(self.sets - 1) * self.stride;
    }

    /// The mixed probability of a 1, scaled to 2^16 (`1 ..= 65535`).
    #[inline]
    pub fn mix(&mut self) -> u32 {
        // Inputs not added this step count as 0 (the padding past `n` is
        // never written, so it stays 0).
        for x in &mut self.inputs[self.count..self.n] {
            *x = 0;
        }
        let w = &self.weights[self.set..self.set + self.stride];
        let mut acc = [0i32; LANES];
        for (xs, ws) in self.inputs.chunks_exact(LANES).zip(w.chunks_exact(LANES)) {
            for ((a, &x), &w) in acc.iter_mut().zip(xs).zip(ws) {
                *a += (x * w) >> 8;
            }
        }
        let dot: i32 = acc.iter().sum();
        self.p = squash(dot >> 8);
        self.p
    }

    /// The last result of [`mix`](Mixer::mix).
    #[inline]
    pub fn last(&self) -> u32 {
        self.p
    }

    /// Learns the coded bit (for the inputs and set of the last `mix`) and
    /// clears the inputs for the next step.
    #[inline]
    pub fn update(&mut self, bit: bool) {
        let target = if bit { 65536 } else { 0 };
        let err = (target - self.p as i32) >> 4;
        let scale = err * self.rate;
        if scale != 0 {
            let w = &mut self.weights[self.set..self.set + self.stride];
            for (ws, xs) in w
                .chunks_exact_mut(LANES)
                .zip(self.inputs.chunks_exact(LANES))
            {
                for (w, &x) in ws.iter_mut().zip(xs) {
                    let step = (x * scale + 512) >> 10;
                    *w = (*w + step).clamp(-WEIGHT_LIMIT, WEIGHT_LIMIT);
                }
            }
        }
        self.count = 0;
    }
}

/// The engines' fast path: inputs live in the caller's array of `N` (the
/// stride), so nothing is copied, counted or clamped per input. Each
/// computes exactly what [`Mixer::add`], [`Mixer::select`], [`Mixer::mix`]
/// and [`Mixer::update`] compute for the same inputs.
impl Mixer {
    /// Entries per weight set: the input count rounded up to a multiple of 8.
    #[inline]
    pub(crate) fn stride(&self) -> usize {
        self.stride
    }

    /// [`select`](Mixer::select) `set`, then [`mix`](Mixer::mix) `inputs`.
    ///
    /// `N` must be the stride, `set` below the number of sets; every input
    /// within ±2047 (as `add` would clamp it) and the padding past the input
    /// count 0.
    #[inline(always)]
    pub(crate) fn mix_inputs<const N: usize>(&mut self, inputs: &[i32; N], set: usize) -> u32 {
        debug_assert_eq!(N, self.stride);
        debug_assert!(inputs.iter().all(|x| x.abs() <= STRETCH_MAX));
        debug_assert!(set < self.sets);
        let start = set * N;
        self.set = start;
        let w: &[i32; N] = self.weights[start..start + N]
            .try_into()
            .expect("a weight set holds N entries");
        let mut acc = [0i32; LANES];
        for (xs, ws) in inputs.chunks_exact(LANES).zip(w.chunks_exact(LANES)) {
            for ((a, &x), &w) in acc.iter_mut().zip(xs).zip(ws) {
                *a += (x * w) >> 8;
            }
        }
        let dot: i32 = acc.iter().sum();
        self.p = squash(dot >> 8);
        self.p
    }

    /// [`update`](Mixer::update) for the inputs of the last
    /// [`mix_inputs`](Mixer::mix_inputs).
    #[inline(always)]
    pub(crate) fn learn_inputs<const N: usize>(&mut self, inputs: &[i32; N], bit: bool) {
        let target = if bit { 65536 } else { 0 };
        let scale = ((target - self.p as i32) >> 4) * self.rate;
        let start = self.set;
        let w: &mut [i32; N] = (&mut self.weights[start..start + N])
            .try_into()
            .expect("a weight set holds N entries");
        for (ws, xs) in w.chunks_exact_mut(LANES).zip(inputs.chunks_exact(LANES)) {
            for (w, &x) in ws.iter_mut().zip(xs) {
                let step = (x * scale + 512) >> 10;
                *w = (*w + step).clamp(-WEIGHT_LIMIT, WEIGHT_LIMIT);
            }
        }
    }
}

/// Any set of bit predictors combined by a [`Mixer`], itself a [`BitPredictor`].
///
/// The mixer's weight set can follow a small context of the caller's choice
/// ([`set_context`](MixedPredictor::set_context)), e.g. the bit position.
///
/// # Example
///
/// A predictor of the user's own (a bit repeats the one `period` bits back)
/// mixed with a counting predictor, then coded and decoded:
///
/// ```
/// use subrange::coder::{Decoder, Encoder};
/// use subrange::model::{
///     decode_with, encode_with, BitPredictor, CountingPredictor, MixedPredictor,
/// };
///
/// /// Predicts that the bit equals the one `period` steps back.
/// struct Periodic {
///     history: u64,
///     period: u32,
/// }
///
/// impl BitPredictor for Periodic {
///     fn p1(&self) -> u32 {
///         if (self.history >> (self.period - 1)) & 1 == 1 { 62_000 } else { 3_536 }
///     }
///     fn update(&mut self, bit: bool) {
///         self.history = (self.history << 1) | u64::from(bit);
///     }
/// }
///
/// fn model() -> Result<MixedPredictor<Box<dyn BitPredictor>>, subrange::Error> {
///     let inputs: Vec<Box<dyn BitPredictor>> = vec![
///         Box::new(Periodic { history: 0, period: 7 }),
///         Box::new(CountingPredictor::new(60)?),
///     ];
///     MixedPredictor::new(inputs, 1, 6)
/// }
///
/// # fn main() -> Result<(), subrange::Error> {
/// let bits: Vec<bool> = (0..7000).map(|i| [1, 0, 0, 1, 1, 0, 1][i % 7] == 1).collect();
/// let mut enc = Encoder::new();
/// let mut m = model()?;
/// for &b in &bits {
///     encode_with(&mut enc, &mut m, b)?;
/// }
/// let bytes = enc.finish()?;
/// assert!(bytes.len() < 100); // 7000 bits, almost all predicted
///
/// let mut dec = Decoder::new(&bytes)?;
/// let mut m = model()?;
/// for &b in &bits {
///     assert_eq!(decode_with(&mut dec, &mut m)?, b);
/// }
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone)]
pub struct MixedPredictor<P> {
    predictors: Vec<P>,
    mixer: Mixer,
    context: usize,
}

impl<P: BitPredictor> MixedPredictor<P> {
    /// Mixes `predictors` with `sets` weight sets and learning rate `rate`
    /// (see [`Mixer::new`]).
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] if the mixer parameters are out of
    /// range (including an empty or over-long predictor list).
    pub fn new(predictors: Vec<P>, sets: usize, rate: u32) -> Result<Self> {
        let mixer = Mixer::new(predictors.len(), sets, rate)?;
        let mut m = MixedPredictor {
            predictors,
            mixer,
            context: 0,
        };
        m.refresh();
        Ok(m)
    }

    /// Selects the weight set used for the next bit.
    pub fn set_context(&mut self, context: usize) {
        if context != self.context {
            self.context = context;
            self.refresh();
        }
    }

    /// The mixed predictors.
    pub fn predictors(&self) -> &[P] {
        &self.predictors
    }

    fn refresh(&mut self) {
        self.mixer.count = 0;
        for p in &self.predictors {
            self.mixer.add(stretch(p.p1()));
        }
        self.mixer.select(self.context);
        self.mixer.mix();
    }
}

impl<P: BitPredictor> BitPredictor for MixedPredictor<P> {
    #[inline]
    fn p1(&self) -> u32 {
        self.mixer.last()
    }

    fn update(&mut self, bit: bool) {
        self.mixer.update(bit);
        for p in &mut self.predictors {
            p.update(bit);
        }
        self.refresh();
    }
}

/// Sets the first `n` weights of every set of `stride` weights to `w` and
/// the padding after them to 0: the first set by hand, the others by block
/// copies of the sets already written (doubling), so that a mixer of many
/// sets costs a few memory copies to start rather than a loop per set.
fn fill_sets(weights: &mut [i32], stride: usize, n: usize, w: i32) {
    let Some(first) = weights.get_mut(..stride) else {
        return;
    };
    first[..n].fill(w);
    first[n..].fill(0);
    let mut done = stride;
    while done < weights.len() {
        let k = done.min(weights.len() - done);
        weights.copy_within(..k, done);
        done += k;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parameters_are_checked() {
        assert!(Mixer::new(0, 1, 4).is_err());
        assert!(Mixer::new(2, 0, 4).is_err());
        assert!(Mixer::new(2, 1, 0).is_err());
        assert!(Mixer::new(257, 1, 4).is_err());
    }

    #[test]
    fn every_set_starts_the_same() {
        for (inputs, sets) in [(1, 1), (3, 2), (9, 5), (16, 1024), (7, 1000)] {
            let m = Mixer::new(inputs, sets, 4).unwrap();
            let w0 = (65536 / inputs) as i32;
            assert_eq!(m.weights.len(), m.stride * sets);
            for set in m.weights.chunks_exact(m.stride) {
                assert!(set[..inputs].iter().all(|&w| w == w0));
                assert!(set[inputs..].iter().all(|&w| w == 0));
            }
        }
    }

    #[test]
    fn learns_to_ignore_noise() {
        // Input 0 is informative, input 1 is confident noise.
        let mut m = Mixer::new(2, 1, 6).unwrap();
        let mut state = 12345u32;
        for i in 0..20_000 {
            state = state.wrapping_mul(1_103_515_245).wrapping_add(12345);
            let bit = i % 5 == 0;
            m.add(stretch(if bit { 50_000 } else { 15_000 }));
            m.add(if state >> 31 == 1 { 1500 } else { -1500 });
            m.mix();
            m.update(bit);
        }
        let w = &m.weights;
        assert!(w[0] > 4 * w[1].abs(), "{w:?}");
    }
}
