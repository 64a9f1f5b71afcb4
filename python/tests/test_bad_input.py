"""Bad input raises a clear exception of the package, never a crash."""

import io
import subprocess
import sys
import textwrap

import numpy as np
import pytest

import subrange
from subrange import errors, TableSet

GRID = TableSet.parametric("laplace", [0.5, 2.0, 8.0])
INDEXES = np.array([0, 1, 2, 1, 0] * 200, dtype=np.int32)
VALUES = (np.arange(1000, dtype=np.int32) % 5) - 2
CODED = GRID.encode(VALUES, INDEXES)


def test_wrong_dtypes():
    with pytest.raises(TypeError, match="values must be an array of integers"):
        GRID.encode(VALUES.astype(np.float64), INDEXES)
    with pytest.raises(TypeError, match="indexes"):
        GRID.encode(VALUES, INDEXES.astype(np.float32))
    with pytest.raises(TypeError):
        GRID.encode(np.array(["a", "b"]), [0, 0])
    with pytest.raises(TypeError, match="float32 or float64"):
        subrange.encode_probabilities(np.ones((2, 3), dtype=np.int64), [0, 1])
    with pytest.raises(TypeError):
        subrange.encode_adaptive(np.array([True, False]), 2)
    with pytest.raises(TypeError, match="bytes-like"):
        subrange.decompress("text")


def test_shapes_that_disagree():
    with pytest.raises(errors.InvalidParameterError, match="one index per value"):
        GRID.encode(VALUES, INDEXES[:-1])
    with pytest.raises(errors.InvalidParameterError, match="one offset per value"):
        GRID.encode(VALUES, INDEXES, np.zeros(3, dtype=np.int32))
    with pytest.raises(errors.InvalidParameterError, match="2 symbols but 3"):
        subrange.encode_probabilities(np.ones((3, 4)), [0, 1])
    with pytest.raises(errors.InvalidParameterError, match="2-D"):
        subrange.encode_probabilities(np.ones(4), [0])
    with pytest.raises(errors.InvalidParameterError, match="one origin per table"):
        TableSet.from_frequencies([[1, 1]], origins=[0, 1])


def test_out_of_range_symbols_and_indexes():
    with pytest.raises(errors.UncodableSymbolError):
        GRID.encode([100], [0])
    with pytest.raises(errors.UncodableSymbolError):
        GRID.encode([2**40], [0])
    with pytest.raises(errors.InvalidParameterError, match="not a table"):
        GRID.encode([0], [3])
    with pytest.raises(errors.InvalidParameterError, match="found -1"):
        GRID.encode([0], [-1])
    with pytest.raises(errors.InvalidParameterError, match="not a table"):
        GRID.encode([0], np.array([-1], dtype=np.int32))
    with pytest.raises(errors.InvalidParameterError, match="indexes must lie"):
        GRID.encode([0], [2**40])
    with pytest.raises(errors.UncodableSymbolError):
        subrange.encode_adaptive([5], 5)
    with pytest.raises(errors.UncodableSymbolError):
        subrange.encode_adaptive([-1], 5)
    with pytest.raises(errors.UncodableSymbolError):
        subrange.encode_probabilities(np.ones((1, 3)), [3])
    with pytest.raises(errors.UncodableSymbolError):
        subrange.TableModel.from_counts([5, 0, 5]).encode([1])
    with pytest.raises(errors.UncodableSymbolError):
        TableSet.from_frequencies([[2, 0, 2]]).encode([1], [0])
    with pytest.raises(IndexError):
        GRID.cumulative(7)


@pytest.mark.parametrize("bad", [np.nan, -0.5, np.inf])
@pytest.mark.parametrize("dtype", [np.float32, np.float64])
def test_nan_and_negative_probabilities(bad, dtype):
    p = np.full((2, 3), 0.3, dtype=dtype)
    p[1, 2] = bad
    with pytest.raises(errors.InvalidParameterError, match="probabilit"):
        subrange.encode_probabilities(p, [0, 1])
    with pytest.raises(errors.InvalidParameterError):
        subrange.decode_probabilities(p, b"\x00\x01")
    with pytest.raises(errors.InvalidParameterError, match="all probabilities are zero"):
        subrange.encode_probabilities(np.zeros((1, 3), dtype=dtype), [0])


