#!/usr/bin/env bash
# Run the libFuzzer targets in fuzz/ for a while each, on one core, and print
# executions per second, peak memory and any crash found.
#
#   scripts/fuzz.sh [SECONDS_PER_TARGET] [TARGET...]
#   scripts/fuzz.sh 120                  # every target, two minutes each
#   scripts/fuzz.sh 600 reader           # the reader alone, ten minutes
#   FUZZ_SANITIZER=address scripts/fuzz.sh 120 reader   # with AddressSanitizer
#
# The library has no `unsafe` code, so the default builds without a sanitizer
# (cargo fuzz --sanitizer none): debug assertions and overflow checks stay on,
# and a run does about a hundred times more inputs than under AddressSanitizer.
# Inputs are kept short (max_len per target below): the properties concern how
# lines, fields and pieces meet, which a few kilobytes exercise fully.
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
    config) echo "../fuzz/seeds/config" ;;
    reader | pipeline) echo "../fuzz/seeds/reader ../tests/fixtures" ;;
    *) echo "" ;;
  esac
}

max_len_for() {
  case "$1" in
    pipeline) echo 16384 ;;
    chart) echo 1024 ;;
    *) echo "${FUZZ_MAX_LEN:-4096}" ;;
  esac
}

sanitizer="${FUZZ_SANITIZER:-none}"

status=0
summary=()
for t in "${targets[@]}"; do
  mkdir -p "fuzz/corpus/$t"
  log="fuzz/corpus/$t.log"
  echo "fuzz.sh: $t for ${secs}s" >&2
  # shellcheck disable=SC2046 # the seed folders are words on purpose
  if (cd fuzz && cargo +nightly fuzz run --sanitizer "$sanitizer" "$t" "corpus/$t" $(seeds_for "$t") -- \
        -max_total_time="$secs" -rss_limit_mb=2048 -max_len="$(max_len_for "$t")" \
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
