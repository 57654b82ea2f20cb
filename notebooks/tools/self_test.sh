#!/usr/bin/env bash
# Self-test of the notebook checker: each deliberately broken notebook in
# tests/notebooks/ must FAIL for its own reason, the good ones must pass and
# reproduce, a tampered output must be caught, and rerunning `execute --write`
# must leave a notebook byte-identical. It writes no tracked file.
#
#   bash notebooks/tools/self_test.sh           # all, including notebooks/smoke.ipynb
#   bash notebooks/tools/self_test.sh --quick   # only the notebooks that need no crate
#   bash notebooks/tools/self_test.sh --fresh   # start with an empty evcxr build folder
#                                               # (measures the cold :dep compile)
# Works from any folder. Ends with "self-test: N passed, M failed".
set -uo pipefail
NB_TOOLS=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
ROOT=$(cd "$NB_TOOLS/../.." && pwd)
CHECK="$NB_TOOLS/check.sh"
T="$ROOT/tests/notebooks"
quick=0
fresh=()
for a in "$@"; do
  case "$a" in
    --quick) quick=1 ;;
    --fresh) fresh=(--fresh) ;;
    *) echo "usage: self_test.sh [--quick] [--fresh]" >&2; exit 2 ;;
  esac
done

work=$(mktemp -d "${TMPDIR:-/tmp}/nbcheck-self-test.XXXXXX")
cleanup() {
  rm -rf "$work"
  rm -f "$ROOT/notebooks/.nbcheck-self-test-smoke.ipynb" "$T/stray-output.txt"
}
trap cleanup EXIT

passed=0 failed=0
pass() { passed=$((passed + 1)); printf 'self-test ok:   %s\n' "$1"; }
fail() { failed=$((failed + 1)); printf 'self-test FAIL: %s\n' "$1"; sed 's/^/    | /' "$2" | tail -40; }

# run NAME WANT_RC REGEX -- ARGS...: runs check.sh ARGS, wants exit code WANT_RC
# and a line of output matching the extended regex REGEX.
run() {
  local name=$1 want=$2 regex=$3; shift 4
  local log="$work/$(printf '%s' "$name" | tr -c 'A-Za-z0-9' '_').log"
  bash "$CHECK" "$@" >"$log" 2>&1
  local rc=$?
  if [ "$rc" -ne "$want" ]; then
    fail "$name: exit code $rc, wanted $want" "$log"
  elif ! grep -Eq -- "$regex" "$log"; then
    fail "$name: no line matching /$regex/" "$log"
  else
    pass "$name"
  fi
}

NB_WARM=0 bash "$NB_TOOLS/setup.sh" || { echo "self-test: setup failed"; echo "self-test: 0 passed, 1 failed"; exit 1; }

# 0a. evcxr's compilation cache stays off (env.sh says why: a build folder
# that mixed crates from the cache with crates it compiled itself failed
# with E0460 in CI).
cache_log="$work/cache.log"
init="$ROOT/target/jupyter/evcxr-config/init.evcxr"
spec="$ROOT/target/jupyter/kernels/rust/kernel.json"
if [ ! -f "$init" ] || [ ! -f "$spec" ]; then
  echo "set-up wrote no $init or $spec" >"$cache_log"
  fail "evcxr's compilation cache is off" "$cache_log"
elif grep -q '^[[:space:]]*:cache' "$init" || grep -q 'XDG_CACHE_HOME' "$spec"; then
  { echo "init.evcxr or kernel.json turns on evcxr's compilation cache:"; cat "$init" "$spec"; } >"$cache_log" 2>&1
  fail "evcxr's compilation cache is off" "$cache_log"
else
  pass "evcxr's compilation cache is off"
fi

# 0. Each kind of breakage, planted as cells with a kernel's outputs, fails
# for its own reason (no kernel needed; notebooks/tools/planted.py) ---------
planted_log="$work/planted.log"
if "$ROOT/target/notebook-venv/bin/python" "$NB_TOOLS/planted.py" >"$planted_log" 2>&1; then
  pass "planted breakages are caught ($(tail -1 "$planted_log"))"
else
  fail "planted breakages" "$planted_log"
fi

# 1. Broken notebooks fail, each for its own reason --------------------------
run "compile error is an error output" 1 \
  "cell 1 \(.*\): error output: Error: mismatched types" -- execute "${fresh[@]}" "$T/compile_error.ipynb"
run "failed :dep is an error output" 1 \
  "cell 0 \(.*\): error output: Error: No such file or directory" -- execute "$T/dep_error.ipynb"
run "panic is caught from stderr" 1 \
  "cell 0 \(.*\): panic on stderr: thread '.*' (\([0-9]+\) )?panicked at .*\"twelve\"|cell 0 \(.*\): panic on stderr: thread .*panicked at .*ParseIntError" \
  -- execute "$T/panic.ipynb"
run "expect-svg without SVG fails" 1 \
  "cell 0 \(.*\): tagged expect-svg but produced no image/svg\+xml \(got: text/plain\)" -- execute "$T/missing_svg.ipynb"
