#!/usr/bin/env bash
# Speed of the fast presets (`static`, `adaptive`) as a user sees it: whole
# `subrange` processes compressing and decompressing files of SIZE bytes on
# one core, against `gzip -6` / `gzip -d` timed in the same run, medians of
# RUNS runs; then the in-process figures of `subrange bench --clock cpu` on
# the same files (ratios to flate2 in the same run).
#
# Usage: scripts/fast-presets.sh [RUNS] [SIZE]    (defaults: 5 runs, 24 MiB)
#        SUBRANGE=path/to/subrange scripts/fast-presets.sh   (another build)
#
# The inputs are built once into target/fast-presets/ (deterministic on a
# given machine): text (uncompressed documentation under /usr/share), source
# code (headers under /usr/include), an executable (programs under
# /usr/bin), and i.i.d. bytes from a seeded generator. Every process is
# pinned to one core (`taskset -c 0`) and timed by its wall clock and by its
# CPU time (user + system), the steadier figure on a shared machine.
set -euo pipefail

runs=${1:-5}
size=${2:-25165824}
root=$(cd "$(dirname "$0")/.." && pwd)
dir="$root/target/fast-presets"
mkdir -p "$dir"
if [ -z "${SUBRANGE:-}" ]; then
    cargo build --release -q -p subrange-cli --manifest-path "$root/Cargo.toml"
fi
bin=${SUBRANGE:-"$root/target/release/subrange"}

# Concatenates the files listed on standard input, in sorted order, and
# repeats them until SIZE bytes.
fill() {
    local out=$1 tmp="$1.part"
    if [ -s "$out" ]; then cat >/dev/null; return; fi
    sort | tr '\n' '\0' | xargs -0 cat 2>/dev/null >"$tmp" || true
    if [ ! -s "$tmp" ]; then echo "no input for $out" >&2; exit 1; fi
    while [ "$(stat -c %s "$tmp")" -lt "$size" ]; do cat "$tmp" "$tmp" >"$tmp.2"; mv "$tmp.2" "$tmp"; done
    head -c "$size" "$tmp" >"$out"
    rm -f "$tmp"
}

find /usr/share/doc /usr/share/common-licenses /usr/share/dict -type f \
    ! -name '*.gz' ! -name '*.bz2' ! -name '*.xz' ! -name '*.zip' ! -name '*.png' \
    ! -name '*.jpg' ! -name '*.gif' ! -name '*.svg' ! -name '*.pdf' 2>/dev/null | fill "$dir/text.dat"
find /usr/include -type f \( -name '*.h' -o -name '*.hpp' -o -name '*.def' \) 2>/dev/null | fill "$dir/source.dat"
find /usr/bin -maxdepth 1 -type f -size +100k 2>/dev/null | fill "$dir/exe.dat"
if [ ! -s "$dir/iid.dat" ]; then
    python3 - "$dir/iid.dat" "$size" <<'PY'
import random, sys
rng = random.Random(20240611)
# A fixed skewed distribution over 64 byte values (weights 0.9^k).
values = list(range(32, 96))
weights = [0.9 ** k for k in range(64)]
data = bytes(rng.choices(values, weights, k=int(sys.argv[2])))
open(sys.argv[1], "wb").write(data)
PY
fi

echo "machine load (1, 5, 15 min): $(cut -d' ' -f1-3 /proc/loadavg) on $(nproc) cores"
python3 - "$bin" "$dir" "$runs" <<'PY'
import os, statistics, subprocess, sys, time

bin, dir, runs = sys.argv[1], sys.argv[2], int(sys.argv[3])

def timed(cmd, stdin, stdout):
    """Wall and CPU (user + system) seconds of one process on core 0."""
    before = os.times()
    start = time.perf_counter()
    with open(stdin, "rb") as i, open(stdout, "wb") as o:
        subprocess.run(["taskset", "-c", "0"] + cmd, stdin=i, stdout=o, check=True)
    wall = time.perf_counter() - start
    after = os.times()
    cpu = (after.children_user - before.children_user) + (after.children_system - before.children_system)
    return wall, cpu

def median(cmd, stdin, stdout):
    w, c = zip(*(timed(cmd, stdin, stdout) for _ in range(runs)))
    return statistics.median(w), statistics.median(c)

print(f"one core, medians of {runs} runs; x = gzip's time / subrange's (higher is faster)")
print(f"{'file':8} {'preset':9} {'size':>10} {'ratio':>6} {'vs gzip-6':>9} "
      f"{'comp x wall':>11} {'x cpu':>6} {'decomp x wall':>13} {'x cpu':>6}")
for name in ["text", "source", "exe", "iid"]:
    raw = os.path.join(dir, name + ".dat")
    n = os.path.getsize(raw)
    gz = os.path.join(dir, name + ".gz")
    back = os.path.join(dir, name + ".back")
    gc = median(["gzip", "-6", "-c"], raw, gz)
    gd = median(["gzip", "-d", "-c"], gz, back)
    gsize = os.path.getsize(gz)
    for preset in ["static", "adaptive"]:
        sr = os.path.join(dir, f"{name}.{preset}.sr")
        sc = median([bin, "compress", "-q", "-t", "1", "-p", preset, "-o", "-"], raw, sr)
        sd = median([bin, "decompress", "-q", "-t", "1", "-o", "-"], sr, back)
        if open(back, "rb").read() != open(raw, "rb").read():
            sys.exit(f"{name} {preset}: round trip failed")
        size = os.path.getsize(sr)
        print(f"{name:8} {preset:9} {size:>10,} {n / size:>6.3f} {gsize / size:>9.3f} "
              f"{gc[0] / sc[0]:>11.2f} {gc[1] / sc[1]:>6.2f} {gd[0] / sd[0]:>13.2f} {gd[1] / sd[1]:>6.2f}")
    print(f"{'':8} {'gzip -6':9} {gsize:>10,} {n / gsize:>6.3f}   compress {n / gc[0] / 1e6:.0f} MB/s, "
          f"decompress {n / gd[0] / 1e6:.0f} MB/s (wall)")
PY

echo
echo "In process (subrange bench --clock cpu, one thread, 1 MiB blocks):"
for preset in static adaptive; do
    "$bin" bench -q --clock cpu -p "$preset" "$dir"/text.dat "$dir"/source.dat "$dir"/exe.dat "$dir"/iid.dat |
        grep -E "^[a-z/._-]+: |^ *($preset|flate2-6|flate2-1) "
done
