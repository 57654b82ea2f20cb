#!/usr/bin/env bash
# Submits a batch script as a Slurm job array, waits for it, and reports each
# task. Works without Slurm accounting (no sacct).
#
#   run-array.sh [options] SCRIPT [SCRIPT ARGS...]   submit, wait, report
#   run-array.sh [options] --job JOBID               wait for and report a job
#                                                    already submitted
# Options:
#   --array SPEC     task indices, as sbatch --array takes them: 0-8, 1,3,5,
#                    0-99%10 (at most 10 at once). Without it the script's own
#                    "#SBATCH --array" line is used. With --job, the indices
#                    the job was submitted with: Slurm forgets a task that was
#                    cancelled while pending, so only this catches it.
#   --logs DIR       each task's output goes to DIR/JOBID_TASK.out and its
#                    exit marker to DIR/JOBID_TASK.exit [./slurm-logs]
#   --interval SEC   how often to poll squeue [0.5]
#   --timeout SEC    cancel the job and fail after SEC seconds [no limit]
#   --sbatch-arg A   one more argument for sbatch (repeat as needed), e.g.
#                    --sbatch-arg=--partition=short
#
# How it knows a task's outcome: while the job's record exists (MinJobAge
# after it ends, 300 s by default) 'scontrol show job' gives each task's state
# and exit code; failing that, the exit marker DIR/JOBID_TASK.exit that the
# script writes when RUN_ARRAY_MARKERS is set (sweep-array.sbatch does; this
# script exports RUN_ARRAY_MARKERS=DIR to the job). A task with neither counts
# as failed.
#
# Exit status: 0 when every task completed with exit code 0; 1 when any task
# failed, was cancelled, timed out or left no trace (each is listed with the
# tail of its output); 2 for a usage error.
#
# Clients find the cluster through SLURM_CONF. When it is unset and there is
# no /etc/slurm/slurm.conf, the local cluster's configuration
# (target/slurm/etc/slurm.conf, from local-cluster.sh) is used.
set -euo pipefail

SCRIPT_DIR=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
REPO_ROOT=$(cd "$SCRIPT_DIR/../.." && pwd)

usage() {
  sed -n '2,/^set -euo/p' "${BASH_SOURCE[0]}" | sed '$d; s/^# \{0,1\}//' >&2
  exit 2
}
bad() { printf 'run-array: %s (see --help)\n' "$*" >&2; exit 2; }
die() { printf 'run-array: %s\n' "$*" >&2; exit 1; }
say() { printf 'run-array: %s\n' "$*"; }
now() { printf '%s' "${EPOCHREALTIME/,/.}"; }
tasks() { if [ "$1" -eq 1 ]; then echo "1 task"; else echo "$1 tasks"; fi; }
since() { awk -v a="$1" -v b="$(now)" 'BEGIN { printf "%.1f s", b - a }'; }

ARRAY=''
LOGS=slurm-logs
INTERVAL=0.5
TIMEOUT=0
JOB=''
SBATCH_ARGS=()
while [ $# -gt 0 ]; do
  case $1 in
    --array) [ $# -ge 2 ] || bad "--array needs a value"; ARRAY=$2; shift 2 ;;
    --array=*) ARRAY=${1#*=}; shift ;;
    --logs) [ $# -ge 2 ] || bad "--logs needs a folder"; LOGS=$2; shift 2 ;;
    --logs=*) LOGS=${1#*=}; shift ;;
    --interval) [ $# -ge 2 ] || bad "--interval needs seconds"; INTERVAL=$2; shift 2 ;;
    --interval=*) INTERVAL=${1#*=}; shift ;;
    --timeout) [ $# -ge 2 ] || bad "--timeout needs seconds"; TIMEOUT=$2; shift 2 ;;
    --timeout=*) TIMEOUT=${1#*=}; shift ;;
    --job) [ $# -ge 2 ] || bad "--job needs a job ID"; JOB=$2; shift 2 ;;
    --job=*) JOB=${1#*=}; shift ;;
    --sbatch-arg) [ $# -ge 2 ] || bad "--sbatch-arg needs a value"; SBATCH_ARGS+=("$2"); shift 2 ;;
    --sbatch-arg=*) SBATCH_ARGS+=("${1#*=}"); shift ;;
    -h|--help) usage ;;
    --) shift; break ;;
    -*) bad "unknown option '$1'" ;;
    *) break ;;
  esac
