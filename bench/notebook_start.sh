#!/usr/bin/env bash
# Times the first `:dep stratanet` cell of fresh evcxr kernels started the way
# Jupyter starts them (see notebooks/tools/first_cell.py). Runs the notebook set-up
# first (idempotent), then the driver with the notebook environment.
#
#   bash bench/notebook_start.sh --kernels 2
#   COLD=1 bash bench/notebook_start.sh   # empty the kernels' build folders first
set -euo pipefail
NB_TOOLS=$(cd "$(dirname "${BASH_SOURCE[0]}")/../notebooks/tools" && pwd)
NB_WARM=0 bash "$NB_TOOLS/setup.sh" >/dev/null
# shellcheck source=../notebooks/tools/env.sh
. "$NB_TOOLS/env.sh"
if [ -n "${COLD:-}" ]; then
  rm -rf "$NB_BUILD_SLOTS"
fi
exec "$NB_PY" "$NB_TOOLS/first_cell.py" "$@"
