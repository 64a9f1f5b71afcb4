#!/usr/bin/env bash
# Builds every fuzz target and runs each for a short, bounded time.
# Usage: fuzz/smoke.sh [SECONDS_PER_TARGET]
# cargo-fuzz needs nightly features: the nightly toolchain when installed,
# otherwise RUSTC_BOOTSTRAP=1 on stable.
set -euo pipefail
cd "$(dirname "$0")"
secs="${1:-30}"

if ! command -v cargo-fuzz >/dev/null 2>&1; then
  cargo install cargo-fuzz --locked
fi
if rustup run nightly rustc --version >/dev/null 2>&1; then
  fuzz=(cargo +nightly fuzz)
else
  export RUSTC_BOOTSTRAP=1
  fuzz=(cargo fuzz)
fi

# The flags of each target (README.md beside this script): the round-trip
# targets parse no checksums or magic numbers, so they run without
# comparison tracing, from a build of their own (`run` builds it); -max_len
# is the longest input a target reads (its harness ignores the rest).
untraced=(--no-trace-compares --target-dir target/untraced)
build_flags() {
  case "$1" in
    roundtrip | model_roundtrip) echo "${untraced[@]}" ;;
  esac
}
run_flags() {
  case "$1" in
    roundtrip) echo -max_len=2056 ;;
    decode_history) echo -max_len=2050 ;;
  esac
  # The index target reads containers too: the container dictionary.
  case "$1" in
    decode_index) echo -dict=dicts/decode_container.dict ;;
  esac
  if [ -f "dicts/$1.dict" ]; then echo "-dict=dicts/$1.dict"; fi
}

python3 gen_seeds.py
targets=$("${fuzz[@]}" list)
"${fuzz[@]}" build -O -s none
for t in $targets; do
  mkdir -p "corpus/$t" "seeds/$t"
  echo "-- $t (${secs}s)"
  # shellcheck disable=SC2046 # the flags are words
  "${fuzz[@]}" run -O -s none $(build_flags "$t") "$t" "corpus/$t" "seeds/$t" -- \
    -max_total_time="$secs" -timeout=1 -rss_limit_mb=512 -print_final_stats=1 $(run_flags "$t") 2>&1 \
    | grep -E "stat::number_of_executed_units|stat::peak_rss_mb|ERROR|SUMMARY|panicked|deadly" || true
  if compgen -G "artifacts/$t/*" >/dev/null; then
    echo "fuzz target $t found a failing input: fuzz/artifacts/$t/" >&2
    exit 1
  fi
done
