#!/usr/bin/env bash
# Same bits on every x86-64 CPU: runs the same small fits, cross-validations,
# predictions and charts with the release binary natively and under the
# user-mode emulator `qemu-x86_64 -cpu MODEL` for older CPU models, with 1
# and 2 threads, and compares every model file, `--json` output, prediction
# CSV and SVG byte for byte with the native run.
#
#   bash tools/cross-cpu/check.sh             # from anywhere in the repository
#   CROSS_CPU_MODELS="Nehalem Haswell" bash tools/cross-cpu/check.sh
#
# The default (portable) arithmetic must match everywhere: the script fails
# otherwise. The fast mode's outputs are compared too and reported, not
# enforced: fused multiply-add rounds once where the portable mode rounds
# twice, so they match between CPUs that have it and differ on CPUs that do
# not.
#
# Installs Debian's qemu-user (apt-get) when qemu-x86_64 is missing. The
# emulator (QEMU 7.2 in Debian 12) implements SSE up to 4.2, AVX, AVX2 and
# FMA but not AVX-512, so the native run on an AVX-512 machine covers that
# kernel, Nehalem the SSE2 one and Haswell AVX2 with FMA; each run prints
# the kernel it used. Outputs go to target/cross-cpu/.
set -euo pipefail
ROOT=$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)
cd "$ROOT"
T=${CARGO_TARGET_DIR:-$ROOT/target}
OUT=$T/cross-cpu
# Nehalem: SSE4.2, no AVX (the SSE2 kernels). SandyBridge: AVX without AVX2
# (still the SSE2 kernels). Haswell: AVX2 and FMA.
MODELS=${CROSS_CPU_MODELS:-"Nehalem SandyBridge Haswell"}
start=$(date +%s)

if ! command -v qemu-x86_64 >/dev/null 2>&1; then
  echo "cross-cpu: installing qemu-user (Debian package)"
  (apt-get update -qq && apt-get install -y -qq qemu-user) >/dev/null
fi
qemu-x86_64 --version | head -1

cargo build --release --quiet --bin stratanet --example bench
BIN=$T/release/stratanet
PROBE=$T/release/examples/bench
PARTS=$ROOT/demo-data/parts.csv
SENSORS=$ROOT/demo-data/sensors.csv

# One run of every workload into $1, each command run through "$@" after it
# (empty natively, "qemu-x86_64 -cpu MODEL" emulated), with relative output
# paths so that the outputs name the same files.
workloads() {
  local dir=$1
  shift
  rm -rf "$dir"
  for threads in 1 2; do
    local d="$dir/threads-$threads"
    mkdir -p "$d/portable" "$d/fast"
    (
      cd "$d/portable"
      export RAYON_NUM_THREADS=$threads
      # A classifier with restarts, every chart, then its predictions.
      "$@" "$BIN" fit "$PARTS" --target verdict --drop part_id --hidden 12 \
        --epochs 40 --restarts 2 --seed 7 --out model.json --charts charts \
        --json --quiet >fit.json
      "$@" "$BIN" predict model.json "$PARTS" --ignore-extra --out predictions.csv --json \
        >predict.json
      # Cross-validation with its charts.
      "$@" "$BIN" cv "$PARTS" --target verdict --drop part_id --folds 3 \
        --hidden 8 --activation sigmoid --epochs 30 --seed 3 --charts cv-charts \
        --json --quiet >cv.json
      # f32, wide layers (64 x 128 x 128 products: 2^20 multiply-adds, the
      # size at which products are split across threads).
      "$@" "$BIN" fit "$SENSORS" --target condition --drop run_id --hidden 128,128 \
        --precision f32 --activation relu --batch-size 64 --epochs 2 \
        --no-early-stopping --seed 11 --out wide.json --json --quiet >wide.json.out
      # A regression network (identity head), tanh units.
      "$@" "$BIN" fit "$SENSORS" --target torque_nm --drop run_id,condition \
        --hidden 10 --epochs 30 --seed 5 --out regression.json --json --quiet \
        >regression.json.out
    )
    (
      cd "$d/fast"
      export RAYON_NUM_THREADS=$threads
      "$@" "$BIN" fit "$PARTS" --target verdict --drop part_id --hidden 12 \
        --epochs 40 --restarts 2 --seed 7 --arithmetic fast --out model.json \
        --json --quiet >fit.json
      "$@" "$BIN" fit "$SENSORS" --target condition --drop run_id --hidden 128,128 \
        --precision f32 --activation relu --batch-size 64 --epochs 2 \
        --no-early-stopping --seed 11 --arithmetic fast --out wide.json --json \
        --quiet >wide.json.out
    )
  done
}

# Every file of one mode in $1 against the native run; prints differing files.
differs() {
  local mode=$1 other=$2
  local bad=0
  for threads in 1 2; do
    while IFS= read -r f; do
      if ! cmp -s "$OUT/native/threads-1/$mode/$f" "$other/threads-$threads/$mode/$f"; then
        echo "    differs: threads-$threads/$mode/$f"
        bad=1
      fi
    done < <(cd "$OUT/native/threads-1/$mode" && find . -type f | sort)
  done
  return $bad
}

t0=$(date +%s)
workloads "$OUT/native"
echo "native ($("$PROBE" kernel)): $(( $(date +%s) - t0 )) s," \
  "$(cd "$OUT/native/threads-1/portable" && find . -type f | wc -l) files per thread count"
failed=0
report=()
# The native run on 2 threads against 1 thread.
if differs portable "$OUT/native" >/dev/null && differs fast "$OUT/native" >/dev/null; then
  report+=("native, 2 threads: portable identical, fast identical")
else
  echo "native: the thread count changed an output"; differs portable "$OUT/native" || true
  failed=1
fi
# The emulator warns about CPU features its TCG does not implement on every
# start; those lines go to target/cross-cpu/MODEL.stderr with any others.
emulated() {
  qemu-x86_64 -cpu "$model" "$@" 2>>"$OUT/$model.stderr"
}
for model in $MODELS; do
  t0=$(date +%s)
  rm -f "$OUT/$model.stderr"
  kernel=$(emulated "$PROBE" kernel)
  workloads "$OUT/$model" emulated
  seconds=$(( $(date +%s) - t0 ))
  if differs portable "$OUT/$model" >"$OUT/$model.portable.diff"; then
    portable="identical"
  else
    portable="DIFFERENT"
    failed=1
    cat "$OUT/$model.portable.diff"
  fi
  if differs fast "$OUT/$model" >"$OUT/$model.fast.diff"; then
    fast="identical"
  else
    fast="different ($(wc -l <"$OUT/$model.fast.diff") files)"
  fi
  report+=("$model ($kernel, emulated, ${seconds} s): portable $portable, fast $fast")
done
echo
echo "cross-cpu: outputs against the native run (1 and 2 threads each):"
printf '  %s\n' "${report[@]}"
echo "cross-cpu: done in $(( $(date +%s) - start )) s"
if [ "$failed" -ne 0 ]; then
  echo "cross-cpu: FAILED: the portable mode gave different bytes" >&2
  exit 1
fi
