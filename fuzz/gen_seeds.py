#!/usr/bin/env python3
"""Writes the fuzz seed corpora under fuzz/seeds/<target>/.

Seeds are generated, never hand-edited: small structured inputs that reach
the interesting parts of each target quickly (a fuzzer finds the rest).
Container seeds are real containers written by the library itself
(`cargo run --example fuzz_seeds`), when that example exists.
"""
import os
import random
import subprocess
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
rng = random.Random(20261201)


def write(target, name, data):
    d = os.path.join(HERE, "seeds", target)
    os.makedirs(d, exist_ok=True)
    with open(os.path.join(d, name), "wb") as f:
        f.write(bytes(data))


def gauge_text(n):
    out = []
    level = 200
    for minute in range(0, 10 * n, 10):
        level += rng.randint(-2, 2)
        out.append(f"G107,{minute},{level},{level * level // 40},{98 + rng.randint(-1, 1)}\n")
    return "".join(out).encode()


for i in range(8):
    head = [rng.randrange(256) for _ in range(4)]
    write("decode_raw", f"random-{i}", head + [rng.randrange(256) for _ in range(64 << i % 4)])
    write("decode_raw", f"zeros-{i}", head + [0] * (16 << i % 4))
    write("decode_raw", f"ones-{i}", head + [0xFF] * (16 << i % 4))

for i in range(8):
    head = [rng.randrange(64), rng.randrange(11), rng.randrange(256), rng.randrange(256),
            rng.randrange(64), rng.randrange(2), 0, 0]
    counts = [rng.randrange(1, 256) for _ in range(head[0] + 1)]
    write("model_roundtrip", f"mixed-{i}", head + counts + list(gauge_text(4 + i)))

for i in range(4):
    write("mq_decode", f"random-{i}", [rng.randrange(256) for _ in range(32 << i)])
write("mq_decode", "stuffed", [0xFF, 0x7F, 0xFF, 0x8F, 0xFF, 0xAC])

# Real containers, written by the library, for the container targets, and
# the container dictionary (fuzz/dicts/), derived from the same constants.
# The test profile reuses what `cargo test` built (CI runs it first).
example = os.path.join(HERE, "..", "examples", "fuzz_seeds.rs")
if os.path.exists(example):
    out = os.path.join(HERE, "seeds")
    dicts = os.path.join(HERE, "dicts")
    subprocess.run(["cargo", "run", "--quiet", "--profile", "test",
                    "--example", "fuzz_seeds", "--", out, dicts],
                   cwd=os.path.join(HERE, ".."), check=True)
print("seeds written to", os.path.join(HERE, "seeds"), file=sys.stderr)