def test_bad_tables_and_parameters():
    with pytest.raises(errors.InvalidParameterError, match="power of two"):
        TableSet.from_frequencies([[1, 2]])
    with pytest.raises(errors.InvalidParameterError, match="must not fall"):
        TableSet.from_cumulative([[0, 3, 2, 4]])
    with pytest.raises(errors.InvalidParameterError):
        subrange.encode_adaptive([0], 0)
    with pytest.raises(errors.InvalidParameterError):
        subrange.encode_probabilities(np.ones((1, 3)), [0], log2_total=17)
    with pytest.raises(errors.InvalidParameterError, match="unknown preset name"):
        subrange.compress(b"x", preset="zip")
    with pytest.raises(errors.InvalidParameterError):
        subrange.compress(b"x", block_size=1)
    for bad in (b"", b"\x00", b"\x80\x00"):
        with pytest.raises(errors.CorruptTableError):
            subrange.TableModel.from_bytes(bad)


def test_truncated_and_damaged_batch_streams():
    # A batch stream is bare range-coded lanes (no length, no checksum): a
    # cut that leaves a decoder short of bytes is an error; losing only the
    # last byte or two of the last lane can go unnoticed (the container's
    # CRC-32 catches that).
    for cut in (0, 1, 2, len(CODED) // 4, len(CODED) // 2):
        with pytest.raises(errors.TruncatedError):
            GRID.decode(CODED[:cut], INDEXES)
    with pytest.raises(errors.TrailingBytesError):
        GRID.decode(CODED + bytes(8), INDEXES)
    rng = np.random.default_rng(3)
    caught = 0
    for _ in range(200):
        bad = bytearray(CODED)
        bad[int(rng.integers(len(bad)))] ^= 1 << int(rng.integers(8))
        try:
            back = GRID.decode(bytes(bad), INDEXES)
        except errors.DataError:
            caught += 1
        else:
            # A range coder cannot tell every flipped bit from other data;
            # then the output has the right shape and comes from the tables.
            assert back.shape == VALUES.shape
    assert caught > 0
    adaptive = subrange.encode_adaptive(VALUES + 2, 5)
    with pytest.raises(errors.TruncatedError):
        subrange.decode_adaptive(adaptive[:10], len(VALUES), 5)


def test_truncated_and_damaged_containers():
    packed = subrange.compress(b"level 212 cm\n" * 5000, preset="adaptive", block_size=4096)
    with pytest.raises(errors.BadMagicError):
        subrange.decompress(b"\x00" + packed[1:])
    for cut in (3, 20, len(packed) // 2, len(packed) - 1):
        with pytest.raises(errors.DataError):
            subrange.decompress(packed[:cut])
        with pytest.raises(errors.DataError):
            subrange.Reader(io.BytesIO(packed[:cut])).read()
    for pos in range(40, len(packed), max(1, len(packed) // 40)):
        bad = bytearray(packed)
        bad[pos] ^= 0x10
        with pytest.raises(errors.DataError):
            subrange.decompress(bytes(bad))
        with pytest.raises(errors.DataError):
            subrange.Reader(io.BytesIO(bytes(bad))).read()


def test_hostile_input_never_crashes_the_interpreter(tmp_path):
    # Random bytes fed to every decoder in a child interpreter: it must end
    # normally, whatever the decoders raise.
    script = textwrap.dedent(
        """
        import numpy as np, subrange
        from subrange import errors
        rng = np.random.default_rng(11)
        ts = subrange.TableSet.parametric("gaussian", [0.3, 3.0, 30.0])
        probs = rng.random((300, 20))
        model = subrange.TableModel.from_counts(np.arange(1, 50))
        for _ in range(300):
            data = rng.integers(0, 256, size=int(rng.integers(0, 64)), dtype=np.uint8).tobytes()
            for call in (
                lambda: ts.decode(data, rng.integers(0, 3, size=300)),
                lambda: subrange.decode_probabilities(probs, data),
                lambda: subrange.decode_adaptive(data, 300, 1000),
                lambda: model.decode(data, 300),
                lambda: subrange.decompress(data),
                lambda: subrange.decompress(b"SRNG" + data),
                lambda: subrange.TableModel.from_bytes(data),
            ):
                try:
                    call()
                except errors.SubrangeError:
                    pass
        print("survived")
        """
    )
    done = subprocess.run(
        [sys.executable, "-c", script], capture_output=True, text=True, timeout=300, cwd=tmp_path
    )
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip() == "survived"
