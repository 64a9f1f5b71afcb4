"""The container from Python: one-shot and streaming, every preset."""

import io

import pytest
from hypothesis import given, strategies as st

import subrange

GAUGE = b"".join(b"G%03d,1440,%d,%d,98\n" % (i % 7, 200 + i % 13, 1100 + i % 29) for i in range(3000))


@pytest.mark.parametrize("preset", subrange.presets())
def test_one_shot_every_preset(preset):
    packed = subrange.compress(GAUGE, preset=preset, block_size=16384)
    assert len(packed) < len(GAUGE)
    assert subrange.decompress(packed) == GAUGE
    assert subrange.decompress(bytearray(packed)) == GAUGE


@given(data=st.binary(max_size=5000), preset=st.sampled_from(["static", "adaptive"]))
def test_one_shot_round_trip(data, preset):
    assert subrange.decompress(subrange.compress(data, preset=preset, block_size=1024)) == data


@given(chunks=st.lists(st.binary(max_size=700), max_size=12), read_size=st.integers(1, 5000))
def test_streaming_round_trip(chunks, read_size):
    sink = io.BytesIO()
    with subrange.Writer(sink, preset="adaptive", block_size=1024) as w:
        for c in chunks:
            assert w.write(c) == len(c)
    packed = sink.getvalue()
    assert subrange.decompress(packed) == b"".join(chunks)
    reader = subrange.Reader(io.BytesIO(packed))
    got = bytearray()
    while True:
        piece = reader.read(read_size)
        if not piece:
            break
        got += piece
    assert bytes(got) == b"".join(chunks)


def test_streams_compose_with_io():
    sink = io.BytesIO()
    with subrange.Writer(sink) as w:
        w.write(GAUGE)
    lines = io.BufferedReader(subrange.Reader(io.BytesIO(sink.getvalue()))).readlines()
    assert b"".join(lines) == GAUGE
    text = io.TextIOWrapper(io.BufferedReader(subrange.Reader(io.BytesIO(sink.getvalue()))), encoding="ascii")
    assert text.readline() == GAUGE.split(b"\n")[0].decode() + "\n"
    assert subrange.Writer(io.BytesIO()).writable() and subrange.Reader(io.BytesIO(b"")).readable()


def test_reader_passes_file_errors_through():
    class Broken(io.RawIOBase):
        def readable(self):
            return True

        def read(self, n=-1):
            raise RuntimeError("radio link down")

    with pytest.raises(RuntimeError, match="radio link down"):
        subrange.Reader(Broken()).read()


def test_empty_container():
    packed = subrange.compress(b"")
    assert subrange.decompress(packed) == b""
    assert subrange.Reader(io.BytesIO(packed)).read() == b""
