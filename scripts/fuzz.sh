#!/usr/bin/env bash
# Run the libFuzzer targets in fuzz/ for a while each, on one core, and print
# executions per second, peak memory and any crash found.
#
#   scripts/fuzz.sh [SECONDS_PER_TARGET] [TARGET...]
#   scripts/fuzz.sh 120                  # every target, two minutes each
#   scripts/fuzz.sh 600 reader           # the reader alone, ten minutes
#
# Needs a nightly toolchain and cargo-fuzz (cargo install cargo-fuzz). Without
# them it says so and exits 1; the same properties run on stable in
# `cargo test` (tests/fuzz_props.rs). Corpora grow in fuzz/corpus/TARGET
# (not committed); crashes land in fuzz/artifacts/TARGET.
set -euo pipefail
cd "$(dirname "$0")/.."

secs="${1:-60}"
shift || true
if [ "$#" -gt 0 ]; then
  targets=("$@")
else
  mapfile -t targets < <(sed -n 's/^name = "\(.*\)"$/\1/p' fuzz/Cargo.toml | grep -v '^rhoscope-fuzz$')
fi

if ! cargo +nightly --version >/dev/null 2>&1; then
  echo "fuzz.sh: no nightly toolchain (rustup toolchain install nightly); not fuzzing" >&2
  exit 1
fi
if ! cargo +nightly fuzz --version >/dev/null 2>&1; then
  echo "fuzz.sh: cargo-fuzz is not installed (cargo install cargo-fuzz); not fuzzing" >&2
  exit 1
fi

seeds_for() {
  case "$1" in
    config) echo "fuzz/seeds/config" ;;
    *) echo "sample-logs" ;;
  esac
}

status=0
summary=()
for t in "${targets[@]}"; do
  mkdir -p "fuzz/corpus/$t"
  log="fuzz/corpus/$t.log"
  echo "fuzz.sh: $t for ${secs}s" >&2
  if (cd fuzz && cargo +nightly fuzz run "$t" "corpus/$t" "../$(seeds_for "$t")" -- \
        -max_total_time="$secs" -rss_limit_mb=2048 -max_len=65536 \
        -print_final_stats=1) >"$log" 2>&1; then
    found="no crash"
  else
    found="FAILED: see $log and fuzz/artifacts/$t"
    status=1
  fi
  runs=$(sed -n 's/^stat::number_of_executed_units: *//p' "$log" | tail -1)
  rate=$(sed -n 's/^stat::average_exec_per_sec: *//p' "$log" | tail -1)
  rss=$(sed -n 's/^stat::peak_rss_mb: *//p' "$log" | tail -1)
  summary+=("$(printf '%-10s %12s runs %8s execs/s %6s MB peak  %s' "$t" "${runs:-?}" "${rate:-?}" "${rss:-?}" "$found")")
done
printf '%s\n' "${summary[@]}"
exit "$status"
