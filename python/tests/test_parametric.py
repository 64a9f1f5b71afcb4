"""Parametric tables against the published distribution functions.

Definitions (NIST/SEMATECH e-Handbook of Statistical Methods, section
1.3.6.6): normal F(x) = (1 + erf((x - mu) / (s * sqrt 2))) / 2; double
exponential F(x) = exp((x - mu) / b) / 2 below the mean and
1 - exp(-(x - mu) / b) / 2 above it; logistic F(x) = 1 / (1 + exp(-(x - mu) / s)).
Evaluated here in double precision with math.erf / math.exp.
"""

import math
import zlib

import numpy as np
import pytest
from hypothesis import given, strategies as st

import subrange
from subrange import CDF_ERROR, parametric_table

FAMILIES = ["gaussian", "laplace", "logistic"]


def exact_cdf(family, x, mean, scale):
    z = (x - mean) / scale
    if family == "gaussian":
        return 0.5 * (1.0 + math.erf(z / math.sqrt(2.0)))
    if family == "laplace":
        return 0.5 * math.exp(z) if z < 0 else 1.0 - 0.5 * math.exp(-z)
    if z < -700:
        return 0.0
    return 1.0 / (1.0 + math.exp(-z))


def q16(x):
    return round(x * 65536) / 65536


def check_table(family, scale, mean, half_width, log2_total):
    t = parametric_table(family, scale, mean, half_width, log2_total=log2_total)
    f = t.frequencies.astype(np.int64)
    c = t.cumulative_q40.astype(np.float64) / 2.0**40
    n, total = 2 * half_width + 1, 1 << log2_total
    assert f.dtype == np.int64 and len(f) == n
    assert (f >= 1).all()
    assert int(f.sum()) == total
    assert (np.diff(t.cumulative_q40.astype(np.int64)) >= 0).all()
    assert t.cumulative_q40[0] == 0 and t.cumulative_q40[-1] == 2**40
    s, m = q16(scale), q16(mean)
    edges = [exact_cdf(family, k - half_width - 0.5, m, s) for k in range(1, n)]
    exact_c = np.array([0.0] + edges + [1.0])
    assert np.abs(c - exact_c).max() <= CDF_ERROR
    p = np.diff(exact_c)
    bound = 1 + np.abs(1 - n * p) + 2 * (total + n) * CDF_ERROR
    assert (np.abs(f - total * p) < bound).all()
    return t


@pytest.mark.parametrize("family", FAMILIES)
@pytest.mark.parametrize("scale", [2**-16, 0.01, 0.11, 0.5, 1.0, 3.3, 17.0, 300.0])
@pytest.mark.parametrize("log2_total", [8, 12, 16])
def test_grid_against_definitions(family, scale, log2_total):
    half = max(0, min(int(math.ceil(8 * scale)), ((1 << log2_total) - 1) // 2, 400))
    for mean in (0.0, 0.25, -0.5, 1.75):
        check_table(family, scale, mean, half, log2_total)


@given(
    family=st.sampled_from(FAMILIES),
    scale=st.floats(0.001, 200.0),
    mean=st.floats(-4.0, 4.0),
    half_width=st.integers(0, 300),
    log2_total=st.integers(10, 16),
)
def test_random_tables_against_definitions(family, scale, mean, half_width, log2_total):
    check_table(family, scale, mean, half_width, log2_total)


def test_largest_table():
    t = parametric_table("gaussian", 9000.0, half_width=subrange.MAX_HALF_WIDTH, log2_total=16)
    assert len(t.frequencies) == 65535 and int(t.frequencies.sum()) == 65536


def test_reported_deviation():
    t = parametric_table("logistic", 2.0, half_width=20)
    q = np.diff(t.cumulative_q40.astype(np.float64)) / 2.0**40
    f = t.frequencies.astype(np.float64)
    dev = np.abs(f - 65536 * q).max()
    assert abs(dev - t.max_deviation) < 1e-3
    kl = float(np.sum(q * np.log2(q * 65536 / f)))
    assert abs(kl - t.relative_entropy) < 1e-6


def test_same_bytes_as_rust():
    # The Rust unit test `model::parametric::tests::pinned_grid_checksum`
    # pins the CRC-32 of the same grid's little-endian frequencies.
    crc = 0
    for family in FAMILIES:
        for mean in (0.0, 0.25):
            for scale_q16 in (7209, 32768, 65536, 163840, 655360, 4194304):
                scale = scale_q16 / 65536
                half = min(math.ceil(8 * scale), 1023)
                t = parametric_table(family, scale, mean, half)
                crc = zlib.crc32(t.frequencies.astype("<u4").tobytes(), crc)
    assert crc == 0x283F27F0
    ts = subrange.TableSet.parametric("laplace", [7209 / 65536, 1.0], 0.25)
    again = parametric_table("laplace", 1.0, 0.25, 8)
    assert (ts.frequencies(1) == again.frequencies).all()


@pytest.mark.parametrize(
    "args",
    [
        ("cauchy", 1.0, 0.0, 4, 16),
        ("gaussian", 0.0, 0.0, 4, 16),
        ("gaussian", -1.0, 0.0, 4, 16),
        ("gaussian", float("nan"), 0.0, 4, 16),
        ("gaussian", 1.0, float("inf"), 4, 16),
        ("gaussian", 1.0, 0.0, 200, 8),
        ("gaussian", 1.0, 0.0, 4, 17),
        ("gaussian", 1.0, 0.0, 4, 0),
        ("gaussian", 1.0, 0.0, -1, 16),
    ],
)
def test_bad_parameters(args):
    family, scale, mean, half, log2 = args
    with pytest.raises(subrange.errors.InvalidParameterError):
        parametric_table(family, scale, mean, half, log2_total=log2)
