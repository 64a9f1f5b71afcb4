#!/usr/bin/env bash
# Builds the benchmark set under target/bench-set (deterministically: the
# same files on the same machine; system files differ between systems) and
# measures every preset and the xz, zstd and bzip2 commands on it.
#
#   scripts/bench-set.sh            build the set and measure
#   scripts/bench-set.sh build      build the set only
#
# Files: a Unicode character table, English documentation text, C headers,
# an x86-64 executable, river-gauge CSV telemetry, i.i.d. bytes of known
# entropy, random bytes, runs. The presets are measured with
# `subrange bench --clock cpu` (CPU time of the measuring thread, steady on a
# busy machine); the baselines' times are CPU times from `/usr/bin/time`-free
# bash `time` (user + system of the child).
set -euo pipefail
cd "$(dirname "$0")/.."
out=target/bench-set
mkdir -p "$out"

first() { for f in "$@"; do [ -e "$f" ] && { echo "$f"; return; }; done; }

build() {
    # A Unicode data table: the UTF-8 character map of the C library.
    zcat "$(first /usr/share/i18n/charmaps/UTF-8.gz)" > "$out/unicode.txt"
    # English text: documentation files, sorted, the first 3 MiB.
    { find /usr/share/vim /usr/share/doc /usr/share/common-licenses -name '*.txt' -type f 2>/dev/null \
        | LC_ALL=C sort | xargs cat 2>/dev/null || true; } | head -c $((3 << 20)) > "$out/text.txt"
    # Program source: C headers, sorted, the first 3 MiB.
    { find /usr/include -name '*.h' -type f -print0 | LC_ALL=C sort -z | xargs -0 cat || true; } \
        | head -c $((3 << 20)) > "$out/source.h"
    # An x86-64 executable.
    cp "$(first /usr/bin/perl /usr/bin/python3 /bin/bash)" "$out/program.exe"
    cargo run --quiet --release --example bench_set -- "$out"
}

build
[ "${1:-}" = build ] && exit 0

cargo build --quiet --release -p subrange-cli
bin=target/release/subrange
files=("$out"/unicode.txt "$out"/text.txt "$out"/source.h "$out"/program.exe "$out"/gauge.csv "$out"/iid16.txt "$out"/random.bin "$out"/runs.bin)

# Baselines: size and CPU seconds (user + system) per file.
printf '%-12s %10s %10s %8s %8s %10s %8s\n' file bytes xz-9e enc_s dec_s zstd-19 bzip2-9
total_xz=0
for f in "${files[@]}"; do
    s=$(stat -c %s "$f")
    TIMEFORMAT='%U %S'
    enc=$( { time xz -9e -k -c "$f" > "$f.xz"; } 2>&1 | awk '{print $1+$2}')
    dec=$( { time xz -d -c "$f.xz" > /dev/null; } 2>&1 | awk '{print $1+$2}')
    x=$(stat -c %s "$f.xz")
    z=$(zstd -19 -q -c "$f" | wc -c)
    b=$(bzip2 -9 -c "$f" | wc -c)
    total_xz=$((total_xz + x))
    printf '%-12s %10d %10d %8s %8s %10d %8d\n' "$(basename "$f")" "$s" "$x" "$enc" "$dec" "$z" "$b"
    rm -f "$f.xz"
done
echo "xz -9e total: $total_xz"

for p in ${PRESETS:-mix history}; do
    "$bin" bench --clock cpu --runs 1 -p "$p" "${files[@]}"
done
