#!/usr/bin/env bash
# CI step: a sweep split into a Slurm job array on a real one-node cluster
# gives the same table as the sweep run locally, and a cancelled task is
# caught and can be rerun alone.
#
#   tools/slurm/ci-check.sh [--dir DIR]
#
# 1. starts the local cluster (local-cluster.sh start; --dir is passed on)
# 2. writes a plan on demo-data/parts.csv: 3 configurations x 3 folds = 9
#    trials, spread over 4 array tasks (task i runs trials i, i+4, ...)
# 3. runs it as a job array (run-array.sh + sweep-array.sbatch), merges it,
#    runs the same sweep locally with the same seed, and compares the whole
#    --json output and the whole text, byte for byte
# 4. a task that fails is reported as failed (task index one past the last)
# 5. submits the plan again held, cancels task 3 before it starts, releases
#    the rest: run-array.sh, sweep-status and sweep-merge name it (task 3,
#    trials 3 and 7); rerunning the index sweep-status prints completes the
#    merge, equal to the local sweep
# 6. successive halving as one array per round (4 configurations, factor 2:
#    2 rounds), merged round by round, equals the local halving sweep
# 7. stops the cluster on exit, pass or fail (unless it was already running
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
HALVING_OPTIONS=(--target verdict --drop part_id --grid-hidden "4,8" --grid-learning-rate "0.01,0.03" --halving 2 --folds 3 --epochs 40 --seed 7)
TASKS=4
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
export SWEEP_PLAN=$PLAN SWEEP_DATA=$DATA SWEEP_TASKS=$TASKS

# ------------------------------------------------------------------ 2. plan, local
step "write the plan and run the same sweep locally"
out=$("$STRATANET" sweep "$DATA" "${SWEEP_OPTIONS[@]}" --write-plan "$PLAN" --json --quiet) \
  || fail "writing the plan failed"
TRIALS=$(jq -r .trials <<<"$out")
echo "plan: $TRIALS trials ($(jq -r .configurations <<<"$out") configurations) in $TASKS tasks"
[ "$TRIALS" -gt "$TASKS" ] || fail "the plan has $TRIALS trials; the test needs more than $TASKS"
"$STRATANET" sweep "$DATA" "${SWEEP_OPTIONS[@]}" --json --quiet >"$WORK/local.json" || fail "local sweep (JSON) failed"
"$STRATANET" sweep "$DATA" "${SWEEP_OPTIONS[@]}" --quiet >"$WORK/local.txt" || fail "local sweep (text) failed"
pass "plan of $TRIALS trials and the local table"

# Merges the trial folder $2 of plan $1 into $WORK/merged-$3.{json,txt} and
# compares the whole JSON and the whole text with $4.{json,txt}, byte for byte
# (given --data, the merge reads and reports the table as the local sweep does).
merge_and_compare() {
  local plan=$1 dir=$2 tag=$3 local=$4
  "$STRATANET" sweep-merge "$plan" "$dir" --data "$DATA" --json --quiet >"$WORK/merged-$tag.json" \
    || fail "sweep-merge of $dir failed"
  "$STRATANET" sweep-merge "$plan" "$dir" --data "$DATA" --quiet >"$WORK/merged-$tag.txt" \
    || fail "sweep-merge of $dir (text) failed"
  for ext in json txt; do
    if ! cmp -s "$local.$ext" "$WORK/merged-$tag.$ext"; then
      diff -u --label local --label merged "$local.$ext" "$WORK/merged-$tag.$ext" | sed 's/^/  /' >&2 || true
      fail "the merged $ext output differs from the local sweep's (- local, + merged)"
    fi
  done
  echo "merged output equals the local sweep's, JSON and text, byte for byte ($(jq '.rows | length' "$local.json") configurations)"
}

# ------------------------------------------------------------------ 3. array
step "run the plan as a job array of $TASKS tasks, merge, compare"
SWEEP_OUT_DIR=$WORK/trials bash "$RUN_ARRAY" --array "0-$((TASKS - 1))" --logs "$WORK/logs" --timeout 300 "$BATCH" \
  || fail "the job array did not complete"
merge_and_compare "$PLAN" "$WORK/trials" array "$WORK/local"
pass "array of $TASKS tasks ($TRIALS trials) merged equals the local sweep"

# ------------------------------------------------------------------ 4. failure
step "a failing task is reported"
set +e
out=$(SWEEP_OUT_DIR=$WORK/trials-failing bash "$RUN_ARRAY" --array "$TASKS" --logs "$WORK/logs" --timeout 120 "$BATCH" 2>&1)
code=$?
set -e
printf '%s\n' "$out" | sed 's/^/  | /'
[ "$code" -eq 1 ] || fail "run-array.sh exited $code for a failing task, not 1"
grep -q "task $TASKS: FAILED" <<<"$out" || fail "run-array.sh did not name the failed task $TASKS"
pass "task $TASKS (past the last) reported as failed"