done
case $INTERVAL in ''|*[!0-9.]*) bad "--interval wants seconds, got '$INTERVAL'" ;; esac
case $TIMEOUT in ''|*[!0-9]*) bad "--timeout wants whole seconds, got '$TIMEOUT'" ;; esac
case $ARRAY in *[!0-9,:%-]*) bad "--array '$ARRAY' is not an index list like 0-8, 1,3,5 or 0-99%10" ;; esac
if [ -n "$JOB" ]; then
  case $JOB in ''|*[!0-9]*) bad "--job wants the numeric ID of an array job, got '$JOB'" ;; esac
  [ $# -eq 0 ] || bad "give either --job JOBID or a script, not both"
else
  [ $# -ge 1 ] || bad "no batch script given"
  [ -f "$1" ] || bad "batch script '$1' not found"
fi

if [ -z "${SLURM_CONF:-}" ] && [ ! -e /etc/slurm/slurm.conf ] && [ -e "$REPO_ROOT/target/slurm/etc/slurm.conf" ]; then
  export SLURM_CONF=$REPO_ROOT/target/slurm/etc/slurm.conf
  say "using the local cluster (SLURM_CONF=$SLURM_CONF)"
fi
for tool in sbatch squeue scontrol scancel; do
  command -v "$tool" >/dev/null 2>&1 || die "'$tool' not found; install slurm-client, or start the local cluster with local-cluster.sh start"
done

mkdir -p "$LOGS" || die "cannot create the log folder '$LOGS'"
LOGS=$(cd "$LOGS" && pwd)
T0=$(now)
# Job IDs start again at 1 when a cluster's state folder is new, so an exit
# marker older than this job is another job's: only markers written after
# the submission count.
SUBMITTED_AT=$(date +%s)

# ---------------------------------------------------------------- submit

ATTACHED=$JOB
if [ -z "$JOB" ]; then
  script=$1; shift
  args=(--parsable --output="$LOGS/%A_%a.out")
  [ -z "$ARRAY" ] || args+=(--array="$ARRAY")
  out=$(RUN_ARRAY_MARKERS=$LOGS sbatch "${args[@]}" "${SBATCH_ARGS[@]}" "$script" "$@" 2>&1) \
    || die "sbatch refused $script: $out"
  JOB=${out##*$'\n'}   # the last line: JOBID or JOBID;CLUSTER
  JOB=${JOB%%;*}
  case $JOB in ''|*[!0-9]*) die "sbatch printed no job ID: $out" ;; esac
  say "submitted $script as job $JOB"
fi

# ---------------------------------------------------------------- expected tasks

# Expands "0-8:2,11,13-15%4" to one index a line.
expand_indices() {
  local spec=${1%%%*} part a b step
  local IFS=,
  for part in $spec; do
    step=1
    case $part in *:*) step=${part#*:}; part=${part%%:*} ;; esac
    case $part in
      *-*) a=${part%-*}; b=${part#*-} ;;
      *) a=$part; b=$part ;;
    esac
    seq "$a" "$step" "$b"
  done
}

# Every record of the job, one line each: JobId=... ArrayTaskId=... JobState=...
job_records() { timeout 10 scontrol show job -o "$JOB" 2>/dev/null; }
# Prints the named fields of each record, tab-separated ("-" when absent).
# scontrol separates fields by spaces, so a path with a space is cut short.
fields() {
  awk -v want="$*" 'BEGIN { n = split(want, k, " ") }
    { delete v
      for (i = 1; i <= NF; i++) { p = index($i, "="); if (p) v[substr($i, 1, p - 1)] = substr($i, p + 1) }
      line = ""
      for (j = 1; j <= n; j++) line = line (j > 1 ? "\t" : "") ((k[j] in v) ? v[k[j]] : "-")
      print line }'
}

if ! records=$(job_records); then
  # Slurm forgets a job MinJobAge after it ends; the exit markers remain.
  if [ -z "$ATTACHED" ] || [ -z "$ARRAY" ]; then
    die "scontrol knows no job $JOB (it may have ended more than MinJobAge ago; with --array, the exit markers in --logs are read instead)"
  fi
  say "scontrol knows no job $JOB any more; reading the exit markers in $LOGS (not checked against the job's submit time, which Slurm forgot)"
  SUBMITTED_AT=0
elif [ -n "$ATTACHED" ]; then
  SUBMITTED_AT=$(date -d "$(fields SubmitTime <<<"$records" | sort | head -n 1)" +%s 2>/dev/null) || SUBMITTED_AT=0
fi
if [ -n "$records" ] && ! grep -q 'ArrayTaskId=' <<<"$records"; then
  if [ -z "$ATTACHED" ]; then
    scancel "$JOB" 2>/dev/null || true
    die "job $JOB is not an array job, so it was cancelled; give --array (or an #SBATCH --array line in the script)"
  fi
  die "job $JOB is not an array job"
fi
# Slurm keeps no record of a task cancelled while it was pending, so the
# indices asked for are the reference; the job's records serve when none
# were given.
if [ -n "$ARRAY" ]; then
  expected=$(expand_indices "$ARRAY" | sort -n -u)
else
  expected=$(fields ArrayTaskId <<<"$records" | while read -r spec; do expand_indices "$spec"; done | sort -n -u)
  if [ -n "$ATTACHED" ]; then
    say "note: without --array only the tasks Slurm still lists are checked; one cancelled while pending is not"
  fi
fi
[ -n "$expected" ] || die "job $JOB lists no array tasks"
say "job $JOB: $(tasks "$(wc -l <<<"$expected")"), indices $(head -n 1 <<<"$expected") to $(tail -n 1 <<<"$expected")"

# Leave the job alone when interrupted: it is the user's to cancel.
trap 'printf "\nrun-array: interrupted; job %s keeps running (scancel %s stops it)\n" "$JOB" "$JOB" >&2; exit 130' INT TERM

# ---------------------------------------------------------------- wait

last=''
errors=0
while :; do
  if q=$(timeout 10 squeue -h -r -j "$JOB" -o '%T' 2>&1); then
    errors=0
    [ -n "$q" ] || break
    summary=$(sort <<<"$q" | uniq -c | awk '{ printf "%s%s %s", sep, $2, $1; sep = ", " }')
    if [ "$summary" != "$last" ]; then
      say "$(since "$T0"): $summary"
      last=$summary
    fi
  else
    # squeue -j on a job that has left the controller's memory is an error.
    case $q in *"Invalid job id"*) break ;; esac
    errors=$((errors + 1))
    [ "$errors" -lt 10 ] || die "squeue failed 10 times in a row: $q"
  fi
  if [ "$TIMEOUT" -gt 0 ] && awk -v a="$T0" -v b="$(now)" -v t="$TIMEOUT" 'BEGIN { exit !(b - a > t) }'; then
    scancel "$JOB" 2>/dev/null || true
    die "job $JOB still in the queue after $TIMEOUT s; cancelled it"
  fi
  sleep "$INTERVAL"
