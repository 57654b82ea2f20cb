"""Times the first cell of a fresh kernel, as a user starts one.

Starts the `rust` (evcxr) kernel with jupyter_client, exactly as Jupyter
does (the kernelspec's argv and env, the caller's environment otherwise: no
shared build folder unless the kernelspec sets one), runs one cell (by
default the `:dep` line the README documents and a `use`), prints the wall
time from sending the cell to the kernel going idle, and shuts the kernel
down. Run it twice to see a later kernel's start.

    bash bench/notebook_start.sh [--kernels N] [--cell TEXT]

`--features` picks the `:dep` line: `none` (the README's line, without the
command line and PNG/PDF export; the default) or `cli` (with the command
line, as one-line-steps.ipynb needs for `stratanet::run`). setup.sh runs
this once for each, so that the first kernel a user starts finds the crate
compiled.

Prints one JSON line per kernel (start-up and first-cell seconds, status).
"""

import argparse
import json
import os
import sys
import time
from pathlib import Path

from jupyter_client.manager import start_new_kernel

ROOT = Path(__file__).resolve().parents[2]
DEP = {
    "none": ':dep stratanet = { path = "..", default-features = false }\nuse stratanet::prelude::*;',
    "cli": ':dep stratanet = { path = "..", default-features = false, features = ["cli"] }\nuse stratanet::prelude::*;',
}


def run_cell(kc, code, timeout):
    msg_id = kc.execute(code)
    errors, stderr = [], []
    deadline = time.monotonic() + timeout
    while True:
        msg = kc.get_iopub_msg(timeout=max(1, deadline - time.monotonic()))
        if msg.get("parent_header", {}).get("msg_id") != msg_id:
            continue
        kind, content = msg["msg_type"], msg["content"]
        if kind == "error":
            errors.append(content.get("evalue", ""))
        elif kind == "stream" and content.get("name") == "stderr":
            stderr.append(content.get("text", ""))
        elif kind == "status" and content.get("execution_state") == "idle":
            break
    reply = kc.get_shell_msg(timeout=timeout)
    return reply["content"].get("status"), errors, "".join(stderr)


def main():
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--kernels", type=int, default=1, help="kernels to start one after another")
    p.add_argument("--cell", default=None, help="the cell to time (default: the :dep line --features picks)")
    p.add_argument("--features", choices=sorted(DEP), default="none", help="which :dep line (default: none, the README's)")
    p.add_argument("--cwd", default=str(ROOT / "notebooks"), help="the kernel's working folder")
    p.add_argument("--timeout", type=float, default=1200)
    args = p.parse_args()
    code = args.cell if args.cell is not None else DEP[args.features]
    for i in range(args.kernels):
        t_start = time.monotonic()
        km, kc = start_new_kernel(kernel_name="rust", cwd=args.cwd, startup_timeout=120)
        started = time.monotonic() - t_start
        try:
            t0 = time.monotonic()
            status, errors, stderr = run_cell(kc, code, args.timeout)
            seconds = time.monotonic() - t0
        finally:
            kc.stop_channels()
            km.shutdown_kernel(now=False)
        print(json.dumps({
            "kernel": i + 1,
            "start_seconds": round(started, 1),
            "first_cell_seconds": round(seconds, 1),
            "status": status,
            "errors": errors,
            "stderr": stderr[-500:],
        }), flush=True)
        if status != "ok" or errors:
            sys.exit(1)


if __name__ == "__main__":
    main()
