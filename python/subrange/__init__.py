"""Range coding from NumPy, with the ``subrange`` crate underneath.

For models that emit probabilities: code whole arrays of symbols in one
call, under

- a set of quantised frequency tables with a table index (and an optional
  offset) per value -- :class:`TableSet`, the layout of learned codecs;
- bit-exact parametric tables (discretised Gaussian, Laplace and logistic
  distributions built in integer arithmetic, identical on every platform and
  in Rust) -- :func:`parametric_table`, :meth:`TableSet.parametric`;
- a probability vector per symbol -- :func:`encode_probabilities`;
- the crate's adaptive and static models for plain integer arrays --
  :func:`encode_adaptive`, :class:`TableModel`;

and the crate's checksummed block container for bytes --
:func:`compress`, :func:`decompress`, :class:`Writer`, :class:`Reader`.

The batch calls release the GIL while they code. Errors are the classes of
:mod:`subrange.errors`.

>>> import numpy as np, subrange
>>> tables = subrange.TableSet.parametric("gaussian", scales=[0.5, 1.0, 2.0, 4.0])
>>> values = np.array([0, -1, 3, 0, 7, -2], dtype=np.int32)
>>> indexes = np.array([0, 1, 2, 0, 3, 2])
>>> data = tables.encode(values, indexes)
>>> tables.decode(data, indexes).tolist()
[0, -1, 3, 0, 7, -2]
"""

from __future__ import annotations

import io
from dataclasses import dataclass
from typing import Any, Optional, Sequence, Union

import numpy as np

from . import errors
from . import _native
from .errors import InvalidParameterError, UncodableSymbolError

__all__ = [
    "errors",
    "CDF_BITS",
    "CDF_ERROR",
    "MAX_HALF_WIDTH",
    "ParametricTable",
    "parametric_table",
    "TableSet",
    "encode_probabilities",
    "decode_probabilities",
    "encode_adaptive",
    "decode_adaptive",
    "TableModel",
    "presets",
    "compress",
    "decompress",
    "Writer",
    "Reader",
]

#: Bits after the point of the parametric tables' distribution values.
CDF_BITS: int = _native.CDF_BITS
#: Bound on the error of every parametric edge value against the exact
#: distribution function (2^-30).
CDF_ERROR: float = _native.CDF_ERROR
#: Largest half-width of a parametric table (65,535 symbols).
MAX_HALF_WIDTH: int = _native.MAX_HALF_WIDTH

ArrayLike = Any
BytesLike = Union[bytes, bytearray, memoryview]


def _bytes(data: BytesLike, name: str = "data") -> bytes:
    if isinstance(data, bytes):
        return data
    if isinstance(data, (bytearray, memoryview)):
        return bytes(data)
    raise TypeError(f"{name} must be bytes-like, got {type(data).__name__}")


def _ints(x: ArrayLike, name: str, dtype: Any, error: type = UncodableSymbolError) -> np.ndarray:
    """``x`` as a contiguous 1-D array of ``dtype``; integer input only."""
    a = np.asarray(x)
    if a.size == 0 and a.dtype.kind == "f":
        a = a.astype(dtype)  # [] is an empty float array to NumPy
    if a.dtype == np.bool_ or a.dtype.kind not in "iu":
        raise TypeError(f"{name} must be an array of integers, got dtype {a.dtype}")
    a = a.reshape(-1)
    if a.dtype == dtype:
        return np.ascontiguousarray(a)
    if a.size:
        info = np.iinfo(dtype)
        lo, hi = int(a.min()), int(a.max())
        if lo < info.min or hi > info.max:
            bad = lo if lo < info.min else hi
            raise error(
                f"{name} must lie in {info.min} ..= {info.max} ({np.dtype(dtype).name}), found {bad}"
            )
    return np.ascontiguousarray(a, dtype=dtype)


def _indexes(x: ArrayLike) -> np.ndarray:
    a = np.asarray(x)
    if a.dtype == np.int32:
        # Negative indexes become values no table has: the coder refuses them.
        return np.ascontiguousarray(a.reshape(-1)).view(np.uint32)
    return _ints(a, "indexes", np.uint32, InvalidParameterError)