done
say "job $JOB left the queue after $(since "$T0")"

# ---------------------------------------------------------------- report

records=$(job_records) || records=''
declare -A STATE EXIT OUTPUT
while IFS=$'\t' read -r task state code output; do
  case $task in ''|*[!0-9]*) continue ;; esac   # a range: tasks not started
  STATE[$task]=$state
  EXIT[$task]=$code
  OUTPUT[$task]=$output
done < <(fields ArrayTaskId JobState ExitCode StdOut <<<"$records")

ok=0
failed=()
while read -r task; do
  marker=$LOGS/${JOB}_$task.exit
  if [ -z "${STATE[$task]:-}" ] && [ -s "$marker" ] && [ "$(stat -c %Y "$marker")" -ge "$SUBMITTED_AT" ]; then
    code=$(head -n 1 "$marker")
    if [ "$code" = 0 ]; then STATE[$task]=COMPLETED; else STATE[$task]=FAILED; fi
    EXIT[$task]="$code (exit marker)"
  fi
  [ -n "${OUTPUT[$task]:-}" ] || OUTPUT[$task]=$LOGS/${JOB}_$task.out
  case ${STATE[$task]:-}/${EXIT[$task]:-} in
    "COMPLETED/0:0"|"COMPLETED/0 (exit marker)") ok=$((ok + 1)) ;;
    *) failed+=("$task") ;;
  esac
done <<<"$expected"

total=$(wc -l <<<"$expected")
if [ ${#failed[@]} -eq 0 ]; then
  say "job $JOB: $(tasks "$total") of $total completed with exit code 0 ($(since "$T0"))"
  exit 0
fi
say "job $JOB: $(tasks "$ok") of $total completed; ${#failed[@]} did not: ${failed[*]}" >&2
for task in "${failed[@]}"; do
  if [ -n "${STATE[$task]:-}" ]; then
    printf 'run-array: task %s: %s, exit code %s\n' "$task" "${STATE[$task]}" "${EXIT[$task]:-unknown}" >&2
  else
    printf 'run-array: task %s: no trace: Slurm lists no such task and it left no exit marker (cancelled before it started?)\n' "$task" >&2
  fi
  if [ -s "${OUTPUT[$task]}" ]; then
    printf '  last lines of %s:\n' "${OUTPUT[$task]}" >&2
    tail -n 5 "${OUTPUT[$task]}" | sed 's/^/    /' >&2
  else
    printf '  no output file (%s)\n' "${OUTPUT[$task]}" >&2
  fi
done
say "rerun just those: run-array.sh --array $(IFS=,; echo "${failed[*]}") ..." >&2
exit 1
