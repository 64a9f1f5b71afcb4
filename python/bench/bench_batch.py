"""Batch coding speed from Python against the Rust API, and coded length
against the ideal length computed in NumPy.

The work: residuals of a water-level predictor across a network of gauges
(10 million values by default), each coded with the discretised Gaussian
table (64 scales, 2^-3 to 2^6 cm, totals of 2^16) that the predictor's
scale for that reading selects; the values are drawn from those tables
(seeded). The same arrays are written to raw files and timed through the
Rust API by `cargo run --release --example batch_speed`, in the same run.

    python python/bench/bench_batch.py [COUNT]

Speed is the best of five runs on one core, timed by the thread's CPU time
on both sides (`time.thread_time`; the Rust side reads the same clock), so
other load on the machine does not move the figures: the batch calls run
on the calling thread with the GIL released.
"""

import os
import re
import subprocess
import sys
import tempfile
import time

import numpy as np

import subrange

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))


def best_of(runs, f):
    best, out = float("inf"), None
    for _ in range(runs):
        start = time.thread_time()
        out = f()
        best = min(best, time.thread_time() - start)
    return best, out


def main():
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 10_000_000
    scales_q16 = np.round(2.0 ** (-3 + 9 * np.arange(64) / 63) * 65536).astype(np.uint32)
    tables = subrange.TableSet.parametric("gaussian", scales_q16 / 65536.0, tail=8.0, max_half_width=1023)
    rng = np.random.default_rng(2024)
    # The predicted scale drifts as the river rises and falls.
    steps = rng.integers(-2, 3, size=n)
    indexes = np.empty(n, dtype=np.int32)
    s = 32
    for start in range(0, n, 1 << 16):
        chunk = steps[start : start + (1 << 16)]
        for j, d in enumerate(chunk):
            s = min(63, max(0, s + int(d)))
            indexes[start + j] = s
    values = np.empty(n, dtype=np.int32)
    bits = 0.0
    for t in range(64):
        where = indexes == t
        cum = tables.cumulative(t)
        slots = rng.integers(0, 1 << 16, size=int(where.sum()))
        sym = np.searchsorted(cum, slots, side="right") - 1
        values[where] = sym + tables.origin(t)
        freq = np.diff(cum).astype(np.float64)
        bits += float(-np.log2(freq[sym] / 65536.0).sum())

    enc_s, data = best_of(5, lambda: tables.encode(values, indexes))
    dec_s, back = best_of(5, lambda: tables.decode(data, indexes))
    assert (back == values).all()
    py_enc, py_dec = n / enc_s / 1e6, n / dec_s / 1e6
    ideal_bytes = bits / 8
    print(f"symbols={n} bytes={len(data)} ideal_bytes={ideal_bytes:.0f} "
          f"excess={100 * (len(data) - ideal_bytes) / ideal_bytes:.4f}%")
    print(f"python: encode {py_enc:.1f} Msym/s, decode {py_dec:.1f} Msym/s")

    with tempfile.TemporaryDirectory() as tmp:
        paths = [os.path.join(tmp, name) for name in ("values", "indexes", "scales")]
        values.astype("<i4").tofile(paths[0])
        indexes.astype("<u4").tofile(paths[1])
        scales_q16.astype("<u4").tofile(paths[2])
        cmd = ["cargo", "run", "--quiet", "--release", "--example", "batch_speed", "--", *paths]
        out = subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True, check=True).stdout
    fields = dict(re.findall(r"(\w+)=([\d.]+)", out))
    rust_enc, rust_dec = float(fields["encode_msym_s"]), float(fields["decode_msym_s"])
    assert int(fields["bytes"]) == len(data), "Rust and Python coded different bytes"
    print(f"rust:   encode {rust_enc:.1f} Msym/s, decode {rust_dec:.1f} Msym/s")
    print(f"python / rust: encode {py_enc / rust_enc:.2f}, decode {py_dec / rust_dec:.2f}")


if __name__ == "__main__":
    main()