def _probabilities(p: ArrayLike) -> np.ndarray:
    a = np.asarray(p)
    if a.dtype not in (np.float32, np.float64):
        raise TypeError(f"probabilities must be float32 or float64, got dtype {a.dtype}")
    if a.ndim != 2:
        raise InvalidParameterError(
            f"probabilities must be 2-D (one row per symbol), got {a.ndim} dimensions"
        )
    return np.ascontiguousarray(a)


@dataclass(frozen=True)
class ParametricTable:
    """One parametric table (see :func:`parametric_table`).

    Symbol ``k`` stands for the value ``k - half_width``.
    """

    #: The distribution family.
    family: str
    #: The scale, as given.
    scale: float
    #: The mean, as given.
    mean: float
    #: The table covers ``-half_width ..= half_width``.
    half_width: int
    #: The total is ``2 ** log2_total``.
    log2_total: int
    #: One frequency per symbol (uint32), each at least 1.
    frequencies: np.ndarray
    #: The fixed-point distribution function at the bin edges (uint64,
    #: ``n + 1`` values in units of ``2 ** -CDF_BITS``).
    cumulative_q40: np.ndarray
    #: Largest ``|freq_k - T * q_k|`` in frequency units (``q`` being
    #: :attr:`cumulative_q40`'s own probabilities).
    max_deviation: float
    #: Bits per symbol that coding with the frequencies costs over ``q``.
    relative_entropy: float


def parametric_table(
    family: str,
    scale: float,
    mean: float = 0.0,
    half_width: Optional[int] = None,
    *,
    tail: float = 8.0,
    log2_total: int = 16,
) -> ParametricTable:
    """A discretised Gaussian, Laplace or logistic table, built bit-exactly.

    ``scale`` is the standard deviation (Gaussian), ``b`` (Laplace) or ``s``
    (logistic); scale and mean are rounded to multiples of ``2 ** -16``.
    Without ``half_width`` the table covers ``ceil(tail * scale)`` values on
    each side. Every frequency is at least 1 and they sum to
    ``2 ** log2_total``; the same arguments give the same table on every
    platform (integer arithmetic only).

    >>> t = parametric_table("laplace", 1.0, half_width=3, log2_total=8)
    >>> t.frequencies.tolist()
    [11, 19, 49, 98, 49, 19, 11]
    >>> int(t.frequencies.sum())
    256
    """
    if half_width is None:
        half_width = max(0, min(MAX_HALF_WIDTH, int(np.ceil(tail * scale))))
    if not isinstance(half_width, (int, np.integer)) or half_width < 0:
        raise InvalidParameterError(f"half_width must be a non-negative integer, got {half_width!r}")
    if not isinstance(log2_total, (int, np.integer)) or log2_total < 0:
        raise InvalidParameterError(f"log2_total must be 1 ..= 16, got {log2_total!r}")
    freq, cdf, dev, rel = _native.parametric_table(
        family, float(scale), float(mean), int(half_width), int(log2_total)
    )
    return ParametricTable(family, float(scale), float(mean), int(half_width), int(log2_total), freq, cdf, dev, rel)


