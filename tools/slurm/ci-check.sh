#!/usr/bin/env bash
# CI step: a sweep split into a Slurm job array on a real one-node cluster
# gives the same table as the sweep run locally, and a cancelled task is
# caught and can be rerun alone.
#
#   tools/slurm/ci-check.sh [--dir DIR]
#
# 1. starts the local cluster (local-cluster.sh start; --dir is passed on)
# 2. writes a plan on demo-data/parts.csv: 3 configurations x 3 folds = 9 trials
# 3. runs it as a job array (run-array.sh + sweep-array.sbatch), merges it,
#    runs the same sweep locally with the same seed, and compares the tables
# 4. a task that fails is reported as failed (index one past the plan)
# 5. submits the plan again held, cancels task 3 before it starts, releases
#    the rest: run-array.sh and sweep-merge both name trial 3; rerunning
#    index 3 alone completes the merge, equal to the local table
# 6. stops the cluster on exit, pass or fail (unless it was already running
#    before this step started: then it is left running)
#
# Environment: STRATANET, the stratanet binary [target/release/stratanet in
# this repository; a relative path is taken from the current folder]. Build it
# with `cargo build --release`. Needs root (see local-cluster.sh). Work files:
# target/slurm-ci/ in this repository. Exit 0 when every check passed.
set -euo pipefail

SCRIPT_DIR=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
REPO_ROOT=$(cd "$SCRIPT_DIR/../.." && pwd)
CLUSTER=$SCRIPT_DIR/local-cluster.sh
RUN_ARRAY=$SCRIPT_DIR/run-array.sh
BATCH=$SCRIPT_DIR/sweep-array.sbatch
WORK=$REPO_ROOT/target/slurm-ci
DATA=$REPO_ROOT/demo-data/parts.csv
# Small and quick: 3 configurations x 3 folds, few epochs.
SWEEP_OPTIONS=(--target verdict --drop part_id --grid-hidden "4,8,8-4" --folds 3 --epochs 60 --seed 7)
CANCEL_TASK=3

now() { printf '%s' "${EPOCHREALTIME/,/.}"; }
since() { awk -v a="$1" -v b="$(now)" 'BEGIN { printf "%.1f s", b - a }'; }
step() { printf '\n--- %s\n' "$*"; STEP_T=$(now); }
PASSED=0
FAILED=0
pass() { PASSED=$((PASSED + 1)); printf 'ci-check: ok: %s (%s)\n' "$*" "$(since "$STEP_T")"; }
fail() { FAILED=$((FAILED + 1)); printf 'ci-check: FAILED: %s\n' "$*" >&2; exit 1; }

CLUSTER_ARGS=()
while [ $# -gt 0 ]; do
  case $1 in
    --dir) [ $# -ge 2 ] || { echo "ci-check: --dir needs a folder" >&2; exit 2; }; CLUSTER_ARGS=(--dir "$2"); shift 2 ;;
    --dir=*) CLUSTER_ARGS=(--dir "${1#*=}"); shift ;;
    -h|--help) sed -n '2,/^set -euo/p' "${BASH_SOURCE[0]}" | sed '$d; s/^# \{0,1\}//'; exit 0 ;;
    *) echo "ci-check: unknown argument '$1' (see --help)" >&2; exit 2 ;;
  esac
done