# ------------------------------------------------------------------ 5. cancel
step "cancel task $CANCEL_TASK before it runs; status and merge name it; rerun it alone"
OUT2=$WORK/trials-cancel
job=$(SWEEP_OUT_DIR=$OUT2 RUN_ARRAY_MARKERS=$WORK/logs sbatch --parsable --hold \
  --array="0-$((TASKS - 1))" --output="$WORK/logs/%A_%a.out" "$BATCH") || fail "sbatch --hold failed"
job=${job%%;*}
echo "submitted job $job held"
scancel "${job}_$CANCEL_TASK" || fail "scancel ${job}_$CANCEL_TASK failed"
if squeue -h -r -j "$job" -o '%i' | grep -qx "${job}_$CANCEL_TASK"; then
  fail "task $CANCEL_TASK is still queued after scancel"
fi
scontrol release "$job" || fail "scontrol release $job failed"
set +e
out=$(bash "$RUN_ARRAY" --job "$job" --array "0-$((TASKS - 1))" --logs "$WORK/logs" --timeout 300 2>&1)
code=$?
set -e
printf '%s\n' "$out" | sed 's/^/  | /'
[ "$code" -eq 1 ] || fail "run-array.sh exited $code with task $CANCEL_TASK cancelled, not 1"
grep -q "did not: $CANCEL_TASK\$" <<<"$out" || fail "run-array.sh did not name task $CANCEL_TASK as the only one missing"

status=$("$STRATANET" sweep-status "$PLAN" "$OUT2" --tasks "$TASKS" --json) || fail "sweep-status failed"
echo "sweep-status: $(jq -c '{missing, rerun_tasks}' <<<"$status")"
rerun=$(jq -r .rerun_tasks <<<"$status")
[ "$rerun" = "$CANCEL_TASK" ] || fail "sweep-status lists tasks '$rerun' to resubmit, not $CANCEL_TASK"
expected_missing=$(seq "$CANCEL_TASK" "$TASKS" $((TRIALS - 1)) | paste -sd, -)
[ "$(jq -r '.missing | map(tostring) | join(",")' <<<"$status")" = "$expected_missing" ] \
  || fail "sweep-status lists missing trials $(jq -c .missing <<<"$status"), not $expected_missing"

set +e
out=$("$STRATANET" sweep-merge "$PLAN" "$OUT2" --quiet 2>&1)
code=$?
set -e
printf '%s\n' "$out" | sed 's/^/  | /'
[ "$code" -eq 2 ] || fail "sweep-merge exited $code with task $CANCEL_TASK missing, not 2"
grep -q "no results for trials $expected_missing;" <<<"$out" || fail "sweep-merge did not name trials $expected_missing as the missing ones"
echo "merge refused and named trials $expected_missing"

SWEEP_OUT_DIR=$OUT2 bash "$RUN_ARRAY" --array "$rerun" --logs "$WORK/logs" --timeout 120 "$BATCH" \
  || fail "rerunning task $rerun failed"
merge_and_compare "$PLAN" "$OUT2" rerun "$WORK/local"
pass "cancelled task named by run-array.sh, sweep-status and sweep-merge; rerun alone, merge equals the local sweep"

# ------------------------------------------------------------------ 6. halving
step "successive halving as one job array per round"
"$STRATANET" sweep "$DATA" "${HALVING_OPTIONS[@]}" --json --quiet >"$WORK/halving-local.json" || fail "local halving sweep failed"
"$STRATANET" sweep "$DATA" "${HALVING_OPTIONS[@]}" --quiet >"$WORK/halving-local.txt" || fail "local halving sweep (text) failed"
round=1
HPLAN=$WORK/halving-round-1.jsonl
"$STRATANET" sweep "$DATA" "${HALVING_OPTIONS[@]}" --write-plan "$HPLAN" --quiet >/dev/null || fail "writing the halving plan failed"
while :; do
  SWEEP_PLAN=$HPLAN SWEEP_OUT_DIR=$WORK/halving-trials-$round bash "$RUN_ARRAY" --array "0-$((TASKS - 1))" \
    --logs "$WORK/logs" --timeout 300 "$BATCH" || fail "round $round's array did not complete"
  rounds=$(head -1 "$HPLAN" | jq -r .plan.halving.rounds)
  if [ "$round" -lt "$rounds" ]; then
    next=$WORK/halving-round-$((round + 1)).jsonl
    "$STRATANET" sweep-merge "$HPLAN" "$WORK/halving-trials-$round" --next-plan "$next" --quiet >/dev/null \
      || fail "merging round $round failed"
    HPLAN=$next
    round=$((round + 1))
  else
    merge_and_compare "$HPLAN" "$WORK/halving-trials-$round" halving "$WORK/halving-local"
    break
  fi
done
pass "successive halving in $round rounds of arrays equals the local halving sweep"
# finish (on EXIT) stops the cluster and prints the summary.