class TableSet:
    """A set of frequency tables; each value is coded with the table its index names.

    Value ``i`` is coded as symbol ``values[i] - offsets[i] - origin`` of
    table ``indexes[i]`` (symbol ``k`` of a table stands for ``k + origin``).
    Build one with :meth:`parametric`, :meth:`from_cumulative` or
    :meth:`from_frequencies`.

    >>> ts = TableSet.from_frequencies([[2, 1, 1], [1, 1, 1, 5]], origins=[-1, 0])
    >>> data = ts.encode([-1, 3, 1, 0], [0, 1, 0, 1])
    >>> ts.decode(data, [0, 1, 0, 1]).tolist()
    [-1, 3, 1, 0]
    """

    def __init__(self, native: Any) -> None:
        self._native = native

    @classmethod
    def parametric(
        cls,
        family: str,
        scales: Sequence[float],
        mean: float = 0.0,
        *,
        tail: float = 8.0,
        max_half_width: int = 1023,
        log2_total: int = 16,
    ) -> "TableSet":
        """One parametric table per scale (see :func:`parametric_table`).

        Table ``t`` covers ``ceil(tail * scales[t])`` values (at most
        ``max_half_width``) on each side of 0; its origin is minus that.

        >>> ts = TableSet.parametric("logistic", [0.5, 3.0], tail=4.0)
        >>> len(ts), ts.origin(0), ts.origin(1)
        (2, -2, -12)
        """
        scales = [float(s) for s in np.asarray(scales, dtype=np.float64).reshape(-1)]
        if not 0 <= max_half_width <= MAX_HALF_WIDTH:
            raise InvalidParameterError(f"max_half_width must be 0 ..= {MAX_HALF_WIDTH}")
        return cls(
            _native.NativeTableSet.from_parametric(
                family, scales, float(mean), float(tail), int(max_half_width), int(log2_total)
            )
        )

    @classmethod
    def from_cumulative(cls, tables: Sequence[ArrayLike], origins: Optional[Sequence[int]] = None) -> "TableSet":
        """Tables given by cumulative frequencies: ``n + 1`` values rising
        from 0 to a power of two at most 65536.

        >>> TableSet.from_cumulative([[0, 3, 4]]).frequencies(0).tolist()
        [3, 1]
        """
        cums = [_ints(t, "cumulative", np.uint32) for t in tables]
        origins = [0] * len(cums) if origins is None else [int(o) for o in origins]
        return cls(_native.NativeTableSet.from_cumulative(cums, origins))

    @classmethod
    def from_frequencies(cls, tables: Sequence[ArrayLike], origins: Optional[Sequence[int]] = None) -> "TableSet":
        """Tables given by frequencies that sum to a power of two at most 65536."""
        cums = []
        for t in tables:
            f = _ints(t, "frequencies", np.uint32).astype(np.uint64)
            c = np.concatenate([[0], np.cumsum(f)])
            if c[-1] > 1 << 16:
                raise InvalidParameterError("frequencies must sum to a power of two at most 65536")
            cums.append(c.astype(np.uint32))
        return cls.from_cumulative(cums, origins)

    def __len__(self) -> int:
        return len(self._native)

    def cumulative(self, table: int) -> np.ndarray:
        """Table ``table``'s cumulative frequencies (uint32)."""
        return self._native.cumulative(int(table))

    def frequencies(self, table: int) -> np.ndarray:
        """Table ``table``'s frequencies (uint32)."""
        return np.diff(self.cumulative(table))

    def origin(self, table: int) -> int:
        """The value symbol 0 of table ``table`` stands for."""
        return self._native.origin(int(table))

    def encode(self, values: ArrayLike, indexes: ArrayLike, offsets: Optional[ArrayLike] = None) -> bytes:
        """Codes ``values`` (int32), each with table ``indexes[i]``, less ``offsets[i]``."""
        v = _ints(values, "values", np.int32)
        i = _indexes(indexes)
        o = None if offsets is None else _ints(offsets, "offsets", np.int32)
        return self._native.encode(v, i, o)

    def decode(self, data: BytesLike, indexes: ArrayLike, offsets: Optional[ArrayLike] = None) -> np.ndarray:
        """Decodes one value per index (int32, in the shape of ``indexes``)."""
        shape = np.shape(indexes)
        i = _indexes(indexes)
        o = None if offsets is None else _ints(offsets, "offsets", np.int32)
        return self._native.decode(_bytes(data), i, o).reshape(shape)


