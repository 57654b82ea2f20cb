#!/usr/bin/env bash
# Runs nbcheck.py (the headless notebook checker) with the project's own
# Jupyter environment; runs setup.sh first when that is missing or stale.
#
#   bash notebooks/tools/check.sh execute notebooks/ [--write] [--save-to DIR]
#   bash notebooks/tools/check.sh reproduce notebooks/ [--save-to DIR]
#   bash notebooks/tools/check.sh normalise --check notebooks/
#
# execute and reproduce run the notebooks in an empty target/notebook-scratch,
# compare every file they write there with its committed counterpart byte for
# byte, and fail when the run changed the working tree (git status); see
# notebooks/tools/README.md. --save-to keeps the executed notebooks.
#
# Works from any folder; relative notebook paths are taken from the caller's.
set -euo pipefail
NB_TOOLS=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
HOME=${HOME:-}
# shellcheck source=env.sh
. "$NB_TOOLS/env.sh"
if [ ! -x "$NB_PY" ] || [ ! -f "$JUPYTER_PATH/kernels/$NB_KERNEL/kernel.json" ] \
   || [ "$(cat "$NB_VENV/.nbcheck-requirements" 2>/dev/null)" != "$(cat "$NB_TOOLS/requirements.txt"; "${PYTHON:-python3}" -c 'import sys; print(sys.version)')" ]; then
  NB_WARM=0 bash "$NB_TOOLS/setup.sh" >&2
fi
exec "$NB_PY" "$NB_TOOLS/nbcheck.py" "$@"
