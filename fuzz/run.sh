#!/usr/bin/env bash
# Fuzzes stratanet's readers of outside input with libFuzzer (cargo fuzz),
# on the stable toolchain.
#
#   bash fuzz/run.sh [SECONDS] [TARGET...]     (default: 600 s, every target)
#
# Builds with `-s none` (no sanitizer: AddressSanitizer needs nightly's -Z
# flags; stratanet has no unsafe code of its own, and the harness checks
# invariants itself) and `-a` (debug assertions and overflow checks on).
# Each target starts from its committed seeds (fuzz/seeds/TARGET) and a
# working corpus (fuzz/corpus/TARGET, not committed) and stops after
# SECONDS or at the first crash, panic, timeout (10 s per input) or
# out-of-memory (2 GiB). A crash is saved under fuzz/artifacts/TARGET;
# copy it to fuzz/regressions/TARGET so that `cargo test` replays it.
# Prints one line per target: executions, corpus size, result.
set -uo pipefail
cd "$(dirname "$0")"
seconds="${1:-600}"
shift || true
targets=("$@")
if [ ${#targets[@]} -eq 0 ]; then
  targets=(csv_table feature_table model_file sweep_files cli_args record_files)
fi
if ! command -v cargo-fuzz >/dev/null; then
  cargo install cargo-fuzz --version 0.13.2 --locked
fi
cargo fuzz build -s none -a || exit 1
status=0
mkdir -p logs
printf '%-14s %12s %8s %8s  %s\n' target executions corpus seconds result
for t in "${targets[@]}"; do
  mkdir -p "corpus/$t" "artifacts/$t"
  log="logs/$t.log"
  start=$(date +%s)
  cargo fuzz run -s none -a "$t" "corpus/$t" "seeds/$t" -- \
    -max_total_time="$seconds" -timeout=10 -rss_limit_mb=2048 \
    -print_final_stats=1 -artifact_prefix="artifacts/$t/" >"$log" 2>&1
  rc=$?
  execs=$(grep -o 'stat::number_of_executed_units: *[0-9]*' "$log" | grep -o '[0-9]*$' | tail -1)
  secs=$(( $(date +%s) - start ))
  corpus=$(find "corpus/$t" -type f | wc -l)
  if [ "$rc" -eq 0 ]; then result=ok; else result="FAILED (exit $rc; see fuzz/$log)"; status=1; fi
  printf '%-14s %12s %8s %8s  %s\n' "$t" "${execs:-?}" "$corpus" "${secs:-?}" "$result"
done
exit $status
