#!/usr/bin/env bash
# Sets up everything the headless notebook checker needs, inside this repo:
#
#   target/notebook-venv   Python venv with the pinned Jupyter client
#                          (notebooks/tools/requirements.txt)
#   target/jupyter         the evcxr kernelspec ("rust", started through its
#                          start-kernel.sh), Jupyter's runtime and config
#                          folders, an evcxr config folder of our own (an
#                          empty init.evcxr)
#
# and, outside the repo, only what the Rust toolchain itself owns:
# `cargo install evcxr_jupyter --locked --version 0.22.0` when it is missing,
# and `rustup component add rust-src` when that is missing.
#
# It then warms the kernel's first build folder (step 6), so that the first
# notebook a user opens starts in seconds.
#
# Idempotent: a second run checks and prints "ok" for each step. Run it from
# any folder:  bash notebooks/tools/setup.sh
# Environment: PYTHON (default python3, needs >= 3.9), HOME or CARGO_HOME;
# NB_WARM=0 skips the last step (warming the first build folder).
set -euo pipefail

NB_TOOLS=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
if [ -z "${HOME:-}" ] && [ -z "${CARGO_HOME:-}" ]; then
  echo "setup: neither HOME nor CARGO_HOME is set; cargo and rustup need one" >&2
  exit 2
fi
HOME=${HOME:-}
# shellcheck source=env.sh
. "$NB_TOOLS/env.sh"

start=$(date +%s)
case "${NB_WARM:-1}" in
  0|1) ;;
  *) echo "setup: NB_WARM must be 0 (skip warming the first build folder) or 1 (the default), not '${NB_WARM}'" >&2; exit 2 ;;
esac
say() { printf 'setup: %s\n' "$*"; }
need() {
  command -v "$1" >/dev/null 2>&1 || { echo "setup: '$1' not found on PATH ($2)" >&2; exit 2; }
}

# 1. Python virtual environment with pinned packages -------------------------
PYTHON=${PYTHON:-python3}
need "$PYTHON" "set PYTHON to a Python 3.9+ interpreter"
"$PYTHON" -c 'import sys; sys.exit(sys.version_info < (3, 9))' \
  || { echo "setup: $PYTHON is older than 3.9" >&2; exit 2; }

req="$NB_TOOLS/requirements.txt"
stamp="$NB_VENV/.nbcheck-requirements"
want="$(cat "$req"; "$PYTHON" -c 'import sys; print(sys.version)')"
if [ -x "$NB_PY" ] && [ -f "$stamp" ] && [ "$(cat "$stamp")" = "$want" ]; then
  say "ok: venv $NB_VENV has the pinned packages"
else
  if [ ! -x "$NB_PY" ] || ! "$NB_PY" -c 'import sys' >/dev/null 2>&1; then
    rm -rf "$NB_VENV"
    mkdir -p "$(dirname "$NB_VENV")"
    "$PYTHON" -m venv "$NB_VENV"
    say "created venv $NB_VENV ($("$NB_PY" --version))"
  fi
  "$NB_PY" -m pip install --quiet --no-input --require-virtualenv -r "$req"
  printf '%s' "$want" >"$stamp"
  say "installed into the venv: $(grep -E '^(nbclient|nbformat|jupyter_client)==' "$req" | tr '\n' ' ')"
fi

# 2. evcxr_jupyter -----------------------------------------------------------
need cargo "install Rust with rustup"
if cargo install --list 2>/dev/null | grep -q "^evcxr_jupyter v$NB_EVCXR_VERSION:"; then
  say "ok: evcxr_jupyter $NB_EVCXR_VERSION installed ($(command -v evcxr_jupyter))"
elif command -v evcxr_jupyter >/dev/null 2>&1 \
     && ! cargo install --list 2>/dev/null | grep -q '^evcxr_jupyter v'; then
  say "warning: using evcxr_jupyter at $(command -v evcxr_jupyter), not installed by cargo; version unknown"