def encode_probabilities(probabilities: ArrayLike, symbols: ArrayLike, log2_total: int = 16) -> bytes:
    """Codes ``symbols[i]`` under row ``i`` of a 2-D float32 or float64 array.

    Rows are relative weights (they need not sum to one; zeros are allowed,
    every symbol still gets frequency 1); each row is turned into a table of
    total ``2 ** log2_total`` with exact integer arithmetic on the bits of
    the floats. The decoder must be given bit-identical probabilities.

    >>> p = np.array([[0.7, 0.2, 0.1], [0.1, 0.1, 0.8]])
    >>> data = encode_probabilities(p, [0, 2])
    >>> decode_probabilities(p, data).tolist()
    [0, 2]
    """
    p = _probabilities(probabilities)
    s = _ints(symbols, "symbols", np.uint32)
    if s.shape[0] != p.shape[0]:
        raise InvalidParameterError(f"{s.shape[0]} symbols but {p.shape[0]} probability rows")
    if p.dtype == np.float32:
        return _native.encode_probabilities_f32(p, s, int(log2_total))
    return _native.encode_probabilities_f64(p, s, int(log2_total))


def decode_probabilities(probabilities: ArrayLike, data: BytesLike, log2_total: int = 16) -> np.ndarray:
    """Decodes one symbol per row (uint32) coded by :func:`encode_probabilities`."""
    p = _probabilities(probabilities)
    if p.dtype == np.float32:
        return _native.decode_probabilities_f32(p, _bytes(data), int(log2_total))
    return _native.decode_probabilities_f64(p, _bytes(data), int(log2_total))


def encode_adaptive(symbols: ArrayLike, alphabet: int, *, increment: int = 24, limit: int = 1 << 16) -> bytes:
    """Codes ``symbols`` (in ``0 .. alphabet``) with an adaptive order-0 model.

    The model starts uniform and learns every symbol it codes: each coded
    symbol's count grows by ``increment``; counts are halved when their
    total would pass ``limit``.

    >>> levels = np.array([212, 212, 213, 213, 213, 214] * 100)
    >>> data = encode_adaptive(levels, 1024)
    >>> len(data) < 200
    True
    >>> bool((decode_adaptive(data, len(levels), 1024) == levels).all())
    True
    """
    s = _ints(symbols, "symbols", np.uint32)
    return _native.encode_adaptive(s, int(alphabet), int(increment), int(limit))


def decode_adaptive(data: BytesLike, count: int, alphabet: int, *, increment: int = 24, limit: int = 1 << 16) -> np.ndarray:
    """Decodes ``count`` symbols (uint32) coded by :func:`encode_adaptive` with the same parameters."""
    if int(count) < 0:
        raise InvalidParameterError(f"count must be non-negative, got {count}")
    return _native.decode_adaptive(_bytes(data), int(count), int(alphabet), int(increment), int(limit))


class TableModel:
    """A static frequency table with a power-of-two total.

    >>> m = TableModel.from_counts([900, 60, 30, 10], log2_total=12)
    >>> m.frequencies.tolist(), m.log2_total
    ([3686, 246, 123, 41], 12)
    >>> data = m.encode([0, 0, 1, 0, 3])
    >>> m.decode(data, 5).tolist()
    [0, 0, 1, 0, 3]
    >>> TableModel.from_bytes(m.to_bytes()).frequencies.tolist() == m.frequencies.tolist()
    True
    """

    def __init__(self, native: Any) -> None:
        self._native = native

    @classmethod
    def from_counts(cls, counts: ArrayLike, log2_total: int = 12) -> "TableModel":
        """Counts quantised to ``2 ** log2_total``; every counted symbol keeps frequency >= 1."""
        return cls(_native.NativeTableModel.from_counts(_ints(counts, "counts", np.uint64), int(log2_total)))

    @classmethod
    def from_symbols(cls, symbols: ArrayLike, alphabet: int, log2_total: int = 12) -> "TableModel":
        """The histogram of ``symbols`` over ``0 .. alphabet``."""
        s = _ints(symbols, "symbols", np.uint32)
        if s.size and int(s.max()) >= alphabet:
            raise UncodableSymbolError(f"symbol {int(s.max())} is outside the alphabet of {alphabet}")
        return cls.from_counts(np.bincount(s, minlength=alphabet).astype(np.uint64), log2_total)

    @classmethod
    def from_frequencies(cls, frequencies: ArrayLike) -> "TableModel":
        """Exact frequencies summing to a power of two at most 65536."""
        return cls(_native.NativeTableModel.from_frequencies(_ints(frequencies, "frequencies", np.uint32)))

    @classmethod
    def from_bytes(cls, data: BytesLike) -> "TableModel":
        """A table serialised by :meth:`to_bytes`."""
        native, _used = _native.NativeTableModel.from_bytes(_bytes(data))
        return cls(native)

    def to_bytes(self) -> bytes:
        """The table in the crate's compact serialised form."""
        return self._native.to_bytes()

    @property
    def frequencies(self) -> np.ndarray:
        """One frequency per symbol (uint32)."""
        return self._native.frequencies()

    @property
    def log2_total(self) -> int:
        """``log2`` of the total."""
        return self._native.log2_total()

    def encode(self, symbols: ArrayLike) -> bytes:
        """Codes ``symbols`` with the table."""
        return self._native.encode(_ints(symbols, "symbols", np.uint32))

    def decode(self, data: BytesLike, count: int) -> np.ndarray:
        """Decodes ``count`` symbols (uint32)."""
        if int(count) < 0:
            raise InvalidParameterError(f"count must be non-negative, got {count}")
        return self._native.decode(_bytes(data), int(count))