run "closing line counts a failed notebook" 1 \
  "^notebooks: 0 passed, 1 failed$" -- execute "$T/missing_svg.ipynb"
run "Err from ? fails without --strict-stderr" 1 \
  "cell 0 \(.*\): stderr output \(an Err from \`\?\` shows only this way\): 'invalid digit" -- execute "$T/question_mark.ipynb"
run "Err from ? fails with --strict-stderr" 1 \
  "cell 0 \(.*\): stderr output \(an Err from \`\?\` shows only this way\)" -- execute --strict-stderr "$T/question_mark.ipynb"

# 2. A good notebook (no crate) passes, reproduces, and rewrites identically --
run "good notebook passes" 0 "^PASS tests/notebooks/good.ipynb: cells: 5 passed, 0 failed" -- execute "$T/good.ipynb"
run "good notebook reproduces" 0 "every output matches the committed notebook" -- reproduce "$T/good.ipynb"
run "committed notebooks are normalised" 0 "^ok tests/notebooks/good.ipynb" -- normalise --check "$T"
mkdir -p "$work/rerun"
cp "$T/good.ipynb" "$work/rerun/good.ipynb"
run "execute --write on a copy" 0 "wrote .*good.ipynb \(normalised\)" -- execute --write "$work/rerun/good.ipynb"
if cmp -s "$T/good.ipynb" "$work/rerun/good.ipynb"; then
  pass "rerun with --write diffs clean (good.ipynb)"
else
  diff -u "$T/good.ipynb" "$work/rerun/good.ipynb" >"$work/rerun.diff"
  fail "rerun with --write changed good.ipynb" "$work/rerun.diff"
fi

# 3. A changed output is caught, with cell, MIME type and the differing line --
mkdir -p "$work/tampered"
sed 's/fill=\\"#4a7\\"/fill=\\"#4a8\\"/' "$T/good.ipynb" >"$work/tampered/good.ipynb"
if cmp -s "$T/good.ipynb" "$work/tampered/good.ipynb"; then
  echo "self-test: could not tamper with good.ipynb (did its SVG change?)" >"$work/tamper.log"
  fail "tampered SVG is caught" "$work/tamper.log"
else
  run "tampered SVG is caught" 1 "cell 1 \(.*\) image/svg\+xml differs" -- reproduce "$work/tampered/good.ipynb"
fi

# 3b. A run that changes the working tree fails, though every notebook passes
# and reproduces: writes_beside.ipynb writes a file beside itself (removed
# afterwards). And --save-to keeps the executed notebooks for a reviewer.
rm -f "$T/stray-output.txt"
run "a file written beside a notebook fails the run" 1 \
  "^FAIL working tree: the run changed 1 path\(s\)" -- reproduce "$T/writes_beside.ipynb"
if grep -q "stray-output.txt: clean before the run, ?? after" "$work"/a_file_written_beside*.log; then
  pass "the changed path is named"
else
  fail "the changed path is not named" "$(ls "$work"/a_file_written_beside*.log | head -1)"
fi
rm -f "$T/stray-output.txt"
run "reproduce --save-to keeps the executed notebook" 0 "^saved: the executed notebooks in " \
  -- reproduce --save-to "$work/saved" "$T/good.ipynb"
if [ -f "$work/saved/good.ipynb" ]; then
  pass "the saved notebook is there ($work/saved/good.ipynb)"
else
  echo "no $work/saved/good.ipynb" >"$work/saved.log"
  fail "the saved notebook is missing" "$work/saved.log"
fi

# 4. The smoke notebook uses the crate: passes, reproduces, rewrites identically.
# The --write run is on a hidden copy beside it (same folder, so `:dep path = ".."`
# still finds the crate); the committed notebook itself is never written.
if [ "$quick" -eq 0 ]; then
  smoke="$ROOT/notebooks/smoke.ipynb"
  copy="$ROOT/notebooks/.nbcheck-self-test-smoke.ipynb"
  cp "$smoke" "$copy"
  run "smoke notebook passes (a copy, rewritten)" 0 "^PASS notebooks/.nbcheck-self-test-smoke.ipynb" \
    -- execute --write "$copy"
  if cmp -s "$smoke" "$copy"; then
    pass "rerun with --write diffs clean (smoke.ipynb)"
  else
    diff -u "$smoke" "$copy" >"$work/smoke.diff"
    fail "rerun with --write changed smoke.ipynb" "$work/smoke.diff"
  fi
  rm -f "$copy"
  run "smoke notebook reproduces" 0 "every output matches the committed notebook" -- reproduce "$smoke"
  run "smoke notebook reproduces again" 0 "every output matches the committed notebook" -- reproduce "$smoke"
  grep -h "first cell:" "$work"/smoke_notebook_passes*.log | sed 's/^ */self-test: smoke /'
fi

echo "self-test: $passed passed, $failed failed"
[ "$failed" -eq 0 ]