T0=$(now)
if [ -n "${STRATANET:-}" ]; then
  case $STRATANET in /*) ;; *) STRATANET=$PWD/$STRATANET ;; esac
else
  STRATANET=$REPO_ROOT/target/release/stratanet
fi
[ -x "$STRATANET" ] || { echo "ci-check: no stratanet binary at $STRATANET; build it with 'cargo build --release' or set STRATANET" >&2; exit 2; }
export STRATANET
echo "ci-check: stratanet $STRATANET"

# jq reads the JSON tables; install it like the cluster's packages.
if ! command -v jq >/dev/null 2>&1; then
  echo "ci-check: installing jq"
  { apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends jq; } >/dev/null 2>&1 \
    || { echo "ci-check: could not install jq (apt-get install jq)" >&2; exit 2; }
fi

STOP_AT_END=yes
finish() {
  local code=$?
  trap - EXIT
  if [ "$STOP_AT_END" = yes ]; then
    step "stop the cluster"
    if bash "$CLUSTER" stop "${CLUSTER_ARGS[@]}"; then
      pass "cluster stopped"
    else
      FAILED=$((FAILED + 1)); code=1
      echo "ci-check: FAILED: the cluster did not stop cleanly" >&2
    fi
  else
    printf '\nci-check: the cluster was running before this step; left running\n'
  fi
  [ "$code" -eq 0 ] || [ "$FAILED" -gt 0 ] || FAILED=1
  printf 'ci-check: whole step took %s\n' "$(since "$T0")"
  printf 'slurm: %d passed, %d failed\n' "$PASSED" "$FAILED"
  exit "$code"
}

# ------------------------------------------------------------------ 1. start
step "start the cluster"
if bash "$CLUSTER" status "${CLUSTER_ARGS[@]}" >/dev/null 2>&1; then
  STOP_AT_END=no
fi
trap finish EXIT
bash "$CLUSTER" start "${CLUSTER_ARGS[@]}" || fail "the cluster did not start"
eval "$(bash "$CLUSTER" env "${CLUSTER_ARGS[@]}")"
export SLURM_CONF
pass "cluster up"

rm -rf "$WORK"
mkdir -p "$WORK/logs"
PLAN=$WORK/plan.jsonl
export SWEEP_PLAN=$PLAN SWEEP_DATA=$DATA

# ------------------------------------------------------------------ 2. plan, local
step "write the plan and run the same sweep locally"
out=$("$STRATANET" sweep "$DATA" "${SWEEP_OPTIONS[@]}" --write-plan "$PLAN" --json --quiet) \
  || fail "writing the plan failed"
TRIALS=$(jq -r .trials <<<"$out")
echo "plan: $TRIALS trials ($(jq -r .configurations <<<"$out") configurations)"
[ "$TRIALS" -gt "$CANCEL_TASK" ] || fail "the plan has $TRIALS trials; the cancel test needs more than $CANCEL_TASK"
"$STRATANET" sweep "$DATA" "${SWEEP_OPTIONS[@]}" --json --quiet >"$WORK/local.json" || fail "local sweep (JSON) failed"
"$STRATANET" sweep "$DATA" "${SWEEP_OPTIONS[@]}" --quiet >"$WORK/local.txt" || fail "local sweep (text) failed"
pass "plan of $TRIALS trials and the local table"

# Merges the trials in folder $1 into $WORK/merged-$2.{json,txt} and compares
# with the local sweep: the text table (without its first line, which names
# the command) and the "rows" of the JSON, byte for byte.
merge_and_compare() {
  local dir=$1 tag=$2 m l
  "$STRATANET" sweep-merge "$PLAN" "$dir"/trial-*.json --json --quiet >"$WORK/merged-$tag.json" \
    || fail "sweep-merge of $dir failed"
  "$STRATANET" sweep-merge "$PLAN" "$dir"/trial-*.json --quiet >"$WORK/merged-$tag.txt" \
    || fail "sweep-merge of $dir (text) failed"
  if ! cmp -s <(tail -n +2 "$WORK/local.txt") <(tail -n +2 "$WORK/merged-$tag.txt"); then
    diff -u --label local --label merged <(tail -n +2 "$WORK/local.txt") <(tail -n +2 "$WORK/merged-$tag.txt") | sed 's/^/  /' >&2 || true
    fail "the merged text table differs from the local one (- local, + merged)"
  fi
  # "rows" is the last key of both objects (serde_json writes keys in
  # order), so the raw text from '"rows":' on is the rows array, byte for byte.
  for f in "$WORK/local.json" "$WORK/merged-$tag.json"; do
    [ "$(jq -r 'keys_unsorted | last' "$f")" = rows ] || fail "$f: 'rows' is not the last key; the raw comparison below needs it"
  done
  l=$(<"$WORK/local.json"); m=$(<"$WORK/merged-$tag.json")
  if [ "${l#*\"rows\":}" != "${m#*\"rows\":}" ]; then
    diff -u --label local --label merged <(jq .rows "$WORK/local.json") <(jq .rows "$WORK/merged-$tag.json") | sed 's/^/  /' >&2 || true
    fail "the merged JSON rows differ from the local sweep's (- local, + merged)"
  fi
  echo "rows: equal byte for byte ($(jq '.rows | length' "$WORK/local.json") configurations)"
  # TODO(sweep-merge-json): compare the whole --json output once sweep-merge
  # writes every key sweep writes. Until then, show what is not compared.
  local only_local only_merged
  only_local=$(jq -r --slurpfile m "$WORK/merged-$tag.json" 'keys - ($m[0] | keys) | join(", ")' "$WORK/local.json")
  only_merged=$(jq -r --slurpfile l "$WORK/local.json" 'keys - ($l[0] | keys) | join(", ")' "$WORK/merged-$tag.json")
  echo "not compared yet: keys only in sweep's JSON: ${only_local:-none}; only in sweep-merge's: ${only_merged:-none}; 'command' differs by design"
  [ "$(jq -c .metric "$WORK/local.json")" = "$(jq -c .metric "$WORK/merged-$tag.json")" ] \
    || fail "key 'metric' differs: $(jq -c .metric "$WORK/local.json") vs $(jq -c .metric "$WORK/merged-$tag.json")"
}

# ------------------------------------------------------------------ 3. array
step "run the plan as a job array, merge, compare"
SWEEP_OUT_DIR=$WORK/trials bash "$RUN_ARRAY" --array "0-$((TRIALS - 1))" --logs "$WORK/logs" --timeout 300 "$BATCH" \
  || fail "the job array did not complete"
merge_and_compare "$WORK/trials" array
pass "array of $TRIALS tasks merged equals the local sweep"

# ------------------------------------------------------------------ 4. failure
step "a failing task is reported"
set +e
out=$(SWEEP_OUT_DIR=$WORK/trials-failing bash "$RUN_ARRAY" --array "$TRIALS" --logs "$WORK/logs" --timeout 120 "$BATCH" 2>&1)
code=$?
set -e
printf '%s\n' "$out" | sed 's/^/  | /'
[ "$code" -eq 1 ] || fail "run-array.sh exited $code for a failing task, not 1"
grep -q "task $TRIALS: FAILED" <<<"$out" || fail "run-array.sh did not name the failed task $TRIALS"
pass "task $TRIALS (past the plan's end) reported as failed"

# ------------------------------------------------------------------ 5. cancel
step "cancel task $CANCEL_TASK before it runs, merge refuses, rerun it alone"
OUT2=$WORK/trials-cancel
job=$(SWEEP_OUT_DIR=$OUT2 RUN_ARRAY_MARKERS=$WORK/logs sbatch --parsable --hold \
  --array="0-$((TRIALS - 1))" --output="$WORK/logs/%A_%a.out" "$BATCH") || fail "sbatch --hold failed"
job=${job%%;*}
echo "submitted job $job held"
scancel "${job}_$CANCEL_TASK" || fail "scancel ${job}_$CANCEL_TASK failed"
if squeue -h -r -j "$job" -o '%i' | grep -qx "${job}_$CANCEL_TASK"; then
  fail "task $CANCEL_TASK is still queued after scancel"
fi
scontrol release "$job" || fail "scontrol release $job failed"
set +e
out=$(bash "$RUN_ARRAY" --job "$job" --array "0-$((TRIALS - 1))" --logs "$WORK/logs" --timeout 300 2>&1)
code=$?
set -e
printf '%s\n' "$out" | sed 's/^/  | /'
[ "$code" -eq 1 ] || fail "run-array.sh exited $code with task $CANCEL_TASK cancelled, not 1"
grep -q "did not: $CANCEL_TASK\$" <<<"$out" || fail "run-array.sh did not name task $CANCEL_TASK as the only one missing"
[ ! -e "$OUT2/trial-$CANCEL_TASK.json" ] || fail "the cancelled task wrote $OUT2/trial-$CANCEL_TASK.json"

set +e
out=$("$STRATANET" sweep-merge "$PLAN" "$OUT2"/trial-*.json --quiet 2>&1)
code=$?
set -e
printf '%s\n' "$out" | sed 's/^/  | /'
[ "$code" -eq 2 ] || fail "sweep-merge exited $code with trial $CANCEL_TASK missing, not 2"
grep -q "no results for trials $CANCEL_TASK\$" <<<"$out" || fail "sweep-merge did not name trial $CANCEL_TASK as the only missing one"
echo "merge refused and named trial $CANCEL_TASK"

SWEEP_OUT_DIR=$OUT2 bash "$RUN_ARRAY" --array "$CANCEL_TASK" --logs "$WORK/logs" --timeout 120 "$BATCH" \
  || fail "rerunning task $CANCEL_TASK failed"
merge_and_compare "$OUT2" rerun
pass "cancelled task named by run-array.sh and sweep-merge; rerun alone, merge equals the local sweep"
# finish (on EXIT) stops the cluster and prints the summary.