def presets() -> list:
    """The container's preset names.

    >>> "adaptive" in presets()
    True
    """
    return list(_native.presets())


def compress(data: BytesLike, preset: str = "static", *, block_size: Optional[int] = None, threads: Optional[int] = None) -> bytes:
    """Compresses ``data`` into a checksummed container.

    >>> packed = compress(b"G107,1440,212,1123,98\\n" * 200, preset="adaptive")
    >>> decompress(packed) == b"G107,1440,212,1123,98\\n" * 200
    True
    """
    return _native.compress(_bytes(data), str(preset), block_size, threads)


def decompress(data: BytesLike) -> bytes:
    """Decompresses a whole container; damaged input raises a :class:`~subrange.errors.DataError`."""
    return _native.decompress(_bytes(data))


class Writer(io.RawIOBase):
    """A writable binary stream that compresses into ``file``.

    ``close()`` ends the container (and does not close ``file``).

    >>> sink = io.BytesIO()
    >>> with Writer(sink, preset="adaptive") as w:
    ...     _ = w.write(b"level 212 cm\\n" * 100)
    >>> decompress(sink.getvalue()) == b"level 212 cm\\n" * 100
    True
    """

    def __init__(self, file: Any, preset: str = "static", *, block_size: Optional[int] = None, threads: Optional[int] = None) -> None:
        super().__init__()
        self._file = file
        self._native = _native.NativeCompressor(str(preset), block_size, threads)

    def writable(self) -> bool:
        return True

    def write(self, b: Any) -> int:
        if self.closed:
            raise ValueError("write to a closed Writer")
        data = bytes(memoryview(b))
        out = self._native.write(data)
        if out:
            self._file.write(out)
        return len(data)

    def close(self) -> None:
        if not self.closed:
            try:
                out = self._native.finish()
                if out:
                    self._file.write(out)
            finally:
                super().close()


class Reader(io.RawIOBase):
    """A readable binary stream of the bytes of the container read from ``file``.

    Blocks are checked (CRC-32) before their bytes are handed out.

    >>> packed = compress(b"flow 3.4 m3/s\\n" * 50)
    >>> Reader(io.BytesIO(packed)).read() == b"flow 3.4 m3/s\\n" * 50
    True
    """

    def __init__(self, file: Any) -> None:
        super().__init__()
        self._native = _native.NativeDecompressor(file)

    def readable(self) -> bool:
        return True

    def readinto(self, b: Any) -> int:
        if self.closed:
            raise ValueError("read from a closed Reader")
        view = memoryview(b).cast("B")
        chunk = self._native.read(len(view))
        n = len(chunk)
        view[:n] = chunk
        return n
