"""A learned model's probabilities, coded: a gauge's next level change.

A softmax regression predicts the next water-level change of a river gauge
(21 classes, -10 ..= +10 cm, clamped) from the previous three changes. It is
trained with plain gradient descent in NumPy on synthetic, seeded readings
(a slow seasonal swell, storm pulses that rise fast and recede slowly, and
sensor noise), then its probabilities for a second, held-out stretch are
coded with `subrange.encode_probabilities`. The script compares

- the coded length,
- the model's own cross-entropy on those readings (the ideal length), and
- the crate's adaptive order-0 model on the same classes (no features),

and checks that the decoder, given the same probabilities, gets every class
back.

    python python/examples/gauge_softmax.py
"""

import numpy as np

import subrange

CLASSES = 21
HALF = CLASSES // 2
HISTORY = 3


def gauge_levels(seed, n):
    """Water level in cm, one reading every 15 minutes."""
    rng = np.random.default_rng(seed)
    t = np.arange(n)
    level = 120 + 30 * np.sin(2 * np.pi * t / (96 * 30))
    storm = np.zeros(n)
    for start in rng.integers(0, n, size=n // 800):
        rise = rng.uniform(20, 80)
        k = np.arange(n - start)
        storm[start:] += rise * (1 - np.exp(-k / 6.0)) * np.exp(-k / 120.0)
    return np.round(level + storm + rng.normal(0, 0.8, size=n)).astype(np.int64)


def features(changes):
    """Previous changes (scaled) and a bias, one row per predicted step."""
    rows = [changes[HISTORY - j - 1 : len(changes) - j - 1] / 4.0 for j in range(HISTORY)]
    x = np.stack(rows + [np.sign(rows[0]) * rows[0] ** 2 / 4.0, np.ones(len(rows[0]))], axis=1)
    return x, changes[HISTORY:] + HALF


def softmax(z):
    z = z - z.max(axis=1, keepdims=True)
    e = np.exp(z)
    return e / e.sum(axis=1, keepdims=True)


def train(x, y, steps=200, rate=0.5):
    w = np.zeros((x.shape[1], CLASSES))
    onehot = np.eye(CLASSES)[y]
    for _ in range(steps):
        p = softmax(x @ w)
        w -= rate * x.T @ (p - onehot) / len(y)
    return w


def main():
    levels = gauge_levels(seed=31, n=30_000)
    changes = np.clip(np.diff(levels), -HALF, HALF)
    x, y = features(changes)
    split = len(y) // 2
    w = train(x[:split], y[:split])

    probs = softmax(x[split:] @ w)  # float64; the decoder must see the same bits
    classes = y[split:]
    coded = subrange.encode_probabilities(probs, classes)
    assert (subrange.decode_probabilities(probs, coded) == classes).all()

    cross_entropy = float(-np.log2(probs[np.arange(len(classes)), classes]).sum())
    adaptive = subrange.encode_adaptive(classes, CLASSES)
    n = len(classes)
    print(f"{n} level changes of a held-out stretch")
    print(f"softmax model, coded:        {len(coded) * 8 / n:.3f} bits/reading ({len(coded)} bytes)")
    print(f"softmax model, cross-entropy: {cross_entropy / n:.3f} bits/reading")
    print(f"adaptive order-0 model:      {len(adaptive) * 8 / n:.3f} bits/reading ({len(adaptive)} bytes)")
    assert len(coded) * 8 < cross_entropy * 1.01 + 64
    assert len(coded) < len(adaptive)


if __name__ == "__main__":
    main()
