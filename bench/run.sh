#!/usr/bin/env bash
# Side-by-side benchmark of stratanet against a numpy reference, in one run.
#
#   bash bench/run.sh            # from the repository root
#   QUICK=1 bash bench/run.sh    # skip the slow workloads (W3, CSV)
#
# 1. creates target/bench-venv and installs pinned numpy and threadpoolctl,
# 2. builds examples/bench.rs with --release and writes every workload's data,
#    starting weights and row orders under target/bench-data (fixed seeds),
# 3. runs each workload in its own process on both sides (so peak RSS is per
#    workload), thread counts set explicitly on both sides,
# 4. measures numpy's single-thread GEMM GFLOP/s (the peak) and prints one
#    table, with the equal-work check (same final loss within tolerance).
# Results land in target/bench-results.jsonl; the table in target/bench-table.md.
set -euo pipefail
cd "$(dirname "$0")/.."
export CARGO_TARGET_DIR="${CARGO_TARGET_DIR:-$PWD/target}"
T="$CARGO_TARGET_DIR"
VENV="$T/bench-venv"
if [ ! -x "$VENV/bin/python" ]; then
  python3 -m venv "$VENV"
fi
"$VENV/bin/pip" install -q numpy==2.2.6 threadpoolctl==3.5.0
cargo build -q --release --example bench
BIN="$T/release/examples/bench"
DATA="$T/bench-data"
mkdir -p "$DATA"
"$BIN" prepare "$DATA"
if [ -z "${QUICK:-}" ] && [ ! -f "$DATA/big.csv" ]; then
  "$BIN" prepare-csv "$DATA/big.csv"
fi
OUT="$T/bench-results.jsonl"
: > "$OUT"
# numpy: the machine may pin OpenBLAS's core type and cache size; unset both
# for numpy's runs only, and set its thread count explicitly.
np() {
  local threads=$1; shift
  env -u OPENBLAS_CORETYPE -u OPENBLAS_L2_SIZE OPENBLAS_NUM_THREADS="$threads" \
    OMP_NUM_THREADS="$threads" "$VENV/bin/python" bench/reference.py "$@" >> "$OUT"
}
rs() { "$BIN" "$@" >> "$OUT"; }

np 1 peak 1
for w in W1 W2 W2-f64; do
  for a in fast portable; do rs train "$DATA/$w" 1 "$a"; done
  np 1 train "$DATA/$w" 1
done
for a in fast portable; do rs train "$DATA/W2" 2 "$a"; done
np 2 train "$DATA/W2" 2
if [ -z "${QUICK:-}" ]; then
  for t in 1 2; do
    for a in fast portable; do rs train "$DATA/W3" "$t" "$a"; done
    np "$t" train "$DATA/W3" "$t"
  done
fi
for t in 1 2; do
  rs cv "$DATA/W2" "$t" portable
  np "$t" cv "$DATA/W2" "$t"
  rs cv "$DATA/CV-small" "$t" portable
done
for a in fast portable; do rs predict "$DATA/W5" 1 "$a"; done
np 1 predict "$DATA/W5" 1
if [ -z "${QUICK:-}" ]; then
  rs csv "$DATA/big.csv"
fi
"$VENV/bin/python" bench/report.py "$OUT" | tee "$T/bench-table.md"
"$BIN" draw "$DATA/W5" 1 fast | tee -a "$T/bench-table.md"
