//! Coding bytes one bit at a time through a binary tree of contexts.
//!
//! A byte is coded most significant bit first. The bits seen so far select a
//! node of a complete binary tree with 255 inner nodes: start at node 1, and
//! after each bit go to `node = 2·node + bit`. Node `n` therefore stands for
//! "the byte starts with the bits of `n` after its leading 1", and each node
//! has a [`BitPredictor`] of its own — together the 255 binary predictions
//! describe any distribution over 256 byte values, and an adaptive predictor
//! per node makes an adaptive byte model. (The context-mixing engines use the same
//! tree, with node tables per context instead of one tree.)
//!
//! Invariant: the node index stays in `1 ..= 255` while a byte is coded, so
//! the 256-entry table (entry 0 unused) is never indexed out of range.

use alloc::vec::Vec;

use crate::coder::{ByteSink, ByteSource, Decoder, Encoder};
use crate::error::Result;
use crate::model::bit::BitPredictor;

/// 255 bit predictors arranged as a binary tree over the bits of a byte.
///
/// # Example
///
/// ```
/// use subrange::coder::{Decoder, Encoder};
/// use subrange::model::{BitTree, CountingPredictor};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let text = b"level 1.82 m, flow 3.4 m3/s; level 1.83 m, flow 3.4 m3/s";
/// let mut tree = BitTree::new(CountingPredictor::new(30)?);
/// let mut enc = Encoder::new();
/// for &b in text {
///     tree.encode(&mut enc, b)?;
/// }
/// let bytes = enc.finish()?;
///
/// let mut tree = BitTree::new(CountingPredictor::new(30)?);
/// let mut dec = Decoder::new(&bytes)?;
/// let back: Vec<u8> = (0..text.len()).map(|_| tree.decode(&mut dec)).collect::<Result<_, _>>()?;
/// assert_eq!(back, text);
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone)]
pub struct BitTree<P> {
    nodes: Vec<P>,
}

impl<P: BitPredictor + Clone> BitTree<P> {
    /// A tree whose every node starts as a copy of `initial`.
    pub fn new(initial: P) -> Self {
        BitTree {
            nodes: alloc::vec![initial; 256],
        }
    }
}

impl<P: BitPredictor> BitTree<P> {
    /// The predictor at `node` (`1 ..= 255`; other values give node 1).
    pub fn node(&self, node: usize) -> &P {
        self.nodes
            .get(node)
            .filter(|_| node != 0)
            .unwrap_or(&self.nodes[1])
    }

    /// Codes `byte`, most significant bit first, updating the nodes on its path.
    ///
    /// # Errors
    ///
    /// The sink's error.
    pub fn encode<S: ByteSink>(&mut self, encoder: &mut Encoder<S>, byte: u8) -> Result<()> {
        let mut node = 1usize;
        for i in (0..8).rev() {
            let bit = (byte >> i) & 1 == 1;
            let p = &mut self.nodes[node];
            encoder.encode_bit(bit, p.p1())?;
            p.update(bit);
            node = 2 * node + usize::from(bit);
        }
        Ok(())
    }

    /// Decodes one byte, updating the nodes on its path.
    ///
    /// # Errors
    ///
    /// Truncated or corrupt input, as for [`Decoder::decode_bit`].
    pub fn decode<S: ByteSource>(&mut self, decoder: &mut Decoder<S>) -> Result<u8> {
        let mut node = 1usize;
        while node < 256 {
            let p = &mut self.nodes[node];
            let bit = decoder.decode_bit(p.p1())?;
            p.update(bit);
            node = 2 * node + usize::from(bit);
        }
        Ok((node - 256) as u8)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::ShiftPredictor;

    #[test]
    fn skewed_bytes_compress() {
        let data: Vec<u8> = (0..4000u32).map(|i| b"aab"[(i % 3) as usize]).collect();
        let mut tree = BitTree::new(ShiftPredictor::new(4).unwrap());
        let mut enc = Encoder::new();
        for &b in &data {
            tree.encode(&mut enc, b).unwrap();
        }
        let bytes = enc.finish().unwrap();
        // Order 0: h(1/3) ≈ 0.918 bits a byte, ≈ 460 bytes; allow adaptation cost.
        assert!(bytes.len() < 600, "{}", bytes.len());
        let mut tree = BitTree::new(ShiftPredictor::new(4).unwrap());
        let mut dec = Decoder::new(&bytes).unwrap();
        for &b in &data {
            assert_eq!(tree.decode(&mut dec).unwrap(), b);
        }
        assert_eq!(tree.node(0), tree.node(1));
    }
}
