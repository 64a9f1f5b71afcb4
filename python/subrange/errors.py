"""The exceptions of :mod:`subrange`, one class per error kind of the crate.

Every error the package raises for bad data or bad parameters is a
:class:`SubrangeError`. Damaged or unexpected coded input raises a
:class:`DataError`; a parameter or symbol the caller got wrong raises a
subclass of both :class:`SubrangeError` and :class:`ValueError`. Arguments of
the wrong type (a float array where integers are needed) raise
:class:`TypeError`, as everywhere in Python.

>>> import subrange
>>> try:
...     subrange.decompress(b"not a container")
... except subrange.errors.DataError as e:
...     print(type(e).__name__)
BadMagicError
"""

__all__ = [
    "SubrangeError",
    "DataError",
    "TruncatedError",
    "CorruptStreamError",
    "CorruptTableError",
    "BadMagicError",
    "UnsupportedVersionError",
    "UnknownPresetError",
    "CorruptHeaderError",
    "CorruptFrameError",
    "CorruptBlockError",
    "CorruptEndError",
    "CorruptIndexError",
    "ChecksumMismatchError",
    "TrailingBytesError",
    "SnapshotError",
    "MqError",
    "LimitExceededError",
    "UncodableSymbolError",
    "InvalidModelError",
    "InvalidParameterError",
    "RangeOutsideDataError",
    "IoError",
]


class SubrangeError(Exception):
    """Base class of every error of the package."""


class DataError(SubrangeError):
    """Coded input that is damaged, cut short or not of this format."""


class TruncatedError(DataError, EOFError):
    """The coded input ended before the decoder had what it needed."""


class CorruptStreamError(DataError):
    """The coded stream is not one the encoder could have produced."""


class CorruptTableError(DataError):
    """A serialised frequency table could not be read back."""


class BadMagicError(DataError):
    """The input does not start with the container's magic number."""


class UnsupportedVersionError(DataError):
    """The container's format version is not one this release reads."""


class UnknownPresetError(DataError):
    """The container names a preset this release does not know."""


class CorruptHeaderError(DataError):
    """The container header is damaged (its check does not match)."""


class CorruptFrameError(DataError):
    """The frame of a block (its lengths and checks) is damaged."""


class CorruptBlockError(DataError):
    """The coded payload of a block is damaged."""


class CorruptEndError(DataError):
    """The end record of the container is damaged or disagrees with the blocks."""


class CorruptIndexError(DataError):
    """The block index at the end of the container is damaged or lies."""


class ChecksumMismatchError(DataError):
    """A block decoded, but its CRC-32 does not match the recorded one."""


class TrailingBytesError(DataError):
    """Bytes follow the end of the coded data."""


class SnapshotError(DataError):
    """A model snapshot was missing, different or damaged."""


class MqError(DataError):
    """An error of the MQ binary coder."""


class LimitExceededError(DataError):
    """A declared size is over the configured limit; nothing was allocated."""


class UncodableSymbolError(SubrangeError, ValueError):
    """A symbol lies outside its table or has frequency 0."""


class InvalidModelError(SubrangeError, ValueError):
    """A model or frequency table breaks the coder's rules."""


class InvalidParameterError(SubrangeError, ValueError):
    """A parameter is outside its documented range, or arrays disagree in shape."""


class RangeOutsideDataError(SubrangeError, ValueError):
    """A byte range asked for does not lie within the original data."""


class IoError(SubrangeError, OSError):
    """An I/O error of the underlying file."""
