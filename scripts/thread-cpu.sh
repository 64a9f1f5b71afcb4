#!/usr/bin/env bash
# Two-thread scaling of whole `subrange compress` / `decompress` processes,
# measured by CPU time per thread, which the machine's other load moves far
# less than the wall clock.
#
# Usage: scripts/thread-cpu.sh [FILE] [RUNS] [PRESETS]
#        (defaults: target/fast-presets/text.dat, 5 runs, "static adaptive")
#        SUBRANGE=path/to/subrange scripts/thread-cpu.sh   (another build)
#
# Each process runs under `perf record -e task-clock` with a sample every
# 100 µs of CPU time; the samples of each thread give its CPU time. For
# `-t 1` and `-t 2` it prints the medians of RUNS runs: the caller's thread
# (reading and writing), the busiest coder thread and the total. The
# speed-up it reports is the busiest thread at `-t 1` (the one-thread
# run's critical path) over half the total at `-t 2` (the best two cores
# can do with that work): what a quiet two-core machine would show by the
# wall clock, at best. Needs `perf` and a kernel that lets the user sample
# its own processes (perf_event_paranoid ≤ 2); build the inputs with
# scripts/fast-presets.sh first.
set -euo pipefail

root=$(cd "$(dirname "$0")/.." && pwd)
file=${1:-"$root/target/fast-presets/text.dat"}
runs=${2:-5}
presets=${3:-static adaptive}
if [ -z "${SUBRANGE:-}" ]; then
    cargo build --release -q -p subrange-cli --manifest-path "$root/Cargo.toml"
fi
bin=${SUBRANGE:-"$root/target/release/subrange"}
command -v perf >/dev/null || { echo "perf is needed" >&2; exit 1; }
[ -s "$file" ] || { echo "no input $file (scripts/fast-presets.sh builds it)" >&2; exit 1; }
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

# Prints the CPU milliseconds of each thread of one run, the caller's first.
threads() {
    perf record -q -e task-clock -c 100000 -o "$work/perf.data" -- "$@" >/dev/null 2>&1
    perf report -i "$work/perf.data" -s pid --stdio -F sample,pid 2>/dev/null |
        awk '!/^#/ && NF { printf "%.1f ", $1 / 10 } END { print "" }'
}

echo "load average: $(cut -d' ' -f1-3 /proc/loadavg)"
for preset in $presets; do
    "$bin" compress -q -f -p "$preset" -t 1 -o "$work/ref.sr" "$file"
    for mode in compress decompress; do
        for t in 1 2; do
            if [ "$mode" = compress ]; then
                set -- "$bin" compress -q -f -p "$preset" -t "$t" -o "$work/out.sr" "$file"
            else
                set -- "$bin" decompress -q -f -t "$t" -o "$work/out.dat" "$work/ref.sr"
            fi
            for _ in $(seq "$runs"); do threads "$@"; done >"$work/$mode.$t"
        done
        python3 - "$preset" "$mode" "$work/$mode.1" "$work/$mode.2" <<'PY'
import statistics, sys
preset, mode = sys.argv[1], sys.argv[2]
def load(path):
    rows = []
    for line in open(path):
        ms = [float(x) for x in line.split()]
        # The caller's thread comes first; threads under 1 ms (signal
        # handling, pools left idle) are not coders.
        coders = [x for x in ms[1:] if x >= 1.0]
        rows.append((ms[0], max(coders, default=0.0), sum(ms)))
    return [statistics.median(r[k] for r in rows) for k in range(3)]
one, two = load(sys.argv[3]), load(sys.argv[4])
for t, (caller, coder, total) in ((1, one), (2, two)):
    print(f"{preset:9} {mode:10} -t {t}: caller {caller:6.1f} ms, busiest coder {coder:6.1f} ms, total {total:6.1f} ms")
critical = max(one[0], one[1])
print(f"{preset:9} {mode:10} two threads: {critical / (two[2] / 2):.2f}x by the critical path, coders alone {one[1] / two[1]:.2f}x")
PY
    done
done