else
  say "installing evcxr_jupyter $NB_EVCXR_VERSION (cargo install, several minutes)"
  t0=$(date +%s)
  cargo install evcxr_jupyter --locked --version "$NB_EVCXR_VERSION"
  say "installed evcxr_jupyter in $(( $(date +%s) - t0 )) s"
fi
need evcxr_jupyter "cargo install evcxr_jupyter --locked --version $NB_EVCXR_VERSION"

# 3. rust-src (evcxr and its rust-analyzer want the standard library source) --
if ! command -v rustup >/dev/null 2>&1; then
  say "warning: no rustup; cannot check the rust-src component"
elif rustup component list --installed 2>/dev/null | grep -q '^rust-src'; then
  say "ok: rustup component rust-src installed"
else
  rustup component add rust-src
  say "added rustup component rust-src"
fi

# 4. The kernelspec, in our own Jupyter folder --------------------------------
# evcxr_jupyter --install writes the kernelspec (and its logos); then its
# kernel.json is replaced by ours, which starts the kernel through
# start-kernel.sh (written here):
#
# - every kernel, however Jupyter was started, gets EVCXR_CONFIG_DIR (our
#   empty init.evcxr, so a user's own cannot change outputs; evcxr's
#   compilation cache stays off, for the reason env.sh gives);
# - start-kernel.sh gives the kernel a build folder that outlives it
#   (EVCXR_TMPDIR; evcxr's default is a new folder per kernel, deleted at
#   shutdown): the first free one of $NB_SLOT_COUNT slots under $NB_BUILD_SLOTS, held with
#   flock for the kernel's life, so two kernels never share one. Cargo's own
#   change tracking then decides what a later kernel recompiles: nothing,
#   unless the crate or a `:dep` line changed. A caller that sets
#   EVCXR_TMPDIR itself (nbcheck) keeps it.
mkdir -p "$JUPYTER_RUNTIME_DIR" "$JUPYTER_CONFIG_DIR" "$EVCXR_CONFIG_DIR"
: >"$EVCXR_CONFIG_DIR/init.evcxr"
spec_dir="$JUPYTER_PATH/kernels/$NB_KERNEL"
kernel_json="$spec_dir/kernel.json"
starter="$spec_dir/start-kernel.sh"
exe=$(command -v evcxr_jupyter)
if [ ! -f "$kernel_json" ]; then
  # evcxr_jupyter --install writes to $JUPYTER_PATH/kernels/rust when
  # JUPYTER_PATH is set (else to ~/.local/share/jupyter).
  evcxr_jupyter --install >/dev/null
  [ -f "$kernel_json" ] || { echo "setup: evcxr_jupyter --install did not write $kernel_json" >&2; exit 1; }
fi
want_starter=$(cat <<EOF
#!/usr/bin/env bash
# Written by notebooks/tools/setup.sh: starts evcxr_jupyter in a build folder
# that outlives the kernel (the first free slot; see setup.sh, step 4).
set -euo pipefail
if [ -z "\${EVCXR_TMPDIR:-}" ] && command -v flock >/dev/null 2>&1; then
  mkdir -p "$NB_BUILD_SLOTS"
  for slot in $(seq -s ' ' 0 $((NB_SLOT_COUNT - 1))); do
    exec 9>"$NB_BUILD_SLOTS/slot-\$slot.lock"
    if flock -n 9; then
      export EVCXR_TMPDIR="$NB_BUILD_SLOTS/slot-\$slot"
      mkdir -p "\$EVCXR_TMPDIR"
      # The same dependency versions as cargo build (copied at every start,
      # so a pull that changes them reaches the kernel too).
      cp "$NB_ROOT/Cargo.lock" "\$EVCXR_TMPDIR/" 2>/dev/null || true
      break
    fi
    exec 9>&-
  done
fi
exec "$exe" --control_file "\$1"
EOF
)
want_json=$("$NB_PY" - "$starter" "$EVCXR_CONFIG_DIR" <<'PY'
import json, sys
starter, config = sys.argv[1:]
print(json.dumps({
    "argv": ["bash", starter, "{connection_file}"],
    "display_name": "Rust",
    "interrupt_mode": "message",
    "language": "rust",
    "env": {"EVCXR_CONFIG_DIR": config},
}, indent=2))
PY
)
if [ "$(cat "$kernel_json")" = "$want_json" ] \
   && [ -f "$starter" ] && [ "$(cat "$starter")" = "$want_starter" ]; then
  say "ok: kernel '$NB_KERNEL' registered in $JUPYTER_PATH/kernels (build folders that outlive a kernel)"
