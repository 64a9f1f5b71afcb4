//! The container: a header, independently decodable blocks, an end record.
//!
//! ```text
//! header   magic "B7 73 72 67" · version · preset id · block size · params · CRC-32
//! block 0  frame (kind, lengths, CRC-32 of raw bytes and payload, frame check) · payload
//! block 1  ...
//! end      kind 0 (or 3) · block count · total length · frame check
//! index    (after an end record of kind 3) per block: record length, raw
//!          length · end offset · CRC-32 · mark "67 72 73 B7"
//! ```
//!
//! Each block is coded on its own by the header's
//! [`Preset`](crate::preset::Preset), so blocks can be coded in parallel and
//! a damaged block leaves the others readable. A block that coding would not
//! make shorter is stored as it is, so incompressible input grows by a few
//! bytes per block only. Every declared size is checked against
//! [`DecodeLimits`] before anything is allocated for it, and decoded bytes
//! are released only after their CRC-32 matched. The optional block index
//! at the end ([`BlockIndex`]) says where every block lies, so that a
//! reader that can seek decodes only the blocks a byte range needs. The exact byte layout,
//! with every check a decoder must make, is in `docs/FORMAT.md`.
//!
//! This module reads and inspects containers; the
//! [`stream`](crate::stream) module writes them and wraps them in
//! [`std::io`] adapters.

mod block;
mod block_index;
mod header;
mod index;
mod input;
mod inspect;
mod limits;
mod reader;

pub use block::BlockKind;
pub use block_index::{BlockIndex, IndexSource};
pub use header::Header;
pub use index::{IndexEntry, IndexPolicy, INDEX_MARK};
pub use inspect::{inspect, BlockInfo, CrcStatus, EndInfo, Inspection, Inspector};
pub use limits::{DecodeLimits, MAX_BLOCK_SIZE};
pub use reader::TrailingData;

pub(crate) use block::{check_payload, read_frame, Frame};
pub(crate) use block::{
    check_stored, decode_payload, decode_payload_into, encode_block, end_record, BlockFrame,
    BlockKind as Kind, EncodedBlock,
};
pub(crate) use header::encode_header;
pub(crate) use index::IndexBuilder;
pub(crate) use input::Input;
pub(crate) use reader::{ContainerReader, Payload};

/// The four bytes every container starts with.
pub const MAGIC: [u8; 4] = [0xB7, 0x73, 0x72, 0x67];

/// The format version this release writes and reads.
pub const VERSION: u8 = 1;