else
  printf '%s\n' "$want_starter" >"$starter"
  printf '%s\n' "$want_json" >"$kernel_json"
  say "registered kernel '$NB_KERNEL' in $JUPYTER_PATH/kernels (started by $starter, then $exe;" \
    "build folders in $NB_BUILD_SLOTS)"
fi

# 5. Prove the client finds that kernel, and only ours -------------------------
found=$("$NB_PY" - "$NB_KERNEL" <<'PY'
import sys
from jupyter_client.kernelspec import KernelSpecManager
print(KernelSpecManager().find_kernel_specs().get(sys.argv[1], "MISSING"))
PY
)
case "$found" in
  "$JUPYTER_PATH/kernels/$NB_KERNEL") say "ok: jupyter_client resolves kernel '$NB_KERNEL' to $found" ;;
  *) echo "setup: jupyter_client resolves kernel '$NB_KERNEL' to $found, not $JUPYTER_PATH/kernels/$NB_KERNEL" >&2; exit 1 ;;
esac

# 5b. Folders of the earlier layout --------------------------------------------
# Earlier set-ups turned on evcxr's compilation cache, which could leave a
# build folder holding crates that do not fit together (env.sh says why).
# Remove this checkout's cache and its build folders of that layout, unless
# a kernel or a checker still holds one (then say so and leave it).
if [ -d "$NB_OLD_CACHE" ]; then
  rm -rf "$NB_OLD_CACHE"
  say "removed evcxr's compilation cache of an earlier set-up ($NB_OLD_CACHE)"
fi
for old in "${NB_OLD_BUILD_DIRS[@]}"; do
  [ -e "$old" ] || [ -e "$old.lock" ] || continue
  busy=""
  if command -v flock >/dev/null 2>&1; then
    for lock in "$old.lock" "$old"/slot-*.lock; do
      [ -f "$lock" ] || continue
      flock -n "$lock" true || { busy=$lock; break; }
    done
  fi
  if [ -n "$busy" ]; then
    say "warning: left $old of an earlier set-up in place: $busy is held (a kernel or checker is running); rerun set-up when it ends"
  else
    rm -rf "$old" "$old.lock"
    say "removed the build folder of an earlier set-up ($old)"
  fi
done

# 6. Warm the first build folder ------------------------------------------------
# A user's first kernel would otherwise compile the crate and its
# dependencies from nothing in its first cell (minutes on 2 cores;
# BENCHMARKS.md, "Notebook start-up"). Here, once, a kernel started exactly as Jupyter
# starts one runs each `:dep` line the notebooks use (without default
# features, as the README documents, and with the command line only, as
# one-line-steps.ipynb needs), so the first free build folder holds every
# compiled crate. When they are already warm this takes about 15 s a line
# (kernel start, the cell, shut-down).
# NB_WARM=0 skips it (the checker's self-test and the start-up benchmark,
# which measure their own cases).
if [ "${NB_WARM:-1}" = 1 ] && ! command -v flock >/dev/null 2>&1; then
  say "warning: no 'flock' on PATH, so kernels get evcxr's own build folder, deleted at shut-down; nothing to warm (install util-linux for flock)"
elif [ "${NB_WARM:-1}" = 1 ]; then
  for features in none cli; do
    t0=$(date +%s)
    if ! out=$("$NB_PY" "$NB_TOOLS/first_cell.py" --features "$features" 2>&1); then
      echo "setup: warming the kernel's build folder failed (:dep features: $features):" >&2
      printf '%s\n' "$out" | tail -20 >&2
      exit 1
    fi
    say "ok: first kernel warm (:dep line with features '$features': $(( $(date +%s) - t0 )) s)"
  done
fi

say "done in $(( $(date +%s) - start )) s"
